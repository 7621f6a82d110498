package ui

import (
	"bytes"
	"encoding/json"
	"fmt"
	"reflect"
	"strconv"
	"strings"

	"heatledger"
	"heatledger/core/analysis"
)

// The session: the whole workspace as an analysis file (data, every
// view's settings, the briefing) for saving, loading and autosave.

// Stateful is a view whose form can be saved and restored.
type Stateful interface {
	// PageState returns the view's form fields and the analyses its
	// panels show (with their settings as last run).
	PageState() (map[string]string, []analysis.Analysis)
}

// BriefState is the briefing being built: its title and items, and the
// analyses (settings as they were when added) the items name.
type BriefState struct {
	Title    string
	Items    []analysis.BriefItem
	Analyses []analysis.Analysis
	next     int
}

// AddToBrief adds parts of an analysis with the given settings to the
// briefing. The settings are kept as they are now, so later changes in the
// view do not change the item. It returns the note to show (settings that
// are a nil pointer, a panel not computed, add nothing).
func (w *Workspace) AddToBrief(settings any, parts ...string) string {
	return w.AddToBriefDrawn(settings, nil, parts...)
}

// AddToBriefDrawn is AddToBrief with the figure's drawing choices (nil or
// zero: the standard form).
func (w *Workspace) AddToBriefDrawn(settings any, d *analysis.Display, parts ...string) string {
	if d != nil && *d == (analysis.Display{}) {
		d = nil
	}
	if settings == nil || reflect.ValueOf(settings).Kind() == reflect.Pointer && reflect.ValueOf(settings).IsNil() {
		return "Nothing to add yet: compute this panel first."
	}
	b := &w.Brief
	kind := analysis.KindOf(settings)
	id := ""
	// the same settings already in the briefing: reuse that analysis
	js, _ := json.Marshal(settings)
	for _, a := range b.Analyses {
		if a.Kind != kind {
			continue
		}
		if other, _ := json.Marshal(a.Settings); bytes.Equal(js, other) {
			id = a.ID
		}
	}
	if id == "" {
		for {
			b.next++
			id = "brief-" + strconv.Itoa(b.next) + "-" + kind
			if !w.briefHas(id) {
				break
			}
		}
		a, err := analysis.NewAnalysis(id, settings)
		if err != nil {
			panic(err)
		}
		// a deep copy through JSON, so the view's later edits stay out
		var fresh analysis.Analysis
		raw, _ := json.Marshal(a)
		if err := json.Unmarshal(raw, &fresh); err != nil {
			panic(err)
		}
		b.Analyses = append(b.Analyses, fresh)
	}
	added := 0
	for _, p := range parts {
		dup := false
		for _, it := range b.Items {
			dup = dup || it.Analysis == id && it.Part == p && (it.Display == nil) == (d == nil) && (d == nil || *it.Display == *d)
		}
		if !dup {
			item := analysis.BriefItem{Analysis: id, Part: p}
			if d != nil {
				dd := *d
				item.Display = &dd
			}
			b.Items = append(b.Items, item)
			added++
		}
	}
	w.Changed()
	if added == 0 {
		return "Already in the brief."
	}
	return fmt.Sprintf("Added to the brief (%s): see the Brief view.", plural(added, "item", "items"))
}

func (w *Workspace) briefHas(id string) bool {
	for _, a := range w.Brief.Analyses {
		if a.ID == id {
			return true
		}
	}
	return false
}

// RemoveBriefItem drops item i, and its analysis when no item names it.
func (w *Workspace) RemoveBriefItem(i int) {
	b := &w.Brief
	if i < 0 || i >= len(b.Items) {
		return
	}
	id := b.Items[i].Analysis
	b.Items = append(b.Items[:i:i], b.Items[i+1:]...)
	for _, it := range b.Items {
		if it.Analysis == id {
			w.Changed()
			return
		}
	}
	for j, a := range b.Analyses {
		if a.ID == id {
			b.Analyses = append(b.Analyses[:j:j], b.Analyses[j+1:]...)
			break
		}
	}
	w.Changed()
}

