package drivers

import (
	"fmt"
	"math"
	"strings"

	"gonum.org/v1/gonum/mat"

	"heatledger/core/linreg"
	"heatledger/core/series"
	"heatledger/core/trend"
)

// run searches the lags, fits the model and builds the outputs.
func (m *model) run() (*Result, error) {
	K := len(m.drv)
	nTrend := len(m.trendColumns(nil, 0))
	p := 1 + nTrend + K + 2*m.h
	r := &Result{
		Target: m.target.Name, Unit: m.target.Unit, Resolution: m.res.String(),
		From: m.label(m.lo), To: m.label(m.hi),
		Harmonics: m.h, TrendKind: m.trendKind,
		DroppedReasons: []DropReason{}, Warnings: []string{},
	}
	for i, v := range m.target.Values {
		if idx := m.target.First + i; !math.IsNaN(v) && (idx < m.lo || idx > m.hi) {
			r.OutsideWindow++
		}
	}

	// Lag search.
	lags := make([]int, K)
	for k, d := range m.drv {
		lags[k] = d.lags[0]
	}
	var sd *searchData
	var js []int
	searched := false
	combos := 1.0
	for _, d := range m.drv {
		combos *= float64(len(d.lags))
		if len(d.lags) > 1 {
			searched = true
		}
	}
	if searched {
		rows := m.searchSample()
		if len(rows) <= p+1 {
			return nil, m.searchTooFew(rows, p)
		}
		var err error
		if sd, err = m.buildSearch(rows); err != nil {
			return nil, err
		}
		limit := ExhaustiveLimit
		if m.opt.Exhaustive > 0 {
			limit = m.opt.Exhaustive
		}
		starts := DefaultStarts
		if m.opt.Starts > 0 {
			starts = m.opt.Starts
		}
		var rss float64
		ls := &LagSearch{Combinations: combos, N: len(rows)}
		if combos <= float64(limit) {
			ls.Method = "exhaustive"
			js, rss = sd.exhaustive()
		} else {
			ls.Method = "coordinate"
			ls.Starts = starts
			js, rss = sd.coordinate(starts)
		}
		if math.IsInf(rss, 1) {
			return nil, fmt.Errorf("lag search between %s: the drivers are collinear with each other or with the trend and annual-cycle terms at every combination of lags", m.windowText())
		}
		if !(rss > 0) {
			return nil, fmt.Errorf("lag search between %s: the model fits the target exactly at lags %v: there is no residual variability to judge the lags or the uncertainty by", m.windowText(), js)
		}
		ls.Evaluated = sd.evals
		ls.RSS = rss
		ls.AIC = aic(len(rows), p, rss)
		r.Search = ls
		for k, d := range m.drv {
			lags[k] = d.lags[js[k]]
		}
	}

	// Final fit.
	rows, reasons := m.sample(lags)
	r.DroppedReasons = append(r.DroppedReasons, reasons...)
	r.N = len(rows)
	r.Dropped = len(m.y) - len(rows)
	if len(rows) <= p+1 {
		var why []string
		for _, d := range reasons {
			why = append(why, d.Text)
		}
		return nil, fmt.Errorf("only %d months between %s have every term present (%s): expected more than %d for %d coefficients", len(rows), m.windowText(), strings.Join(why, "; "), p+1, p)
	}
	tc := meanAt(m.t, rows)
	r.RefTime = tc
	n := len(rows)
	cols := []column{{"intercept", ones(n)}}
	cols = append(cols, m.trendColumns(rows, tc)...)
	for k := range m.drv {
		cols = append(cols, m.driverColumn(k, lags[k], rows))
	}
	cols = append(cols, m.cycleColumns(rows)...)
	X := mat.NewDense(n, p, nil)
	y := make([]float64, n)
	for rI, i := range rows {
		y[rI] = m.y[i]
		for j, c := range cols {
			X.Set(rI, j, c.v[rI])
		}
	}
	fit, err := linreg.OLS(X, y)
	if err != nil {
		if e := firstDependent(cols); e != nil {
			return nil, fmt.Errorf("fit between %s: %w", m.windowText(), e)
		}
		return nil, fmt.Errorf("fit between %s: %w", m.windowText(), err)
	}
	r.Fit = fit
	for _, c := range cols {
		r.Columns = append(r.Columns, c.name)
	}
	r.Start, r.End = m.label(m.lo+rows[0]), m.label(m.lo+rows[n-1])

	// Fit statistics.
	var ybar, tss float64
	for _, v := range y {
		ybar += v
	}
	ybar /= float64(n)
	for _, v := range y {
		tss += (v - ybar) * (v - ybar)
	}
	sdY := math.Sqrt(tss / float64(n-1))
	if !(fit.RSS > 1e-26*tss) || fit.RSS == 0 {
		return nil, fmt.Errorf("fit between %s: the model fits the target exactly: there is no residual variability to estimate the uncertainty from", m.windowText())
	}
	r.RSS, r.DOF, r.ResidualSD = fit.RSS, fit.DOF, fit.ResidualSD
	if tss > 0 {
		r.R2 = 1 - fit.RSS/tss
		r.AdjR2 = 1 - (1-r.R2)*float64(n-1)/float64(n-p)
	}
	r.AIC = aic(n, p, fit.RSS)
	resid := make([]float64, len(m.y))
	for i := range resid {
		resid[i] = math.NaN()
	}
	for rI, i := range rows {
		resid[i] = fit.Residuals[rI]
	}
	r.Rho1, r.Rho2 = ResidualACF12(resid)
	nu, phi, note := Inflation(r.Rho1, r.Rho2)
	if !finite(nu) {
		return nil, fmt.Errorf("fit between %s: the residuals' lag-1 autocorrelation is 1: the ARMA(1,1) inflation is unbounded", m.windowText())
	}
	r.Nu = nu
	if !math.IsNaN(phi) {
		r.Phi = ptr(phi)
	}
	if note != "" {
		r.Warnings = append(r.Warnings, note)
	}
	sq := math.Sqrt(nu)
	coef := func(j int) Coef {
		return Coef{Estimate: fit.Coef[j], StdErr: fit.StdErr[j], StdErrARMA11: fit.StdErr[j] * sq}
	}
	r.Intercept = coef(0)
	r.CondRaw = fit.Cond
	r.Cond = scaledCond(cols[1:])
	vif := func(j int) float64 {
		c := cols[j].v
		var mean, ss float64
		for _, v := range c {
			mean += v
		}
		mean /= float64(n)
		for _, v := range c {
			ss += (v - mean) * (v - mean)
		}
		return fit.XtXInv.At(j, j) * ss
	}

	// Trend term.
	tt := &TrendTerm{Kind: m.trendKind}
	switch m.trendKind {
	case TrendLinear, TrendBroken:
		tt.SlopePerDecade = ptr(10 * fit.Coef[1])
		tt.StderrOLSPerDecade = ptr(10 * fit.StdErr[1])
		tt.StderrARMA11PerDecade = ptr(10 * fit.StdErr[1] * sq)
		if m.trendKind == TrendBroken {
			tt.Breaks = append([]float64(nil), m.breaks...)
			edges := append(append([]float64{m.t[rows[0]]}, m.breaks...), m.t[rows[n-1]])
			for s := 0; s <= len(m.breaks); s++ {
				var est, v float64
				for a := 1; a <= s+1; a++ {
					est += fit.Coef[a]
					for b := 1; b <= s+1; b++ {
						v += fit.Cov.At(a, b)
					}
				}
				se := math.Sqrt(math.Max(v, 0))
				tt.Segments = append(tt.Segments, Segment{From: edges[s], To: edges[s+1],
					SlopePerDecade: 10 * est, StderrOLSPerDecade: 10 * se, StderrARMA11PerDecade: 10 * se * sq})
			}
		}
	case TrendSeries:
		tt.Series = m.opt.TrendSeries.Name
		c := coef(1)
		tt.SeriesCoef = &c
	}
	r.Trend = tt

	// Drivers.
	for k, d := range m.drv {
		j := 1 + nTrend + k
		c := cols[j].v
		mean, sdx := meanSD(c)
		dr := DriverResult{
			Name: d.name, Unit: d.x.Unit, Smooth3: d.spec.Smooth3, Detrend: d.spec.Detrend,
			MinLag: d.spec.MinLag, MaxLag: d.spec.MaxLag, LagMonths: lags[k], Coef: coef(j),
			SD: sdx, Mean: mean, VIF: vif(j),
		}
		dr.Effect1SD = dr.Estimate * sdx
		if sdY > 0 {
			dr.Beta = dr.Effect1SD / sdY
		}
		if sd != nil && len(d.lags) > 1 {
			best := sd.eval(js)
			pos := append([]int(nil), js...)
			for jj, l := range d.lags {
				pos[k] = jj
				v := sd.eval(pos)
				lr := LagRSS{LagMonths: l}
				if !math.IsInf(v, 1) {
					lr.RSS = ptr(v)
					if jj == js[k]-1 {
						dr.RSSIncreaseMinus1 = ptr(v - best)
					}
					if jj == js[k]+1 {
						dr.RSSIncreasePlus1 = ptr(v - best)
					}
				}
				dr.Profile = append(dr.Profile, lr)
			}
			if r.Search != nil {
				r.Search.Evaluated = sd.evals
			}
			if len(d.lags) > 2 && (js[k] == 0 || js[k] == len(d.lags)-1) {
				r.Warnings = append(r.Warnings, fmt.Sprintf("driver %q: the chosen lag %d months is at the edge of the searched range %d to %d: the best lag may lie outside it; widen the range", d.name, lags[k], d.spec.MinLag, d.spec.MaxLag))
			}
		}
		if dr.VIF > VIFWarning {
			r.Warnings = append(r.Warnings, fmt.Sprintf("driver %q: variance inflation factor %.3g exceeds %d (common practice): it is collinear with the other terms, so its coefficient and those it overlaps with are poorly determined", d.name, dr.VIF, VIFWarning))
		}
		r.Drivers = append(r.Drivers, dr)
	}
	for h := 1; h <= m.h; h++ {
		j := 1 + nTrend + K + 2*(h-1)
		hc := Harmonic{H: h, Cos: coef(j), Sin: coef(j + 1)}
		hc.Amplitude = math.Hypot(hc.Cos.Estimate, hc.Sin.Estimate)
		r.Cycle = append(r.Cycle, hc)
	}
	if searched {
		r.Warnings = append(r.Warnings, "the lags were chosen to fit best: the standard errors do not allow for that choice and are optimistic")
		if r.Search.N < n {
			r.Warnings = append(r.Warnings, fmt.Sprintf("the lag search compared candidates over the %d months where every candidate lag has data; the final fit at the chosen lags uses %d months", r.Search.N, n))
		}
	}
	if r.Dropped > 0 {
		var why []string
		for _, d := range r.DroppedReasons {
			why = append(why, d.Text)
		}
		r.Warnings = append(r.Warnings, fmt.Sprintf("%d of %d months in the fit window were not used: %s", r.Dropped, len(m.y), strings.Join(why, "; ")))
	}

	if err := m.outputs(r, lags, rows); err != nil {
		return nil, err
	}
	if err := m.windowTrends(r); err != nil {
		return nil, err
	}
	if m.opt.Change != nil {
		c, err := m.change(r, *m.opt.Change)
		if err != nil {
			return nil, err
		}
		r.Change = c
	}
	return r, nil
}

