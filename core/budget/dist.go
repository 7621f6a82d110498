package budget

import (
	"errors"
	"fmt"
	"math"
	"strconv"
	"strings"

	"gonum.org/v1/gonum/stat/distuv"
)

// Distribution kinds (the values of Dist.Kind).
const (
	DistNormal    = "normal"
	DistLognormal = "lognormal"
	DistUniform   = "uniform"
)

// Bounds on distribution parameters, so that no draw overflows: every
// location, spread and bound is at most MaxParam in magnitude, and a
// lognormal's log_sd at most MaxLogSD.
const (
	MaxParam = 1e6
	MaxLogSD = 5.0
)

// z95 is the 95th percentile of the standard normal, 1.6448536...
var z95 = distuv.UnitNormal.Quantile(0.95)

// Dist is a typed input distribution. Its JSON form is part of the
// analysis file:
//
//   - normal: {"dist":"normal","mean":M,"sd":S} (S >= 0; S = 0 is a fixed
//     value), or by its 5-95 % range {"dist":"normal","p05":A,"p95":B}:
//     mean (A+B)/2, SD (B-A)/(2 z95), z95 = 1.6449.
//   - lognormal: X = sign(median) exp(ln|median| + log_sd Z), Z standard
//     normal: {"dist":"lognormal","median":M,"log_sd":S}. M may be negative
//     (a mirrored lognormal, e.g. an aerosol forcing with a long negative
//     tail); log_sd is the SD of ln|X|. Or by its 5-95 % range
//     {"dist":"lognormal","p05":A,"p95":B} with A, B of one sign:
//     |median| = sqrt(|A| |B|), log_sd = |ln(|B|/|A|)| / (2 z95).
//   - uniform: {"dist":"uniform","low":L,"high":H}, L <= H.
//
// Normalize turns the 5-95 % forms into the canonical fields.
type Dist struct {
	Kind   string  `json:"dist"`
	Mean   float64 `json:"mean,omitempty"`
	SD     float64 `json:"sd,omitempty"`
	Median float64 `json:"median,omitempty"`
	LogSD  float64 `json:"log_sd,omitempty"`
	Low    float64 `json:"low,omitempty"`
	High   float64 `json:"high,omitempty"`
	P05    float64 `json:"p05,omitempty"`
	P95    float64 `json:"p95,omitempty"`
}

// Normal is the normal distribution with the given mean and SD.
func Normal(mean, sd float64) Dist { return Dist{Kind: DistNormal, Mean: mean, SD: sd} }

// Lognormal is the (possibly mirrored) lognormal with the given median and
// SD of the log (see Dist).
func Lognormal(median, logSD float64) Dist {
	return Dist{Kind: DistLognormal, Median: median, LogSD: logSD}
}

// Uniform is the uniform distribution on [low, high].
func Uniform(low, high float64) Dist { return Dist{Kind: DistUniform, Low: low, High: high} }

// Range90 builds a normal or lognormal from its 5 % and 95 % points.
func Range90(kind string, p05, p95 float64) (Dist, error) {
	return Dist{Kind: kind, P05: p05, P95: p95}.Normalize()
}

func finite(v ...float64) bool {
	for _, x := range v {
		if math.IsNaN(x) || math.IsInf(x, 0) {
			return false
		}
	}
	return true
}

