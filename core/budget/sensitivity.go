package budget

import (
	"context"
	"encoding/json"
	"fmt"
	"math"
	"math/rand/v2"
)

// Defaults of the Monte Carlo.
const (
	DefaultDraws      = 100000
	DefaultSweepDraws = 20000
	DefaultBins       = 60
	// MaxDraws bounds the draws of one run (memory: about 20 bytes a draw,
	// 40 MB at the limit, which a page can afford).
	MaxDraws = 2000000
	// MaxSweepDraws bounds the draws per final period of the sweep (its
	// standard variates are kept: 8 bytes per draw and input part).
	MaxSweepDraws = 200000
	chunk         = 16384
)

// UnboundedConvention explains how draws whose denominator is not
// positive enter the results.
const UnboundedConvention = "a draw with dF - dN <= 0 has no finite equilibrium sensitivity (the implied feedback parameter (dF - dN)/dT is not positive): its ECS is +Inf, and likewise a draw with dF <= 0 has TCR +Inf. Such draws stay in the sample: every percentile is taken over all draws, so a percentile above 1 - (fraction unbounded) is +Inf (JSON null), and the mean is +Inf when any draw is"

// MCOptions are the settings of the Monte Carlo.
type MCOptions struct {
	// Draws is the number of draws; zero means DefaultDraws (100,000).
	Draws int
	// Seed seeds the generators. Every independently drawn part of the
	// inputs has its own stream, math/rand/v2 PCG(Seed, 4096 r + j), r = 0
	// for dT, 1 for dF, 2 for dN, 3 for F2x and j = 1, 2, ... the part's
	// position within its role (dF components in order; a series with a
	// typed base value is two parts), so appending a component never
	// shifts the draws of another. Normal and lognormal parts draw
	// rand.NormFloat64, uniform parts rand.Float64.
	Seed uint64
	// Bins is the number of histogram bins aimed at; zero means 60.
	Bins int
	// Progress, when set, is called with the draws done so far.
	Progress func(done, total int)
	// Context, when set, cancels the run between chunks of draws.
	Context context.Context
}

// Summary describes the Monte Carlo distribution of ECS or TCR (K). The
// percentiles are exact sample quantiles of all draws (R's type 7, see
// Quantiles); +Inf values are written as JSON null.
type Summary struct {
	Central           float64    // from the central inputs
	Median            float64    // 50th percentile of the draws
	Mean              float64    // mean of the draws (+Inf when any draw is)
	P05, P17          float64    // 5th and 17th percentiles
	P83, P95          float64    // 83rd and 95th percentiles
	UnboundedFraction float64    // share of draws at +Inf
	Histogram         *Histogram // nil in the period sweep
}

type summaryJSON struct {
	Central           *float64   `json:"central"`
	Median            *float64   `json:"median"`
	Mean              *float64   `json:"mean"`
	P05               *float64   `json:"p05"`
	P17               *float64   `json:"p17"`
	P83               *float64   `json:"p83"`
	P95               *float64   `json:"p95"`
	UnboundedFraction float64    `json:"unbounded_fraction"`
	Histogram         *Histogram `json:"histogram,omitempty"`
}

func jsonNum(v float64) *float64 {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return nil
	}
	return &v
}

func fromJSONNum(p *float64) float64 {
	if p == nil {
		return math.Inf(1)
	}
	return *p
}

// MarshalJSON writes the summary with null for +Inf (unbounded) values.
func (s Summary) MarshalJSON() ([]byte, error) {
	return json.Marshal(summaryJSON{jsonNum(s.Central), jsonNum(s.Median), jsonNum(s.Mean), jsonNum(s.P05),
		jsonNum(s.P17), jsonNum(s.P83), jsonNum(s.P95), s.UnboundedFraction, s.Histogram})
}

// UnmarshalJSON reads what MarshalJSON writes (null is +Inf).
func (s *Summary) UnmarshalJSON(b []byte) error {
	var j summaryJSON
	if err := json.Unmarshal(b, &j); err != nil {
		return err
	}
	*s = Summary{fromJSONNum(j.Central), fromJSONNum(j.Median), fromJSONNum(j.Mean), fromJSONNum(j.P05),
		fromJSONNum(j.P17), fromJSONNum(j.P83), fromJSONNum(j.P95), j.UnboundedFraction, j.Histogram}
	return nil
}