// searchTooFew explains an empty or tiny common sample.
func (m *model) searchTooFew(rows []int, p int) error {
	var parts []string
	for _, d := range m.drv {
		cnt := 0
		for i := range m.y {
			if !m.baseOK(i) {
				continue
			}
			ok := true
			for _, l := range d.lags {
				if math.IsNaN(m.lagged(d, i, l)) {
					ok = false
					break
				}
			}
			if ok {
				cnt++
			}
		}
		parts = append(parts, fmt.Sprintf("driver %q at every lag %d to %d: %d months", d.name, d.lags[0], d.lags[len(d.lags)-1], cnt))
	}
	return fmt.Errorf("lag search: only %d months between %s have the target, the trend term and every driver at every candidate lag (%s): expected more than %d; narrow the lag ranges or widen the window", len(rows), m.windowText(), strings.Join(parts, "; "), p+1)
}

// aic is R's AIC() for a Gaussian linear model with p coefficients:
// n log(2 pi RSS / n) + n + 2 (p + 1), the residual variance counted as a
// parameter (Akaike 1974, IEEE Trans. Autom. Control 19, 716; citation
// from memory; the value equals R 4.2's AIC(lm), checked in ref_test.go).
func aic(n, p int, rss float64) float64 {
	fn := float64(n)
	return fn*math.Log(2*math.Pi*rss/fn) + fn + 2*float64(p+1)
}

