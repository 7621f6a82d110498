package analysis

import (
	"fmt"
	"math"
	"strconv"
	"strings"

	"heatledger/core/chart"
	"heatledger/core/drivers"
	"heatledger/core/series"
	"heatledger/core/trend"
)

// DriversView is what the Drivers view shows for one fit of the lagged
// regression (core/drivers): the result, its charts as SVG text and its
// tables, already formatted. Every chart covers the fit window, so the
// charts share one time axis.
type DriversView struct {
	Result *drivers.Result `json:"result"`
	// FitSVG draws the target, the fitted model and the trend term.
	FitSVG string `json:"-"`
	// Contributions are the small multiples: one chart per driver of its
	// contribution b_k (x_k(t - L_k) - mean), in the target's units, all on
	// the same x range.
	Contributions []DriverFigure `json:"-"`
	// AdjustedSVG draws the raw and adjusted series with their trends over
	// the fit window.
	AdjustedSVG string `json:"-"`
	// ChangeSVG draws each term's share of the trend change between the two
	// comparison windows as bars ("" without the change table).
	ChangeSVG string `json:"-"`

	Coefficients Table `json:"coefficients"`
	Lags         Table `json:"lags"`
	// SearchNote says how the lags were chosen (method, sample, RSS, AIC).
	SearchNote string `json:"search_note"`
	Stats      Table  `json:"stats"`
	Trends     Table  `json:"trends"`
	// Change is the table of contributions to the trend change (nil when
	// no comparison windows were given or they could not be used; then
	// ChangeErr says why).
	Change    *Table `json:"change,omitempty"`
	ChangeErr string `json:"change_error,omitempty"`
	// Warnings are the engine's notes on the fit and on the trends.
	Warnings []string `json:"warnings"`
}

// DriverFigure is one driver's contribution chart.
type DriverFigure struct {
	Driver    string `json:"driver"`
	LagMonths int    `json:"lag_months"`
	SVG       string `json:"-"`
}

// DriversFigure fits the lagged regression (Adjust) and builds the charts
// and tables of the Drivers view. When the comparison windows (s.Change)
// cannot be used, the fit is made again without them, and the view carries
// the fit with ChangeErr explaining the windows' problem; any other error
// is returned.
func (w *Workspace) DriversFigure(s AdjustSettings) (*DriversView, error) {
	r, err := w.Adjust(s)
	changeErr := ""
	if err != nil && s.Change != nil {
		s2 := s
		s2.Change = nil
		r2, err2 := w.Adjust(s2)
		if err2 != nil {
			return nil, err2
		}
		r, err, changeErr = r2, nil, err.Error()
	}
	if err != nil {
		return nil, err
	}
	return DriversViewOf(r, changeErr)
}

