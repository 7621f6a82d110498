package chart

import (
	"encoding/binary"
	"math"
	"strconv"
	"strings"
	"testing"
)

// monthly returns n mid-month decimal years from January 1950 (the invented
// Tessary record's start) and a warming series with a seasonal wiggle.
func monthly(n int, slopePerYear float64) (x, y []float64) {
	for i := 0; i < n; i++ {
		yr := 1950 + float64(i/12) + (float64(i%12)+0.5)/12
		x = append(x, yr)
		y = append(y, slopePerYear*(yr-1950)-0.3+0.1*math.Sin(float64(i)*0.7))
	}
	return x, y
}

func sample() Lines {
	x, y := monthly(912, 0.012)
	_, y2 := monthly(912, 0.009)
	lo := make([]float64, len(x))
	hi := make([]float64, len(x))
	tr := make([]float64, len(x))
	for i, v := range x {
		tr[i] = 0.012*(v-1950) - 0.3
		lo[i], hi[i] = tr[i]-0.08, tr[i]+0.08
	}
	return Lines{
		Title:  "Tessary surface temperature",
		XLabel: "Year",
		YLabel: "Anomaly (K)",
		Lines: []Line{
			{Name: "Tessary record A", X: x, Y: y},
			{Name: "Tessary record B", X: x, Y: y2},
			{Name: "Trend A", X: x, Y: tr, Dashed: true},
		},
		Bands: []Band{{Name: "Trend A 95 % range", X: x, Lo: lo, Hi: hi}},
		YZero: true,
	}
}

func frameBox(t testing.TB, root *node) (x0, y0, x1, y1 float64) {
	t.Helper()
	fr := root.byClass("hl-frame")
	if len(fr) != 1 {
		t.Fatalf("want one hl-frame, got %d", len(fr))
	}
	x0, y0 = fr[0].num(t, "x"), fr[0].num(t, "y")
	return x0, y0, x0 + fr[0].num(t, "width"), y0 + fr[0].num(t, "height")
}

func TestRootAndAccessibility(t *testing.T) {
	c := sample()
	c.Desc = "Two invented records warm steadily."
	root := parseSVG(t, c.SVG())
	if root.attr["xmlns"] != "http://www.w3.org/2000/svg" {
		t.Errorf("xmlns = %q", root.attr["xmlns"])
	}
	if root.attr["viewBox"] != "0 0 720 360" {
		t.Errorf("viewBox = %q, want the 720x360 default", root.attr["viewBox"])
	}
	if root.attr["role"] != "img" {
		t.Errorf("role = %q", root.attr["role"])
	}
	if root.attr["aria-label"] != c.Title {
		t.Errorf("aria-label = %q", root.attr["aria-label"])
	}
	if len(root.kids) < 2 || root.kids[0].name != "title" || root.kids[0].text != c.Title {
		t.Fatalf("first child is not <title>%s</title>", c.Title)
	}
	if root.kids[1].name != "desc" || root.kids[1].text != c.Desc {
		t.Errorf("second child is not <desc>%s</desc>", c.Desc)
	}
	for _, cls := range []string{"hl-title", "hl-xlabel", "hl-ylabel"} {
		n := root.byClass(cls)
		if len(n) != 1 {
			t.Errorf("want one %s, got %d", cls, len(n))
		}
	}
	if got := root.byClass("hl-ylabel")[0].text; got != c.YLabel {
		t.Errorf("y label = %q", got)
	}
}

func TestGeneratedDesc(t *testing.T) {
	c := sample()
	root := parseSVG(t, c.SVG())
	d := root.byName("desc")[0].text
	for _, want := range []string{"Tessary record A", "Trend A 95 % range", "Year from 1950", "Anomaly (K)"} {
		if !strings.Contains(d, want) {
			t.Errorf("generated desc %q lacks %q", d, want)
		}
	}
	root = parseSVG(t, Lines{}.SVG())
	if d := root.byName("desc")[0].text; !strings.Contains(d, "no data") {
		t.Errorf("empty chart desc = %q", d)
	}
	if root.attr["aria-label"] == "" || root.byName("title")[0].text == "" {
		t.Error("untitled chart needs a fallback accessible name")
	}
}

