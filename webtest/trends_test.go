//go:build browser

package webtest

import (
	"encoding/json"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"sync"
	"testing"
	"time"

	"github.com/chromedp/cdproto/browser"
	"github.com/chromedp/chromedp"
	"github.com/chromedp/chromedp/kb"

	"heatledger"
	"heatledger/core/series"
)

// The Trends view as a user drives it: the demo's surface_anomaly is picked
// when the view opens; every number on the page comes from core/analysis,
// so these tests check that the controls reach it and that the tables, charts
// and exports follow, not the statistics themselves (core/trend's tests do).

const (
	trDemoFile = "tessary_surface.csv"
	trFirst    = "surface_anomaly" // the first demo series, picked by default
	trSecond   = "second_record"
)

// trOpen opens the page, switches to the Trends view and waits for its
// results table.
func trOpen(t *testing.T) *tab {
	t.Helper()
	p := openPage(t)
	p.click(`#hl-view-trends`)
	p.waitFor("the trend table", `document.querySelectorAll("#hl-tr-table tbody tr").length > 0`)
	return p
}

// trTable reads a table as one map (column header -> cell text) per body
// row; a column without a header is "".
func (p *tab) trTable(sel string) []map[string]string {
	p.t.Helper()
	return eval[[]map[string]string](p, `(() => {
		const t = document.querySelector(`+js(sel)+`);
		if (!t) return [];
		const h = Array.from(t.querySelectorAll("thead th"), th => th.textContent.trim());
		return Array.from(t.querySelectorAll("tbody tr"), tr => {
			const o = {};
			Array.from(tr.cells).forEach((td, i) => { o[i < h.length ? h[i] : String(i)] = td.textContent.trim(); });
			return o;
		});
	})()`)
}

// trColumn is one column of trTable's rows.
func trColumn(rows []map[string]string, col string) []string {
	var out []string
	for _, r := range rows {
		out = append(out, r[col])
	}
	return out
}

// trSet sets an input's or a select's value and fires change, as the
// browser does when a user picks an option or leaves an edited field.
func (p *tab) trSet(sel, value string) {
	p.t.Helper()
	ok := eval[bool](p, `(() => {
		const e = document.querySelector(`+js(sel)+`);
		if (!e) return false;
		e.value = `+js(value)+`;
		e.dispatchEvent(new Event("input", {bubbles: true}));
		e.dispatchEvent(new Event("change", {bubbles: true}));
		return true;
	})()`)
	if !ok {
		p.t.Fatalf("no element %s to set to %q", sel, value)
	}
}

// trType types into a text field with real key events: the field is
// focused with its text selected, the keys replace it, and Tab leaves the
// field (which fires change).
func (p *tab) trType(sel, text string) {
	p.t.Helper()
	p.do(chromedp.ScrollIntoView(chromedp.CSS(sel)))
	if !eval[bool](p, `(() => { const e = document.querySelector(`+js(sel)+`); if (!e) return false; e.focus(); e.select(); return document.activeElement === e; })()`) {
		p.t.Fatalf("cannot focus %s", sel)
	}
	// Backspace deletes the selected text (so "" clears the field)
	p.do(chromedp.KeyEvent(kb.Backspace + text + kb.Tab))
}

// trValue is an input's or a select's current value.
func (p *tab) trValue(sel string) string {
	p.t.Helper()
	return eval[string](p, `(document.querySelector(`+js(sel)+`) || {value: "<missing>"}).value`)
}

// trText is an element's text, "" when it is not there.
func (p *tab) trText(sel string) string {
	p.t.Helper()
	return eval[string](p, `((document.querySelector(`+js(sel)+`) || {}).textContent || "").trim()`)
}

// trWaitWindow waits until every row of the trend table shows the window
// from-to.
func (p *tab) trWaitWindow(from, to string) {
	p.t.Helper()
	p.waitFor("the window "+from+" to "+to+" in the trend table", `(() => {
		const t = document.getElementById("hl-tr-table");
		if (!t) return false;
		const h = Array.from(t.querySelectorAll("thead th"), th => th.textContent.trim());
		const f = h.indexOf("from"), e = h.indexOf("to");
		const rows = Array.from(t.querySelectorAll("tbody tr"));
		return f >= 0 && e >= 0 && rows.length > 0 && rows.every(r => r.cells[f].textContent === `+js(from)+` && r.cells[e].textContent === `+js(to)+`);
	})()`)
}

