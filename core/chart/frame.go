package chart

import (
	"math"
	"strconv"
	"unicode/utf8"
)

// Default and limiting chart sizes in SVG user units (pixels).
const (
	DefaultWidth  = 720
	DefaultHeight = 360
	MinWidth      = 160
	MinHeight     = 120
	MaxSize       = 10000
)

// Type sizes and spacing of the frame.
const (
	fontTick   = 12.0
	fontLabel  = 13.0
	fontTitle  = 15.0
	fontNote   = 11.0
	rowH       = 18.0 // legend row height
	swatchW    = 22.0 // legend swatch width
	swatchGap  = 6.0  // swatch to text
	entryGap   = 18.0 // between entries in a row (legend above)
	edge       = 10.0 // outer padding
	tickLen    = 5.0
	minPlot    = 20.0
	legendFrac = 0.28 // largest share of the width a right-hand legend may take
)

// swatch is how a legend entry is drawn.
type swatch int

const (
	swatchLine swatch = iota // a short stroke (lines)
	swatchArea               // a filled box (bands, bars, histogram)
	swatchDot                // a small dot (heatmap marks)
)

// legendEntry is one named item in the legend.
type legendEntry struct {
	name    string
	color   string
	kind    swatch
	dashed  bool
	width   float64 // stroke width for swatchLine
	opacity float64 // fill opacity for swatchArea

	// placed by layout
	shown   string // name as displayed (maybe clipped)
	x, y    float64
	clipped bool
}

// frameSpec is what a chart type hands to the frame: texts, size, legend
// entries and the data extent. Later chart types (bars, heatmap, histogram)
// fill the same spec.
type frameSpec struct {
	kind                  string // class suffix and fallback name, e.g. "lines"
	kindName              string // human name, e.g. "Line chart"
	title, xlabel, ylabel string
	desc                  string
	width, height         int
	legend                []legendEntry
	empty                 bool    // no finite data at all
	xlo, xhi, ylo, yhi    float64 // data domain, lo < hi (ignored if empty)
	yZero                 bool
	xZero                 bool // a vertical x = 0 reference line (horizontal bars)

	// Optional parts used by some chart types.
	legendAbove  bool     // legend in rows above the plot even when there is room on the right
	keyW         float64  // width reserved right of the plot for a chart's own key (heatmap colour bar); keyX gives its left edge
	xCats, yCats []string // categorical axis: categories at i+0.5 (x, left to right) or n-i-0.5 (y, top to bottom) of [0,n]; no grid lines
	yInt         bool     // only whole-number y ticks (counts)
	note         string   // a line of small text under the chart (e.g. what was left out)
}

// axisScale maps data values onto a pixel interval.
type axisScale struct {
	lo, hi   float64
	p0, plen float64 // pixel start and signed length
}

// at maps v; the result is NaN if it cannot be represented.
func (s axisScale) at(v float64) float64 {
	den := s.hi/2 - s.lo/2 // halves: never overflows
	var t float64
	if den > 0 {
		t = (v/2 - s.lo/2) / den
	} else {
		t = (v - s.lo) / (s.hi - s.lo)
	}
	p := s.p0 + t*s.plen
	if !finite(p) || math.Abs(p) > 1e7 {
		return math.NaN()
	}
	return p
}

// frame is a laid-out chart frame.
type frame struct {
	frameSpec
	W, H         float64
	L, T, PW, PH float64 // plot area
	xs, ys       axisScale
	xt, yt       []float64
	xl, yl       []string
	xfull, yfull []string // unclipped category labels (nil for numeric axes)
	keyX         float64
	noteShown    string
	legendRight  bool
	titleShown   string
	xlabelShown  string
	ylabelShown  string
}

func clampSize(v, def, min int) int {
	if v <= 0 {
		return def
	}
	if v < min {
		return min
	}
	if v > MaxSize {
		return MaxSize
	}
	return v
}