const hostile = `<img src=x onerror=alert(1)>`

func TestEscaping(t *testing.T) {
	x, y := monthly(24, 0.01)
	c := Lines{
		Title:  `Title & "quotes" ` + hostile,
		XLabel: "</text><script>x</script>",
		YLabel: "y ]]> <!-- -->",
		Desc:   "desc <b>bold</b>",
		Width:  1000, // room for the whole name in the legend
		Lines: []Line{
			{Name: hostile, X: x, Y: y, Color: `red" onmouseover="alert(1)`},
			{Name: "ctl\x00\x1b bad\xff utf8", X: x, Y: y},
		},
		Bands: []Band{{Name: "'band' & <co>", X: x, Lo: y, Hi: y}},
	}
	doc := c.SVG()
	root := parseSVG(t, doc) // fails on any element outside the allowed set
	if strings.Contains(doc, "<img") || strings.Contains(doc, "<script") || strings.Contains(doc, "onmouseover=") {
		t.Fatalf("markup leaked into the document")
	}
	if root.attr["aria-label"] != c.Title || root.byName("title")[0].text != c.Title {
		t.Errorf("title not carried literally: %q", root.attr["aria-label"])
	}
	if got := root.byClass("hl-xlabel")[0].text; got != c.XLabel {
		t.Errorf("x label = %q", got)
	}
	if got := root.byName("desc")[0].text; got != c.Desc {
		t.Errorf("desc = %q", got)
	}
	// the hostile name is character data in the legend and the exact value of
	// data-series on the drawn path
	var legendText []string
	for _, n := range root.byClass("hl-legend-text") {
		legendText = append(legendText, n.text)
	}
	if len(legendText) != 3 || legendText[0] != hostile {
		t.Errorf("legend texts = %q", legendText)
	}
	paths := root.byClass("hl-line")
	if len(paths) != 2 || paths[0].attr["data-series"] != hostile {
		t.Fatalf("data-series not found escaped on the line path")
	}
	// a colour that tries to break out of its attribute is replaced
	if s := paths[0].attr["stroke"]; s != Palette[0] {
		t.Errorf("stroke = %q, want the first palette colour", s)
	}
	// forbidden characters became U+FFFD, not dropped into the document raw
	if got := legendText[1]; got != "ctl\uFFFD\uFFFD bad\uFFFD utf8" {
		t.Errorf("control characters: legend = %q", got)
	}
}

func TestGapsMakeSeparateRuns(t *testing.T) {
	x, y := monthly(60, 0.01)
	y[10] = math.NaN()
	y[11] = math.NaN()
	y[30] = math.Inf(1)
	x[45] = math.NaN() // missing time is a gap too
	y[50] = math.NaN() // isolates point 51
	y[52] = math.NaN()
	c := Lines{Lines: []Line{{Name: "gappy", X: x, Y: y}}}
	root := parseSVG(t, c.SVG())
	paths := root.byClass("hl-line")
	if len(paths) != 1 {
		t.Fatalf("want 1 path, got %d", len(paths))
	}
	d := paths[0].attr["d"]
	// runs: 0-9, 12-29, 31-44, 46-49, 53-59 (51 alone becomes a marker)
	if got := strings.Count(d, "M"); got != 5 {
		t.Errorf("path has %d moves, want 5: %s", got, d)
	}
	wantLens := []int{10, 18, 14, 4, 7}
	runs := pathRuns(t, d)
	for i, r := range runs {
		if i < len(wantLens) && len(r) != wantLens[i] {
			t.Errorf("run %d has %d points, want %d", i, len(r), wantLens[i])
		}
	}
	if n := len(root.byClass("hl-point")); n != 1 {
		t.Errorf("isolated point: %d markers, want 1", n)
	}
}

