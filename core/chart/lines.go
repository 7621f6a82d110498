package chart

import (
	"math"
	"strconv"
	"strings"
)

// Line is one series drawn as a polyline.
type Line struct {
	Name   string    // legend text; "" = not in the legend
	X, Y   []float64 // decimal years and values; NaN in X or Y = missing -> a gap in the line (never drawn across)
	Color  string    // "" (or not a plain colour) = next palette colour
	Dashed bool
	Width  float64 // stroke width; 0 = default (1.5)
	// Markers draws a dot at every point. Points with no neighbour on
	// either side (isolated by gaps, or a one-point series) always get one.
	Markers bool
}

// Band is a shaded area between Lo and Hi (a confidence or spread band).
// A point is missing if X, Lo or Hi is NaN or infinite; the area is then
// split there, as a line is.
type Band struct {
	Name      string // legend text; "" = not in the legend
	X, Lo, Hi []float64
	// Color "" = the colour of the Line with the same (non-empty) Name, so a
	// trend and its band match; otherwise the next palette colour.
	Color   string
	Opacity float64 // fill opacity in (0,1]; 0 = default (0.2)
}

// Lines is a line chart: lines over shaded bands on a decimal-year x axis.
type Lines struct {
	Title, XLabel, YLabel string // labels include units, e.g. "Anomaly (K)"; all text escaped
	Width, Height         int    // 0 = 720x360; clamped to [160x120, 10000]
	Lines                 []Line
	Bands                 []Band
	YZero                 bool   // draw a y=0 reference line when in range
	Desc                  string // <desc> text alternative; "" = generated summary
}

// Defaults for Line and Band.
const (
	DefaultLineWidth   = 1.5
	DefaultBandOpacity = 0.2
	maxLineWidth       = 20
)

// extent tracks the finite range of values.
type extent struct {
	lo, hi float64
	n      int
}

func (e *extent) add(v float64) {
	if !finite(v) {
		return
	}
	if e.n == 0 || v < e.lo {
		e.lo = v
	}
	if e.n == 0 || v > e.hi {
		e.hi = v
	}
	e.n++
}

// at returns s[i], or NaN past the end (ragged input counts as missing).
func at(s []float64, i int) float64 {
	if i < len(s) {
		return s[i]
	}
	return math.NaN()
}

func maxLen(s ...[]float64) int {
	n := 0
	for _, v := range s {
		n = max(n, len(v))
	}
	return n
}

// resolved colours and styles of one chart.
type lineStyle struct {
	color   string
	width   float64
	opacity float64
}

func (c Lines) styles() (ls, bs []lineStyle) {
	next := 0
	auto := func() string {
		col := seriesColor(next)
		next++
		return col
	}
	byName := map[string]string{}
	for _, l := range c.Lines {
		s := lineStyle{color: l.Color, width: l.Width}
		if !validColor(s.color) {
			s.color = auto()
		}
		if !(s.width > 0) || !finite(s.width) {
			s.width = DefaultLineWidth
		}
		s.width = math.Min(s.width, maxLineWidth)
		if l.Name != "" {
			if _, seen := byName[l.Name]; !seen {
				byName[l.Name] = s.color
			}
		}
		ls = append(ls, s)
	}
	for _, b := range c.Bands {
		s := lineStyle{color: b.Color, opacity: b.Opacity}
		if !validColor(s.color) {
			if col, ok := byName[b.Name]; ok && b.Name != "" {
				s.color = col
			} else {
				s.color = auto()
			}
		}
		if !(s.opacity > 0) || !finite(s.opacity) {
			s.opacity = DefaultBandOpacity
		}
		s.opacity = math.Min(s.opacity, 1)
		bs = append(bs, s)
	}
	return ls, bs
}

// dataExtent is the range of all drawable points.
func (c Lines) dataExtent() (x, y extent) {
	for _, l := range c.Lines {
		for i, n := 0, maxLen(l.X, l.Y); i < n; i++ {
			xv, yv := at(l.X, i), at(l.Y, i)
			if finite(xv) && finite(yv) {
				x.add(xv)
				y.add(yv)
			}
		}
	}
	for _, b := range c.Bands {
		for i, n := 0, maxLen(b.X, b.Lo, b.Hi); i < n; i++ {
			xv, lo, hi := at(b.X, i), at(b.Lo, i), at(b.Hi, i)
			if finite(xv) && finite(lo) && finite(hi) {
				x.add(xv)
				y.add(lo)
				y.add(hi)
			}
		}
	}
	return x, y
}

