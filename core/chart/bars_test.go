package chart

import (
	"math"
	"strconv"
	"strings"
	"testing"
)

func sampleBars() Bars {
	return Bars{
		Title: "Tessary attribution", XLabel: "Factor", YLabel: "Contribution (K)",
		Categories: []string{"Greenhouse gases", "Aerosols", "Eruptions", "Sun", "Internal"},
		Series: []BarSeries{
			{Name: "Model A", Values: []float64{1.1, -0.4, -0.1, 0.02, 0.05},
				Lo: []float64{0.9, -0.6, -0.2, 0, -0.1}, Hi: []float64{1.3, -0.2, 0, 0.04, 0.2}},
			{Name: "Model B", Values: []float64{1.0, -0.3, -0.12, 0.01, math.NaN()}},
		},
	}
}

type box struct{ x, y, w, h float64 }

func rectBox(t testing.TB, n *node) box {
	t.Helper()
	return box{n.num(t, "x"), n.num(t, "y"), n.num(t, "width"), n.num(t, "height")}
}

// zeroAt returns the pixel position of value 0 on the value axis from the
// zero line.
func zeroAt(t testing.TB, root *node, horizontal bool) float64 {
	t.Helper()
	z := root.byClass("hl-zero")
	if len(z) != 1 {
		t.Fatalf("want one zero line, got %d", len(z))
	}
	if horizontal {
		return z[0].num(t, "x1")
	}
	return z[0].num(t, "y1")
}

func TestBarsGrouped(t *testing.T) {
	c := sampleBars()
	root := parseSVG(t, c.SVG())
	bars := root.byClass("hl-bar")
	if len(bars) != 9 { // 10 values, one NaN
		t.Fatalf("%d bars, want 9", len(bars))
	}
	zero := zeroAt(t, root, false)
	x0, _, x1, _ := frameBox(t, root)
	band := (x1 - x0) / 5
	scale := 0.0 // pixels per unit, from the first bar
	k := 0
	for s, ser := range c.Series {
		for i, v := range ser.Values {
			if !finite(v) {
				continue
			}
			n := bars[k]
			k++
			if n.attr["data-series"] != ser.Name || n.attr["data-category"] != c.Categories[i] {
				t.Fatalf("bar %d: data %q/%q", k, n.attr["data-series"], n.attr["data-category"])
			}
			b := rectBox(t, n)
			if scale == 0 {
				scale = b.h / math.Abs(v)
			}
			// height proportional to |value|
			if math.Abs(b.h-math.Abs(v)*scale) > 0.25 {
				t.Errorf("%s/%s height %g, want %g", ser.Name, c.Categories[i], b.h, math.Abs(v)*scale)
			}
			// from zero: up for positive values, down for negative
			if v > 0 && math.Abs(b.y+b.h-zero) > 0.15 || v < 0 && math.Abs(b.y-zero) > 0.15 {
				t.Errorf("%s/%s (%g) does not start at zero: y %g h %g, zero %g", ser.Name, c.Categories[i], v, b.y, b.h, zero)
			}
			// inside its category's band, series side by side in order
			lo := x0 + band*float64(i)
			if b.x < lo-0.1 || b.x+b.w > lo+band+0.1 {
				t.Errorf("%s/%s outside its band", ser.Name, c.Categories[i])
			}
			wantX := lo + band*(0.1+0.4*float64(s))
			if math.Abs(b.x-wantX) > 0.15 || math.Abs(b.w-0.4*band) > 0.15 {
				t.Errorf("%s/%s at x=%g w=%g, want %g w=%g", ser.Name, c.Categories[i], b.x, b.w, wantX, 0.4*band)
			}
			if tt := titleOf(n); !strings.Contains(tt, formatValue(v)) || !strings.Contains(tt, c.Categories[i]) {
				t.Errorf("hover %q", tt)
			}
		}
	}
	// category labels under the bands, in order
	ticks := root.byClass("hl-xtick")
	if len(ticks) != 5 {
		t.Fatalf("%d category labels", len(ticks))
	}
	for i, n := range ticks {
		if !strings.HasPrefix(c.Categories[i], strings.TrimSuffix(n.text, "…")) {
			t.Errorf("label %d %q", i, n.text)
		}
		if x := n.num(t, "x"); math.Abs(x-(x0+band*(float64(i)+0.5))) > 0.15 {
			t.Errorf("label %d at %g", i, x)
		}
	}
	// no vertical grid lines on a category axis
	for _, g := range root.byClass("hl-grid")[0].kids {
		if g.attr["x1"] == g.attr["x2"] {
			t.Error("vertical grid line on the category axis")
			break
		}
	}
	// legend: both series, filled swatches
	if n := len(root.byClass("hl-legend-item")); n != 2 {
		t.Errorf("%d legend items", n)
	}
}

