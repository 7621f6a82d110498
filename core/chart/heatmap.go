package chart

import (
	"math"
	"slices"
	"strconv"
	"strings"
)

// Colours of the heatmap's diverging scale: two colours of the Okabe-Ito set
// (Okabe and Ito 2008) at the ends, blue below the centre and vermillion
// above it, white at the centre; a blue-orange pair stays apart for the
// common red-green colour vision deficiencies. Cells without a value are
// light grey, marks dark grey.
const (
	divLow     = "#0072B2"
	divMid     = "#FFFFFF"
	divHigh    = "#D55E00"
	inkNoValue = "#D0D0D0"
	inkMark    = "#222222"
)

// MaxHeatCells is the most cells a Heatmap draws. A larger grid is drawn on
// a coarser grid (see Heatmap) so the document stays below about 10 MB.
const MaxHeatCells = 60000

// Limits on per-cell text, so one cell cannot blow up the document.
const (
	heatTitleMax = 200 // runes of a cell's hover text
	heatKeyMax   = 120 // runes of a cell's data-key
)

// HeatCell is one cell of a heatmap. X and Y are the centre of the cell in
// data units; for the trend grid X is the window start and Y the window end
// (decimal years).
type HeatCell struct {
	X, Y   float64
	Value  float64 // NaN or ±Inf = no value (drawn light grey)
	Marked bool    // drawn with a dot (e.g. the interval excludes zero); ignored for cells without a value
	Title  string  // hover text (a <title> child); "" = generated from X, Y and Value; at most 200 runes are kept
	Key    string  // opaque id written as data-key, so a page can map a click to the cell; "" = none; at most 120 runes are kept
}

// Heatmap draws cells coloured on a diverging scale centred on Center, with
// a colour bar beside the plot.
//
// The scale is symmetric: white at Center, vermillion (#D55E00) at
// Center+M and blue (#0072B2) at Center-M, where M is the largest distance
// of any finite value from Center; between, colours are interpolated
// linearly in sRGB (see DivergingColor).
//
// Each cell is a <rect class="hl-cell"> with a <title> child and, when Key
// is set, data-key="KEY". Marked cells get a dot (one <path class="hl-marks">
// over the cells that ignores the pointer), explained in the legend by
// MarkLabel.
//
// More than MaxHeatCells cells are drawn on a coarser grid: blocks of k by k
// cells (k the smallest whole number that brings the count to at most
// MaxHeatCells) become one cell whose value is the mean of the finite values
// in it, which is marked when more than half of those are marked, whose key
// is the key of the member nearest the block's centre, and whose hover text
// gives the block's span, mean and counts. The chart's note says so. The
// same happens, with a lower count, when the cells' own Title and Key texts
// would make the document larger than about 10 MB. A page that shows a trend
// grid is expected to pass an annual-step grid (a few thousand cells); the
// coarser grid is a guard, not a display mode.
type Heatmap struct {
	Title, XLabel, YLabel string // all text escaped
	ValueLabel            string // colour bar label, with units, e.g. "Trend (K per decade)"
	Width, Height         int    // 0 = 720x360; clamped to [160x120, 10000]
	Cells                 []HeatCell
	// CellW and CellH are the cell size in data units; 0 (or not finite) =
	// the smallest positive spacing of the X (Y) values, or if they are all
	// the same the other size, or else 1.
	CellW, CellH float64
	Center       float64 // value at the neutral colour (white), e.g. 0 or the full-record trend; not finite = 0
	Desc         string  // <desc> text alternative; "" = generated summary
	MarkLabel    string  // legend text for marked cells, e.g. "interval excludes zero"; "" = "Marked"
}