// DriversViewOf builds the view of a fitted result. changeErr is shown in
// place of the trend-change table when it is not empty.
func DriversViewOf(r *drivers.Result, changeErr string) (*DriversView, error) {
	if r == nil || r.TargetSeries == nil || r.Fitted == nil || r.Adjusted == nil || len(r.Contributions) != len(r.Drivers) {
		return nil, fmt.Errorf("the drivers fit has no output series to draw")
	}
	tg := r.TargetSeries
	win, err := tg.WindowSpec(r.From, r.To)
	if err != nil {
		return nil, fmt.Errorf("fit window %s to %s of %q: %w", r.From, r.To, r.Target, err)
	}
	a := win.First - tg.First
	n := win.Len()
	if a < 0 || a+n > len(tg.Values) {
		return nil, fmt.Errorf("fit window %s to %s lies outside %q", r.From, r.To, r.Target)
	}
	cut := func(s *series.Series) []float64 { return s.Values[a : a+n] }
	tm := tg.Times[a : a+n]
	unit := unitOr(r.Unit)
	yl := axisLabel(tg)

	v := &DriversView{Result: r, ChangeErr: changeErr}

	// Target, fitted model and trend term.
	base := TrendTermAtLevel(r)[a : a+n]
	fc := chart.Lines{XLabel: "Year", YLabel: yl, YZero: true,
		Title: fmt.Sprintf("%s and the fitted model, %s to %s (R² %s)", r.Target, r.From, r.To, strconv.FormatFloat(r.R2, 'f', 3, 64))}
	fc.Lines = append(fc.Lines,
		chart.Line{Name: r.Target, X: tm, Y: cut(tg), Color: chart.Palette[4], Width: 1},
		chart.Line{Name: "fitted model", X: tm, Y: cut(r.Fitted), Color: chart.Palette[5], Width: 1.5},
		chart.Line{Name: "trend term (" + trendKindText(r) + ")", X: tm, Y: base, Color: chart.Palette[2], Width: 2, Dashed: true})
	v.FitSVG = fc.SVG()

	// One chart per driver, all with the same frame: the same x range (the
	// zero line spans the fit window), the same y range (a faint band from
	// minus to plus the largest contribution of any driver, which also
	// shows each factor against the biggest one) and no legend, so the plot
	// areas line up and the panels can be read as small multiples.
	t0, t1 := tm[0], tm[len(tm)-1]
	big := 0.0
	for _, c := range r.Contributions {
		for _, x := range c.Values[a : a+n] {
			if !math.IsNaN(x) && !math.IsInf(x, 0) {
				big = math.Max(big, math.Abs(x))
			}
		}
	}
	for k, d := range r.Drivers {
		c := chart.Lines{XLabel: "Year", YLabel: "contribution (" + unit + ")", Height: 220,
			Title: fmt.Sprintf("%s: contribution to %s (%s)", contributionName(d), r.Target, unit)}
		if big > 0 {
			c.Bands = append(c.Bands, chart.Band{X: []float64{t0, t1}, Lo: []float64{-big, -big}, Hi: []float64{big, big}, Color: "#777777", Opacity: 0.08})
		}
		c.Lines = append(c.Lines,
			chart.Line{X: []float64{t0, t1}, Y: []float64{0, 0}, Color: "#777777", Width: 0.75},
			chart.Line{X: tm, Y: cut(r.Contributions[k]), Color: chart.Palette[k%7], Width: 1.25})
		c.Desc = fmt.Sprintf("Line chart of the contribution of %s to %s, in %s, %s to %s; the shaded band spans plus and minus the largest contribution of any driver (%s %s).",
			contributionName(d), r.Target, unit, r.From, r.To, Fmt(big), unit)
		v.Contributions = append(v.Contributions, DriverFigure{Driver: d.Name, LagMonths: d.LagMonths, SVG: c.SVG()})
	}

	// Raw and adjusted series with their trends over the fit window.
	ac := chart.Lines{XLabel: "Year", YLabel: yl, YZero: true,
		Title: fmt.Sprintf("%s raw and adjusted, trends in %s per decade", r.Target, unit)}
	ac.Lines = append(ac.Lines,
		chart.Line{Name: "raw", X: tm, Y: cut(tg), Color: chart.Palette[1], Width: 1},
		chart.Line{Name: "adjusted", X: tm, Y: cut(r.Adjusted), Color: chart.Palette[5], Width: 1})
	if len(r.Trends) > 0 {
		wt := r.Trends[0]
		for _, tr := range []struct {
			label string
			res   *trend.Result
			col   string
		}{{"raw", wt.Raw, chart.Palette[4]}, {"adjusted", wt.Adjusted, chart.Palette[6]}} {
			if tr.res == nil {
				continue
			}
			x := []float64{tr.res.Start, tr.res.End}
			ac.Lines = append(ac.Lines, chart.Line{Name: fmt.Sprintf("%s trend %s", tr.label, signed(tr.res.SlopePerDecade)),
				X: x, Y: []float64{tr.res.At(x[0]), tr.res.At(x[1])}, Color: tr.col, Width: 2.5})
		}
	}
	v.AdjustedSVG = ac.SVG()

	v.Coefficients = coefficientTable(r)
	v.Lags, v.SearchNote = lagTable(r)
	v.Stats = statsTable(r)
	v.Trends = adjustedTrendsTable(r)
	if r.Change != nil {
		t := changeTable(r)
		v.Change = &t
		v.ChangeSVG = changeBars(r)
	}
	v.Warnings = append(v.Warnings, r.Warnings...)
	for _, wt := range r.Trends {
		for _, tr := range []struct {
			label string
			notes []string
		}{{"raw", warningsOf(wt.Raw)}, {"adjusted", warningsOf(wt.Adjusted)}} {
			for _, n := range tr.notes {
				v.Warnings = append(v.Warnings, fmt.Sprintf("trend of the %s series %s to %s: %s", tr.label, wt.From, wt.To, n))
			}
		}
	}
	return v, nil
}

