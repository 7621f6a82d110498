// Package ui is Heatledger's page: vugu components (the .vugu files and the Go
// code vugugen makes from them) over a Workspace that holds the view state.
//
// The Workspace keeps what the page shows (loaded files, what each file gave,
// which series are drawn, the error banner); reading and charting go through
// core/series and core/chart. Nothing in this package touches the browser
// directly except through vugu and the Host interface, so it builds and tests
// natively as well as under GOOS=js.
//
// Every event handler runs its work through Workspace.Do, which recovers a
// panic and shows it in the error banner: a Go panic in an event handler
// would otherwise end the program and leave a dead page.
package ui

import (
	"errors"
	"fmt"
	"math"
	"runtime/debug"
	"sort"
	"strconv"
	"strings"

	"github.com/vugu/vugu"
	"github.com/vugu/vugu/js"

	"heatledger"
	"heatledger/core/analysis"
	"heatledger/core/chart"
	"heatledger/core/series"
)

// Host is what the page needs from the browser. The wasm main implements it;
// native tests use a fake.
type Host interface {
	// ReadFiles takes the File objects of a JS FileList (input.files or
	// dataTransfer.files) at once, so the caller may reset the input
	// afterwards, then reads them in the background, one after another.
	// done is called once per file, in list order, from another goroutine.
	// It returns the number of files taken.
	ReadFiles(list js.Value, done func(name string, data []byte, err error)) int
}

// File is one loaded file and what reading it gave.
type File struct {
	ID     int
	Name   string
	Bytes  int
	Demo   bool           // part of the embedded demo world
	Result *series.Result // nil when reading failed
	Err    error          // the reading error, if any
	// ErrLine is the text of the line the error points at (when the error
	// names a line), shown under the message.
	ErrLine string
	// Data are the file's bytes and Reading the options it was read with,
	// so it can be read again with others.
	Data    []byte
	Reading analysis.ReadingForm
}

// ErrText is the error in the form FILE:LINE:COLUMN: message.
func (f *File) ErrText() string {
	if f.Err == nil {
		return ""
	}
	return f.Err.Error()
}

// Warnings returns what the reader noted about the file.
func (f *File) Warnings() []string {
	if f.Result == nil {
		return nil
	}
	return f.Result.Warnings
}

// Meta is the one-line summary under the file name.
func (f *File) Meta() string {
	parts := []string{sizeText(f.Bytes)}
	if f.Result != nil {
		parts = append(parts, plural(len(f.Result.Series), "series", "series"))
		parts = append(parts, delimName(f.Result.Delimiter))
	}
	if f.Demo {
		parts = append(parts, "demo world (invented data)")
	}
	return strings.Join(parts, " · ")
}

// Row is one series as the file list shows it.
type Row struct {
	Key        string // unique within the workspace: file ID and series index
	S          *series.Series
	Name       string
	Unit       string
	Resolution string
	Span       string // YYYY-MM – YYYY-MM or YYYY – YYYY
	Count      int
	Missing    int
	Selected   bool
	Slot       int    // palette slot when selected
	Ref        string // FILE:NAME, as the analysis views name it
	Role       string // the role given in the Data view ("" for none)
}

// SwatchClass is the CSS class of the colour mark beside a drawn series.
func (r Row) SwatchClass() string {
	if !r.Selected {
		return "hl-swatch"
	}
	return "hl-swatch hl-c" + strconv.Itoa(r.Slot)
}

// UnitText shows an empty unit as a dash.
func (r Row) UnitText() string {
	if r.Unit == "" {
		return "–"
	}
	return r.Unit
}