// trNoBanner fails when the page caught a panic (shown in the banner).
func (p *tab) trNoBanner() {
	p.t.Helper()
	if b := p.banner(); b != "" {
		p.t.Errorf("error banner shown: %q", b)
	}
}

// trNum reads a number as the tables print it ("-" is NaN).
func trNum(t *testing.T, what, s string) float64 {
	t.Helper()
	v, err := strconv.ParseFloat(strings.TrimPrefix(s, "< "), 64)
	if err != nil {
		t.Fatalf("%s: %q is not a number", what, s)
	}
	return v
}

// trSpan is the first and last step of a demo series, as labels (YYYY-MM),
// read natively from the embedded demo file.
func trSpan(t *testing.T, name string) (first, last string, lastYear, lastMonth int) {
	t.Helper()
	for _, f := range heatledger.DemoFiles() {
		if f.Name != trDemoFile {
			continue
		}
		res, err := series.Read(f.Name, f.Data, series.Options{})
		if err != nil {
			t.Fatal(err)
		}
		for _, s := range res.Series {
			if s.Name == name {
				if s.Resolution != series.Monthly {
					t.Fatalf("demo series %s is not monthly", name)
				}
				y, m := series.YearMonth(s.Last())
				return series.StepLabel(s.Resolution, s.First), series.StepLabel(s.Resolution, s.Last()), y, m
			}
		}
	}
	t.Fatalf("demo series %s not found in %s", name, trDemoFile)
	return
}

func TestTrendsOpensWithDemo(t *testing.T) {
	p := trOpen(t)
	// the chart draws the picked series, its trend line and the band
	lines := eval[[]string](p, `Array.from(document.querySelectorAll("#hl-tr-chart path.hl-line"), e => e.getAttribute("data-series"))`)
	var data, fit bool
	for _, l := range lines {
		data = data || strings.HasPrefix(l, trFirst+" (")
		fit = fit || strings.HasPrefix(l, trFirst+" trend ")
	}
	if !data || !fit {
		t.Errorf("trend chart lines %q lack the data or the trend line of %s", lines, trFirst)
	}
	if n := eval[int](p, `document.querySelectorAll("#hl-tr-chart path.hl-band").length`); n != 1 {
		t.Errorf("%d trend bands drawn, want 1", n)
	}
	rows := p.trTable("#hl-tr-table")
	if got := trColumn(rows, "series"); !slices.Equal(got, []string{trFirst}) {
		t.Fatalf("trend table series %q, want [%s]", got, trFirst)
	}
	// empty window fields = the whole record
	first, last, _, _ := trSpan(t, trFirst)
	r := rows[0]
	if r["from"] != first || r["to"] != last {
		t.Errorf("window %s to %s, want the whole record %s to %s", r["from"], r["to"], first, last)
	}
	if r["noise"] != p.trValue("#hl-tr-noise") {
		t.Errorf("table noise %q, select shows %q", r["noise"], p.trValue("#hl-tr-noise"))
	}
	slope := trNum(t, "slope", r["trend per decade"])
	lo, hi := trNum(t, "low", r["95% low"]), trNum(t, "high", r["95% high"])
	if !(lo <= slope && slope <= hi) {
		t.Errorf("interval %g to %g does not hold the slope %g", lo, hi, slope)
	}
	if n, err := strconv.Atoi(r["n"]); err != nil || n < 100 {
		t.Errorf("n = %q", r["n"])
	}
	p.trNoBanner()
}

