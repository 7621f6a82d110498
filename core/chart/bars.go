package chart

import (
	"math"
	"strconv"
	"strings"
)

// BarSeries is one named set of bars, one value per category.
type BarSeries struct {
	Name   string    // legend text; "" = not in the legend
	Values []float64 // one per category; NaN or ±Inf = no bar
	// Lo and Hi are optional error bar ends, one per category (nil = none).
	// An error bar is drawn where both are finite (swapped if Lo > Hi), in
	// grouped charts only: the range of one part does not stack.
	Lo, Hi []float64
	Color  string // "" (or not a plain colour) = next palette colour
}

// Bars is a bar chart: grouped (series side by side in each category) or
// stacked (series on top of each other; positive parts upward from zero,
// negative parts downward from zero, each kept apart), with a zero line and
// optional error bars.
//
// Categories run along the horizontal axis, or top to bottom along the
// vertical axis when Horizontal is set. XLabel always names the horizontal
// axis and YLabel the vertical one, so in a horizontal chart XLabel names
// the values.
//
// Each bar is a <rect class="hl-bar" data-series="NAME"
// data-category="CATEGORY"> with a <title> child giving its value; each
// error bar a <path class="hl-errorbar"> with the same data attributes.
type Bars struct {
	Title, XLabel, YLabel string // labels include units, e.g. "Contribution (K)"; all text escaped
	Width, Height         int    // 0 = 720x360; clamped to [160x120, 10000]
	// Categories names the categories. Its length is the number of
	// categories (values past it are ignored); if empty, the longest series
	// decides and the categories are numbered from 1.
	Categories []string
	Series     []BarSeries
	Stacked    bool
	Horizontal bool
	Desc       string // <desc> text alternative; "" = generated summary
}

// Bar geometry as shares of a category's band.
const (
	groupShare = 0.8
	stackShare = 0.6
	capPx      = 8.0 // widest error bar cap
)

// categories returns the category names in use.
func (c Bars) categories() []string {
	if len(c.Categories) > 0 {
		return c.Categories
	}
	n := 0
	for _, s := range c.Series {
		n = max(n, len(s.Values))
	}
	out := make([]string, n)
	for i := range out {
		out[i] = strconv.Itoa(i + 1)
	}
	return out
}

// errorBar returns the ends of series s's error bar in category i.
func errorBar(s BarSeries, i int) (lo, hi float64, ok bool) {
	lo, hi = at(s.Lo, i), at(s.Hi, i)
	if !finite(lo) || !finite(hi) {
		return 0, 0, false
	}
	if lo > hi {
		lo, hi = hi, lo
	}
	return lo, hi, true
}

// barSeg is one bar as drawn: series, category and value span.
type barSeg struct {
	s, i   int
	v0, v1 float64 // from v0 (the base) to v1
}

// segments lays the bars out along the value axis, and returns the finite
// extent of everything drawn (bars and error bars).
func (c Bars) segments(n int) (segs []barSeg, e extent) {
	if c.Stacked {
		for i := 0; i < n; i++ {
			pos, neg := 0.0, 0.0
			for s, ser := range c.Series {
				v := at(ser.Values, i)
				if !finite(v) {
					continue
				}
				base := &pos
				if v < 0 {
					base = &neg
				}
				top := clampF(*base + v)
				segs = append(segs, barSeg{s: s, i: i, v0: *base, v1: top})
				*base = top
				e.add(top)
			}
		}
	} else {
		for s, ser := range c.Series {
			for i := 0; i < n; i++ {
				v := at(ser.Values, i)
				if !finite(v) {
					continue
				}
				segs = append(segs, barSeg{s: s, i: i, v1: v})
				e.add(v)
				if lo, hi, ok := errorBar(ser, i); ok {
					e.add(lo)
					e.add(hi)
				}
			}
		}
	}
	return segs, e
}