// Histogram counts draws in equal bins [Lo + i Width, Lo + (i+1) Width).
// Finite draws below Lo or at or above the last edge are counted in Below
// and Above; +Inf draws in Unbounded. Total is every draw.
type Histogram struct {
	Lo        float64 `json:"lo"`
	Width     float64 `json:"width"`
	Counts    []int   `json:"counts"`
	Below     int     `json:"below"`
	Above     int     `json:"above"`
	Unbounded int     `json:"unbounded"`
	Total     int     `json:"total"`
}

// Hi is the upper edge of the last bin.
func (h *Histogram) Hi() float64 { return h.Lo + float64(len(h.Counts))*h.Width }

// Density is the count of bin i over Total Width (probability density).
func (h *Histogram) Density(i int) float64 {
	return float64(h.Counts[i]) / (float64(h.Total) * h.Width)
}

// newHistogram lays out about bins bins of a "nice" width (1, 2, 2.5 or 5
// times a power of ten) covering [lo, hi].
func newHistogram(lo, hi float64, bins int) *Histogram {
	if bins < 1 {
		bins = DefaultBins
	}
	if !finite(lo, hi) {
		lo, hi = 0, 1
	}
	if hi < lo {
		lo, hi = hi, lo
	}
	span := hi - lo
	if !(span > 0) {
		span = math.Max(math.Abs(lo)*1e-3, 1e-9)
		lo -= span / 2
		hi = lo + span
	}
	w := niceStep(span / float64(bins))
	start := math.Floor(lo/w) * w
	steps := math.Ceil((hi-start)/w - 1e-9)
	if !finite(w, start, steps) || !(w > 0) {
		return &Histogram{Lo: 0, Width: 1, Counts: make([]int, 1)}
	}
	n := int(math.Min(steps, float64(4*bins)))
	if n < 4*bins && start+float64(n)*w <= hi {
		n++
	}
	n = min(max(n, 1), 4*bins)
	return &Histogram{Lo: start, Width: w, Counts: make([]int, n)}
}

func niceStep(raw float64) float64 {
	p := math.Pow(10, math.Floor(math.Log10(raw)))
	for _, m := range []float64{1, 2, 2.5, 5, 10} {
		if m*p >= raw*(1-1e-12) {
			return m * p
		}
	}
	return 10 * p
}

func (h *Histogram) add(vs []float64) {
	n := float64(len(h.Counts))
	lo, inv := h.Lo, 1/h.Width
	inf := math.Inf(1)
	h.Total += len(vs)
	for _, v := range vs {
		k := (v - lo) * inv
		switch {
		case k >= 0 && k < n:
			h.Counts[int(k)]++
		case v == inf:
			h.Unbounded++
		case k < 0:
			h.Below++
		default:
			h.Above++
		}
	}
}

// InputSummary is a resolved input with a histogram of its draws (for the
// input previews; dF is the sum of its components).
type InputSummary struct {
	Role      string      `json:"role"`
	Center    float64     `json:"center"`
	Mean      float64     `json:"mean"`
	SD        float64     `json:"sd"`
	Parts     []*Resolved `json:"parts"`
	Histogram *Histogram  `json:"histogram"`
}

// SensitivityResult is the energy-budget sensitivity by Monte Carlo. The
// JSON keys ecs, tcr (each central, median, mean, p05, p17, p83, p95),
// nonpositive_fraction and draws are the CLI contract of
// `heatledger sensitivity --json`.
type SensitivityResult struct {
	Draws int     `json:"draws"`
	Seed  uint64  `json:"seed"`
	ECS   Summary `json:"ecs"`
	TCR   Summary `json:"tcr"`
	// NonpositiveFraction is the share of draws with dF - dN <= 0 (ECS
	// unbounded); NonpositiveForcingFraction those with dF <= 0 (TCR
	// unbounded); NegativeWarmingFraction those with dT < 0.
	NonpositiveFraction        float64        `json:"nonpositive_fraction"`
	NonpositiveForcingFraction float64        `json:"nonpositive_forcing_fraction"`
	NegativeWarmingFraction    float64        `json:"negative_warming_fraction"`
	Convention                 string         `json:"convention"`
	Inputs                     []InputSummary `json:"inputs"`
	Warnings                   []string       `json:"warnings"`
}

