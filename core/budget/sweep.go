package budget

import (
	"context"
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"strconv"

	"heatledger/core/series"
)

// SweepOptions are the settings of the period sweep.
type SweepOptions struct {
	// FinalYears is the length of the final period in whole years; zero
	// means the length of Inputs.Final (rounded to whole years).
	FinalYears int
	// FirstEnd and LastEnd are the calendar years the final period ends
	// in, inclusive; zero means: from the first year whose final period
	// starts after the base period and lies within every series, to the
	// last complete year every series covers.
	FirstEnd, LastEnd int
	// Draws per final period; zero means DefaultSweepDraws (20,000).
	Draws int
	// Seed as MCOptions.Seed.
	Seed uint64
	// Progress, when set, is called after each final period.
	Progress func(done, total int)
	// Context, when set, cancels the sweep between final periods.
	Context context.Context
}

// SweepPoint is the sensitivity for one final period. Error is set (and
// the numbers are zero) when the inputs could not be computed for it.
type SweepPoint struct {
	EndYear             int        `json:"end_year"`
	Final               Period     `json:"final_period"`
	ECS                 Summary    `json:"ecs"`
	TCR                 Summary    `json:"tcr"`
	NonpositiveFraction float64    `json:"nonpositive_fraction"`
	Central             [4]float64 `json:"central_inputs"` // dT, dF, dN, F2x
	SD                  [4]float64 `json:"sd_inputs"`
	Error               string     `json:"error,omitempty"`
}

// SweepResult is ECS and TCR against the end of the final period.
type SweepResult struct {
	Base       Period       `json:"base_period"`
	FinalYears int          `json:"final_years"`
	Draws      int          `json:"draws"`
	Seed       uint64       `json:"seed"`
	Points     []SweepPoint `json:"points"`
	Warnings   []string     `json:"warnings"`
}

