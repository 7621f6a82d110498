package analysis

import (
	"fmt"
	"math"
	"strconv"
	"strings"

	"heatledger/core/chart"
	"heatledger/core/series"
	"heatledger/core/trend"
)

// SmoothSettings choose the smoothing drawn over the data (display only; it
// never enters a trend).
type SmoothSettings struct {
	Kind   string  `json:"kind,omitempty"`   // "", "none", "running" or "lowess"
	Window int     `json:"window,omitempty"` // running mean: window in steps (odd, or even as a 2xN centred mean)
	Span   float64 `json:"span,omitempty"`   // LOWESS: fraction of the points in each local fit
}

// TrendView is what the Trends view shows for one window: the results, the
// chart (data, optional smoothing, each fitted line with its band) and the
// results table.
type TrendView struct {
	Results []*trend.Result `json:"results"`
	SVG     string          `json:"-"`
	Table   Table           `json:"table"`
	// Per is the unit of the slopes in the table: decade, year or century.
	Per string `json:"per"`
}

// perScale converts a per-decade slope to the chosen time unit.
func perScale(per string) (float64, error) {
	switch per {
	case "", "decade":
		return 1, nil
	case "year":
		return 0.1, nil
	case "century":
		return 10, nil
	}
	return 0, fmt.Errorf("slope unit %q: expected decade, year or century", per)
}

// Smooth returns the display smoothing of a series (NaN where undefined).
func Smooth(s *series.Series, sm SmoothSettings) ([]float64, string, error) {
	switch sm.Kind {
	case "", "none":
		return nil, "", nil
	case "running":
		w := sm.Window
		if w < 2 {
			return nil, "", fmt.Errorf("running mean of %d steps: expected at least 2", w)
		}
		if w > s.Len() {
			return nil, "", fmt.Errorf("running mean of %d steps is longer than %q (%d steps)", w, s.Name, s.Len())
		}
		v, err := trend.RunningMean(s.Values, w)
		return v, fmt.Sprintf("%d-step running mean", w), err
	case "lowess":
		t, y := s.Valid()
		if len(t) < 3 {
			return nil, "", fmt.Errorf("LOWESS needs at least 3 values in %q", s.Name)
		}
		f, err := trend.Lowess(t, y, trend.LowessOptions{Span: sm.Span})
		if err != nil {
			return nil, "", err
		}
		out := make([]float64, s.Len())
		k := 0
		for i, v := range s.Values {
			if math.IsNaN(v) {
				out[i] = math.NaN()
				continue
			}
			out[i] = f[k]
			k++
		}
		span := sm.Span
		if span == 0 {
			span = 2.0 / 3
		}
		return out, "LOWESS, span " + strconv.FormatFloat(span, 'g', 3, 64), nil
	}
	return nil, "", fmt.Errorf("smoothing %q: expected none, running or lowess", sm.Kind)
}

// TrendFigure computes the trends and draws them. The band around each
// fitted line spans the lines through the window's mean point whose slopes
// lie inside the confidence interval, so it shows the slope's uncertainty.
func (w *Workspace) TrendFigure(s TrendSettings, sm SmoothSettings, per string) (*TrendView, error) {
	scale, err := perScale(per)
	if err != nil {
		return nil, err
	}
	if per == "" {
		per = "decade"
	}
	results, err := w.Trends(s)
	if err != nil {
		return nil, err
	}
	v := &TrendView{Results: results, Per: per}
	c := chart.Lines{XLabel: "Year", YZero: true}
	units := map[string]bool{}
	var unitList []string
	for i, name := range s.Series {
		ser, _ := w.trendSeries(name, s.Anomalies)
		col := chart.Palette[i%7]
		c.Lines = append(c.Lines, chart.Line{Name: ser.Label(), X: ser.Times, Y: ser.Values, Color: col, Width: 1})
		if sv, label, err := Smooth(ser, sm); err != nil {
			return nil, err
		} else if sv != nil {
			c.Lines = append(c.Lines, chart.Line{Name: ser.Name + ", " + label, X: ser.Times, Y: sv, Color: col, Width: 2.5, Dashed: true})
		}
		r := results[i]
		win, err := ser.WindowSpec(s.From, s.To)
		if err != nil {
			return nil, err
		}
		tm, ym := meanPoint(win)
		lo, hi := r.CILowPerDecade/10, r.CIHighPerDecade/10
		xs := []float64{win.Times[0], win.Times[len(win.Times)-1]}
		line := []float64{r.At(xs[0]), r.At(xs[1])}
		bl := make([]float64, 2)
		bh := make([]float64, 2)
		for k, x := range xs {
			a, b := ym+lo*(x-tm), ym+hi*(x-tm)
			bl[k], bh[k] = math.Min(a, b), math.Max(a, b)
		}
		c.Bands = append(c.Bands, chart.Band{X: xs, Lo: bl, Hi: bh, Color: col, Opacity: 0.18})
		c.Lines = append(c.Lines, chart.Line{Name: fmt.Sprintf("%s trend %s", ser.Name, signed(r.SlopePerDecade*scale)), X: xs, Y: line, Color: col, Width: 2.5})
		if !units[ser.Unit] {
			units[ser.Unit] = true
			if ser.Unit != "" {
				unitList = append(unitList, ser.Unit)
			}
		}
	}
	c.YLabel = "Value"
	if len(unitList) > 0 {
		c.YLabel = "Value (" + strings.Join(unitList, ", ") + ")"
	}
	noise := noiseTitle(results[0].Noise)
	c.Title = fmt.Sprintf("Trend %s to %s, %s noise, %g%% interval", results[0].From, results[0].To, noise, 100*results[0].Level)
	v.SVG = c.SVG()
	v.Table = trendTable(w, results, scale, per)
	return v, nil
}

