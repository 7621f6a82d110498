package trend

import (
	"bufio"
	"errors"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"

	"heatledger/core/series"
)

// Grid steps (the values of GridOptions.Step).
const (
	GridStepYear  = "year"  // windows start in January and end in December (annual data: every year)
	GridStepMonth = "month" // windows start and end at any month (monthly data only)
)

// DefaultGridMinYears is the minimum window length used when
// GridOptions.MinYears is zero.
const DefaultGridMinYears = 10

// GridOptions are the settings of a trend grid.
type GridOptions struct {
	MinYears float64 // minimum window length in years (steps x step length); 0 means 10
	Step     string  // GridStepYear (default) or GridStepMonth
	Noise    string  // NoiseAR1 (default) or NoiseARMA11
	Level    float64 // confidence level; 0 means 0.95
}

// GridCell is the trend over one window of the grid.
type GridCell struct {
	StartIndex, EndIndex int     // positions in the input times (inclusive)
	Start, End           float64 // times of the first and last step
	N                    int     // values present
	SlopePerDecade       float64
	StderrPerDecade      float64
	DOF                  float64
	ExcludesZero         bool // the interval at Level excludes a zero trend
	ExcludesFull         bool // the interval at Level excludes the full-record trend
	// Skipped: the window was refused (fewer than 3 values, n_e or n/nu of
	// 3 or less, or no residual variability); its numbers are zero.
	Skipped bool
}

// GridResult is the trend grid. The JSON field names are the CLI contract
// of `heatledger grid --json`; the cells themselves go to CSV (WriteCSV).
type GridResult struct {
	Cells              int      `json:"cells"` // windows with a trend (skipped ones not counted)
	MinYears           float64  `json:"min_years"`
	Step               string   `json:"step"`
	Noise              string   `json:"noise"`
	ExcludingFullTrend int      `json:"excluding_full_trend"`
	Warnings           []string `json:"warnings"`

	Level            float64    `json:"-"`
	Windows          []GridCell `json:"-"` // every window, skipped ones included
	ExcludingZero    int        `json:"-"` // windows whose interval excludes zero
	ExpectedByChance float64    `json:"-"` // (1 - Level) x Cells: exclusions of the full trend expected by chance alone
	Skipped          int        `json:"-"`
	// Full is the full-record trend (same noise model and level); nil when
	// its uncertainty is refused (a warning says so), in which case the
	// cells are compared with its OLS slope FullSlopePerDecade.
	Full               *Result  `json:"-"`
	FullSlopePerDecade float64  `json:"-"`
	Labels             []string `json:"-"` // step labels (YYYY-MM / YYYY) for WriteCSV

	direct int // cells recomputed directly (near-degenerate sums)
}