func TestTrendsSecondSeries(t *testing.T) {
	p := trOpen(t)
	p.click(`#hl-trends input[data-ref=` + js(trDemoFile+":"+trSecond) + `]`)
	p.waitFor("two rows", `document.querySelectorAll("#hl-tr-table tbody tr").length === 2`)
	if got := trColumn(p.trTable("#hl-tr-table"), "series"); !slices.Equal(got, []string{trFirst, trSecond}) {
		t.Errorf("trend table series %q, want [%s %s]", got, trFirst, trSecond)
	}
	if n := eval[int](p, `document.querySelectorAll("#hl-tr-chart path.hl-band").length`); n != 2 {
		t.Errorf("%d bands for two series, want 2", n)
	}
	lines := eval[[]string](p, `Array.from(document.querySelectorAll("#hl-tr-chart path.hl-line"), e => e.getAttribute("data-series"))`)
	for _, name := range []string{trFirst, trSecond} {
		if !slices.ContainsFunc(lines, func(l string) bool { return strings.HasPrefix(l, name+" trend ") }) {
			t.Errorf("no trend line for %s among %q", name, lines)
		}
	}
	// untick the first: one row again, the second series
	p.click(`#hl-trends input[data-ref=` + js(trDemoFile+":"+trFirst) + `]`)
	p.waitFor("one row", `document.querySelectorAll("#hl-tr-table tbody tr").length === 1`)
	if got := trColumn(p.trTable("#hl-tr-table"), "series"); !slices.Equal(got, []string{trSecond}) {
		t.Errorf("after unticking %s the table shows %q", trFirst, got)
	}
	p.trNoBanner()
}

func TestTrendsWindowAndNoise(t *testing.T) {
	p := trOpen(t)
	p.trType("#hl-tr-from", "1979")
	p.trType("#hl-tr-to", "2024")
	p.trWaitWindow("1979-01", "2024-12")
	if f, to := p.trValue("#hl-tr-from"), p.trValue("#hl-tr-to"); f != "1979" || to != "2024" {
		t.Errorf("window fields show %q, %q after typing", f, to)
	}
	if n := trColumn(p.trTable("#hl-tr-table"), "n"); !slices.Equal(n, []string{"552"}) { // 46 years of months
		t.Errorf("n = %q for 1979-01 to 2024-12, want 552", n)
	}
	// the chart's title names the window
	if title := p.trText("#hl-tr-chart .hl-title"); !strings.Contains(title, "1979-01") || !strings.Contains(title, "2024-12") {
		t.Errorf("chart title %q does not name the window", title)
	}

	options := eval[[]string](p, `Array.from(document.querySelectorAll("#hl-tr-noise option"), o => o.value)`)
	want := []string{"white", "ar1", "arma11", "arma11-ml"}
	if !slices.Equal(options, want) {
		t.Fatalf("noise models offered: %q, want %q", options, want)
	}
	// go through them so that each is a change (the default is not first)
	ses := map[string]string{}
	for _, m := range []string{"white", "arma11-ml", "arma11", "ar1"} {
		p.trSet("#hl-tr-noise", m)
		p.waitFor("noise "+m+" in the table", `(() => {
			const t = document.getElementById("hl-tr-table");
			if (!t) return false;
			const h = Array.from(t.querySelectorAll("thead th"), th => th.textContent.trim());
			const r = t.querySelector("tbody tr");
			return !!r && r.cells[h.indexOf("noise")].textContent === `+js(m)+`;
		})()`)
		r := p.trTable("#hl-tr-table")[0]
		if r["from"] != "1979-01" || r["to"] != "2024-12" {
			t.Errorf("noise %s: the window became %s to %s", m, r["from"], r["to"])
		}
		ses[m] = r["standard error"]
		if title := p.trText("#hl-tr-chart .hl-title"); !strings.Contains(title, "noise") {
			t.Errorf("noise %s: chart title %q does not name the noise", m, title)
		}
	}
	// the models give different uncertainties: the rows are not stale
	if ses["white"] == ses["ar1"] || ses["ar1"] == ses["arma11-ml"] {
		t.Errorf("standard errors by noise model %v: expected white, ar1 and arma11-ml to differ", ses)
	}
	p.trNoBanner()
}