func TestBandGaps(t *testing.T) {
	x, y := monthly(40, 0.01)
	lo := make([]float64, len(y))
	hi := make([]float64, len(y))
	for i := range y {
		lo[i], hi[i] = y[i]-0.1, y[i]+0.1
	}
	lo[15] = math.NaN()
	hi[25] = math.NaN()
	hi[27] = math.NaN() // isolates 26
	c := Lines{Bands: []Band{{Name: "range", X: x, Lo: lo, Hi: hi}}}
	root := parseSVG(t, c.SVG())
	areas := root.byClass("hl-band")
	if len(areas) != 1 {
		t.Fatalf("want 1 band path, got %d", len(areas))
	}
	d := areas[0].attr["d"]
	if m, z := strings.Count(d, "M"), strings.Count(d, "Z"); m != 3 || z != 3 {
		t.Errorf("band has %d moves and %d closes, want 3 each", m, z)
	}
	// each closed run goes out along Hi and back along Lo: 2 points per time
	for i, r := range pathRuns(t, d) {
		want := []int{30, 18, 24}[i]
		if len(r) != want {
			t.Errorf("band run %d has %d points, want %d", i, len(r), want)
		}
	}
	if n := len(root.byClass("hl-band-point")); n != 1 {
		t.Errorf("isolated band point: %d strokes, want 1", n)
	}
}

func TestSinglePointAndConstant(t *testing.T) {
	c := Lines{Lines: []Line{{Name: "one", X: []float64{2000.5}, Y: []float64{0.3}}}}
	root := parseSVG(t, c.SVG())
	if n := len(root.byClass("hl-line")); n != 0 {
		t.Errorf("single point drew %d paths", n)
	}
	if n := len(root.byClass("hl-point")); n != 1 {
		t.Fatalf("single point drew %d markers, want 1", n)
	}
	x0, y0, x1, y1 := frameBox(t, root)
	p := root.byClass("hl-point")[0]
	cx, cy := p.num(t, "cx"), p.num(t, "cy")
	if math.Abs(cx-(x0+x1)/2) > 1 || math.Abs(cy-(y0+y1)/2) > 1 {
		t.Errorf("single point at (%g,%g), want the centre of (%g,%g)-(%g,%g)", cx, cy, x0, y0, x1, y1)
	}
	if len(root.byClass("hl-xtick")) < 2 || len(root.byClass("hl-ytick")) < 2 {
		t.Error("single point: axes need at least two ticks each")
	}

	// constant series: padded range, line drawn across the middle
	for _, v := range []float64{0, 14.2, -3e-5, 1e12} {
		x, _ := monthly(24, 0)
		y := make([]float64, len(x))
		for i := range y {
			y[i] = v
		}
		root := parseSVG(t, Lines{Lines: []Line{{X: x, Y: y}}}.SVG())
		_, y0, _, y1 := frameBox(t, root)
		runs := pathRuns(t, root.byClass("hl-line")[0].attr["d"])
		if py := runs[0][0][1]; math.Abs(py-(y0+y1)/2) > 1 {
			t.Errorf("constant %g drawn at y=%g, want mid-plot %g", v, py, (y0+y1)/2)
		}
		ticks := root.byClass("hl-ytick")
		if len(ticks) < 2 {
			t.Fatalf("constant %g: %d y ticks", v, len(ticks))
		}
		lo, _ := strconv.ParseFloat(ticks[0].text, 64)
		hi, _ := strconv.ParseFloat(ticks[len(ticks)-1].text, 64)
		if !(lo <= v && v <= hi) || lo == hi {
			t.Errorf("constant %g: y ticks %q..%q do not bracket it", v, ticks[0].text, ticks[len(ticks)-1].text)
		}
	}
}

func TestNoData(t *testing.T) {
	nan := math.NaN()
	cases := map[string]Lines{
		"zero value": {},
		"empty series": {Title: "t", Lines: []Line{{Name: "a"}},
			Bands: []Band{{Name: "b"}}},
		"all NaN": {Lines: []Line{{Name: "a", X: []float64{1, 2, 3}, Y: []float64{nan, nan, nan}}}},
		"all Inf": {Lines: []Line{{X: []float64{math.Inf(1), 2}, Y: []float64{1, math.Inf(-1)}}}},
		"ragged":  {Lines: []Line{{X: []float64{1, 2, 3}}, {Y: []float64{1, 2}}}, Bands: []Band{{X: []float64{1}, Lo: []float64{1}}}},
	}
	for name, c := range cases {
		root := parseSVG(t, c.SVG())
		if n := len(root.byClass("hl-nodata")); n != 1 {
			t.Errorf("%s: %d no-data notes, want 1", name, n)
		}
		if n := len(root.byClass("hl-line")) + len(root.byClass("hl-xtick")); n != 0 {
			t.Errorf("%s: drew %d lines/ticks with no data", name, n)
		}
	}
	// ragged input with some overlap draws the overlap only
	c := Lines{Lines: []Line{{X: []float64{2000, 2001, 2002, 2003}, Y: []float64{1, 2}}}}
	root := parseSVG(t, c.SVG())
	if runs := pathRuns(t, root.byClass("hl-line")[0].attr["d"]); len(runs) != 1 || len(runs[0]) != 2 {
		t.Errorf("ragged: runs %v, want one run of 2 points", runs)
	}
}