// Sensitivity computes the energy-budget equilibrium climate sensitivity
// and transient climate response (Gregory et al. 2002, J. Climate 15,
// 3117; Otto et al. 2013, Nature Geosci. 6, 415; journal details from
// memory):
//
//	ECS = F2x dT / (dF - dN),   TCR = F2x dT / dF,
//
// dT the change in surface temperature, dF in effective radiative forcing,
// dN in the top-of-atmosphere imbalance between the base and the final
// period, F2x the forcing of doubled CO2. The inputs (Inputs.Resolve) are
// drawn independently opt.Draws times (seeded PCG streams); each draw gives
// one ECS and one TCR. Reported: the central estimate from the central
// inputs (each distribution's median: Dist.Center), and the median, mean,
// 5th, 17th, 83rd and 95th percentiles of the draws, exact to the draws
// (Quantiles). Draws whose denominator is not positive are kept as +Inf
// (UnboundedConvention) and their share is reported. Histograms span the
// 0.5th to 99.5th percentiles (shorter when those are unbounded).
func Sensitivity(in Inputs, opt MCOptions) (*SensitivityResult, error) {
	rs, err := in.Resolve()
	if err != nil {
		return nil, err
	}
	return MonteCarlo(rs, opt)
}

// MonteCarlo runs Sensitivity's Monte Carlo on resolved inputs.
func MonteCarlo(rs []*Resolved, opt MCOptions) (*SensitivityResult, error) {
	n := opt.Draws
	if n == 0 {
		n = DefaultDraws
	}
	if n < 10 || n > MaxDraws {
		return nil, fmt.Errorf("draws %d: expected 10 to %d", n, MaxDraws)
	}
	if opt.Bins < 0 || opt.Bins > 1000 {
		return nil, fmt.Errorf("bins %d: expected 1 to 1000", opt.Bins)
	}
	ctx := opt.Context
	if ctx == nil {
		ctx = context.Background()
	}
	lay := layoutOf(rs)
	rngs := make([]*rand.Rand, len(lay.parts))
	for i := range rngs {
		rngs[i] = rand.New(rand.NewPCG(opt.Seed, lay.stream[i]))
	}
	ecs, tcr := make([]float64, n), make([]float64, n)
	var ev evaluator
	ev.init(min(n, chunk), len(lay.parts))
	// input previews: histograms over mean +- 4 SD of each role
	roles := []string{"dT", "dF", "dN", "F2x"}
	res := &SensitivityResult{Draws: n, Seed: opt.Seed, Convention: UnboundedConvention, Warnings: []string{}}
	var hists [4]*Histogram
	for k, role := range roles {
		is := InputSummary{Role: role}
		var v float64
		for _, r := range rs {
			if r.Role == role {
				is.Parts = append(is.Parts, r)
				is.Center += r.Center
				is.Mean += r.Mean
				v += r.SD * r.SD
			}
		}
		is.SD = math.Sqrt(v)
		hists[k] = newHistogram(is.Mean-4*is.SD, is.Mean+4*is.SD, 40)
		is.Histogram = hists[k]
		res.Inputs = append(res.Inputs, is)
	}
	var cnt counts
	for a := 0; a < n; a += chunk {
		if err := ctx.Err(); err != nil {
			return nil, err
		}
		b := min(a+chunk, n)
		m := b - a
		for p, d := range lay.parts {
			std := ev.std[p][:m]
			r := rngs[p]
			if d.d.uniformVariate() {
				for i := range std {
					std[i] = r.Float64()
				}
			} else {
				for i := range std {
					std[i] = r.NormFloat64()
				}
			}
		}
		cnt.add(ev.eval(lay, m, ecs[a:b], tcr[a:b]))
		for k := range hists {
			hists[k].add(ev.q[k][:m])
		}
		if opt.Progress != nil {
			opt.Progress(b, n)
		}
	}
	cnt.into(res, n)
	c := centralOf(rs)
	res.ECS = summarize(ecs, ratioECS(c), opt.Bins, true)
	res.TCR = summarize(tcr, ratioTCR(c), opt.Bins, true)
	for _, r := range rs {
		for _, w := range r.Warnings {
			res.Warnings = append(res.Warnings, r.Role+": "+w)
		}
	}
	res.Warnings = append(res.Warnings, drawWarnings(res)...)
	return res, nil
}