// layout places everything: margins from the texts, legend to the right
// when there is room (else in rows above the plot), then ticks.
func layout(sp frameSpec) *frame {
	f := &frame{frameSpec: sp}
	f.W = float64(clampSize(sp.width, DefaultWidth, MinWidth))
	f.H = float64(clampSize(sp.height, DefaultHeight, MinHeight))

	top := edge
	if sp.title != "" {
		f.titleShown = clip(sp.title, charsFitting(f.W-2*edge, fontTitle))
		top += fontTitle + 8
	}
	bottom := edge + tickLen + fontTick + 2
	if sp.xlabel != "" {
		bottom += fontLabel + 6
	}
	if sp.note != "" {
		f.noteShown = clip(sp.note, charsFitting(f.W-2*edge, fontNote))
		bottom += fontNote + 6
	}
	right := edge + 6

	// legend
	if len(f.legend) > 0 {
		maxText := f.W*legendFrac - swatchW - swatchGap - edge
		chars := charsFitting(maxText, fontTick)
		widest := 0.0
		for i := range f.legend {
			e := &f.legend[i]
			e.shown = clip(e.name, chars)
			widest = math.Max(widest, textWidth(e.shown, fontTick))
		}
		legW := swatchW + swatchGap + widest
		need := float64(len(f.legend)) * rowH
		if !sp.legendAbove && f.W >= 480 && need <= f.H-top-bottom {
			f.legendRight = true
			x := f.W - edge - legW
			for i := range f.legend {
				e := &f.legend[i]
				e.x, e.y = x, top+rowH*(float64(i)+0.5)
				e.clipped = e.shown != e.name
			}
			right = edge + legW + 14
		} else {
			avail := f.W - 2*edge
			chars := charsFitting(avail-swatchW-swatchGap, fontTick)
			x, row := edge, 0
			for i := range f.legend {
				e := &f.legend[i]
				e.shown = clip(e.name, chars)
				e.clipped = e.shown != e.name
				w := swatchW + swatchGap + textWidth(e.shown, fontTick)
				if x > edge && x+w > f.W-edge {
					x, row = edge, row+1
				}
				e.x, e.y = x, top+rowH*(float64(row)+0.5)
				x += w + entryGap
			}
			top += rowH*float64(row+1) + 6
		}
	}

	if sp.keyW > 0 {
		right += sp.keyW
	}

	f.T = top
	f.PH = math.Max(minPlot, f.H-top-bottom)

	// y ticks decide the left margin
	left := edge + 4
	if sp.ylabel != "" {
		left += fontLabel + 8
		f.ylabelShown = clip(sp.ylabel, charsFitting(f.PH, fontLabel))
	}
	if !sp.empty && len(sp.yCats) > 0 {
		f.yt, f.yl, f.yfull = catTicks(sp.yCats, f.PH, true, f.W*0.3)
	} else if !sp.empty {
		n := clampInt(int(f.PH/45), 2, 8)
		f.yt, f.yl = ticksWithin(sp.ylo, sp.yhi, n)
		if sp.yInt {
			f.yt, f.yl = wholeTicks(f.yt, f.yl)
		}
	}
	if !sp.empty {
		widest := 0.0
		for _, s := range f.yl {
			widest = math.Max(widest, textWidth(s, fontTick))
		}
		left += widest + tickLen + 4
	}
	f.L = left
	f.PW = math.Max(minPlot, f.W-left-right)
	if sp.xlabel != "" {
		f.xlabelShown = clip(sp.xlabel, charsFitting(f.PW, fontLabel))
	}
	f.keyX = f.L + f.PW + 12
	if !sp.empty && len(sp.xCats) > 0 {
		f.xt, f.xl, f.xfull = catTicks(sp.xCats, f.PW, false, 0)
	} else if !sp.empty {
		n := clampInt(int(f.PW/80), 2, 12)
		f.xt, f.xl = ticksWithin(sp.xlo, sp.xhi, n)
		// drop x labels that would collide with their neighbour
		f.xt, f.xl = thinLabels(f.xt, f.xl, f.PW/(sp.xhi/2-sp.xlo/2)/2)
	}
	f.xs = axisScale{lo: sp.xlo, hi: sp.xhi, p0: f.L, plen: f.PW}
	f.ys = axisScale{lo: sp.ylo, hi: sp.yhi, p0: f.T + f.PH, plen: -f.PH}
	return f
}

func clampInt(v, lo, hi int) int {
	if v < lo {
		return lo
	}
	if v > hi {
		return hi
	}
	return v
}