// Workspace is the state of the page.
type Workspace struct {
	Host  Host
	Files []*File
	// PreviewID is the file whose first rows the preview table shows
	// (0 = the first file that was read).
	PreviewID int
	// Banner lists errors caught at the event boundary, newest last.
	Banner []string
	// Pending counts files being read in the background.
	Pending int

	// Model is the energy balance model as last run in the Response view;
	// the Budget view can take dN from it (nil: the Response defaults).
	Model *analysis.RespondSettings

	// Brief is the briefing being built (the Brief view).
	Brief BriefState
	// Roles are the roles given to series in the Data view, by reference
	// FILE:NAME (analysis.RoleTarget, RoleDriver, RoleForcing, RoleHeat).
	Roles map[string]string

	// Env is the page's event environment (set by the browser main), so
	// work restored from a saved file can run in the background as after
	// a click; nil in native tests.
	Env vugu.EventEnv

	// Undo is the workspace (as an analysis file) that opening UndoName
	// replaced; nil when there is nothing to go back to.
	Undo     []byte
	UndoName string

	// Version counts changes (autosave saves when it moves); Generation
	// counts loads of a whole analysis file (the views are made afresh).
	Version, Generation int

	views          map[string]Stateful
	loadedPage     map[string]map[string]string
	loadedAnalyses []analysis.Analysis

	// BeforeEvent, when set, runs inside Do before the action; tests use it
	// to prove that a panic in any handler is caught.
	BeforeEvent func()

	sel    map[string]int // selected series key -> palette slot
	nextID int

	chartValid bool
	chartSVG   string
	chartLines int
	chartErr   string
}

// NewWorkspace returns an empty workspace.
func NewWorkspace(h Host) *Workspace {
	return &Workspace{Host: h, sel: map[string]int{}}
}

// Do runs an event's work. A panic inside is recovered and shown in the
// banner, so the page keeps working. what says what the user was doing, in
// words that fit "while ...".
func (w *Workspace) Do(what string, f func()) {
	defer func() {
		if r := recover(); r != nil {
			w.Fail(what, r)
		}
	}()
	if w.BeforeEvent != nil {
		w.BeforeEvent()
	}
	f()
	w.Changed()
}

// Fail records a recovered panic in the banner and prints its stack to the
// console (standard output under js/wasm).
func (w *Workspace) Fail(what string, r any) {
	msg := fmt.Sprintf("Something went wrong while %s: %v. The page is still working; the step that failed was not done.", what, r)
	w.Banner = append(w.Banner, msg)
	if len(w.Banner) > 5 {
		w.Banner = w.Banner[len(w.Banner)-5:]
	}
	report(fmt.Sprintf("heatledger: recovered panic while %s: %v\n%s", what, r, debug.Stack()))
	w.chartValid = false
}

// report prints a recovered panic with its stack (to the browser console
// under js/wasm); tests silence it.
var report = func(msg string) { fmt.Print(msg) }

// DismissBanner empties the banner.
func (w *Workspace) DismissBanner() { w.Banner = nil }

// ReadFiles hands a JS FileList to the Host and adds each file as it
// arrives. env is the event environment of the page: each arrival takes its
// lock and asks for a render.
func (w *Workspace) ReadFiles(env vugu.EventEnv, list js.Value) {
	if w.Host == nil {
		panic(errors.New("no browser host to read files with"))
	}
	// a Host may call done before ReadFiles returns (the tests' does);
	// those arrivals are not pending
	inCall, early := true, 0
	n := w.Host.ReadFiles(list, func(name string, data []byte, err error) {
		env.Lock()
		defer env.UnlockRender()
		w.Do("adding "+name, func() {
			if inCall {
				early++
			} else {
				w.Pending = max(0, w.Pending-1)
			}
			if err != nil {
				w.AddError(name, err)
				return
			}
			w.AddOrOpen(name, data)
		})
	})
	inCall = false
	w.Pending += max(0, n-early)
}

// Add reads a file's bytes through core/series and adds it to the list. A
// file with the name of a loaded one replaces it in place, keeping the
// selection of the series whose names are unchanged.
func (w *Workspace) Add(name string, data []byte) *File {
	return w.addWith(name, data, analysis.ReadingForm{}, series.Options{})
}

