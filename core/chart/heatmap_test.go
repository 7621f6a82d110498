package chart

import (
	"math"
	"strconv"
	"strings"
	"testing"
)

// trendGrid returns a triangular grid like the page's trend grid for the
// invented Tessary record: windows starting each year from 1950 and ending
// at least minLen years later, up to 2025, centred on mid-year. Values rise
// with the start year and wobble; cells are marked when |value| > 0.1.
func trendGrid(minLen int) []HeatCell {
	var cells []HeatCell
	for s := 1950; s <= 2025-minLen; s++ {
		for e := s + minLen; e <= 2025; e++ {
			v := 0.004*float64(s-1950) - 0.05 + 0.2*math.Sin(float64(s*e)/50)/float64(e-s)
			cells = append(cells, HeatCell{
				X: float64(s) + 0.5, Y: float64(e) + 0.5, Value: v, Marked: math.Abs(v) > 0.1,
				Key: strconv.Itoa(s) + ":" + strconv.Itoa(e),
			})
		}
	}
	return cells
}

func sampleHeatmap() Heatmap {
	return Heatmap{
		Title: "Tessary trend grid", XLabel: "Window start", YLabel: "Window end",
		ValueLabel: "Trend (K per decade)", Cells: trendGrid(10),
		MarkLabel: "interval excludes zero", Width: 720, Height: 560,
	}
}

// rgb parses #RRGGBB.
func rgb(t testing.TB, c string) [3]float64 {
	t.Helper()
	if len(c) != 7 || c[0] != '#' {
		t.Fatalf("colour %q is not #RRGGBB", c)
	}
	var out [3]float64
	for i := 0; i < 3; i++ {
		v, err := strconv.ParseUint(c[1+2*i:3+2*i], 16, 8)
		if err != nil {
			t.Fatalf("colour %q: %v", c, err)
		}
		out[i] = float64(v)
	}
	return out
}

// towards returns how far colour c has moved from white towards end (a
// share in [0,1]), from the channel with the widest range; every channel
// must agree with it up to rounding to whole steps.
func towards(t testing.TB, c, end string) float64 {
	t.Helper()
	a, e := rgb(t, c), rgb(t, end)
	share, tol, span := 0.0, 0.0, 0.0
	for i := 0; i < 3; i++ {
		if e[i] == 255 {
			if a[i] != 255 {
				t.Fatalf("%s: channel %d should stay 255 on the way to %s", c, i, end)
			}
			continue
		}
		s, st := (255-a[i])/(255-e[i]), 0.5/(255-e[i])
		if span > 0 && math.Abs(s-share) > tol+st+1e-9 {
			t.Fatalf("%s is not on the line from white to %s (%g vs %g)", c, end, s, share)
		}
		if 255-e[i] > span {
			share, tol, span = s, st, 255-e[i]
		}
	}
	return share
}

func TestDivergingColor(t *testing.T) {
	// the ends are the two Okabe-Ito colours (Okabe and Ito 2008), the
	// centre white
	for _, c := range []float64{0, 0.17, -3, 1e6} {
		for _, span := range []float64{0.5, 2, 1e-3} {
			if got := DivergingColor(c, c, span); got != "#FFFFFF" {
				t.Errorf("centre %g: %s, want white", c, got)
			}
			if got := DivergingColor(c+span, c, span); !strings.EqualFold(got, "#D55E00") {
				t.Errorf("centre+span: %s, want vermillion #D55E00", got)
			}
			if got := DivergingColor(c-span, c, span); !strings.EqualFold(got, "#0072B2") {
				t.Errorf("centre-span: %s, want blue #0072B2", got)
			}
			if got := DivergingColor(c+5*span, c, span); got != DivergingColor(c+span, c, span) {
				t.Errorf("beyond the span not clamped: %s", got)
			}
		}
	}
	// symmetry: equal distances either side move equally far from white
	for _, f := range []float64{0.1, 0.25, 0.5, 0.8, 0.99} {
		up := towards(t, DivergingColor(0.3+f*2, 0.3, 2), "#D55E00")
		down := towards(t, DivergingColor(0.3-f*2, 0.3, 2), "#0072B2")
		if math.Abs(up-f) > 0.01 || math.Abs(down-f) > 0.01 {
			t.Errorf("share %g: went %g up and %g down", f, up, down)
		}
	}
	// monotone: further from the centre is never lighter
	prev := 0.0
	for i := 1; i <= 50; i++ {
		s := towards(t, DivergingColor(float64(i)/50, 0, 1), "#D55E00")
		if s < prev {
			t.Fatalf("not monotone at %d: %g < %g", i, s, prev)
		}
		prev = s
	}
	if got := DivergingColor(math.NaN(), 0, 1); got != inkNoValue {
		t.Errorf("NaN: %s", got)
	}
	if got := DivergingColor(math.Inf(1), 0, 1); got != inkNoValue {
		t.Errorf("Inf: %s", got)
	}
	if got := DivergingColor(5, 0, 0); got != "#FFFFFF" {
		t.Errorf("zero span: %s", got)
	}
	if got := DivergingColor(1, math.NaN(), 1); !strings.EqualFold(got, "#D55E00") {
		t.Errorf("NaN centre counts as 0: %s", got)
	}
	if got := DivergingColor(1.7e308, -1.7e308, 1.7e308); got == "" || got[0] != '#' {
		t.Errorf("huge values: %q", got)
	}
	// the grey for "no value" is not on the scale
	g := rgb(t, inkNoValue)
	if !(g[0] == g[1] && g[1] == g[2] && g[0] < 240) {
		t.Errorf("no-value colour %s is not a visible grey", inkNoValue)
	}
}

