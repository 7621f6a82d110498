package chart

import (
	"encoding/xml"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"
	"testing"
)

// allowedElements is every element the package may emit.
var allowedElements = map[string]bool{
	"svg": true, "g": true, "path": true, "line": true, "text": true, "rect": true,
	"title": true, "desc": true, "polyline": true, "polygon": true, "circle": true,
}

// node is a parsed element with its attributes and direct character data.
type node struct {
	name   string
	attr   map[string]string
	text   string
	parent *node
	kids   []*node
}

func (n *node) class(c string) bool {
	for _, f := range strings.Fields(n.attr["class"]) {
		if f == c {
			return true
		}
	}
	return false
}

// all returns every node below n (n included) that satisfies keep.
func (n *node) all(keep func(*node) bool) []*node {
	var out []*node
	var walk func(*node)
	walk = func(m *node) {
		if keep(m) {
			out = append(out, m)
		}
		for _, k := range m.kids {
			walk(k)
		}
	}
	walk(n)
	return out
}

func (n *node) byClass(c string) []*node {
	return n.all(func(m *node) bool { return m.class(c) })
}

func (n *node) byName(name string) []*node {
	return n.all(func(m *node) bool { return m.name == name })
}

func (n *node) num(t testing.TB, a string) float64 {
	t.Helper()
	v, err := strconv.ParseFloat(n.attr[a], 64)
	if err != nil {
		t.Fatalf("<%s> attribute %s=%q is not a number", n.name, a, n.attr[a])
	}
	return v
}

// parseSVG decodes the whole document with encoding/xml (strict mode) and
// returns the root. It fails on any syntax error, on an element outside
// allowedElements, on content after the root, or on a root that is not svg.
func parseSVG(t testing.TB, doc string) *node {
	t.Helper()
	root, err := parseSVGErr(doc)
	if err != nil {
		t.Fatalf("%v\ndocument:\n%s", err, head(doc))
	}
	return root
}

func head(s string) string {
	if len(s) > 3000 {
		return s[:3000] + "..."
	}
	return s
}

func parseSVGErr(doc string) (*node, error) {
	d := xml.NewDecoder(strings.NewReader(doc))
	d.Strict = true
	var root, cur *node
	for {
		tok, err := d.Token()
		if err == io.EOF {
			break
		}
		if err != nil {
			return nil, fmt.Errorf("not well-formed XML: %v", err)
		}
		switch tk := tok.(type) {
		case xml.StartElement:
			if !allowedElements[tk.Name.Local] {
				return nil, fmt.Errorf("unexpected element <%s>", tk.Name.Local)
			}
			if root != nil && cur == nil {
				return nil, fmt.Errorf("second root element <%s>", tk.Name.Local)
			}
			n := &node{name: tk.Name.Local, attr: map[string]string{}, parent: cur}
			for _, a := range tk.Attr {
				key := a.Name.Local
				if a.Name.Space != "" && key != "xmlns" {
					key = a.Name.Space + ":" + key
				}
				n.attr[key] = a.Value
			}
			if cur == nil {
				root = n
			} else {
				cur.kids = append(cur.kids, n)
			}
			cur = n
		case xml.EndElement:
			cur = cur.parent
		case xml.CharData:
			if cur != nil {
				cur.text += string(tk)
			} else if strings.TrimSpace(string(tk)) != "" {
				return nil, fmt.Errorf("text outside the root: %q", tk)
			}
		case xml.ProcInst, xml.Directive:
			return nil, fmt.Errorf("unexpected %T", tk)
		}
	}
	if root == nil || root.name != "svg" {
		return nil, fmt.Errorf("no svg root")
	}
	return root, nil
}

