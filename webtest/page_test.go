//go:build browser

package webtest

import (
	"context"
	"fmt"
	"os"
	"slices"
	"sort"
	"strconv"
	"strings"
	"testing"
	"time"

	"github.com/chromedp/cdproto/network"
	"github.com/chromedp/chromedp"

	"heatledger"
	"heatledger/core/series"
	"heatledger/ui"
)

// demoSeries reads the embedded demo files natively: file name -> series
// names, as the page should list them.
func demoSeries(t *testing.T) map[string][]string {
	t.Helper()
	out := map[string][]string{}
	for _, f := range heatledger.DemoFiles() {
		res, err := series.Read(f.Name, f.Data, series.Options{})
		if err != nil {
			t.Fatalf("demo file %s does not read: %v", f.Name, err)
		}
		for _, s := range res.Series {
			out[f.Name] = append(out[f.Name], s.Name)
		}
	}
	if len(out) == 0 {
		t.Fatal("no demo files embedded")
	}
	return out
}

func TestPageLoadsClean(t *testing.T) {
	p := openPage(t) // checkClean runs at the end: no console error, exception, CSP violation, foreign request
	if got := eval[string](p, `document.querySelector(".hl-name").textContent`); got != "Heatledger" {
		t.Errorf("app name = %q", got)
	}
	// the switcher offers exactly the views ui.Views lists (the working
	// ones), Data first
	var want []string
	for _, v := range ui.Views() {
		want = append(want, v.Title)
	}
	tabs := eval[[]string](p, `Array.from(document.querySelectorAll(".hl-views button"), b => b.textContent.trim())`)
	if !slices.Equal(tabs, want) || len(tabs) == 0 || tabs[0] != "Data" {
		t.Errorf("view switcher shows %q, want %q", tabs, want)
	}
	if got := eval[string](p, `document.body.dataset.readyMs || ""`); got == "" {
		t.Error("ready mark has no time")
	}
	if eval[bool](p, `!!document.getElementById("hl-banner")`) {
		t.Errorf("error banner shown on a clean load: %q", p.banner())
	}
	csp := eval[string](p, `document.querySelector('meta[http-equiv="Content-Security-Policy"]').content`)
	for _, want := range []string{"default-src 'self'", "connect-src 'self'"} {
		if !strings.Contains(csp, want) {
			t.Errorf("CSP %q lacks %q", csp, want)
		}
	}
}

func TestDemoListedAndDrawn(t *testing.T) {
	want := demoSeries(t)
	p := openPage(t)
	all := map[string]bool{}
	for file, names := range want {
		got := p.seriesOf(file)
		if !slices.Equal(got, names) {
			t.Errorf("%s lists series %q, want %q", file, got, names)
		}
		for _, n := range names {
			all[n] = true
		}
	}
	drawn := p.drawn()
	if len(drawn) == 0 {
		t.Fatal("no chart line drawn for the demo")
	}
	for _, d := range drawn {
		if !all[d] {
			t.Errorf("chart draws %q, which is not a demo series", d)
		}
	}
	// the drawn series are the ticked ones
	ticked := eval[[]string](p, `Array.from(document.querySelectorAll("tr.hl-series"), r => r.querySelector("input[type=checkbox]").checked ? r.dataset.series : null).filter(Boolean)`)
	sort.Strings(ticked)
	if !slices.Equal(ticked, drawn) {
		t.Errorf("ticked %q but drawn %q", ticked, drawn)
	}
	// each series row shows span, count and missing
	row := eval[[]string](p, `Array.from(document.querySelector("tr.hl-series").cells, c => { const s = c.querySelector("select"); return s ? "role:" + s.value : c.textContent.trim(); })`)
	if len(row) != 8 || row[7] != "role:" {
		t.Fatalf("series row has cells %q", row)
	}
	if !strings.Contains(row[4], "–") || row[5] == "" || row[6] == "" {
		t.Errorf("series row lacks span/count/missing: %q", row)
	}
	// the preview table shows the first rows of a file
	if n := eval[int](p, `document.querySelectorAll("#hl-preview tbody tr").length`); n == 0 {
		t.Error("preview table is empty")
	}
}