// nearColor allows one step per channel (means computed in another order
// may round the other way).
func nearColor(t testing.TB, a, b string) bool {
	ca, cb := rgb(t, a), rgb(t, b)
	for i := range ca {
		if math.Abs(ca[i]-cb[i]) > 1 {
			return false
		}
	}
	return true
}

func cellsOf(t testing.TB, root *node) []*node {
	t.Helper()
	cells := root.byClass("hl-cell")
	for _, c := range cells {
		if c.name != "rect" {
			t.Fatalf("hl-cell is a <%s>, want <rect>", c.name)
		}
	}
	return cells
}

func titleOf(n *node) string {
	for _, k := range n.kids {
		if k.name == "title" {
			return k.text
		}
	}
	return ""
}

func TestHeatmapCells(t *testing.T) {
	h := sampleHeatmap()
	h.Cells[7].Value = math.NaN()
	h.Cells[8].Title = "custom hover"
	root := parseSVG(t, h.SVG())
	cells := cellsOf(t, root)
	if len(cells) != len(h.Cells) {
		t.Fatalf("%d cells drawn, want %d", len(cells), len(h.Cells))
	}
	x0, y0, x1, y1 := frameBox(t, root)
	const tol = 0.11
	// pixels per year from the first column of cells (CellW inferred = 1)
	pxPerYear := cells[0].num(t, "width")
	maxAbs := 0.0
	for _, c := range h.Cells {
		if finite(c.Value) {
			maxAbs = math.Max(maxAbs, math.Abs(c.Value))
		}
	}
	for i, n := range cells {
		c := h.Cells[i]
		if n.attr["data-key"] != c.Key {
			t.Fatalf("cell %d data-key %q, want %q", i, n.attr["data-key"], c.Key)
		}
		x, y, w, ht := n.num(t, "x"), n.num(t, "y"), n.num(t, "width"), n.num(t, "height")
		if x < x0-tol || x+w > x1+tol || y < y0-tol || y+ht > y1+tol {
			t.Fatalf("cell %d (%g,%g %gx%g) outside the plot", i, x, y, w, ht)
		}
		// the centre of the rect sits at (X,Y): linear in X and Y
		wantX := x0 + (c.X-(1950.5-0.5))*(x1-x0)/(2015.5+0.5-1950)
		if math.Abs(x+w/2-wantX) > 0.2 {
			t.Errorf("cell %d centre x %g, want %g", i, x+w/2, wantX)
		}
		wantY := y1 - (c.Y-(1960.5-0.5))*(y1-y0)/(2025.5+0.5-1960)
		if math.Abs(y+ht/2-wantY) > 0.2 {
			t.Errorf("cell %d centre y %g, want %g", i, y+ht/2, wantY)
		}
		if math.Abs(w-pxPerYear) > 0.15 {
			t.Errorf("cell %d width %g, want %g", i, w, pxPerYear)
		}
		want := DivergingColor(c.Value, 0, maxAbs)
		if n.attr["fill"] != want {
			t.Errorf("cell %d fill %s, want %s", i, n.attr["fill"], want)
		}
		tt := titleOf(n)
		switch {
		case i == 8:
			if tt != "custom hover" {
				t.Errorf("given Title not used: %q", tt)
			}
		case i == 7:
			if !strings.Contains(tt, "no value") || n.attr["fill"] != inkNoValue {
				t.Errorf("NaN cell: title %q fill %s", tt, n.attr["fill"])
			}
		default:
			// generated hover text gives the window and the value
			if !strings.Contains(tt, "Window start "+fmtCoord(c.X)) || !strings.Contains(tt, "Window end "+fmtCoord(c.Y)) ||
				!strings.Contains(tt, formatValue(c.Value)) {
				t.Errorf("cell %d title %q lacks its numbers", i, tt)
			}
		}
	}
	// neighbours in a column share their edge exactly (no seams)
	for i := 1; i < len(cells); i++ {
		if h.Cells[i].X == h.Cells[i-1].X {
			a, b := cells[i-1], cells[i]
			if math.Abs(b.num(t, "y")+b.num(t, "height")-a.num(t, "y")) > 0.051 {
				t.Fatalf("cells %d and %d do not meet: %v %v", i-1, i, a.attr, b.attr)
			}
		}
	}
}