// meanSD returns the mean and the standard deviation (n - 1 denominator).
func meanSD(v []float64) (float64, float64) {
	var mean float64
	for _, x := range v {
		mean += x
	}
	mean /= float64(len(v))
	var ss float64
	for _, x := range v {
		ss += (x - mean) * (x - mean)
	}
	if len(v) < 2 {
		return mean, math.NaN()
	}
	return mean, math.Sqrt(ss / float64(len(v)-1))
}

// scaledCond is the 2-norm condition number (largest over smallest
// singular value) of the columns centred and scaled to unit length:
// the square root of the condition number of their correlation matrix
// (Belsley, Kuh and Welsch 1980, Regression Diagnostics, discuss the
// scaled condition number; citation from memory; centring removes the ill-conditioning that only
// reflects a driver's distance from zero, e.g. irradiance near 1361 W m-2).
// 1 for a single column or none.
func scaledCond(cols []column) float64 {
	if len(cols) < 2 {
		return 1
	}
	n := len(cols[0].v)
	Z := mat.NewDense(n, len(cols), nil)
	for j, c := range cols {
		mean, _ := meanSD(c.v)
		var ss float64
		for _, v := range c.v {
			ss += (v - mean) * (v - mean)
		}
		s := math.Sqrt(ss)
		for i, v := range c.v {
			Z.Set(i, j, (v-mean)/s)
		}
	}
	return linreg.Cond2(Z)
}