func TestBarsErrorBars(t *testing.T) {
	c := sampleBars()
	root := parseSVG(t, c.SVG())
	zero := zeroAt(t, root, false)
	bars := root.byClass("hl-bar")
	scale := rectBox(t, bars[0]).h / 1.1
	eb := root.byClass("hl-errorbar")
	if len(eb) != 5 {
		t.Fatalf("%d error bars, want 5 (series A only)", len(eb))
	}
	for i, n := range eb {
		if n.attr["data-series"] != "Model A" || n.attr["data-category"] != c.Categories[i] {
			t.Errorf("error bar %d data %q/%q", i, n.attr["data-series"], n.attr["data-category"])
		}
		runs := pathRuns(t, n.attr["d"])
		if len(runs) != 3 {
			t.Fatalf("error bar %d has %d strokes, want 3 (stem, two caps)", i, len(runs))
		}
		stem := runs[0]
		lo, hi := c.Series[0].Lo[i], c.Series[0].Hi[i]
		yLo, yHi := zero-lo*scale, zero-hi*scale
		if math.Abs(stem[0][1]-yHi) > 0.3 || math.Abs(stem[1][1]-yLo) > 0.3 {
			t.Errorf("error bar %d spans %g..%g, want %g..%g", i, stem[0][1], stem[1][1], yHi, yLo)
		}
		b := rectBox(t, bars[i])
		if math.Abs(stem[0][0]-(b.x+b.w/2)) > 0.15 {
			t.Errorf("error bar %d not centred on its bar", i)
		}
	}
	// swapped ends are put right; missing ends or values draw nothing
	c.Series[0].Lo[0], c.Series[0].Hi[0] = 1.3, 0.9
	c.Series[0].Hi[1] = math.NaN()
	c.Series[0].Values[2] = math.NaN()
	c.Series[1].Lo = []float64{0.1} // no Hi: nothing
	root = parseSVG(t, c.SVG())
	if n := len(root.byClass("hl-errorbar")); n != 3 {
		t.Errorf("%d error bars, want 3", n)
	}
	// error bars widen the value axis
	c = Bars{Categories: []string{"a"}, Series: []BarSeries{{Values: []float64{1}, Lo: []float64{-2}, Hi: []float64{5}}}}
	root = parseSVG(t, c.SVG())
	_, y0, _, y1 := frameBox(t, root)
	for _, p := range pathRuns(t, root.byClass("hl-errorbar")[0].attr["d"]) {
		for _, pt := range p {
			if pt[1] < y0-0.1 || pt[1] > y1+0.1 {
				t.Errorf("error bar point %v outside the plot", pt)
			}
		}
	}
}

func TestBarsStacked(t *testing.T) {
	c := Bars{
		Categories: []string{"1990s", "2000s", "2010s"},
		Stacked:    true,
		Series: []BarSeries{
			{Name: "greenhouse", Values: []float64{0.3, 0.4, 0.5}, Lo: []float64{0, 0, 0}, Hi: []float64{1, 1, 1}},
			{Name: "aerosol", Values: []float64{-0.1, -0.15, math.NaN()}},
			{Name: "solar", Values: []float64{0.05, -0.02, 0.01}},
			{Name: "volcanic", Values: []float64{-0.2, 0, -0.05}},
		},
	}
	root := parseSVG(t, c.SVG())
	if n := len(root.byClass("hl-errorbar")); n != 0 {
		t.Errorf("stacked chart drew %d error bars", n)
	}
	zero := zeroAt(t, root, false)
	bars := root.byClass("hl-bar")
	scale := rectBox(t, bars[0]).h / 0.3
	byCat := map[string][]*node{}
	for _, b := range bars {
		byCat[b.attr["data-category"]] = append(byCat[b.attr["data-category"]], b)
	}
	for i, cat := range c.Categories {
		pos, neg := 0.0, 0.0
		k := 0
		var x, w float64
		for _, ser := range c.Series {
			v := ser.Values[i]
			if !finite(v) {
				continue
			}
			n := byCat[cat][k]
			k++
			if n.attr["data-series"] != ser.Name {
				t.Fatalf("%s: order %q, want %q", cat, n.attr["data-series"], ser.Name)
			}
			b := rectBox(t, n)
			if k == 1 {
				x, w = b.x, b.w
			} else if b.x != x || b.w != w {
				t.Errorf("%s: parts not in one column", cat)
			}
			var top, bottom float64 // in value units
			if v >= 0 {
				bottom, top = pos, pos+v
				pos = top
			} else {
				top, bottom = neg, neg+v
				neg = bottom
			}
			if math.Abs(b.y-(zero-top*scale)) > 0.3 || math.Abs(b.y+b.h-(zero-bottom*scale)) > 0.3 {
				t.Errorf("%s/%s spans y %g..%g, want %g..%g", cat, ser.Name, b.y, b.y+b.h, zero-top*scale, zero-bottom*scale)
			}
		}
		if k != len(byCat[cat]) {
			t.Errorf("%s: %d parts drawn, want %d", cat, len(byCat[cat]), k)
		}
	}
	if d := root.byName("desc")[0].text; !strings.Contains(d, "Stacked bar chart") {
		t.Errorf("desc %q", d)
	}
}