func TestHeatmapMarks(t *testing.T) {
	h := sampleHeatmap()
	h.Cells[0].Marked, h.Cells[0].Value = true, math.NaN() // no value: no mark
	root := parseSVG(t, h.SVG())
	cells := cellsOf(t, root)
	marks := root.byClass("hl-marks")
	if len(marks) != 1 {
		t.Fatalf("want one hl-marks path, got %d", len(marks))
	}
	if marks[0].attr["pointer-events"] != "none" {
		t.Error("marks must let clicks through to the cells")
	}
	if marks[0].attr["stroke-linecap"] != "round" || marks[0].num(t, "stroke-width") < 1.2 {
		t.Errorf("marks are not visible dots: %v", marks[0].attr)
	}
	var want []int
	for i, c := range h.Cells {
		if c.Marked && finite(c.Value) {
			want = append(want, i)
		}
	}
	if len(want) < 10 {
		t.Fatalf("sample has only %d marked cells", len(want))
	}
	d := marks[0].attr["d"]
	parts := strings.Split(d, "M")[1:]
	if len(parts) != len(want) {
		t.Fatalf("%d dots, want %d", len(parts), len(want))
	}
	for k, p := range parts {
		xy := strings.Split(strings.TrimSuffix(p, "h0"), ",")
		x, _ := strconv.ParseFloat(xy[0], 64)
		y, _ := strconv.ParseFloat(xy[1], 64)
		c := cells[want[k]]
		cx, cy := c.num(t, "x")+c.num(t, "width")/2, c.num(t, "y")+c.num(t, "height")/2
		if math.Abs(x-cx) > 0.11 || math.Abs(y-cy) > 0.11 {
			t.Errorf("dot %d at (%g,%g), want the centre of cell %d (%g,%g)", k, x, y, want[k], cx, cy)
		}
	}
	// the legend explains the dot and the grey
	var texts []string
	for _, n := range root.byClass("hl-legend-text") {
		texts = append(texts, n.text)
	}
	if strings.Join(texts, "|") != "interval excludes zero|No value" {
		t.Errorf("legend %q", texts)
	}
	if len(root.byClass("hl-legend")[0].byName("circle")) != 1 {
		t.Error("mark legend entry has no dot")
	}
	// no marks, no NaN: no legend, no marks path
	for i := range h.Cells {
		h.Cells[i].Marked = false
		if !finite(h.Cells[i].Value) {
			h.Cells[i].Value = 0
		}
	}
	root = parseSVG(t, h.SVG())
	if len(root.byClass("hl-marks"))+len(root.byClass("hl-legend")) != 0 {
		t.Error("legend or marks drawn with nothing to explain")
	}
}

