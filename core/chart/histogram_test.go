package chart

import (
	"math"
	"math/rand/v2"
	"slices"
	"strconv"
	"strings"
	"testing"
)

// draws returns n normal draws (mean 2.5, sd 0.6) from a fixed seed, like
// a Monte Carlo sensitivity estimate for the invented Tessary budget.
func draws(n int) []float64 {
	r := rand.New(rand.NewPCG(7, 11))
	v := make([]float64, n)
	for i := range v {
		v[i] = 2.5 + 0.6*r.NormFloat64()
	}
	return v
}

// binOf finds v's bin by a linear scan of the edges: a draw on an inner
// edge belongs above it, the last bin is closed.
func binOf(edges []float64, v float64) int {
	n := len(edges) - 1
	if v < edges[0] || v > edges[n] {
		return -1
	}
	for i := 0; i < n; i++ {
		if v < edges[i+1] {
			return i
		}
	}
	return n - 1
}

func checkBins(t *testing.T, name string, vals []float64, r HistogramBins) {
	t.Helper()
	if len(r.Edges) != len(r.Counts)+1 {
		t.Fatalf("%s: %d edges for %d bins", name, len(r.Edges), len(r.Counts))
	}
	for i := 1; i < len(r.Edges); i++ {
		if !(r.Edges[i] > r.Edges[i-1]) {
			t.Fatalf("%s: edges not increasing at %d: %v", name, i, r.Edges)
		}
	}
	want := make([]int, len(r.Counts))
	nonFinite, outside := 0, 0
	for _, v := range vals {
		if !finite(v) {
			nonFinite++
			continue
		}
		i := binOf(r.Edges, v)
		if i < 0 {
			outside++
			continue
		}
		want[i]++
	}
	if !slices.Equal(want, r.Counts) {
		t.Errorf("%s: counts %v, want %v", name, r.Counts, want)
	}
	if r.NonFinite != nonFinite || r.Below+r.Above != outside || r.Finite != len(vals)-nonFinite {
		t.Errorf("%s: non-finite %d below %d above %d finite %d; want %d, %d outside, %d", name,
			r.NonFinite, r.Below, r.Above, r.Finite, nonFinite, outside, len(vals)-nonFinite)
	}
}

func TestQuantile(t *testing.T) {
	// the interpolation rule numbered 7 by Hyndman and Fan (1996), worked by
	// hand for 1..10: h = p*9, so p = 0.25 gives 3 + 0.25*(4-3)
	s := []float64{1, 2, 3, 4, 5, 6, 7, 8, 9, 10}
	for p, want := range map[float64]float64{0: 1, 0.25: 3.25, 0.5: 5.5, 0.75: 7.75, 1: 10} {
		if got := quantile(s, p); math.Abs(got-want) > 1e-12 {
			t.Errorf("quantile(%g) = %g, want %g", p, got, want)
		}
	}
}