// ticksWithin returns NiceTicks over [lo,hi] that fall inside it, with
// their labels. If fewer than two fall inside, it asks for more ticks.
func ticksWithin(lo, hi float64, n int) ([]float64, []string) {
	var t []float64
	var l []string
	for try := n; try <= n+8; try++ {
		all, k := niceTicks(lo, hi, try)
		labels := tickLabels(all, k)
		tol := (hi/2 - lo/2) * 2e-9
		t, l = t[:0], l[:0]
		for i, v := range all {
			if v >= lo-tol && v <= hi+tol {
				t = append(t, v)
				l = append(l, labels[i])
			}
		}
		if len(t) >= 2 {
			break
		}
	}
	return t, l
}

// thinLabels keeps every 2nd, 3rd ... tick when labels (at pxPerUnit pixels
// per data unit) would overlap.
func thinLabels(t []float64, l []string, pxPerUnit float64) ([]float64, []string) {
	if len(t) < 2 || !finite(pxPerUnit) || pxPerUnit <= 0 {
		return t, l
	}
	gap := (t[1] - t[0]) * pxPerUnit
	widest := 0.0
	for _, s := range l {
		widest = math.Max(widest, textWidth(s, fontTick))
	}
	every := 1
	for every < len(t) && gap*float64(every) < widest+8 {
		every++
	}
	if every == 1 {
		return t, l
	}
	var t2 []float64
	var l2 []string
	for i := 0; i < len(t); i += every {
		t2 = append(t2, t[i])
		l2 = append(l2, l[i])
	}
	return t2, l2
}

// open writes the svg root, title, desc, background and grid.
func (f *frame) open(b *svgBuf) {
	name := f.title
	if name == "" {
		name = f.kindName
	}
	b.raw(`<svg xmlns="http://www.w3.org/2000/svg"`)
	b.attr("class", "hl-chart hl-"+f.kind)
	b.raw(` width="` + strconv.Itoa(int(f.W)) + `" height="` + strconv.Itoa(int(f.H)) + `"`)
	b.raw(` viewBox="0 0 ` + strconv.Itoa(int(f.W)) + ` ` + strconv.Itoa(int(f.H)) + `"`)
	b.raw(` role="img"`)
	b.attr("aria-label", name)
	b.raw(` font-family="sans-serif" font-size="12">`)
	b.raw("<title>")
	b.text(name)
	b.raw("</title>")
	b.raw("<desc>")
	b.text(f.desc)
	b.raw("</desc>")

	b.raw(`<rect class="hl-bg"`)
	b.num("width", f.W)
	b.num("height", f.H)
	b.attr("fill", inkPaper)
	b.raw("/>")

	if f.empty {
		return
	}
	b.raw(`<g class="hl-grid"`)
	b.attr("stroke", inkGrid)
	b.raw(` stroke-width="1">`)
	for _, v := range f.yt {
		y := f.ys.at(v)
		if !finite(y) || f.yfull != nil {
			continue
		}
		b.raw("<line")
		b.num("x1", f.L)
		b.num("y1", y)
		b.num("x2", f.L+f.PW)
		b.num("y2", y)
		b.raw("/>")
	}
	for _, v := range f.xt {
		x := f.xs.at(v)
		if !finite(x) || f.xfull != nil {
			continue
		}
		b.raw("<line")
		b.num("x1", x)
		b.num("y1", f.T)
		b.num("x2", x)
		b.num("y2", f.T+f.PH)
		b.raw("/>")
	}
	b.raw("</g>")
}

// zeroLine draws the y = 0 (and, when asked, x = 0) reference when asked
// for and inside the range.
func (f *frame) zeroLine(b *svgBuf) {
	if f.empty {
		return
	}
	if f.yZero && f.ylo < 0 && f.yhi > 0 {
		if y := f.ys.at(0); finite(y) {
			b.raw(`<line class="hl-zero"`)
			b.num("x1", f.L)
			b.num("y1", y)
			b.num("x2", f.L+f.PW)
			b.num("y2", y)
			b.attr("stroke", inkZero)
			b.raw(` stroke-width="1"/>`)
		}
	}
	if f.xZero && f.xlo < 0 && f.xhi > 0 {
		if x := f.xs.at(0); finite(x) {
			b.raw(`<line class="hl-zero"`)
			b.num("x1", x)
			b.num("y1", f.T)
			b.num("x2", x)
			b.num("y2", f.T+f.PH)
			b.attr("stroke", inkZero)
			b.raw(` stroke-width="1"/>`)
		}
	}
}

