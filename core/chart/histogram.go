package chart

import (
	"math"
	"slices"
	"strconv"
	"strings"
)

// Mark is a vertical reference line on a histogram (a median, an observed
// value).
type Mark struct {
	Name   string // legend text; "" = not in the legend
	X      float64
	Dashed bool
	Color  string // "" (or not a plain colour) = next overlay colour
}

// Interval is a horizontal bar from Lo to Hi on a histogram (a 5-95 %
// range), drawn with end caps at height Y.
type Interval struct {
	Name   string // legend text; "" = not in the legend
	Lo, Hi float64
	// Y is the height as a share of the plot, 0 at the bottom and 1 at the
	// top; outside (0,1] (and 0, the zero value) = placed automatically
	// near the top, one below the other.
	Y     float64
	Color string // "" (or not a plain colour) = next overlay colour
}

// Histogram draws the distribution of raw draws (e.g. Monte Carlo results)
// as bins, with optional reference marks and interval bars.
//
// Bins: Bins > 0 gives that many equal bins (at most 1000) over Range, or
// over the span of the draws. Bins == 0 chooses the count by the
// Freedman-Diaconis rule (width 2·IQR·n^(-1/3); Freedman and Diaconis 1981),
// kept within 10..100; without a Range the width is then rounded to 1, 2 or
// 5 times a power of ten and the edges put on multiples of it. A draw on an
// inner edge goes to the bin above it; the last bin includes its upper edge.
//
// Range clips: draws outside it are not binned; they are counted, and the
// count is given in the chart's note and description, as is the count of
// NaN and infinite draws (always left out). Marks and intervals outside a
// Range are clipped to it; without a Range the axis widens to show them.
//
// Density scales the bins so that their area is the share of all finite
// draws that fall in them (so the area is below 1 when a Range cuts draws
// off); otherwise bins show counts.
//
// Each bin is a <rect class="hl-bin"> with a <title> giving its edges and
// count; marks are <line class="hl-mark">, intervals <path
// class="hl-interval">, both with data-series="NAME" and a <title>.
type Histogram struct {
	Title, XLabel, YLabel string // YLabel "" = "Count" or "Density"; all text escaped
	Width, Height         int    // 0 = 720x360; clamped to [160x120, 10000]
	Values                []float64
	Bins                  int
	Range                 *[2]float64 // nil = the span of the draws; ignored unless both ends are finite and differ
	Marks                 []Mark
	Intervals             []Interval
	Density               bool
	Color                 string // bin colour; "" (or not a plain colour) = sky blue from Palette
	Desc                  string // <desc> text alternative; "" = generated summary
}

// Bin limits.
const (
	MaxBins  = 1000 // for a given Bins
	autoMin  = 10   // Freedman-Diaconis count kept within autoMin..autoMax
	autoMax  = 100
	histFill = "#56B4E9"
)

// overlayColors are the automatic colours of marks and intervals, in turn:
// black, then Okabe-Ito colours that stand apart from the sky-blue bins.
var overlayColors = []string{"#000000", "#D55E00", "#009E73", "#CC79A7", "#E69F00", "#0072B2"}

// HistogramBins is the result of binning: Counts[i] draws fell in
// [Edges[i], Edges[i+1]).
type HistogramBins struct {
	Edges  []float64 // len(Counts)+1, increasing
	Counts []int
	// Below and Above count finite draws outside a Range; NonFinite counts
	// NaN and infinite draws. Finite is the number of finite draws (binned
	// or not).
	Below, Above, NonFinite, Finite int
}

// validRange returns the Range if it is usable, lo < hi.
func (h Histogram) validRange() (lo, hi float64, ok bool) {
	if h.Range == nil {
		return 0, 0, false
	}
	lo, hi = h.Range[0], h.Range[1]
	if !finite(lo) || !finite(hi) || lo == hi {
		return 0, 0, false
	}
	if lo > hi {
		lo, hi = hi, lo
	}
	return lo, hi, true
}

