package distbuild

import (
	"bytes"
	"compress/gzip"
	"crypto/sha256"
	"encoding/base64"
	"io"
	"regexp"
	"strings"
	"testing"
	"testing/fstest"
)

const testIndex = `<!doctype html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta http-equiv="Content-Security-Policy" content="default-src 'self'; script-src 'self' 'wasm-unsafe-eval'; style-src 'self'; img-src 'self' data:; connect-src 'self'; worker-src 'self'; manifest-src 'self'; object-src 'none'">
<title>T</title>
<link rel="icon" type="image/svg+xml" href="favicon.svg">
<link rel="manifest" href="manifest.webmanifest">
<link rel="preload" href="main.wasm" as="fetch" type="application/wasm" crossorigin>
<link rel="stylesheet" href="app.css">
</head>
<body>
<p>x</p>
<script src="helper.js"></script>
<script src="loader.js"></script>
</body>
</html>
`

// testFS is a small static directory; the wasm bytes are arbitrary (the
// builder does not look inside them).
func testFS() fstest.MapFS {
	wasm := bytes.Repeat([]byte("\x00asm\x01\x00\x00\x00 some bytes "), 500)
	return fstest.MapFS{
		"index.html":           {Data: []byte(testIndex)},
		"app.css":              {Data: []byte("body { color: #123; }\r\n/* a & b */\r\n")},
		"helper.js":            {Data: []byte("window.h = function (a, b) { return a < b && b > 0; };\n")},
		"loader.js":            {Data: []byte("var el = document.getElementById(\"hl-wasm-gz\");\n")},
		"vugu-render.js":       {Data: []byte("// r\n")},
		"wasm_exec.js":         {Data: []byte("// w\n")},
		"main.wasm":            {Data: wasm},
		"favicon.svg":          {Data: []byte(`<svg xmlns="http://www.w3.org/2000/svg"/>`)},
		"manifest.webmanifest": {Data: []byte(`{"name":"T"}`)},
		"embed.html":           {Data: []byte("<!doctype html><p>e</p>\n")},
		"embed.js":             {Data: []byte("// e\n")},
		"sw.template.js":       {Data: []byte("const BUILD = \"__HL_BUILD__\";\nconst SHELL = __HL_SHELL__;\n")},
	}
}

func TestWorkerStampsBuildAndShell(t *testing.T) {
	fsys := testFS()
	src, id, err := Worker(fsys)
	if err != nil {
		t.Fatal(err)
	}
	if !regexp.MustCompile(`^[0-9a-f]{16}$`).MatchString(id) {
		t.Errorf("build id %q is not 16 hex digits", id)
	}
	s := string(src)
	if !strings.Contains(s, `const BUILD = "`+id+`";`) {
		t.Errorf("worker lacks its build id:\n%s", s)
	}
	if !strings.Contains(s, `const SHELL = ["index.html","loader.js",`) || strings.Contains(s, "__HL_") {
		t.Errorf("worker's shell list not stamped:\n%s", s)
	}

	// any shell file changing changes the id; the template does not count
	for _, name := range Shell {
		changed := testFS()
		changed[name] = &fstest.MapFile{Data: append(append([]byte{}, changed[name].Data...), ' ')}
		id2, err := BuildID(changed)
		if err != nil {
			t.Fatal(err)
		}
		if id2 == id {
			t.Errorf("build id unchanged after %s changed", name)
		}
	}
	same := testFS()
	same["sw.template.js"] = &fstest.MapFile{Data: []byte("// other\nconst BUILD = \"__HL_BUILD__\";\nconst SHELL = __HL_SHELL__;\n")}
	if _, id3, err := Worker(same); err != nil || id3 != id {
		t.Errorf("build id %q (err %v) after a template edit, want %q", id3, err, id)
	}
}

func TestWorkerErrors(t *testing.T) {
	for name, edit := range map[string]func(fstest.MapFS){
		"no placeholder": func(f fstest.MapFS) {
			f["sw.template.js"] = &fstest.MapFile{Data: []byte("const SHELL = __HL_SHELL__;")}
		},
		"two placeholders": func(f fstest.MapFS) {
			f["sw.template.js"] = &fstest.MapFile{Data: []byte("__HL_BUILD__ __HL_BUILD__ __HL_SHELL__")}
		},
		"shell file absent": func(f fstest.MapFS) { delete(f, "favicon.svg") },
		"no template":       func(f fstest.MapFS) { delete(f, "sw.template.js") },
	} {
		f := testFS()
		edit(f)
		if _, _, err := Worker(f); err == nil {
			t.Errorf("%s: no error", name)
		}
	}
}

var (
	reInlineScript = regexp.MustCompile(`(?s)<script>(.*?)</script>`)
	reInlineStyle  = regexp.MustCompile(`(?s)<style>(.*?)</style>`)
	reBlock        = regexp.MustCompile(`<script type="application/octet-stream" id="hl-wasm-gz">([A-Za-z0-9+/=]*)</script>\n<script>`)
	reMetaCSP      = regexp.MustCompile(`content="([^"]*)"`)
)

func hashOf(s string) string {
	sum := sha256.Sum256([]byte(s))
	return "'sha256-" + base64.StdEncoding.EncodeToString(sum[:]) + "'"
}

