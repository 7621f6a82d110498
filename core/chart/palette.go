package chart

// Palette is the Okabe-Ito colour-blind-safe set (Okabe and Ito 2008,
// "Color Universal Design"), in its published order with black moved to the
// end: series take the first seven colours in turn (black is skipped for
// series and kept for reference marks).
var Palette = []string{
	"#E69F00", // orange
	"#56B4E9", // sky blue
	"#009E73", // bluish green
	"#F0E442", // yellow
	"#0072B2", // blue
	"#D55E00", // vermillion
	"#CC79A7", // reddish purple
	"#000000", // black
}

// Colours used for the frame; ours, not part of the series palette.
const (
	inkText  = "#222222"
	inkAxis  = "#777777"
	inkGrid  = "#e4e4e4"
	inkZero  = "#000000"
	inkPaper = "#ffffff"
)

// seriesColor returns the i-th automatic series colour: the entries of
// Palette other than black, cycled.
func seriesColor(i int) string {
	var c []string
	for _, p := range Palette {
		if p != "#000000" && validColor(p) {
			c = append(c, p)
		}
	}
	if len(c) == 0 {
		return "#0072B2"
	}
	if i < 0 {
		i = -i
	}
	return c[i%len(c)]
}

// validColor accepts the colour forms the package passes through to SVG:
// #rgb, #rgba, #rrggbb, #rrggbbaa, a bare keyword of letters (e.g. "teal"),
// and rgb()/rgba()/hsl()/hsla() with digits, dots, commas, percent signs
// and spaces. Anything else is replaced by a palette colour, so a colour
// string can never smuggle in other attributes or style rules.
func validColor(c string) bool {
	if c == "" || len(c) > 40 {
		return false
	}
	if c[0] == '#' {
		h := c[1:]
		switch len(h) {
		case 3, 4, 6, 8:
		default:
			return false
		}
		for i := 0; i < len(h); i++ {
			ch := h[i]
			if !(ch >= '0' && ch <= '9' || ch >= 'a' && ch <= 'f' || ch >= 'A' && ch <= 'F') {
				return false
			}
		}
		return true
	}
	letters := true
	for i := 0; i < len(c); i++ {
		ch := c[i]
		if !(ch >= 'a' && ch <= 'z' || ch >= 'A' && ch <= 'Z') {
			letters = false
			break
		}
	}
	if letters {
		return true
	}
	for _, fn := range []string{"rgb(", "rgba(", "hsl(", "hsla("} {
		if len(c) > len(fn) && c[:len(fn)] == fn && c[len(c)-1] == ')' {
			for i := len(fn); i < len(c)-1; i++ {
				ch := c[i]
				if !(ch >= '0' && ch <= '9' || ch == '.' || ch == ',' || ch == '%' || ch == ' ') {
					return false
				}
			}
			return true
		}
	}
	return false
}
