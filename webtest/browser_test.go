//go:build browser

package webtest

import (
	"context"
	"encoding/json"
	"errors"
	"flag"
	"fmt"
	"net/http"
	"net/http/httptest"
	"net/url"
	"os"
	"os/exec"
	"path/filepath"
	"sort"
	"strings"
	"sync"
	"testing"
	"time"

	"github.com/chromedp/cdproto/log"
	"github.com/chromedp/cdproto/network"
	"github.com/chromedp/cdproto/page"
	cdpruntime "github.com/chromedp/cdproto/runtime"
	"github.com/chromedp/chromedp"

	"heatledger/internal/devserver"
)

// staticDir is the built page, relative to this package.
const staticDir = "../static"

var (
	serverURL  string          // the test server, e.g. http://127.0.0.1:41234
	browserCtx context.Context // one Chromium for all tests; each page gets a fresh browser context
)

// pageTimeout bounds one test's browser work (this machine is small and
// shared; nothing here is a timing assertion).
const pageTimeout = 90 * time.Second

func TestMain(m *testing.M) {
	flag.Parse()
	os.Exit(run(m))
}

func run(m *testing.M) int {
	var missing []string
	for _, f := range []string{"index.html", "main.wasm", "wasm_exec.js", "vugu-render.js", "loader.js", "app.css"} {
		if _, err := os.Stat(filepath.Join(staticDir, f)); err != nil {
			missing = append(missing, "static/"+f)
		}
	}
	if len(missing) > 0 {
		fmt.Fprintf(os.Stderr, "webtest: %s missing: run ./build.sh build first\n", strings.Join(missing, ", "))
		return 1
	}
	exe, err := chromiumPath()
	if err != nil {
		fmt.Fprintln(os.Stderr, "webtest:", err)
		return 1
	}

	srv := httptest.NewServer(devserver.Handler(staticDir))
	defer srv.Close()
	serverURL = srv.URL

	userDir, err := os.MkdirTemp("", "heatledger-chromium-")
	if err != nil {
		fmt.Fprintln(os.Stderr, "webtest:", err)
		return 1
	}
	defer os.RemoveAll(userDir)

	allocCtx, cancelAlloc := chromedp.NewExecAllocator(context.Background(),
		chromedp.ExecPath(exe),
		chromedp.Headless,
		chromedp.NoSandbox,
		chromedp.DisableGPU,
		chromedp.NoFirstRun,
		chromedp.NoDefaultBrowserCheck,
		chromedp.UserDataDir(userDir),
		chromedp.Flag("disable-quic", true),
		chromedp.Flag("disable-background-networking", true),
		chromedp.Flag("disable-component-update", true),
		chromedp.Flag("disable-sync", true),
		chromedp.Flag("disable-dev-shm-usage", true),
		chromedp.Flag("disable-extensions", true),
		chromedp.WindowSize(1280, 900),
	)
	defer cancelAlloc()
	var cancelBrowser context.CancelFunc
	browserCtx, cancelBrowser = chromedp.NewContext(allocCtx)
	defer cancelBrowser()
	// start the browser now, so a failure to start is one clear error
	if err := chromedp.Do(browserCtx); err != nil {
		fmt.Fprintf(os.Stderr, "webtest: cannot start %s: %v\n", exe, err)
		return 1
	}
	return m.Run()
}

// chromiumPath finds the browser: $HL_CHROMIUM, /usr/bin/chromium, or
// chromium on PATH.
func chromiumPath() (string, error) {
	if p := os.Getenv("HL_CHROMIUM"); p != "" {
		return p, nil
	}
	if _, err := os.Stat("/usr/bin/chromium"); err == nil {
		return "/usr/bin/chromium", nil
	}
	if p, err := exec.LookPath("chromium"); err == nil {
		return p, nil
	}
	return "", errors.New("no Chromium found (set HL_CHROMIUM, or install the Debian package chromium)")
}

// page is one tab in a fresh browser context, with a record of everything
// that went wrong in it and of every request it made.
type tab struct {
	t   *testing.T
	ctx context.Context

	mu       sync.Mutex
	problems []string
	requests []string
	dialogs  []string
}

