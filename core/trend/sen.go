package trend

// Nonparametric trend: the Theil-Sen slope per unit time with its
// rank-based interval, and the Mann-Kendall test with optional corrections
// for serial correlation.

import (
	"fmt"
	"math"
	"sort"
)

// SenOptions are the settings of SenMannKendall.
type SenOptions struct {
	// Correction for serial correlation: "none" (default), "hamed-rao"
	// (variance correction, Hamed and Rao 1998) or "prewhiten"
	// (trend-free prewhitening, Yue et al. 2002).
	Correction string
	// Level is the confidence level of the slope interval (0 means 0.95).
	Level float64
}

// SenResult is the outcome of SenMannKendall. JSON names are the CLI
// contract.
type SenResult struct {
	SenSlopePerDecade float64 `json:"sen_slope_per_decade"`
	CILowPerDecade    float64 `json:"ci_low_per_decade"`
	CIHighPerDecade   float64 `json:"ci_high_per_decade"`
	// S is the Mann-Kendall statistic of the series tested (the prewhitened
	// one under "prewhiten").
	S int `json:"s"`
	// VarS is the variance of S used for Z: tie-corrected, times n/n*
	// under "hamed-rao".
	VarS float64 `json:"var_s"`
	// Z is (S - sign S)/sqrt(VarS) (continuity-corrected); PValue is its
	// two-sided normal p-value.
	Z      float64 `json:"z"`
	PValue float64 `json:"p_value"`
	// Tau is Kendall's tau-b of y against time (equal to tau-a without ties).
	Tau        float64 `json:"tau"`
	Correction string  `json:"correction"`
	// N is the number of values tested (n - 1 after prewhitening).
	N     int     `json:"n"`
	Level float64 `json:"level"`
	// VarSUncorrected is the tie-corrected variance before any correction.
	VarSUncorrected float64 `json:"var_s_uncorrected"`
	// VarianceFactor is n/n* of Hamed and Rao (1 otherwise).
	VarianceFactor float64 `json:"variance_factor"`
	// LagsUsed are the lags whose rank autocorrelation entered n/n*.
	LagsUsed []int `json:"lags_used,omitempty"`
	// R1 is the lag-1 autocorrelation removed by prewhitening (0 otherwise).
	R1       float64  `json:"r1"`
	Warnings []string `json:"warnings"`
}