func TestBarsHorizontal(t *testing.T) {
	c := sampleBars()
	c.Horizontal = true
	c.XLabel, c.YLabel = "Contribution (K)", ""
	root := parseSVG(t, c.SVG())
	zero := zeroAt(t, root, true)
	x0, y0, x1, y1 := frameBox(t, root)
	if zero <= x0 || zero >= x1 {
		t.Fatalf("zero line at x=%g outside the plot", zero)
	}
	band := (y1 - y0) / 5
	bars := root.byClass("hl-bar")
	scale := rectBox(t, bars[0]).w / 1.1
	k := 0
	for s, ser := range c.Series {
		for i, v := range ser.Values {
			if !finite(v) {
				continue
			}
			b := rectBox(t, bars[k])
			k++
			if v > 0 && math.Abs(b.x-zero) > 0.15 || v < 0 && math.Abs(b.x+b.w-zero) > 0.15 {
				t.Errorf("%s/%d does not start at zero", ser.Name, i)
			}
			if math.Abs(b.w-math.Abs(v)*scale) > 0.25 {
				t.Errorf("%s/%d length %g, want %g", ser.Name, i, b.w, math.Abs(v)*scale)
			}
			// first category at the top, series in order downwards
			wantY := y0 + band*(float64(i)+0.1+0.4*float64(s))
			if math.Abs(b.y-wantY) > 0.15 {
				t.Errorf("%s/%d at y=%g, want %g", ser.Name, i, b.y, wantY)
			}
		}
	}
	labels := root.byClass("hl-ytick")
	if len(labels) != 5 {
		t.Fatalf("%d category labels", len(labels))
	}
	for i, n := range labels {
		if n.text != c.Categories[i] {
			t.Errorf("label %d = %q", i, n.text)
		}
		if y := n.num(t, "y") - 4; math.Abs(y-(y0+band*(float64(i)+0.5))) > 0.15 {
			t.Errorf("label %d at y=%g", i, y)
		}
	}
	if got := root.byClass("hl-xlabel")[0].text; got != c.XLabel {
		t.Errorf("x label %q", got)
	}
	// error bars lie along the value axis
	for _, n := range root.byClass("hl-errorbar") {
		stem := pathRuns(t, n.attr["d"])[0]
		if stem[0][1] != stem[1][1] {
			t.Errorf("horizontal error bar stem not horizontal: %v", stem)
		}
	}
	// long category names are clipped, with the full name as a tooltip
	c.Categories[0] = strings.Repeat("a very long factor name ", 5)
	root = parseSVG(t, c.SVG())
	first := root.byClass("hl-ytick")[0]
	if !strings.HasSuffix(first.text, "…") || titleOf(first) != c.Categories[0] {
		t.Errorf("long label %q, title %q", first.text, titleOf(first))
	}
	lx0, _, _, _ := frameBox(t, root)
	if lx0 > 0.4*DefaultWidth {
		t.Errorf("labels take %g of %d pixels", lx0, DefaultWidth)
	}
}