// DivergingColor returns the heatmap colour of v on a scale centred on
// center with half-width span: white at center, #D55E00 at center+span and
// beyond, #0072B2 at center-span and beyond, linear in sRGB between. A v
// that is NaN or infinite gives the "no value" grey; a span that is not
// positive (or not finite) makes every finite v white. The result is
// "#RRGGBB" in upper case.
func DivergingColor(v, center, span float64) string {
	if !finite(v) {
		return inkNoValue
	}
	if !finite(center) {
		center = 0
	}
	if !(span > 0) || !finite(span) {
		return divMid
	}
	t := (v/2 - center/2) / (span / 2) // halves: no overflow
	if math.IsNaN(t) {
		t = 0
	}
	t = math.Max(-1, math.Min(1, t))
	end := divHigh
	if t < 0 {
		end, t = divLow, -t
	}
	return mixHex(divMid, end, t)
}

// mixHex blends two #RRGGBB colours: t = 0 gives a, t = 1 gives b.
func mixHex(a, b string, t float64) string {
	const digits = "0123456789ABCDEF"
	out := []byte{'#', 0, 0, 0, 0, 0, 0}
	for i := 0; i < 3; i++ {
		ca, cb := hexByte(a[1+2*i:]), hexByte(b[1+2*i:])
		c := int(math.Round(float64(ca) + (float64(cb)-float64(ca))*t))
		c = clampInt(c, 0, 255)
		out[1+2*i], out[2+2*i] = digits[c>>4], digits[c&15]
	}
	return string(out)
}

func hexByte(s string) int {
	v := 0
	for i := 0; i < 2; i++ {
		c := s[i]
		switch {
		case c >= '0' && c <= '9':
			v = v*16 + int(c-'0')
		case c >= 'a' && c <= 'f':
			v = v*16 + int(c-'a') + 10
		case c >= 'A' && c <= 'F':
			v = v*16 + int(c-'A') + 10
		}
	}
	return v
}

// heatDraw is one cell as drawn: data edges, value and texts.
type heatDraw struct {
	x0, x1, y0, y1 float64
	v              float64
	marked         bool
	src            int    // index into Cells, or -1 for a block of the coarser grid
	title          string // for blocks
	key            string
}

// clampF keeps a computed edge finite.
func clampF(v float64) float64 {
	if math.IsNaN(v) {
		return 0
	}
	return math.Max(-math.MaxFloat64, math.Min(math.MaxFloat64, v))
}

// cellStep is the given step, or the smallest positive spacing of the
// finite values in vs; ok is false when there is neither (the step is then
// 1).
func cellStep(given float64, vs []float64) (step float64, ok bool) {
	if given > 0 && finite(given) {
		return given, true
	}
	s := make([]float64, 0, len(vs))
	for _, v := range vs {
		if finite(v) {
			s = append(s, v)
		}
	}
	slices.Sort(s)
	d := math.Inf(1)
	for i := 1; i < len(s); i++ {
		if g := s[i] - s[i-1]; g > 0 && g < d {
			d = g
		}
	}
	if !finite(d) {
		return 1, false
	}
	return d, true
}

// fmtCoord formats a position (a decimal year) for hover text: up to six
// significant digits, no trailing zeros.
func fmtCoord(v float64) string {
	if !finite(v) {
		return "n/a"
	}
	return trimNum(strconv.FormatFloat(v, 'g', 6, 64))
}

func orDefault(s, def string) string {
	if s == "" {
		return def
	}
	return s
}

