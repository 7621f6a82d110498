package ui

import (
	"bytes"
	"errors"
	"os"
	"regexp"
	"slices"
	"strconv"
	"strings"
	"testing"

	"github.com/vugu/vugu"
	"github.com/vugu/vugu/js"
	"github.com/vugu/vugu/staticrender"

	"heatledger"
	"heatledger/core/chart"
	"heatledger/core/series"
)

// fakeHost hands back the files it was given, synchronously.
type fakeHost struct {
	files []struct {
		name string
		data []byte
		err  error
	}
}

func (h *fakeHost) ReadFiles(_ js.Value, done func(string, []byte, error)) int {
	for _, f := range h.files {
		done(f.name, f.data, f.err)
	}
	return len(h.files)
}

// nopEnv is an EventEnv for native tests.
type nopEnv struct{ renders int }

func (*nopEnv) Lock()           {}
func (*nopEnv) UnlockOnly()     {}
func (e *nopEnv) UnlockRender() { e.renders++ }
func (*nopEnv) RLock()          {}
func (*nopEnv) RUnlock()        {}

func names(rows []Row) []string {
	var out []string
	for _, r := range rows {
		out = append(out, r.Name)
	}
	return out
}

func TestAddListsSeries(t *testing.T) {
	ws := NewWorkspace(nil)
	f := ws.Add("t.csv", []byte("year,a (K),b (W m-2)\n2000,1,2\n2001,,3\n2002,3,4\n"))
	if f.Err != nil {
		t.Fatal(f.Err)
	}
	rows := ws.Rows(f)
	if got := names(rows); !slices.Equal(got, []string{"a", "b"}) {
		t.Fatalf("rows %q", got)
	}
	a := rows[0]
	if a.Unit != "K" || a.Resolution != "annual" || a.Span != "2000 – 2002" || a.Count != 3 || a.Missing != 1 {
		t.Errorf("row a = %+v", a)
	}
	// nothing was drawn, so the series sharing the first one's unit are
	if !ws.Selected(a.Key) || ws.Selected(rows[1].Key) {
		t.Errorf("default selection: a=%v b=%v, want a only", ws.Selected(a.Key), ws.Selected(rows[1].Key))
	}
	if ws.ChartLines() != 1 {
		t.Errorf("chart lines = %d, want 1", ws.ChartLines())
	}
}

func TestMonthlySpan(t *testing.T) {
	ws := NewWorkspace(nil)
	f := ws.Add("m.csv", []byte("date,x\n1999-11,1\n1999-12,2\n2000-01,3\n"))
	if f.Err != nil {
		t.Fatal(f.Err)
	}
	if got := ws.Rows(f)[0].Span; got != "1999-11 – 2000-01" {
		t.Errorf("span %q", got)
	}
}

func TestBadFileError(t *testing.T) {
	ws := NewWorkspace(nil)
	f := ws.Add("bad.csv", []byte("year,x\n2000,1\n2001,2\n2002,oops\n"))
	if f.Err == nil {
		t.Fatal("no error for text in a numeric column")
	}
	var se *series.Error
	if !errors.As(f.Err, &se) || se.Line != 4 {
		t.Fatalf("error %v does not point at line 4", f.Err)
	}
	if !strings.HasPrefix(f.ErrText(), "bad.csv:4:") {
		t.Errorf("ErrText %q", f.ErrText())
	}
	if f.ErrLine != "2002,oops" {
		t.Errorf("ErrLine %q", f.ErrLine)
	}
	if ws.Rows(f) != nil || ws.ChartLines() != 0 {
		t.Error("a failed file gave rows or lines")
	}
}

func TestErrorLine(t *testing.T) {
	data := []byte("a\r\nb\r\nccc\r\n")
	for _, c := range []struct {
		line int
		want string
	}{{1, "a"}, {2, "b"}, {3, "ccc"}, {4, ""}, {0, ""}} {
		got := errorLine(data, &series.Error{File: "f", Line: c.line, Column: 1})
		if got != c.want {
			t.Errorf("line %d: %q, want %q", c.line, got, c.want)
		}
	}
	if got := errorLine(data, errors.New("plain")); got != "" {
		t.Errorf("plain error gave %q", got)
	}
	long := bytes.Repeat([]byte("x"), 1000)
	if got := errorLine(long, &series.Error{Line: 1}); len(got) > 410 || !strings.HasSuffix(got, "…") {
		t.Errorf("long line not cut: %d bytes", len(got))
	}
}