// Grid computes the trend over every window (start, end) of a regular
// monthly or annual record at least opt.MinYears long: at GridStepYear
// windows run from a January to a December (annual data: every pair of
// years), at GridStepMonth from any month to any month. Each cell holds the
// OLS slope per decade, its standard error under opt.Noise (ar1: Santer et
// al. 2008; arma11: Foster and Rahmstorf 2011; the formulas of Window), and
// whether its interval at opt.Level excludes zero and the full-record
// trend (Window over the whole record with the same noise model).
//
// Cost: O(1) per cell from prefix sums, O(n^2) in all. With
// z = y - (full-record line) and u = t - mean(t) (z detrended first, so the
// sums stay small and cancellation mild), m_i = 1 where y is present (z, u
// set to 0 where missing), a window [s, e] has
//
//	n = sum m, S_uu = sum u^2 - (sum u)^2/n, S_uz = sum u z - sum u sum z / n,
//	beta = S_uz / S_uu, alpha = mean z - beta mean u, slope = b_full + beta,
//	RSS = S_zz - beta S_uz,
//
// and, with residuals e_i = z_i - alpha m_i - beta u_i, the lag-k residual
// cross product over the pairs (i, i+k) inside the window expands into
// lagged prefix sums of products of {m, u, z}:
//
//	C_k = [zz] - alpha([zm] + [mz]) - beta([zu] + [uz]) + alpha^2 [mm]
//	      + alpha beta([mu] + [um]) + beta^2 [uu],  [ab] = sum_{i=s}^{e-k} a_i b_{i+k},
//
// so r_k = C_k / RSS (the residuals of a fit with an intercept have mean
// zero, so R's acf mean removal changes nothing). Prefix sums are
// accumulated with Neumaier compensation. A cell whose sums cancel badly
// (RSS below 1e-4 of the magnitudes involved: a near-perfect line) is
// recomputed directly from its values, so every cell agrees with Window on
// the same values to about 1e-10. Missing values are handled exactly, as in
// Window: they are skipped, and lag pairs use only steps that are both present.
//
// Beside the grid: how many windows exclude the full-record trend, and how
// many would by chance alone if the rate never changed ((1 - Level) x cells;
// the windows overlap heavily, so the cells are far from independent).
// Scanning start and end years and reporting the most striking window is a
// multiple-testing trap; the warnings say so.
func Grid(t, y []float64, opt GridOptions) (*GridResult, error) {
	o, err := twGridOptions(opt)
	if err != nil {
		return nil, err
	}
	if err := twCheckAxis(t, y); err != nil {
		return nil, err
	}
	N := len(t)
	if N < 3 {
		return nil, fmt.Errorf("%d time steps: expected at least 3", N)
	}
	dt := twStep(t)
	spy := 0
	switch {
	case dt > 0 && math.Abs(dt*12-1) < 1e-5:
		spy = 12
	case dt > 0 && math.Abs(dt-1) < 1e-6:
		spy = 1
	default:
		return nil, errors.New("the trend grid needs a regular monthly or annual time axis (missing steps as NaN)")
	}
	if spy == 1 && o.Step == GridStepMonth {
		return nil, errors.New("step month needs monthly data: this record is annual (use step year)")
	}
	minSteps := int(math.Ceil(o.MinYears*float64(spy) - 1e-9))
	if minSteps < 3 {
		minSteps = 3
	}
	if N < minSteps {
		return nil, fmt.Errorf("the record is %s years long: shorter than the minimum window of %s years", strconv.FormatFloat(float64(N)/float64(spy), 'f', -1, 64), strconv.FormatFloat(o.MinYears, 'f', -1, 64))
	}
	g := &GridResult{
		MinYears: o.MinYears, Step: o.Step, Noise: o.Noise, Level: o.Level,
		Warnings: []string{},
	}
	// The full-record trend: only its slope is needed for the cells.
	full, ferr := Window(t, y, Options{Noise: o.Noise, Level: o.Level})
	var fullSlope, fullIntercept float64
	if ferr == nil {
		g.Full = full
		fullSlope, fullIntercept = full.SlopePerYear, full.Intercept
	} else {
		st, code := twFitLine(t, y, NoiseWhite, 2)
		if code != twOK {
			return nil, fmt.Errorf("full record: %w", ferr)
		}
		fullSlope, fullIntercept = st.slope, st.intercept
		g.Warnings = append(g.Warnings, "full record: its trend's uncertainty is refused ("+ferr.Error()+"); the cells are still compared with its slope")
	}
	g.FullSlopePerDecade = 10 * fullSlope

	// Start and end positions.
	month := func(i int) int { // 0 = January
		f := t[i] - math.Floor(t[i])
		return int(math.Floor(f*12 + 1e-6))
	}
	yearStep := spy == 12 && o.Step == GridStepYear
	var starts []int
	for s := 0; s < N; s++ {
		if yearStep && month(s) != 0 {
			continue
		}
		starts = append(starts, s)
	}
	stride := 1
	if yearStep {
		stride = 12
	}
	count := 0
	for _, s := range starts {
		first := s + minSteps - 1
		if yearStep {
			first = s + 12*((minSteps+11)/12) - 1
		}
		if first < N {
			count += (N-1-first)/stride + 1
		}
	}
	if count == 0 {
		return nil, fmt.Errorf("no window of at least %s years fits in the record at step %s", strconv.FormatFloat(o.MinYears, 'f', -1, 64), o.Step)
	}

	gs := newTwGridSums(t, y, fullSlope, fullIntercept)
	q := newTwQCache(o.Level, N)
	bFull := fullSlope
	g.Windows = make([]GridCell, 0, count)
	for _, s := range starts {
		first := s + minSteps - 1
		if yearStep {
			first = s + 12*((minSteps+11)/12) - 1
		}
		for e := first; e < N; e += stride {
			c := GridCell{StartIndex: s, EndIndex: e, Start: t[s], End: t[e]}
			slope, se, dof, n, status := gs.cell(s, e, o.Noise)
			ok := status == twCellOK
			if status == twCellDirect {
				// Near-degenerate sums: compute the cell directly.
				g.direct++
				st, code := twFitLine(t[s:e+1], y[s:e+1], o.Noise, 2)
				n = st.n
				if code == twOK {
					slope, se, dof, ok = st.slope, st.nz.se, st.nz.dof, true
				}
			}
			c.N = n
			if !ok {
				c.Skipped = true
				g.Skipped++
				g.Windows = append(g.Windows, c)
				continue
			}
			c.SlopePerDecade = 10 * slope
			c.StderrPerDecade = 10 * se
			c.DOF = dof
			c.ExcludesZero = q.exceeds(math.Abs(slope)/se, dof)
			c.ExcludesFull = q.exceeds(math.Abs(slope-bFull)/se, dof)
			g.Cells++
			if c.ExcludesZero {
				g.ExcludingZero++
			}
			if c.ExcludesFull {
				g.ExcludingFullTrend++
			}
			g.Windows = append(g.Windows, c)
		}
	}
	g.ExpectedByChance = (1 - o.Level) * float64(g.Cells)
	g.Labels = twLabels(t, spy)

	pct := strconv.FormatFloat(100*o.Level, 'f', -1, 64)
	g.Warnings = append(g.Warnings, fmt.Sprintf("the grid holds %d windows; %d of them exclude the full-record trend at the %s%% level, and about %.0f would by chance alone if the rate never changed. The windows overlap heavily, so neighbouring cells are far from independent: picking the most striking start and end after looking is a multiple-testing trap, not evidence of a change in rate", g.Cells, g.ExcludingFullTrend, pct, g.ExpectedByChance))
	if o.MinYears < ShortWindowYears {
		g.Warnings = append(g.Warnings, fmt.Sprintf("windows as short as %s years are included: over less than %d years trends are dominated by year-to-year variability (common practice)", strconv.FormatFloat(o.MinYears, 'f', -1, 64), ShortWindowYears))
	}
	if g.Skipped > 0 {
		g.Warnings = append(g.Warnings, fmt.Sprintf("%d windows skipped: fewer than 3 values, too few effective independent values (n_e or n/nu of 3 or less) or no residual variability", g.Skipped))
	}
	if g.Full != nil {
		for _, w := range g.Full.Warnings {
			if strings.HasPrefix(w, "the window is") {
				continue
			}
			g.Warnings = append(g.Warnings, "full record: "+w)
		}
	}
	return g, nil
}

