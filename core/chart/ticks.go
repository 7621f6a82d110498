package chart

import (
	"math"
	"strconv"
	"strings"
)

// NiceTicks returns round tick values covering [lo,hi] with about n ticks:
// the step is 1, 2 or 5 times a power of ten, the first tick is <= lo and the
// last >= hi, and the values increase strictly. Each tick is an integer
// multiple of the step, computed directly (not by repeated addition), so
// 0.3 comes out as the float nearest 0.3, not 0.30000000000000004.
//
// lo and hi may come in either order. If lo == hi the range is first widened
// (see widen). n < 2 counts as 2; n is capped at 1000. NaN or infinite
// bounds give nil. At the very edges of float64 (ranges near 1e308 or
// subnormal widths), where no round step is representable, the result is
// []float64{lo, hi}.
func NiceTicks(lo, hi float64, n int) []float64 {
	t, _ := niceTicks(lo, hi, n)
	return t
}

// niceTicks is NiceTicks that also returns the decimal exponent k of the
// step (step = m * 10^k, m in {1,2,5}), used to format labels. For the
// fallback ticks (no round step) k is math.MinInt32.
func niceTicks(lo, hi float64, n int) ([]float64, int) {
	if !finite(lo) || !finite(hi) {
		return nil, math.MinInt32
	}
	if lo > hi {
		lo, hi = hi, lo
	}
	if lo == hi {
		lo, hi = widen(lo)
	}
	if n < 2 {
		n = 2
	}
	if n > 1000 {
		n = 1000
	}
	fallback := []float64{lo, hi}
	m, k, ok := niceStep(lo, hi, n)
	if !ok {
		return fallback, math.MinInt32
	}
	// tick j is j*m*10^k; for k<0 divide by the exact power of ten so the
	// result is the double nearest the decimal value.
	val := func(j float64) float64 {
		if k < 0 {
			return j * m / math.Pow10(-k)
		}
		return j * m * math.Pow10(k)
	}
	step := val(1)
	if !(step > 0) || math.IsInf(step, 0) {
		return fallback, math.MinInt32
	}
	j0 := math.Floor(lo / step)
	j1 := math.Ceil(hi / step)
	// a rounded quotient can land one step inside the range; step outwards
	for i := 0; i < 2 && val(j0) > lo; i++ {
		j0--
	}
	for i := 0; i < 2 && val(j1) < hi; i++ {
		j1++
	}
	count := j1 - j0 + 1
	if !finite(count) || count > float64(4*n+10) || count < 2 {
		return fallback, math.MinInt32
	}
	out := make([]float64, 0, int(count))
	for i := 0; i < int(count); i++ {
		v := val(j0 + float64(i)) // j0+i may round to a neighbour: deduplicated below
		if !finite(v) {
			continue
		}
		if v == 0 {
			v = 0 // no negative zero
		}
		if len(out) > 0 && v <= out[len(out)-1] {
			continue // precision exhausted: keep strictly increasing
		}
		out = append(out, v)
	}
	if len(out) < 2 || out[0] > lo || out[len(out)-1] < hi {
		return fallback, math.MinInt32
	}
	return out, k
}

// niceStep picks step = m*10^k, m in {1,2,5}, nearest (on a log scale) to
// (hi-lo)/(n-1).
func niceStep(lo, hi float64, n int) (m float64, k int, ok bool) {
	raw := (hi - lo) / float64(n-1)
	if math.IsInf(raw, 0) {
		raw = (hi/2 - lo/2) / float64(n-1) * 2
		if math.IsInf(raw, 0) {
			raw = math.MaxFloat64
		}
	}
	if !(raw > 0) {
		raw = hi - lo
	}
	if !(raw > 0) || !finite(raw) {
		return 0, 0, false
	}
	k = int(math.Floor(math.Log10(raw)))
	p := math.Pow10(k)
	if p == 0 || math.IsInf(p, 0) {
		return 0, 0, false
	}
	f := raw / p
	switch {
	case f < math.Sqrt2: // between 1 and 2
		m = 1
	case f < math.Sqrt(10): // between 2 and 5
		m = 2
	case f < math.Sqrt(50): // between 5 and 10
		m = 5
	default:
		m, k = 1, k+1
	}
	return m, k, true
}

