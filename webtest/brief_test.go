//go:build browser

package webtest

import (
	"archive/zip"
	"bytes"
	"context"
	"io"
	"os"
	"os/exec"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"testing"

	"github.com/chromedp/cdproto/emulation"
	"github.com/chromedp/chromedp"

	"heatledger/core/analysis"
)

// brDemoRecord is a small table of our own, loaded beside the demo so the
// session also covers an uploaded file.
const brDemoRecord = "year,station_mean (K)\n1990,0.11\n1991,0.18\n1992,0.02\n1993,0.09\n1994,0.21\n1995,0.30\n1996,0.17\n1997,0.33\n1998,0.51\n1999,0.29\n2000,0.27\n2001,0.41\n2002,0.46\n2003,0.44\n2004,0.39\n2005,0.52\n"

// brItems is the number of items the brief lists.
func (p *tab) brItems() int {
	p.t.Helper()
	return eval[int](p, `document.querySelectorAll("#hl-brief-list li").length`)
}

// brOpenBrief switches to the Brief view and waits for its text (or for
// the empty note when want is 0).
func (p *tab) brOpenBrief(want int) {
	p.t.Helper()
	p.click("#hl-view-brief")
	if want == 0 {
		p.waitFor("the empty brief", `!!document.getElementById("hl-brief-empty")`)
		return
	}
	p.waitFor("the brief's text", `document.querySelectorAll("#hl-brief-list li").length === `+strconv.Itoa(want)+` && !!document.querySelector("#hl-brief-text #brief-methods")`)
}