// violationScript records Content-Security-Policy violations; it runs
// before the page's own scripts (the DevTools protocol adds it, so the
// page's policy does not apply to it).
const violationScript = `window.__hlViolations = [];
document.addEventListener("securitypolicyviolation", function (e) {
	window.__hlViolations.push(e.violatedDirective + " " + e.blockedURI);
});`

// openPage opens the app in a new browser context (no cache, no storage
// shared with other tests) and waits until the demo chart is drawn.
func openPage(t *testing.T) *tab {
	t.Helper()
	p := newPage(t)
	p.do(chromedp.Navigate(serverURL + "/"))
	p.waitReady()
	return p
}

func newPage(t *testing.T) *tab {
	t.Helper()
	p := &tab{t: t}
	tabCtx, cancelTab := chromedp.NewContext(browserCtx,
		chromedp.WithNewBrowserContext(),
		chromedp.WithListener(p.listen))
	ctx, cancel := context.WithTimeout(tabCtx, pageTimeout)
	t.Cleanup(func() {
		cancel()
		cancelTab()
	})
	p.ctx = ctx
	// the first Run on a new context opens the tab; the timeout above is on
	// a child context, so it does not stop the shared browser
	if _, err := chromedp.Run(ctx, chromedp.Func(func(ctx context.Context, tg *chromedp.Target) error {
		_, err := chromedp.Call(ctx, page.AddScriptToEvaluateOnNewDocument,
			page.AddScriptToEvaluateOnNewDocumentParams{Source: violationScript})
		return err
	})); err != nil {
		t.Fatalf("opening a tab: %v", err)
	}
	t.Cleanup(p.checkClean)
	return p
}

// listen runs on chromedp's reader goroutine: it only records.
func (p *tab) listen(ev any) {
	p.mu.Lock()
	defer p.mu.Unlock()
	switch e := ev.(type) {
	case *cdpruntime.EventConsoleAPICalled:
		if e.Type == cdpruntime.ConsoleAPICalledTypeError || e.Type == cdpruntime.ConsoleAPICalledTypeAssert {
			var parts []string
			for _, a := range e.Args {
				if len(a.Value) > 0 {
					parts = append(parts, string(a.Value))
				} else {
					parts = append(parts, a.Description)
				}
			}
			p.problems = append(p.problems, "console."+string(e.Type)+": "+strings.Join(parts, " "))
		}
	case *cdpruntime.EventExceptionThrown:
		d := e.ExceptionDetails
		msg := d.Text
		if d.Exception != nil && d.Exception.Description != "" {
			msg += " " + d.Exception.Description
		}
		p.problems = append(p.problems, "uncaught exception: "+msg)
	case *log.EventEntryAdded:
		if e.Entry != nil && e.Entry.Level == log.EntryLevelError {
			p.problems = append(p.problems, "browser log error: "+e.Entry.Text+" "+e.Entry.URL)
		}
	case *network.EventRequestWillBeSent:
		if e.Request != nil {
			p.requests = append(p.requests, e.Request.URL)
		}
	case *page.EventJavascriptDialogOpening:
		p.dialogs = append(p.dialogs, string(e.Type)+": "+e.Message)
	}
}

// checkClean fails the test for any console error, uncaught exception,
// browser log error, CSP violation, dialog, or request to another host.
func (p *tab) checkClean() {
	t := p.t
	if p.ctx.Err() == nil {
		v, _ := chromedp.Run(p.ctx, chromedp.Evaluate[[]string](`window.__hlViolations || []`))
		for _, s := range v {
			t.Errorf("Content-Security-Policy violation: %s", s)
		}
	}
	p.mu.Lock()
	defer p.mu.Unlock()
	for _, s := range p.problems {
		t.Errorf("%s", s)
	}
	for _, s := range p.dialogs {
		t.Errorf("the page opened a dialog: %s", s)
	}
	own, err := url.Parse(serverURL)
	if err != nil {
		t.Fatal(err)
	}
	if len(p.requests) == 0 {
		t.Errorf("no request was recorded: the network listener is not working")
	}
	for _, r := range p.requests {
		u, err := url.Parse(r)
		if err != nil {
			t.Errorf("request to an unparsable URL %q", r)
			continue
		}
		switch u.Scheme {
		case "data", "blob":
			continue
		}
		if u.Host != own.Host {
			t.Errorf("request to another host: %s (the page's own host is %s)", r, own.Host)
		}
	}
}

