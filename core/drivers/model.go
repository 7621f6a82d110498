package drivers

import (
	"errors"
	"fmt"
	"math"
	"sort"
	"strings"

	"heatledger/core/series"
)

// model is a validated problem: the fit window's axis and the prepared
// drivers.
type model struct {
	target     *series.Series
	res        series.Resolution
	stepMonths int // months per step: 1 (monthly) or 12 (annual)
	opt        Options
	h          int
	trendKind  string
	breaks     []float64
	lo, hi     int       // absolute step indices of the fit window
	t, y       []float64 // window axis: times (the target's) and values
	tz         []float64 // trend series on the window axis (TrendSeries)
	drv        []prepDriver
	warnings   []string
}

// prepDriver is a driver after smoothing and detrending.
type prepDriver struct {
	spec Driver
	name string
	x    *series.Series
	lags []int // candidate lags, months
}

func (m *model) label(idx int) string { return series.StepLabel(m.res, idx) }

func (m *model) windowText() string { return m.label(m.lo) + " and " + m.label(m.hi) }

// newModel validates the inputs and prepares the drivers.
func newModel(target *series.Series, drivers []Driver, opt Options) (*model, error) {
	if target == nil {
		return nil, errors.New("no target series given")
	}
	if target.Resolution != series.Monthly && target.Resolution != series.Annual {
		return nil, fmt.Errorf("target %q: unknown resolution: expected monthly or annual", target.Name)
	}
	if len(target.Times) != len(target.Values) {
		return nil, fmt.Errorf("target %q has %d times for %d values: build series with series.New", target.Name, len(target.Times), len(target.Values))
	}
	m := &model{target: target, res: target.Resolution, stepMonths: 12 / target.Resolution.StepsPerYear(), opt: opt}

	// Annual cycle.
	m.h = 2
	if target.Resolution == series.Annual {
		m.h = 0
	}
	if opt.Harmonics != nil && *opt.Harmonics >= 0 {
		m.h = *opt.Harmonics
	}
	if m.h > MaxHarmonics {
		return nil, fmt.Errorf("%d annual-cycle harmonics: expected 0, 1 or 2", m.h)
	}
	if m.h > 0 && target.Resolution == series.Annual {
		return nil, fmt.Errorf("target %q is annual: annual-cycle terms need a monthly target (use 0 harmonics)", target.Name)
	}

	// Fit window.
	w, err := target.WindowSpec(opt.From, opt.To)
	if err != nil {
		return nil, fmt.Errorf("fit window: %w", err)
	}
	m.lo, m.hi = w.First, w.Last()
	m.t = append([]float64(nil), target.Times[m.lo-target.First:m.hi-target.First+1]...)
	m.y = w.Values
	for i, v := range m.y {
		if math.IsInf(v, 0) {
			return nil, fmt.Errorf("target %q: value at %s is infinite: expected a finite value or missing", target.Name, m.label(m.lo+i))
		}
	}

	// Trend term.
	m.trendKind = strings.ToLower(strings.TrimSpace(opt.Trend))
	if m.trendKind == "" {
		m.trendKind = TrendLinear
	}
	switch m.trendKind {
	case TrendLinear, TrendNone:
	case TrendBroken:
		if len(opt.Breaks) == 0 {
			return nil, errors.New("broken trend: no break times given: expected one or more decimal years inside the fit window")
		}
		t0, t1 := m.t[0], m.t[len(m.t)-1]
		for i, b := range opt.Breaks {
			if !finite(b) || b <= t0 || b >= t1 {
				return nil, fmt.Errorf("broken trend: break %s lies outside the fit window %s to %s: expected a time strictly inside", fmtYear(b), m.label(m.lo), m.label(m.hi))
			}
			if i > 0 && b <= opt.Breaks[i-1] {
				return nil, fmt.Errorf("broken trend: break %s does not come after %s: expected increasing break times", fmtYear(b), fmtYear(opt.Breaks[i-1]))
			}
		}
		m.breaks = append([]float64(nil), opt.Breaks...)
	case TrendSeries:
		z := opt.TrendSeries
		if z == nil {
			return nil, errors.New("trend term \"series\": no trend series given")
		}
		if z.Resolution != target.Resolution {
			return nil, fmt.Errorf("trend series %q is %s but target %q is %s: expected the same resolution (make annual means first)", z.Name, z.Resolution, target.Name, target.Resolution)
		}
		m.tz = make([]float64, len(m.t))
		for i := range m.tz {
			m.tz[i] = z.At(m.lo + i)
			if math.IsInf(m.tz[i], 0) {
				return nil, fmt.Errorf("trend series %q: value at %s is infinite", z.Name, m.label(m.lo+i))
			}
		}
	default:
		return nil, fmt.Errorf("trend term %q: expected linear, none, broken or series", opt.Trend)
	}
	if m.trendKind != TrendBroken && len(opt.Breaks) > 0 {
		return nil, fmt.Errorf("break times given for a %s trend: breaks need the broken trend", m.trendKind)
	}
	if m.trendKind != TrendSeries && opt.TrendSeries != nil {
		return nil, fmt.Errorf("trend series %q given for a %s trend: a trend series needs the series trend", opt.TrendSeries.Name, m.trendKind)
	}

	// Drivers.
	if len(drivers) > MaxDrivers {
		return nil, fmt.Errorf("%d drivers: expected at most %d", len(drivers), MaxDrivers)
	}
	for k, d := range drivers {
		p, err := m.prepare(k, d)
		if err != nil {
			return nil, err
		}
		m.drv = append(m.drv, p)
	}
	return m, nil
}