// SVG renders the chart as a standalone SVG document. It never panics on
// any field values: missing values leave a gap, and a chart with nothing to
// draw shows a "No data to draw" note.
func (c Bars) SVG() string {
	cats := c.categories()
	n := len(cats)
	segs, ve := c.segments(n)

	colors := make([]string, len(c.Series))
	next := 0
	for i, s := range c.Series {
		colors[i] = s.Color
		if !validColor(colors[i]) {
			colors[i] = seriesColor(next)
			next++
		}
	}

	sp := frameSpec{
		kind:     "bars",
		kindName: "Bar chart",
		title:    c.Title,
		xlabel:   c.XLabel,
		ylabel:   c.YLabel,
		width:    c.Width,
		height:   c.Height,
		empty:    len(segs) == 0,
	}
	var vlo, vhi float64
	if !sp.empty {
		ve.add(0) // bars start at zero
		vlo, vhi = ve.lo, ve.hi
		if vlo == vhi { // all zero
			vlo, vhi = widen(vlo)
		} else {
			p0, p1 := padRange(vlo, vhi, 0.05)
			if vlo < 0 {
				vlo = p0
			}
			if vhi > 0 {
				vhi = p1
			}
		}
		if c.Horizontal {
			sp.yCats, sp.ylo, sp.yhi = cats, 0, float64(n)
			sp.xlo, sp.xhi, sp.xZero = vlo, vhi, true
		} else {
			sp.xCats, sp.xlo, sp.xhi = cats, 0, float64(n)
			sp.ylo, sp.yhi, sp.yZero = vlo, vhi, true
		}
	}
	for i, s := range c.Series {
		if s.Name != "" {
			sp.legend = append(sp.legend, legendEntry{name: s.Name, color: colors[i], kind: swatchArea, opacity: 1})
		}
	}
	sp.desc = c.Desc
	if sp.desc == "" {
		sp.desc = c.summary(cats, segs, ve)
	}

	f := layout(sp)
	var b svgBuf
	b.b = make([]byte, 0, 4096+200*len(segs))
	f.open(&b)
	if !f.empty {
		b.raw(`<g class="hl-plot">`)
		f.drawBars(&b, c, cats, segs, colors)
		f.zeroLine(&b)
		if !c.Stacked {
			f.drawErrorBars(&b, c, cats)
		}
		b.raw("</g>")
	}
	f.close(&b)
	return b.String()
}

// barBox maps a bar from category-axis span [c0,c1] (in category units) and
// value span [v0,v1] to a pixel box.
func (f *frame) barBox(horizontal bool, n int, c0, c1, v0, v1 float64) (x, y, w, h float64, ok bool) {
	var xa, xb, ya, yb float64
	if horizontal {
		xa, xb = f.xs.at(v0), f.xs.at(v1)
		ya, yb = f.ys.at(float64(n)-c0), f.ys.at(float64(n)-c1)
	} else {
		xa, xb = f.xs.at(c0), f.xs.at(c1)
		ya, yb = f.ys.at(v0), f.ys.at(v1)
	}
	if !finite(xa) || !finite(xb) || !finite(ya) || !finite(yb) {
		return 0, 0, 0, 0, false
	}
	return math.Min(xa, xb), math.Min(ya, yb), math.Abs(xb - xa), math.Abs(yb - ya), true
}

// slot is the span of series s's bar in category i, in category units.
func (c Bars) slot(s, i int) (float64, float64) {
	ci := float64(i)
	if c.Stacked {
		return ci + (1-stackShare)/2, ci + (1+stackShare)/2
	}
	w := groupShare / float64(len(c.Series))
	a := ci + (1-groupShare)/2 + float64(s)*w
	return a, a + w
}

func (f *frame) drawBars(b *svgBuf, c Bars, cats []string, segs []barSeg, colors []string) {
	b.raw(`<g class="hl-bars">`)
	for _, sg := range segs {
		ser := c.Series[sg.s]
		c0, c1 := c.slot(sg.s, sg.i)
		x, y, w, h, ok := f.barBox(c.Horizontal, len(cats), c0, c1, sg.v0, sg.v1)
		if !ok {
			continue
		}
		b.raw(`<rect class="hl-bar"`)
		b.attr("data-series", ser.Name)
		b.attr("data-category", cats[sg.i])
		b.num("x", x)
		b.num("y", y)
		b.num("width", w)
		b.num("height", h)
		b.attr("fill", colors[sg.s])
		b.raw("><title>")
		b.text(barTitle(ser, cats[sg.i], sg.i, c.Stacked))
		b.raw("</title></rect>")
	}
	b.raw("</g>")
}