// SeriesGrid is Grid over a whole series; the cells' CSV labels are the
// series' step labels (YYYY-MM or YYYY).
func SeriesGrid(s *series.Series, opt GridOptions) (*GridResult, error) {
	if s == nil {
		return nil, errors.New("no series given")
	}
	g, err := Grid(s.Times, s.Values, opt)
	if err != nil {
		return nil, fmt.Errorf("series %q: %w", s.Name, err)
	}
	g.Labels = make([]string, s.Len())
	for i := range g.Labels {
		g.Labels[i] = series.StepLabel(s.Resolution, s.First+i)
	}
	return g, nil
}

// WriteCSV writes one row per window:
// start,end,n,slope_per_decade,stderr_per_decade,excludes_zero,excludes_full
// (start and end as YYYY-MM or YYYY; skipped windows with empty numbers).
func (g *GridResult) WriteCSV(w io.Writer) error {
	bw := bufio.NewWriterSize(w, 1<<16)
	bw.WriteString("start,end,n,slope_per_decade,stderr_per_decade,excludes_zero,excludes_full\n")
	buf := make([]byte, 0, 128)
	label := func(i int, t float64) []byte {
		if i >= 0 && i < len(g.Labels) {
			return append(buf, g.Labels[i]...)
		}
		return strconv.AppendFloat(buf, t, 'f', -1, 64)
	}
	for _, c := range g.Windows {
		buf = buf[:0]
		buf = label(c.StartIndex, c.Start)
		buf = append(buf, ',')
		buf = label(c.EndIndex, c.End)
		buf = append(buf, ',')
		buf = strconv.AppendInt(buf, int64(c.N), 10)
		if c.Skipped {
			buf = append(buf, ",,,,\n"...)
		} else {
			buf = append(buf, ',')
			buf = strconv.AppendFloat(buf, c.SlopePerDecade, 'g', 10, 64)
			buf = append(buf, ',')
			buf = strconv.AppendFloat(buf, c.StderrPerDecade, 'g', 10, 64)
			buf = append(buf, ',')
			buf = strconv.AppendBool(buf, c.ExcludesZero)
			buf = append(buf, ',')
			buf = strconv.AppendBool(buf, c.ExcludesFull)
			buf = append(buf, '\n')
		}
		if _, err := bw.Write(buf); err != nil {
			return err
		}
	}
	return bw.Flush()
}