// cells resolves the cells to draw: those with a finite position, on the
// coarser grid when there are more than MaxHeatCells. skipped counts cells
// without a finite position; k is the block size (1 = the given grid).
func (h Heatmap) cells() (out []heatDraw, skipped, k int, cw, ch float64) {
	xs := make([]float64, len(h.Cells))
	ys := make([]float64, len(h.Cells))
	for i, c := range h.Cells {
		xs[i], ys[i] = c.X, c.Y
	}
	cw, okw := cellStep(h.CellW, xs)
	ch, okh := cellStep(h.CellH, ys)
	switch { // one row or column: square cells in data units
	case !okw && okh:
		cw = ch
	case okw && !okh:
		ch = cw
	}
	var use []int
	for i, c := range h.Cells {
		if finite(c.X) && finite(c.Y) {
			use = append(use, i)
		} else {
			skipped++
		}
	}
	limit := MaxHeatCells
	if est, keys := h.estimate(use); est > heatBudget {
		// long texts: fewer, generated ones
		limit = min(heatBudget/(heatBinBytes+keys/len(use)), int(float64(len(use))*heatBudget/float64(est)))
		limit = clampInt(limit, 100, MaxHeatCells)
	}
	if len(use) <= limit {
		out = make([]heatDraw, 0, len(use))
		for _, i := range use {
			c := h.Cells[i]
			out = append(out, heatDraw{
				x0: clampF(c.X - cw/2), x1: clampF(c.X + cw/2),
				y0: clampF(c.Y - ch/2), y1: clampF(c.Y + ch/2),
				v: c.Value, marked: c.Marked, src: i, key: c.Key,
			})
		}
		return out, skipped, 1, cw, ch
	}
	out, k = h.binned(use, cw, ch, limit)
	return out, skipped, k, cw, ch
}

// Size guard: the document may take about heatBudget bytes for its cells;
// a cell takes about heatCellBytes plus its texts, a block of the coarser
// grid about heatBinBytes plus its key.
const (
	heatBudget    = 10 << 20
	heatCellBytes = 120
	heatBinBytes  = 190
)

// estimate is the approximate size of the markup of the cells in use, and
// the total size of their keys.
func (h Heatmap) estimate(use []int) (total, keys int) {
	for _, i := range use {
		c := h.Cells[i]
		t := len(c.Title)
		if t == 0 {
			t = 60
		}
		k := min(len(c.Key), 4*heatKeyMax)
		total += heatCellBytes + min(t, 4*heatTitleMax) + k
		keys += k
	}
	return total, keys
}

type binKey struct{ ix, iy int64 }

type heatBin struct {
	ix, iy             int64
	mean               float64 // of the finite values
	n, nFinite, marked int
	xmin, xmax         float64
	ymin, ymax         float64
	best               int     // member nearest the centre
	bestD              float64 // its distance in cells
}