// TrendTermAtLevel is the fitted trend term on the target's axis, drawn at
// the level of the data: the engine's Baseline (a + trend) plus each
// driver's mean effect sum_k b_k m_k, which the intercept absorbs because
// the drivers enter uncentred (an irradiance near 1361 W m-2 would put the
// bare term far below the data). Only the level moves; the shape is the
// fitted trend term's. Over the fit sample its mean equals that of the
// fitted series less the annual cycle, since the contributions are centred
// there.
func TrendTermAtLevel(r *drivers.Result) []float64 {
	level := 0.0
	for _, d := range r.Drivers {
		level += d.Estimate * d.Mean
	}
	out := make([]float64, len(r.Baseline.Values))
	for i, b := range r.Baseline.Values {
		out[i] = b + level
	}
	return out
}

func warningsOf(r *trend.Result) []string {
	if r == nil {
		return nil
	}
	return r.Warnings
}

func unitOr(u string) string {
	if u == "" {
		return "units"
	}
	return u
}

func contributionName(d drivers.DriverResult) string {
	s := fmt.Sprintf("%s, lag %d months", d.Name, d.LagMonths)
	var opts []string
	if d.Smooth3 {
		opts = append(opts, "3-month mean")
	}
	if d.Detrend {
		opts = append(opts, "detrended")
	}
	if len(opts) > 0 {
		s += " (" + strings.Join(opts, ", ") + ")"
	}
	return s
}

func trendKindText(r *drivers.Result) string {
	switch r.TrendKind {
	case drivers.TrendBroken:
		var bs []string
		if r.Trend != nil {
			for _, b := range r.Trend.Breaks {
				bs = append(bs, strconv.FormatFloat(b, 'f', 2, 64))
			}
		}
		return "broken at " + strings.Join(bs, ", ")
	case drivers.TrendSeries:
		if r.Trend != nil && r.Trend.Series != "" {
			return "scaled " + r.Trend.Series
		}
		return "a series"
	case drivers.TrendNone:
		return "constant"
	}
	return "linear"
}

// coefUnit is the unit of a driver's coefficient: target units per driver
// unit.
func coefUnit(target, driver string) string {
	if driver == "" || driver == "1" {
		return unitOr(target) + " per unit"
	}
	return unitOr(target) + " per " + driver
}

// coefficientTable lists each driver's coefficient with its standard errors,
// its effect of one standard deviation and its variance inflation factor,
// then the trend term.
func coefficientTable(r *drivers.Result) Table {
	unit := unitOr(r.Unit)
	t := Table{Title: "Coefficients",
		Columns: []string{"term", "lag (months)", "coefficient", "coefficient unit", "standard error (OLS)", "standard error (ARMA(1,1))",
			"effect of 1 SD (" + unit + ")", "standardised", "VIF"}}
	for _, d := range r.Drivers {
		t.Rows = append(t.Rows, []string{d.Name, strconv.Itoa(d.LagMonths), Fmt(d.Estimate), coefUnit(r.Unit, d.Unit),
			Fmt(d.StdErr), Fmt(d.StdErrARMA11), Fmt(d.Effect1SD), Fmt(d.Beta), Fmt(d.VIF)})
	}
	tt := r.Trend
	if tt == nil {
		return t
	}
	switch {
	case len(tt.Segments) > 0:
		for i, sg := range tt.Segments {
			t.Rows = append(t.Rows, []string{fmt.Sprintf("trend, segment %d (%s to %s)", i+1, strconv.FormatFloat(sg.From, 'f', 2, 64), strconv.FormatFloat(sg.To, 'f', 2, 64)),
				"-", Fmt(sg.SlopePerDecade), unit + " per decade", Fmt(sg.StderrOLSPerDecade), Fmt(sg.StderrARMA11PerDecade), "-", "-", "-"})
		}
	case tt.SlopePerDecade != nil:
		t.Rows = append(t.Rows, []string{"trend (linear)", "-", Fmt(*tt.SlopePerDecade), unit + " per decade",
			fmtOpt(tt.StderrOLSPerDecade), fmtOpt(tt.StderrARMA11PerDecade), "-", "-", "-"})
	case tt.SeriesCoef != nil:
		t.Rows = append(t.Rows, []string{"trend series " + tt.Series, "0", Fmt(tt.SeriesCoef.Estimate), "per unit of " + tt.Series,
			Fmt(tt.SeriesCoef.StdErr), Fmt(tt.SeriesCoef.StdErrARMA11), "-", "-", "-"})
	}
	return t
}