// prepare validates one driver and applies smoothing and detrending.
func (m *model) prepare(k int, d Driver) (prepDriver, error) {
	if d.Series == nil {
		return prepDriver{}, fmt.Errorf("driver %d: no series given", k+1)
	}
	s := d.Series
	name := s.Name
	if s.Resolution != m.res {
		return prepDriver{}, fmt.Errorf("driver %q is %s but target %q is %s: expected the same resolution (make annual means first)", name, s.Resolution, m.target.Name, m.res)
	}
	if len(s.Times) != len(s.Values) {
		return prepDriver{}, fmt.Errorf("driver %q has %d times for %d values: build series with series.New", name, len(s.Times), len(s.Values))
	}
	if d.MinLag > d.MaxLag {
		return prepDriver{}, fmt.Errorf("driver %q: lag range %d to %d months ends before it starts", name, d.MinLag, d.MaxLag)
	}
	if d.MinLag < -MaxAbsLagMonths || d.MaxLag > MaxAbsLagMonths {
		return prepDriver{}, fmt.Errorf("driver %q: lag range %d to %d months: expected lags within +-%d months", name, d.MinLag, d.MaxLag, MaxAbsLagMonths)
	}
	if m.stepMonths == 12 && (d.MinLag%12 != 0 || d.MaxLag%12 != 0) {
		return prepDriver{}, fmt.Errorf("driver %q: lag range %d to %d months: expected whole years (multiples of 12) for annual series", name, d.MinLag, d.MaxLag)
	}
	var lags []int
	for l := d.MinLag; l <= d.MaxLag; l += m.stepMonths {
		lags = append(lags, l)
	}
	if len(lags) > MaxLagsPerDriver {
		return prepDriver{}, fmt.Errorf("driver %q: lag range %d to %d months has %d lags: expected at most %d", name, d.MinLag, d.MaxLag, len(lags), MaxLagsPerDriver)
	}
	for i, v := range s.Values {
		if math.IsInf(v, 0) {
			return prepDriver{}, fmt.Errorf("driver %q: value at %s is infinite: expected a finite value or missing", name, m.label(s.First+i))
		}
	}
	x := s.Clone()
	if d.Smooth3 {
		if m.res != series.Monthly {
			return prepDriver{}, fmt.Errorf("driver %q is annual: the three-month running mean needs a monthly driver", name)
		}
		x.Values = Smooth3(s.Values)
	}
	if d.Detrend {
		p, q, n := lineOver(x.Times, x.Values, m.t[0], m.t[len(m.t)-1])
		if n < 3 {
			return prepDriver{}, fmt.Errorf("driver %q: %d values between %s: expected at least 3 to detrend it over the fit window", name, n, m.windowText())
		}
		for i := range x.Values {
			x.Values[i] -= p + q*x.Times[i]
		}
	}
	pd := prepDriver{spec: d, name: name, x: x, lags: lags}
	// Every candidate lag must leave some values in the window.
	for _, l := range lags {
		cnt := 0
		for i := range m.t {
			if !math.IsNaN(m.lagged(pd, i, l)) {
				cnt++
			}
		}
		if cnt == 0 {
			return prepDriver{}, fmt.Errorf("driver %q: no values between %s at lag %d", name, m.windowText(), l)
		}
	}
	return pd, nil
}

