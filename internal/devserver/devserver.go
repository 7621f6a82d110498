// Package devserver serves Heatledger's static page for development and
// tests: the files of one directory, with the WebAssembly MIME type, gzip
// when the client accepts it, and caching headers that make the browser
// check for a newer build on every load. cmd/hlserve runs it; the browser
// tests run it under httptest.
package devserver

import (
	"bytes"
	"compress/gzip"
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"io/fs"
	"mime"
	"net/http"
	"os"
	"path"
	"strings"
	"sync"
	"time"
)

// Handler serves the files under dir. "/" serves index.html; directories
// are not listed; paths cannot leave dir.
func Handler(dir string) http.Handler {
	return &server{fsys: os.DirFS(dir), cache: map[string]*entry{}}
}

type server struct {
	fsys fs.FS

	mu    sync.Mutex
	cache map[string]*entry // by path; compressed bodies, checked against mtime and size
}

// entry is a file held in memory with its gzip form.
type entry struct {
	mod  time.Time
	size int64
	raw  []byte
	gz   []byte // nil when gzip does not pay off
	etag string
}

// types fixes the Content-Type of the extensions the page uses, whatever
// the system's MIME tables say.
var types = map[string]string{
	".html":        "text/html; charset=utf-8",
	".js":          "text/javascript; charset=utf-8",
	".css":         "text/css; charset=utf-8",
	".wasm":        "application/wasm",
	".svg":         "image/svg+xml",
	".json":        "application/json",
	".csv":         "text/csv; charset=utf-8",
	".txt":         "text/plain; charset=utf-8",
	".webmanifest": "application/manifest+json",
}

// compressible lists the extensions worth gzipping.
var compressible = map[string]bool{
	".html": true, ".js": true, ".css": true, ".wasm": true, ".svg": true,
	".json": true, ".csv": true, ".txt": true, ".webmanifest": true,
}

func (s *server) ServeHTTP(w http.ResponseWriter, r *http.Request) {
	if r.Method != http.MethodGet && r.Method != http.MethodHead {
		w.Header().Set("Allow", "GET, HEAD")
		http.Error(w, "method not allowed", http.StatusMethodNotAllowed)
		return
	}
	name := path.Clean("/" + r.URL.Path)
	if strings.HasSuffix(name, "/") {
		name += "index.html"
	}
	name = strings.TrimPrefix(name, "/")
	if name == "" {
		name = "index.html"
	}
	if !fs.ValidPath(name) {
		http.NotFound(w, r)
		return
	}
	e, err := s.load(name)
	if err != nil {
		if errors.Is(err, fs.ErrNotExist) || errors.Is(err, errIsDir) {
			http.NotFound(w, r)
			return
		}
		http.Error(w, "cannot read file", http.StatusInternalServerError)
		return
	}

	ext := strings.ToLower(path.Ext(name))
	ctype := types[ext]
	if ctype == "" {
		ctype = mime.TypeByExtension(ext)
	}
	if ctype == "" {
		ctype = "application/octet-stream"
	}
	h := w.Header()
	h.Set("Content-Type", ctype)
	h.Set("X-Content-Type-Options", "nosniff")
	// always revalidate: a rebuilt main.wasm must never be mixed with an
	// old wasm_exec.js or index.html from the cache
	h.Set("Cache-Control", "no-cache")
	body, etag := e.raw, e.etag
	if e.gz != nil {
		h.Add("Vary", "Accept-Encoding")
		if acceptsGzip(r.Header.Get("Accept-Encoding")) {
			body, etag = e.gz, e.etag+"-gz"
			h.Set("Content-Encoding", "gzip")
		}
	}
	h.Set("ETag", `"`+etag+`"`)
	http.ServeContent(w, r, name, e.mod, bytes.NewReader(body))
}

var errIsDir = errors.New("is a directory")

// load returns the file, from memory when it has not changed.
func (s *server) load(name string) (*entry, error) {
	fi, err := fs.Stat(s.fsys, name)
	if err != nil {
		return nil, err
	}
	if fi.IsDir() {
		return nil, errIsDir
	}
	s.mu.Lock()
	e := s.cache[name]
	s.mu.Unlock()
	if e != nil && e.mod.Equal(fi.ModTime()) && e.size == fi.Size() {
		return e, nil
	}
	raw, err := fs.ReadFile(s.fsys, name)
	if err != nil {
		return nil, err
	}
	sum := sha256.Sum256(raw)
	e = &entry{mod: fi.ModTime(), size: fi.Size(), raw: raw, etag: hex.EncodeToString(sum[:12])}
	if compressible[strings.ToLower(path.Ext(name))] && len(raw) > 512 {
		var buf bytes.Buffer
		zw, _ := gzip.NewWriterLevel(&buf, gzip.BestCompression) // the level is valid
		zw.Write(raw)
		zw.Close()
		if buf.Len() < len(raw)*9/10 {
			e.gz = buf.Bytes()
		}
	}
	s.mu.Lock()
	s.cache[name] = e
	s.mu.Unlock()
	return e, nil
}

// acceptsGzip reads an Accept-Encoding header: gzip (or *) without q=0.
func acceptsGzip(h string) bool {
	for _, part := range strings.Split(h, ",") {
		coding, params, _ := strings.Cut(strings.TrimSpace(part), ";")
		coding = strings.ToLower(strings.TrimSpace(coding))
		if coding != "gzip" && coding != "*" {
			continue
		}
		q := strings.ReplaceAll(strings.ToLower(params), " ", "")
		if q == "q=0" || q == "q=0.0" || q == "q=0.00" || q == "q=0.000" {
			return false
		}
		return true
	}
	return false
}