func TestTrendsPresets(t *testing.T) {
	p := trOpen(t)
	first, last, lastY, lastM := trSpan(t, trFirst)
	endY := lastY // last whole year
	if lastM != 12 {
		endY--
	}
	for _, c := range []struct {
		button string
		years  int
	}{{"#hl-tr-last30", 30}, {"#hl-tr-last15", 15}} {
		p.click(c.button)
		from, to := endY-c.years+1, endY
		p.trWaitWindow(fmt.Sprintf("%d-01", from), fmt.Sprintf("%d-12", to))
		if f, e := p.trValue("#hl-tr-from"), p.trValue("#hl-tr-to"); f != strconv.Itoa(from) || e != strconv.Itoa(to) {
			t.Errorf("%s: fields show %q to %q, want %d to %d", c.button, f, e, from, to)
		}
		if n := trColumn(p.trTable("#hl-tr-table"), "n"); !slices.Equal(n, []string{strconv.Itoa(12 * c.years)}) {
			t.Errorf("%s: n = %q, want %d", c.button, n, 12*c.years)
		}
	}
	p.click("#hl-tr-all")
	p.trWaitWindow(first, last)
	if f, e := p.trValue("#hl-tr-from"), p.trValue("#hl-tr-to"); f != "" || e != "" {
		t.Errorf("whole record: fields show %q to %q, want empty", f, e)
	}
	p.trNoBanner()
}

// trDownloads records the downloads of one tab's browser context, which
// saves them in a fresh directory under their download ids.
type trDownloads struct {
	dir  string
	mu   sync.Mutex
	name map[string]string // guid -> suggested file name
	path map[string]string // guid -> saved file, once complete
	bad  []string          // cancelled downloads
}

func (p *tab) trAllowDownloads() *trDownloads {
	p.t.Helper()
	d := &trDownloads{dir: p.t.TempDir(), name: map[string]string{}, path: map[string]string{}}
	if err := chromedp.ListenBrowser(p.ctx, func(ev any) {
		d.mu.Lock()
		defer d.mu.Unlock()
		switch e := ev.(type) {
		case *browser.EventDownloadWillBegin:
			d.name[e.GUID] = e.SuggestedFilename
		case *browser.EventDownloadProgress:
			switch e.State {
			case browser.DownloadProgressStateCompleted:
				path := e.FilePath
				if path == "" {
					path = filepath.Join(d.dir, e.GUID)
				}
				d.path[e.GUID] = path
			case browser.DownloadProgressStateCanceled:
				d.bad = append(d.bad, e.GUID)
			}
		}
	}); err != nil {
		p.t.Fatalf("listening for downloads: %v", err)
	}
	events := true
	if _, err := chromedp.CallBrowser(p.ctx, browser.SetDownloadBehavior, browser.SetDownloadBehaviorParams{
		Behavior:         browser.SetDownloadBehaviorBehaviorAllowAndName,
		BrowserContextID: chromedp.FromContext(p.ctx).BrowserContextID,
		DownloadPath:     d.dir,
		EventsEnabled:    &events,
	}); err != nil {
		p.t.Fatalf("allowing downloads: %v", err)
	}
	return d
}

// trWaitDownload waits (bounded) for a completed download of the file name
// and returns its bytes.
func (p *tab) trWaitDownload(d *trDownloads, name string) []byte {
	p.t.Helper()
	deadline := time.Now().Add(30 * time.Second)
	for {
		d.mu.Lock()
		var path string
		var names []string
		for guid, n := range d.name {
			names = append(names, n)
			if n == name && d.path[guid] != "" {
				path = d.path[guid]
			}
		}
		bad := len(d.bad)
		d.mu.Unlock()
		if path != "" {
			b, err := os.ReadFile(path)
			if err != nil {
				p.t.Fatalf("download %s: %v", name, err)
			}
			return b
		}
		if bad > 0 {
			p.t.Fatalf("a download was cancelled while waiting for %s", name)
		}
		if time.Now().After(deadline) || p.ctx.Err() != nil {
			p.t.Fatalf("no completed download named %s; downloads begun: %q", name, names)
		}
		time.Sleep(50 * time.Millisecond)
	}
}