// padRange widens [lo,hi] by frac of its width on each side (a zero-width
// range is widened by widen), staying finite.
func padRange(lo, hi, frac float64) (float64, float64) {
	if lo == hi {
		return widen(lo)
	}
	d := (hi/2 - lo/2) * 2 * frac
	if math.IsInf(d, 0) {
		d = math.MaxFloat64
	}
	lo, hi = lo-d, hi+d
	if math.IsInf(lo, 0) {
		lo = -math.MaxFloat64
	}
	if math.IsInf(hi, 0) {
		hi = math.MaxFloat64
	}
	return lo, hi
}

// xRange gives the x domain: the data span, or a two-year window around a
// single time.
func xRange(lo, hi float64) (float64, float64) {
	if lo < hi {
		return lo, hi
	}
	d := 1.0
	if lo-d == lo || lo+d == lo {
		return widen(lo)
	}
	return lo - d, lo + d
}

// SVG renders the chart as a standalone SVG document. It never panics on
// any field values: missing and non-finite data become gaps, and a chart
// with nothing to draw shows a "No data to draw" note.
func (c Lines) SVG() string {
	ls, bs := c.styles()
	xe, ye := c.dataExtent()

	sp := frameSpec{
		kind:     "lines",
		kindName: "Line chart",
		title:    c.Title,
		xlabel:   c.XLabel,
		ylabel:   c.YLabel,
		width:    c.Width,
		height:   c.Height,
		yZero:    c.YZero,
		empty:    xe.n == 0,
	}
	if !sp.empty {
		sp.xlo, sp.xhi = xRange(xe.lo, xe.hi)
		sp.ylo, sp.yhi = padRange(ye.lo, ye.hi, 0.05)
	}
	for i, l := range c.Lines {
		if l.Name != "" {
			sp.legend = append(sp.legend, legendEntry{name: l.Name, color: ls[i].color,
				kind: swatchLine, dashed: l.Dashed, width: ls[i].width})
		}
	}
	for i, b := range c.Bands {
		if b.Name != "" {
			sp.legend = append(sp.legend, legendEntry{name: b.Name, color: bs[i].color,
				kind: swatchArea, opacity: bs[i].opacity})
		}
	}
	sp.desc = c.Desc
	if sp.desc == "" {
		sp.desc = c.summary(xe, ye)
	}

	f := layout(sp)
	var b svgBuf
	b.b = make([]byte, 0, 4096+16*c.points())
	f.open(&b)
	if !f.empty {
		b.raw(`<g class="hl-plot">`)
		for i, band := range c.Bands {
			f.drawBand(&b, band, bs[i])
		}
		f.zeroLine(&b)
		for i, l := range c.Lines {
			f.drawLine(&b, l, ls[i])
		}
		b.raw("</g>")
	}
	f.close(&b)
	return b.String()
}

func (c Lines) points() int {
	n := 0
	for _, l := range c.Lines {
		n += maxLen(l.X, l.Y)
	}
	for _, b := range c.Bands {
		n += 2 * maxLen(b.X, b.Lo, b.Hi)
	}
	return min(n, 1<<20)
}

// drawLine writes one line: a path with one "M" per unbroken run of two or
// more points, and markers for isolated points (or all points if asked).
func (f *frame) drawLine(b *svgBuf, l Line, st lineStyle) {
	n := maxLen(l.X, l.Y)
	pxs := make([]float64, n)
	pys := make([]float64, n)
	ok := make([]bool, n)
	for i := 0; i < n; i++ {
		xv, yv := at(l.X, i), at(l.Y, i)
		if !finite(xv) || !finite(yv) {
			continue
		}
		pxs[i], pys[i] = f.xs.at(xv), f.ys.at(yv)
		ok[i] = finite(pxs[i]) && finite(pys[i])
	}

	var d []byte
	var dots []int
	for i := 0; i < n; {
		if !ok[i] {
			i++
			continue
		}
		j := i
		for j < n && ok[j] {
			j++
		}
		if j-i == 1 {
			dots = append(dots, i)
		} else {
			d = append(d, 'M')
			for k := i; k < j; k++ {
				if k == i+1 {
					d = append(d, 'L')
				} else if k > i+1 {
					d = append(d, ' ')
				}
				d = appendCoord(d, pxs[k])
				d = append(d, ',')
				d = appendCoord(d, pys[k])
			}
		}
		i = j
	}
	if len(d) > 0 {
		b.raw(`<path class="hl-line"`)
		b.attr("data-series", l.Name)
		b.raw(` d="`)
		b.b = append(b.b, d...)
		b.raw(`" fill="none"`)
		b.attr("stroke", st.color)
		b.num("stroke-width", st.width)
		b.raw(` stroke-linejoin="round" stroke-linecap="round"`)
		if l.Dashed {
			b.raw(` stroke-dasharray="6 3"`)
		}
		b.raw("/>")
	}
	if l.Markers {
		dots = dots[:0]
		for i := 0; i < n; i++ {
			if ok[i] {
				dots = append(dots, i)
			}
		}
	}
	if len(dots) > 0 {
		b.raw(`<g class="hl-points"`)
		b.attr("data-series", l.Name)
		b.attr("fill", st.color)
		b.byte('>')
		r := math.Max(3, st.width*2)
		for _, i := range dots {
			b.raw(`<circle class="hl-point"`)
			b.num("cx", pxs[i])
			b.num("cy", pys[i])
			b.num("r", r)
			b.raw("/>")
		}
		b.raw("</g>")
	}
}