func TestHeatmapColorBar(t *testing.T) {
	// Center 0.2; values 0.2-0.5 .. 0.2+0.3: M = 0.5, bar from -0.3 to 0.7
	h := Heatmap{ValueLabel: "Trend (K per decade)", Center: 0.2, Cells: []HeatCell{
		{X: 2000, Y: 2010, Value: -0.3},
		{X: 2001, Y: 2010, Value: 0.2},
		{X: 2002, Y: 2010, Value: 0.5},
		{X: 2003, Y: 2010, Value: 0.45},
	}}
	root := parseSVG(t, h.SVG())
	cells := cellsOf(t, root)
	if !strings.EqualFold(cells[0].attr["fill"], "#0072B2") {
		t.Errorf("Center-M cell %s, want the blue end", cells[0].attr["fill"])
	}
	if cells[1].attr["fill"] != "#FFFFFF" {
		t.Errorf("Center cell %s, want white", cells[1].attr["fill"])
	}
	if s := towards(t, cells[2].attr["fill"], "#D55E00"); math.Abs(s-0.6) > 0.01 {
		t.Errorf("Center+0.3 of M=0.5 went %g towards vermillion, want 0.6", s)
	}
	bar := root.byClass("hl-colorbar")
	if len(bar) != 1 {
		t.Fatalf("want one colour bar, got %d", len(bar))
	}
	slices := bar[0].byName("rect")
	slices = slices[:len(slices)-1] // the last is the outline
	if len(slices) < 16 {
		t.Fatalf("colour bar has %d slices", len(slices))
	}
	// bottom slice near blue, top near vermillion, middle near white,
	// symmetric
	bottom, top := slices[0].attr["fill"], slices[len(slices)-1].attr["fill"]
	sb, st := towards(t, bottom, "#0072B2"), towards(t, top, "#D55E00")
	if sb < 0.95 || math.Abs(sb-st) > 0.01 {
		t.Errorf("bar ends %s (%g) and %s (%g)", bottom, sb, top, st)
	}
	if slices[0].num(t, "y") < slices[len(slices)-1].num(t, "y") {
		t.Error("colour bar upside down: low values must be at the bottom")
	}
	// ticks: round numbers inside [-0.3, 0.7], placed linearly
	ticks := root.byClass("hl-ctick")
	if len(ticks) < 3 {
		t.Fatalf("%d colour bar ticks", len(ticks))
	}
	_, fy0, _, fy1 := frameBox(t, root)
	for _, n := range ticks {
		v, err := strconv.ParseFloat(n.text, 64)
		if err != nil || len(n.text) > 5 {
			t.Fatalf("tick %q is not a round number", n.text)
		}
		if v < -0.3-1e-9 || v > 0.7+1e-9 {
			t.Errorf("tick %g outside the bar's range", v)
		}
		want := fy1 - (v+0.3)/1.0*(fy1-fy0)
		if y := n.num(t, "y") - 4; math.Abs(y-want) > 0.2 {
			t.Errorf("tick %g at y=%g, want %g", v, y, want)
		}
	}
	if vl := root.byClass("hl-vlabel"); len(vl) != 1 || vl[0].text != h.ValueLabel {
		t.Error("value label missing")
	}
	// the bar sits right of the plot and inside the chart
	_, _, fx1, _ := frameBox(t, root)
	vbW, _ := strconv.ParseFloat(strings.Fields(root.attr["viewBox"])[2], 64)
	if x := slices[0].num(t, "x"); x <= fx1 || x+barW > vbW {
		t.Errorf("colour bar at x=%g, plot ends %g, chart %g", x, fx1, vbW)
	}
	if x := root.byClass("hl-vlabel")[0].num(t, "x"); x > vbW-2 {
		t.Errorf("value label at x=%g runs off the chart (%g)", x, vbW)
	}
}

