package analysis

import (
	"context"
	"encoding/json"
	"fmt"
	"reflect"
)

// Report is the outcome of running an analysis file: one result per
// analysis, in the file's order. It holds no time stamp, so the same file
// gives the same bytes (Monte Carlo analyses are seeded).
type Report struct {
	Format    string   `json:"format"`
	Version   int      `json:"version"`
	CreatedBy string   `json:"created_by"`
	Results   []Result `json:"results"`
	// Warnings are the notes of reading the files ("FILE: note").
	Warnings []string `json:"warnings"`
}

// Result is one analysis' outcome: Result is the JSON the command-line
// tool prints for that kind with --json (see RunAnalysis), or Error says
// why the analysis failed.
type Result struct {
	ID     string          `json:"id"`
	Kind   string          `json:"kind"`
	Result json.RawMessage `json:"result,omitempty"`
	Error  string          `json:"error,omitempty"`
	// Value is the typed result behind Result (not saved), for views.
	Value any `json:"-"`
}

// Marshal writes the report: two-space indent, a final newline, no HTML
// escaping.
func (r *Report) Marshal() ([]byte, error) { return marshalIndent(r) }

// Failed returns the number of analyses that failed.
func (r *Report) Failed() int {
	n := 0
	for _, x := range r.Results {
		if x.Error != "" {
			n++
		}
	}
	return n
}

// RunOptions are the optional hooks of RunWith.
type RunOptions struct {
	// Context cancels the Monte Carlo analyses between chunks.
	Context context.Context
	// Progress is called with the analysis under way and its progress
	// (for the kinds that report any).
	Progress func(id string, done, total int)
}

// Run reads the file's data and runs every analysis. A failing analysis
// records its error and the others still run; the error is for data files
// that cannot be read.
func Run(f *AnalysisFile) (*Report, error) { return RunWith(f, RunOptions{}) }

// RunWith is Run with a context and a progress hook.
func RunWith(f *AnalysisFile, opt RunOptions) (*Report, error) {
	w, err := f.Workspace()
	if err != nil {
		return nil, err
	}
	rep := &Report{Format: ReportFormat, Version: ReportVersion, CreatedBy: "Heatledger", Results: []Result{}, Warnings: []string{}}
	for _, l := range w.Files {
		for _, m := range l.Result.Warnings {
			rep.Warnings = append(rep.Warnings, l.File+": "+m)
		}
	}
	for _, a := range f.Analyses {
		res := Result{ID: a.ID, Kind: a.Kind}
		var progress func(done, total int)
		if opt.Progress != nil {
			id := a.ID
			progress = func(done, total int) { opt.Progress(id, done, total) }
		}
		v, err := w.runAnalysis(a, opt.Context, progress)
		if err == nil {
			res.Value = v
			if res.Result, err = json.Marshal(v); err != nil {
				err = fmt.Errorf("the result cannot be written as JSON: %v", err)
				res.Value, res.Result = nil, nil
			}
		}
		if err != nil {
			res.Error = err.Error()
		}
		rep.Results = append(rep.Results, res)
	}
	return rep, nil
}

// RunAnalysis runs one analysis on the workspace. The result is what the
// command-line tool prints with --json for that kind:
//
//	trend       []*trend.Result, one per series (`trend --json` prints each)
//	compare     *trend.Comparison          grid   *trend.GridResult
//	breaks      *trend.BreaksResult        sen    *trend.SenResult
//	adjust      AdjustJSON                 forcing ForcingJSON
//	respond     RespondJSON                heat   *budget.HeatResult
//	sensitivity *SensitivityReport (its result is `sensitivity --json --full`)
func (w *Workspace) RunAnalysis(a Analysis) (any, error) {
	return w.runAnalysis(a, nil, nil)
}

func (w *Workspace) runAnalysis(a Analysis, ctx context.Context, progress func(done, total int)) (v any, err error) {
	defer func() {
		if r := recover(); r != nil {
			v, err = nil, fmt.Errorf("analysis %q: internal error: %v", a.ID, r)
		}
	}()
	t := kindTypes[a.Kind]
	if t == nil {
		return nil, fmt.Errorf("analysis %q: unknown kind %q", a.ID, a.Kind)
	}
	s := reflect.New(t)
	if a.Settings != nil {
		sv := reflect.ValueOf(a.Settings)
		if sv.Kind() == reflect.Pointer && !sv.IsNil() {
			sv = sv.Elem()
		}
		if sv.Type() != t {
			return nil, fmt.Errorf("analysis %q: settings of type %T do not belong to a %s analysis", a.ID, a.Settings, a.Kind)
		}
		s.Elem().Set(sv)
	}
	switch x := s.Interface().(type) {
	case *TrendSettings:
		return w.Trends(*x)
	case *CompareSettings:
		return w.Compare(*x)
	case *GridSettings:
		return w.Grid(*x)
	case *BreaksSettings:
		r, _, err := w.Breaks(*x, ctx, progress)
		return r, err
	case *SenSettings:
		return w.Sen(*x)
	case *AdjustSettings:
		r, err := w.Adjust(*x)
		if err != nil {
			return nil, err
		}
		return AdjustOutput(r), nil
	case *ForcingSettings:
		r, err := w.Forcing(*x)
		if err != nil {
			return nil, err
		}
		return ForcingOutput(r), nil
	case *RespondSettings:
		r, err := w.Respond(*x)
		if err != nil {
			return nil, err
		}
		return RespondOutput(r), nil
	case *HeatSettings:
		return w.Heat(*x)
	case *SensitivitySettings:
		return w.Sensitivity(*x, ctx, progress)
	}
	return nil, fmt.Errorf("analysis %q: kind %q has no engine", a.ID, a.Kind)
}