// ResidualACF12 returns the lag-1 and lag-2 autocorrelations of residuals
// laid on a regular axis with NaN where a step is not in the fit: the mean
// of the present values is removed, c_k sums the products of pairs k steps
// apart that are both present, and r_k = c_k / c_0 with c_0 the sum of
// squares of all present values. Without gaps this is R's acf (Box and
// Jenkins 1976); with gaps it mirrors core/trend's treatment of its own
// residuals.
func ResidualACF12(e []float64) (r1, r2 float64) {
	r, n := linreg.ACFGaps(e, 2)
	if n < 3 || math.IsNaN(r[1]) {
		return math.NaN(), math.NaN()
	}
	return r[1], r[2]
}

// Inflation is the variance inflation factor for ARMA(1,1) residuals of
// Foster and Rahmstorf 2011 (Environ. Res. Lett. 6, 044022; the formula as
// ../shared/CHECKS.md gives it, from memory of the paper):
//
//	phi = rho2 / rho1,   nu = 1 + 2 rho1 / (1 - phi),   SE_ARMA = SE_OLS sqrt(nu),
//
// rho1, rho2 the lag-1 and lag-2 residual autocorrelations, computed by
// trend.NoiseInflation with its arma11 fall-backs: rho1 <= 0 (or NaN) means
// no positive autocorrelation to correct for, nu = 1 and phi NaN; phi
// outside [0, 1) makes the ARMA(1,1) estimate unusable, so AR(1) with
// phi = rho1, nu = (1 + rho1)/(1 - rho1) (+Inf when rho1 >= 1). note
// explains a fall-back (empty otherwise). Applied here to every
// coefficient, as Foster and Rahmstorf apply it to the trend; kept as a
// wrapper for its notes and for core/ebm.
func Inflation(rho1, rho2 float64) (nu, phi float64, note string) {
	inf := trend.NoiseInflation(trend.NoiseARMA11, 0, rho1, rho2)
	switch inf.Fallback {
	case trend.FallbackWhite:
		return inf.Nu, inf.Phi, fmt.Sprintf("arma11: the residuals' lag-1 autocorrelation rho1 = %.3f is not positive: no autocorrelation to correct for, the ARMA(1,1) standard errors equal the OLS ones (nu = 1)", rho1)
	case trend.FallbackAR1:
		if rho1 >= 1 {
			return math.Inf(1), inf.Phi, "arma11: the residuals' lag-1 autocorrelation is 1: the inflation is unbounded"
		}
		return inf.Nu, inf.Phi, fmt.Sprintf("arma11: phi = rho2/rho1 = %.3f lies outside [0, 1), so the ARMA(1,1) estimate is unusable: AR(1) with phi = rho1 = %.3f is used, nu = (1 + rho1)/(1 - rho1)", rho2/rho1, rho1)
	}
	return inf.Nu, inf.Phi, ""
}