func TestHeatmapEscaping(t *testing.T) {
	h := Heatmap{
		Title: hostile, XLabel: hostile, YLabel: "</text>", ValueLabel: hostile, MarkLabel: hostile,
		Width: 1000,
		Cells: []HeatCell{
			{X: 1, Y: 2, Value: 1, Marked: true, Title: hostile, Key: `k"'<&>` + "\x00"},
			{X: 2, Y: 2, Value: -1, Key: hostile},
		},
	}
	doc := h.SVG()
	root := parseSVG(t, doc)
	if strings.Contains(doc, "<img") || strings.Contains(doc, "<script") {
		t.Fatal("markup leaked")
	}
	cells := cellsOf(t, root)
	if got := titleOf(cells[0]); got != hostile {
		t.Errorf("hover text %q", got)
	}
	if got := cells[0].attr["data-key"]; got != `k"'<&>`+"\uFFFD" {
		t.Errorf("data-key %q", got)
	}
	if got := cells[1].attr["data-key"]; got != hostile {
		t.Errorf("data-key %q", got)
	}
	if got := root.byClass("hl-vlabel")[0].text; got != hostile {
		t.Errorf("value label %q", got)
	}
	if got := root.byClass("hl-legend-text")[0].text; got != hostile {
		t.Errorf("mark legend %q", got)
	}
	// generated hover text carries labels literally too
	h.Cells[1].Title = ""
	root = parseSVG(t, h.SVG())
	if got := titleOf(cellsOf(t, root)[1]); !strings.HasPrefix(got, hostile+" 2, </text> 2: ") {
		t.Errorf("generated title %q", got)
	}
	// over-long texts are cut
	h.Cells[0].Title = strings.Repeat("t", 1000)
	h.Cells[0].Key = strings.Repeat("k", 1000)
	c := cellsOf(t, parseSVG(t, h.SVG()))[0]
	if n := len([]rune(titleOf(c))); n != heatTitleMax {
		t.Errorf("title kept %d runes, want %d", n, heatTitleMax)
	}
	if n := len([]rune(c.attr["data-key"])); n != heatKeyMax {
		t.Errorf("key kept %d runes, want %d", n, heatKeyMax)
	}
}

func TestHeatmapEdgeCases(t *testing.T) {
	nan := math.NaN()
	// nothing drawable
	for name, h := range map[string]Heatmap{
		"zero value":     {},
		"no cells":       {Title: "t", Cells: []HeatCell{}},
		"no positions":   {Cells: []HeatCell{{X: nan, Y: 1, Value: 1}, {X: 1, Y: math.Inf(1), Value: 2}}},
		"zero-size cell": {CellW: -1, CellH: nan, Cells: []HeatCell{{X: nan, Y: nan}}},
	} {
		root := parseSVG(t, h.SVG())
		if len(root.byClass("hl-nodata")) != 1 || len(root.byClass("hl-cell")) != 0 {
			t.Errorf("%s: want the no-data note and no cells", name)
		}
		if d := root.byName("desc")[0].text; !strings.Contains(d, "no data") {
			t.Errorf("%s: desc %q", name, d)
		}
	}
	// all values missing: grey cells, no colour bar
	h := Heatmap{Cells: []HeatCell{{X: 1, Y: 2, Value: nan, Marked: true}, {X: 2, Y: 2, Value: math.Inf(-1)}}}
	root := parseSVG(t, h.SVG())
	for _, c := range cellsOf(t, root) {
		if c.attr["fill"] != inkNoValue {
			t.Errorf("all-NaN cell fill %s", c.attr["fill"])
		}
	}
	if len(root.byClass("hl-colorbar"))+len(root.byClass("hl-marks")) != 0 {
		t.Error("all-NaN: colour bar or marks drawn")
	}
	if d := root.byName("desc")[0].text; !strings.Contains(d, "No cell has a value") {
		t.Errorf("all-NaN desc %q", d)
	}
	// one cell: centred, default size one unit, ticks on both axes
	h = Heatmap{Cells: []HeatCell{{X: 1990.5, Y: 2020.5, Value: 0.2, Key: "only"}}}
	root = parseSVG(t, h.SVG())
	cells := cellsOf(t, root)
	if len(cells) != 1 {
		t.Fatalf("one cell: %d drawn", len(cells))
	}
	x0, y0, x1, y1 := frameBox(t, root)
	c := cells[0]
	if cx := c.num(t, "x") + c.num(t, "width")/2; math.Abs(cx-(x0+x1)/2) > 0.2 {
		t.Errorf("one cell centred at x=%g, want %g", cx, (x0+x1)/2)
	}
	if cy := c.num(t, "y") + c.num(t, "height")/2; math.Abs(cy-(y0+y1)/2) > 0.2 {
		t.Errorf("one cell centred at y=%g, want %g", cy, (y0+y1)/2)
	}
	if len(root.byClass("hl-xtick")) < 2 || len(root.byClass("hl-ytick")) < 2 {
		t.Error("one cell: axes need ticks")
	}
	if !strings.EqualFold(c.attr["fill"], "#D55E00") {
		t.Errorf("single value above centre: %s, want the vermillion end", c.attr["fill"])
	}
	// constant values at the centre: all white, the bar still has ticks
	h = Heatmap{Center: 0.15, Cells: trendGrid(30)}
	for i := range h.Cells {
		h.Cells[i].Value = 0.15
	}
	root = parseSVG(t, h.SVG())
	for _, c := range cellsOf(t, root) {
		if c.attr["fill"] != "#FFFFFF" {
			t.Fatalf("constant at centre: fill %s", c.attr["fill"])
		}
	}
	for _, s := range root.byClass("hl-colorbar")[0].byName("rect") {
		if f := s.attr["fill"]; f != "#FFFFFF" && f != "none" {
			t.Fatalf("constant at centre: colour bar shows %s", f)
		}
	}
	if len(root.byClass("hl-ctick")) < 2 {
		t.Error("constant: colour bar needs ticks")
	}
	// cells without a position are left out and counted
	h = Heatmap{Cells: []HeatCell{{X: 1, Y: 1, Value: 1}, {X: nan, Y: 1, Value: 1}}}
	root = parseSVG(t, h.SVG())
	if len(cellsOf(t, root)) != 1 {
		t.Error("cell without position drawn")
	}
	if d := root.byName("desc")[0].text; !strings.Contains(d, "1 cells without a finite position") {
		t.Errorf("desc %q does not count the left-out cell", d)
	}
	// extreme values and sizes stay well-formed and finite
	h = Heatmap{CellW: 1e308, CellH: 5e-324, Center: 1e308, Cells: []HeatCell{
		{X: -1.7e308, Y: 1.7e308, Value: -1.7e308}, {X: 1.7e308, Y: -1.7e308, Value: 1.7e308, Marked: true}}}
	doc := h.SVG()
	parseSVG(t, doc)
	if strings.Contains(doc, "NaN") || strings.Contains(doc, "Inf") {
		t.Error("non-finite number in the document")
	}
}