// Reread reads a loaded file again with other reading options (delimiter,
// missing-value codes, scale, date order). A form error is returned and the
// file is left as it was.
func (w *Workspace) Reread(id int, form analysis.ReadingForm) error {
	opt, err := form.Options()
	if err != nil {
		return err
	}
	for _, f := range w.Files {
		if f.ID == id {
			if f.Data == nil {
				return errors.New("this file's bytes are not kept: load it again")
			}
			demo := f.Demo
			nf := w.addWith(f.Name, f.Data, form, opt)
			nf.Demo = demo
			return nil
		}
	}
	return errors.New("the file is no longer loaded")
}

func (w *Workspace) addWith(name string, data []byte, form analysis.ReadingForm, opt series.Options) *File {
	res, err := series.Read(name, data, opt)
	f := &File{Name: name, Bytes: len(data), Result: res, Err: err, Data: data, Reading: form}
	if err != nil {
		f.Result = nil
		f.ErrLine = errorLine(data, err)
	}
	return w.put(f)
}

// AddError lists a file that could not be read at all.
func (w *Workspace) AddError(name string, err error) *File {
	return w.put(&File{Name: name, Err: err})
}

func (w *Workspace) put(f *File) *File {
	w.chartValid = false
	for i, old := range w.Files {
		if old.Name != f.Name {
			continue
		}
		f.ID = old.ID
		kept := map[string]int{}
		for k, slot := range w.sel {
			if fileOfKey(k) == old.ID {
				if s := w.seriesOfKey(k); s != nil {
					kept[s.Name] = slot
				}
				delete(w.sel, k)
			}
		}
		w.Files[i] = f
		if f.Result != nil {
			for j, s := range f.Result.Series {
				if slot, ok := kept[s.Name]; ok {
					w.sel[seriesKey(f.ID, j)] = slot
				}
			}
		}
		w.defaultSelection(f)
		return f
	}
	w.nextID++
	f.ID = w.nextID
	w.Files = append(w.Files, f)
	w.defaultSelection(f)
	return f
}

// defaultSelection: when nothing is drawn, draw the series of f that share
// the unit of its first series (at most four), so a new file shows at once.
func (w *Workspace) defaultSelection(f *File) {
	if len(w.sel) > 0 || f.Result == nil || len(f.Result.Series) == 0 {
		return
	}
	unit := f.Result.Series[0].Unit
	n := 0
	for j, s := range f.Result.Series {
		if s.Unit == unit && n < 4 {
			w.selectKey(seriesKey(f.ID, j))
			n++
		}
	}
}

// demoOrder puts the demo's temperature file first, so that its series are
// the ones drawn on the first visit; the rest follow by name.
var demoOrder = []string{"tessary_surface.csv", "tessary_ocean_heat.csv", "tessary_forcing.csv"}

// LoadDemo adds the embedded demo world (replacing any demo files already
// loaded).
func (w *Workspace) LoadDemo() {
	files := heatledger.DemoFiles()
	rank := func(name string) int {
		for i, n := range demoOrder {
			if n == name {
				return i
			}
		}
		return len(demoOrder)
	}
	sort.SliceStable(files, func(i, j int) bool { return rank(files[i].Name) < rank(files[j].Name) })
	for _, df := range files {
		f := w.Add(df.Name, df.Data)
		f.Demo = true
	}
}

// HasDemo reports whether any demo file is loaded.
func (w *Workspace) HasDemo() bool {
	for _, f := range w.Files {
		if f.Demo {
			return true
		}
	}
	return false
}

// Remove drops a file and its series.
func (w *Workspace) Remove(id int) {
	var removed []*File
	for i, f := range w.Files {
		if f.ID == id {
			removed = append(removed, f)
			w.Files = append(w.Files[:i:i], w.Files[i+1:]...)
			break
		}
	}
	for k := range w.sel {
		if fileOfKey(k) == id {
			delete(w.sel, k)
		}
	}
	for _, f := range removed {
		for ref := range w.Roles {
			if strings.HasPrefix(ref, f.Name+":") {
				delete(w.Roles, ref)
			}
		}
	}
	if w.PreviewID == id {
		w.PreviewID = 0
	}
	w.chartValid = false
}

// Clear removes every file, the demo included.
func (w *Workspace) Clear() {
	w.Files = nil
	w.Roles = nil
	w.sel = map[string]int{}
	w.PreviewID = 0
	w.chartValid = false
}