func TestDataInsidePlot(t *testing.T) {
	c := sample()
	c.Lines[0].Markers = true
	root := parseSVG(t, c.SVG())
	x0, y0, x1, y1 := frameBox(t, root)
	const tol = 0.11 // coordinates are rounded to 0.1
	var n int
	for _, p := range append(root.byClass("hl-line"), root.byClass("hl-band")...) {
		for _, r := range pathRuns(t, p.attr["d"]) {
			for _, pt := range r {
				n++
				if pt[0] < x0-tol || pt[0] > x1+tol || pt[1] < y0-tol || pt[1] > y1+tol {
					t.Fatalf("point %v outside the plot (%g,%g)-(%g,%g)", pt, x0, y0, x1, y1)
				}
			}
		}
	}
	if n < 4*912 {
		t.Errorf("only %d points drawn", n)
	}
	if m := len(root.byClass("hl-point")); m != 912 {
		t.Errorf("Markers: %d dots, want 912", m)
	}
	// the x axis runs exactly over the data span
	runs := pathRuns(t, root.byClass("hl-line")[0].attr["d"])
	first, last := runs[0][0], runs[0][len(runs[0])-1]
	if math.Abs(first[0]-x0) > tol || math.Abs(last[0]-x1) > tol {
		t.Errorf("first/last x %g/%g, want frame edges %g/%g", first[0], last[0], x0, x1)
	}
}

func TestAxisTicks(t *testing.T) {
	root := parseSVG(t, sample().SVG())
	x0, _, x1, _ := frameBox(t, root)
	years := root.byClass("hl-xtick")
	if len(years) < 3 {
		t.Fatalf("only %d x ticks", len(years))
	}
	var vals []float64
	for _, n := range years {
		v, err := strconv.Atoi(n.text)
		if err != nil {
			t.Fatalf("x tick %q is not a whole year", n.text)
		}
		if v%10 != 0 {
			t.Errorf("x tick %d is not a round year", v)
		}
		vals = append(vals, float64(v))
		if x := n.num(t, "x"); x < x0 || x > x1 {
			t.Errorf("x tick %d at %g outside the plot", v, x)
		}
		if v < 1950 || v > 2026 {
			t.Errorf("x tick %d outside the data span 1950-2026", v)
		}
	}
	// tick positions are linear in the tick values
	for i := 2; i < len(years); i++ {
		a, b, c := years[i-2].num(t, "x"), years[i-1].num(t, "x"), years[i].num(t, "x")
		if math.Abs((c-b)-(b-a)) > 0.2 {
			t.Errorf("x ticks unevenly placed: %g %g %g", a, b, c)
		}
	}
	for _, n := range root.byClass("hl-ytick") {
		s := n.text
		if _, err := strconv.ParseFloat(s, 64); err != nil {
			t.Errorf("y tick %q does not parse", s)
		}
		if strings.Contains(s, ".") && strings.HasSuffix(s, "0") || len(s) > 6 {
			t.Errorf("y tick %q carries noise", s)
		}
	}

	// a short span: months as decimal years with a round step
	x, y := monthly(12, 0.1)
	root = parseSVG(t, Lines{Lines: []Line{{X: x, Y: y}}}.SVG())
	ticks := root.byClass("hl-xtick")
	if len(ticks) < 2 {
		t.Fatalf("one-year chart: %d ticks", len(ticks))
	}
	for _, n := range ticks {
		v, err := strconv.ParseFloat(n.text, 64)
		if err != nil || v < 1950 || v > 1951 || len(n.text) > 7 {
			t.Errorf("one-year tick %q", n.text)
		}
	}
}