func TestHistogramAutoBins(t *testing.T) {
	for _, n := range []int{30, 1000, 100000} {
		v := draws(n)
		r := Histogram{Values: v}.Bin()
		name := "n=" + strconv.Itoa(n)
		checkBins(t, name, v, r)
		nb := len(r.Counts)
		if nb < autoMin || nb > autoMax {
			t.Errorf("%s: %d bins, want %d..%d", name, nb, autoMin, autoMax)
		}
		// a round width (1, 2 or 5 x 10^k) and edges on its multiples
		w := r.Edges[1] - r.Edges[0]
		k := math.Floor(math.Log10(w) + 1e-9)
		m := w / math.Pow10(int(k))
		if mr := math.Round(m); mr != 1 && mr != 2 && mr != 5 || math.Abs(m-mr) > 1e-6 {
			t.Errorf("%s: width %g is not round", name, w)
		}
		for _, e := range r.Edges {
			if q := e / w; math.Abs(q-math.Round(q)) > 1e-6 {
				t.Errorf("%s: edge %g is not a multiple of %g", name, e, w)
			}
		}
		// near the Freedman-Diaconis width: 2 IQR n^(-1/3) (Freedman and
		// Diaconis 1981), within one 1-2-5 step unless the count was capped
		s := append([]float64(nil), v...)
		slices.Sort(s)
		iqr := s[n*3/4] - s[n/4] // a rough IQR is enough for this bound
		fd := 2 * iqr / math.Cbrt(float64(n))
		fdCount := (s[n-1] - s[0]) / fd
		if fdCount > autoMin && fdCount < autoMax && (w > fd*2.6 || w < fd/2.6) {
			t.Errorf("%s: width %g far from the Freedman-Diaconis width %g", name, w, fd)
		}
		if r.Edges[0] > s[0] || r.Edges[nb] < s[n-1] {
			t.Errorf("%s: edges %g..%g do not cover %g..%g", name, r.Edges[0], r.Edges[nb], s[0], s[n-1])
		}
	}
	// a wide spread capped at 100 bins, a narrow one raised to 10
	v := draws(100000)
	v[0], v[1] = -1000, 1000
	if r := (Histogram{Values: v}).Bin(); len(r.Counts) > autoMax {
		t.Errorf("outliers: %d bins", len(r.Counts))
	}
	if r := (Histogram{Values: []float64{1, 2, 3}}).Bin(); len(r.Counts) < autoMin {
		t.Errorf("three draws: %d bins", len(r.Counts))
	}
	// no spread between the quartiles
	v = []float64{5, 5, 5, 5, 5, 5, 5, 5, 1, 9}
	r := Histogram{Values: v}.Bin()
	checkBins(t, "flat quartiles", v, r)
}

func TestHistogramGivenBinsAndRange(t *testing.T) {
	v := draws(5000)
	v = append(v, math.NaN(), math.Inf(1), math.Inf(-1))
	r := Histogram{Values: v, Bins: 25}.Bin()
	checkBins(t, "25 bins", v, r)
	if len(r.Counts) != 25 {
		t.Errorf("%d bins, want 25", len(r.Counts))
	}
	s := slices.DeleteFunc(append([]float64(nil), v...), func(x float64) bool { return !finite(x) })
	if r.Edges[0] != slices.Min(s) || r.Edges[25] != slices.Max(s) {
		t.Errorf("edges %g..%g, want the span of the draws", r.Edges[0], r.Edges[25])
	}
	if r.Counts[24] == 0 {
		t.Error("the largest draw is not in the last bin")
	}
	if r.NonFinite != 3 {
		t.Errorf("non-finite %d, want 3", r.NonFinite)
	}
	if r := (Histogram{Values: v, Bins: 1 << 30}).Bin(); len(r.Counts) != MaxBins {
		t.Errorf("huge Bins gave %d bins", len(r.Counts))
	}
	// draws on the edges: into the bin above, the top one into the last
	edgeVals := []float64{0, 1, 2, 3, 4, 5, 6, 7, 8, 9, 10}
	r = Histogram{Values: edgeVals, Bins: 10}.Bin()
	if !slices.Equal(r.Counts, []int{1, 1, 1, 1, 1, 1, 1, 1, 1, 2}) {
		t.Errorf("edge draws binned %v", r.Counts)
	}
	// a Range clips: outside draws are counted, not binned
	rg := [2]float64{3, 1.5} // reversed on purpose
	r = Histogram{Values: v, Range: &rg}.Bin()
	checkBins(t, "range", v, r)
	if r.Edges[0] != 1.5 || r.Edges[len(r.Edges)-1] != 3 {
		t.Errorf("range edges %g..%g", r.Edges[0], r.Edges[len(r.Edges)-1])
	}
	below, above := 0, 0
	for _, x := range s {
		if x < 1.5 {
			below++
		} else if x > 3 {
			above++
		}
	}
	if r.Below != below || r.Above != above {
		t.Errorf("below %d above %d, want %d and %d", r.Below, r.Above, below, above)
	}
	// the chart says so, in the note and the description
	h := Histogram{Values: v, Range: &rg, XLabel: "ECS (K)"}
	root := parseSVG(t, h.SVG())
	note := root.byClass("hl-note")
	if len(note) != 1 {
		t.Fatal("no note about left-out draws")
	}
	for _, want := range []string{strconv.Itoa(below) + " below 1.5", strconv.Itoa(above) + " above 3", "3 not finite"} {
		if !strings.Contains(note[0].text, want) {
			t.Errorf("note %q lacks %q", note[0].text, want)
		}
		if d := root.byName("desc")[0].text; !strings.Contains(d, want) {
			t.Errorf("desc %q lacks %q", d, want)
		}
	}
	// a Range that is not usable is ignored
	for _, bad := range [][2]float64{{1, 1}, {math.NaN(), 2}, {0, math.Inf(1)}} {
		r := Histogram{Values: v, Range: &bad}.Bin()
		if r.Below+r.Above != 0 {
			t.Errorf("range %v used", bad)
		}
	}
}