func TestToggleSeries(t *testing.T) {
	p := openPage(t)
	before := p.drawn()
	// tick the first unticked series of the ocean heat file
	sel := fileSel("tessary_ocean_heat.csv") + ` tr.hl-series input[type=checkbox]`
	p.click(sel)
	p.waitFor("a new line", `document.querySelectorAll("#hl-chart path.hl-line").length === `+strconv.Itoa(len(before)+1))
	if !slices.Contains(p.drawn(), "ocean_heat") {
		t.Errorf("ocean_heat not drawn after ticking it: %q", p.drawn())
	}
	p.click(sel)
	p.waitFor("the line to go", `document.querySelectorAll("#hl-chart path.hl-line").length === `+strconv.Itoa(len(before)))
}

func TestUploadFile(t *testing.T) {
	p := openPage(t)
	csv := "# a small test table\nyear,month,lake_temp (degC),ice_days\n"
	for y := 2001; y <= 2002; y++ {
		for m := 1; m <= 12; m++ {
			v := strconv.Itoa(m+y-2000) + ".5"
			if y == 2002 && m == 5 {
				v = "NA"
			}
			csv += strconv.Itoa(y) + "," + strconv.Itoa(m) + "," + v + "," + strconv.Itoa(12-m) + "\n"
		}
	}
	p.upload(map[string]string{"lakes.csv": csv})
	p.waitFor("the uploaded file", `!!document.querySelector(`+js(fileSel("lakes.csv"))+`)`)
	if got := p.seriesOf("lakes.csv"); !slices.Equal(got, []string{"lake_temp", "ice_days"}) {
		t.Fatalf("lakes.csv lists %q", got)
	}
	row := eval[[]string](p, `Array.from(document.querySelector(`+js(fileSel("lakes.csv")+` tr.hl-series`)+`).cells, c => { const s = c.querySelector("select"); return s ? "role:" + s.value : c.textContent.trim(); })`)
	// Draw, Series, Unit, Steps, Span, Count, Missing, Role (none yet)
	want := []string{"", "lake_temp", "degC", "monthly", "2001-01 – 2002-12", "24", "1", "role:"}
	if !slices.Equal(row, want) {
		t.Errorf("lake_temp row = %q, want %q", row, want)
	}
	// a second upload of the same name replaces the file in place
	p.upload(map[string]string{"lakes.csv": "year,lake_temp (degC)\n2001,1\n2002,2\n"})
	p.waitFor("the replaced file", `document.querySelectorAll(`+js(fileSel("lakes.csv")+` tr.hl-series`)+`).length === 1`)
	if n := eval[int](p, `document.querySelectorAll(`+js(fileSel("lakes.csv"))+`).length`); n != 1 {
		t.Errorf("%d cards for lakes.csv after loading it again, want 1", n)
	}
}

func twoDigits(n int) string {
	if n < 10 {
		return "0" + strconv.Itoa(n)
	}
	return strconv.Itoa(n)
}

func TestBadFileNamesItsLine(t *testing.T) {
	p := openPage(t)
	// line 4 holds text where a number belongs
	bad := "year,anomaly (K)\n1990,0.1\n1991,0.2\n1992,warm\n1993,0.3\n"
	p.upload(map[string]string{"bad.csv": bad})
	sel := fileSel("bad.csv") + ` .hl-error-text`
	p.waitFor("the error", `!!document.querySelector(`+js(sel)+`)`)
	msg := eval[string](p, `document.querySelector(`+js(sel)+`).textContent`)
	if !strings.HasPrefix(msg, "bad.csv:4:") {
		t.Errorf("error %q does not name bad.csv line 4 as FILE:LINE:COLUMN", msg)
	}
	line := eval[string](p, `(document.querySelector(`+js(fileSel("bad.csv")+` .hl-error-line`)+`) || {}).textContent || ""`)
	if line != "1992,warm" {
		t.Errorf("error shows line text %q, want the offending line", line)
	}
	// the other files are still there and the page still works
	if !slices.Contains(p.fileNames(), "tessary_surface.csv") {
		t.Errorf("demo files gone after a bad file: %q", p.fileNames())
	}
}