func TestHeatmapCellSize(t *testing.T) {
	// a 5-year grid with CellW/CellH given: each cell covers 5 years
	var cells []HeatCell
	for s := 1950; s <= 2000; s += 5 {
		cells = append(cells, HeatCell{X: float64(s), Y: 2020, Value: float64(s - 1975)})
	}
	h := Heatmap{Cells: cells, CellW: 5, CellH: 5}
	root := parseSVG(t, h.SVG())
	x0, _, x1, _ := frameBox(t, root)
	rects := cellsOf(t, root)
	// domain 1947.5 .. 2002.5: 11 cells of 5 years fill the width
	for i, r := range rects {
		if w := r.num(t, "width"); math.Abs(w-(x1-x0)/11) > 0.15 {
			t.Errorf("cell %d width %g, want %g", i, w, (x1-x0)/11)
		}
	}
	// inferred: the same without CellW
	h.CellW, h.CellH = 0, 0
	root2 := parseSVG(t, h.SVG())
	for i, r := range cellsOf(t, root2) {
		if r.attr["width"] != rects[i].attr["width"] {
			t.Errorf("inferred cell %d width %s, want %s", i, r.attr["width"], rects[i].attr["width"])
		}
	}
}

// bigGrid returns an n by n square grid of annual cells.
func bigGrid(n int) []HeatCell {
	cells := make([]HeatCell, 0, n*n)
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			v := math.Sin(float64(i)/7) + math.Cos(float64(j)/11)
			cells = append(cells, HeatCell{X: float64(1000 + i), Y: float64(1000 + j), Value: v,
				Marked: (i+j)%3 != 0, Key: strconv.Itoa(i) + "," + strconv.Itoa(j)})
		}
	}
	return cells
}