// Toggle draws or hides a series.
func (w *Workspace) Toggle(key string) {
	if _, ok := w.sel[key]; ok {
		delete(w.sel, key)
	} else if w.seriesOfKey(key) != nil {
		w.selectKey(key)
	}
	w.chartValid = false
}

// selectKey selects a series with the lowest palette slot not in use, so a
// series keeps its colour while others come and go.
func (w *Workspace) selectKey(key string) {
	used := map[int]bool{}
	for _, s := range w.sel {
		used[s] = true
	}
	slot := 0
	for used[slot] {
		slot++
	}
	w.sel[key] = slot
	w.chartValid = false
}

// Selected reports whether a series is drawn.
func (w *Workspace) Selected(key string) bool {
	_, ok := w.sel[key]
	return ok
}

// NumSelected is the number of series drawn.
func (w *Workspace) NumSelected() int { return len(w.sel) }

// Rows lists the series of a file.
func (w *Workspace) Rows(f *File) []Row {
	if f == nil || f.Result == nil {
		return nil
	}
	rows := make([]Row, 0, len(f.Result.Series))
	for j, s := range f.Result.Series {
		k := seriesKey(f.ID, j)
		slot, sel := w.sel[k]
		rows = append(rows, Row{
			Key: k, S: s, Name: s.Name, Unit: s.Unit,
			Resolution: s.Resolution.String(),
			Span:       span(s),
			Count:      s.Len(),
			Missing:    s.Missing(),
			Selected:   sel,
			Slot:       slot % seriesColours,
			Ref:        f.Name + ":" + s.Name,
			Role:       w.Roles[f.Name+":"+s.Name],
		})
	}
	return rows
}

// PreviewFile is the file whose rows the preview table shows: the one picked
// with PreviewID, else the first file that was read.
func (w *Workspace) PreviewFile() *File {
	var first *File
	for _, f := range w.Files {
		if f.Result == nil {
			continue
		}
		if f.ID == w.PreviewID {
			return f
		}
		if first == nil {
			first = f
		}
	}
	return first
}

// ChartSVG returns the chart of the selected series as SVG text made by
// core/chart, which escapes all text in it. It is computed once per change
// of the selection or of the files. A panic in charting is caught and shown
// as an error instead of a chart.
func (w *Workspace) ChartSVG() string {
	if w.chartValid {
		return w.chartSVG
	}
	w.chartValid = true
	w.chartSVG, w.chartLines, w.chartErr = "", 0, ""
	func() {
		defer func() {
			if r := recover(); r != nil {
				w.chartSVG, w.chartLines = "", 0
				w.chartErr = fmt.Sprintf("The chart could not be drawn: %v", r)
				report(fmt.Sprintf("heatledger: recovered panic while drawing the chart: %v\n%s", r, debug.Stack()))
			}
		}()
		c, n := w.chartSpec()
		if n == 0 {
			return
		}
		w.chartSVG, w.chartLines = c.SVG(), n
	}()
	return w.chartSVG
}

// ChartLines is the number of lines on the chart (after ChartSVG).
func (w *Workspace) ChartLines() int {
	w.ChartSVG()
	return w.chartLines
}

// ChartError is the error from drawing the chart, if any.
func (w *Workspace) ChartError() string {
	w.ChartSVG()
	return w.chartErr
}

// seriesColours is the number of palette colours used for series (the
// Okabe-Ito set without black); static/app.css has a class per slot.
const seriesColours = 7