func drawWarnings(res *SensitivityResult) []string {
	var w []string
	if res.NonpositiveFraction > 0 {
		w = append(w, fmt.Sprintf("%.3g %% of draws have dF - dN <= 0 and an unbounded ECS: they are kept at +Inf, so ECS percentiles above the %.6gth are unbounded", 100*res.NonpositiveFraction, 100*(1-res.NonpositiveFraction)))
	}
	if res.NonpositiveForcingFraction > 0 {
		w = append(w, fmt.Sprintf("%.3g %% of draws have dF <= 0 and an unbounded TCR (kept at +Inf)", 100*res.NonpositiveForcingFraction))
	}
	if res.NegativeWarmingFraction > 0 {
		w = append(w, fmt.Sprintf("%.3g %% of draws have dT < 0 (a cooling): their ECS and TCR are negative, which no physical climate gives; the temperature change is poorly constrained", 100*res.NegativeWarmingFraction))
	}
	return w
}

func ratioECS(c [4]float64) float64 {
	den := c[1] - c[2]
	if !(den > 0) {
		return math.Inf(1)
	}
	return c[3] * c[0] / den
}

func ratioTCR(c [4]float64) float64 {
	if !(c[1] > 0) {
		return math.Inf(1)
	}
	return c[3] * c[0] / c[1]
}

type counts struct{ nonpos, nonposF, negT int }

func (c *counts) add(o counts) { c.nonpos += o.nonpos; c.nonposF += o.nonposF; c.negT += o.negT }

func (c counts) into(r *SensitivityResult, n int) {
	r.NonpositiveFraction = float64(c.nonpos) / float64(n)
	r.NonpositiveForcingFraction = float64(c.nonposF) / float64(n)
	r.NegativeWarmingFraction = float64(c.negT) / float64(n)
}

// evaluator holds the standard variates of each part and the per-role sums.
type evaluator struct {
	std [][]float64 // per part
	q   [4][]float64
}

func (e *evaluator) init(n, parts int) {
	e.std = make([][]float64, parts)
	for i := range e.std {
		e.std[i] = make([]float64, n)
	}
	for k := range e.q {
		e.q[k] = make([]float64, n)
	}
}

// eval turns the first m standard variates of every part into dT, dF, dN
// and F2x, and those into ECS and TCR.
func (e *evaluator) eval(lay layout, m int, ecs, tcr []float64) counts {
	var seen [4]bool
	for p, pt := range lay.parts {
		k := lay.role[p]
		pt.d.transform(e.q[k][:m], e.std[p][:m], pt.sign, seen[k])
		seen[k] = true
	}
	for k := range e.q {
		if !seen[k] {
			clear(e.q[k][:m])
		}
	}
	var c counts
	dT, dF, dN, f2x := e.q[0][:m], e.q[1][:m], e.q[2][:m], e.q[3][:m]
	inf := math.Inf(1)
	for i := range m {
		num := f2x[i] * dT[i]
		den := dF[i] - dN[i]
		if den > 0 {
			ecs[i] = num / den
		} else {
			ecs[i] = inf
			c.nonpos++
		}
		if dF[i] > 0 {
			tcr[i] = num / dF[i]
		} else {
			tcr[i] = inf
			c.nonposF++
		}
		if dT[i] < 0 {
			c.negT++
		}
	}
	return c
}

// summarize computes a Summary of the draws v (reordered in place).
func summarize(v []float64, central float64, bins int, hist bool) Summary {
	s := Summary{Central: central}
	var sum float64
	unb := 0
	for _, x := range v {
		if math.IsInf(x, 1) {
			unb++
		} else {
			sum += x
		}
	}
	s.UnboundedFraction = float64(unb) / float64(len(v))
	if unb > 0 {
		s.Mean = math.Inf(1)
	} else {
		s.Mean = sum / float64(len(v))
	}
	if !hist {
		q := Quantiles(v, 0.05, 0.17, 0.5, 0.83, 0.95)
		s.P05, s.P17, s.Median, s.P83, s.P95 = q[0], q[1], q[2], q[3], q[4]
		return s
	}
	q := Quantiles(v, 0.005, 0.05, 0.17, 0.5, 0.83, 0.95, 0.995)
	s.P05, s.P17, s.Median, s.P83, s.P95 = q[1], q[2], q[3], q[4], q[5]
	lo, hi := q[0], q[6]
	if math.IsInf(hi, 1) {
		switch {
		case finite(q[5]):
			hi = q[5] + (q[5] - q[3])
		case finite(q[4]):
			hi = q[4] + 2*(q[4]-q[3])
		case finite(q[3]):
			hi = q[3] + 2*math.Abs(q[3]-lo)
		default:
			hi = lo + 1
		}
	}
	s.Histogram = newHistogram(lo, hi, bins)
	s.Histogram.add(v)
	return s
}