// lagged is driver d at window position i and lag l months: x(t_i - l).
func (m *model) lagged(d prepDriver, i, l int) float64 {
	return d.x.At(m.lo + i - l/m.stepMonths)
}

// Smooth3 is the centred three-month running mean
// s_i = (v_{i-1} + v_i + v_{i+1}) / 3, NaN where any of the three is
// missing and at both ends (common practice for noisy monthly indices; the
// same as R's stats::filter(v, rep(1/3, 3), sides = 2)).
func Smooth3(v []float64) []float64 {
	out := make([]float64, len(v))
	for i := range v {
		if i == 0 || i == len(v)-1 || math.IsNaN(v[i-1]) || math.IsNaN(v[i]) || math.IsNaN(v[i+1]) {
			out[i] = math.NaN()
			continue
		}
		out[i] = (v[i-1] + v[i] + v[i+1]) / 3
	}
	return out
}

// lineOver fits v = p + q t by least squares over the values present with
// t0 <= t <= t1 (centred sums) and returns p, q and the count.
func lineOver(t, v []float64, t0, t1 float64) (p, q float64, n int) {
	var st, sv float64
	for i, x := range v {
		if !math.IsNaN(x) && t[i] >= t0 && t[i] <= t1 {
			st += t[i]
			sv += x
			n++
		}
	}
	if n < 3 {
		return 0, 0, n
	}
	tb, vb := st/float64(n), sv/float64(n)
	var sxx, sxy float64
	for i, x := range v {
		if !math.IsNaN(x) && t[i] >= t0 && t[i] <= t1 {
			sxx += (t[i] - tb) * (t[i] - tb)
			sxy += (t[i] - tb) * (x - vb)
		}
	}
	if sxx == 0 {
		return vb, 0, n
	}
	q = sxy / sxx
	return vb - q*tb, q, n
}

// AnnualHarmonics returns the 2H annual-cycle columns at the decimal years
// t (Foster and Rahmstorf 2011 fit two such harmonics to take up the
// residual seasonal cycle), in the order cos(2 pi t), sin(2 pi t),
// cos(4 pi t), sin(4 pi t), ...: column 2(h-1) is cos(2 pi h t) and column
// 2(h-1)+1 is sin(2 pi h t). The phase uses the fractional part of t (exact
// for whole h), which keeps full precision for years near 2000. Fit builds
// the annual cycle from the target's Times with this function.
func AnnualHarmonics(t []float64, h int) [][]float64 {
	cols := make([][]float64, 2*h)
	for c := range cols {
		cols[c] = make([]float64, len(t))
	}
	for i, v := range t {
		f := v - math.Floor(v)
		for k := 1; k <= h; k++ {
			s, c := math.Sincos(2 * math.Pi * float64(k) * f)
			cols[2*(k-1)][i] = c
			cols[2*(k-1)+1][i] = s
		}
	}
	return cols
}

// column is a named design column over a set of window positions.
type column struct {
	name string
	v    []float64
}

// trendColumns are the trend term's columns over the rows (window
// positions), with time centred at tc.
func (m *model) trendColumns(rows []int, tc float64) []column {
	var cols []column
	switch m.trendKind {
	case TrendLinear, TrendBroken:
		c := make([]float64, len(rows))
		for r, i := range rows {
			c[r] = m.t[i] - tc
		}
		cols = append(cols, column{"trend", c})
		for j, b := range m.breaks {
			h := make([]float64, len(rows))
			for r, i := range rows {
				h[r] = math.Max(m.t[i]-b, 0)
			}
			cols = append(cols, column{fmt.Sprintf("hinge %d (%s)", j+1, fmtYear(b)), h})
		}
	case TrendSeries:
		c := make([]float64, len(rows))
		for r, i := range rows {
			c[r] = m.tz[i]
		}
		cols = append(cols, column{"trend series " + m.opt.TrendSeries.Name, c})
	}
	return cols
}

