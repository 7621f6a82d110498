//go:build browser

package webtest

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"net/http"
	"net/http/httptest"
	"os"
	"regexp"
	"strings"
	"testing"

	"github.com/chromedp/chromedp"

	"heatledger/core/analysis"
	"heatledger/internal/devserver"
)

// demoAnalysisFile is the demo analysis file, one analysis of every kind.
const demoAnalysisFile = "../testdata/analysis/tessary.heatledger.json"

// embedServer serves the built app plus, at the same origin, the demo
// analysis file at /tessary.heatledger.json and the outreach page of
// testdata/embed at /outreach.html.
func embedServer(t *testing.T) *httptest.Server {
	t.Helper()
	mux := http.NewServeMux()
	mux.Handle("/", devserver.Handler(staticDir))
	mux.HandleFunc("/tessary.heatledger.json", func(w http.ResponseWriter, r *http.Request) {
		w.Header().Set("Content-Type", "application/json")
		http.ServeFile(w, r, demoAnalysisFile)
	})
	mux.HandleFunc("/outreach.html", func(w http.ResponseWriter, r *http.Request) {
		http.ServeFile(w, r, "testdata/embed/outreach.html")
	})
	srv := httptest.NewServer(mux)
	t.Cleanup(srv.Close)
	return srv
}

// framesState reads each iframe's state: "ready", "failed: MESSAGE" or
// "loading".
const framesState = `Array.from(document.querySelectorAll("iframe"), f => {
	const d = f.contentDocument;
	if (!d || !d.body) return "loading";
	if (d.body.dataset.ready === "1") return "ready";
	if (d.body.dataset.failed === "1") return "failed: " + d.body.textContent.trim();
	return "loading";
})`

func TestEmbedTwoFigures(t *testing.T) {
	srv := embedServer(t)
	p := pageAt(t, srv.URL) // checkClean: no console error, CSP violation or request to another host
	p.do(chromedp.Navigate(srv.URL + "/outreach.html"))
	p.waitFor("both embedded figures", framesState+`.every(s => s !== "loading")`)
	states := eval[[]string](p, framesState)
	if len(states) != 2 {
		t.Fatalf("outreach page has %d frames, want 2", len(states))
	}
	for i, s := range states {
		if s != "ready" {
			t.Fatalf("frame %d: %s", i, s)
		}
	}
	type frameInfo struct {
		SVGs      int       `json:"svgs"`
		Series    []string  `json:"series"`
		Title     string    `json:"title"`
		Label     string    `json:"label"`
		DocTitle  string    `json:"docTitle"`
		Width     float64   `json:"width"`
		FrameW    float64   `json:"frameW"`
		Height    float64   `json:"height"`
		ViewBoxWH []float64 `json:"viewBox"`
	}
	frames := eval[[]frameInfo](p, `Array.from(document.querySelectorAll("iframe"), f => {
		const d = f.contentDocument, svg = d.querySelector("svg");
		const r = svg ? svg.getBoundingClientRect() : {width: 0, height: 0};
		const vb = svg && svg.viewBox.baseVal ? [svg.viewBox.baseVal.width, svg.viewBox.baseVal.height] : [];
		return {
			svgs: d.querySelectorAll("svg").length,
			series: Array.from(d.querySelectorAll("path[data-series]"), e => e.getAttribute("data-series")),
			title: svg && svg.querySelector("title") ? svg.querySelector("title").textContent : "",
			label: (d.querySelector("figure") || {getAttribute: () => ""}).getAttribute("aria-label") || "",
			docTitle: d.title,
			width: r.width, height: r.height, frameW: d.documentElement.clientWidth,
			viewBox: vb,
		};
	})`)
	for i, f := range frames {
		if f.SVGs != 1 {
			t.Errorf("frame %d holds %d svg elements, want 1", i, f.SVGs)
		}
		if len(f.Series) == 0 {
			t.Errorf("frame %d: the figure has no path with data-series", i)
		}
		if f.Title == "" || f.Label != f.Title || f.DocTitle != f.Title {
			t.Errorf("frame %d: svg title %q, figure label %q, document title %q: want the same non-empty text", i, f.Title, f.Label, f.DocTitle)
		}
		// sized to its frame: full width, height from the viewBox's aspect
		if f.FrameW <= 0 || f.Width < f.FrameW-1 || f.Width > f.FrameW+1 {
			t.Errorf("frame %d: figure is %.1f px wide in a %.1f px frame", i, f.Width, f.FrameW)
		}
		if len(f.ViewBoxWH) == 2 && f.ViewBoxWH[0] > 0 {
			want := f.Width * f.ViewBoxWH[1] / f.ViewBoxWH[0]
			if f.Height < want-1 || f.Height > want+1 {
				t.Errorf("frame %d: figure is %.1f px high, want %.1f (viewBox %v at width %.1f)", i, f.Height, want, f.ViewBoxWH, f.Width)
			}
		} else {
			t.Errorf("frame %d: the svg has no viewBox", i)
		}
	}
	// the README's way for a host page to get numbers: the API of an
	// embedded frame
	n := evalAwait[int](p, `fetch("/tessary.heatledger.json").then(r => r.text())
		.then(t => document.getElementById("fig-trend").contentWindow.heatledger.run(t))
		.then(r => JSON.parse(r).results.filter(x => !x.error).length)`)
	if n != 10 {
		t.Errorf("the frame's heatledger.run gave %d results without error, want 10 (one per analysis of the demo file)", n)
	}
	if len(frames) == 2 && frames[0].Title == frames[1].Title {
		t.Errorf("both frames show the same figure %q", frames[0].Title)
	}
	if len(frames) == 2 && !strings.HasPrefix(frames[0].Title, "Trend ") {
		t.Errorf("the trend frame's figure is titled %q", frames[0].Title)
	}
}