func twGridOptions(o GridOptions) (GridOptions, error) {
	if o.MinYears == 0 {
		o.MinYears = DefaultGridMinYears
	}
	if !(o.MinYears > 0) || math.IsInf(o.MinYears, 0) {
		return o, fmt.Errorf("minimum window length %v years: expected a positive number", o.MinYears)
	}
	o.Step = strings.ToLower(strings.TrimSpace(o.Step))
	if o.Step == "" {
		o.Step = GridStepYear
	}
	if o.Step != GridStepYear && o.Step != GridStepMonth {
		return o, fmt.Errorf("grid step %q: expected year or month", o.Step)
	}
	o.Noise = strings.ToLower(strings.TrimSpace(o.Noise))
	if o.Noise == "" {
		o.Noise = NoiseAR1
	}
	if o.Noise != NoiseAR1 && o.Noise != NoiseARMA11 {
		return o, fmt.Errorf("grid noise model %q: expected ar1 or arma11", o.Noise)
	}
	if o.Level == 0 {
		o.Level = DefaultLevel
	}
	if !(o.Level > 0 && o.Level < 1) {
		return o, fmt.Errorf("confidence level %v: expected a value between 0 and 1, e.g. 0.95", o.Level)
	}
	return o, nil
}

// twLabels formats every step as YYYY-MM (spy 12) or YYYY (spy 1).
func twLabels(t []float64, spy int) []string {
	out := make([]string, len(t))
	for i, v := range t {
		yr := int(math.Floor(v))
		if spy == 12 {
			m := int(math.Floor((v-math.Floor(v))*12+1e-6)) + 1
			out[i] = fmt.Sprintf("%04d-%02d", yr, m)
		} else {
			out[i] = fmt.Sprintf("%04d", yr)
		}
	}
	return out
}

// twPrefix is a prefix-sum array accumulated with Neumaier compensation.
func twPrefix(n int, term func(i int) float64) []float64 {
	p := make([]float64, n+1)
	var s, c float64
	for i := 0; i < n; i++ {
		x := term(i)
		tt := s + x
		if math.Abs(s) >= math.Abs(x) {
			c += (s - tt) + x
		} else {
			c += (x - tt) + s
		}
		s = tt
		p[i+1] = s + c
	}
	return p
}

// twLagSums are the lagged prefix sums [ab]_k of products a_i b_{i+k}.
type twLagSums struct {
	mm, mu, um, mz, zm, uu, uz, zu, zz []float64
}

type twGridSums struct {
	n                         int
	bFull                     float64
	m, u, z                   []float64
	pm, pu, pz, puu, puz, pzz []float64
	lag                       [3]twLagSums // index 1 and 2
}

func newTwGridSums(t, y []float64, fullSlope, fullIntercept float64) *twGridSums {
	N := len(t)
	g := &twGridSums{n: N, bFull: fullSlope, m: make([]float64, N), u: make([]float64, N), z: make([]float64, N)}
	// Centre time at the mean of the present times; detrend y by the full line.
	var tc float64
	cnt := 0
	for i, v := range y {
		if !math.IsNaN(v) {
			tc += t[i]
			cnt++
		}
	}
	tc /= float64(cnt)
	yc := fullIntercept + fullSlope*tc
	for i, v := range y {
		if math.IsNaN(v) {
			continue
		}
		g.m[i] = 1
		g.u[i] = t[i] - tc
		g.z[i] = (v - yc) - fullSlope*(t[i]-tc)
	}
	m, u, z := g.m, g.u, g.z
	g.pm = twPrefix(N, func(i int) float64 { return m[i] })
	g.pu = twPrefix(N, func(i int) float64 { return u[i] })
	g.pz = twPrefix(N, func(i int) float64 { return z[i] })
	g.puu = twPrefix(N, func(i int) float64 { return u[i] * u[i] })
	g.puz = twPrefix(N, func(i int) float64 { return u[i] * z[i] })
	g.pzz = twPrefix(N, func(i int) float64 { return z[i] * z[i] })
	for k := 1; k <= 2; k++ {
		L := max(N-k, 0)
		ls := &g.lag[k]
		pr := func(a, b []float64) []float64 {
			return twPrefix(L, func(i int) float64 { return a[i] * b[i+k] })
		}
		ls.mm, ls.mu, ls.um = pr(m, m), pr(m, u), pr(u, m)
		ls.mz, ls.zm = pr(m, z), pr(z, m)
		ls.uu, ls.uz, ls.zu, ls.zz = pr(u, u), pr(u, z), pr(z, u), pr(z, z)
	}
	return g
}

