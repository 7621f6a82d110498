package analysis

import (
	"context"
	"fmt"
	"math"
	"strconv"

	"heatledger/core/chart"
	"heatledger/core/series"
	"heatledger/core/trend"
)

// CompareView is the two-window comparison as the page shows it.
type CompareView struct {
	Result *trend.Comparison `json:"result"`
	SVG    string            `json:"-"`
	Table  Table             `json:"table"`
}

// CompareFigure runs the comparison and draws the two window trends and the
// broken stick over the data.
func (w *Workspace) CompareFigure(s CompareSettings) (*CompareView, error) {
	c, err := w.Compare(s)
	if err != nil {
		return nil, err
	}
	ser, _ := w.Find(s.Series)
	ch := chart.Lines{XLabel: "Year", YLabel: axisLabel(ser), YZero: true,
		Title: fmt.Sprintf("%s: trends in two windows, %s noise", ser.Name, noiseTitle(c.Windows[0].Noise))}
	ch.Lines = append(ch.Lines, chart.Line{Name: ser.Label(), X: ser.Times, Y: ser.Values, Color: chart.Palette[0], Width: 1})
	for i, r := range c.Windows {
		x := []float64{r.Start, r.End}
		ch.Lines = append(ch.Lines, chart.Line{Name: fmt.Sprintf("%c: %s per decade", 'A'+i, signed(r.SlopePerDecade)),
			X: x, Y: []float64{r.At(x[0]), r.At(x[1])}, Color: chart.Palette[4+i], Width: 3})
	}
	tb := Table{Title: "Two-window comparison", Columns: []string{"", "from", "to", "n", "trend per decade", "standard error", "p"}}
	for i, r := range c.Windows {
		tb.Rows = append(tb.Rows, []string{"window " + string(rune('A'+i)), r.From, r.To, strconv.Itoa(r.N), Fmt(r.SlopePerDecade), Fmt(r.StderrPerDecade), FmtP(r.PValue)})
	}
	p := "-"
	if c.PValue != nil {
		p = FmtP(*c.PValue)
	}
	tb.Rows = append(tb.Rows, []string{"difference B - A", "", "", "", Fmt(c.DifferencePerDecade), fmtOpt(c.StderrPerDecade), p})
	if b := c.BrokenStick; b != nil {
		// draw the broken stick over the span of both windows
		lo := math.Min(c.Windows[0].Start, c.Windows[1].Start)
		hi := math.Max(c.Windows[0].End, c.Windows[1].End)
		x := []float64{lo, b.Break, hi}
		y := make([]float64, 3)
		for k, t := range x {
			y[k] = b.Intercept + b.SlopeBeforePerDecade/10*(t-b.Break)
			if t > b.Break {
				y[k] += (b.SlopeAfterPerDecade - b.SlopeBeforePerDecade) / 10 * (t - b.Break)
			}
		}
		ch.Lines = append(ch.Lines, chart.Line{Name: "broken stick at " + strconv.FormatFloat(b.Break, 'f', 1, 64), X: x, Y: y, Color: chart.Palette[5], Width: 2, Dashed: true})
		tb.Rows = append(tb.Rows, []string{"broken stick: change in rate at " + strconv.FormatFloat(b.Break, 'f', 2, 64), "", "", strconv.Itoa(b.N), Fmt(b.SlopeChangePerDecade), Fmt(b.StderrPerDecade), FmtP(b.PValue)})
	}
	return &CompareView{Result: c, SVG: ch.SVG(), Table: tb}, nil
}

func axisLabel(s *series.Series) string {
	if s.Unit == "" {
		return s.Name
	}
	return s.Name + " (" + s.Unit + ")"
}

// BreaksView is the change-point result as the page shows it.
type BreaksView struct {
	Result *trend.BreaksResult `json:"result"`
	SVG    string              `json:"-"`
	Table  Table               `json:"table"`
}