func TestHistogramChart(t *testing.T) {
	v := draws(20000)
	h := Histogram{Title: "Tessary sensitivity", XLabel: "ECS (K)", Values: v,
		Marks:     []Mark{{Name: "Median", X: 2.5}, {Name: "Outside", X: 9, Dashed: true}},
		Intervals: []Interval{{Name: "5-95 %", Lo: 1.5, Hi: 3.5, Y: 0.9}, {Name: "auto", Lo: 2, Hi: 3}}}
	r := h.Bin()
	root := parseSVG(t, h.SVG())
	x0, y0, x1, y1 := frameBox(t, root)
	bins := root.byClass("hl-bin")
	nonEmpty := 0
	maxC := 0
	for _, c := range r.Counts {
		if c > 0 {
			nonEmpty++
		}
		maxC = max(maxC, c)
	}
	if len(bins) != nonEmpty {
		t.Fatalf("%d bin rects, want %d", len(bins), nonEmpty)
	}
	// x axis: from the first edge to the outlying mark (axis widened)
	xlo, xhi := r.Edges[0], 9.0
	px := func(x float64) float64 { return x0 + (x-xlo)/(xhi-xlo)*(x1-x0) }
	// y axis: counts from 0; 30 % headroom for intervals
	ytop := float64(maxC) * 1.3
	py := func(c float64) float64 { return y1 - c/ytop*(y1-y0) }
	k := 0
	for i, c := range r.Counts {
		if c == 0 {
			continue
		}
		b := rectBox(t, bins[k])
		k++
		if math.Abs(b.x-px(r.Edges[i])) > 0.15 || math.Abs(b.x+b.w-px(r.Edges[i+1])) > 0.2 {
			t.Errorf("bin %d spans x %g..%g, want %g..%g", i, b.x, b.x+b.w, px(r.Edges[i]), px(r.Edges[i+1]))
		}
		if math.Abs(b.y-py(float64(c))) > 0.15 || math.Abs(b.y+b.h-y1) > 0.15 {
			t.Errorf("bin %d spans y %g..%g, want %g..%g", i, b.y, b.y+b.h, py(float64(c)), y1)
		}
		if tt := titleOf(bins[k-1]); !strings.Contains(tt, ": "+strconv.Itoa(c)+" (") {
			t.Errorf("bin %d hover %q lacks its count %d", i, tt, c)
		}
	}
	// count ticks are whole numbers
	for _, n := range root.byClass("hl-ytick") {
		if _, err := strconv.Atoi(n.text); err != nil {
			t.Errorf("count tick %q", n.text)
		}
	}
	if got := root.byClass("hl-ylabel")[0].text; got != "Count" {
		t.Errorf("default y label %q", got)
	}
	// marks: vertical, at their x, across the plot
	marks := root.byClass("hl-mark")
	if len(marks) != 2 {
		t.Fatalf("%d marks", len(marks))
	}
	for i, m := range marks {
		x := h.Marks[i].X
		if math.Abs(m.num(t, "x1")-px(x)) > 0.15 || m.attr["x1"] != m.attr["x2"] {
			t.Errorf("mark %d at %s, want %g", i, m.attr["x1"], px(x))
		}
		if m.num(t, "y1") != y0 || m.num(t, "y2") != y1 {
			t.Errorf("mark %d does not span the plot", i)
		}
		if (m.attr["stroke-dasharray"] != "") != h.Marks[i].Dashed {
			t.Errorf("mark %d dash", i)
		}
		if titleOf(m) != h.Marks[i].Name+": "+formatValue(x) {
			t.Errorf("mark %d hover %q", i, titleOf(m))
		}
	}
	if marks[0].attr["stroke"] != "#000000" || marks[1].attr["stroke"] == marks[0].attr["stroke"] {
		t.Errorf("mark colours %s %s", marks[0].attr["stroke"], marks[1].attr["stroke"])
	}
	// intervals: a horizontal stroke from Lo to Hi at height Y, with caps
	ivs := root.byClass("hl-interval")
	if len(ivs) != 2 {
		t.Fatalf("%d intervals", len(ivs))
	}
	runs := pathRuns(t, ivs[0].attr["d"])
	if len(runs) != 3 {
		t.Fatalf("interval strokes %v", runs)
	}
	wantY := y0 + (y1-y0)*(1-0.9)
	if st := runs[0]; math.Abs(st[0][0]-px(1.5)) > 0.15 || math.Abs(st[1][0]-px(3.5)) > 0.15 ||
		math.Abs(st[0][1]-wantY) > 0.15 || st[0][1] != st[1][1] {
		t.Errorf("interval stroke %v, want %g..%g at y=%g", st, px(1.5), px(3.5), wantY)
	}
	if y := pathRuns(t, ivs[1].attr["d"])[0][0][1]; y < y0 || y > y0+0.3*(y1-y0) {
		t.Errorf("automatic interval height %g not near the top", y)
	}
	// the automatic one sits above every bin
	for _, b := range bins {
		if pathRuns(t, ivs[1].attr["d"])[0][0][1] >= rectBox(t, b).y {
			t.Error("automatic interval overlaps the bins")
			break
		}
	}
	if n := len(root.byClass("hl-legend-item")); n != 4 {
		t.Errorf("%d legend entries, want 4", n)
	}
	if d := root.byName("desc")[0].text; !strings.Contains(d, "20000 draws") || !strings.Contains(d, "Median at 2.5") {
		t.Errorf("desc %q", d)
	}
}