// close writes the plot frame, ticks, labels, legend, the no-data note and
// the end tag.
func (f *frame) close(b *svgBuf) {
	b.raw(`<rect class="hl-frame"`)
	b.num("x", f.L)
	b.num("y", f.T)
	b.num("width", f.PW)
	b.num("height", f.PH)
	b.attr("fill", "none")
	b.attr("stroke", inkAxis)
	b.raw(` stroke-width="1"/>`)

	if f.empty {
		b.raw(`<text class="hl-nodata" text-anchor="middle"`)
		b.num("x", f.L+f.PW/2)
		b.num("y", f.T+f.PH/2+5)
		b.attr("fill", inkText)
		b.raw(` font-size="14">No data to draw</text>`)
	} else {
		f.axisTicks(b)
	}

	if f.titleShown != "" {
		b.raw(`<text class="hl-title" text-anchor="middle" font-weight="bold"`)
		b.num("x", f.W/2)
		b.num("y", edge+fontTitle-2)
		b.num("font-size", fontTitle)
		b.attr("fill", inkText)
		b.byte('>')
		b.text(f.titleShown)
		b.raw("</text>")
	}
	if f.xlabelShown != "" {
		y := f.H - edge + 2
		if f.noteShown != "" {
			y -= fontNote + 6
		}
		b.raw(`<text class="hl-xlabel" text-anchor="middle"`)
		b.num("x", f.L+f.PW/2)
		b.num("y", y)
		b.num("font-size", fontLabel)
		b.attr("fill", inkText)
		b.byte('>')
		b.text(f.xlabelShown)
		b.raw("</text>")
	}
	if f.ylabelShown != "" {
		x, y := edge+fontLabel-2, f.T+f.PH/2
		b.raw(`<text class="hl-ylabel" text-anchor="middle"`)
		b.num("x", x)
		b.num("y", y)
		b.raw(` transform="rotate(-90 `)
		b.coord(x)
		b.byte(' ')
		b.coord(y)
		b.raw(`)"`)
		b.num("font-size", fontLabel)
		b.attr("fill", inkText)
		b.byte('>')
		b.text(f.ylabelShown)
		b.raw("</text>")
	}
	if f.noteShown != "" {
		b.raw(`<text class="hl-note"`)
		b.num("x", edge)
		b.num("y", f.H-edge+1)
		b.num("font-size", fontNote)
		b.attr("fill", inkText)
		b.byte('>')
		if f.noteShown != f.note {
			b.raw("<title>")
			b.text(f.note)
			b.raw("</title>")
		}
		b.text(f.noteShown)
		b.raw("</text>")
	}
	f.drawLegend(b)
	b.raw("</svg>")
}

func (f *frame) axisTicks(b *svgBuf) {
	b.raw(`<g class="hl-axis hl-xaxis"`)
	b.attr("stroke", inkAxis)
	b.raw(">")
	y0 := f.T + f.PH
	for _, v := range f.xt {
		x := f.xs.at(v)
		if !finite(x) {
			continue
		}
		b.raw("<line")
		b.num("x1", x)
		b.num("y1", y0)
		b.num("x2", x)
		b.num("y2", y0+tickLen)
		b.raw("/>")
	}
	b.raw("</g>")
	b.raw(`<g class="hl-axis hl-yaxis"`)
	b.attr("stroke", inkAxis)
	b.raw(">")
	for _, v := range f.yt {
		y := f.ys.at(v)
		if !finite(y) {
			continue
		}
		b.raw("<line")
		b.num("x1", f.L-tickLen)
		b.num("y1", y)
		b.num("x2", f.L)
		b.num("y2", y)
		b.raw("/>")
	}
	b.raw("</g>")

	b.raw(`<g class="hl-ticklabels"`)
	b.attr("fill", inkText)
	b.raw(">")
	for i, v := range f.xt {
		x := f.xs.at(v)
		if !finite(x) {
			continue
		}
		b.raw(`<text class="hl-xtick" text-anchor="middle"`)
		b.num("x", x)
		b.num("y", y0+tickLen+fontTick)
		b.byte('>')
		if f.xfull != nil && f.xfull[i] != f.xl[i] {
			b.raw("<title>")
			b.text(f.xfull[i])
			b.raw("</title>")
		}
		b.text(f.xl[i])
		b.raw("</text>")
	}
	for i, v := range f.yt {
		y := f.ys.at(v)
		if !finite(y) {
			continue
		}
		b.raw(`<text class="hl-ytick" text-anchor="end"`)
		b.num("x", f.L-tickLen-3)
		b.num("y", y+4)
		b.byte('>')
		if f.yfull != nil && f.yfull[i] != f.yl[i] {
			b.raw("<title>")
			b.text(f.yfull[i])
			b.raw("</title>")
		}
		b.text(f.yl[i])
		b.raw("</text>")
	}
	b.raw("</g>")
}