func TestSingleFile(t *testing.T) {
	fsys := testFS()
	s, err := SingleFile(fsys)
	if err != nil {
		t.Fatal(err)
	}
	html := string(s.HTML)

	// every script and the style inline, each allowed by its own hash
	scripts := reInlineScript.FindAllStringSubmatch(html, -1)
	if len(scripts) != 2 {
		t.Fatalf("%d inline scripts, want 2 (helper, loader):\n%s", len(scripts), html)
	}
	if scripts[0][1] != string(fsys["helper.js"].Data) || scripts[1][1] != string(fsys["loader.js"].Data) {
		t.Errorf("inline scripts are not the files, in order: %q", scripts)
	}
	styles := reInlineStyle.FindAllStringSubmatch(html, -1)
	if len(styles) != 1 || styles[0][1] != "body { color: #123; }\n/* a & b */\n" {
		t.Errorf("inline style = %q, want app.css with LF line ends", styles)
	}
	csp := s.CSP
	if !strings.Contains(html, `<meta http-equiv="Content-Security-Policy" content="`+csp+`">`) {
		t.Errorf("file does not carry the policy %q", csp)
	}
	want := "default-src 'none'; script-src " + hashOf(scripts[0][1]) + " " + hashOf(scripts[1][1]) +
		" 'wasm-unsafe-eval'; style-src " + hashOf(styles[0][1]) +
		"; img-src data:; connect-src 'none'; object-src 'none'"
	if csp != want {
		t.Errorf("policy\n%s\nwant\n%s", csp, want)
	}

	// the wasm, packed just before the loader, unpacks to the same bytes
	m := reBlock.FindStringSubmatch(html)
	if m == nil {
		t.Fatalf("no wasm data block before the loader:\n%.2000s", html)
	}
	gz, err := base64.StdEncoding.DecodeString(m[1])
	if err != nil {
		t.Fatal(err)
	}
	zr, err := gzip.NewReader(bytes.NewReader(gz))
	if err != nil {
		t.Fatal(err)
	}
	raw, err := io.ReadAll(zr)
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(raw, fsys["main.wasm"].Data) {
		t.Error("unpacked wasm differs from main.wasm")
	}
	if s.WasmRaw != len(raw) || s.WasmGzip != len(gz) || s.WasmGzip >= s.WasmRaw {
		t.Errorf("sizes raw %d gzip %d, want %d and %d (smaller)", s.WasmRaw, s.WasmGzip, len(raw), len(gz))
	}

	// nothing left that points at a file; the icon is a data URL
	for _, gone := range []string{`href="app.css"`, `src="loader.js"`, `rel="manifest"`, `rel="preload"`, `href="favicon.svg"`} {
		if strings.Contains(html, gone) {
			t.Errorf("file still holds %s", gone)
		}
	}
	icon := `href="data:image/svg+xml;base64,` + base64.StdEncoding.EncodeToString(fsys["favicon.svg"].Data) + `"`
	if !strings.Contains(html, icon) {
		t.Error("icon not inlined as a data URL")
	}

	// the same input gives the same bytes
	s2, err := SingleFile(fsys)
	if err != nil || !bytes.Equal(s2.HTML, s.HTML) {
		t.Errorf("a second build differs (err %v)", err)
	}
}

func TestSingleFileRefuses(t *testing.T) {
	for _, c := range []struct {
		name string
		edit func(fstest.MapFS)
		want string // in the error
	}{
		{"script ends the element", func(f fstest.MapFS) {
			f["helper.js"] = &fstest.MapFile{Data: []byte("// one\nvar s = \"</SCRIPT>\";\n")}
		}, `helper.js:2: holds "</script"`},
		{"style ends the element", func(f fstest.MapFS) {
			f["app.css"] = &fstest.MapFile{Data: []byte("a{}\n</style>")}
		}, `app.css:2`},
		{"an image beside the page", func(f fstest.MapFS) {
			f["index.html"] = &fstest.MapFile{Data: []byte(strings.Replace(testIndex, "<p>x</p>", `<p><img src="logo.png"></p>`, 1))}
		}, `"logo.png"`},
		{"no loader", func(f fstest.MapFS) {
			f["index.html"] = &fstest.MapFile{Data: []byte(strings.Replace(testIndex, `<script src="loader.js"></script>`, "", 1))}
		}, `loader.js`},
		{"missing script file", func(f fstest.MapFS) { delete(f, "helper.js") }, `helper.js`},
		{"unsafe-inline in the policy", func(f fstest.MapFS) {
			f["index.html"] = &fstest.MapFile{Data: []byte(strings.Replace(testIndex, "style-src 'self'", "style-src 'self' 'unsafe-inline'", 1))}
		}, `'unsafe-inline'`},
		{"no policy", func(f fstest.MapFS) {
			f["index.html"] = &fstest.MapFile{Data: []byte(reMetaCSP.ReplaceAllString(strings.Replace(testIndex, `http-equiv="Content-Security-Policy" `, "", 1), `content=""`))}
		}, `Content-Security-Policy`},
		{"no wasm", func(f fstest.MapFS) { delete(f, "main.wasm") }, `main.wasm`},
	} {
		f := testFS()
		c.edit(f)
		_, err := SingleFile(f)
		if err == nil {
			t.Errorf("%s: no error", c.name)
			continue
		}
		if !strings.Contains(err.Error(), c.want) {
			t.Errorf("%s: error %q does not mention %s", c.name, err, c.want)
		}
	}
}