func TestReplaceKeepsSelection(t *testing.T) {
	ws := NewWorkspace(nil)
	ws.Add("a.csv", []byte("year,p (K),q (ZJ)\n2000,1,2\n2001,2,3\n"))
	f := ws.Files[0]
	q := ws.Rows(f)[1].Key
	ws.Toggle(q) // p and q drawn
	if ws.NumSelected() != 2 {
		t.Fatalf("selected %d", ws.NumSelected())
	}
	g := ws.Add("a.csv", []byte("year,q (ZJ),r (ZJ)\n2000,1,2\n2001,2,3\n"))
	if len(ws.Files) != 1 || g.ID != f.ID {
		t.Fatalf("replacement added a file: %d files", len(ws.Files))
	}
	rows := ws.Rows(g)
	if !rows[0].Selected || rows[1].Selected {
		t.Errorf("after replacing: q selected=%v r selected=%v, want q only", rows[0].Selected, rows[1].Selected)
	}
}

func TestPaletteSlotsStable(t *testing.T) {
	ws := NewWorkspace(nil)
	f := ws.Add("a.csv", []byte("year,p (K),q (K),r (K)\n2000,1,2,3\n2001,2,3,4\n"))
	rows := ws.Rows(f)
	// all three share a unit: selected by default with slots 0,1,2
	for i, r := range rows {
		if !r.Selected || r.Slot != i {
			t.Fatalf("row %d: %+v", i, r)
		}
	}
	ws.Toggle(rows[0].Key) // hide p: q and r keep their colours
	rows = ws.Rows(f)
	if rows[1].Slot != 1 || rows[2].Slot != 2 {
		t.Errorf("slots moved: %d %d", rows[1].Slot, rows[2].Slot)
	}
	ws.Toggle(rows[0].Key) // p comes back into the free slot
	if got := ws.Rows(f)[0].Slot; got != 0 {
		t.Errorf("p got slot %d, want 0", got)
	}
	if got := ws.Rows(f)[0].SwatchClass(); got != "hl-swatch hl-c0" {
		t.Errorf("swatch class %q", got)
	}
}

func TestRemoveAndClear(t *testing.T) {
	ws := NewWorkspace(nil)
	ws.LoadDemo()
	n := len(ws.Files)
	if n != len(heatledger.DemoFiles()) || !ws.HasDemo() {
		t.Fatalf("demo gave %d files", n)
	}
	first := ws.Files[0]
	ws.Remove(first.ID)
	if len(ws.Files) != n-1 {
		t.Errorf("%d files after remove", len(ws.Files))
	}
	for k := range ws.sel {
		if fileOfKey(k) == first.ID {
			t.Errorf("selection %s of a removed file kept", k)
		}
	}
	ws.Clear()
	if len(ws.Files) != 0 || ws.NumSelected() != 0 || ws.ChartLines() != 0 || ws.HasDemo() {
		t.Error("clear left something")
	}
	if ws.PreviewFile() != nil {
		t.Error("preview file after clear")
	}
}

func TestDemoFirstVisit(t *testing.T) {
	ws := NewWorkspace(nil)
	ws.LoadDemo()
	if ws.Files[0].Name != demoOrder[0] {
		t.Errorf("first demo file %s, want %s", ws.Files[0].Name, demoOrder[0])
	}
	for _, f := range ws.Files {
		if f.Err != nil {
			t.Errorf("demo file %s: %v", f.Name, f.Err)
		}
		if !f.Demo {
			t.Errorf("%s not marked demo", f.Name)
		}
	}
	if ws.ChartLines() == 0 {
		t.Fatal("demo draws nothing")
	}
	svg := ws.ChartSVG()
	for _, r := range ws.Rows(ws.Files[0]) {
		if r.Selected != strings.Contains(svg, `data-series="`+r.Name+`"`) {
			t.Errorf("series %s selected=%v but in chart=%v", r.Name, r.Selected, !r.Selected)
		}
	}
	// loading the demo again replaces it rather than doubling it
	ws.LoadDemo()
	if len(ws.Files) != len(heatledger.DemoFiles()) {
		t.Errorf("%d files after loading the demo twice", len(ws.Files))
	}
}