// TestBriefWholeSession drives a whole session: load a file, analyse in
// three views, add their figures and tables to the brief, export it as
// HTML and Markdown, save the analysis file; then checks the CLI
// reproduces the brief from the saved file to the last printed digit,
// that a reload brings everything back (autosave), that the saved file
// opens again, and that "start fresh" clears it. Every request of the
// session stays on the page's own origin (checkClean).
func TestBriefWholeSession(t *testing.T) {
	p := openPage(t)
	d := p.trAllowDownloads()
	p.upload(map[string]string{"station.csv": brDemoRecord})
	p.waitFor("the uploaded file", `!!document.querySelector(`+js(fileSel("station.csv"))+`)`)

	// Trends: the demo's surface record with ARMA(1,1) noise
	p.click("#hl-view-trends")
	p.waitFor("the trend table", `document.querySelectorAll("#hl-tr-table tbody tr").length > 0`)
	p.trSet("#hl-tr-noise", "arma11")
	p.waitFor("the ARMA(1,1) trend", `document.querySelector("#hl-tr-table tbody tr") && document.querySelector("#hl-tr-table").textContent.includes("arma11")`)
	// drawn with a 12-month running mean: the brief's figure shows it too
	p.trSet("#hl-tr-smooth", "running")
	p.waitFor("the running mean", `document.getElementById("hl-tr-chart").innerHTML.includes("running mean")`)
	p.click("#hl-tr-brief")
	p.waitFor("the added note", `(document.getElementById("hl-tr-note") || {}).textContent.includes("Added to the brief")`)

	// Drivers: the demo fit
	p.click("#hl-view-drivers")
	p.waitFor("the drivers fit", `!!document.getElementById("hl-dr-brief")`)
	p.click("#hl-dr-brief")
	p.waitFor("the drivers note", `(document.getElementById("hl-dr-note") || {}).textContent.includes("Added to the brief")`)

	// Budget: the heating rate
	p.click("#hl-view-budget")
	p.waitFor("the heating rate", `!!document.getElementById("hl-bu-heat-brief")`)
	p.click("#hl-bu-heat-brief")
	// and the energy-budget Monte Carlo
	p.click("#hl-bu-run")
	p.waitFor("the Monte Carlo", `!!document.getElementById("hl-bu-brief")`)
	p.click("#hl-bu-brief")

	// Brief: 1 + 2 + 2 + 2 items, with methods, results, caveats, references
	p.brOpenBrief(7)
	methods := eval[string](p, `document.getElementById("hl-brief-text").textContent`)
	for _, want := range []string{"Foster and Rahmstorf 2011", "Methods", "Results", "Caveats", "References", "not a proof of cause", "W m-2", "lags found", "Otto et al. 2013", "Monte Carlo draws (seed"} {
		if !strings.Contains(methods, want) {
			t.Errorf("the brief's text lacks %q", want)
		}
	}
	if !eval[bool](p, `document.querySelector("#hl-brief-text figure svg").innerHTML.includes("running mean")`) {
		t.Error("the brief's trend figure lost the running mean drawn in the Trends view")
	}
	if n := eval[int](p, `document.querySelectorAll("#hl-brief-text figure svg").length`); n != 4 {
		t.Errorf("the brief shows %d figures, want 4 (trend, adjusted series, heating rate, ECS)", n)
	}
	// each figure has its numbers as a table (its text alternative)
	if n := eval[int](p, `document.querySelectorAll("#hl-brief-text figure details table").length`); n != 4 {
		t.Errorf("%d figures carry a table of their numbers, want 4", n)
	}
	p.trSet("#hl-brief-title", "Tessary <b>briefing</b>")
	p.waitFor("the new title", `document.querySelector("#hl-brief-text h1").textContent === "Tessary <b>briefing</b>"`)
	if n := eval[int](p, `document.querySelectorAll("#hl-brief-text h1 b").length`); n != 0 {
		t.Error("the title became markup")
	}

	// the print stylesheet keeps the brief and drops the page's controls
	p.brMedia("print")
	shown := eval[map[string]string](p, `(() => { const d = s => { const e = document.querySelector(s); return e ? getComputedStyle(e).display : "absent"; };
		return {header: d(".hl-top"), tools: d(".hl-brief-tools"), exports: d("#hl-brief-html"), list: d("#hl-brief-list"), text: d("#hl-brief-text"), figure: d("#hl-brief-text figure")}; })()`)
	for _, k := range []string{"header", "tools", "exports", "list"} {
		if shown[k] != "none" {
			t.Errorf("printing shows the %s (display %q)", k, shown[k])
		}
	}
	if shown["text"] == "none" || shown["figure"] == "none" {
		t.Errorf("printing hides the brief: %v", shown)
	}
	p.brMedia("")

	// exports
	p.click("#hl-brief-html")
	html := string(p.trWaitDownload(d, "tessary-b-briefing-b.html"))
	for _, want := range []string{"<!DOCTYPE html>", "<svg", "@media print", "Tessary &lt;b&gt;briefing&lt;/b&gt;", "<table>"} {
		if !strings.Contains(html, want) {
			t.Errorf("the HTML export lacks %q", want)
		}
	}
	if strings.Contains(html, "<script") || strings.Contains(html, "src=\"http") {
		t.Error("the HTML export is not self-contained (a script or a remote source)")
	}
	p.click("#hl-brief-md")
	zipped := p.trWaitDownload(d, "tessary-b-briefing-b-markdown.zip")
	md, figs := brUnzip(t, zipped)
	if len(figs) != 4 {
		t.Errorf("the Markdown zip holds %d SVG files, want 4", len(figs))
	}
	for name := range figs {
		if !strings.Contains(md, "]("+name+")") {
			t.Errorf("brief.md does not link %s", name)
		}
	}
	before := eval[string](p, `document.body.dataset.saved || ""`)
	p.click("#hl-save")
	saved := p.trWaitDownload(d, "tessary-b-briefing-b"+analysis.AnalysisExt)
	f, err := analysis.ParseAnalysisFile(saved)
	if err != nil {
		t.Fatalf("the saved analysis file does not parse: %v", err)
	}
	if f.Brief == nil || len(f.Brief.Items) != 7 || len(f.Files) != 4 {
		t.Fatalf("the saved file holds %d files and brief %+v", len(f.Files), f.Brief)
	}
	for _, v := range []string{"trends", "drivers", "budget"} {
		if len(f.Page[v]) == 0 {
			t.Errorf("the saved file has no settings of the %s view", v)
		}
	}
	if f.Page["trends"]["noise"] != "arma11" {
		t.Errorf("saved trends noise %q, want arma11", f.Page["trends"]["noise"])
	}

	// the command-line tool writes the same brief from the saved file
	dir := t.TempDir()
	file := filepath.Join(dir, "saved"+analysis.AnalysisExt)
	if err := os.WriteFile(file, saved, 0o644); err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(dir, "out")
	cmd := exec.Command("go", "run", "../cmd/heatledger", "run", "--out", out, file)
	if b, err := cmd.CombinedOutput(); err != nil {
		t.Fatalf("heatledger run: %v\n%s", err, b)
	}
	cli, err := os.ReadFile(filepath.Join(out, "brief.md"))
	if err != nil {
		t.Fatal(err)
	}
	if string(cli) != md {
		at := 0
		for at < len(cli) && at < len(md) && cli[at] == md[at] {
			at++
		}
		t.Errorf("the page's brief.md differs from heatledger run's (from byte %d):\npage: …%.160s\ncli:  …%.160s", at, md[max(0, at-40):], cli[max(0, at-40):])
	}
	for name := range figs {
		if _, err := os.Stat(filepath.Join(out, name)); err != nil {
			t.Errorf("heatledger run wrote no %s", name)
		}
	}

	// autosave: a reload brings the files, the settings and the brief back
	// the Save click changed the workspace's version: wait for the
	// autosave after it, which holds everything done before
	p.waitFor("the autosave", `(document.body.dataset.saved || "") !== `+js(before))
	p.do(chromedp.Reload())
	p.waitReady()
	if !slices.Contains(p.fileNames(), "station.csv") {
		t.Errorf("after a reload the files are %v, want station.csv among them", p.fileNames())
	}
	p.brOpenBrief(7)
	if got := eval[string](p, `document.querySelector("#hl-brief-text h1").textContent`); got != "Tessary <b>briefing</b>" {
		t.Errorf("after a reload the title is %q", got)
	}
	// the Monte Carlo shown before runs again by itself
	p.click("#hl-view-budget")
	p.waitFor("the Monte Carlo run again", `!!document.getElementById("hl-bu-brief")`)
	p.click("#hl-view-trends")
	p.waitFor("the trend table", `document.querySelectorAll("#hl-tr-table tbody tr").length > 0`)
	if v := p.trValue("#hl-tr-noise"); v != "arma11" {
		t.Errorf("after a reload the trend noise model is %q, want arma11", v)
	}

	// start fresh: two clicks, then the demo alone and an empty brief
	p.click("#hl-view-brief")
	p.waitFor("the brief", `!!document.getElementById("hl-fresh")`)
	p.click("#hl-fresh")
	p.waitFor("the confirmation", `!!document.getElementById("hl-fresh-yes")`)
	p.click("#hl-fresh-yes")
	p.waitFor("the empty brief", `!!document.getElementById("hl-brief-empty")`)
	p.click("#hl-view-data")
	p.waitFor("the files", `!!document.querySelector("article[data-file]")`)
	if slices.Contains(p.fileNames(), "station.csv") {
		t.Error("start fresh kept station.csv")
	}
	// and what the browser keeps is the fresh start too
	fresh := eval[string](p, `document.body.dataset.saved || ""`)
	p.waitFor("the autosave of the fresh start", `(document.body.dataset.saved || "") !== `+js(fresh))
	p.do(chromedp.Reload())
	p.waitReady()
	if slices.Contains(p.fileNames(), "station.csv") {
		t.Error("after start fresh and a reload, station.csv is back")
	}
	p.brOpenBrief(0)

	// the saved file opens again from the Brief view
	p.click("#hl-view-brief")
	p.waitFor("the brief", `!!document.getElementById("hl-open-input")`)
	path := filepath.Join(dir, "again"+analysis.AnalysisExt)
	os.WriteFile(path, saved, 0o644)
	p.do(chromedp.SetUploadFiles(chromedp.ID("hl-open-input"), []string{path}))
	p.brOpenBrief(7)
	p.click("#hl-view-data")
	p.waitFor("the files", `!!document.querySelector("article[data-file]")`)
	if !slices.Contains(p.fileNames(), "station.csv") {
		t.Errorf("the opened file brought back files %v, want station.csv among them", p.fileNames())
	}
	p.trNoBanner()
}