func TestHeatmapCoarserGrid(t *testing.T) {
	const n = 300 // 90,000 cells: 2x2 blocks give 22,500
	h := Heatmap{XLabel: "start", YLabel: "end", Cells: bigGrid(n), Width: 900, Height: 900}
	h.Cells[0].Value = math.NaN()
	doc := h.SVG()
	root := parseSVG(t, doc)
	rects := cellsOf(t, root)
	if len(rects) != 150*150 {
		t.Fatalf("%d cells drawn, want 22500 (2x2 blocks)", len(rects))
	}
	note := root.byClass("hl-note")
	if len(note) != 1 || !strings.Contains(note[0].text, "2×2") || !strings.Contains(note[0].text, "90000") {
		t.Errorf("note %v does not explain the coarser grid", note)
	}
	if d := root.byName("desc")[0].text; !strings.Contains(d, "blocks of 2×2") {
		t.Errorf("desc %q", d)
	}
	// recompute a few blocks by hand: mean of the finite values, marked by
	// majority, key of the member nearest the centre (all four are equally
	// near: the first in input order)
	maxAbs := 0.0
	type blk struct {
		sum       float64
		nf, nm    int
		firstKey  string
		haveFirst bool
	}
	blocks := map[[2]int]*blk{}
	for _, c := range h.Cells {
		k := [2]int{int(c.X-1000) / 2, int(c.Y-1000) / 2}
		b := blocks[k]
		if b == nil {
			b = &blk{}
			blocks[k] = b
		}
		if !b.haveFirst {
			b.firstKey, b.haveFirst = c.Key, true
		}
		if finite(c.Value) {
			b.sum += c.Value
			b.nf++
			if c.Marked {
				b.nm++
			}
		}
	}
	for _, b := range blocks {
		maxAbs = math.Max(maxAbs, math.Abs(b.sum/float64(b.nf)))
	}
	byKey := map[string]*node{}
	for _, r := range rects {
		byKey[r.attr["data-key"]] = r
	}
	marked := 0
	for k, b := range blocks {
		r := byKey[b.firstKey]
		if r == nil {
			t.Fatalf("block %v: no cell with key %q", k, b.firstKey)
		}
		mean := b.sum / float64(b.nf)
		if want := DivergingColor(mean, 0, maxAbs); !nearColor(t, r.attr["fill"], want) {
			t.Errorf("block %v fill %s, want %s (mean %g)", k, r.attr["fill"], want, mean)
		}
		if 2*b.nm > b.nf {
			marked++
		}
		if k == [2]int{0, 0} && !strings.Contains(titleOf(r), "mean "+formatValue(mean)+" of 3 cells") {
			t.Errorf("block 0,0 title %q", titleOf(r))
		}
	}
	if got := len(strings.Split(root.byClass("hl-marks")[0].attr["d"], "M")) - 1; got != marked {
		t.Errorf("%d marked blocks, want %d", got, marked)
	}
	// blocks tile the plot: a block is twice as wide as a year
	x0, _, x1, _ := frameBox(t, root)
	if w := rects[0].num(t, "width"); math.Abs(w-2*(x1-x0)/300) > 0.15 {
		t.Errorf("block width %g, want %g", w, 2*(x1-x0)/300)
	}
	if len(doc) > 10<<20 {
		t.Errorf("document is %d bytes", len(doc))
	}
}

func TestHeatmapSizeGuard(t *testing.T) {
	// 300,000 cells of a triangular grid at a monthly step, with hover text
	// like the page's: at most MaxHeatCells drawn, well under 12 MB
	var cells []HeatCell
	for i := 0; len(cells) < 300000; i++ {
		for j := i; j < 775 && len(cells) < 300000; j++ {
			x, y := 1950+float64(i)/12, 1950+float64(j)/12
			cells = append(cells, HeatCell{X: x, Y: y, Value: float64(j-i) / 1000, Marked: j-i > 300,
				Title: "Window " + fmtCoord(x) + " to " + fmtCoord(y) + ": 0.123 ± 0.045 K per decade",
				Key:   fmtCoord(x) + "-" + fmtCoord(y)})
		}
	}
	h := Heatmap{Cells: cells, Width: 900, Height: 900}
	doc := h.SVG()
	root := parseSVG(t, doc)
	if n := len(cellsOf(t, root)); n > MaxHeatCells || n < MaxHeatCells/4 {
		t.Errorf("%d cells drawn from 300000", n)
	}
	if len(doc) > 12<<20 {
		t.Errorf("document is %d bytes", len(doc))
	}
	// long texts on fewer cells also bring in the coarser grid
	cells = bigGrid(220) // 48,400 cells, under the count limit
	for i := range cells {
		cells[i].Title = strings.Repeat("a long hover text ", 11)
	}
	doc = Heatmap{Cells: cells}.SVG()
	root = parseSVG(t, doc)
	if n := len(cellsOf(t, root)); n >= len(cells) {
		t.Errorf("long texts: %d cells drawn, want a coarser grid", n)
	}
	if len(doc) > 12<<20 {
		t.Errorf("long texts: document is %d bytes", len(doc))
	}
}