func TestReadFilesThroughHost(t *testing.T) {
	h := &fakeHost{}
	h.files = append(h.files, struct {
		name string
		data []byte
		err  error
	}{"ok.csv", []byte("year,x\n2000,1\n2001,2\n"), nil}, struct {
		name string
		data []byte
		err  error
	}{"gone.csv", nil, errors.New("gone.csv: the browser could not read the file")})
	ws := NewWorkspace(h)
	env := &nopEnv{}
	ws.ReadFiles(env, js.Value{})
	if len(ws.Files) != 2 || ws.Files[0].Err != nil || ws.Files[1].Err == nil {
		t.Fatalf("files %+v", ws.Files)
	}
	if env.renders != 2 {
		t.Errorf("%d renders asked, want one per file", env.renders)
	}
	if ws.Pending != 0 {
		t.Errorf("pending %d after all files arrived", ws.Pending)
	}
}

// hostile is a header that would run script if it became markup.
const hostile = `<img src=x onerror=alert(1)>`

func buildPage(t *testing.T, ws *Workspace) (*Root, *vugu.BuildResults, string) {
	t.Helper()
	root := &Root{WS: ws}
	env, err := vugu.NewBuildEnv()
	if err != nil {
		t.Fatal(err)
	}
	br := env.RunBuild(root)
	var buf bytes.Buffer
	if err := staticrender.New(&buf).Render(br); err != nil {
		t.Fatal(err)
	}
	return root, br, buf.String()
}

func TestPageEscapesFileContent(t *testing.T) {
	ws := NewWorkspace(nil)
	f := ws.Add(hostile+".csv", []byte("year,"+hostile+"\n2000,1\n2001,2\n"))
	if f.Err != nil {
		t.Fatal(f.Err)
	}
	ws.PreviewID = f.ID
	if ws.ChartLines() != 1 {
		t.Fatalf("chart lines %d", ws.ChartLines())
	}
	bad := ws.Add("bad"+hostile+".csv", []byte("year,x\n2000,1\n2001,"+hostile+"\n"))
	if bad.Err == nil {
		t.Fatal("no error")
	}
	_, _, html := buildPage(t, ws)
	if strings.Contains(html, "<img") {
		t.Errorf("page contains an img tag:\n%s", html)
	}
	if n := strings.Count(html, "&lt;img src=x onerror=alert(1)&gt;"); n < 5 {
		// file name, series name, preview header, chart legend, error, error line ...
		t.Errorf("escaped text found %d times, want it in every place it is shown", n)
	}
}

func TestPageShowsOnlyWorkingViews(t *testing.T) {
	ws := NewWorkspace(nil)
	ws.LoadDemo()
	_, _, html := buildPage(t, ws)
	if !strings.Contains(html, `<h1 class="hl-name">Heatledger</h1>`) {
		t.Error("no app name")
	}
	tabs := regexp.MustCompile(`<button[^>]*class="hl-tab[^"]*"[^>]*>([^<]*)</button>`).FindAllStringSubmatch(html, -1)
	var got []string
	for _, m := range tabs {
		got = append(got, m[1])
	}
	var want []string
	for _, v := range Views() {
		want = append(want, v.Title)
	}
	if !slices.Equal(got, want) || len(want) == 0 || want[0] != "Data" {
		t.Errorf("tabs %q, want %q", got, want)
	}
	for _, f := range ws.Files {
		if !strings.Contains(html, `data-file="`+f.Name+`"`) {
			t.Errorf("file %s not listed", f.Name)
		}
		for _, r := range ws.Rows(f) {
			if !strings.Contains(html, `data-series="`+r.Name+`"`) {
				t.Errorf("series %s not listed", r.Name)
			}
		}
	}
	if !strings.Contains(html, `<path class="hl-line"`) {
		t.Error("no chart line in the page")
	}
}