// SenMannKendall computes the Theil-Sen slope of y against time t and the
// Mann-Kendall trend test.
//
// Theil-Sen (Theil 1950; Sen 1968, J. Am. Stat. Assoc. 63, 1379): the
// median of the pairwise slopes (y_j - y_i)/(t_j - t_i), i < j, per unit
// time (so gaps are handled), reported per decade. Interval (Sen 1968;
// Gilbert 1987, Statistical Methods for Environmental Pollution Monitoring,
// ch. 16): with N slopes sorted ascending, C = z_{(1+Level)/2} sqrt(VarS),
// M1 = (N - C)/2, M2 = (N + C)/2; the limits are the slopes of 1-based rank
// M1 and M2 + 1, linearly interpolated between neighbouring ranks when the
// rank is fractional (clamped to 1..N). VarS is the variance the test uses
// (so "hamed-rao" widens the interval); under "prewhiten" the interval comes
// from the original series with its uncorrected VarS (with a warning).
//
// Mann-Kendall (Mann 1945; Kendall 1975): S = sum_{i<j} sign(y_j - y_i) in
// time order; with tie groups of sizes t_p in y,
// VarS = [n(n-1)(2n+5) - sum_p t_p(t_p-1)(2t_p+5)]/18;
// Z = (S - sign S)/sqrt(VarS); p = 2(1 - Phi(|Z|)). Tau is tau-b,
// S / sqrt(n0 (n0 - n2)), n0 = n(n-1)/2, n2 = sum_p t_p(t_p-1)/2, as R's
// cor.test(method = "kendall") reports it.
//
// "hamed-rao" (Hamed and Rao 1998, J. Hydrol. 204, 182): ranks R_i of the
// Sen-detrended series y_i - b t_i; their lag-k autocorrelations r_k
// (mean removed, as R's acf) for k = 1..n-1, keeping those with
// |r_k| > 1.96/sqrt(n); n/n* = 1 + 2/(n(n-1)(n-2)) sum_k (n-k)(n-k-1)(n-k-2) r_k;
// VarS* = VarS n/n*. Guard: n/n* is floored at 1, so the correction only
// widens. The sum has no sign constraint and rank autocorrelations of short
// series are noisy: a factor below 1 (or below 0, a negative variance)
// would let noise manufacture significance. A warning says when the floor
// applied.
//
// "prewhiten" (Yue, Pilon, Phinney and Cavadias 2002, Hydrol. Process. 16,
// 1807, trend-free prewhitening): b = Sen slope; x_i = y_i - b t_i; r1 = lag-1
// autocorrelation of x; if |r1| <= 1.96/sqrt(n) the series is tested as it
// is (with a warning); otherwise x'_i = x_i - r1 x_{i-1} + b t_i for
// i = 2..n is tested. The reported slope stays the original series' Sen
// slope. Measured on trend-free AR(1) noise (phi 0.6, n = 50, 400 seeded
// series) the 5 % test rejected 29 % uncorrected, 18 % with "hamed-rao" and
// 38 % with "prewhiten": prewhitening adds back a slope estimated from the
// autocorrelated series after removing the noise that made it
// insignificant, a known weakness when the trend is weak (Bayazit and Onoz
// 2007, Hydrol. Sci. J. 52, 611, from memory). The result warns of it.
//
// NaN values are skipped (lags are then counted by position, with a
// warning); times must be strictly increasing.
func SenMannKendall(t, y []float64, opt SenOptions) (*SenResult, error) {
	corr := opt.Correction
	switch corr {
	case "":
		corr = "none"
	case "none", "hamed-rao", "prewhiten":
	default:
		return nil, fmt.Errorf("sen: correction %q; expected \"none\", \"hamed-rao\" or \"prewhiten\"", opt.Correction)
	}
	level := opt.Level
	if level == 0 {
		level = 0.95
	}
	if !(level > 0 && level < 1) {
		return nil, fmt.Errorf("sen: level %v; expected a number between 0 and 1", opt.Level)
	}
	if len(t) != len(y) {
		return nil, fmt.Errorf("sen: %d times but %d values", len(t), len(y))
	}
	var tt, yy []float64
	for i := range t {
		if math.IsNaN(t[i]) || math.IsInf(t[i], 0) {
			return nil, fmt.Errorf("sen: time %d is %v; expected a finite decimal year", i, t[i])
		}
		if i > 0 && !(t[i] > t[i-1]) {
			return nil, fmt.Errorf("sen: time %d (%v) does not follow time %d (%v); expected strictly increasing times", i, t[i], i-1, t[i-1])
		}
		if math.IsNaN(y[i]) {
			continue
		}
		if math.IsInf(y[i], 0) {
			return nil, fmt.Errorf("sen: value %d (time %v) is infinite", i, t[i])
		}
		tt = append(tt, t[i])
		yy = append(yy, y[i])
	}
	n := len(tt)
	if n < 4 {
		return nil, fmt.Errorf("sen: %d values present; expected at least 4", n)
	}
	res := &SenResult{Correction: corr, Level: level, VarianceFactor: 1, Warnings: []string{}}
	if d := len(t) - n; d > 0 {
		res.Warnings = append(res.Warnings, fmt.Sprintf("%d missing values skipped", d))
		if corr != "none" {
			res.Warnings = append(res.Warnings, "with values missing, the serial-correlation correction counts lags by position")
		}
	}

	slopes := senSlopes(tt, yy)
	b := senMedian(slopes)
	res.SenSlopePerDecade = 10 * b

	s, v, tau := senMK(yy)
	res.VarSUncorrected = v
	ciVar := v
	switch corr {
	case "hamed-rao":
		f, lags := senHamedRao(tt, yy, b)
		res.LagsUsed = lags
		if f < 1 {
			res.Warnings = append(res.Warnings, fmt.Sprintf("Hamed-Rao factor n/n* = %.3g < 1 (negative rank autocorrelation): kept at 1, the correction only widens", f))
			f = 1
		}
		res.VarianceFactor = f
		v *= f
		ciVar = v
	case "prewhiten":
		x := make([]float64, n)
		for i := range x {
			x[i] = yy[i] - b*tt[i]
		}
		r1 := brkACF(x, 1)
		if math.Abs(r1) <= 1.96/math.Sqrt(float64(n)) {
			res.Warnings = append(res.Warnings, fmt.Sprintf("lag-1 autocorrelation %.3f of the detrended series is not significant at 5 %%: tested without prewhitening", r1))
		} else {
			res.R1 = r1
			w := make([]float64, n-1)
			for i := 1; i < n; i++ {
				w[i-1] = x[i] - r1*x[i-1] + b*tt[i]
			}
			s, v, tau = senMK(w)
			n = n - 1
			res.Warnings = append(res.Warnings,
				"the slope interval is not corrected for serial correlation under prewhitening; hamed-rao widens it",
				"trend-free prewhitening overstates significance when the trend is weak; hamed-rao is the more cautious correction")
		}
	}
	res.N = n
	res.S, res.VarS, res.Tau = s, v, tau
	if v > 0 && s != 0 {
		sg := 1.0
		if s < 0 {
			sg = -1
		}
		res.Z = (float64(s) - sg) / math.Sqrt(v)
	}
	res.PValue = math.Erfc(math.Abs(res.Z) / math.Sqrt2)
	if v == 0 {
		res.Warnings = append(res.Warnings, "all values are equal: no trend can be tested")
	}

	z := math.Sqrt2 * math.Erfinv(level)
	C := z * math.Sqrt(ciVar)
	N := float64(len(slopes))
	res.CILowPerDecade = 10 * senRank(slopes, (N-C)/2)
	res.CIHighPerDecade = 10 * senRank(slopes, (N+C)/2+1)
	return res, nil
}