// Sweep computes the energy-budget sensitivity (Sensitivity's formulas and
// conventions) for a final period of fixed length whose end slides over
// the record, the base period held fixed: it shows how one slow- or
// fast-warming decade moves the estimate. Every final period reuses the
// same standard variates (common random numbers), so differences between
// neighbouring points come from the inputs, not from Monte Carlo noise.
// Histograms are not kept. At least one input must come from a series.
func Sweep(in Inputs, opt SweepOptions) (*SweepResult, error) {
	n := opt.Draws
	if n == 0 {
		n = DefaultSweepDraws
	}
	if n < 10 || n > MaxSweepDraws {
		return nil, fmt.Errorf("draws per final period %d: expected 10 to %d", n, MaxSweepDraws)
	}
	ctx := opt.Context
	if ctx == nil {
		ctx = context.Background()
	}
	first, last, L, err := SweepEnds(in, opt)
	if err != nil {
		return nil, err
	}
	// Layout from the first period that resolves.
	var lay layout
	found := false
	var firstErr error
	for e := first; e <= last && !found; e++ {
		in2 := in
		in2.Final = finalPeriod(e, L)
		rs, err := in2.Resolve()
		if err == nil {
			lay, found = layoutOf(rs), true
		} else if firstErr == nil {
			firstErr = err
		}
	}
	if !found {
		return nil, fmt.Errorf("period sweep: no final period could be evaluated: %w", firstErr)
	}
	var ev evaluator
	ev.init(n, len(lay.parts))
	for p, d := range lay.parts {
		r := rand.New(rand.NewPCG(opt.Seed, lay.stream[p]))
		std := ev.std[p]
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
	ecs, tcr := make([]float64, n), make([]float64, n)
	res := &SweepResult{Base: in.Base, FinalYears: L, Draws: n, Seed: opt.Seed, Warnings: []string{}}
	total := last - first + 1
	for e := first; e <= last; e++ {
		if err := ctx.Err(); err != nil {
			return nil, err
		}
		pt := SweepPoint{EndYear: e, Final: finalPeriod(e, L)}
		in2 := in
		in2.Final = pt.Final
		rs, err := in2.Resolve()
		if err != nil {
			pt.Error = err.Error()
		} else {
			l2 := layoutOf(rs)
			if len(l2.parts) != len(lay.parts) {
				pt.Error = "the inputs changed shape between final periods"
			} else {
				c := ev.eval(l2, n, ecs, tcr)
				pt.NonpositiveFraction = float64(c.nonpos) / float64(n)
				cen := centralOf(rs)
				pt.Central = cen
				for _, r := range rs {
					k := map[string]int{"dT": 0, "dF": 1, "dN": 2, "F2x": 3}[r.Role]
					pt.SD[k] = math.Hypot(pt.SD[k], r.SD)
				}
				pt.ECS = summarize(ecs, ratioECS(cen), 0, false)
				pt.TCR = summarize(tcr, ratioTCR(cen), 0, false)
			}
		}
		res.Points = append(res.Points, pt)
		if opt.Progress != nil {
			opt.Progress(e-first+1, total)
		}
	}
	nerr := 0
	for _, p := range res.Points {
		if p.Error != "" {
			nerr++
		}
	}
	if nerr > 0 {
		res.Warnings = append(res.Warnings, fmt.Sprintf("%d of %d final periods could not be evaluated (see each point's error)", nerr, total))
	}
	return res, nil
}

// SweepEnds returns the range of end years and the final period's length
// that Sweep will use (see SweepOptions for the automatic choices).
func SweepEnds(in Inputs, opt SweepOptions) (first, last, years int, err error) {
	var ss []*series.Series
	for _, q := range append([]Quantity{in.DT, in.DN}, in.DF...) {
		if q.Series != nil {
			ss = append(ss, q.Series)
		}
	}
	if len(ss) == 0 {
		return 0, 0, 0, errors.New("period sweep: no input comes from a series, so the final period changes nothing")
	}
	_, bHi, err := in.Base.bounds()
	if err != nil {
		// a sweep with every series given a typed base value needs no base period
		if !allTypedBase(in) {
			return 0, 0, 0, fmt.Errorf("base period: %v", err)
		}
		bHi = math.Inf(-1)
	}
	L := opt.FinalYears
	if L < 0 {
		return 0, 0, 0, fmt.Errorf("final period length %d years: expected 1 or more", L)
	}
	if L == 0 {
		lo, hi, err := in.Final.bounds()
		if err != nil {
			return 0, 0, 0, fmt.Errorf("final period length: give the length in years or a final period (%v)", err)
		}
		L = int(math.Round(hi - lo))
	}
	if L < 1 || L > 1000 {
		return 0, 0, 0, fmt.Errorf("final period length %d years: expected 1 or more", L)
	}
	first, last = opt.FirstEnd, opt.LastEnd
	if first == 0 || last == 0 {
		lo, hi := math.MinInt, math.MaxInt
		for _, s := range ss {
			a, b := s.WholeYears()
			lo, hi = max(lo, a), min(hi, b)
		}
		if first == 0 {
			first = lo + L - 1
			if !math.IsInf(bHi, -1) {
				first = max(first, int(math.Ceil(bHi-1e-9))+L-1)
			}
		}
		if last == 0 {
			last = hi
		}
	}
	if last < first {
		return 0, 0, 0, fmt.Errorf("period sweep: no final period of %d years fits between the base period and the end of the series (ends %d to %d)", L, first, last)
	}
	if last-first > 2000 {
		return 0, 0, 0, fmt.Errorf("period sweep: %d final periods: expected at most 2000", last-first+1)
	}
	return first, last, L, nil
}

func allTypedBase(in Inputs) bool {
	for _, q := range append([]Quantity{in.DT, in.DN}, in.DF...) {
		if q.Series != nil && q.Base == nil {
			return false
		}
	}
	return true
}

func finalPeriod(end, years int) Period {
	return Period{From: strconv.Itoa(end - years + 1), To: strconv.Itoa(end)}
}
