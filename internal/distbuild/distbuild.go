// Package distbuild makes the two build outputs that let Heatledger run
// without a network:
//
//   - Worker stamps the service worker (static/sw.js) from its template
//     static/sw.template.js with a build id, a hash of the app shell, so that
//     every build gets its own cache and the browser installs the new worker
//     when any app file changes.
//   - SingleFile writes the whole app as one HTML file that runs from file://
//     with no server: the stylesheet and scripts inline, each allowed by its
//     SHA-256 hash in the Content-Security-Policy, and main.wasm gzip-
//     compressed and base64-encoded in a data block that static/loader.js
//     unpacks with the browser's DecompressionStream.
//
// Both read the built static directory (after `./build.sh build`) as an
// fs.FS. The command in ./hlbuild runs them for build.sh.
package distbuild

import (
	"bytes"
	"compress/gzip"
	"crypto/sha256"
	"encoding/base64"
	"encoding/hex"
	"encoding/json"
	"fmt"
	"io/fs"
	"path"
	"regexp"
	"strings"
)

// Shell lists the files of the app shell, relative to the static
// directory: what the service worker caches on install and what the build
// id hashes.
var Shell = []string{
	"index.html",
	"loader.js",
	"app.css",
	"vugu-render.js",
	"wasm_exec.js",
	"main.wasm",
	"favicon.svg",
	"manifest.webmanifest",
	"embed.html", // one figure for other pages' iframes (wasm/api.go)
	"embed.js",
}

// WorkerTemplate is the template of the service worker, and WorkerFile the
// file Worker's output goes to, both in the static directory.
const (
	WorkerTemplate = "sw.template.js"
	WorkerFile     = "sw.js"
)

// BuildID returns the first 16 hex digits of a SHA-256 over the shell
// files (names and contents), so it changes whenever any of them does.
func BuildID(fsys fs.FS) (string, error) {
	h := sha256.New()
	for _, name := range Shell {
		b, err := fs.ReadFile(fsys, name)
		if err != nil {
			return "", fmt.Errorf("build id: %w (run ./build.sh build first?)", err)
		}
		fmt.Fprintf(h, "%s\x00%d\x00", name, len(b))
		h.Write(b)
	}
	return hex.EncodeToString(h.Sum(nil))[:16], nil
}

// Worker returns the service worker: the template with __HL_BUILD__
// replaced by the build id (as a JavaScript string's content) and
// __HL_SHELL__ by the shell list (a JavaScript array). Each placeholder
// must occur exactly once.
func Worker(fsys fs.FS) (src []byte, buildID string, err error) {
	tmpl, err := fs.ReadFile(fsys, WorkerTemplate)
	if err != nil {
		return nil, "", fmt.Errorf("service worker: %w", err)
	}
	id, err := BuildID(fsys)
	if err != nil {
		return nil, "", err
	}
	list, err := json.Marshal(Shell)
	if err != nil {
		return nil, "", err
	}
	out := tmpl
	for _, r := range []struct{ key, val string }{{"__HL_BUILD__", id}, {"__HL_SHELL__", string(list)}} {
		if n := bytes.Count(out, []byte(r.key)); n != 1 {
			return nil, "", fmt.Errorf("service worker: %s holds %s %d times, want once", WorkerTemplate, r.key, n)
		}
		out = bytes.Replace(out, []byte(r.key), []byte(r.val), 1)
	}
	return out, id, nil
}

// Single is the single-file app and facts about it.
type Single struct {
	HTML     []byte
	WasmRaw  int    // main.wasm, bytes
	WasmGzip int    // main.wasm gzip-compressed, bytes
	CSP      string // the file's Content-Security-Policy
}

// WasmElementID is the id of the data block that holds the packed wasm;
// static/loader.js looks for it.
const WasmElementID = "hl-wasm-gz"