// senSlopes returns the sorted pairwise slopes (y_j - y_i)/(t_j - t_i), i < j.
func senSlopes(t, y []float64) []float64 {
	n := len(t)
	s := make([]float64, 0, n*(n-1)/2)
	for i := 0; i < n; i++ {
		for j := i + 1; j < n; j++ {
			s = append(s, (y[j]-y[i])/(t[j]-t[i]))
		}
	}
	sort.Float64s(s)
	return s
}

// senMedian is the median of sorted x (mean of the middle two when even).
func senMedian(x []float64) float64 {
	m := len(x) / 2
	if len(x)%2 == 1 {
		return x[m]
	}
	return (x[m-1] + x[m]) / 2
}

// senRank is the value at 1-based rank r of sorted x, linearly interpolated
// between neighbouring ranks and clamped to 1..len(x).
func senRank(x []float64, r float64) float64 {
	r = math.Max(1, math.Min(float64(len(x)), r))
	i := int(math.Floor(r))
	if i >= len(x) {
		return x[len(x)-1]
	}
	return x[i-1] + (r-float64(i))*(x[i]-x[i-1])
}

// senMK returns the Mann-Kendall S of y in order, its tie-corrected
// variance and Kendall's tau-b against time.
func senMK(y []float64) (int, float64, float64) {
	n := len(y)
	s := 0
	for i := 0; i < n; i++ {
		for j := i + 1; j < n; j++ {
			switch {
			case y[j] > y[i]:
				s++
			case y[j] < y[i]:
				s--
			}
		}
	}
	v, n2 := senTieTerms(y)
	fn := float64(n)
	varS := (fn*(fn-1)*(2*fn+5) - v) / 18
	n0 := fn * (fn - 1) / 2
	tau := 0.0
	if d := math.Sqrt(n0 * (n0 - n2)); d > 0 {
		tau = float64(s) / d
	}
	return s, varS, tau
}

// senTieTerms returns sum t(t-1)(2t+5) and sum t(t-1)/2 over tie groups of y.
func senTieTerms(y []float64) (float64, float64) {
	c := append([]float64{}, y...)
	sort.Float64s(c)
	var v, n2 float64
	for i := 0; i < len(c); {
		j := i
		for j < len(c) && c[j] == c[i] {
			j++
		}
		if g := float64(j - i); g > 1 {
			v += g * (g - 1) * (2*g + 5)
			n2 += g * (g - 1) / 2
		}
		i = j
	}
	return v, n2
}

// senRanks returns the ranks of x, ties sharing their average rank.
func senRanks(x []float64) []float64 {
	n := len(x)
	idx := make([]int, n)
	for i := range idx {
		idx[i] = i
	}
	sort.SliceStable(idx, func(a, b int) bool { return x[idx[a]] < x[idx[b]] })
	r := make([]float64, n)
	for i := 0; i < n; {
		j := i
		for j < n && x[idx[j]] == x[idx[i]] {
			j++
		}
		avg := float64(i+j+1) / 2 // mean of ranks i+1..j
		for k := i; k < j; k++ {
			r[idx[k]] = avg
		}
		i = j
	}
	return r
}

// senHamedRao returns n/n* of Hamed and Rao (1998) for y detrended with
// slope b per unit time, and the lags that entered it.
func senHamedRao(t, y []float64, b float64) (float64, []int) {
	n := len(y)
	x := make([]float64, n)
	for i := range x {
		x[i] = y[i] - b*t[i]
	}
	r := senRanks(x)
	fn := float64(n)
	bound := 1.96 / math.Sqrt(fn)
	var sum float64
	var lags []int
	for k := 1; k < n; k++ {
		rk := brkACF(r, k)
		if math.Abs(rk) > bound {
			fk := float64(k)
			sum += (fn - fk) * (fn - fk - 1) * (fn - fk - 2) * rk
			lags = append(lags, k)
		}
	}
	return 1 + 2/(fn*(fn-1)*(fn-2))*sum, lags
}