func TestMarkupInHeaderStaysText(t *testing.T) {
	p := openPage(t)
	evil := `<img src=x onerror=alert(1)>`
	p.upload(map[string]string{"evil.csv": "year," + evil + "\n2000,1\n2001,2\n2002,3\n"})
	rowSel := fileSel("evil.csv") + ` tr.hl-series`
	p.waitFor("the file", `!!document.querySelector(`+js(rowSel)+`)`)
	// draw it too, so the name goes through the chart's legend as well
	p.click(rowSel + ` input[type=checkbox]`)
	p.waitFor("its line", `Array.from(document.querySelectorAll("#hl-chart path.hl-line"), e => e.getAttribute("data-series")).includes(`+js(evil)+`)`)
	// show its rows, so the header goes through the preview table
	p.click(fileSel("evil.csv") + ` .hl-file-tools button`)
	p.waitFor("its rows", `Array.from(document.querySelectorAll("#hl-preview thead th"), th => th.textContent).join("|") === "year|"+`+js(evil))

	if n := eval[int](p, `document.querySelectorAll("img, image, script:not([src])").length`); n != 0 {
		t.Errorf("%d img/image/inline script elements in the page, want 0", n)
	}
	name := eval[string](p, `document.querySelector(`+js(rowSel+` .hl-series-name`)+`).textContent`)
	if name != evil {
		t.Errorf("series name shown as %q, want the text %q", name, evil)
	}
	legend := eval[string](p, `document.getElementById("hl-chart").textContent`)
	if !strings.Contains(legend, evil) {
		t.Errorf("chart text lacks the literal name %q", evil)
	}
	time.Sleep(200 * time.Millisecond) // give an onerror handler, if any, the chance to fire (checkClean fails on a dialog)
}

func TestPasteBox(t *testing.T) {
	p := openPage(t)
	p.click(`#hl-paste-toggle`)
	p.do(
		chromedp.SendKeys(chromedp.ID("hl-paste-name"), "typed.csv"),
		chromedp.SendKeys(chromedp.ID("hl-paste-text"), "year;level (m)\n2010;1,5\n2011;1,75\n2012;2\n"),
	)
	p.click(`#hl-paste-read`)
	p.waitFor("the pasted table", `!!document.querySelector(`+js(fileSel("typed.csv"))+`)`)
	if got := p.seriesOf("typed.csv"); !slices.Equal(got, []string{"level"}) {
		t.Errorf("typed.csv lists %q", got)
	}
	// pasted text becomes the preview
	p.waitFor("its rows", `(document.querySelector("#hl-preview .hl-preview-title") || {}).textContent.includes("typed.csv")`)
	cells := eval[[]string](p, `Array.from(document.querySelectorAll("#hl-preview tbody tr:first-child td"), c => c.textContent)`)
	if !slices.Equal(cells, []string{"2010", "1,5"}) {
		t.Errorf("first pasted row shows %q", cells)
	}
	// the box keeps the text, so a fix can be read again
	if v := eval[string](p, `document.getElementById("hl-paste-text").value`); !strings.Contains(v, "2012;2") {
		t.Errorf("paste box lost its text: %q", v)
	}
}

func TestRemoveAndClear(t *testing.T) {
	want := demoSeries(t)
	p := openPage(t)
	if n := len(p.fileNames()); n != len(want) {
		t.Fatalf("%d files listed, want the %d demo files", n, len(want))
	}
	p.click(fileSel("tessary_surface.csv") + ` .hl-remove`)
	p.waitFor("the file to go", `!document.querySelector(`+js(fileSel("tessary_surface.csv"))+`)`)
	for _, d := range p.drawn() {
		if slices.Contains(want["tessary_surface.csv"], d) {
			t.Errorf("series %q of a removed file still drawn", d)
		}
	}
	if len(p.fileNames()) != len(want)-1 {
		t.Errorf("files after remove: %q", p.fileNames())
	}

	p.click(`#hl-clear`)
	p.waitFor("an empty list", `document.querySelectorAll("article[data-file]").length === 0`)
	if eval[bool](p, `!!document.getElementById("hl-chart")`) {
		t.Error("chart still shown after clearing all files")
	}

	p.click(`#hl-demo`)
	p.waitFor("the demo again", `document.querySelectorAll("article[data-file]").length === `+strconv.Itoa(len(want)))
	p.waitFor("the demo chart", `document.querySelectorAll("#hl-chart path.hl-line").length > 0`)
}