// Normalize validates d and returns it in canonical form (5-95 % ranges
// converted, kind lower-cased; an empty kind is normal).
func (d Dist) Normalize() (Dist, error) {
	d.Kind = strings.ToLower(strings.TrimSpace(d.Kind))
	if d.Kind == "" {
		d.Kind = DistNormal
	}
	if !finite(d.Mean, d.SD, d.Median, d.LogSD, d.Low, d.High, d.P05, d.P95) {
		return d, errors.New("distribution parameters must be finite numbers")
	}
	for _, v := range []float64{d.Mean, d.SD, d.Median, d.Low, d.High, d.P05, d.P95} {
		if math.Abs(v) > MaxParam {
			return d, fmt.Errorf("distribution parameter %g: expected a magnitude of at most %g (K or W m-2)", v, MaxParam)
		}
	}
	byRange := d.P05 != 0 || d.P95 != 0
	switch d.Kind {
	case DistNormal:
		if byRange {
			if d.Mean != 0 || d.SD != 0 {
				return d, errors.New("normal: give either mean and sd or p05 and p95, not both")
			}
			if !(d.P95 >= d.P05) {
				return d, fmt.Errorf("normal: p05 %g is above p95 %g", d.P05, d.P95)
			}
			d.Mean, d.SD = (d.P05+d.P95)/2, (d.P95-d.P05)/(2*z95)
			d.P05, d.P95 = 0, 0
		}
		if d.SD < 0 {
			return d, fmt.Errorf("normal: sd %g is negative: expected 0 or more", d.SD)
		}
	case DistLognormal:
		if byRange {
			if d.Median != 0 || d.LogSD != 0 {
				return d, errors.New("lognormal: give either median and log_sd or p05 and p95, not both")
			}
			a, b := d.P05, d.P95
			if !(a*b > 0) {
				return d, fmt.Errorf("lognormal: p05 %g and p95 %g must be nonzero and of one sign", a, b)
			}
			if !(b >= a) {
				return d, fmt.Errorf("lognormal: p05 %g is above p95 %g", a, b)
			}
			sign := 1.0
			if a < 0 {
				sign = -1
			}
			d.Median = sign * math.Sqrt(a*b)
			d.LogSD = math.Abs(math.Log(b/a)) / (2 * z95)
			d.P05, d.P95 = 0, 0
		}
		if d.Median == 0 {
			return d, errors.New("lognormal: median must be nonzero (negative for a mirrored lognormal)")
		}
		if d.LogSD < 0 || d.LogSD > MaxLogSD {
			return d, fmt.Errorf("lognormal: log_sd %g: expected 0 to %g", d.LogSD, MaxLogSD)
		}
	case DistUniform:
		if byRange {
			return d, errors.New("uniform: give low and high, not p05 and p95")
		}
		if !(d.High >= d.Low) {
			return d, fmt.Errorf("uniform: low %g is above high %g", d.Low, d.High)
		}
	default:
		return d, fmt.Errorf("distribution %q: expected normal, lognormal or uniform", d.Kind)
	}
	return d, nil
}

// Center is the distribution's median: the mean of a normal, the median
// of a lognormal, the midpoint of a uniform. It is the "central input"
// behind the central estimate.
func (d Dist) Center() float64 {
	switch d.Kind {
	case DistLognormal:
		return d.Median
	case DistUniform:
		return (d.Low + d.High) / 2
	}
	return d.Mean
}

// MeanValue is the distribution's mean (a lognormal's is
// median exp(log_sd^2 / 2)).
func (d Dist) MeanValue() float64 {
	if d.Kind == DistLognormal {
		return d.Median * math.Exp(d.LogSD*d.LogSD/2)
	}
	return d.Center()
}

// StdDev is the distribution's standard deviation (lognormal:
// |median| exp(s^2/2) sqrt(exp(s^2) - 1); uniform: (high - low)/sqrt(12)).
func (d Dist) StdDev() float64 {
	switch d.Kind {
	case DistLognormal:
		s2 := d.LogSD * d.LogSD
		return math.Abs(d.Median) * math.Exp(s2/2) * math.Sqrt(math.Expm1(s2))
	case DistUniform:
		return (d.High - d.Low) / math.Sqrt(12)
	}
	return d.SD
}

// Quantile is the p-quantile, 0 < p < 1.
func (d Dist) Quantile(p float64) float64 {
	switch d.Kind {
	case DistLognormal:
		if d.Median < 0 {
			return -math.Abs(d.Median) * math.Exp(d.LogSD*distuv.UnitNormal.Quantile(1-p))
		}
		return d.Median * math.Exp(d.LogSD*distuv.UnitNormal.Quantile(p))
	case DistUniform:
		return d.Low + p*(d.High-d.Low)
	}
	return d.Mean + d.SD*distuv.UnitNormal.Quantile(p)
}

// PDF is the probability density at x (for previews; +Inf for a point
// mass at x, 0 elsewhere).
func (d Dist) PDF(x float64) float64 {
	switch d.Kind {
	case DistLognormal:
		y := x
		if d.Median < 0 {
			y = -x
		}
		m := math.Abs(d.Median)
		if !(y > 0) {
			return 0
		}
		if d.LogSD == 0 {
			if y == m {
				return math.Inf(1)
			}
			return 0
		}
		z := (math.Log(y) - math.Log(m)) / d.LogSD
		return math.Exp(-z*z/2) / (y * d.LogSD * math.Sqrt(2*math.Pi))
	case DistUniform:
		if x < d.Low || x > d.High {
			return 0
		}
		if d.High == d.Low {
			return math.Inf(1)
		}
		return 1 / (d.High - d.Low)
	}
	if d.SD == 0 {
		if x == d.Mean {
			return math.Inf(1)
		}
		return 0
	}
	z := (x - d.Mean) / d.SD
	return math.Exp(-z*z/2) / (d.SD * math.Sqrt(2*math.Pi))
}