// TestBriefDamagedAnalysisFile opens a damaged analysis file: it is
// listed with where it is damaged and the workspace stays.
func TestBriefDamagedAnalysisFile(t *testing.T) {
	p := openPage(t)
	p.upload(map[string]string{"broken" + analysis.AnalysisExt: "{\n  \"format\": \"heatledger-analysis\",\n  \"version\": 1,\n  \"files\": [,]\n}\n"})
	p.waitFor("the refusal", `(document.querySelector(`+js(fileSel("broken"+analysis.AnalysisExt))+`) || {textContent: ""}).textContent.includes("broken.heatledger.json:4:")`)
	if !slices.Contains(p.fileNames(), "tessary_surface.csv") {
		t.Errorf("the demo was dropped: files %v", p.fileNames())
	}
	p.trNoBanner()
}

// brMedia emulates a CSS media type ("print", or "" for the screen).
func (p *tab) brMedia(media string) {
	p.t.Helper()
	if _, err := chromedp.Run(p.ctx, chromedp.Func(func(ctx context.Context, _ *chromedp.Target) error {
		_, err := chromedp.Call(ctx, emulation.SetEmulatedMedia, emulation.SetEmulatedMediaParams{Media: media})
		return err
	})); err != nil {
		p.t.Fatalf("emulating media %q: %v", media, err)
	}
}