// binned aggregates the cells in use into k by k blocks, with k the smallest
// block size that leaves at most limit blocks.
func (h Heatmap) binned(use []int, cw, ch float64, limit int) ([]heatDraw, int) {
	xmin, ymin := math.Inf(1), math.Inf(1)
	for _, i := range use {
		xmin = math.Min(xmin, h.Cells[i].X)
		ymin = math.Min(ymin, h.Cells[i].Y)
	}
	gx, gy := clampF(xmin-cw/2), clampF(ymin-ch/2) // grid origin: the corner of the first cell
	// index of v in blocks of size bs from origin g, kept in a range where
	// int64 and float64 agree
	index := func(v, g, bs float64) int64 {
		q := math.Floor((v/2 - g/2) / (bs / 2))
		if !(q >= 0) {
			return 0
		}
		return int64(math.Min(q, 1<<50))
	}
	k := int(math.Ceil(math.Sqrt(float64(len(use)) / float64(limit))))
	var bins []heatBin
	for {
		bw, bh := float64(k)*cw, float64(k)*ch
		pos := make(map[binKey]int)
		bins = bins[:0]
		for _, i := range use {
			c := h.Cells[i]
			key := binKey{index(c.X, gx, bw), index(c.Y, gy, bh)}
			j, ok := pos[key]
			if !ok {
				j = len(bins)
				pos[key] = j
				bins = append(bins, heatBin{ix: key.ix, iy: key.iy, best: -1,
					xmin: c.X, xmax: c.X, ymin: c.Y, ymax: c.Y})
				if len(bins) > limit {
					break
				}
			}
			bn := &bins[j]
			bn.n++
			bn.xmin, bn.xmax = math.Min(bn.xmin, c.X), math.Max(bn.xmax, c.X)
			bn.ymin, bn.ymax = math.Min(bn.ymin, c.Y), math.Max(bn.ymax, c.Y)
			if finite(c.Value) {
				bn.nFinite++
				nf := float64(bn.nFinite)
				bn.mean += c.Value/nf - bn.mean/nf // running mean that cannot overflow
				if c.Marked {
					bn.marked++
				}
			}
			cx := gx + (float64(key.ix)+0.5)*bw
			cy := gy + (float64(key.iy)+0.5)*bh
			d := math.Abs(c.X-cx)/cw + math.Abs(c.Y-cy)/ch
			if math.IsNaN(d) {
				d = math.Inf(1)
			}
			if bn.best < 0 || d < bn.bestD {
				bn.best, bn.bestD = i, d
			}
		}
		if len(bins) <= limit {
			break
		}
		// grow the block so the count falls roughly in proportion
		next := int(math.Ceil(float64(k) * math.Sqrt(float64(len(use))/float64(limit))))
		k = max(k+1, min(next, 2*k))
		if k > 1<<30 {
			k = 1 << 30
		}
	}
	bw, bh := float64(k)*cw, float64(k)*ch
	out := make([]heatDraw, 0, len(bins))
	for _, bn := range bins {
		x0 := clampF(gx + float64(bn.ix)*bw)
		y0 := clampF(gy + float64(bn.iy)*bh)
		d := heatDraw{x0: x0, x1: clampF(x0 + bw), y0: y0, y1: clampF(y0 + bh), v: math.NaN(), src: -1}
		if bn.nFinite > 0 {
			d.v = bn.mean
			d.marked = 2*bn.marked > bn.nFinite
		}
		if bn.best >= 0 {
			d.key = h.Cells[bn.best].Key
		}
		var s strings.Builder
		span := func(a, b float64) {
			s.WriteString(fmtCoord(a))
			if b != a {
				s.WriteString("–")
				s.WriteString(fmtCoord(b))
			}
		}
		span(bn.xmin, bn.xmax)
		s.WriteString(", ")
		span(bn.ymin, bn.ymax)
		if bn.nFinite > 0 {
			s.WriteString(": mean " + formatValue(d.v) + " of " + strconv.Itoa(bn.nFinite) + " cells")
		} else {
			s.WriteString(": no value")
		}
		if bn.n > bn.nFinite && bn.nFinite > 0 {
			s.WriteString(", " + strconv.Itoa(bn.n-bn.nFinite) + " without value")
		}
		if bn.marked > 0 {
			s.WriteString(", " + strconv.Itoa(bn.marked) + " " + orDefault(h.MarkLabel, "marked"))
		}
		d.title = s.String()
		out = append(out, d)
	}
	return out, k
}

// colorScale is the value range of the colour bar: Center ± M.
type colorScale struct {
	center, span float64 // span = M; 0 when no finite value
	lo, hi       float64
	n            int // finite values
	vmin, vmax   float64
}

func (h Heatmap) scale(cells []heatDraw) colorScale {
	cs := colorScale{center: h.Center}
	if !finite(cs.center) {
		cs.center = 0
	}
	halfMax := 0.0
	for _, c := range cells {
		if !finite(c.v) {
			continue
		}
		if cs.n == 0 || c.v < cs.vmin {
			cs.vmin = c.v
		}
		if cs.n == 0 || c.v > cs.vmax {
			cs.vmax = c.v
		}
		cs.n++
		halfMax = math.Max(halfMax, math.Abs(c.v/2-cs.center/2))
	}
	cs.span = clampF(2 * halfMax)
	if cs.span > 0 {
		cs.lo, cs.hi = clampF(cs.center-cs.span), clampF(cs.center+cs.span)
	}
	if !(cs.lo < cs.hi) { // all values at the centre (or the span is lost in rounding)
		cs.lo, cs.hi = widen(cs.center)
	}
	return cs
}

// Colour bar geometry.
const (
	barGap = 12.0 // plot to bar
	barW   = 14.0
	barN   = 64 // slices
)

