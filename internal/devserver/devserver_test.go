package devserver

import (
	"bytes"
	"compress/gzip"
	"io"
	"net/http"
	"net/http/httptest"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"
)

func site(t *testing.T) (string, http.Handler) {
	t.Helper()
	dir := t.TempDir()
	files := map[string]string{
		"index.html":    "<!doctype html><title>t</title>" + strings.Repeat("<p>x</p>", 200),
		"main.wasm":     "\x00asm" + strings.Repeat("\x01\x02\x03\x04", 4000),
		"app.css":       strings.Repeat("body { margin: 0 }\n", 100),
		"tiny.js":       "1",
		"sub/page.html": "<p>sub</p>",
		"data.bin":      "\xff\xfe",
	}
	for name, body := range files {
		p := filepath.Join(dir, name)
		if err := os.MkdirAll(filepath.Dir(p), 0o755); err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(p, []byte(body), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	return dir, Handler(dir)
}

func get(h http.Handler, path string, hdr map[string]string) *http.Response {
	req := httptest.NewRequest("GET", path, nil)
	for k, v := range hdr {
		req.Header.Set(k, v)
	}
	rec := httptest.NewRecorder()
	h.ServeHTTP(rec, req)
	return rec.Result()
}

func body(t *testing.T, r *http.Response) []byte {
	t.Helper()
	b, err := io.ReadAll(r.Body)
	if err != nil {
		t.Fatal(err)
	}
	if r.Header.Get("Content-Encoding") == "gzip" {
		zr, err := gzip.NewReader(bytes.NewReader(b))
		if err != nil {
			t.Fatal(err)
		}
		if b, err = io.ReadAll(zr); err != nil {
			t.Fatal(err)
		}
	}
	return b
}

func TestTypes(t *testing.T) {
	_, h := site(t)
	for path, want := range map[string]string{
		"/":          "text/html; charset=utf-8",
		"/main.wasm": "application/wasm",
		"/app.css":   "text/css; charset=utf-8",
		"/tiny.js":   "text/javascript; charset=utf-8",
		"/data.bin":  "application/octet-stream",
	} {
		r := get(h, path, nil)
		if r.StatusCode != 200 {
			t.Errorf("%s: status %d", path, r.StatusCode)
		}
		if got := r.Header.Get("Content-Type"); got != want {
			t.Errorf("%s: Content-Type %q, want %q", path, got, want)
		}
		if r.Header.Get("Cache-Control") != "no-cache" || r.Header.Get("X-Content-Type-Options") != "nosniff" {
			t.Errorf("%s: headers %v", path, r.Header)
		}
	}
}

func TestGzip(t *testing.T) {
	dir, h := site(t)
	raw, _ := os.ReadFile(filepath.Join(dir, "main.wasm"))
	plain := get(h, "/main.wasm", nil)
	if plain.Header.Get("Content-Encoding") != "" {
		t.Error("gzip sent to a client that did not ask")
	}
	if !bytes.Equal(body(t, plain), raw) {
		t.Error("plain body differs")
	}
	gz := get(h, "/main.wasm", map[string]string{"Accept-Encoding": "br, gzip;q=0.8"})
	if gz.Header.Get("Content-Encoding") != "gzip" || gz.Header.Get("Vary") != "Accept-Encoding" {
		t.Fatalf("headers %v", gz.Header)
	}
	if gz.ContentLength >= int64(len(raw)) {
		t.Errorf("gzip body %d bytes, raw %d", gz.ContentLength, len(raw))
	}
	if !bytes.Equal(body(t, gz), raw) {
		t.Error("gzip body does not unpack to the file")
	}
	if plain.Header.Get("ETag") == gz.Header.Get("ETag") {
		t.Error("the two encodings share an ETag")
	}
	if r := get(h, "/main.wasm", map[string]string{"Accept-Encoding": "gzip;q=0"}); r.Header.Get("Content-Encoding") != "" {
		t.Error("gzip sent despite q=0")
	}
	// too small to pay off: sent as is
	if r := get(h, "/tiny.js", map[string]string{"Accept-Encoding": "gzip"}); r.Header.Get("Content-Encoding") != "" {
		t.Error("tiny file gzipped")
	}
}

func TestRevalidateAndChange(t *testing.T) {
	dir, h := site(t)
	first := get(h, "/app.css", nil)
	etag := first.Header.Get("ETag")
	if etag == "" {
		t.Fatal("no ETag")
	}
	if r := get(h, "/app.css", map[string]string{"If-None-Match": etag}); r.StatusCode != http.StatusNotModified {
		t.Errorf("revalidation gave %d, want 304", r.StatusCode)
	}
	// a rebuilt file is served fresh, not from the server's memory
	p := filepath.Join(dir, "app.css")
	if err := os.WriteFile(p, []byte("p { color: red }"), 0o644); err != nil {
		t.Fatal(err)
	}
	later := time.Now().Add(2 * time.Second)
	os.Chtimes(p, later, later)
	r := get(h, "/app.css", map[string]string{"If-None-Match": etag})
	if r.StatusCode != 200 || string(body(t, r)) != "p { color: red }" {
		t.Errorf("changed file: status %d", r.StatusCode)
	}
}

func TestNotFound(t *testing.T) {
	_, h := site(t)
	for _, path := range []string{"/nope.js", "/sub", "/../devserver.go", "/%2e%2e/etc/passwd", "/sub/../../x"} {
		if r := get(h, path, nil); r.StatusCode != http.StatusNotFound {
			t.Errorf("%s: status %d, want 404", path, r.StatusCode)
		}
	}
	if r := get(h, "/sub/page.html", nil); r.StatusCode != 200 {
		t.Errorf("file in a subdirectory: %d", r.StatusCode)
	}
	req := httptest.NewRequest("POST", "/", nil)
	rec := httptest.NewRecorder()
	h.ServeHTTP(rec, req)
	if rec.Code != http.StatusMethodNotAllowed {
		t.Errorf("POST gave %d", rec.Code)
	}
}

func TestAcceptsGzip(t *testing.T) {
	for h, want := range map[string]bool{
		"":              false,
		"gzip":          true,
		"GZIP":          true,
		"deflate, gzip": true,
		"gzip;q=0":      false,
		"gzip; q=0.000": false,
		"gzip;q=0.5":    true,
		"*":             true,
		"br":            false,
		"x-gzip":        false,
	} {
		if got := acceptsGzip(h); got != want {
			t.Errorf("acceptsGzip(%q) = %v", h, got)
		}
	}
}