// BreaksFigure searches for change points and draws the fitted segments
// over the data, each break's interval shaded.
func (w *Workspace) BreaksFigure(s BreaksSettings, ctx context.Context, progress func(done, total int)) (*BreaksView, error) {
	r, win, err := w.Breaks(s, ctx, progress)
	if err != nil {
		return nil, err
	}
	ch := chart.Lines{XLabel: "Year", YLabel: axisLabel(win), YZero: true,
		Title: fmt.Sprintf("%s: %d change point(s) selected (%s model)", win.Name, r.Selected, r.Model)}
	ch.Lines = append(ch.Lines, chart.Line{Name: win.Label(), X: win.Times, Y: win.Values, Color: chart.Palette[0], Width: 1})
	if len(r.Fitted) == len(win.Times) {
		ch.Lines = append(ch.Lines, chart.Line{Name: "fitted segments", X: win.Times, Y: r.Fitted, Color: chart.Palette[5], Width: 2.5})
	}
	lo, hi := valueRange(win.Values)
	for i, b := range r.Breaks {
		name := ""
		if i == 0 {
			name = fmt.Sprintf("break-time interval (%g%%)", 100*r.Level)
		}
		ch.Bands = append(ch.Bands, chart.Band{Name: name, X: []float64{b.CILow, b.CIHigh}, Lo: []float64{lo, lo}, Hi: []float64{hi, hi}, Color: chart.Palette[1], Opacity: 0.25})
	}
	tb := Table{Title: "Segments", Columns: []string{"segment", "from", "to", "n", "trend per decade"}}
	if r.Model == "mean" {
		tb.Columns[4] = "mean"
	}
	for i, sg := range r.Segments {
		v := Fmt(sg.SlopePerDecade)
		if r.Model == "mean" {
			v = fmtOpt(sg.Mean)
		}
		tb.Rows = append(tb.Rows, []string{strconv.Itoa(i + 1), FmtYear(sg.From), FmtYear(sg.To), strconv.Itoa(sg.N), v})
	}
	return &BreaksView{Result: r, SVG: ch.SVG(), Table: tb}, nil
}

// FmtYear formats a decimal year for tables with two decimals (a month is
// 0.083 of a year), "-" for NaN: four significant digits would print
// 2025.96 as 2026 and move a break by up to half a year.
func FmtYear(t float64) string {
	if math.IsNaN(t) || math.IsInf(t, 0) {
		return "-"
	}
	return strconv.FormatFloat(t, 'f', 2, 64)
}

func valueRange(v []float64) (lo, hi float64) {
	lo, hi = math.Inf(1), math.Inf(-1)
	for _, x := range v {
		if !math.IsNaN(x) {
			lo, hi = math.Min(lo, x), math.Max(hi, x)
		}
	}
	return
}

// BreaksTable lists the break times with their intervals, the BIC of each
// number of breaks and the Monte Carlo p-values.
func BreaksTable(r *trend.BreaksResult) Table {
	tb := Table{Title: "Change points", Columns: []string{"breaks", "BIC", "p (Monte Carlo, against one break fewer)", "selected"}}
	for k, b := range r.BIC {
		p := "-"
		if k > 0 && k-1 < len(r.PValues) {
			p = FmtP(r.PValues[k-1])
		}
		sel := ""
		if k == r.Selected {
			sel = "yes"
		}
		tb.Rows = append(tb.Rows, []string{strconv.Itoa(k), Fmt(b), p, sel})
	}
	return tb
}

// SenView is the nonparametric trend as a table.
func SenTable(r *trend.SenResult) Table {
	return Table{Title: "Theil-Sen slope and Mann-Kendall test",
		Columns: []string{"Sen slope per decade", fmt.Sprintf("%g%% low", 100*r.Level), fmt.Sprintf("%g%% high", 100*r.Level), "S", "variance of S", "Z", "p", "Kendall's tau", "correction"},
		Rows:    [][]string{{Fmt(r.SenSlopePerDecade), Fmt(r.CILowPerDecade), Fmt(r.CIHighPerDecade), strconv.Itoa(r.S), Fmt(r.VarS), Fmt(r.Z), FmtP(r.PValue), Fmt(r.Tau), r.Correction}}}
}

