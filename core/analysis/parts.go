package analysis

import (
	"context"
	"fmt"
	"strings"
)

// Part is one figure or table that an analysis shows. A figure's Table is
// its text alternative: the numbers the figure draws, as a table.
type Part struct {
	// Name is unique within the analysis' parts (it is what a briefing
	// item and the embed page name).
	Name  string `json:"name"`
	Title string `json:"title"`
	// SVG is the figure ("" for a table).
	SVG   string `json:"-"`
	Table *Table `json:"table,omitempty"`
}

// IsFigure reports whether the part is a figure.
func (p Part) IsFigure() bool { return p.SVG != "" }

// Shown is an analysis run for showing: the kind's view (its result with
// the formatted tables: *TrendView, *CompareView, *GridView, *BreaksView,
// *SenView, *DriversView, *ForcingView, *ResponseView or *ResponseFitView,
// *HeatView, *SensitivityView) and its parts in a fixed order.
type Shown struct {
	Analysis Analysis
	View     any
	Parts    []Part
}

// Part returns the named part, or the first figure for name "".
func (s *Shown) Part(name string) (Part, error) {
	var names []string
	for _, p := range s.Parts {
		if name == "" && p.IsFigure() || p.Name == name {
			return p, nil
		}
		names = append(names, p.Name)
	}
	if name == "" {
		return Part{}, fmt.Errorf("analysis %q (%s) draws no figure", s.Analysis.ID, s.Analysis.Kind)
	}
	return Part{}, fmt.Errorf("analysis %q (%s) has no part %q: expected one of %s", s.Analysis.ID, s.Analysis.Kind, name, strings.Join(names, ", "))
}

// SenView is the nonparametric trend as shown: the result and its table.
type SenView struct {
	Settings SenSettings `json:"settings"`
	Result   any         `json:"result"`
	Table    Table       `json:"table"`
}

// ForcingView is a forcing assembly as shown: its summary table and the
// stacked chart of the components.
type ForcingView struct {
	Result ForcingJSON `json:"result"`
	SVG    string      `json:"-"`
	Table  Table       `json:"table"`
}

// Show runs an analysis and builds its view and parts in their standard
// form. ctx and progress may be nil (they serve the Monte Carlo kinds).
func (w *Workspace) Show(a Analysis, ctx context.Context, progress func(done, total int)) (*Shown, error) {
	return w.ShowWith(a, Display{}, ctx, progress)
}