// do runs actions, failing the test on error.
func (p *tab) do(actions ...chromedp.Action[chromedp.Void]) {
	p.t.Helper()
	if err := chromedp.Do(p.ctx, actions...); err != nil {
		p.t.Fatalf("browser: %v", err)
	}
}

// eval evaluates a JS expression into T.
func eval[T any](p *tab, expr string) T {
	p.t.Helper()
	v, err := chromedp.Run(p.ctx, chromedp.Evaluate[T](expr))
	if err != nil {
		p.t.Fatalf("evaluating %s: %v", expr, err)
	}
	return v
}

// waitFor polls a JS predicate until it is true.
func (p *tab) waitFor(what, expr string) {
	p.t.Helper()
	_, err := chromedp.Run(p.ctx, chromedp.Poll[chromedp.Void](expr,
		chromedp.WithPollingInterval(50*time.Millisecond),
		chromedp.WithPollingTimeout(60*time.Second)))
	if err != nil {
		p.t.Fatalf("waiting for %s (%s): %v\nfiles listed: %v\nbanner: %q", what, expr, err, p.fileNames(), p.banner())
	}
}

func (p *tab) waitReady() {
	p.t.Helper()
	p.waitFor("the demo chart", `document.body.dataset.ready === "1"`)
}

// js quotes s as a JavaScript string literal.
func js(s string) string {
	b, _ := json.Marshal(s) // a string always marshals
	return string(b)
}

// fileSel is the CSS selector of the card of a loaded file.
func fileSel(name string) string {
	return `article[data-file=` + js(name) + `]`
}

func (p *tab) fileNames() []string {
	v, err := chromedp.Run(p.ctx, chromedp.Evaluate[[]string](
		`Array.from(document.querySelectorAll("article[data-file]"), a => a.dataset.file)`))
	if err != nil {
		return nil
	}
	return v
}

func (p *tab) banner() string {
	v, _ := chromedp.Run(p.ctx, chromedp.Evaluate[string](
		`(document.getElementById("hl-banner") || {}).textContent || ""`))
	return v
}

// seriesOf lists the series names shown in a file's card.
func (p *tab) seriesOf(file string) []string {
	p.t.Helper()
	return eval[[]string](p, `Array.from(document.querySelectorAll(`+js(fileSel(file)+` tr.hl-series`)+`), r => r.dataset.series)`)
}

// drawn lists the data-series of the chart's lines.
func (p *tab) drawn() []string {
	p.t.Helper()
	v := eval[[]string](p, `Array.from(document.querySelectorAll("#hl-chart path.hl-line[data-series]"), e => e.getAttribute("data-series"))`)
	sort.Strings(v)
	return v
}

// upload writes files to a temporary directory and gives them to the file
// input, as a user picking them would.
func (p *tab) upload(files map[string]string) {
	p.t.Helper()
	dir := p.t.TempDir()
	var paths []string
	for name, content := range files {
		path := filepath.Join(dir, name)
		if err := os.WriteFile(path, []byte(content), 0o644); err != nil {
			p.t.Fatal(err)
		}
		paths = append(paths, path)
	}
	sort.Strings(paths)
	p.do(chromedp.SetUploadFiles(chromedp.ID("hl-file-input"), paths))
}

// click clicks an element found by a CSS selector, with a real mouse event.
func (p *tab) click(sel string) {
	p.t.Helper()
	p.do(chromedp.Click(chromedp.CSS(sel)))
}

// waitHTTP makes sure the server answers (and has the compressed wasm in
// its cache) before a timing run.
func waitHTTP(t testing.TB) {
	req, _ := http.NewRequest("GET", serverURL+"/main.wasm", nil)
	req.Header.Set("Accept-Encoding", "gzip")
	res, err := http.DefaultClient.Do(req)
	if err != nil {
		t.Fatal(err)
	}
	res.Body.Close()
}