// barTitle is the hover text of one bar.
func barTitle(s BarSeries, cat string, i int, stacked bool) string {
	var t strings.Builder
	if s.Name != "" {
		t.WriteString(s.Name)
		t.WriteString(", ")
	}
	t.WriteString(cat)
	t.WriteString(": ")
	t.WriteString(formatValue(at(s.Values, i)))
	if lo, hi, ok := errorBar(s, i); ok && !stacked {
		t.WriteString(" (" + formatValue(lo) + " to " + formatValue(hi) + ")")
	}
	return t.String()
}

func (f *frame) drawErrorBars(b *svgBuf, c Bars, cats []string) {
	n := len(cats)
	for s, ser := range c.Series {
		for i := 0; i < n; i++ {
			lo, hi, ok := errorBar(ser, i)
			if !ok || !finite(at(ser.Values, i)) {
				continue
			}
			c0, c1 := c.slot(s, i)
			x, y, w, h, ok := f.barBox(c.Horizontal, n, c0, c1, lo, hi)
			if !ok {
				continue
			}
			b.raw(`<path class="hl-errorbar"`)
			b.attr("data-series", ser.Name)
			b.attr("data-category", cats[i])
			b.raw(` d="`)
			var d []byte
			pt := func(cmd byte, x, y float64) {
				d = append(d, cmd)
				d = appendCoord(d, x)
				d = append(d, ',')
				d = appendCoord(d, y)
			}
			if c.Horizontal {
				cap := math.Min(capPx, h*0.5)
				m := y + h/2
				pt('M', x, m)
				pt('L', x+w, m)
				pt('M', x, m-cap/2)
				pt('L', x, m+cap/2)
				pt('M', x+w, m-cap/2)
				pt('L', x+w, m+cap/2)
			} else {
				cap := math.Min(capPx, w*0.5)
				m := x + w/2
				pt('M', m, y)
				pt('L', m, y+h)
				pt('M', m-cap/2, y)
				pt('L', m+cap/2, y)
				pt('M', m-cap/2, y+h)
				pt('L', m+cap/2, y+h)
			}
			b.b = append(b.b, d...)
			b.raw(`" fill="none"`)
			b.attr("stroke", inkText)
			b.raw(` stroke-width="1.5"/>`)
		}
	}
}

// summary is the generated text alternative.
func (c Bars) summary(cats []string, segs []barSeg, ve extent) string {
	var s strings.Builder
	if c.Title != "" {
		s.WriteString(c.Title)
		s.WriteString(". ")
	}
	if c.Stacked {
		s.WriteString("Stacked bar chart")
	} else {
		s.WriteString("Bar chart")
	}
	var names []string
	for _, ser := range c.Series {
		if ser.Name != "" {
			names = append(names, clip(ser.Name, 60))
		}
	}
	if len(names) > 0 {
		s.WriteString(" of ")
		s.WriteString(nameList(names))
	}
	if len(segs) == 0 {
		s.WriteString("; no data to draw.")
		return s.String()
	}
	short := make([]string, len(cats))
	for i, c := range cats {
		short[i] = clip(c, 40)
	}
	s.WriteString(" in " + strconv.Itoa(len(cats)) + " categories (" + nameList(short) + ")")
	label := c.YLabel
	if c.Horizontal {
		label = c.XLabel
	}
	s.WriteString(". " + orDefault(label, "Values"))
	if c.Stacked {
		s.WriteString(", stacked,")
	}
	s.WriteString(" from " + formatValue(math.Min(ve.lo, 0)) + " to " + formatValue(math.Max(ve.hi, 0)) + ".")
	return s.String()
}