func TestTrendsCopyAndDownload(t *testing.T) {
	p := trOpen(t)
	d := p.trAllowDownloads()

	p.click("#hl-tr-copy")
	p.waitFor("the copied table", `!!document.body.dataset.copied`)
	copied := eval[string](p, `document.body.dataset.copied`)
	lines := strings.Split(strings.TrimRight(copied, "\n"), "\n")
	head := eval[[]string](p, `Array.from(document.querySelectorAll("#hl-tr-table thead th"), th => th.textContent)`)
	cells := eval[[]string](p, `Array.from(document.querySelectorAll("#hl-tr-table tbody tr:first-child td"), td => td.textContent)`)
	if len(lines) != 2 {
		t.Fatalf("copied %d lines, want a header and one row:\n%s", len(lines), copied)
	}
	if got := strings.Split(lines[0], "\t"); !slices.Equal(got, head) {
		t.Errorf("copied header %q, the table's is %q", got, head)
	}
	if got := strings.Split(lines[1], "\t"); !slices.Equal(got, cells) {
		t.Errorf("copied row %q, the table's is %q", got, cells)
	}
	p.waitFor("the copy note", `(document.getElementById("hl-tr-note") || {}).textContent.includes("copied")`)

	stem := "trend-" + trFirst
	p.click("#hl-tr-csv")
	csv := string(p.trWaitDownload(d, stem+".csv"))
	csvLines := strings.Split(strings.TrimRight(csv, "\r\n"), "\n")
	if len(csvLines) != 2 || strings.TrimRight(csvLines[0], "\r") != strings.Join(head, ",") || !strings.HasPrefix(csvLines[1], trFirst+",") {
		t.Errorf("%s.csv is not the table as CSV:\n%s", stem, csv)
	}

	p.click("#hl-tr-json")
	var results []map[string]any
	if err := json.Unmarshal(p.trWaitDownload(d, stem+".json"), &results); err != nil {
		t.Fatalf("%s.json: %v", stem, err)
	}
	if len(results) != 1 || results[0]["series"] != trFirst || results[0]["noise"] != p.trValue("#hl-tr-noise") {
		t.Errorf("%s.json holds %v", stem, results)
	}
	if _, ok := results[0]["slope_per_decade"].(float64); !ok {
		t.Errorf("%s.json has no slope_per_decade: %v", stem, results[0])
	}

	p.click("#hl-tr-svg")
	svg := string(p.trWaitDownload(d, stem+".svg"))
	if !strings.HasPrefix(strings.TrimSpace(svg), "<svg") || !strings.Contains(svg, `class="hl-band"`) || !strings.Contains(svg, trFirst) {
		t.Errorf("%s.svg is not the trend chart (%d bytes): %.200s", stem, len(svg), svg)
	}
	p.waitFor("the save note", `(document.getElementById("hl-tr-note") || {}).textContent.includes(`+js(stem+".svg")+`)`)
	p.trNoBanner()
}

func TestTrendsCompare(t *testing.T) {
	p := trOpen(t)
	p.trType("#hl-cmp-a1", "1960")
	p.trType("#hl-cmp-a2", "1989")
	p.trType("#hl-cmp-b1", "1990")
	p.trType("#hl-cmp-b2", "2019")
	p.click("#hl-cmp-run")
	p.waitFor("the comparison table", `document.querySelectorAll("#hl-cmp-table tbody tr").length > 0`)
	rows := p.trTable("#hl-cmp-table")
	labels := trColumn(rows, "")
	if len(rows) != 4 || labels[0] != "window A" || labels[1] != "window B" || !strings.HasPrefix(labels[2], "difference") || !strings.HasPrefix(labels[3], "broken stick") {
		t.Fatalf("comparison rows %q, want window A, window B, difference, broken stick", labels)
	}
	if rows[0]["from"] != "1960-01" || rows[0]["to"] != "1989-12" || rows[1]["from"] != "1990-01" || rows[1]["to"] != "2019-12" {
		t.Errorf("windows %s-%s and %s-%s, want 1960-01 to 1989-12 and 1990-01 to 2019-12", rows[0]["from"], rows[0]["to"], rows[1]["from"], rows[1]["to"])
	}
	a := trNum(t, "A", rows[0]["trend per decade"])
	b := trNum(t, "B", rows[1]["trend per decade"])
	diff := trNum(t, "difference", rows[2]["trend per decade"])
	if math.Abs(diff-(b-a)) > 1e-3*math.Max(1, math.Abs(diff)) {
		t.Errorf("difference %g is not B - A = %g - %g", diff, b, a)
	}
	// the broken stick breaks at the boundary between the windows
	if !strings.Contains(labels[3], "1990") && !strings.Contains(labels[3], "1989") {
		t.Errorf("broken stick row %q does not break near 1990", labels[3])
	}
	for i, r := range rows {
		if r["standard error"] == "" || r["standard error"] == "-" {
			t.Errorf("row %q has no standard error", labels[i])
		}
	}
	if n := eval[int](p, `document.querySelectorAll("#hl-cmp-chart path.hl-line").length`); n < 4 {
		t.Errorf("comparison chart has %d lines, want data, two window trends and the broken stick", n)
	}
	p.trNoBanner()
}