func TestHistogramDensityAndClipping(t *testing.T) {
	v := draws(10000)
	rg := [2]float64{1.5, 3.5}
	h := Histogram{Values: v, Range: &rg, Density: true, Bins: 20,
		Marks:     []Mark{{Name: "in", X: 2}, {Name: "out", X: 4}},
		Intervals: []Interval{{Name: "wide", Lo: 0, Hi: 3, Y: 0.5}, {Name: "away", Lo: 5, Hi: 6}}}
	r := h.Bin()
	root := parseSVG(t, h.SVG())
	x0, y0, x1, y1 := frameBox(t, root)
	// area of the bars (in value units) = share of finite draws in range
	ticks := root.byClass("hl-ytick")
	t0, _ := strconv.ParseFloat(ticks[0].text, 64)
	t1, _ := strconv.ParseFloat(ticks[len(ticks)-1].text, 64)
	ty0, ty1 := ticks[0].num(t, "y"), ticks[len(ticks)-1].num(t, "y")
	perPx := (t1 - t0) / (ty0 - ty1)
	area := 0.0
	for _, b := range root.byClass("hl-bin") {
		bx := rectBox(t, b)
		area += bx.h * perPx * bx.w * (rg[1] - rg[0]) / (x1 - x0)
	}
	share := float64(len(v)-r.Below-r.Above) / float64(len(v))
	if math.Abs(area-share) > 0.01 {
		t.Errorf("density area %g, want %g (share in range)", area, share)
	}
	if got := root.byClass("hl-ylabel")[0].text; got != "Density" {
		t.Errorf("y label %q", got)
	}
	// marks outside the Range are left out; intervals are clipped
	if m := root.byClass("hl-mark"); len(m) != 1 || m[0].attr["data-series"] != "in" {
		t.Errorf("marks drawn: %d", len(m))
	}
	ivs := root.byClass("hl-interval")
	if len(ivs) != 1 {
		t.Fatalf("%d intervals, want 1", len(ivs))
	}
	runs := pathRuns(t, ivs[0].attr["d"])
	if len(runs) != 2 { // stroke and the cap at Hi; Lo was clipped
		t.Errorf("clipped interval strokes %v", runs)
	}
	if math.Abs(runs[0][0][0]-x0) > 0.15 {
		t.Errorf("clipped interval starts at %g, want the plot edge %g", runs[0][0][0], x0)
	}
	if y := runs[0][0][1]; math.Abs(y-(y0+y1)/2) > 0.15 {
		t.Errorf("interval at Y=0.5 drawn at %g", y)
	}
}