// Bin sorts the draws into bins as the chart draws them.
func (h Histogram) Bin() HistogramBins {
	var r HistogramBins
	rlo, rhi, clipped := h.validRange()
	in := make([]float64, 0, len(h.Values))
	for _, v := range h.Values {
		switch {
		case !finite(v):
			r.NonFinite++
			continue
		case clipped && v < rlo:
			r.Below++
		case clipped && v > rhi:
			r.Above++
		default:
			in = append(in, v)
		}
		r.Finite++
	}
	if len(in) == 0 && (!clipped || r.Finite == 0) {
		return r // nothing to bin (with a Range, bins are kept while some finite draw exists)
	}
	slices.Sort(in)

	switch {
	case h.Bins > 0:
		lo, hi := rlo, rhi
		if !clipped {
			lo, hi = in[0], in[len(in)-1]
			if lo == hi {
				lo, hi = widen(lo)
			}
		}
		r.Edges = evenEdges(lo, hi, min(h.Bins, MaxBins))
	case clipped:
		r.Edges = evenEdges(rlo, rhi, fdCount(in, rlo, rhi))
	default:
		lo, hi := in[0], in[len(in)-1]
		if lo == hi {
			// one value: an odd count so it sits in the middle bin
			lo, hi = widen(lo)
			r.Edges = evenEdges(lo, hi, autoMin+1)
		} else {
			r.Edges = roundEdges(lo, hi, fdCount(in, lo, hi))
			if r.Edges == nil {
				r.Edges = evenEdges(lo, hi, fdCount(in, lo, hi))
			}
		}
	}
	nb := len(r.Edges) - 1
	r.Counts = make([]int, nb)
	lo, hi := r.Edges[0], r.Edges[nb]
	for _, v := range in {
		// first guess by position, then settle against the edges
		t := (v/2 - lo/2) / (hi/2 - lo/2)
		i := 0
		if t > 0 {
			i = int(math.Min(t*float64(nb), float64(nb-1)))
		}
		for i > 0 && v < r.Edges[i] {
			i--
		}
		for i < nb-1 && v >= r.Edges[i+1] {
			i++
		}
		r.Counts[i]++
	}
	return r
}

// evenEdges returns n+1 equally spaced edges from lo to hi (ends exact).
func evenEdges(lo, hi float64, n int) []float64 {
	n = max(n, 1)
	e := make([]float64, n+1)
	for i := 0; i <= n; i++ {
		t := float64(i) / float64(n)
		e[i] = lo*(1-t) + hi*t // no overflow for any finite lo, hi
	}
	e[0], e[n] = lo, hi
	for i := 1; i <= n; i++ { // rounding must not reorder edges
		if e[i] < e[i-1] {
			e[i] = e[i-1]
		}
	}
	return e
}

// fdCount is the Freedman-Diaconis bin count for the sorted draws s over
// [lo,hi], within autoMin..autoMax. With no spread between the quartiles
// it falls back to Sturges' count (ceil(log2 n)+1).
func fdCount(s []float64, lo, hi float64) int {
	n := len(s)
	if n < 2 {
		return autoMin
	}
	iqr := quantile(s, 0.75) - quantile(s, 0.25)
	width := 2 * iqr * math.Pow(float64(n), -1.0/3)
	count := math.Ceil((hi/2 - lo/2) / (width / 2))
	if !(width > 0) || !finite(count) {
		count = math.Ceil(math.Log2(float64(n))) + 1
	}
	return clampInt(int(math.Min(count, 1e9)), autoMin, autoMax)
}

// quantile of sorted s by linear interpolation between order statistics
// (the definition numbered 7 by Hyndman and Fan 1996).
func quantile(s []float64, p float64) float64 {
	h := p * float64(len(s)-1)
	i := int(math.Floor(h))
	if i >= len(s)-1 {
		return s[len(s)-1]
	}
	return s[i] + (h-float64(i))*(s[i+1]-s[i])
}

