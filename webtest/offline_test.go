//go:build browser

package webtest

import (
	"net/http"
	"net/http/httptest"
	"os"
	"path/filepath"
	"regexp"
	"slices"
	"strings"
	"testing"

	"github.com/chromedp/chromedp"

	"heatledger/internal/devserver"
	"heatledger/internal/distbuild"
)

// pageAt opens a fresh tab like newPage, but whose own origin, for
// checkClean's check against requests to other hosts, is origin rather than
// the shared test server (a server of the test's own, or "file://").
// The tests of this package do not run in parallel, so swapping serverURL
// for the length of one test is safe; the swap is undone after checkClean.
func pageAt(t *testing.T, origin string) *tab {
	t.Helper()
	old := serverURL
	serverURL = origin
	t.Cleanup(func() { serverURL = old }) // cleanups run last-in first-out: after checkClean
	return newPage(t)
}

var reBuild = regexp.MustCompile(`const BUILD = "([0-9a-f]{16})";`)

// workerBuild reads the build id stamped into static/sw.js.
func workerBuild(t *testing.T) string {
	t.Helper()
	b, err := os.ReadFile(filepath.Join(staticDir, distbuild.WorkerFile))
	if err != nil {
		t.Fatalf("%v: run ./build.sh build first", err)
	}
	m := reBuild.FindSubmatch(b)
	if m == nil {
		t.Fatalf("static/sw.js has no stamped build id: run ./build.sh build")
	}
	return string(m[1])
}

// evalAwait evaluates a JS expression that gives a promise, into T.
func evalAwait[T any](p *tab, expr string) T {
	p.t.Helper()
	v, err := chromedp.Run(p.ctx, chromedp.Evaluate[T](expr, chromedp.EvalAwaitPromise))
	if err != nil {
		p.t.Fatalf("evaluating %s: %v", expr, err)
	}
	return v
}

// swControlled waits until a service worker controls the page and is active.
func (p *tab) swControlled() {
	p.t.Helper()
	p.waitFor("a service worker controlling the page",
		`!!navigator.serviceWorker.controller && navigator.serviceWorker.controller.state === "activated"`)
}

// TestOfflineAfterFirstVisit: the first visit installs the service worker,
// which caches the app shell; with the server gone, a reload still starts
// the app and draws the demo chart, with nothing failing to load (checkClean
// fails the test on any console or network error).
func TestOfflineAfterFirstVisit(t *testing.T) {
	build := workerBuild(t)
	// a server of this test's own, so that it can be stopped
	srv := httptest.NewServer(devserver.Handler(staticDir))
	t.Cleanup(srv.Close)
	p := pageAt(t, srv.URL)

	p.do(chromedp.Navigate(srv.URL + "/"))
	p.waitReady()
	// the worker installs (caching the shell) and takes control
	p.swControlled()
	if u := eval[string](p, `navigator.serviceWorker.controller.scriptURL`); u != srv.URL+"/sw.js" {
		t.Errorf("controlling worker is %s, want %s/sw.js", u, srv.URL)
	}

	// a reload is controlled from the start
	p.do(chromedp.Reload())
	p.waitReady()
	if !eval[bool](p, `!!navigator.serviceWorker.controller`) {
		t.Fatal("no service worker controls the page after a reload")
	}

	// one shell cache, named after this build, holding every shell file
	names := evalAwait[[]string](p, `caches.keys()`)
	shellCache := "heatledger-shell-" + build
	for _, n := range names {
		if strings.HasPrefix(n, "heatledger-shell-") && n != shellCache {
			t.Errorf("cache %s of another build is kept", n)
		}
	}
	if !slices.Contains(names, shellCache) {
		t.Fatalf("caches %q lack %s", names, shellCache)
	}
	cached := evalAwait[[]string](p, `caches.open(`+js(shellCache)+`).then(c => c.keys()).then(ks => ks.map(r => r.url))`)
	for _, f := range append([]string{""}, distbuild.Shell...) {
		if !slices.Contains(cached, srv.URL+"/"+f) {
			t.Errorf("shell cache lacks /%s (holds %q)", f, cached)
		}
	}

	// the network goes: the server stops listening
	srv.CloseClientConnections()
	srv.Close()
	if res, err := http.Get(srv.URL + "/"); err == nil {
		res.Body.Close()
		t.Fatal("the test server still answers after Close")
	}

	p.do(chromedp.Reload())
	p.waitReady()
	if !eval[bool](p, `!!navigator.serviceWorker.controller`) {
		t.Error("no service worker controls the offline page")
	}
	want := demoSeries(t)
	for file, series := range want {
		if got := p.seriesOf(file); !slices.Equal(got, series) {
			t.Errorf("offline: %s lists %q, want %q", file, got, series)
		}
	}
	if len(p.drawn()) == 0 {
		t.Error("offline: no demo chart line drawn")
	}
}
