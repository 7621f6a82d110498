// Package brief writes a briefing from an analysis file: a methods
// paragraph per analysis (data, periods, each method with its published
// reference and settings), a results paragraph with the numbers and their
// intervals, the caveats that apply, the references, and the figures and
// tables the user picked. Export as one self-contained HTML file (inline
// SVG, print stylesheet) or as Markdown with the SVG files beside it.
//
// The page and `heatledger run --out DIR` build the briefing with this
// same code from the same analysis file, so their texts agree to the last
// printed digit.
package brief

import (
	"context"
	"fmt"
	"slices"
	"sort"
	"strings"

	"heatledger/core/analysis"
)

// Item is one figure or table of the briefing.
type Item struct {
	Analysis string `json:"analysis"`
	Part     string `json:"part"`
	Title    string `json:"title"`
	// SVG is the figure ("" for a table); Table is the table, or the
	// figure's numbers (its text alternative).
	SVG   string          `json:"-"`
	Table *analysis.Table `json:"table,omitempty"`
	// Err says why the item could not be drawn (its analysis failed or
	// has no such part).
	Err string `json:"error,omitempty"`
}

// Brief is a briefing's content, ready to export.
type Brief struct {
	Title string `json:"title"`
	// Data lists the files with the series used.
	Data []string `json:"data"`
	// Methods and Results hold one paragraph per analysis, in the order
	// the items first name them.
	Methods    []string `json:"methods"`
	Results    []string `json:"results"`
	Caveats    []string `json:"caveats"`
	References []string `json:"references"`
	Items      []Item   `json:"items"`
}

// Options are the optional hooks of Build.
type Options struct {
	Context  context.Context
	Progress func(id string, done, total int)
	// Shown holds analyses already run (by ID); Build runs the others and
	// adds them. Failed holds the errors of analyses that failed (by ID),
	// likewise: they are not run again.
	Shown  map[string]*analysis.Shown
	Failed map[string]string
}

// DefaultTitle is the title of a briefing that has none.
const DefaultTitle = "Temperature change: methods and results"

// Build runs each analysis the brief names once and writes the briefing.
// An analysis that fails is reported in its items and in the results
// paragraph; the rest still build. w is the file's workspace (read with
// f.Workspace()).
func Build(f *analysis.AnalysisFile, w *analysis.Workspace, opt Options) *Brief {
	b := &Brief{Title: DefaultTitle, Data: []string{}, Methods: []string{}, Results: []string{}, Caveats: []string{}, References: []string{}, Items: []Item{}}
	if f.Brief == nil {
		return b
	}
	if t := strings.TrimSpace(f.Brief.Title); t != "" {
		b.Title = t
	}
	byID := map[string]analysis.Analysis{}
	for _, a := range f.Analyses {
		byID[a.ID] = a
	}
	shown := opt.Shown
	if shown == nil {
		shown = map[string]*analysis.Shown{}
	}
	errs := opt.Failed
	if errs == nil {
		errs = map[string]string{}
	}
	var order []string
	drawn := map[string]*analysis.Shown{}
	tx := &texts{w: w, refs: map[string]bool{}, caveats: map[string]bool{}, files: map[string]map[string]bool{}}
	for _, it := range f.Brief.Items {
		item := Item{Analysis: it.Analysis, Part: it.Part}
		a, ok := byID[it.Analysis]
		if !ok {
			item.Err = fmt.Sprintf("the analysis file has no analysis %q", it.Analysis)
			b.Items = append(b.Items, item)
			continue
		}
		sh, done := shown[a.ID]
		if !done && errs[a.ID] == "" {
			var progress func(int, int)
			if opt.Progress != nil {
				id := a.ID
				progress = func(d, t int) { opt.Progress(id, d, t) }
			}
			var err error
			sh, err = w.Show(a, opt.Context, progress)
			if err != nil {
				errs[a.ID] = err.Error()
			} else {
				shown[a.ID] = sh
			}
			order = append(order, a.ID)
		} else if !slices.Contains(order, a.ID) {
			order = append(order, a.ID)
		}
		if e := errs[a.ID]; e != "" {
			item.Err = e
			b.Items = append(b.Items, item)
			continue
		}
		if it.Display != nil && *it.Display != (analysis.Display{}) {
			// drawn as the page showed it: its own run of the figure
			// (the numbers, and so the text, are those of sh)
			key := a.ID + "\x00" + fmt.Sprint(*it.Display)
			if drawn[key] == nil {
				if d, err := w.ShowWith(a, *it.Display, opt.Context, nil); err == nil {
					drawn[key] = d
				} else {
					drawn[key] = sh
				}
			}
			sh = drawn[key]
		}
		p, err := sh.Part(it.Part)
		if err != nil {
			item.Err = err.Error()
		} else {
			item.Part, item.Title, item.SVG, item.Table = p.Name, p.Title, p.SVG, p.Table
		}
		b.Items = append(b.Items, item)
	}
	for _, id := range order {
		a := byID[id]
		tx.uses(a)
		if e := errs[id]; e != "" {
			b.Methods = append(b.Methods, tx.methods(a, nil))
			b.Results = append(b.Results, fmt.Sprintf("%s: the analysis could not be run: %s", label(a), e))
			continue
		}
		sh := shown[id]
		b.Methods = append(b.Methods, safeText(a, "methods", func() string { return tx.methods(a, sh.View) }))
		b.Results = append(b.Results, safeText(a, "results", func() string { return tx.results(a, sh.View) }))
	}
	b.Data = tx.dataLines(f)
	b.Caveats = tx.caveatList()
	b.References = tx.refList()
	return b
}

// safeText writes one paragraph; a panic becomes a sentence saying so, so
// one analysis cannot stop the briefing (or the page drawing it).
func safeText(a analysis.Analysis, what string, f func() string) (out string) {
	defer func() {
		if r := recover(); r != nil {
			out = fmt.Sprintf("%s: the %s could not be written: internal error: %v", label(a), what, r)
		}
	}()
	return f()
}

// label names an analysis in the text: its kind's name and its ID.
func label(a analysis.Analysis) string {
	return kindTitle(a.Kind) + " (" + a.ID + ")"
}

func kindTitle(k string) string {
	switch k {
	case analysis.KindTrend:
		return "Trend"
	case analysis.KindCompare:
		return "Two-window comparison"
	case analysis.KindGrid:
		return "Trend grid"
	case analysis.KindBreaks:
		return "Change points"
	case analysis.KindSen:
		return "Nonparametric trend"
	case analysis.KindAdjust:
		return "Short-term factors removed"
	case analysis.KindForcing:
		return "Forcing"
	case analysis.KindRespond:
		return "Energy balance model"
	case analysis.KindHeat:
		return "Heating rate"
	case analysis.KindSensitivity:
		return "Energy-budget sensitivity"
	}
	return k
}

// sortedKeys returns a map's keys in order.
func sortedKeys[V any](m map[string]V) []string {
	out := make([]string, 0, len(m))
	for k := range m {
		out = append(out, k)
	}
	sort.Strings(out)
	return out
}