// roundEdges puts about n bins over [lo,hi] with a width of 1, 2 or 5 times
// a power of ten and edges on multiples of the width, keeping the count
// within autoMin..autoMax. It returns nil if no such width can be
// represented.
func roundEdges(lo, hi float64, n int) []float64 {
	m, k, ok := niceStep(lo, hi, n+1) // step near (hi-lo)/n
	if !ok {
		return nil
	}
	for try := 0; try < 8; try++ {
		val := func(j float64) float64 {
			if k < 0 {
				return j * m / math.Pow10(-k)
			}
			return j * m * math.Pow10(k)
		}
		step := val(1)
		if !(step > 0) || !finite(step) {
			return nil
		}
		j0, j1 := math.Floor(lo/step), math.Ceil(hi/step)
		if val(j0) > lo {
			j0--
		}
		if val(j1) < hi {
			j1++
		}
		if j1 == j0 {
			j1++
		}
		count := j1 - j0
		if !finite(count) {
			return nil
		}
		switch {
		case count > autoMax: // coarser: 1 -> 2 -> 5 -> 10
			m, k = nextStep(m, k, true)
		case count < autoMin:
			m, k = nextStep(m, k, false)
		default:
			e := make([]float64, int(count)+1)
			for i := range e {
				e[i] = val(j0 + float64(i))
				if !finite(e[i]) || i > 0 && e[i] <= e[i-1] {
					return nil // precision exhausted
				}
			}
			return e
		}
	}
	return nil
}

// nextStep moves along the 1-2-5 sequence.
func nextStep(m float64, k int, up bool) (float64, int) {
	if up {
		switch m {
		case 1:
			return 2, k
		case 2:
			return 5, k
		}
		return 1, k + 1
	}
	switch m {
	case 5:
		return 2, k
	case 2:
		return 1, k
	}
	return 5, k - 1
}

// SVG renders the histogram as a standalone SVG document. It never panics
// on any field values: non-finite draws are left out and counted, and a
// chart with nothing to draw shows a "No data to draw" note.
func (h Histogram) SVG() string {
	r := h.Bin()
	rlo, rhi, clipped := h.validRange()
	nb := len(r.Counts)
	fill := h.Color
	if !validColor(fill) {
		fill = histFill
	}

	// heights
	heights := make([]float64, nb)
	top := 0.0
	for i, c := range r.Counts {
		heights[i] = float64(c)
		if h.Density {
			w := r.Edges[i+1] - r.Edges[i]
			heights[i] = float64(c) / float64(r.Finite) / w
			if !finite(heights[i]) {
				heights[i] = 0
			}
		}
		top = math.Max(top, heights[i])
	}

	sp := frameSpec{
		kind:     "histogram",
		kindName: "Histogram",
		title:    h.Title,
		xlabel:   h.XLabel,
		ylabel:   h.YLabel,
		width:    h.Width,
		height:   h.Height,
		empty:    nb == 0,
		yInt:     !h.Density,
	}
	if sp.ylabel == "" {
		sp.ylabel = "Count"
		if h.Density {
			sp.ylabel = "Density"
		}
	}
	// overlays: colours and, without a Range, the x extent they need
	var xe extent
	if nb > 0 {
		xe.add(r.Edges[0])
		xe.add(r.Edges[nb])
	}
	oc := 0
	nextColor := func(c string) string {
		if validColor(c) {
			return c
		}
		c = overlayColors[oc%len(overlayColors)]
		oc++
		return c
	}
	markColors := make([]string, len(h.Marks))
	for i, m := range h.Marks {
		markColors[i] = nextColor(m.Color)
		if !clipped && nb > 0 {
			xe.add(m.X)
		}
	}
	ivColors := make([]string, len(h.Intervals))
	for i, iv := range h.Intervals {
		ivColors[i] = nextColor(iv.Color)
		if !clipped && nb > 0 && finite(iv.Lo) && finite(iv.Hi) {
			xe.add(iv.Lo)
			xe.add(iv.Hi)
		}
	}
	if !sp.empty {
		sp.xlo, sp.xhi = xe.lo, xe.hi
		if clipped {
			sp.xlo, sp.xhi = rlo, rhi
		}
		if !(sp.xlo < sp.xhi) {
			sp.xlo, sp.xhi = widen(sp.xlo)
		}
		sp.ylo = 0
		headroom := 1.05
		if len(h.Intervals) > 0 {
			headroom = 1.3 // room above the bins for the interval bars
		}
		sp.yhi = clampF(top * headroom)
		if !(sp.yhi > 0) {
			sp.yhi = 1
		}
	}
	for i, m := range h.Marks {
		if m.Name != "" {
			sp.legend = append(sp.legend, legendEntry{name: m.Name, color: markColors[i], kind: swatchLine, dashed: m.Dashed, width: 2})
		}
	}
	for i, iv := range h.Intervals {
		if iv.Name != "" {
			sp.legend = append(sp.legend, legendEntry{name: iv.Name, color: ivColors[i], kind: swatchLine, width: 3})
		}
	}
	sp.note = r.note(rlo, rhi)
	sp.desc = h.Desc
	if sp.desc == "" {
		sp.desc = h.summary(r)
	}

	f := layout(sp)
	var b svgBuf
	b.b = make([]byte, 0, 4096+160*nb)
	f.open(&b)
	if !f.empty {
		b.raw(`<g class="hl-plot">`)
		f.drawBins(&b, r, heights, fill, h.Density)
		f.drawMarks(&b, h.Marks, markColors)
		f.drawIntervals(&b, h.Intervals, ivColors)
		b.raw("</g>")
	}
	f.close(&b)
	return b.String()
}