// lagTable lists the chosen lags and how much worse the fit gets one month
// either side; the note says how the search went.
func lagTable(r *drivers.Result) (Table, string) {
	t := Table{Title: "Lag search",
		Columns: []string{"driver", "lags tried (months)", "chosen lag (months)", "RSS increase at lag − 1", "RSS increase at lag + 1"}}
	for _, d := range r.Drivers {
		tried := fmt.Sprintf("%d to %d", d.MinLag, d.MaxLag)
		if d.MinLag == d.MaxLag {
			tried = "fixed"
		}
		t.Rows = append(t.Rows, []string{d.Name, tried, strconv.Itoa(d.LagMonths), fmtOpt(d.RSSIncreaseMinus1), fmtOpt(d.RSSIncreasePlus1)})
	}
	s := r.Search
	if s == nil {
		return t, "No lag search: every lag was fixed."
	}
	method := "Every combination tried"
	if s.Method == "coordinate" {
		method = fmt.Sprintf("Coordinate search from %d starts", s.Starts)
	}
	note := fmt.Sprintf("%s (%s combinations, %d fits) over the %d months where every candidate lag has data; residual sum of squares at the chosen lags %s, AIC %s. A dash: the neighbouring lag lies outside the range tried.",
		method, strconv.FormatFloat(s.Combinations, 'f', 0, 64), s.Evaluated, s.N, Fmt(s.RSS), Fmt(s.AIC))
	return t, note
}

// statsTable lists the fit statistics: the sample, what was dropped and
// why, goodness of fit and the residuals' autocorrelation.
func statsTable(r *drivers.Result) Table {
	t := Table{Title: "Fit statistics", Columns: []string{"statistic", "value"}}
	add := func(k, v string) { t.Rows = append(t.Rows, []string{k, v}) }
	add("target", r.Target+" ("+unitOr(r.Unit)+", "+r.Resolution+")")
	add("fit window", r.From+" to "+r.To)
	add("months used (n)", fmt.Sprintf("%d (%s to %s)", r.N, r.Start, r.End))
	add("months dropped", strconv.Itoa(r.Dropped))
	for _, d := range r.DroppedReasons {
		add("dropped: "+d.Cause+" ("+d.Series+")", fmt.Sprintf("%d: %s", d.Count, d.Text))
	}
	if r.OutsideWindow > 0 {
		add("target values outside the fit window", strconv.Itoa(r.OutsideWindow))
	}
	add("trend term", trendKindText(r))
	amps := make([]string, 0, len(r.Cycle))
	for _, h := range r.Cycle {
		amps = append(amps, fmt.Sprintf("%s %s", Fmt(h.Amplitude), unitOr(r.Unit)))
	}
	cyc := strconv.Itoa(r.Harmonics)
	if len(amps) > 0 {
		cyc += " (amplitudes " + strings.Join(amps, ", ") + ")"
	}
	add("annual-cycle harmonics", cyc)
	add("R²", Fmt(r.R2))
	add("adjusted R²", Fmt(r.AdjR2))
	add("AIC", Fmt(r.AIC))
	add("residual SD ("+unitOr(r.Unit)+")", Fmt(r.ResidualSD))
	add("residual lag-1 autocorrelation (rho1)", Fmt(r.Rho1))
	add("residual lag-2 autocorrelation (rho2)", Fmt(r.Rho2))
	add("phi = rho2 / rho1", fmtOpt(r.Phi))
	add("nu (ARMA(1,1) variance inflation, Foster and Rahmstorf 2011)", Fmt(r.Nu))
	add("condition number (scaled columns)", Fmt(r.Cond))
	return t
}