func TestBarsCategoryLabels(t *testing.T) {
	// many categories: labels thinned so they do not overlap
	var cats []string
	var vals []float64
	for i := 0; i < 60; i++ {
		cats = append(cats, "Year "+strconv.Itoa(1960+i))
		vals = append(vals, float64(i%7)-3)
	}
	c := Bars{Categories: cats, Series: []BarSeries{{Values: vals}}}
	root := parseSVG(t, c.SVG())
	ticks := root.byClass("hl-xtick")
	if len(ticks) >= 60 || len(ticks) < 5 {
		t.Errorf("%d labels for 60 narrow categories", len(ticks))
	}
	for i := 1; i < len(ticks); i++ {
		a, b := ticks[i-1], ticks[i]
		if b.num(t, "x")-a.num(t, "x") < (textWidth(a.text, fontTick)+textWidth(b.text, fontTick))/2 {
			t.Errorf("labels %q and %q overlap", a.text, b.text)
		}
	}
	if n := len(root.byClass("hl-bar")); n != 60 {
		t.Errorf("%d bars", n)
	}
	if len(root.byClass("hl-legend")) != 0 {
		t.Error("a lone unnamed series needs no legend")
	}
	// no Categories: numbered from 1 by the longest series
	c = Bars{Series: []BarSeries{{Values: []float64{1, 2}}, {Values: []float64{3, 4, 5}}}}
	root = parseSVG(t, c.SVG())
	var got []string
	for _, n := range root.byClass("hl-xtick") {
		got = append(got, n.text)
	}
	if strings.Join(got, ",") != "1,2,3" {
		t.Errorf("numbered categories %q", got)
	}
	// values past the categories are ignored
	c.Categories = []string{"only"}
	if n := len(parseSVG(t, c.SVG()).byClass("hl-bar")); n != 2 {
		t.Errorf("%d bars for one category and two series", n)
	}
}

func TestBarsEscaping(t *testing.T) {
	c := Bars{Title: hostile, XLabel: hostile, YLabel: hostile, Width: 1000,
		Categories: []string{hostile, `"q" & 'a'`},
		Series: []BarSeries{{Name: hostile, Values: []float64{1, -1}, Lo: []float64{0, -2}, Hi: []float64{2, 0},
			Color: `red" onclick="x`}}}
	doc := c.SVG()
	root := parseSVG(t, doc)
	if strings.Contains(doc, "<img") || strings.Contains(doc, "onclick=") {
		t.Fatal("markup leaked")
	}
	bars := root.byClass("hl-bar")
	if bars[0].attr["data-series"] != hostile || bars[0].attr["data-category"] != hostile {
		t.Errorf("data attributes %q %q", bars[0].attr["data-series"], bars[0].attr["data-category"])
	}
	if bars[1].attr["data-category"] != `"q" & 'a'` {
		t.Errorf("data-category %q", bars[1].attr["data-category"])
	}
	if bars[0].attr["fill"] != Palette[0] {
		t.Errorf("bad colour not replaced: %q", bars[0].attr["fill"])
	}
	if !strings.HasPrefix(titleOf(bars[0]), hostile+", "+hostile+": 1") {
		t.Errorf("hover %q", titleOf(bars[0]))
	}
	if got := root.byClass("hl-legend-text")[0].text; got != hostile {
		t.Errorf("legend %q", got)
	}
	tick := root.byClass("hl-xtick")[0]
	if tick.text != hostile && titleOf(tick) != hostile {
		t.Errorf("category label %q", tick.text)
	}
}