func TestLegendOutsidePlot(t *testing.T) {
	for _, w := range []int{0, 900, 400, 200} {
		c := sample()
		c.Width = w
		c.Lines = append(c.Lines, Line{Name: strings.Repeat("a very long series name ", 6), X: c.Lines[0].X, Y: c.Lines[0].Y})
		root := parseSVG(t, c.SVG())
		x0, y0, x1, y1 := frameBox(t, root)
		items := root.byClass("hl-legend-item")
		if len(items) != 5 {
			t.Fatalf("width %d: %d legend items, want 5", w, len(items))
		}
		vbW, _ := strconv.ParseFloat(strings.Fields(root.attr["viewBox"])[2], 64)
		for _, it := range items {
			for _, k := range it.kids {
				var bx0, by0, bx1, by1 float64 // bounding box estimate
				switch k.name {
				case "rect":
					bx0, by0 = k.num(t, "x"), k.num(t, "y")
					bx1, by1 = bx0+k.num(t, "width"), by0+k.num(t, "height")
				case "line":
					bx0, by0, bx1, by1 = k.num(t, "x1"), k.num(t, "y1"), k.num(t, "x2"), k.num(t, "y2")
				case "text":
					bx0, by1 = k.num(t, "x"), k.num(t, "y")+3
					by0, bx1 = by1-fontTick, bx0+textWidth(k.text, fontTick)
				default:
					continue
				}
				right := bx0 >= x1
				above := by1 <= y0
				if !right && !above {
					t.Errorf("width %d: legend %s (%g,%g)-(%g,%g) overlaps plot (%g,%g)-(%g,%g)",
						w, k.name, bx0, by0, bx1, by1, x0, y0, x1, y1)
				}
				if bx1 > vbW+0.5 {
					t.Errorf("width %d: legend %s runs off the right edge (%g > %g)", w, k.name, bx1, vbW)
				}
			}
		}
		// the long name is clipped for display and given in full as a tooltip
		last := items[len(items)-2]
		if tt := last.byName("title"); len(tt) != 1 || tt[0].text != c.Lines[3].Name {
			t.Errorf("width %d: clipped legend entry lacks its full name", w)
		}
	}
}

func TestColours(t *testing.T) {
	x, y := monthly(24, 0.01)
	c := Lines{
		Lines: []Line{
			{Name: "a", X: x, Y: y},
			{Name: "b", X: x, Y: y, Color: "#123456"},
			{Name: "c", X: x, Y: y},
		},
		Bands: []Band{
			{Name: "c", X: x, Lo: y, Hi: y},     // takes line c's colour
			{Name: "other", X: x, Lo: y, Hi: y}, // next palette colour
			{Name: "own", X: x, Lo: y, Hi: y, Color: "teal", Opacity: 7},
		},
	}
	root := parseSVG(t, c.SVG())
	lines := root.byClass("hl-line")
	wantL := []string{Palette[0], "#123456", Palette[1]}
	for i, p := range lines {
		if p.attr["stroke"] != wantL[i] {
			t.Errorf("line %d stroke %s, want %s", i, p.attr["stroke"], wantL[i])
		}
	}
	bands := root.byClass("hl-band")
	wantB := []string{Palette[1], Palette[2], "teal"}
	for i, p := range bands {
		if p.attr["fill"] != wantB[i] {
			t.Errorf("band %d fill %s, want %s", i, p.attr["fill"], wantB[i])
		}
	}
	if op := bands[2].attr["fill-opacity"]; op != "1" {
		t.Errorf("opacity 7 clamped to %q, want 1", op)
	}
	if op := bands[0].attr["fill-opacity"]; op != "0.2" {
		t.Errorf("default opacity %q", op)
	}
	// ten lines: the palette cycles and black never appears
	c = Lines{}
	for i := 0; i < 10; i++ {
		c.Lines = append(c.Lines, Line{X: x, Y: y})
	}
	for i, p := range parseSVG(t, c.SVG()).byClass("hl-line") {
		if s := p.attr["stroke"]; s != Palette[i%7] {
			t.Errorf("auto colour %d = %s, want %s", i, s, Palette[i%7])
		}
	}
}