// Cell status from the prefix sums.
const (
	twCellOK      = iota
	twCellRefused // too few values or effective values
	twCellDirect  // the sums cancel too badly: recompute from the values
)

// cell returns the slope (per year, in y's units), its SE and dof under
// noise for the window [s, e], with a status.
func (g *twGridSums) cell(s, e int, noise string) (slope, se, dof float64, n int, status int) {
	nf := g.pm[e+1] - g.pm[s]
	n = int(math.Round(nf))
	if n < 3 {
		return 0, 0, 0, n, twCellRefused
	}
	su := g.pu[e+1] - g.pu[s]
	sz := g.pz[e+1] - g.pz[s]
	suu := g.puu[e+1] - g.puu[s]
	suz := g.puz[e+1] - g.puz[s]
	szz := g.pzz[e+1] - g.pzz[s]
	fn := float64(n)
	ubar := su / fn
	Suu := suu - su*ubar
	Suz := suz - su*sz/fn
	Szz := szz - sz*sz/fn
	if !(Suu > 0) {
		return 0, 0, 0, n, twCellDirect
	}
	beta := Suz / Suu
	alpha := sz/fn - beta*ubar
	rss := Szz - beta*Suz
	// Magnitude of the terms that cancel into rss and the lag products.
	mag := g.pzz[e+1] + g.pzz[s] + alpha*alpha*(g.pm[e+1]+g.pm[s]) + beta*beta*(g.puu[e+1]+g.puu[s]) + 2*math.Abs(alpha*beta)*(math.Abs(g.pu[e+1])+math.Abs(g.pu[s]))
	if !(rss > 1e-4*mag) {
		return 0, 0, 0, n, twCellDirect
	}
	var r [3]float64
	for k := 1; k <= 2; k++ {
		hi := e - k + 1 // pairs (i, i+k) with s <= i <= e-k
		if hi <= s {
			continue
		}
		L := &g.lag[k]
		d := func(p []float64) float64 { return p[hi] - p[s] }
		ck := d(L.zz) - alpha*(d(L.zm)+d(L.mz)) - beta*(d(L.zu)+d(L.uz)) +
			alpha*alpha*d(L.mm) + alpha*beta*(d(L.mu)+d(L.um)) + beta*beta*d(L.uu)
		r[k] = ck / rss
	}
	nz, code := twNoise(noise, n, 2, rss, 1/Suu, r[1], r[2])
	if code != twOK {
		return 0, 0, 0, n, twCellRefused
	}
	slope = g.bFull + beta
	return slope, nz.se, nz.dof, n, twCellOK
}

// twQCache decides |t| > q(level, dof) with quantiles cached at integer
// degrees of freedom: q decreases with dof, so q(k+1) <= q(dof) <= q(k) for
// k <= dof <= k+1, and the exact quantile is needed only between the two.
type twQCache struct {
	level float64
	qi    []float64 // qi[k] = q(level, k)
}

func newTwQCache(level float64, n int) *twQCache {
	c := &twQCache{level: level, qi: make([]float64, n+2)}
	for k := 1; k < len(c.qi); k++ {
		c.qi[k] = twQuantile(level, float64(k))
	}
	return c
}

func (c *twQCache) exceeds(ts, dof float64) bool {
	k := int(math.Floor(dof))
	if k >= 1 && k+1 < len(c.qi) {
		if ts > c.qi[k] {
			return true
		}
		if ts < c.qi[k+1] {
			return false
		}
	}
	return ts > twQuantile(c.level, dof)
}