// pathRuns splits a path's d attribute into subpaths (one per M) of (x,y)
// pairs.
func pathRuns(t testing.TB, d string) [][][2]float64 {
	t.Helper()
	var runs [][][2]float64
	for _, part := range strings.Split(d, "M")[1:] {
		part = strings.TrimSuffix(strings.TrimSpace(part), "Z")
		part = strings.ReplaceAll(part, "L", " ")
		var run [][2]float64
		for _, pair := range strings.Fields(part) {
			xy := strings.Split(pair, ",")
			if len(xy) != 2 {
				t.Fatalf("bad coordinate pair %q in %q", pair, d)
			}
			x, err1 := strconv.ParseFloat(xy[0], 64)
			y, err2 := strconv.ParseFloat(xy[1], 64)
			if err1 != nil || err2 != nil {
				t.Fatalf("bad coordinate pair %q", pair)
			}
			run = append(run, [2]float64{x, y})
		}
		runs = append(runs, run)
	}
	return runs
}

func TestEscapeAndXMLChars(t *testing.T) {
	cases := []struct{ in, text, attr string }{
		{`a<b>&"c'`, `a&lt;b&gt;&amp;&quot;c&#39;`, `a&lt;b&gt;&amp;&quot;c&#39;`},
		{"tab\tnl\n", "tab\tnl\n", "tab&#x9;nl&#xa;"},
		{"nul\x00bell\x07", "nul\uFFFDbell\uFFFD", "nul\uFFFDbell\uFFFD"},
		{"bad\xffutf8", "bad\uFFFDutf8", "bad\uFFFDutf8"},
		{"ok é ✓ \U0001F321", "ok é ✓ \U0001F321", "ok é ✓ \U0001F321"},
		{"\uFFFE", "\uFFFD", "\uFFFD"},
	}
	for _, c := range cases {
		if got := string(appendEscaped(nil, c.in, false)); got != c.text {
			t.Errorf("text escape of %q = %q, want %q", c.in, got, c.text)
		}
		if got := string(appendEscaped(nil, c.in, true)); got != c.attr {
			t.Errorf("attr escape of %q = %q, want %q", c.in, got, c.attr)
		}
	}
}

func TestAppendCoord(t *testing.T) {
	cases := map[float64]string{
		0: "0", -0.04: "0", 12.34: "12.3", 12.36: "12.4", 100: "100", -3.05: "-3.1",
		719.99: "720", math.NaN(): "0", math.Inf(1): "0",
	}
	for v, want := range cases {
		if got := string(appendCoord(nil, v)); got != want {
			t.Errorf("appendCoord(%v) = %q, want %q", v, got, want)
		}
	}
}

func TestClip(t *testing.T) {
	if got := clip("abcdef", 4); got != "abc…" {
		t.Errorf("clip = %q", got)
	}
	if got := clip("ab", 4); got != "ab" {
		t.Errorf("clip = %q", got)
	}
	if got := clip("ééééé", 3); got != "éé…" {
		t.Errorf("clip multibyte = %q", got)
	}
}

func TestValidColor(t *testing.T) {
	good := []string{"#fff", "#E69F00", "#00000080", "teal", "rgb(1, 2, 3)", "hsla(10,50%,50%,0.5)"}
	bad := []string{"", "#ff", "#ggg", `red" onload="x`, "url(#a)", "rgb(1,2,3);x", "red;", "#12345"}
	for _, c := range good {
		if !validColor(c) {
			t.Errorf("validColor(%q) = false", c)
		}
	}
	for _, c := range bad {
		if validColor(c) {
			t.Errorf("validColor(%q) = true", c)
		}
	}
}

func TestPalette(t *testing.T) {
	// Okabe and Ito 2008, Color Universal Design: the seven colours after
	// black, in published order, then black.
	want := []string{"#E69F00", "#56B4E9", "#009E73", "#F0E442", "#0072B2", "#D55E00", "#CC79A7", "#000000"}
	if strings.Join(Palette, " ") != strings.Join(want, " ") {
		t.Fatalf("Palette = %v", Palette)
	}
	for i := 0; i < 14; i++ {
		if got := seriesColor(i); got != want[i%7] {
			t.Errorf("seriesColor(%d) = %s, want %s (black skipped)", i, got, want[i%7])
		}
	}
}