// GridView is the trend grid as the page shows it: a heatmap of the slope
// over every window (start on x, end on y) with significant cells marked,
// plus the counts that put the scan in proportion.
type GridView struct {
	Result  *trend.GridResult `json:"result"`
	SVG     string            `json:"-"`
	Summary string            `json:"summary"`
	// Labels are the step labels of the series; Titles maps each drawn
	// cell's key ("FROM|TO") to its text, so the page can walk the cells
	// from the keyboard and read each one out.
	Labels []string          `json:"-"`
	Titles map[string]string `json:"-"`
}

// GridKeySep separates the start and end labels in a heatmap cell's key.
const GridKeySep = "|"

// GridFigure computes the grid and draws it. mark is "zero" (cells whose
// interval excludes a zero trend are marked) or "full" (cells whose
// interval excludes the full-record trend). Each cell's key is
// "FROM|TO" (YYYY-MM or YYYY), so a click can set the trend window.
func (w *Workspace) GridFigure(s GridSettings, mark string) (*GridView, error) {
	g, err := w.Grid(s)
	if err != nil {
		return nil, err
	}
	ser, _ := w.Find(s.Series)
	unit := "units"
	if ser.Unit != "" {
		unit = ser.Unit
	}
	h := chart.Heatmap{
		Title:      fmt.Sprintf("%s: trend over every window of at least %g years (%s noise)", ser.Name, g.MinYears, noiseTitle(g.Noise)),
		XLabel:     "Window start (year)",
		YLabel:     "Window end (year)",
		ValueLabel: "Trend (" + unit + " per decade)",
	}
	switch mark {
	case "", "zero":
		h.MarkLabel = fmt.Sprintf("%g%% interval excludes zero", 100*g.Level)
	case "full":
		h.MarkLabel = fmt.Sprintf("%g%% interval excludes the full-record trend", 100*g.Level)
	default:
		return nil, fmt.Errorf("grid mark %q: expected zero or full", mark)
	}
	step := 1.0
	if s.Step == trend.GridStepMonth {
		step = 1.0 / 12
	}
	h.CellW, h.CellH = step, step
	for _, c := range g.Windows {
		if c.Skipped {
			continue
		}
		from, to := g.Labels[c.StartIndex], g.Labels[c.EndIndex]
		m := c.ExcludesZero
		if mark == "full" {
			m = c.ExcludesFull
		}
		x, y := c.Start, c.End
		if s.Step != trend.GridStepMonth && ser.Resolution == series.Monthly {
			// a January-to-December window sits at its start and end years
			x, y = math.Floor(c.Start)+0.5, math.Floor(c.End)+0.5
		}
		h.Cells = append(h.Cells, chart.HeatCell{X: x, Y: y, Value: c.SlopePerDecade, Marked: m,
			Title: fmt.Sprintf("%s to %s: %s %s per decade (standard error %s, n %d)", from, to, Fmt(c.SlopePerDecade), unit, Fmt(c.StderrPerDecade), c.N),
			Key:   from + GridKeySep + to})
	}
	v := &GridView{Result: g, SVG: h.SVG(), Labels: g.Labels, Titles: make(map[string]string, len(h.Cells))}
	for _, c := range h.Cells {
		v.Titles[c.Key] = c.Title
	}
	v.Summary = fmt.Sprintf("%d windows. At the %g%% level, %d have intervals that exclude zero and %d exclude the full-record trend; about %.0f would exclude the full-record trend by chance alone if the rate never changed. Neighbouring windows overlap, so they are far from independent: choosing the most striking window after looking is a multiple-testing trap.",
		g.Cells, 100*g.Level, g.ExcludingZero, g.ExcludingFullTrend, g.ExpectedByChance)
	return v, nil
}