// ShowWith is Show with drawing choices (smoothing and slope unit of a
// trend figure, the grid's mark).
func (w *Workspace) ShowWith(a Analysis, d Display, ctx context.Context, progress func(done, total int)) (sh *Shown, err error) {
	defer func() {
		if r := recover(); r != nil {
			sh, err = nil, fmt.Errorf("analysis %q: internal error: %v", a.ID, r)
		}
	}()
	sh = &Shown{Analysis: a}
	fig := func(name, svg string, t *Table) {
		if svg != "" {
			sh.Parts = append(sh.Parts, Part{Name: name, Title: SVGTitle(svg), SVG: svg, Table: t})
		}
	}
	tab := func(name string, t *Table) {
		if t != nil && len(t.Columns) > 0 {
			sh.Parts = append(sh.Parts, Part{Name: name, Title: t.Title, Table: t})
		}
	}
	switch s := a.Settings.(type) {
	case *TrendSettings:
		v, err := w.TrendFigure(*s, d.Smooth, d.Per)
		if err != nil {
			return nil, err
		}
		sh.View = v
		fig("figure", v.SVG, &v.Table)
		tab("table", &v.Table)
	case *CompareSettings:
		v, err := w.CompareFigure(*s)
		if err != nil {
			return nil, err
		}
		sh.View = v
		fig("figure", v.SVG, &v.Table)
		tab("table", &v.Table)
	case *GridSettings:
		mark := d.Mark
		if mark == "" {
			mark = "zero"
		}
		v, err := w.GridFigure(*s, mark)
		if err != nil {
			return nil, err
		}
		sh.View = v
		t := &Table{Title: "Trend grid", Columns: []string{"summary"}, Rows: [][]string{{v.Summary}}}
		fig("figure", v.SVG, t)
	case *BreaksSettings:
		v, err := w.BreaksFigure(*s, ctx, progress)
		if err != nil {
			return nil, err
		}
		sh.View = v
		fig("figure", v.SVG, &v.Table)
		tab("table", &v.Table)
	case *SenSettings:
		r, err := w.Sen(*s)
		if err != nil {
			return nil, err
		}
		t := SenTable(r)
		sh.View = &SenView{Settings: *s, Result: r, Table: t}
		tab("table", &t)
	case *AdjustSettings:
		v, err := w.DriversFigure(*s)
		if err != nil {
			return nil, err
		}
		sh.View = v
		fig("fit", v.FitSVG, &v.Coefficients)
		fig("adjusted", v.AdjustedSVG, &v.Trends)
		fig("change", v.ChangeSVG, v.Change)
		tab("coefficients", &v.Coefficients)
		tab("trends", &v.Trends)
		tab("change-table", v.Change)
	case *ForcingSettings:
		r, err := w.Forcing(*s)
		if err != nil {
			return nil, err
		}
		v := &ForcingView{Result: ForcingOutput(r), SVG: forcingStackSVG(r), Table: ForcingSummaryTable(r)}
		sh.View = v
		fig("figure", v.SVG, &v.Table)
		tab("table", &v.Table)
	case *RespondSettings:
		if s.Fit != nil {
			v, err := w.ResponseFitFigure(*s)
			if err != nil {
				return nil, err
			}
			sh.View = v
			fig("fit", v.FitSVG, &v.Estimates)
			fig("heat", v.HeatSVG, &v.Estimates)
			tab("estimates", &v.Estimates)
			tab("implied", &v.Implied)
			tab("stats", &v.Stats)
			break
		}
		var recs []string
		if s.Record != "" {
			recs = []string{s.Record}
		}
		v, err := w.ResponseFigure(ResponseRequest{Respond: *s, Records: recs})
		if err != nil {
			return nil, err
		}
		sh.View = v
		fig("run", v.RunSVG, &v.Derived)
		fig("forcing", v.ForcingSVG, &v.Forcing)
		fig("attribution", v.AttributionSVG, &v.Attribution)
		fig("trends", v.TrendsSVG, &v.Trends)
		tab("derived", &v.Derived)
		tab("attribution-table", &v.Attribution)
	case *HeatSettings:
		v, err := w.HeatFigure(*s)
		if err != nil {
			return nil, err
		}
		sh.View = v
		fig("content", v.ContentSVG, &v.Table)
		fig("rate", v.RateSVG, &v.Table)
		tab("table", &v.Table)
	case *SensitivitySettings:
		v, err := w.SensitivityFigure(*s, ctx, progress)
		if err != nil {
			return nil, err
		}
		sh.View = v
		fig("ecs", v.ECSSVG, &v.Table)
		fig("tcr", v.TCRSVG, &v.Table)
		fig("sweep", v.SweepSVG, v.Sweep)
		tab("table", &v.Table)
		tab("inputs", &v.Inputs)
		tab("sweep-table", v.Sweep)
	default:
		return nil, fmt.Errorf("analysis %q: kind %q has nothing to show", a.ID, a.Kind)
	}
	return sh, nil
}

// SVGTitle returns the text of an SVG's first <title> element, unescaped
// (core/chart writes one into every chart).
func SVGTitle(svg string) string {
	i := strings.Index(svg, "<title>")
	if i < 0 {
		return "Heatledger figure"
	}
	rest := svg[i+len("<title>"):]
	j := strings.Index(rest, "</title>")
	if j < 0 {
		return "Heatledger figure"
	}
	r := strings.NewReplacer("&lt;", "<", "&gt;", ">", "&quot;", `"`, "&#34;", `"`, "&#39;", "'", "&apos;", "'", "&amp;", "&")
	return r.Replace(rest[:j])
}