// panicEvent is a DOM event whose every method panics, standing in for
// anything that can go wrong inside a handler.
type panicEvent struct{}

func (panicEvent) Prop(...string) any             { panic("test: Prop") }
func (panicEvent) PropString(...string) string    { panic("test: PropString") }
func (panicEvent) PropFloat64(...string) float64  { panic("test: PropFloat64") }
func (panicEvent) PropBool(...string) bool        { panic("test: PropBool") }
func (panicEvent) EventSummary() map[string]any   { panic("test: EventSummary") }
func (panicEvent) JSEvent() js.Value              { panic("test: JSEvent") }
func (panicEvent) JSEventTarget() js.Value        { panic("test: JSEventTarget") }
func (panicEvent) JSEventCurrentTarget() js.Value { panic("test: JSEventCurrentTarget") }
func (panicEvent) EventEnv() vugu.EventEnv        { panic("test: EventEnv") }
func (panicEvent) PreventDefault()                { panic("test: PreventDefault") }
func (panicEvent) StopPropagation()               { panic("test: StopPropagation") }

// handlers collects every DOM event handler in a built page, components
// included.
func handlers(br *vugu.BuildResults) []vugu.DOMEventHandlerSpec {
	var out []vugu.DOMEventHandlerSpec
	var visitOut func(bo *vugu.BuildOut)
	var visit func(n *vugu.VGNode)
	visit = func(n *vugu.VGNode) {
		if n == nil {
			return
		}
		if n.Component != nil {
			visitOut(br.ResultFor(n.Component))
		}
		out = append(out, n.DOMEventHandlerSpecList...)
		for c := n.FirstChild; c != nil; c = c.NextSibling {
			visit(c)
		}
	}
	visitOut = func(bo *vugu.BuildOut) {
		if bo == nil {
			return
		}
		for _, n := range bo.Out {
			visit(n)
		}
	}
	visitOut(br.Out)
	return out
}

// TestEveryHandlerRecovers calls every event handler of every view twice:
// with an event that panics when touched, and with a workspace hook that
// panics before the handler's work. No panic may escape (it would end the
// Go program and leave a dead page), and each must show in the banner.
func TestEveryHandlerRecovers(t *testing.T) {
	for _, v := range Views() {
		t.Run(v.ID, func(t *testing.T) {
			ws := NewWorkspace(&fakeHost{})
			ws.LoadDemo()
			ws.Add("bad.csv", []byte("year,x\n2000,1\n2001,no\n"))
			ws.Banner = []string{"shown, so that its Dismiss button is built"}
			root := &Root{WS: ws, current: v.ID}
			if dv, ok := root.view().(*DataView); ok {
				dv.pasteOpen = true // so the paste box's handlers are built too
			}
			env, err := vugu.NewBuildEnv()
			if err != nil {
				t.Fatal(err)
			}
			hs := handlers(env.RunBuild(root))
			if len(hs) < 2 {
				t.Fatalf("found only %d handlers", len(hs))
			}
			if v.ID == "data" {
				types := map[string]bool{}
				for _, h := range hs {
					types[h.EventType] = true
				}
				for _, want := range []string{"click", "change"} {
					if !types[want] {
						t.Errorf("no %s handler found", want)
					}
				}
			}
			checkHandlers(t, ws, hs)
			// after all that the page still builds
			ws.BeforeEvent = nil
			env.RunBuild(root)
		})
	}
}

func checkHandlers(t *testing.T, ws *Workspace, hs []vugu.DOMEventHandlerSpec) {
	t.Helper()
	call := func(h vugu.DOMEventHandlerSpec, ev vugu.DOMEvent) (escaped any) {
		defer func() { escaped = recover() }()
		h.Func(ev)
		return nil
	}
	for i, h := range hs {
		ws.Banner = nil
		ws.BeforeEvent = func() { panic("test: hook") }
		if p := call(h, panicEvent{}); p != nil {
			t.Errorf("handler %d (%s) let a panic escape: %v", i, h.EventType, p)
		}
		if len(ws.Banner) != 1 || !strings.Contains(ws.Banner[0], "test: hook") {
			t.Errorf("handler %d (%s): banner %q, want the hook's panic", i, h.EventType, ws.Banner)
		}
		ws.Banner = nil
		ws.BeforeEvent = nil
		if p := call(h, panicEvent{}); p != nil {
			t.Errorf("handler %d (%s) let an event panic escape: %v", i, h.EventType, p)
		}
	}
}