func TestHistogramEscaping(t *testing.T) {
	h := Histogram{Title: hostile, XLabel: hostile, YLabel: hostile, Values: draws(100), Width: 1000,
		Marks:     []Mark{{Name: hostile, X: 2.5, Color: `#000" onload="x`}},
		Intervals: []Interval{{Name: hostile, Lo: 2, Hi: 3}}, Color: "url(#x)"}
	doc := h.SVG()
	root := parseSVG(t, doc)
	if strings.Contains(doc, "<img") || strings.Contains(doc, "onload=") || strings.Contains(doc, "url(") {
		t.Fatal("markup leaked")
	}
	m := root.byClass("hl-mark")[0]
	if m.attr["data-series"] != hostile || !strings.HasPrefix(titleOf(m), hostile) {
		t.Errorf("mark name %q", m.attr["data-series"])
	}
	if iv := root.byClass("hl-interval")[0]; iv.attr["data-series"] != hostile {
		t.Errorf("interval name %q", iv.attr["data-series"])
	}
	for _, n := range root.byClass("hl-legend-text") {
		if n.text != hostile {
			t.Errorf("legend %q", n.text)
		}
	}
	if f := root.byClass("hl-bins")[0].attr["fill"]; f != histFill {
		t.Errorf("bad colour not replaced: %q", f)
	}
}

func TestHistogramEdgeCases(t *testing.T) {
	nan := math.NaN()
	for name, h := range map[string]Histogram{
		"zero value": {},
		"all NaN":    {Values: []float64{nan, math.Inf(1), nan}},
		"bins only":  {Bins: 5},
		"NaN, range": {Values: []float64{nan}, Range: &[2]float64{0, 1}, Bins: 3},
	} {
		root := parseSVG(t, h.SVG())
		if len(root.byClass("hl-nodata")) != 1 || len(root.byClass("hl-bin")) != 0 {
			t.Errorf("%s: want the no-data note", name)
		}
	}
	root := parseSVG(t, Histogram{Values: []float64{nan, math.Inf(1), nan}}.SVG())
	if d := root.byName("desc")[0].text; !strings.Contains(d, "3 not finite") {
		t.Errorf("all-NaN desc %q", d)
	}
	// one value, or constant values: one full bin in the middle
	for _, vals := range [][]float64{{2.5}, {-4, -4, -4, -4}, {0, 0}} {
		h := Histogram{Values: vals}
		r := h.Bin()
		checkBins(t, "constant", vals, r)
		full := -1
		for i, c := range r.Counts {
			if c > 0 {
				if full >= 0 {
					t.Fatalf("constant %v spread over bins %v", vals, r.Counts)
				}
				full = i
			}
		}
		if full != len(r.Counts)/2 {
			t.Errorf("constant %v in bin %d of %d, want the middle", vals, full, len(r.Counts))
		}
		root := parseSVG(t, h.SVG())
		if len(root.byClass("hl-bin")) != 1 {
			t.Errorf("constant %v: %d bins drawn", vals, len(root.byClass("hl-bin")))
		}
	}
	// all draws outside the Range: empty bins on the range, and the note
	rg := [2]float64{10, 20}
	root = parseSVG(t, Histogram{Values: []float64{1, 2, 30}, Range: &rg}.SVG())
	if len(root.byClass("hl-nodata")) != 0 || len(root.byClass("hl-bin")) != 0 {
		t.Error("all outside: want an empty frame, no bins")
	}
	if n := root.byClass("hl-note"); len(n) != 1 || !strings.Contains(n[0].text, "2 below 10, 1 above 20") {
		t.Errorf("all outside: note %v", n)
	}
	// extremes stay finite
	doc := Histogram{Values: []float64{-1.7e308, 1.7e308, 5e-324, 0}, Density: true,
		Marks: []Mark{{X: 1e308}}, Intervals: []Interval{{Lo: -1e308, Hi: 1e308}}}.SVG()
	parseSVG(t, doc)
	if strings.Contains(doc, "NaN") || strings.Contains(doc, "Inf") {
		t.Error("non-finite number in the document")
	}
	doc = Histogram{Values: []float64{1, 1 + 1e-15, 1 + 2e-15}}.SVG()
	parseSVG(t, doc)
}