func TestTrendsGridClick(t *testing.T) {
	p := trOpen(t)
	p.click("#hl-grid-run")
	p.waitFor("the heatmap", `document.querySelectorAll("#hl-grid-chart rect.hl-cell[data-key]").length > 0`)
	summary := p.trText("#hl-grid-summary")
	n := eval[int](p, `document.querySelectorAll("#hl-grid-chart rect.hl-cell[data-key]").length`)
	if !strings.HasPrefix(summary, strconv.Itoa(n)+" windows") {
		t.Errorf("summary %q does not count the %d cells drawn", summary, n)
	}
	// a cell in the middle of the grid, clicked with the mouse
	key := eval[string](p, `(() => { const c = document.querySelectorAll("#hl-grid-chart rect.hl-cell[data-key]"); return c[Math.floor(c.length / 2)].getAttribute("data-key"); })()`)
	parts := strings.Split(key, "|")
	if len(parts) != 2 {
		t.Fatalf("cell key %q is not FROM|TO", key)
	}
	title := eval[string](p, `document.querySelector(`+js(`#hl-grid-chart rect.hl-cell[data-key="`+key+`"] title`)+`).textContent`)
	if !strings.HasPrefix(title, parts[0]+" to "+parts[1]+":") {
		t.Errorf("cell %s hover text %q", key, title)
	}
	p.click(`#hl-grid-chart rect.hl-cell[data-key="` + key + `"]`)
	p.waitFor("the window from the cell", `document.getElementById("hl-tr-from").value === `+js(parts[0])+` && document.getElementById("hl-tr-to").value === `+js(parts[1]))
	p.trWaitWindow(parts[0], parts[1])
	if note := p.trText("#hl-tr-note"); !strings.Contains(note, parts[0]) {
		t.Errorf("note %q after the grid click", note)
	}
	// the cell's slope (in its hover text) is the trend table's, under the
	// grid's noise model
	p.trSet("#hl-tr-noise", p.trValue("#hl-grid-noise"))
	p.waitFor("the grid's noise model", `document.querySelector("#hl-tr-table tbody td:nth-child(6)").textContent === `+js(p.trValue("#hl-grid-noise")))
	cellSlope := strings.Fields(strings.TrimPrefix(title, parts[0]+" to "+parts[1]+":"))[0]
	if got := p.trTable("#hl-tr-table")[0]["trend per decade"]; got != cellSlope {
		t.Errorf("table slope %s for %s, the cell says %s", got, key, cellSlope)
	}
	p.trNoBanner()
}