// SVG renders the heatmap as a standalone SVG document. It never panics on
// any field values: cells without a finite position are left out (and
// counted in the description), cells without a finite value are grey, and a
// chart with nothing to draw shows a "No data to draw" note.
func (h Heatmap) SVG() string {
	cells, skipped, k, cw, ch := h.cells()
	cs := h.scale(cells)

	var xe, ye extent
	nan, marked := 0, 0
	for _, c := range cells {
		xe.add(c.x0)
		xe.add(c.x1)
		ye.add(c.y0)
		ye.add(c.y1)
		if !finite(c.v) {
			nan++
		} else if c.marked {
			marked++
		}
	}
	sp := frameSpec{
		kind:        "heatmap",
		kindName:    "Heatmap",
		title:       h.Title,
		xlabel:      h.XLabel,
		ylabel:      h.YLabel,
		width:       h.Width,
		height:      h.Height,
		empty:       len(cells) == 0,
		legendAbove: true,
	}
	if !sp.empty {
		sp.xlo, sp.xhi = xRange(xe.lo, xe.hi)
		sp.ylo, sp.yhi = xRange(ye.lo, ye.hi)
	}
	if marked > 0 {
		sp.legend = append(sp.legend, legendEntry{name: orDefault(h.MarkLabel, "Marked"), color: inkMark, kind: swatchDot})
	}
	if nan > 0 {
		sp.legend = append(sp.legend, legendEntry{name: "No value", color: inkNoValue, kind: swatchArea, opacity: 1})
	}
	if k > 1 {
		sp.note = "Drawn on a coarser grid: " + strconv.Itoa(len(h.Cells)-skipped) + " cells averaged in blocks of " +
			strconv.Itoa(k) + "×" + strconv.Itoa(k) + " into " + strconv.Itoa(len(cells)) + " cells."
	}

	// colour bar ticks and the room they need
	var vt []float64
	var vl []string
	if cs.n > 0 {
		hh := float64(clampSize(h.Height, DefaultHeight, MinHeight))
		vt, vl = ticksWithin(cs.lo, cs.hi, clampInt(int((hh-90)/40), 2, 8))
		widest := 0.0
		for _, s := range vl {
			widest = math.Max(widest, textWidth(s, fontTick))
		}
		sp.keyW = barGap + barW + tickLen + 3 + widest + 6
		if h.ValueLabel != "" {
			sp.keyW += fontLabel + 2
		}
	}
	sp.desc = h.Desc
	if sp.desc == "" {
		sp.desc = h.summary(cells, cs, skipped, nan, marked, k)
	}

	f := layout(sp)
	var b svgBuf
	b.b = make([]byte, 0, 8192+180*len(cells))
	f.open(&b)
	if !f.empty {
		b.raw(`<g class="hl-plot">`)
		f.drawCells(&b, h, cells, cs, cw*float64(k), ch*float64(k))
		b.raw("</g>")
		if cs.n > 0 {
			f.drawColorBar(&b, cs, vt, vl, h.ValueLabel)
		}
	}
	f.close(&b)
	return b.String()
}