var (
	reCSP        = regexp.MustCompile(`<meta http-equiv="Content-Security-Policy" content="([^"]*)">`)
	reStylesheet = regexp.MustCompile(`<link rel="stylesheet" href="([^"]+)">`)
	reScript     = regexp.MustCompile(`<script src="([^"]+)"></script>`)
	reIcon       = regexp.MustCompile(`(<link rel="icon" type="image/svg\+xml" href=")([^"]+)(">)`)
	// tags with no meaning in a file opened from disk: the wasm preload
	// (the wasm is inline) and the manifest (no install from file://)
	reDrop = regexp.MustCompile(`<link rel="(?:preload|manifest)"[^>]*>\n?`)
	// what is left must not point at another file
	reRef = regexp.MustCompile(`(?i)\b(?:src|href)="([^"]*)"`)
)

// SingleFile builds the single-file app from the static directory's
// index.html: the stylesheet becomes a <style>, each <script src> an inline
// script, the SVG icon a data: URL, main.wasm a gzip+base64 data block
// before loader.js, and the CSP loses 'self' (a file has no origin to
// trust) and gains the hashes of the inline style and scripts. It fails if
// index.html refers to anything it cannot inline.
func SingleFile(fsys fs.FS) (*Single, error) {
	index, err := fs.ReadFile(fsys, "index.html")
	if err != nil {
		return nil, fmt.Errorf("dist: %w (run ./build.sh build first?)", err)
	}
	wasm, err := fs.ReadFile(fsys, "main.wasm")
	if err != nil {
		return nil, fmt.Errorf("dist: %w (run ./build.sh build first?)", err)
	}
	html := string(index)
	var errs []string
	var scriptHashes, styleHashes []string

	// the stylesheet
	html = reStylesheet.ReplaceAllStringFunc(html, func(tag string) string {
		name := reStylesheet.FindStringSubmatch(tag)[1]
		css, err := inlineText(fsys, name, "</style")
		if err != nil {
			errs = append(errs, err.Error())
			return tag
		}
		styleHashes = append(styleHashes, hashSource(css))
		return "<style>" + css + "</style>"
	})
	if len(styleHashes) == 0 {
		errs = append(errs, `index.html has no <link rel="stylesheet" href="..."> to inline`)
	}

	// the packed wasm, then the scripts
	gz, err := gzipBytes(wasm)
	if err != nil {
		return nil, fmt.Errorf("dist: compressing main.wasm: %w", err)
	}
	block := `<script type="application/octet-stream" id="` + WasmElementID + `">` +
		base64.StdEncoding.EncodeToString(gz) + "</script>\n"
	sawLoader := false
	html = reScript.ReplaceAllStringFunc(html, func(tag string) string {
		name := reScript.FindStringSubmatch(tag)[1]
		src, err := inlineText(fsys, name, "</script", "<script", "<!--")
		if err != nil {
			errs = append(errs, err.Error())
			return tag
		}
		scriptHashes = append(scriptHashes, hashSource(src))
		out := "<script>" + src + "</script>"
		if name == "loader.js" {
			sawLoader = true
			out = block + out
		}
		return out
	})
	if !sawLoader {
		errs = append(errs, `index.html has no <script src="loader.js"></script> (the wasm goes just before it)`)
	}

	// the icon
	html = reIcon.ReplaceAllStringFunc(html, func(tag string) string {
		m := reIcon.FindStringSubmatch(tag)
		if strings.HasPrefix(m[2], "data:") {
			return tag
		}
		svg, err := fs.ReadFile(fsys, m[2])
		if err != nil {
			errs = append(errs, "icon: "+err.Error())
			return tag
		}
		return m[1] + "data:image/svg+xml;base64," + base64.StdEncoding.EncodeToString(svg) + m[3]
	})

	html = reDrop.ReplaceAllString(html, "")

	// the policy
	metas := reCSP.FindAllStringSubmatchIndex(html, -1)
	if len(metas) != 1 {
		errs = append(errs, fmt.Sprintf("index.html has %d Content-Security-Policy meta tags, want 1", len(metas)))
	}
	var csp string
	if len(metas) == 1 && len(errs) == 0 {
		m := metas[0]
		csp, err = fileCSP(html[m[2]:m[3]], scriptHashes, styleHashes)
		if err != nil {
			errs = append(errs, err.Error())
		} else {
			html = html[:m[2]] + csp + html[m[3]:]
		}
	}

	// nothing may still point at a file beside it
	for _, m := range reRef.FindAllStringSubmatch(html, -1) {
		if !strings.HasPrefix(m[1], "data:") {
			errs = append(errs, fmt.Sprintf("index.html refers to %q, which the single file cannot inline", m[1]))
		}
	}
	if len(errs) > 0 {
		return nil, fmt.Errorf("dist: %s", strings.Join(errs, "; "))
	}
	return &Single{HTML: []byte(html), WasmRaw: len(wasm), WasmGzip: len(gz), CSP: csp}, nil
}