func TestTrendsBreaksProgressCancel(t *testing.T) {
	p := trOpen(t)
	p.trSet("#hl-brk-sims", "2000")
	p.do(chromedp.Click(chromedp.CSS("#hl-brk-run"))) // a real mouse click
	p.waitFor("the progress bar", `(() => { const e = document.getElementById("hl-brk-progress"); return !!e && e.value > 0; })()`)
	if !eval[bool](p, `!!document.getElementById("hl-brk-busy") && document.getElementById("hl-brk-run").disabled`) {
		t.Error("while searching, the busy row is missing or Search is not disabled")
	}
	v1 := eval[float64](p, `document.getElementById("hl-brk-progress").value`)
	// the page draws again while the work goes on: the bar moves
	p.waitFor("the progress bar to move", `(() => { const e = document.getElementById("hl-brk-progress"); return !!e && e.value > `+strconv.FormatFloat(v1, 'f', -1, 64)+`; })()`)
	// the words count what the bar counts
	if txt, max := p.trText("#hl-brk-busy"), eval[float64](p, `document.getElementById("hl-brk-progress").max`); !strings.Contains(txt, " of "+strconv.FormatFloat(max, 'f', -1, 64)+" ") {
		t.Errorf("busy row says %q, the bar's total is %g", txt, max)
	}
	p.do(chromedp.Click(chromedp.CSS("#hl-brk-cancel")))
	p.waitFor("the search to stop", `!document.getElementById("hl-brk-busy")`)
	if msg := p.trText("#hl-brk-error"); !strings.Contains(msg, "cancelled") {
		t.Errorf("after Cancel the panel says %q", msg)
	}
	if eval[bool](p, `!!document.getElementById("hl-brk-table")`) {
		t.Error("a cancelled search shows results")
	}

	// again, small enough to finish
	p.trSet("#hl-brk-sims", "99")
	p.do(chromedp.Click(chromedp.CSS("#hl-brk-run")))
	p.waitFor("the change-point results", `!!document.getElementById("hl-brk-table") && !document.getElementById("hl-brk-busy")`)
	if msg := p.trText("#hl-brk-error"); msg != "" {
		t.Errorf("error after a finished search: %q", msg)
	}
	if n := eval[int](p, `document.querySelectorAll('#hl-brk-chart path.hl-line[data-series="fitted segments"]').length`); n != 1 {
		t.Errorf("%d fitted-segment lines in the change-point chart, want 1", n)
	}
	// the number of segments is one more than the breaks selected
	var selected = -1
	for _, r := range p.trTable("#hl-brk-table ~ table:last-of-type") {
		if r["selected"] == "yes" {
			selected, _ = strconv.Atoi(r["breaks"])
		}
	}
	if selected < 0 {
		t.Fatal("no row of the change-point table is marked selected")
	}
	segs := p.trTable("#hl-brk-table")
	if len(segs) != selected+1 {
		t.Fatalf("%d segments for %d selected breaks", len(segs), selected)
	}
	// the segments run from the first to the last step of the data (decimal
	// years at mid-month), and each inner boundary is a break time
	_, _, lastY, lastM := trSpan(t, trFirst)
	end := float64(lastY) + (float64(lastM)-0.5)/12
	if got := trNum(t, "last segment end", segs[len(segs)-1]["to"]); math.Abs(got-end) > 0.01 {
		t.Errorf("last segment ends at %s, the data at %.3f", segs[len(segs)-1]["to"], end)
	}
	breaks := p.trTable("#hl-brk-table + table")
	if selected > 0 && len(breaks) != selected {
		t.Errorf("%d break rows for %d selected breaks", len(breaks), selected)
	}
	for i := 0; i < selected && i < len(breaks); i++ {
		if segs[i]["to"] != breaks[i]["time"] || segs[i+1]["from"] != breaks[i]["time"] {
			t.Errorf("break %d at %s, but segments meet at %s / %s", i+1, breaks[i]["time"], segs[i]["to"], segs[i+1]["from"])
		}
		lo, tm, hi := trNum(t, "low", breaks[i]["interval low"]), trNum(t, "time", breaks[i]["time"]), trNum(t, "high", breaks[i]["interval high"])
		if !(lo <= tm && tm <= hi) {
			t.Errorf("break %d at %g outside its interval %g to %g", i+1, tm, lo, hi)
		}
	}
	if !eval[bool](p, `!document.getElementById("hl-brk-run").disabled`) {
		t.Error("Search still disabled after the search ended")
	}
	p.trNoBanner()
}