func (f *frame) drawCells(b *svgBuf, h Heatmap, cells []heatDraw, cs colorScale, cw, ch float64) {
	b.raw(`<g class="hl-cells" shape-rendering="crispEdges">`)
	var marks []byte
	round := func(v float64) float64 { return math.Round(v*10) / 10 }
	var gen []byte
	for _, c := range cells {
		// edges snapped to the output precision, so neighbours share them
		px0, px1 := round(f.xs.at(c.x0)), round(f.xs.at(c.x1))
		py0, py1 := round(f.ys.at(c.y1)), round(f.ys.at(c.y0))
		if !finite(px0) || !finite(px1) || !finite(py0) || !finite(py1) {
			continue
		}
		w, ht := math.Max(px1-px0, 0.1), math.Max(py1-py0, 0.1)
		b.raw(`<rect class="hl-cell"`)
		b.num("x", px0)
		b.num("y", py0)
		b.num("width", w)
		b.num("height", ht)
		b.raw(` fill="`)
		b.raw(DivergingColor(c.v, cs.center, cs.span))
		b.byte('"')
		if c.key != "" {
			b.attr("data-key", clip(c.key, heatKeyMax))
		}
		b.raw("><title>")
		switch {
		case c.src < 0:
			b.text(c.title)
		case h.Cells[c.src].Title != "":
			b.text(clip(h.Cells[c.src].Title, heatTitleMax))
		default:
			gen = h.cellTitle(gen[:0], h.Cells[c.src])
			b.text(string(gen))
		}
		b.raw("</title></rect>")
		if c.marked && finite(c.v) {
			marks = append(marks, 'M')
			marks = appendCoord(marks, px0+w/2)
			marks = append(marks, ',')
			marks = appendCoord(marks, py0+ht/2)
			marks = append(marks, 'h', '0')
		}
	}
	b.raw("</g>")
	if len(marks) > 0 {
		cwPx := math.Abs(f.xs.at(f.xlo+cw) - f.xs.at(f.xlo))
		chPx := math.Abs(f.ys.at(f.ylo+ch) - f.ys.at(f.ylo))
		r := 0.22 * math.Min(cwPx, chPx)
		if !finite(r) {
			r = 2
		}
		r = math.Max(0.6, math.Min(4, r))
		b.raw(`<path class="hl-marks" d="`)
		b.b = append(b.b, marks...)
		b.raw(`" fill="none"`)
		b.attr("stroke", inkMark)
		b.num("stroke-width", 2*r)
		b.raw(` stroke-linecap="round" pointer-events="none"/>`)
	}
}

// cellTitle is the generated hover text of a cell with no Title.
func (h Heatmap) cellTitle(buf []byte, c HeatCell) []byte {
	buf = append(buf, orDefault(h.XLabel, "x")...)
	buf = append(buf, ' ')
	buf = append(buf, fmtCoord(c.X)...)
	buf = append(buf, ", "...)
	buf = append(buf, orDefault(h.YLabel, "y")...)
	buf = append(buf, ' ')
	buf = append(buf, fmtCoord(c.Y)...)
	buf = append(buf, ": "...)
	if finite(c.Value) {
		buf = append(buf, formatValue(c.Value)...)
		if c.Marked {
			buf = append(buf, " ("...)
			buf = append(buf, orDefault(h.MarkLabel, "marked")...)
			buf = append(buf, ')')
		}
	} else {
		buf = append(buf, "no value"...)
	}
	return buf
}