func meanPoint(s *series.Series) (tm, ym float64) {
	n := 0
	for i, y := range s.Values {
		if !math.IsNaN(y) {
			tm += s.Times[i]
			ym += y
			n++
		}
	}
	return tm / float64(n), ym / float64(n)
}

func signed(v float64) string {
	s := strconv.FormatFloat(v, 'f', 3, 64)
	if v >= 0 {
		return "+" + s
	}
	return s
}

// noiseTitle names a noise model with its source.
func noiseTitle(n string) string {
	switch n {
	case "white":
		return "white"
	case "ar1":
		return "AR(1) (Santer et al. 2008)"
	case "arma11":
		return "ARMA(1,1) (Foster and Rahmstorf 2011)"
	case "arma11-ml":
		return "ARMA(1,1) maximum likelihood"
	}
	return n
}

// Fmt formats a number for tables: 4 significant digits, no exponent for
// ordinary magnitudes, "-" for NaN.
func Fmt(v float64) string {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return "-"
	}
	a := math.Abs(v)
	if a != 0 && (a < 1e-4 || a >= 1e7) {
		return strconv.FormatFloat(v, 'e', 3, 64)
	}
	return strconv.FormatFloat(v, 'g', 4, 64)
}

// FmtP formats a p-value: below 1e-4 as "< 0.0001".
func FmtP(p float64) string {
	if math.IsNaN(p) {
		return "-"
	}
	if p < 1e-4 {
		return "< 0.0001"
	}
	return strconv.FormatFloat(p, 'f', 4, 64)
}

func fmtOpt(p *float64) string {
	if p == nil {
		return "-"
	}
	return Fmt(*p)
}

func trendTable(w *Workspace, rs []*trend.Result, scale float64, per string) Table {
	t := Table{Title: "Trends"}
	unit := func(name string) string {
		if s, err := w.Find(name); err == nil && s.Unit != "" {
			return s.Unit
		}
		return "units"
	}
	t.Columns = []string{"series", "unit", "from", "to", "n", "noise", "trend per " + per, "standard error",
		fmt.Sprintf("%g%% low", 100*rs[0].Level), fmt.Sprintf("%g%% high", 100*rs[0].Level), "p (no trend)",
		"rho1", "rho2", "phi", "nu", "effective n", "degrees of freedom", "residual SD"}
	for _, r := range rs {
		t.Rows = append(t.Rows, []string{r.Series, unit(r.Series), r.From, r.To, strconv.Itoa(r.N), r.Noise,
			Fmt(r.SlopePerDecade * scale), Fmt(r.StderrPerDecade * scale), Fmt(r.CILowPerDecade * scale), Fmt(r.CIHighPerDecade * scale),
			FmtP(r.PValue), Fmt(r.Rho1), Fmt(r.Rho2), fmtOpt(r.Phi), fmtOpt(r.Nu), fmtOpt(r.NEff), fmtOpt(r.DOF), Fmt(r.ResidualSD)})
	}
	return t
}