// brUnzip reads the Markdown export: brief.md and the SVG files.
func brUnzip(t *testing.T, b []byte) (string, map[string]string) {
	t.Helper()
	r, err := zip.NewReader(bytes.NewReader(b), int64(len(b)))
	if err != nil {
		t.Fatalf("the Markdown export is not a zip archive: %v", err)
	}
	md, figs := "", map[string]string{}
	for _, f := range r.File {
		rc, err := f.Open()
		if err != nil {
			t.Fatal(err)
		}
		data, err := io.ReadAll(rc)
		rc.Close()
		if err != nil {
			t.Fatalf("%s in the zip: %v (a bad checksum?)", f.Name, err)
		}
		switch {
		case f.Name == "brief.md":
			md = string(data)
		case strings.HasSuffix(f.Name, ".svg"):
			if !strings.HasPrefix(string(data), "<svg") {
				t.Errorf("%s is not SVG", f.Name)
			}
			figs[f.Name] = string(data)
		default:
			t.Errorf("unexpected file %s in the zip", f.Name)
		}
	}
	if md == "" {
		t.Fatal("the zip holds no brief.md")
	}
	return md, figs
}

// TestRolesInDataView gives an uploaded series the target role in the Data
// view: the Trends and Drivers views then start from it, and the saved
// analysis file holds the role.
func TestRolesInDataView(t *testing.T) {
	p := openPage(t)
	p.upload(map[string]string{"station.csv": brDemoRecord})
	row := `tr[data-series="station_mean"] select.hl-role`
	p.waitFor("the uploaded series", `!!document.querySelector(`+js(row)+`)`)
	if lab := eval[string](p, `document.querySelector(`+js(row)+`).getAttribute("aria-label")`); lab != "Role of station_mean" {
		t.Errorf("the role control is labelled %q", lab)
	}
	p.trSet(row, analysis.RoleTarget)
	p.click("#hl-view-trends")
	p.waitFor("the trend table", `document.querySelectorAll("#hl-tr-table tbody tr").length > 0`)
	picked := eval[[]string](p, `Array.from(document.querySelectorAll("input[data-ref]")).filter(e => e.checked).map(e => e.dataset.ref)`)
	if len(picked) != 1 || picked[0] != "station.csv:station_mean" {
		t.Errorf("the Trends view starts from %v, want the series given the target role", picked)
	}
	p.click("#hl-view-drivers")
	p.waitFor("the drivers view", `!!document.getElementById("hl-dr-target")`)
	if v := p.trValue("#hl-dr-target"); v != "station.csv:station_mean" {
		t.Errorf("the Drivers view's target is %q", v)
	}
	p.click("#hl-view-data")
	p.waitFor("the data view", `!!document.querySelector(`+js(row)+`)`)
	if v := p.trValue(row); v != analysis.RoleTarget {
		t.Errorf("after switching views the role shows %q", v)
	}
}