// MoveBriefItem moves item i by d places (-1 up, +1 down).
func (w *Workspace) MoveBriefItem(i, d int) {
	b := &w.Brief
	j := i + d
	if i < 0 || j < 0 || i >= len(b.Items) || j >= len(b.Items) {
		return
	}
	b.Items[i], b.Items[j] = b.Items[j], b.Items[i]
	w.Changed()
}

// Changed records that the workspace changed (autosave watches Version).
func (w *Workspace) Changed() { w.Version++ }

// RegisterView makes a view's state part of the session; the root calls
// it for each view it makes.
func (w *Workspace) RegisterView(id string, v any) {
	if w.views == nil {
		w.views = map[string]Stateful{}
	}
	if s, ok := v.(Stateful); ok {
		w.views[id] = s
	}
}

// ViewState returns the saved form of a view that was loaded and not yet
// shown (nil when there is none), and forgets it: the view applies it
// once, in its setup.
func (w *Workspace) ViewState(id string) map[string]string {
	st := w.loadedPage[id]
	delete(w.loadedPage, id)
	return st
}

// AnalysisFile is the workspace as an analysis file: every file read with
// its text and reading options, each view's settings and analyses, and
// the briefing.
func (w *Workspace) AnalysisFile() (*analysis.AnalysisFile, error) {
	f := analysis.NewAnalysisFile()
	var err error
	if f.Files, err = w.dataFiles(); err != nil {
		return nil, err
	}
	for _, fl := range w.Files {
		if fl.Result == nil {
			continue
		}
		for _, sr := range fl.Result.Series {
			if r := w.Roles[fl.Name+":"+sr.Name]; r != "" {
				if f.Roles == nil {
					f.Roles = map[string]string{}
				}
				f.Roles[fl.Name+":"+sr.Name] = r
			}
		}
	}
	f.Page = map[string]map[string]string{}
	seen := map[string]bool{}
	add := func(a analysis.Analysis) {
		if !seen[a.ID] {
			seen[a.ID] = true
			f.Analyses = append(f.Analyses, a)
		}
	}
	// the brief's analyses first: their settings are what its items show
	for _, a := range w.Brief.Analyses {
		add(a)
	}
	for _, v := range Views() {
		if s, ok := w.views[v.ID]; ok {
			st, list := s.PageState()
			if len(st) > 0 {
				f.Page[v.ID] = st
			}
			for _, a := range list {
				add(a)
			}
		} else if st, ok := w.loadedPage[v.ID]; ok {
			// loaded, never shown: keep what was loaded
			f.Page[v.ID] = st
			for _, a := range w.loadedAnalyses {
				if strings.HasPrefix(a.ID, v.ID+"-") {
					add(a)
				}
			}
		}
	}
	// analyses of the opened file that nothing above holds (a panel not
	// run again since, or analyses written by hand) are kept
	for _, a := range w.loadedAnalyses {
		add(a)
	}
	if len(w.Brief.Items) > 0 || w.Brief.Title != "" {
		f.Brief = &analysis.BriefSpec{Title: w.Brief.Title, Items: append([]analysis.BriefItem{}, w.Brief.Items...)}
	}
	if len(f.Page) == 0 {
		f.Page = nil
	}
	if w.Model != nil {
		if b, err := json.Marshal(w.Model); err == nil {
			if f.Page == nil {
				f.Page = map[string]map[string]string{}
			}
			f.Page["workspace"] = map[string]string{"model": string(b)}
		}
	}
	return f, nil
}

// dataFiles are the loaded files as an analysis file embeds them: their
// text and the options they were read with.
func (w *Workspace) dataFiles() ([]analysis.DataFile, error) {
	out := []analysis.DataFile{}
	for _, fl := range w.Files {
		if fl.Data == nil {
			continue // a file that could not be read at all holds no text
		}
		r, err := fl.Reading.Reading()
		if err != nil {
			return nil, fmt.Errorf("%s: %v", fl.Name, err)
		}
		out = append(out, analysis.DataFile{Name: fl.Name, Text: string(fl.Data), Reading: r})
	}
	return out, nil
}

// SaveBytes is the workspace's analysis file as bytes.
func (w *Workspace) SaveBytes() ([]byte, error) {
	f, err := w.AnalysisFile()
	if err != nil {
		return nil, err
	}
	return f.Marshal()
}