// TestEmbedRefusals: another origin, a kind with no figure and an unknown
// id are each refused with a message in the page.
func TestEmbedRefusals(t *testing.T) {
	srv := embedServer(t)
	p := pageAt(t, srv.URL)
	for _, c := range []struct{ query, want string }{
		// example.invalid is never resolved: the page refuses before fetching
		{"analysis=http://example.invalid/tessary.heatledger.json&figure=trend-demo", "on another site"},
		{"analysis=/tessary.heatledger.json&figure=sen-demo", "has no figure to embed"},
		{"analysis=/tessary.heatledger.json&figure=no-such", `no analysis "no-such"`},
		{"analysis=/tessary.heatledger.json&figure=adjust-demo&view=nope", `has no view "nope"`},
		{"analysis=/missing.heatledger.json&figure=trend-demo", "404"},
	} {
		p.do(chromedp.Navigate(srv.URL + "/embed.html?" + c.query))
		p.waitFor(c.query, `document.body.dataset.failed === "1" || document.body.dataset.ready === "1"`)
		msg := eval[string](p, `document.body.dataset.failed === "1" ? document.getElementById("hl-embed").textContent : "drawn"`)
		if !strings.Contains(msg, c.want) {
			t.Errorf("embed.html?%s shows %q, want it to say %q", c.query, msg, c.want)
		}
	}
	// the missing file's 404 is an expected console entry of the browser
	p.mu.Lock()
	kept := p.problems[:0]
	for _, s := range p.problems {
		if !strings.Contains(s, "missing.heatledger.json") {
			kept = append(kept, s)
		}
	}
	p.problems = kept
	p.mu.Unlock()
}

// runJS calls heatledger.run with text and returns "ok:REPORT" or
// "err:MESSAGE".
func runJS(p *tab, arg string) string {
	p.t.Helper()
	return evalAwait[string](p, `heatledger.run(`+arg+`).then(r => "ok:" + r, e => "err:" + (e instanceof Error ? e.message : String(e)))`)
}

func TestAPIRunMatchesNative(t *testing.T) {
	text, err := os.ReadFile(demoAnalysisFile)
	if err != nil {
		t.Fatal(err)
	}
	f, err := analysis.ParseAnalysisFile(text)
	if err != nil {
		t.Fatal(err)
	}
	rep, err := analysis.Run(f)
	if err != nil {
		t.Fatal(err)
	}
	want, err := rep.Marshal()
	if err != nil {
		t.Fatal(err)
	}

	p := openPage(t)
	out := runJS(p, js(string(text)))
	got, ok := strings.CutPrefix(out, "ok:")
	if !ok {
		t.Fatalf("heatledger.run rejected the demo analysis file: %s", out)
	}
	var page analysis.Report
	if err := json.Unmarshal([]byte(got), &page); err != nil {
		t.Fatalf("the report is not JSON: %v", err)
	}
	if len(page.Results) != len(f.Analyses) {
		t.Fatalf("report has %d results, the file %d analyses", len(page.Results), len(f.Analyses))
	}
	for i, r := range page.Results {
		if r.ID != f.Analyses[i].ID || r.Kind != f.Analyses[i].Kind {
			t.Errorf("result %d is %s (%s), want %s (%s)", i, r.ID, r.Kind, f.Analyses[i].ID, f.Analyses[i].Kind)
		}
		if r.Error != "" {
			t.Errorf("%s: %s", r.ID, r.Error)
		}
	}
	// The trend result must be byte-identical to the native run. The other
	// kinds must agree in every string and in every number to a relative
	// 1e-9: their last digits can differ between the wasm build (pure-Go
	// math and gonum kernels) and a native amd64 build (assembly kernels);
	// those differences are logged, not failed.
	sawTrend := false
	for i, r := range page.Results {
		if i >= len(rep.Results) {
			break
		}
		a, b := compact(t, r.Result), compact(t, rep.Results[i].Result)
		if r.Kind == analysis.KindTrend {
			sawTrend = true
			if a != b {
				at := 0
				for at < len(a) && at < len(b) && a[at] == b[at] {
					at++
				}
				t.Errorf("%s: the page's result is not byte-identical to the native run (from byte %d):\npage:   …%.120s\nnative: …%.120s", r.ID, at, a[max(0, at-60):], b[max(0, at-60):])
			}
			continue
		}
		if a == b {
			continue
		}
		var va, vb any
		if err := json.Unmarshal([]byte(a), &va); err != nil {
			t.Fatal(err)
		}
		if err := json.Unmarshal([]byte(b), &vb); err != nil {
			t.Fatal(err)
		}
		if d := jsonDiff("", va, vb, 1e-9); d != "" {
			t.Errorf("%s: the page's result differs from the native run: %s", r.ID, d)
		} else {
			t.Logf("%s: equal to the native run but for last digits (wasm vs native floating point)", r.ID)
		}
	}
	if !sawTrend {
		t.Error("the report has no trend result")
	}
	if got != string(want) {
		t.Logf("the whole report is not byte-identical to the native one (%d vs %d bytes): see the results above", len(got), len(want))
	}

	// an object argument is stringified and gives the same report
	if out := runJS(p, string(text)); out != "ok:"+got {
		t.Errorf("heatledger.run(object) = %.200s, want the same report as for the text", out)
	}
}

