//go:build browser

package webtest

import (
	"fmt"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"testing"

	"github.com/chromedp/chromedp"

	"heatledger/internal/distbuild"
)

// distBudgetBytes is the size budget of the single file (3.5 MB).
const distBudgetBytes = 3_500_000

// buildDist builds the single-file app from the built static directory
// (as ./build.sh dist does) into a temporary directory and returns its
// file:// URL.
func buildDist(t *testing.T) (fileURL string, size int) {
	t.Helper()
	s, err := distbuild.SingleFile(os.DirFS(staticDir))
	if err != nil {
		t.Fatal(err)
	}
	name := filepath.Join(t.TempDir(), "heatledger.html")
	if err := os.WriteFile(name, s.HTML, 0o644); err != nil {
		t.Fatal(err)
	}
	abs, err := filepath.Abs(name)
	if err != nil {
		t.Fatal(err)
	}
	return "file://" + filepath.ToSlash(abs), len(s.HTML)
}

// TestDistSingleFile opens the single file from disk, with no server, and
// checks that it starts, lists and draws the demo, within its policy
// (checkClean fails the test on any console error, CSP violation, or
// request that is not to a file: or data: URL).
func TestDistSingleFile(t *testing.T) {
	u, size := buildDist(t)
	if size > distBudgetBytes {
		t.Errorf("single file is %d bytes, over the budget of %d", size, distBudgetBytes)
	}
	p := pageAt(t, "file://")
	p.do(chromedp.Navigate(u))
	p.waitReady()

	want := demoSeries(t)
	if got, w := len(p.fileNames()), len(want); got != w {
		t.Errorf("%d files listed, want the %d demo files", got, w)
	}
	for file, series := range want {
		if got := p.seriesOf(file); !slices.Equal(got, series) {
			t.Errorf("%s lists %q, want %q", file, got, series)
		}
	}
	if len(p.drawn()) == 0 {
		t.Error("no demo chart line drawn")
	}

	csp := eval[string](p, `document.querySelector('meta[http-equiv="Content-Security-Policy"]').content`)
	for _, bad := range []string{"'self'", "'unsafe-inline'", "'unsafe-eval'"} {
		if strings.Contains(csp, bad) {
			t.Errorf("policy %q holds %s", csp, bad)
		}
	}
	for _, need := range []string{"default-src 'none'", "connect-src 'none'", "'wasm-unsafe-eval'", "script-src 'sha256-", "style-src 'sha256-"} {
		if !strings.Contains(csp, need) {
			t.Errorf("policy %q lacks %s", csp, need)
		}
	}
	// the page's own scripts and style came inline; the packed wasm was
	// read and dropped; no worker on file://
	if n := eval[int](p, `document.querySelectorAll("script[src], link[rel=stylesheet]").length`); n != 0 {
		t.Errorf("%d external script or stylesheet tags", n)
	}
	if eval[bool](p, `!!document.getElementById(`+js(distbuild.WasmElementID)+`)`) {
		t.Error("the packed wasm is still in the page after start")
	}
	if eval[bool](p, `!!(navigator.serviceWorker && navigator.serviceWorker.controller)`) {
		t.Error("a service worker controls the file:// page")
	}
	// the app's style applied: the inline <style> passed the policy
	if v := eval[string](p, `getComputedStyle(document.documentElement).getPropertyValue("--paper").trim()`); v == "" {
		t.Error("app.css's --paper colour not set on :root: the inline style seems not applied")
	}
}

// TestDistLoadTime reports the time from navigation to the demo chart
// drawn for the single file opened from disk, median of five cold loads
// (each in a fresh browser context). It measures and asserts nothing about
// the time. It runs only with HL_BENCH=1 (./build.sh bench).
func TestDistLoadTime(t *testing.T) {
	if os.Getenv("HL_BENCH") == "" {
		t.Skip("set HL_BENCH=1 to time the single file (./build.sh bench does)")
	}
	u, size := buildDist(t)
	var ready []float64
	steps := []string{"hl-wasm-ready", "hl-go-start", "hl-demo-read", "hl-chart-drawn"}
	marks := map[string][]float64{}
	for range 5 {
		p := pageAt(t, "file://")
		p.do(chromedp.Navigate(u))
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
	t.Logf("dist single file (%d bytes) demo chart drawn: median %.0f ms over 5 cold loads (each: %s ms)", size, median(ready), strings.Join(each, " "))
	var parts []string
	for _, s := range steps {
		parts = append(parts, fmt.Sprintf("%s %.0f", strings.TrimPrefix(s, "hl-"), median(marks[s])))
	}
	t.Logf("dist single file, median ms after navigation: %s", strings.Join(parts, ", "))
}