func TestTrendsSen(t *testing.T) {
	p := trOpen(t)
	p.click("#hl-sen-run")
	p.waitFor("the Sen table", `document.querySelectorAll("#hl-sen-table tbody tr").length === 1`)
	r := p.trTable("#hl-sen-table")[0]
	slope := trNum(t, "Sen slope", r["Sen slope per decade"])
	lo, hi := trNum(t, "low", r["95% low"]), trNum(t, "high", r["95% high"])
	if !(lo <= slope && slope <= hi) {
		t.Errorf("Sen interval %g to %g does not hold %g", lo, hi, slope)
	}
	// the same window's least-squares slope is close (both over the whole record)
	ols := trNum(t, "OLS slope", p.trTable("#hl-tr-table")[0]["trend per decade"])
	if math.Signbit(ols) != math.Signbit(slope) {
		t.Errorf("Sen slope %g and least-squares slope %g differ in sign", slope, ols)
	}
	if r["correction"] != "none" {
		t.Errorf("correction %q, want none", r["correction"])
	}
	p.trNoBanner()
}

func TestTrendsWindowErrors(t *testing.T) {
	p := trOpen(t)
	p.trType("#hl-tr-from", "2100")
	p.waitFor("the window error", `!!document.getElementById("hl-tr-error")`)
	msg := p.trText("#hl-tr-error")
	if !strings.Contains(msg, trFirst) {
		t.Errorf("error %q does not name the series", msg)
	}
	if eval[bool](p, `!!document.getElementById("hl-tr-table") || !!document.getElementById("hl-tr-chart")`) {
		t.Error("table or chart still shown for an empty window")
	}

	p.trType("#hl-tr-from", "19x9")
	p.waitFor("the parse error", `(document.getElementById("hl-tr-error") || {}).textContent.includes("19x9")`)

	// clearing the field brings the results back
	p.trType("#hl-tr-from", "")
	p.waitFor("the table again", `document.querySelectorAll("#hl-tr-table tbody tr").length === 1 && !document.getElementById("hl-tr-error")`)
	p.trNoBanner()
}

// TestTrendsLook saves full-page screenshots of the Trends view with every
// panel filled, for a person to look at. It runs only with
// HL_SHOTS=DIRECTORY.
func TestTrendsLook(t *testing.T) {
	dir := os.Getenv("HL_SHOTS")
	if dir == "" {
		t.Skip("set HL_SHOTS to a directory to save screenshots of the Trends view")
	}
	p := trOpen(t)
	p.click(`#hl-trends input[data-ref=` + js(trDemoFile+":"+trSecond) + `]`)
	p.waitFor("two rows", `document.querySelectorAll("#hl-tr-table tbody tr").length === 2`)
	p.click("#hl-cmp-run")
	p.waitFor("the comparison", `!!document.getElementById("hl-cmp-table")`)
	p.click("#hl-grid-run")
	p.waitFor("the grid", `!!document.getElementById("hl-grid-chart")`)
	p.trSet("#hl-brk-sims", "99")
	p.click("#hl-brk-run")
	p.waitFor("the change points", `!!document.getElementById("hl-brk-table")`)
	p.click("#hl-sen-run")
	p.waitFor("the Sen table", `!!document.getElementById("hl-sen-table")`)
	shot := func(name string) {
		b, err := chromedp.Run(p.ctx, chromedp.FullScreenshot(100))
		if err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(filepath.Join(dir, name), b, 0o644); err != nil {
			t.Fatal(err)
		}
	}
	shot("trends-full.png")
	// each panel at full size
	for i := 1; i <= eval[int](p, `document.querySelectorAll("#hl-trends > section").length`); i++ {
		b, err := chromedp.Run(p.ctx, chromedp.Screenshot(chromedp.CSS(fmt.Sprintf("#hl-trends > section:nth-of-type(%d)", i))))
		if err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(filepath.Join(dir, fmt.Sprintf("trends-panel-%d.png", i)), b, 0o644); err != nil {
			t.Fatal(err)
		}
	}
	p.trSet("#hl-brk-sims", "5000")
	p.click("#hl-brk-run")
	p.waitFor("the progress bar", `(() => { const e = document.getElementById("hl-brk-progress"); return !!e && e.value > 0; })()`)
	shot("trends-busy.png")
	p.click("#hl-brk-cancel")
	p.waitFor("the search to stop", `!document.getElementById("hl-brk-busy")`)
	p.trType("#hl-tr-from", "2100")
	p.waitFor("the window error", `!!document.getElementById("hl-tr-error")`)
	shot("trends-error.png")
}