func TestBarsEdgeCases(t *testing.T) {
	nan := math.NaN()
	for name, c := range map[string]Bars{
		"zero value":    {},
		"no series":     {Categories: []string{"a", "b"}},
		"empty values":  {Categories: []string{"a"}, Series: []BarSeries{{Name: "s"}}},
		"all NaN":       {Series: []BarSeries{{Values: []float64{nan, math.Inf(1)}}}},
		"all NaN stack": {Stacked: true, Horizontal: true, Series: []BarSeries{{Values: []float64{nan}}}},
	} {
		root := parseSVG(t, c.SVG())
		if len(root.byClass("hl-nodata")) != 1 || len(root.byClass("hl-bar")) != 0 {
			t.Errorf("%s: want the no-data note", name)
		}
		if d := root.byName("desc")[0].text; !strings.Contains(d, "no data") {
			t.Errorf("%s: desc %q", name, d)
		}
	}
	// one bar, positive: starts at the bottom of the plot, axis from 0
	root := parseSVG(t, Bars{Series: []BarSeries{{Values: []float64{2.5}}}}.SVG())
	_, y0, _, y1 := frameBox(t, root)
	b := rectBox(t, root.byClass("hl-bar")[0])
	if math.Abs(b.y+b.h-y1) > 0.15 || b.y < y0 {
		t.Errorf("single bar %v in plot %g..%g", b, y0, y1)
	}
	if first := root.byClass("hl-ytick")[0].text; first != "0" {
		t.Errorf("value axis starts at %q, want 0", first)
	}
	// all negative: bars hang from the top
	root = parseSVG(t, Bars{Series: []BarSeries{{Values: []float64{-1, -2}}}}.SVG())
	_, y0, _, _ = frameBox(t, root)
	for _, n := range root.byClass("hl-bar") {
		if b := rectBox(t, n); math.Abs(b.y-y0) > 0.15 {
			t.Errorf("negative bar starts at %g, want the top %g", b.y, y0)
		}
	}
	// all zero: flat bars on a zero line mid-plot
	root = parseSVG(t, Bars{Series: []BarSeries{{Values: []float64{0, 0, 0}}}}.SVG())
	_, y0, _, y1 = frameBox(t, root)
	if z := zeroAt(t, root, false); math.Abs(z-(y0+y1)/2) > 0.2 {
		t.Errorf("all-zero: zero line at %g, want mid-plot", z)
	}
	// extremes stay finite
	doc := Bars{Stacked: true, Series: []BarSeries{
		{Values: []float64{1.7e308, -1.7e308, 5e-324}}, {Values: []float64{1.7e308, -1.7e308, -5e-324}}}}.SVG()
	parseSVG(t, doc)
	if strings.Contains(doc, "NaN") || strings.Contains(doc, "Inf") {
		t.Error("non-finite number in the document")
	}
}

func TestBarsColoursAndDeterminism(t *testing.T) {
	c := sampleBars()
	c.Series = append(c.Series, BarSeries{Name: "C", Values: []float64{1}, Color: "#123456"}, BarSeries{Name: "D", Values: []float64{1}})
	root := parseSVG(t, c.SVG())
	want := map[string]string{"Model A": Palette[0], "Model B": Palette[1], "C": "#123456", "D": Palette[2]}
	for _, n := range root.byClass("hl-bar") {
		if n.attr["fill"] != want[n.attr["data-series"]] {
			t.Errorf("%s fill %s", n.attr["data-series"], n.attr["fill"])
		}
	}
	a := c.SVG()
	if c.SVG() != a {
		t.Fatal("not deterministic")
	}
	v0 := append([]float64(nil), c.Series[0].Values...)
	_ = c.SVG()
	for i := range v0 {
		if v0[i] != c.Series[0].Values[i] && !(math.IsNaN(v0[i]) && math.IsNaN(c.Series[0].Values[i])) {
			t.Fatal("input modified")
		}
	}
}

func FuzzBars(f *testing.F) {
	nan, inf := math.NaN(), math.Inf(1)
	f.Add(fbytes(1, -2, 3, nan), fbytes(0, -3, 2), "a", 0, 0, false, false)
	f.Add(fbytes(inf, -inf, 1e308, -1e308, 5e-324), fbytes(1e308, nan), hostile, 100, 50, true, true)
	f.Add([]byte{}, []byte{1}, "\x00\xff", -1, 1<<20, true, false)
	f.Fuzz(func(t *testing.T, a, b []byte, name string, w, h int, stacked, horizontal bool) {
		va, vb := floats(a), floats(b)
		c := Bars{Title: name, XLabel: name, YLabel: name, Width: w, Height: h, Stacked: stacked, Horizontal: horizontal,
			Categories: strings.Split(name, "a"),
			Series: []BarSeries{
				{Name: name, Values: va, Lo: vb, Hi: va, Color: name},
				{Name: "", Values: vb, Lo: va, Hi: vb},
			}}
		if len(name)%2 == 0 {
			c.Categories = nil
		}
		doc := c.SVG()
		root, err := parseSVGErr(doc)
		if err != nil {
			t.Fatalf("%v\n%s", err, head(doc))
		}
		if c.SVG() != doc {
			t.Fatal("not deterministic")
		}
		for _, r := range root.byClass("hl-bar") {
			if r.attr["height"] == "" || strings.HasPrefix(r.attr["height"], "-") || strings.HasPrefix(r.attr["width"], "-") {
				t.Fatalf("bad bar size %v", r.attr)
			}
		}
	})
}

func BenchmarkBars(b *testing.B) {
	c := sampleBars()
	b.ReportAllocs()
	for b.Loop() {
		_ = c.SVG()
	}
}