func TestDropFiles(t *testing.T) {
	p := openPage(t)
	// a drop as the browser delivers it: a DataTransfer holding a File
	p.do(chromedp.Evaluate[chromedp.Void](`(() => {
		const dt = new DataTransfer();
		dt.items.add(new File(["year,dropped_series (W m-2)\n2000,1\n2001,2\n"], "dropped.csv", {type: "text/csv"}));
		const zone = document.getElementById("hl-drop");
		for (const type of ["dragenter", "dragover", "drop"]) {
			zone.dispatchEvent(new DragEvent(type, {dataTransfer: dt, bubbles: true, cancelable: true}));
		}
	})()`))
	p.waitFor("the dropped file", `!!document.querySelector(`+js(fileSel("dropped.csv"))+`)`)
	if got := p.seriesOf("dropped.csv"); !slices.Equal(got, []string{"dropped_series"}) {
		t.Errorf("dropped.csv lists %q", got)
	}
	if eval[bool](p, `document.body.classList.contains("hl-dragging")`) {
		t.Error("drop highlight left on after the drop")
	}
}

// TestDemoLoadTime reports the time from navigation to the demo chart,
// median of five cold loads (each in a fresh browser context, so nothing is
// cached), and the medians of the steps on the way (performance marks set
// by static/loader.js and wasm/main.go). It measures; it asserts nothing
// about the time. It runs only with HL_BENCH=1 (./build.sh bench).
func TestDemoLoadTime(t *testing.T) {
	if os.Getenv("HL_BENCH") == "" {
		t.Skip("set HL_BENCH=1 to time the demo load (./build.sh bench does)")
	}
	waitHTTP(t)
	steps := []string{"hl-wasm-ready", "hl-go-start", "hl-demo-read", "hl-chart-drawn"}
	var ready []float64
	marks := map[string][]float64{}
	for range 5 {
		p := newPage(t)
		p.do(chromedp.Navigate(serverURL + "/"))
		p.waitReady()
		v, err := strconv.ParseFloat(eval[string](p, `document.body.dataset.readyMs`), 64)
		if err != nil {
			t.Fatal(err)
		}
		ready = append(ready, v)
		m := eval[map[string]float64](p, `Object.fromEntries(performance.getEntriesByType("mark").map(m => [m.name, m.startTime]))`)
		for _, s := range steps {
			marks[s] = append(marks[s], m[s])
		}
	}
	var each []string
	for _, v := range ready {
		each = append(each, strconv.FormatFloat(v, 'f', 0, 64))
	}
	t.Logf("demo chart drawn: median %.0f ms over 5 cold loads (each: %s ms)", median(ready), strings.Join(each, " "))
	var parts []string
	for _, s := range steps {
		parts = append(parts, fmt.Sprintf("%s %.0f", strings.TrimPrefix(s, "hl-"), median(marks[s])))
	}
	t.Logf("median ms after navigation: %s", strings.Join(parts, ", "))
}

func median(v []float64) float64 {
	s := slices.Clone(v)
	sort.Float64s(s)
	if len(s) == 0 {
		return 0
	}
	if len(s)%2 == 1 {
		return s[len(s)/2]
	}
	return (s[len(s)/2-1] + s[len(s)/2]) / 2
}

// TestWorksOffline cuts the network after the page has loaded: reading
// files and loading the demo world need nothing from the server.
func TestWorksOffline(t *testing.T) {
	p := openPage(t)
	p.do(chromedp.Func(func(ctx context.Context, tg *chromedp.Target) error {
		_, err := chromedp.Call(ctx, network.EmulateNetworkConditionsByRule, network.EmulateNetworkConditionsByRuleParams{
			MatchedNetworkConditions: []*network.Conditions{{Offline: true, DownloadThroughput: -1, UploadThroughput: -1}},
		})
		return err
	}))
	p.upload(map[string]string{"offline.csv": "year,x (K)\n2000,1\n2001,2\n"})
	p.waitFor("the file read offline", `!!document.querySelector(`+js(fileSel("offline.csv"))+`)`)
	p.click(`#hl-clear`)
	p.waitFor("an empty list", `document.querySelectorAll("article[data-file]").length === 0`)
	p.click(`#hl-demo`)
	p.waitFor("the demo chart, offline", `document.querySelectorAll("#hl-chart path.hl-line").length > 0`)
}