// LoadAnalysisFile replaces the workspace with an analysis file's: its
// data files (read with their options), the views' forms and the
// briefing. The views are made afresh (the root sees Generation change).
func (w *Workspace) LoadAnalysisFile(f *analysis.AnalysisFile) {
	w.Clear()
	w.Undo, w.UndoName = nil, ""
	demo := map[string]string{}
	for _, d := range heatledger.DemoFiles() {
		demo[d.Name] = string(d.Data)
	}
	for _, d := range f.Files {
		form := FormOf(d.Reading)
		opt, err := d.Reading.Options()
		var nf *File
		if err != nil {
			nf = w.AddError(d.Name, err)
		} else {
			nf = w.addWith(d.Name, []byte(d.Text), form, opt)
		}
		nf.Demo = demo[d.Name] == d.Text
	}
	// roles by FILE:NAME, whatever form the file gave them in
	w.Roles = map[string]string{}
	aw := w.Analysis()
	for k, r := range f.Roles {
		if sr, err := aw.Find(k); err == nil {
			w.Roles[sr.Source+":"+sr.Name] = r
		}
	}
	w.Brief = BriefState{}
	if f.Brief != nil {
		w.Brief.Title = f.Brief.Title
		w.Brief.Items = append([]analysis.BriefItem{}, f.Brief.Items...)
		ids := map[string]bool{}
		for _, it := range f.Brief.Items {
			ids[it.Analysis] = true
		}
		for _, a := range f.Analyses {
			if ids[a.ID] {
				w.Brief.Analyses = append(w.Brief.Analyses, a)
			}
		}
		for _, a := range w.Brief.Analyses {
			rest, ok := strings.CutPrefix(a.ID, "brief-")
			num, _, _ := strings.Cut(rest, "-")
			if n, err := strconv.Atoi(num); ok && err == nil && n > w.Brief.next {
				w.Brief.next = n
			}
		}
	}
	w.loadedPage = map[string]map[string]string{}
	for k, v := range f.Page {
		w.loadedPage[k] = v
	}
	w.loadedAnalyses = append([]analysis.Analysis{}, f.Analyses...)
	w.Model = nil
	if m := f.Page["workspace"]["model"]; m != "" {
		var s analysis.RespondSettings
		if json.Unmarshal([]byte(m), &s) == nil {
			w.Model = &s
		}
	}
	w.views = nil
	w.Generation++
	w.Changed()
}

// FormOf is the reading form that gives these reading options.
func FormOf(r analysis.ReadingOptions) analysis.ReadingForm {
	f := analysis.ReadingForm{Delimiter: r.Delimiter, DateOrder: r.DateOrder, MinDays: r.MinDays}
	if r.Scale != 0 {
		f.Scale = strconv.FormatFloat(r.Scale, 'g', -1, 64)
	}
	if r.Missing != nil {
		if len(*r.Missing) == 0 {
			f.Missing = "none"
		} else {
			var parts []string
			for _, v := range *r.Missing {
				parts = append(parts, strconv.FormatFloat(v, 'g', -1, 64))
			}
			f.Missing = strings.Join(parts, ", ")
		}
	}
	return f
}

// StartFresh empties the workspace and loads the demo, as on a first
// visit.
func (w *Workspace) StartFresh() {
	w.LoadAnalysisFile(analysis.NewAnalysisFile())
	w.LoadDemo()
	w.Changed()
}

// formState names a view's form fields for saving and restoring them.
type formState struct {
	strs  map[string]*string
	bools map[string]*bool
	// objs are saved as JSON (maps of picks, form structs)
	objs map[string]any
}

func (s formState) save() map[string]string {
	out := map[string]string{}
	for k, p := range s.strs {
		out[k] = *p
	}
	for k, p := range s.bools {
		out[k] = strconv.FormatBool(*p)
	}
	for k, p := range s.objs {
		if b, err := json.Marshal(p); err == nil {
			out[k] = string(b)
		}
	}
	return out
}