func TestHeatmapDeterministic(t *testing.T) {
	h := sampleHeatmap()
	a := h.SVG()
	cp := h
	cp.Cells = append([]HeatCell(nil), h.Cells...)
	if cp.SVG() != a || h.SVG() != a {
		t.Fatal("same input gave different output")
	}
	big := Heatmap{Cells: bigGrid(260)}
	if big.SVG() != big.SVG() {
		t.Fatal("coarser grid not deterministic")
	}
	// the input is not modified
	before := append([]HeatCell(nil), h.Cells...)
	_ = h.SVG()
	for i := range before {
		if before[i] != h.Cells[i] {
			t.Fatal("SVG modified its input")
		}
	}
}

func FuzzHeatmap(f *testing.F) {
	nan, inf := math.NaN(), math.Inf(1)
	f.Add(fbytes(1950, 1960, 0.1, 1951, 1960, -0.2, 1952, 1960, nan), "k", 0.0, 0.0, 0.0, 0, 0)
	f.Add(fbytes(inf, -inf, nan, 1e308, -1e308, 5e-324), hostile, 1e308, -1.0, nan, 100, 50)
	f.Add(fbytes(1, 1, 1, 1, 1, 1, 1, 1, 1), "\x00\xff", 5e-324, inf, 1e300, -1, 1<<20)
	f.Add([]byte{}, "", 0.0, 0.0, 0.0, 720, 360)
	f.Fuzz(func(t *testing.T, a []byte, text string, cw, ch, center float64, w, h int) {
		v := floats(a)
		var cells []HeatCell
		for i := 0; i+2 < len(v); i += 3 {
			cells = append(cells, HeatCell{X: v[i], Y: v[i+1], Value: v[i+2], Marked: i%2 == 0,
				Title: text, Key: text})
		}
		hm := Heatmap{Title: text, XLabel: text, YLabel: text, ValueLabel: text, MarkLabel: text,
			Width: w, Height: h, Cells: cells, CellW: cw, CellH: ch, Center: center}
		doc := hm.SVG()
		root, err := parseSVGErr(doc)
		if err != nil {
			t.Fatalf("%v\n%s", err, head(doc))
		}
		if hm.SVG() != doc {
			t.Fatal("not deterministic")
		}
		for _, r := range root.byClass("hl-cell") {
			for _, a := range []string{"x", "y", "width", "height"} {
				if _, err := strconv.ParseFloat(r.attr[a], 64); err != nil {
					t.Fatalf("cell %s=%q", a, r.attr[a])
				}
			}
		}
		if strings.Contains(doc, "NaN") && !strings.Contains(text, "NaN") {
			t.Fatal("NaN in the document")
		}
	})
}

func BenchmarkHeatmap3000(b *testing.B) {
	// every window of an annual record 1948-2025, the first 3000
	var cells []HeatCell
	for s := 1948; s <= 2025; s++ {
		for e := s; e <= 2025; e++ {
			cells = append(cells, HeatCell{X: float64(s) + 0.5, Y: float64(e) + 0.5, Value: float64(e-s) / 100,
				Marked: e-s > 20, Key: strconv.Itoa(s) + ":" + strconv.Itoa(e)})
		}
	}
	h := sampleHeatmap()
	h.Cells = cells[:3000]
	b.ReportAllocs()
	var n int
	for b.Loop() {
		n = len(h.SVG())
	}
	b.ReportMetric(float64(n), "bytes/chart")
}

func BenchmarkHeatmap60000(b *testing.B) {
	cells := bigGrid(245)[:60000]
	for i := range cells {
		cells[i].Title = "Window " + fmtCoord(cells[i].X) + " to " + fmtCoord(cells[i].Y) + ": 0.123 K per decade"
	}
	h := Heatmap{Cells: cells, Width: 900, Height: 900}
	b.ReportAllocs()
	var n int
	for b.Loop() {
		n = len(h.SVG())
	}
	b.ReportMetric(float64(n), "bytes/chart")
}