// cycleColumns are the annual-cycle columns over the rows.
func (m *model) cycleColumns(rows []int) []column {
	t := make([]float64, len(rows))
	for r, i := range rows {
		t[r] = m.t[i]
	}
	hc := AnnualHarmonics(t, m.h)
	cols := make([]column, len(hc))
	for c := range hc {
		kind := "cos"
		if c%2 == 1 {
			kind = "sin"
		}
		cols[c] = column{fmt.Sprintf("annual %s %d", kind, c/2+1), hc[c]}
	}
	return cols
}

// driverColumn is driver k at lag l over the rows.
func (m *model) driverColumn(k, l int, rows []int) column {
	c := make([]float64, len(rows))
	for r, i := range rows {
		c[r] = m.lagged(m.drv[k], i, l)
	}
	return column{fmt.Sprintf("%s at lag %d", m.drv[k].name, l), c}
}

// baseOK reports whether the target and the trend series are present at
// window position i.
func (m *model) baseOK(i int) bool {
	if math.IsNaN(m.y[i]) {
		return false
	}
	return m.tz == nil || !math.IsNaN(m.tz[i])
}

// sample returns the window positions where the target, the trend term and
// every driver at the given lags are present, with the drop reasons (each
// month under its first cause).
func (m *model) sample(lags []int) (rows []int, reasons []DropReason) {
	type key struct {
		cause string
		k     int
	}
	counts := map[key]int{}
	var order []key
	add := func(k key) {
		if counts[k] == 0 {
			order = append(order, k)
		}
		counts[k]++
	}
	for i := range m.y {
		switch {
		case math.IsNaN(m.y[i]):
			add(key{"target missing", -2})
			continue
		case m.tz != nil && math.IsNaN(m.tz[i]):
			add(key{"trend series missing", -1})
			continue
		}
		ok := true
		for k, d := range m.drv {
			if math.IsNaN(m.lagged(d, i, lags[k])) {
				idx := m.lo + i - lags[k]/m.stepMonths
				if idx < d.x.First || idx > d.x.Last() {
					add(key{"driver out of range", k})
				} else {
					add(key{"driver missing", k})
				}
				ok = false
				break
			}
		}
		if ok {
			rows = append(rows, i)
		}
	}
	sort.Slice(order, func(a, b int) bool {
		if order[a].k != order[b].k {
			return order[a].k < order[b].k
		}
		return order[a].cause > order[b].cause // "driver missing" before "driver out of range"
	})
	for _, k := range order {
		r := DropReason{Cause: k.cause, Count: counts[k]}
		switch {
		case k.cause == "target missing":
			r.Series = m.target.Name
			r.Text = fmt.Sprintf("target %q missing: %d months", r.Series, r.Count)
		case k.cause == "trend series missing":
			r.Series = m.opt.TrendSeries.Name
			r.Text = fmt.Sprintf("trend series %q missing: %d months", r.Series, r.Count)
		default:
			l := lags[k.k]
			r.Series, r.LagMonths = m.drv[k.k].name, &l
			if k.cause == "driver missing" {
				r.Text = fmt.Sprintf("driver %q missing at lag %d: %d months", r.Series, l, r.Count)
			} else {
				r.Text = fmt.Sprintf("driver %q at lag %d reaches outside its record: %d months", r.Series, l, r.Count)
			}
		}
		reasons = append(reasons, r)
	}
	return rows, reasons
}

// searchSample returns the window positions where the target, the trend
// term and every driver at every candidate lag are present (the common
// sample of the lag search).
func (m *model) searchSample() []int {
	var rows []int
	for i := range m.y {
		if !m.baseOK(i) {
			continue
		}
		ok := true
		for _, d := range m.drv {
			for _, l := range d.lags {
				if math.IsNaN(m.lagged(d, i, l)) {
					ok = false
					break
				}
			}
			if !ok {
				break
			}
		}
		if ok {
			rows = append(rows, i)
		}
	}
	return rows
}