// load sets the fields found in m; others keep their defaults. A value
// that does not decode is skipped; maps come back non-nil, without nil
// entries.
func (s formState) load(m map[string]string) {
	for k, p := range s.strs {
		if v, ok := m[k]; ok {
			*p = v
		}
	}
	for k, p := range s.bools {
		if v, ok := m[k]; ok {
			*p = v == "true"
		}
	}
	for k, p := range s.objs {
		if v, ok := m[k]; ok {
			// decode onto a zero value: a field saved empty (and left out
			// by omitempty) must not come back as the view's default
			fresh := reflect.New(reflect.TypeOf(p).Elem())
			if json.Unmarshal([]byte(v), fresh.Interface()) == nil {
				reflect.ValueOf(p).Elem().Set(fresh.Elem())
			}
		}
		// a map (of picks, of flags) is never nil after loading and holds
		// no nil entries, whatever the file said
		if mv := reflect.ValueOf(p).Elem(); mv.Kind() == reflect.Map {
			if mv.IsNil() {
				mv.Set(reflect.MakeMap(mv.Type()))
			}
			if mv.Type().Elem().Kind() == reflect.Pointer {
				for _, key := range mv.MapKeys() {
					if mv.MapIndex(key).IsNil() {
						mv.SetMapIndex(key, reflect.Value{})
					}
				}
			}
		}
	}
}

// shownPanel is one panel of a view for PageState: its name (its
// analysis is VIEW-NAME), its settings as last computed (a nil pointer
// when the panel shows nothing) and the form key, if any, that records
// whether it was shown (so a restored view computes it again).
type shownPanel struct {
	name     string
	settings any
	flag     string
	// running: the panel's work is under way (its settings are not set
	// yet); it counts as shown, so a reload runs it again
	running bool
}

// pageState is a view's PageState: its form and the analyses of the
// panels shown.
func pageState(view string, form formState, panels ...shownPanel) (map[string]string, []analysis.Analysis) {
	st := form.save()
	var list []analysis.Analysis
	for _, p := range panels {
		on := p.settings != nil && !reflect.ValueOf(p.settings).IsNil()
		if p.flag != "" {
			st[p.flag] = strconv.FormatBool(on || p.running)
		}
		if on {
			list = append(list, pageAnalysis(view, p.name, p.settings))
		}
	}
	return st, list
}

// pageAnalysis makes the analysis a view's panel shows, named VIEW-NAME.
func pageAnalysis(view, name string, settings any) analysis.Analysis {
	a, err := analysis.NewAnalysis(view+"-"+name, settings)
	if err != nil {
		panic(err)
	}
	return a
}

// IsAnalysisFile reports whether a file looks like an analysis file: its
// name ends in .heatledger.json, or its text starts as one.
func IsAnalysisFile(name string, data []byte) bool {
	if strings.HasSuffix(strings.ToLower(name), analysis.AnalysisExt) {
		return true
	}
	head := data[:min(len(data), 200)]
	return bytes.HasPrefix(bytes.TrimSpace(head), []byte("{")) && bytes.Contains(head, []byte(analysis.AnalysisFormat))
}

// AddOrOpen adds a data file, or opens an analysis file in place of the
// whole workspace. A damaged analysis file is listed with where it is
// damaged, and the workspace is left as it was.
func (w *Workspace) AddOrOpen(name string, data []byte) {
	if !IsAnalysisFile(name, data) {
		w.Add(name, data)
		return
	}
	if err := w.OpenAnalysis(name, data); err != nil {
		w.AddError(name, err)
	}
}

// OpenAnalysis parses an analysis file and loads it (see LoadAnalysisFile).
// The work it replaces is kept in Undo, so the page can offer to go back.
func (w *Workspace) OpenAnalysis(name string, data []byte) error {
	f, err := analysis.ParseAnalysisFile(data)
	if err != nil {
		if fe, ok := err.(*analysis.FileError); ok && fe.Name == "" {
			fe.Name = name
		}
		return err
	}
	var prev []byte
	if len(w.Files) > 0 || len(w.Brief.Items) > 0 {
		prev, _ = w.SaveBytes()
	}
	w.LoadAnalysisFile(f)
	w.Undo, w.UndoName = prev, name
	return nil
}

// UndoOpen goes back to the work an opened analysis file replaced.
func (w *Workspace) UndoOpen() error {
	prev := w.Undo
	if prev == nil {
		return nil
	}
	f, err := analysis.ParseAnalysisFile(prev)
	if err != nil {
		return err
	}
	w.LoadAnalysisFile(f)
	w.Undo, w.UndoName = nil, ""
	return nil
}