// note says which draws are not shown.
func (r HistogramBins) note(lo, hi float64) string {
	var parts []string
	if r.Below > 0 {
		parts = append(parts, strconv.Itoa(r.Below)+" below "+formatValue(lo))
	}
	if r.Above > 0 {
		parts = append(parts, strconv.Itoa(r.Above)+" above "+formatValue(hi))
	}
	if r.NonFinite > 0 {
		parts = append(parts, strconv.Itoa(r.NonFinite)+" not finite (NaN or infinite)")
	}
	if len(parts) == 0 {
		return ""
	}
	return "Not shown: " + strings.Join(parts, ", ") + "."
}

func (f *frame) drawBins(b *svgBuf, r HistogramBins, heights []float64, fill string, density bool) {
	b.raw(`<g class="hl-bins"`)
	b.attr("fill", fill)
	b.attr("stroke", inkPaper)
	b.raw(` stroke-width="0.5">`)
	y0 := f.ys.at(0)
	for i, c := range r.Counts {
		if c == 0 {
			continue
		}
		x0, x1 := f.xs.at(r.Edges[i]), f.xs.at(r.Edges[i+1])
		y1 := f.ys.at(heights[i])
		if !finite(x0) || !finite(x1) || !finite(y1) || !finite(y0) {
			continue
		}
		b.raw(`<rect class="hl-bin"`)
		b.num("x", x0)
		b.num("y", y1)
		b.num("width", math.Max(x1-x0, 0.1))
		b.num("height", y0-y1)
		b.raw("><title>")
		b.text(formatValue(r.Edges[i]) + " to " + formatValue(r.Edges[i+1]) + ": " + strconv.Itoa(c))
		if r.Finite > 0 {
			b.text(" (" + formatValue(100*float64(c)/float64(r.Finite)) + " %)")
		}
		if density {
			b.text(", density " + formatValue(heights[i]))
		}
		b.raw("</title></rect>")
	}
	b.raw("</g>")
}

