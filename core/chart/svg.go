// Package chart draws charts as self-contained SVG text. It uses no DOM and
// no browser API, so the same code runs natively (CLI, tests) and under
// js/wasm (the page).
//
// Every chart type is a plain value with an SVG method. Shared pieces live
// in this package and are meant to be reused by later chart types:
//   - svgBuf: a byte buffer with escaping and compact number output;
//   - frame: the plot frame (title, axes, ticks, grid, legend, layout);
//   - NiceTicks and the tick label formatter.
//
// Output is deterministic: the same input gives the same bytes. All text
// (titles, labels, series names, colours) is XML-escaped, and characters
// that XML forbids are replaced by U+FFFD, so any input gives a well-formed
// document.
//
// Chart types: Lines (lines over shaded bands), Heatmap (cells on a
// diverging colour scale with a colour bar, e.g. the trend grid), Bars
// (grouped or stacked, vertical or horizontal, with error bars) and
// Histogram (binned draws with reference marks and interval bars).
//
// Elements carry class attributes with the prefix "hl-" so a page can style
// them and browser tests can find them; data elements also carry
// data-series="NAME" (bars also data-category="CATEGORY", heatmap cells
// data-key="KEY" for mapping a click back to the caller's cell). Hover text
// is a <title> child of the element it describes.
package chart

import (
	"math"
	"strconv"
	"unicode/utf8"
)

// svgBuf accumulates SVG text.
type svgBuf struct {
	b []byte
}

func (s *svgBuf) raw(t string) { s.b = append(s.b, t...) }

func (s *svgBuf) byte(c byte) { s.b = append(s.b, c) }

// text writes t escaped for character data.
func (s *svgBuf) text(t string) { s.b = appendEscaped(s.b, t, false) }

// attr writes ` name="value"` with value escaped for an attribute.
func (s *svgBuf) attr(name, value string) {
	s.b = append(s.b, ' ')
	s.b = append(s.b, name...)
	s.b = append(s.b, '=', '"')
	s.b = appendEscaped(s.b, value, true)
	s.b = append(s.b, '"')
}

// num writes ` name="v"` with v in compact coordinate format.
func (s *svgBuf) num(name string, v float64) {
	s.b = append(s.b, ' ')
	s.b = append(s.b, name...)
	s.b = append(s.b, '=', '"')
	s.b = appendCoord(s.b, v)
	s.b = append(s.b, '"')
}

// coord writes v in compact coordinate format (no attribute wrapper).
func (s *svgBuf) coord(v float64) { s.b = appendCoord(s.b, v) }

func (s *svgBuf) String() string { return string(s.b) }

// appendCoord appends v with one decimal, dropping a trailing ".0" and the
// sign of a negative zero. Non-finite values (which layout code never
// passes on purpose) are written as 0 so the document stays valid.
func appendCoord(b []byte, v float64) []byte {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return append(b, '0')
	}
	v = math.Round(v*10) / 10
	if v == 0 {
		return append(b, '0')
	}
	start := len(b)
	b = strconv.AppendFloat(b, v, 'f', 1, 64)
	if n := len(b); n-start >= 2 && b[n-2] == '.' && b[n-1] == '0' {
		b = b[:n-2]
	}
	return b
}

// isXMLChar reports whether r may appear in an XML 1.0 document.
func isXMLChar(r rune) bool {
	switch {
	case r == 0x9 || r == 0xA || r == 0xD:
		return true
	case r >= 0x20 && r <= 0xD7FF:
		return true
	case r >= 0xE000 && r <= 0xFFFD:
		return true
	case r >= 0x10000 && r <= 0x10FFFF:
		return true
	}
	return false
}

// appendEscaped appends t escaped for XML. Invalid UTF-8 and characters
// XML forbids become U+FFFD. In attributes, tab, newline and carriage return
// are written as character references so they survive attribute
// normalisation.
func appendEscaped(b []byte, t string, attr bool) []byte {
	for _, r := range t { // invalid bytes arrive as utf8.RuneError
		switch r {
		case '&':
			b = append(b, "&amp;"...)
		case '<':
			b = append(b, "&lt;"...)
		case '>':
			b = append(b, "&gt;"...)
		case '"':
			b = append(b, "&quot;"...)
		case '\'':
			b = append(b, "&#39;"...)
		case '\t', '\n', '\r':
			if attr {
				b = append(b, "&#x"...)
				b = strconv.AppendInt(b, int64(r), 16)
				b = append(b, ';')
			} else {
				b = append(b, byte(r))
			}
		default:
			if !isXMLChar(r) {
				r = utf8.RuneError
			}
			b = utf8.AppendRune(b, r)
		}
	}
	return b
}

// clip shortens s to at most max runes, ending with an ellipsis when cut.
func clip(s string, max int) string {
	if max < 1 {
		max = 1
	}
	if utf8.RuneCountInString(s) <= max {
		return s
	}
	n := 0
	for i := range s {
		if n == max-1 {
			return s[:i] + "…"
		}
		n++
	}
	return s
}

// Approximate text metrics for a sans-serif face: no font is available to
// measure with, so widths use an average advance of 0.6 em per character
// (common practice for layout estimates).
const charEm = 0.6

func textWidth(s string, size float64) float64 {
	return float64(utf8.RuneCountInString(s)) * charEm * size
}

// charsFitting is the number of characters of the given size that fit in w.
func charsFitting(w, size float64) int {
	n := int(w / (charEm * size))
	if n < 1 {
		n = 1
	}
	return n
}

func finite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }

// opacityText formats an opacity with at most three decimals.
func opacityText(v float64) string {
	return trimNum(strconv.FormatFloat(v, 'f', 3, 64))
}