// outputs builds the output series on the target's full axis.
func (m *model) outputs(r *Result, lags []int, rows []int) error {
	tg := m.target
	N := len(tg.Values)
	newS := func(name string) *series.Series {
		v := make([]float64, N)
		for i := range v {
			v[i] = math.NaN()
		}
		s := series.New(name, tg.Unit, tg.Resolution, tg.First, v)
		copy(s.Times, tg.Times)
		return s
	}
	b := r.Fit.Coef
	nTrend := len(m.trendColumns(nil, 0))
	K := len(m.drv)
	r.TargetSeries = tg
	r.Fitted = newS(tg.Name + " fitted")
	r.Residuals = newS(tg.Name + " residuals")
	r.Baseline = newS(tg.Name + " trend term")
	r.CycleSeries = newS(tg.Name + " annual cycle")
	r.Adjusted = newS(tg.Name + " adjusted")
	r.Contributions = make([]*series.Series, K)
	for k, d := range m.drv {
		r.Contributions[k] = newS(fmt.Sprintf("%s contribution (lag %d)", d.name, lags[k]))
	}
	cyc := AnnualHarmonics(tg.Times, m.h)
	for i := 0; i < N; i++ {
		idx := tg.First + i
		t := tg.Times[i]
		base := b[0]
		switch m.trendKind {
		case TrendLinear, TrendBroken:
			base += b[1] * (t - r.RefTime)
			for j, tb := range m.breaks {
				base += b[2+j] * math.Max(t-tb, 0)
			}
		case TrendSeries:
			base += b[1] * m.opt.TrendSeries.At(idx)
		}
		r.Baseline.Values[i] = base
		var cy float64
		for c := range cyc {
			cy += b[1+nTrend+K+c] * cyc[c][i]
		}
		r.CycleSeries.Values[i] = cy
		fitted := base + cy
		sumC := 0.0
		for k, d := range m.drv {
			x := d.x.At(idx - lags[k]/m.stepMonths)
			bk := b[1+nTrend+k]
			fitted += bk * x
			c := bk * (x - r.Drivers[k].Mean)
			r.Contributions[k].Values[i] = c
			sumC += c
		}
		r.Fitted.Values[i] = fitted
		r.Adjusted.Values[i] = tg.Values[i] - sumC - cy
	}
	for rI, i := range rows {
		r.Residuals.Values[m.lo-tg.First+i] = r.Fit.Residuals[rI]
	}
	return nil
}

// windowTrends fits the raw and adjusted trends over Options.Windows.
func (m *model) windowTrends(r *Result) error {
	wins := m.opt.Windows
	if len(wins) == 0 {
		wins = []Window{{}}
	}
	opt := trend.Options{Noise: m.opt.Noise, Level: m.opt.Level}
	for _, w := range wins {
		from, to := m.windowBounds(w)
		raw, err := trend.SeriesWindow(m.target, from, to, opt)
		if err != nil {
			return fmt.Errorf("trend of the raw series, window %s to %s: %w", from, to, err)
		}
		adj, err := trend.SeriesWindow(r.Adjusted, from, to, opt)
		if err != nil {
			return fmt.Errorf("trend of the adjusted series, window %s to %s: %w", from, to, err)
		}
		adj.Series = r.Adjusted.Name
		r.Trends = append(r.Trends, WindowTrends{From: raw.From, To: raw.To, Raw: raw, Adjusted: adj})
	}
	return nil
}

// windowBounds fills an empty end of a window with the fit window's.
func (m *model) windowBounds(w Window) (string, string) {
	from, to := strings.TrimSpace(w.From), strings.TrimSpace(w.To)
	if from == "" {
		from = m.label(m.lo)
	}
	if to == "" {
		to = m.label(m.hi)
	}
	return from, to
}
