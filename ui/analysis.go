package ui

import (
	"encoding/json"
	"fmt"
	"github.com/vugu/vugu"
	"slices"
	"strings"
	"time"

	"heatledger/core/analysis"
)

// SeriesRef names a series for the analysis views: Ref is "FILE:NAME", the
// form core/analysis finds without ambiguity; Label is what the page shows.
type SeriesRef struct {
	Ref   string
	Label string
	Name  string
	Unit  string
}

// Analysis is the workspace as core/analysis sees it: the files read, with
// their series. The analysis views go through it and nothing else.
func (w *Workspace) Analysis() *analysis.Workspace {
	aw := &analysis.Workspace{Roles: w.Roles}
	for _, f := range w.Files {
		aw.Files = append(aw.Files, analysis.Loaded{File: f.Name, Result: f.Result, Err: f.Err})
	}
	return aw
}

// SeriesRefs lists every series read, in file order.
func (w *Workspace) SeriesRefs() []SeriesRef {
	var out []SeriesRef
	names := map[string]int{}
	for _, f := range w.Files {
		if f.Result == nil {
			continue
		}
		for _, s := range f.Result.Series {
			names[s.Name]++
		}
	}
	for _, f := range w.Files {
		if f.Result == nil {
			continue
		}
		for _, s := range f.Result.Series {
			label := s.Name
			if names[s.Name] > 1 {
				label += " · " + f.Name
			}
			if s.Unit != "" {
				label += " (" + s.Unit + ")"
			}
			out = append(out, SeriesRef{Ref: f.Name + ":" + s.Name, Label: label, Name: s.Name, Unit: s.Unit})
		}
	}
	return out
}

// Exporter is what a Host offers for getting results out of the page:
// downloads and the clipboard. The wasm host implements it.
type Exporter interface {
	// Save offers data as a download named name.
	Save(name, mime string, data []byte)
	// Copy puts text on the clipboard.
	Copy(text string)
}

// Yielder is a Host that can hand control back to the browser: Yield
// returns once the browser has run its event loop (drawn, taken input).
type Yielder interface{ Yield() }

// Yield lets the browser run before long work goes on. A goroutine doing
// long work calls it every few tens of milliseconds; a short sleep would
// not do, because its timer may expire while the page renders and the
// browser would never get a turn.
func (w *Workspace) Yield() {
	if y, ok := w.Host.(Yielder); ok {
		y.Yield()
		return
	}
	time.Sleep(time.Millisecond)
}

// Progress returns a progress callback for long work running in a
// goroutine: it records the counts under the page's lock (set runs with the
// lock held) and, at most every 40 ms, asks for a render and yields to the
// browser, so the page draws the progress and takes clicks (Cancel).
func (w *Workspace) Progress(env vugu.EventEnv, set func(done, total int)) func(done, total int) {
	last := time.Now()
	return func(done, total int) {
		env.Lock()
		set(done, total)
		if time.Since(last) < 40*time.Millisecond {
			env.UnlockOnly()
			return
		}
		env.UnlockRender()
		w.Yield()
		last = time.Now()
	}
}

// Save offers a download through the host, or says why it cannot.
func (w *Workspace) Save(name, mime string, data []byte) {
	ex, ok := w.Host.(Exporter)
	if !ok {
		panic(fmt.Errorf("this page cannot offer downloads here"))
	}
	ex.Save(name, mime, data)
}

// CopyTable puts a table on the clipboard as tab-separated text and
// returns the note to show: what was copied, or that there is nothing yet.
func (w *Workspace) CopyTable(t analysis.Table) string {
	if len(t.Columns) == 0 {
		return "Nothing to copy yet."
	}
	w.Copy(t.TSV())
	return t.Title + ": copied as tab-separated text."
}

// Copy puts text on the clipboard through the host.
func (w *Workspace) Copy(text string) {
	ex, ok := w.Host.(Exporter)
	if !ok {
		panic(fmt.Errorf("this page cannot reach the clipboard here"))
	}
	ex.Copy(text)
}

// fileStem makes a safe download name from free text.
func fileStem(s string) string {
	var b strings.Builder
	for _, r := range strings.ToLower(s) {
		switch {
		case r >= 'a' && r <= 'z', r >= '0' && r <= '9':
			b.WriteRune(r)
		case r == '-' || r == '_' || r == '.':
			b.WriteRune(r)
		default:
			b.WriteRune('-')
		}
	}
	out := strings.Trim(b.String(), "-.")
	for strings.Contains(out, "--") {
		out = strings.ReplaceAll(out, "--", "-")
	}
	if out == "" {
		return "heatledger"
	}
	if len(out) > 60 {
		out = out[:60]
	}
	return out
}

func jsonBytes(v any) []byte {
	b, err := json.MarshalIndent(v, "", "  ")
	if err != nil {
		panic(err)
	}
	return append(b, '\n')
}

// SetRole gives a series (FILE:NAME) a role, or takes it away ("").
func (w *Workspace) SetRole(ref, role string) {
	if role != "" && !slices.Contains(analysis.Roles, role) {
		panic(fmt.Errorf("role %q: expected one of %s", role, strings.Join(analysis.Roles, ", ")))
	}
	if w.Roles == nil {
		w.Roles = map[string]string{}
	}
	if role == "" {
		delete(w.Roles, ref)
		return
	}
	w.Roles[ref] = role
}

// roleOptions are the choices of a series' role in the Data view: the
// record to explain, a short-term factor, a forcing, a heat content.
var roleOptions = []Option{{"", "–"}, {analysis.RoleTarget, "to explain"}, {analysis.RoleDriver, "factor"},
	{analysis.RoleForcing, "forcing"}, {analysis.RoleHeat, "heat"}}