func TestHistogramDeterministic(t *testing.T) {
	v := draws(3000)
	h := Histogram{Values: v, Marks: []Mark{{Name: "m", X: 2}}}
	a := h.SVG()
	if h.SVG() != a {
		t.Fatal("not deterministic")
	}
	before := append([]float64(nil), v...)
	_ = h.SVG()
	_ = h.Bin()
	if !slices.Equal(before, v) {
		t.Fatal("SVG or Bin sorted the caller's draws")
	}
}

func FuzzHistogram(f *testing.F) {
	nan, inf := math.NaN(), math.Inf(1)
	f.Add(fbytes(1, 2, 2, 3, 3, 3, nan), 0, 0.0, 0.0, "a", false)
	f.Add(fbytes(inf, -inf, 1e308, -1e308, 5e-324), 7, 1e308, -1e308, hostile, true)
	f.Add(fbytes(5, 5, 5), -3, nan, 1.0, "\x00\xff", true)
	f.Add([]byte{}, 1<<30, 0.0, 1.0, "", false)
	f.Fuzz(func(t *testing.T, a []byte, bins int, lo, hi float64, name string, density bool) {
		v := floats(a)
		h := Histogram{Title: name, XLabel: name, Values: v, Bins: bins, Density: density,
			Marks:     []Mark{{Name: name, X: lo}},
			Intervals: []Interval{{Name: name, Lo: lo, Hi: hi, Y: hi}}}
		if bins%2 == 0 {
			h.Range = &[2]float64{lo, hi}
		}
		r := h.Bin()
		if len(r.Counts) > 0 && len(r.Edges) != len(r.Counts)+1 {
			t.Fatalf("%d edges for %d bins", len(r.Edges), len(r.Counts))
		}
		total := r.Below + r.Above + r.NonFinite
		for _, c := range r.Counts {
			total += c
		}
		if total != len(v) {
			t.Fatalf("counted %d of %d draws", total, len(v))
		}
		doc := h.SVG()
		if _, err := parseSVGErr(doc); err != nil {
			t.Fatalf("%v\n%s", err, head(doc))
		}
		if h.SVG() != doc {
			t.Fatal("not deterministic")
		}
	})
}

func BenchmarkHistogram100000(b *testing.B) {
	h := Histogram{Values: draws(100000), Marks: []Mark{{Name: "Median", X: 2.5}},
		Intervals: []Interval{{Name: "5-95 %", Lo: 1.5, Hi: 3.5}}}
	b.ReportAllocs()
	var n int
	for b.Loop() {
		n = len(h.SVG())
	}
	b.ReportMetric(float64(n), "bytes/chart")
}