func TestLineStyle(t *testing.T) {
	x, y := monthly(24, 0.01)
	c := Lines{Lines: []Line{
		{X: x, Y: y, Dashed: true, Width: 3},
		{X: x, Y: y, Width: math.NaN()},
		{X: x, Y: y, Width: 1e9},
	}}
	lines := parseSVG(t, c.SVG()).byClass("hl-line")
	if lines[0].attr["stroke-dasharray"] == "" || lines[1].attr["stroke-dasharray"] != "" {
		t.Error("dash attribute wrong")
	}
	for i, want := range []string{"3", "1.5", "20"} {
		if got := lines[i].attr["stroke-width"]; got != want {
			t.Errorf("line %d stroke-width %q, want %q", i, got, want)
		}
	}
}

func TestYZero(t *testing.T) {
	x, y := monthly(120, 0.05) // -0.4 to 0.3: crosses zero
	c := Lines{Lines: []Line{{X: x, Y: y}}, YZero: true}
	root := parseSVG(t, c.SVG())
	z := root.byClass("hl-zero")
	if len(z) != 1 {
		t.Fatalf("want a zero line, got %d", len(z))
	}
	// its height matches the interpolated position of 0 between the y ticks
	ticks := root.byClass("hl-ytick")
	a, _ := strconv.ParseFloat(ticks[0].text, 64)
	b, _ := strconv.ParseFloat(ticks[len(ticks)-1].text, 64)
	ya, yb := ticks[0].num(t, "y")-4, ticks[len(ticks)-1].num(t, "y")-4
	want := ya + (0-a)/(b-a)*(yb-ya)
	if got := z[0].num(t, "y1"); math.Abs(got-want) > 0.3 {
		t.Errorf("zero line at y=%g, want %g", got, want)
	}
	c.YZero = false
	if n := len(parseSVG(t, c.SVG()).byClass("hl-zero")); n != 0 {
		t.Error("zero line drawn without YZero")
	}
	for i := range y {
		y[i] += 5 // all positive: zero out of range
	}
	c.YZero = true
	if n := len(parseSVG(t, c.SVG()).byClass("hl-zero")); n != 0 {
		t.Error("zero line drawn outside the y range")
	}
}

func TestSizes(t *testing.T) {
	c := sample()
	c.Width, c.Height = 1000, 500
	root := parseSVG(t, c.SVG())
	if root.attr["viewBox"] != "0 0 1000 500" || root.attr["width"] != "1000" {
		t.Errorf("size not applied: %q", root.attr["viewBox"])
	}
	for _, wh := range [][2]int{{-5, -5}, {1, 1}, {1 << 30, 1 << 30}} {
		c.Width, c.Height = wh[0], wh[1]
		root := parseSVG(t, c.SVG())
		f := strings.Fields(root.attr["viewBox"])
		w, _ := strconv.Atoi(f[2])
		h, _ := strconv.Atoi(f[3])
		if w < MinWidth || h < MinHeight || w > MaxSize || h > MaxSize {
			t.Errorf("size %v gave viewBox %q", wh, root.attr["viewBox"])
		}
	}
}

func TestCompactOutput(t *testing.T) {
	x, y := monthly(912, 0.012)
	doc := Lines{Lines: []Line{{Name: "a", X: x, Y: y}}}.SVG()
	root := parseSVG(t, doc)
	d := root.byClass("hl-line")[0].attr["d"]
	if len(d) > 20000 {
		t.Errorf("912-point path is %d bytes", len(d))
	}
	if len(doc) > 40000 {
		t.Errorf("912-point chart is %d bytes, want well under 40 KB", len(doc))
	}
	for _, pair := range strings.Fields(strings.NewReplacer("M", " ", "L", " ").Replace(d)) {
		for _, v := range strings.Split(pair, ",") {
			if i := strings.IndexByte(v, '.'); i >= 0 && len(v)-i-1 > 1 {
				t.Fatalf("coordinate %q has more than one decimal", v)
			}
		}
	}
}