// chartSpec builds the chart of the selected series, in file order.
func (w *Workspace) chartSpec() (chart.Lines, int) {
	type pick struct {
		s    *series.Series
		file string
		slot int
	}
	var picks []pick
	names := map[string]int{}
	units := map[string]bool{}
	var unitList []string
	for _, f := range w.Files {
		for _, r := range w.Rows(f) {
			if !r.Selected {
				continue
			}
			picks = append(picks, pick{r.S, f.Name, r.Slot})
			names[r.Name]++
			if !units[r.Unit] {
				units[r.Unit] = true
				unitList = append(unitList, r.Unit)
			}
		}
	}
	c := chart.Lines{XLabel: "Year", Width: 760, Height: 380}
	switch {
	case len(unitList) == 1 && unitList[0] != "":
		c.YLabel = unitList[0]
	case len(unitList) > 1:
		var shown []string
		for _, u := range unitList {
			if u == "" {
				u = "no unit"
			}
			shown = append(shown, u)
		}
		c.YLabel = "mixed units: " + strings.Join(shown, ", ")
	}
	for _, p := range picks {
		name := p.s.Name
		if names[name] > 1 {
			name += " · " + p.file
		}
		c.Lines = append(c.Lines, chart.Line{
			Name:  name,
			X:     p.s.Times,
			Y:     p.s.Values,
			Color: paletteColour(p.slot),
		})
	}
	c.YZero = len(unitList) == 1
	return c, len(c.Lines)
}

// paletteColour is the colour of a palette slot: the series colours of
// chart.Palette (black excluded), cycled.
func paletteColour(slot int) string {
	var c []string
	for _, p := range chart.Palette {
		if p != "#000000" {
			c = append(c, p)
		}
	}
	if len(c) == 0 {
		return ""
	}
	return c[slot%len(c)]
}

func seriesKey(fileID, index int) string {
	return strconv.Itoa(fileID) + ":" + strconv.Itoa(index)
}

func fileOfKey(k string) int {
	i := strings.IndexByte(k, ':')
	if i < 0 {
		return -1
	}
	id, err := strconv.Atoi(k[:i])
	if err != nil {
		return -1
	}
	return id
}

func (w *Workspace) seriesOfKey(k string) *series.Series {
	i := strings.IndexByte(k, ':')
	if i < 0 {
		return nil
	}
	id, err1 := strconv.Atoi(k[:i])
	j, err2 := strconv.Atoi(k[i+1:])
	if err1 != nil || err2 != nil {
		return nil
	}
	for _, f := range w.Files {
		if f.ID == id && f.Result != nil && j >= 0 && j < len(f.Result.Series) {
			return f.Result.Series[j]
		}
	}
	return nil
}

// span is the first and last step as YYYY-MM (monthly) or YYYY (annual).
func span(s *series.Series) string {
	if s.Len() == 0 {
		return "–"
	}
	if math.IsNaN(s.Start()) {
		return "–"
	}
	return series.StepLabel(s.Resolution, s.First) + " – " + series.StepLabel(s.Resolution, s.Last())
}

// errorLine returns the text of the line a reading error points at.
func errorLine(data []byte, err error) string {
	var se *series.Error
	if !errors.As(err, &se) || se.Line < 1 {
		return ""
	}
	line := 1
	start := 0
	for i := 0; i < len(data) && line < se.Line; i++ {
		if data[i] == '\n' {
			line++
			start = i + 1
		}
	}
	if line != se.Line || start >= len(data) {
		return ""
	}
	end := start
	for end < len(data) && data[end] != '\n' && end-start < 400 {
		end++
	}
	text := strings.TrimRight(string(data[start:end]), "\r")
	if end < len(data) && data[end] != '\n' {
		text += " …"
	}
	if strings.TrimSpace(text) == "" {
		return ""
	}
	return strings.ToValidUTF8(text, "\uFFFD")
}

func sizeText(n int) string {
	switch {
	case n >= 1<<20:
		return strconv.FormatFloat(float64(n)/(1<<20), 'f', 1, 64) + " MiB"
	case n >= 1<<10:
		return strconv.FormatFloat(float64(n)/(1<<10), 'f', 1, 64) + " KiB"
	}
	return plural(n, "byte", "bytes")
}

func plural(n int, one, many string) string {
	if n == 1 {
		return "1 " + one
	}
	return strconv.Itoa(n) + " " + many
}

func delimName(d rune) string {
	switch d {
	case ',':
		return "comma-separated"
	case ';':
		return "semicolon-separated"
	case '\t':
		return "tab-separated"
	case ' ':
		return "space-aligned"
	}
	return "text table"
}