func (f *frame) drawLegend(b *svgBuf) {
	if len(f.legend) == 0 {
		return
	}
	b.raw(`<g class="hl-legend">`)
	for _, e := range f.legend {
		b.raw(`<g class="hl-legend-item"`)
		b.attr("data-series", e.name)
		b.byte('>')
		if e.clipped {
			b.raw("<title>")
			b.text(e.name)
			b.raw("</title>")
		}
		switch e.kind {
		case swatchDot:
			b.raw(`<circle class="hl-swatch"`)
			b.num("cx", e.x+swatchW/2)
			b.num("cy", e.y)
			b.num("r", 3)
			b.attr("fill", e.color)
			b.raw("/>")
		case swatchArea:
			b.raw(`<rect class="hl-swatch"`)
			b.num("x", e.x)
			b.num("y", e.y-6)
			b.num("width", swatchW)
			b.num("height", 12)
			b.attr("fill", e.color)
			b.attr("fill-opacity", opacityText(e.opacity))
			b.raw("/>")
		default:
			b.raw(`<line class="hl-swatch"`)
			b.num("x1", e.x)
			b.num("y1", e.y)
			b.num("x2", e.x+swatchW)
			b.num("y2", e.y)
			b.attr("stroke", e.color)
			b.num("stroke-width", math.Max(2, e.width))
			if e.dashed {
				b.raw(` stroke-dasharray="6 3"`)
			}
			b.raw("/>")
		}
		b.raw(`<text class="hl-legend-text"`)
		b.num("x", e.x+swatchW+swatchGap)
		b.num("y", e.y+4)
		b.attr("fill", inkText)
		b.byte('>')
		b.text(e.shown)
		b.raw("</text></g>")
	}
	b.raw("</g>")
}

// catTicks places category labels on an axis of length lenPx: at i+0.5
// along x, or at n-i-0.5 along y (so the first category is at the top).
// Labels are clipped to the room they have (along y to maxW pixels), and
// when the bands are too narrow only every 2nd, 3rd ... label is kept. full
// holds the unclipped labels of the kept ticks.
func catTicks(cats []string, lenPx float64, vertical bool, maxW float64) (t []float64, l, full []string) {
	n := len(cats)
	if n == 0 {
		return nil, nil, nil
	}
	band := lenPx / float64(n)
	longest := 0
	for _, c := range cats {
		longest = max(longest, utf8.RuneCountInString(c))
	}
	every, chars := 1, 1
	for ; ; every++ {
		room := band * float64(every)
		if vertical {
			chars = charsFitting(maxW, fontTick)
			if room >= fontTick+2 || every >= n {
				break
			}
		} else {
			chars = charsFitting(room-6, fontTick)
			if chars >= min(4, longest) || every >= n {
				break
			}
		}
	}
	for i := 0; i < n; i += every {
		pos := float64(i) + 0.5
		if vertical {
			pos = float64(n-i) - 0.5
		}
		t = append(t, pos)
		l = append(l, clip(cats[i], chars))
		full = append(full, cats[i])
	}
	return t, l, full
}

// wholeTicks keeps the ticks that are whole numbers.
func wholeTicks(t []float64, l []string) ([]float64, []string) {
	var t2 []float64
	var l2 []string
	for i, v := range t {
		if v == math.Trunc(v) {
			t2 = append(t2, v)
			l2 = append(l2, l[i])
		}
	}
	return t2, l2
}