func TestDeterministic(t *testing.T) {
	c := sample()
	a := c.SVG()
	for i := 0; i < 5; i++ {
		if b := c.SVG(); b != a {
			t.Fatal("same input gave different output")
		}
	}
	// a deep copy gives the same bytes too
	cp := c
	cp.Lines = nil
	for _, l := range c.Lines {
		l.X = append([]float64(nil), l.X...)
		l.Y = append([]float64(nil), l.Y...)
		cp.Lines = append(cp.Lines, l)
	}
	if cp.SVG() != a {
		t.Fatal("copied input gave different output")
	}
	// and the input is not modified
	x, y := monthly(12, 0.1)
	y[3] = math.NaN()
	x0, y0 := append([]float64(nil), x...), append([]float64(nil), y...)
	_ = Lines{Lines: []Line{{X: x, Y: y}}}.SVG()
	for i := range x {
		if x[i] != x0[i] || !(y[i] == y0[i] || math.IsNaN(y[i]) && math.IsNaN(y0[i])) {
			t.Fatal("SVG modified its input")
		}
	}
}

// floats decodes b as little-endian float64s (any bit pattern: NaN, Inf,
// subnormals, huge values).
func floats(b []byte) []float64 {
	var out []float64
	for len(b) >= 8 {
		out = append(out, math.Float64frombits(binary.LittleEndian.Uint64(b)))
		b = b[8:]
	}
	return out
}

func fbytes(v ...float64) []byte {
	var b []byte
	for _, f := range v {
		b = binary.LittleEndian.AppendUint64(b, math.Float64bits(f))
	}
	return b
}

func FuzzLines(f *testing.F) {
	nan, inf := math.NaN(), math.Inf(1)
	f.Add(fbytes(1950, 0.1, 1951, 0.2, 1952, nan, 1953, 0.4), fbytes(0, 1, 2), "a", 0, 0, true)
	f.Add(fbytes(inf, -inf, nan, nan, 1e308, -1e308, 5e-324, 0), fbytes(1e308, -1e308), hostile, 100, 50, true)
	f.Add(fbytes(2000, 1, 2000, 1, 2000, 1), fbytes(nan), "\x00\xff", -1, 1<<20, false)
	f.Add(fbytes(-1.7e308, 1.7e308, 1.7e308, -1.7e308), fbytes(1, 1e-300, 2, -1e-300), "x", 720, 360, true)
	f.Add([]byte{}, []byte{1, 2, 3}, "", 0, 0, false)
	f.Fuzz(func(t *testing.T, a, b []byte, name string, w, h int, zero bool) {
		fa, fb := floats(a), floats(b)
		// interleaved (x,y) pairs for one line; b feeds a second line and a band
		var x1, y1 []float64
		for i := 0; i+1 < len(fa); i += 2 {
			x1 = append(x1, fa[i])
			y1 = append(y1, fa[i+1])
		}
		c := Lines{
			Title: name, XLabel: name, YLabel: name, Desc: "",
			Width: w, Height: h, YZero: zero,
			Lines: []Line{
				{Name: name, X: x1, Y: y1, Markers: len(fa)%3 == 0, Width: float64(len(b)) - 3},
				{Name: name + "2", X: fa, Y: fb, Dashed: true, Color: name},
			},
			Bands: []Band{{Name: name, X: fa, Lo: fb, Hi: y1, Opacity: float64(len(a)) / 7}},
		}
		doc := c.SVG()
		root, err := parseSVGErr(doc)
		if err != nil {
			t.Fatalf("%v\n%s", err, head(doc))
		}
		if root.attr["role"] != "img" {
			t.Fatal("root lost its role")
		}
		if c.SVG() != doc {
			t.Fatal("not deterministic")
		}
		for _, p := range root.byName("path") {
			if strings.Contains(p.attr["d"], "NaN") || strings.Contains(p.attr["d"], "Inf") {
				t.Fatalf("non-finite coordinate in %q", p.attr["d"])
			}
		}
	})
}

func BenchmarkLines912x4(b *testing.B) {
	c := sample()
	x := c.Lines[0].X
	_, y := monthly(912, 0.005)
	c.Lines = append(c.Lines, Line{Name: "Tessary record C", X: x, Y: y})
	b.ReportAllocs()
	var n int
	for b.Loop() {
		n = len(c.SVG())
	}
	b.ReportMetric(float64(n), "bytes/chart")
}