// adjustedTrendsTable lists the trends of the raw and adjusted series over
// each window reported.
func adjustedTrendsTable(r *drivers.Result) Table {
	unit := unitOr(r.Unit)
	level := 0.95
	if len(r.Trends) > 0 && r.Trends[0].Raw != nil {
		level = r.Trends[0].Raw.Level
	}
	t := Table{Title: "Trends of the raw and adjusted series",
		Columns: []string{"series", "from", "to", "n", "noise", "trend per decade (" + unit + ")", "standard error",
			fmt.Sprintf("%g%% low", 100*level), fmt.Sprintf("%g%% high", 100*level), "p (no trend)"}}
	for _, wt := range r.Trends {
		for i, tr := range []string{"raw", "adjusted"} {
			res := wt.Raw
			if i == 1 {
				res = wt.Adjusted
			}
			if res == nil {
				continue
			}
			t.Rows = append(t.Rows, []string{tr, res.From, res.To, strconv.Itoa(res.N), res.Noise, Fmt(res.SlopePerDecade),
				Fmt(res.StderrPerDecade), Fmt(res.CILowPerDecade), Fmt(res.CIHighPerDecade), FmtP(res.PValue)})
		}
	}
	return t
}

// changeTable lists each term's trend in windows A and B and its share of
// the change B - A. The terms add up to the raw change (drivers.TrendChange);
// the last row shows that sum.
func changeTable(r *drivers.Result) Table {
	c := r.Change
	unit := unitOr(r.Unit)
	t := Table{Title: fmt.Sprintf("Contributions to the trend change from A (%s to %s, %d months) to B (%s to %s, %d months)",
		c.A.From, c.A.To, c.A.N, c.B.From, c.B.To, c.B.N),
		Columns: []string{"term", "trend in A (" + unit + " per decade)", "trend in B (" + unit + " per decade)", "change B − A (" + unit + " per decade)"}}
	row := func(name string, cr drivers.ChangeRow) []string {
		return []string{name, Fmt(cr.APerDecade), Fmt(cr.BPerDecade), Fmt(cr.ChangePerDecade)}
	}
	t.Rows = append(t.Rows, row(c.Raw.Term+" (raw)", c.Raw))
	sum := drivers.ChangeRow{}
	addUp := func(cr drivers.ChangeRow) {
		sum.APerDecade += cr.APerDecade
		sum.BPerDecade += cr.BPerDecade
		sum.ChangePerDecade += cr.ChangePerDecade
	}
	for k, d := range c.Drivers {
		name := d.Term
		if k < len(r.Drivers) {
			name = fmt.Sprintf("%s (lag %d)", d.Term, r.Drivers[k].LagMonths)
		}
		t.Rows = append(t.Rows, row(name, d))
		addUp(d)
	}
	t.Rows = append(t.Rows, row("annual cycle", c.Cycle))
	addUp(c.Cycle)
	t.Rows = append(t.Rows, row("adjusted (what remains)", c.Adjusted))
	addUp(c.Adjusted)
	t.Rows = append(t.Rows, row("sum of the terms (equals raw)", sum))
	return t
}

// changeBars draws each term's share of the trend change as horizontal
// bars beside the raw change.
func changeBars(r *drivers.Result) string {
	c := r.Change
	unit := unitOr(r.Unit)
	cats := []string{"raw"}
	vals := []float64{c.Raw.ChangePerDecade}
	for _, d := range c.Drivers {
		cats = append(cats, d.Term)
		vals = append(vals, d.ChangePerDecade)
	}
	cats = append(cats, "annual cycle", "adjusted")
	vals = append(vals, c.Cycle.ChangePerDecade, c.Adjusted.ChangePerDecade)
	b := chart.Bars{Horizontal: true, Height: 60 + 34*len(cats),
		Title:      fmt.Sprintf("Change in trend, %s–%s to %s–%s", c.A.From, c.A.To, c.B.From, c.B.To),
		XLabel:     "change B − A (" + unit + " per decade)",
		Categories: cats,
		Series:     []chart.BarSeries{{Name: "change B − A", Values: vals, Color: chart.Palette[4]}}}
	return b.SVG()
}