// TestSwatchColoursMatchChart checks that static/app.css gives .hl-cN the
// colour the chart uses for palette slot N.
func TestSwatchColoursMatchChart(t *testing.T) {
	css, err := os.ReadFile("../static/app.css")
	if err != nil {
		t.Fatal(err)
	}
	re := regexp.MustCompile(`\.hl-c(\d+)\s*\{\s*background:\s*(#[0-9A-Fa-f]{6})`)
	found := 0
	for _, m := range re.FindAllStringSubmatch(string(css), -1) {
		slot, _ := strconv.Atoi(m[1])
		if want := paletteColour(slot); !strings.EqualFold(m[2], want) {
			t.Errorf(".hl-c%d is %s, chart slot %d is %s", slot, m[2], slot, want)
		}
		found++
	}
	if found != seriesColours {
		t.Errorf("app.css has %d swatch colours, want %d", found, seriesColours)
	}
	nonBlack := 0
	for _, c := range chart.Palette {
		if c != "#000000" {
			nonBlack++
		}
	}
	if nonBlack != seriesColours {
		t.Errorf("chart.Palette has %d series colours, ui assumes %d", nonBlack, seriesColours)
	}
}

func TestChartMixedUnits(t *testing.T) {
	ws := NewWorkspace(nil)
	f := ws.Add("a.csv", []byte("year,p (K),q (ZJ)\n2000,1,2\n2001,2,3\n"))
	ws.Toggle(ws.Rows(f)[1].Key)
	c, n := ws.chartSpec()
	if n != 2 || !strings.Contains(c.YLabel, "mixed units") {
		t.Errorf("lines %d, y label %q", n, c.YLabel)
	}
	// same series name in two files: the legend tells them apart
	g := ws.Add("b.csv", []byte("year,p (K)\n2000,1\n2001,2\n"))
	ws.Toggle(ws.Rows(g)[0].Key)
	c, _ = ws.chartSpec()
	var legend []string
	for _, l := range c.Lines {
		legend = append(legend, l.Name)
	}
	if !slices.Contains(legend, "p · a.csv") || !slices.Contains(legend, "p · b.csv") {
		t.Errorf("legend %q does not tell the two p apart", legend)
	}
}

func TestDoRecovers(t *testing.T) {
	ws := NewWorkspace(nil)
	ws.Do("testing", func() { panic("boom") })
	if len(ws.Banner) != 1 || !strings.Contains(ws.Banner[0], "while testing: boom") {
		t.Errorf("banner %q", ws.Banner)
	}
	for range 10 {
		ws.Do("testing", func() { panic("again") })
	}
	if len(ws.Banner) > 5 {
		t.Errorf("banner grew to %d", len(ws.Banner))
	}
	ws.DismissBanner()
	if ws.Banner != nil {
		t.Error("dismiss left messages")
	}
}

func TestSmallHelpers(t *testing.T) {
	if sizeText(5) != "5 bytes" || sizeText(1) != "1 byte" || sizeText(2048) != "2.0 KiB" || sizeText(3<<20) != "3.0 MiB" {
		t.Error("sizeText")
	}
	if fileOfKey("12:3") != 12 || fileOfKey("x") != -1 || fileOfKey("a:1") != -1 {
		t.Error("fileOfKey")
	}
	ws := NewWorkspace(nil)
	if ws.seriesOfKey("1:0") != nil || ws.seriesOfKey("bad") != nil {
		t.Error("seriesOfKey on empty workspace")
	}
	ws.Toggle("9:9") // unknown key: no selection
	if ws.NumSelected() != 0 {
		t.Error("unknown key selected")
	}
}

func TestMain(m *testing.M) {
	report = func(string) {} // the recovered panics of the tests are expected
	os.Exit(m.Run())
}