// drawColorBar draws the colour scale right of the plot: slices from
// Center-M (bottom) to Center+M (top), ticks, and the value label.
func (f *frame) drawColorBar(b *svgBuf, cs colorScale, vt []float64, vl []string, label string) {
	x := f.keyX
	s := axisScale{lo: cs.lo, hi: cs.hi, p0: f.T + f.PH, plen: -f.PH}
	b.raw(`<g class="hl-colorbar" shape-rendering="crispEdges">`)
	n := clampInt(int(f.PH), 2, barN)
	round := func(v float64) float64 { return math.Round(v*10) / 10 }
	for j := 0; j < n; j++ {
		y0 := round(f.T + f.PH*float64(n-j-1)/float64(n))
		y1 := round(f.T + f.PH*float64(n-j)/float64(n))
		// the value at the slice's middle
		t := (float64(j) + 0.5) / float64(n)
		v := cs.lo*(1-t) + cs.hi*t
		b.raw(`<rect`)
		b.num("x", x)
		b.num("y", y0)
		b.num("width", barW)
		b.num("height", y1-y0)
		b.raw(` fill="`)
		b.raw(DivergingColor(v, cs.center, cs.span))
		b.raw(`"/>`)
	}
	b.raw(`<rect class="hl-colorbar-frame"`)
	b.num("x", x)
	b.num("y", f.T)
	b.num("width", barW)
	b.num("height", f.PH)
	b.raw(` fill="none"`)
	b.attr("stroke", inkAxis)
	b.raw("/></g>")
	b.raw(`<g class="hl-colorbar-ticks"`)
	b.attr("fill", inkText)
	b.attr("stroke", inkAxis)
	b.raw(">")
	for i, v := range vt {
		y := s.at(v)
		if !finite(y) {
			continue
		}
		b.raw("<line")
		b.num("x1", x+barW)
		b.num("y1", y)
		b.num("x2", x+barW+tickLen)
		b.num("y2", y)
		b.raw(`/><text class="hl-ctick" stroke="none"`)
		b.num("x", x+barW+tickLen+3)
		b.num("y", y+4)
		b.byte('>')
		b.text(vl[i])
		b.raw("</text>")
	}
	b.raw("</g>")
	if label != "" {
		widest := 0.0
		for _, s := range vl {
			widest = math.Max(widest, textWidth(s, fontTick))
		}
		lx := x + barW + tickLen + 3 + widest + 6 + fontLabel - 2
		ly := f.T + f.PH/2
		b.raw(`<text class="hl-vlabel" text-anchor="middle"`)
		b.num("x", lx)
		b.num("y", ly)
		b.raw(` transform="rotate(-90 `)
		b.coord(lx)
		b.byte(' ')
		b.coord(ly)
		b.raw(`)"`)
		b.num("font-size", fontLabel)
		b.attr("fill", inkText)
		b.byte('>')
		shown := clip(label, charsFitting(f.PH, fontLabel))
		if shown != label {
			b.raw("<title>")
			b.text(label)
			b.raw("</title>")
		}
		b.text(shown)
		b.raw("</text>")
	}
}

// summary is the generated text alternative.
func (h Heatmap) summary(cells []heatDraw, cs colorScale, skipped, nan, marked, k int) string {
	var s strings.Builder
	if h.Title != "" {
		s.WriteString(h.Title)
		s.WriteString(". ")
	}
	s.WriteString("Heatmap")
	if h.ValueLabel != "" {
		s.WriteString(" of ")
		s.WriteString(h.ValueLabel)
	}
	if len(cells) == 0 {
		s.WriteString("; no data to draw")
		if skipped > 0 {
			s.WriteString(" (" + strconv.Itoa(skipped) + " cells without a finite position)")
		}
		s.WriteString(".")
		return s.String()
	}
	var xe, ye extent
	for _, c := range cells {
		xe.add(c.x0/2 + c.x1/2)
		ye.add(c.y0/2 + c.y1/2)
	}
	s.WriteString(" over " + orDefault(h.XLabel, "x") + " " + fmtCoord(xe.lo) + " to " + fmtCoord(xe.hi) +
		" and " + orDefault(h.YLabel, "y") + " " + fmtCoord(ye.lo) + " to " + fmtCoord(ye.hi) +
		"; " + strconv.Itoa(len(cells)) + " cells")
	if k > 1 {
		s.WriteString(" (blocks of " + strconv.Itoa(k) + "×" + strconv.Itoa(k) + " of " + strconv.Itoa(len(h.Cells)-skipped) + " cells)")
	}
	s.WriteString(". ")
	if cs.n > 0 {
		s.WriteString("Values from " + formatValue(cs.vmin) + " to " + formatValue(cs.vmax) +
			"; white at " + formatValue(cs.center) + ", blue below, vermillion above.")
	} else {
		s.WriteString("No cell has a value.")
	}
	if marked > 0 {
		s.WriteString(" " + strconv.Itoa(marked) + " cells marked with a dot (" + orDefault(h.MarkLabel, "marked") + ").")
	}
	if nan > 0 && cs.n > 0 {
		s.WriteString(" " + strconv.Itoa(nan) + " cells without value (grey).")
	}
	if skipped > 0 {
		s.WriteString(" " + strconv.Itoa(skipped) + " cells without a finite position left out.")
	}
	return s.String()
}