// inlineText reads a text file for inlining and refuses text that would
// end or confuse the element it goes into.
func inlineText(fsys fs.FS, name string, forbidden ...string) (string, error) {
	if !fs.ValidPath(name) || path.IsAbs(name) {
		return "", fmt.Errorf("%q is not a file beside index.html", name)
	}
	b, err := fs.ReadFile(fsys, name)
	if err != nil {
		return "", err
	}
	// the browser's parser turns CR LF into LF before the CSP hashes the
	// text, so the file must hold the text as the browser will see it
	text := strings.ReplaceAll(string(b), "\r\n", "\n")
	if strings.Contains(text, "\r") {
		text = strings.ReplaceAll(text, "\r", "\n")
	}
	low := strings.ToLower(text)
	for _, f := range forbidden {
		if i := strings.Index(low, f); i >= 0 {
			line := strings.Count(low[:i], "\n") + 1
			return "", fmt.Errorf("%s:%d: holds %q, which would break the inline element", name, line, f)
		}
	}
	return text, nil
}

// hashSource is a CSP hash source for an inline element's text.
func hashSource(text string) string {
	sum := sha256.Sum256([]byte(text))
	return "'sha256-" + base64.StdEncoding.EncodeToString(sum[:]) + "'"
}

func gzipBytes(b []byte) ([]byte, error) {
	var buf bytes.Buffer
	zw, err := gzip.NewWriterLevel(&buf, gzip.BestCompression)
	if err != nil {
		return nil, err
	}
	if _, err := zw.Write(b); err != nil {
		return nil, err
	}
	if err := zw.Close(); err != nil {
		return nil, err
	}
	return buf.Bytes(), nil
}

// fileCSP turns the served page's policy into the single file's: 'self'
// goes from every directive (a directive left empty becomes 'none'),
// script-src gets the script hashes and style-src the style hashes, and
// directives that only serve a site (worker-src, manifest-src) go.
// script-src and style-src must be present, so nothing is allowed by
// accident through default-src.
func fileCSP(policy string, scripts, styles []string) (string, error) {
	var out []string
	seen := map[string]bool{}
	for _, d := range strings.Split(policy, ";") {
		fields := strings.Fields(d)
		if len(fields) == 0 {
			continue
		}
		name := strings.ToLower(fields[0])
		if name == "worker-src" || name == "manifest-src" {
			continue
		}
		seen[name] = true
		var vals []string
		for _, v := range fields[1:] {
			if v == "'self'" || v == "'none'" {
				continue
			}
			if v == "'unsafe-inline'" || v == "'unsafe-eval'" {
				return "", fmt.Errorf("the page's policy allows %s in %s; the single file will not", v, name)
			}
			vals = append(vals, v)
		}
		switch name {
		case "script-src":
			vals = append(append([]string{}, scripts...), vals...)
		case "style-src":
			vals = append(append([]string{}, styles...), vals...)
		}
		if len(vals) == 0 {
			vals = []string{"'none'"}
		}
		out = append(out, name+" "+strings.Join(vals, " "))
	}
	for _, want := range []string{"default-src", "script-src", "style-src", "connect-src"} {
		if !seen[want] {
			return "", fmt.Errorf("the page's policy has no %s", want)
		}
	}
	return strings.Join(out, "; "), nil
}