// jsonDiff describes the first difference between two decoded JSON
// values ("" when equal), numbers compared to a relative tolerance rel.
func jsonDiff(path string, a, b any, rel float64) string {
	switch x := a.(type) {
	case map[string]any:
		y, ok := b.(map[string]any)
		if !ok || len(x) != len(y) {
			return fmt.Sprintf("%s: %v vs %v", path, a, b)
		}
		for k, v := range x {
			if d := jsonDiff(path+"."+k, v, y[k], rel); d != "" {
				return d
			}
		}
	case []any:
		y, ok := b.([]any)
		if !ok || len(x) != len(y) {
			return fmt.Sprintf("%s: %d items vs %v", path, len(x), b)
		}
		for i := range x {
			if d := jsonDiff(fmt.Sprintf("%s[%d]", path, i), x[i], y[i], rel); d != "" {
				return d
			}
		}
	case float64:
		y, ok := b.(float64)
		if !ok || math.Abs(x-y) > rel*math.Max(math.Abs(x), math.Abs(y)) {
			return fmt.Sprintf("%s: %v vs %v", path, a, b)
		}
	default:
		if a != b {
			return fmt.Sprintf("%s: %v vs %v", path, a, b)
		}
	}
	return ""
}

// compact is the JSON text without insignificant space.
func compact(t *testing.T, raw []byte) string {
	t.Helper()
	var b bytes.Buffer
	if err := json.Compact(&b, raw); err != nil {
		t.Fatalf("result is not JSON: %v", err)
	}
	return b.String()
}

var rePos = regexp.MustCompile(`^request:\d+:\d+: `)

func TestAPIRunRejects(t *testing.T) {
	p := openPage(t)
	bad := "{\n  \"format\": \"heatledger-analysis\",\n  \"version\": \n}"
	_, nerr := analysis.ParseAnalysisFile([]byte(bad))
	var fe *analysis.FileError
	if !errors.As(nerr, &fe) {
		t.Fatalf("native parse of the damaged file: %v, want a *FileError", nerr)
	}
	fe.Name = "request"
	out := runJS(p, js(bad))
	if out != "err:"+fe.Error() {
		t.Errorf("heatledger.run(damaged) = %q, want %q", out, "err:"+fe.Error())
	}
	if !rePos.MatchString(strings.TrimPrefix(out, "err:")) {
		t.Errorf("rejection %q lacks the request:LINE:COLUMN position", out)
	}
	// a name given as the second argument is used in the position
	if out := runJS(p, js(bad)+`, "mine.heatledger.json"`); !strings.HasPrefix(out, "err:mine.heatledger.json:") {
		t.Errorf("named rejection = %q", out)
	}
	for _, arg := range []string{"", "42", "null", `""`} {
		if out := runJS(p, arg); !strings.HasPrefix(out, "err:") {
			t.Errorf("heatledger.run(%s) = %.100s, want a rejection", arg, out)
		}
	}
	// the program is still alive: the page still answers the API
	if out := runJS(p, js(bad)); !strings.HasPrefix(out, "err:request:") {
		t.Errorf("after the rejections, heatledger.run(damaged) = %q", out)
	}
	if eval[bool](p, `!!document.getElementById("hl-banner")`) {
		t.Errorf("the API's errors showed the page's error banner: %q", p.banner())
	}
}