// widen turns a zero-width range at v into a padded one: v ± 10 % of |v|,
// or ± 1 when v is 0 (or when 10 % of |v| is too small to change v).
func widen(v float64) (float64, float64) {
	d := math.Abs(v) * 0.1
	if d == 0 || v-d == v || v+d == v {
		d = 1
	}
	if v-d == v || v+d == v { // |v| so large that 1 is lost
		d = math.Abs(v) * 0.1
	}
	lo, hi := v-d, v+d
	if math.IsInf(lo, 0) {
		lo = -math.MaxFloat64
	}
	if math.IsInf(hi, 0) {
		hi = math.MaxFloat64
	}
	return lo, hi
}

// tickLabels formats ticks produced by niceTicks with step exponent k. Plain
// decimals are used with exactly as many places as the step needs, and
// trailing zeros are then dropped per label, so 1990 prints as "1990" and
// 0.25 as "0.25". Very large or very small values use a short exponent form
// ("1.2e20", "5e-9").
func tickLabels(ticks []float64, k int) []string {
	out := make([]string, len(ticks))
	if k == math.MinInt32 { // fallback ticks: no round step
		for i, v := range ticks {
			out[i] = trimNum(strconv.FormatFloat(v, 'g', 6, 64))
		}
		return out
	}
	maxAbs := 0.0
	for _, v := range ticks {
		maxAbs = math.Max(maxAbs, math.Abs(v))
	}
	if maxAbs < 1e9 && k >= -6 {
		d := 0
		if k < 0 {
			d = -k
		}
		for i, v := range ticks {
			out[i] = trimNum(strconv.FormatFloat(v, 'f', d, 64))
		}
		return out
	}
	e := 0
	if maxAbs > 0 {
		e = int(math.Floor(math.Log10(maxAbs)))
	}
	d := e - k
	if d < 0 {
		d = 0
	}
	if d > 16 {
		d = 16
	}
	for i, v := range ticks {
		out[i] = trimNum(strconv.FormatFloat(v, 'e', d, 64))
	}
	return out
}

// trimNum drops trailing fractional zeros, a dangling point, a "+" and
// leading zeros in an exponent, and the sign of zero.
func trimNum(s string) string {
	mant, exp := s, ""
	if i := strings.IndexAny(s, "eE"); i >= 0 {
		mant, exp = s[:i], s[i+1:]
	}
	if strings.Contains(mant, ".") {
		mant = strings.TrimRight(mant, "0")
		mant = strings.TrimSuffix(mant, ".")
	}
	if mant == "-0" {
		mant = "0"
	}
	if exp == "" {
		return mant
	}
	sign := ""
	if exp[0] == '+' || exp[0] == '-' {
		if exp[0] == '-' {
			sign = "-"
		}
		exp = exp[1:]
	}
	exp = strings.TrimLeft(exp, "0")
	if exp == "" {
		return mant
	}
	return mant + "e" + sign + exp
}

// formatValue writes a single value for text (descriptions), with about
// four significant digits and no trailing noise.
func formatValue(v float64) string {
	if !finite(v) {
		return "n/a"
	}
	a := math.Abs(v)
	if a != 0 && (a >= 1e9 || a < 1e-4) {
		return trimNum(strconv.FormatFloat(v, 'e', 3, 64))
	}
	d := 0
	if a > 0 {
		d = 3 - int(math.Floor(math.Log10(a)))
	}
	if d < 0 {
		d = 0
	}
	return trimNum(strconv.FormatFloat(v, 'f', d, 64))
}