// String describes the distribution in words.
func (d Dist) String() string {
	g := func(v float64) string { return strconv.FormatFloat(v, 'g', 4, 64) }
	switch d.Kind {
	case DistLognormal:
		return "lognormal (median " + g(d.Median) + ", SD of log " + g(d.LogSD) + ")"
	case DistUniform:
		return "uniform (" + g(d.Low) + " to " + g(d.High) + ")"
	}
	if d.SD == 0 {
		return "fixed " + g(d.Mean)
	}
	return "normal (mean " + g(d.Mean) + ", SD " + g(d.SD) + ")"
}

// uniformVariate tells whether the kind is drawn from a standard uniform
// (else from a standard normal).
func (d Dist) uniformVariate() bool { return d.Kind == DistUniform }

// transform maps a standard variate (normal z, or uniform u for a
// uniform) to a draw of d.
func (d Dist) transform(dst, std []float64, sign float64, add bool) {
	switch d.Kind {
	case DistLognormal:
		m, s := math.Log(math.Abs(d.Median)), d.LogSD
		sg := sign
		if d.Median < 0 {
			sg = -sign
		}
		for i, z := range std {
			v := sg * math.Exp(m+s*z)
			if add {
				dst[i] += v
			} else {
				dst[i] = v
			}
		}
	case DistUniform:
		lo, w := sign*d.Low, sign*(d.High-d.Low)
		for i, u := range std {
			v := lo + w*u
			if add {
				dst[i] += v
			} else {
				dst[i] = v
			}
		}
	default:
		m, s := sign*d.Mean, sign*d.SD
		for i, z := range std {
			v := m + s*z
			if add {
				dst[i] += v
			} else {
				dst[i] = v
			}
		}
	}
}

// ParseDist reads a distribution typed on a command line: "MEAN:SD"
// (normal), or "normal:MEAN:SD", "lognormal:MEDIAN:LOG_SD",
// "uniform:LOW:HIGH", "normal90:P05:P95", "lognormal90:P05:P95".
func ParseDist(s string) (Dist, error) {
	parts := strings.Split(strings.TrimSpace(s), ":")
	kind := "normal"
	if len(parts) == 3 {
		kind = strings.ToLower(strings.TrimSpace(parts[0]))
		parts = parts[1:]
	}
	if len(parts) != 2 {
		return Dist{}, fmt.Errorf("%q: expected MEAN:SD, e.g. 0.8:0.1 (or normal:MEAN:SD, lognormal:MEDIAN:LOG_SD, uniform:LOW:HIGH, normal90:P05:P95, lognormal90:P05:P95)", s)
	}
	var v [2]float64
	for i, p := range parts {
		f, err := strconv.ParseFloat(strings.TrimSpace(p), 64)
		if err != nil || !finite(f) {
			return Dist{}, fmt.Errorf("%q: %q is not a number", s, p)
		}
		v[i] = f
	}
	var d Dist
	switch kind {
	case "normal", "n":
		d = Normal(v[0], v[1])
	case "lognormal", "ln":
		d = Lognormal(v[0], v[1])
	case "uniform", "u":
		d = Uniform(v[0], v[1])
	case "normal90":
		d = Dist{Kind: DistNormal, P05: v[0], P95: v[1]}
	case "lognormal90":
		d = Dist{Kind: DistLognormal, P05: v[0], P95: v[1]}
	default:
		return Dist{}, fmt.Errorf("%q: distribution %q: expected normal, lognormal, uniform, normal90 or lognormal90", s, kind)
	}
	d, err := d.Normalize()
	if err != nil {
		return Dist{}, fmt.Errorf("%q: %v", s, err)
	}
	return d, nil
}

// DefaultF2x is the effective radiative forcing of doubled CO2, 3.93 W m-2
// with 0.47 W m-2 taken as the half-width of the 5-95 % range (IPCC AR6
// WG1 ch. 7: 3.93 +/- 0.47 W m-2; both numbers from memory, and our reading
// of +/- as the very likely range is from memory too), so SD =
// 0.47 / 1.6449 = 0.286 W m-2.
func DefaultF2x() Dist { return Normal(3.93, 0.47/z95) }