// drawBand writes one band: a closed area per unbroken run of two or more
// points, and a short vertical stroke from Lo to Hi for isolated points.
func (f *frame) drawBand(b *svgBuf, band Band, st lineStyle) {
	n := maxLen(band.X, band.Lo, band.Hi)
	px := make([]float64, n)
	plo := make([]float64, n)
	phi := make([]float64, n)
	ok := make([]bool, n)
	for i := 0; i < n; i++ {
		xv, lo, hi := at(band.X, i), at(band.Lo, i), at(band.Hi, i)
		if !finite(xv) || !finite(lo) || !finite(hi) {
			continue
		}
		px[i], plo[i], phi[i] = f.xs.at(xv), f.ys.at(lo), f.ys.at(hi)
		ok[i] = finite(px[i]) && finite(plo[i]) && finite(phi[i])
	}
	var area, ticks []byte
	pt := func(d []byte, x, y float64) []byte {
		d = appendCoord(d, x)
		d = append(d, ',')
		return appendCoord(d, y)
	}
	for i := 0; i < n; {
		if !ok[i] {
			i++
			continue
		}
		j := i
		for j < n && ok[j] {
			j++
		}
		if j-i == 1 {
			ticks = append(ticks, 'M')
			ticks = pt(ticks, px[i], plo[i])
			ticks = append(ticks, 'L')
			ticks = pt(ticks, px[i], phi[i])
		} else {
			area = append(area, 'M')
			area = pt(area, px[i], phi[i])
			area = append(area, 'L')
			for k := i + 1; k < j; k++ {
				area = pt(area, px[k], phi[k])
				area = append(area, ' ')
			}
			for k := j - 1; k >= i; k-- {
				area = pt(area, px[k], plo[k])
				if k > i {
					area = append(area, ' ')
				}
			}
			area = append(area, 'Z')
		}
		i = j
	}
	op := opacityText(st.opacity)
	if len(area) > 0 {
		b.raw(`<path class="hl-band"`)
		b.attr("data-series", band.Name)
		b.raw(` d="`)
		b.b = append(b.b, area...)
		b.raw(`"`)
		b.attr("fill", st.color)
		b.attr("fill-opacity", op)
		b.raw(` stroke="none"/>`)
	}
	if len(ticks) > 0 {
		b.raw(`<path class="hl-band-point"`)
		b.attr("data-series", band.Name)
		b.raw(` d="`)
		b.b = append(b.b, ticks...)
		b.raw(`" fill="none"`)
		b.attr("stroke", st.color)
		b.attr("stroke-opacity", op)
		b.raw(` stroke-width="3"/>`)
	}
}

// summary is the generated text alternative.
func (c Lines) summary(xe, ye extent) string {
	var s strings.Builder
	if c.Title != "" {
		s.WriteString(c.Title)
		s.WriteString(". ")
	}
	var lines, bands []string
	for _, l := range c.Lines {
		if l.Name != "" {
			lines = append(lines, clip(l.Name, 60))
		}
	}
	for _, b := range c.Bands {
		if b.Name != "" {
			bands = append(bands, clip(b.Name, 60))
		}
	}
	s.WriteString("Line chart")
	if len(lines) > 0 {
		s.WriteString(" of ")
		s.WriteString(nameList(lines))
	}
	if len(bands) > 0 {
		s.WriteString(" with shaded bands ")
		s.WriteString(nameList(bands))
	}
	if xe.n == 0 {
		s.WriteString("; no data to draw.")
		return s.String()
	}
	s.WriteString(". ")
	axis := func(label string, e extent) {
		if label == "" {
			label = "values"
		}
		s.WriteString(label)
		s.WriteString(" from ")
		s.WriteString(formatValue(e.lo))
		s.WriteString(" to ")
		s.WriteString(formatValue(e.hi))
	}
	s.WriteString("Horizontal axis: ")
	axis(c.XLabel, xe)
	s.WriteString(". Vertical axis: ")
	axis(c.YLabel, ye)
	s.WriteString(".")
	return s.String()
}

func nameList(names []string) string {
	const most = 8
	if len(names) > most {
		return strings.Join(names[:most], ", ") + " and " + strconv.Itoa(len(names)-most) + " more"
	}
	return strings.Join(names, ", ")
}