func (f *frame) drawMarks(b *svgBuf, marks []Mark, colors []string) {
	for i, m := range marks {
		if !finite(m.X) || m.X < f.xlo || m.X > f.xhi {
			continue
		}
		x := f.xs.at(m.X)
		if !finite(x) {
			continue
		}
		b.raw(`<line class="hl-mark"`)
		b.attr("data-series", m.Name)
		b.num("x1", x)
		b.num("y1", f.T)
		b.num("x2", x)
		b.num("y2", f.T+f.PH)
		b.attr("stroke", colors[i])
		b.raw(` stroke-width="2"`)
		if m.Dashed {
			b.raw(` stroke-dasharray="6 3"`)
		}
		b.raw("><title>")
		if m.Name != "" {
			b.text(m.Name + ": ")
		}
		b.text(formatValue(m.X))
		b.raw("</title></line>")
	}
}

func (f *frame) drawIntervals(b *svgBuf, ivs []Interval, colors []string) {
	auto := 0
	for i, iv := range ivs {
		if !finite(iv.Lo) || !finite(iv.Hi) {
			continue
		}
		lo, hi := math.Min(iv.Lo, iv.Hi), math.Max(iv.Lo, iv.Hi)
		if hi < f.xlo || lo > f.xhi {
			continue // wholly outside the Range
		}
		frac := iv.Y
		if !(frac > 0 && frac <= 1) {
			frac = math.Max(0.05, 0.92-0.07*float64(auto))
			auto++
		}
		y := f.T + f.PH*(1-frac)
		x0 := f.xs.at(math.Max(lo, f.xlo))
		x1 := f.xs.at(math.Min(hi, f.xhi))
		if !finite(x0) || !finite(x1) {
			continue
		}
		var d []byte
		pt := func(cmd byte, x, y float64) {
			d = append(d, cmd)
			d = appendCoord(d, x)
			d = append(d, ',')
			d = appendCoord(d, y)
		}
		pt('M', x0, y)
		pt('L', x1, y)
		// caps only at ends that are not clipped
		if lo >= f.xlo {
			pt('M', x0, y-5)
			pt('L', x0, y+5)
		}
		if hi <= f.xhi {
			pt('M', x1, y-5)
			pt('L', x1, y+5)
		}
		b.raw(`<path class="hl-interval"`)
		b.attr("data-series", iv.Name)
		b.raw(` d="`)
		b.b = append(b.b, d...)
		b.raw(`" fill="none"`)
		b.attr("stroke", colors[i])
		b.raw(` stroke-width="3"><title>`)
		if iv.Name != "" {
			b.text(iv.Name + ": ")
		}
		b.text(formatValue(lo) + " to " + formatValue(hi))
		b.raw("</title></path>")
	}
}

// summary is the generated text alternative.
func (h Histogram) summary(r HistogramBins) string {
	var s strings.Builder
	if h.Title != "" {
		s.WriteString(h.Title)
		s.WriteString(". ")
	}
	s.WriteString("Histogram")
	if h.XLabel != "" {
		s.WriteString(" of ")
		s.WriteString(h.XLabel)
	}
	binned := r.Finite - r.Below - r.Above
	if len(r.Counts) == 0 {
		s.WriteString("; no data to draw.")
	} else {
		s.WriteString(": " + strconv.Itoa(binned) + " draws in " + strconv.Itoa(len(r.Counts)) + " bins from " +
			formatValue(r.Edges[0]) + " to " + formatValue(r.Edges[len(r.Edges)-1]) + ".")
	}
	rlo, rhi, _ := h.validRange()
	if n := r.note(rlo, rhi); n != "" {
		s.WriteString(" ")
		s.WriteString(n)
	}
	var names []string
	for _, m := range h.Marks {
		if m.Name != "" && finite(m.X) {
			names = append(names, clip(m.Name, 60)+" at "+formatValue(m.X))
		}
	}
	for _, iv := range h.Intervals {
		if iv.Name != "" && finite(iv.Lo) && finite(iv.Hi) {
			names = append(names, clip(iv.Name, 60)+" from "+formatValue(math.Min(iv.Lo, iv.Hi))+" to "+formatValue(math.Max(iv.Lo, iv.Hi)))
		}
	}
	if len(names) > 0 {
		s.WriteString(" Marked: " + nameList(names) + ".")
	}
	return s.String()
}
