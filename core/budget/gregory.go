package budget

import (
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"strings"

	"gonum.org/v1/gonum/stat/distuv"

	"heatledger/core/linreg"
	"heatledger/core/series"
	"heatledger/core/trend"
)

// Num is a number whose JSON form is null when it is not finite (an
// unbounded sensitivity is +Inf).
type Num float64

// MarshalJSON writes null for +-Inf and NaN.
func (n Num) MarshalJSON() ([]byte, error) {
	f := float64(n)
	if math.IsNaN(f) || math.IsInf(f, 0) {
		return []byte("null"), nil
	}
	return json.Marshal(f)
}

// UnmarshalJSON reads null as +Inf.
func (n *Num) UnmarshalJSON(b []byte) error {
	if string(b) == "null" {
		*n = Num(math.Inf(1))
		return nil
	}
	var f float64
	if err := json.Unmarshal(b, &f); err != nil {
		return err
	}
	*n = Num(f)
	return nil
}

// GregoryOptions are the settings of the Gregory regression.
type GregoryOptions struct {
	From, To string  // window (series.WindowSpec); empty = the common span
	Noise    string  // white, ar1 (default) or arma11
	Level    float64 // confidence level; zero = 0.95
	F2x      *Dist   // nil = DefaultF2x; its centre is used
}

// GregoryResult is the regression of the imbalance N on temperature T.
type GregoryResult struct {
	N     int     `json:"n"`
	From  string  `json:"from"`
	To    string  `json:"to"`
	Noise string  `json:"noise"`
	Level float64 `json:"level"`
	// Forcing is the intercept F (W m-2): N at T = 0.
	ForcingWPerM2       float64 `json:"forcing_w_m2"`
	ForcingStderrWPerM2 float64 `json:"forcing_stderr_w_m2"`
	ForcingCILowWPerM2  float64 `json:"forcing_ci_low_w_m2"`
	ForcingCIHighWPerM2 float64 `json:"forcing_ci_high_w_m2"`
	// Lambda is the feedback parameter, minus the slope (W m-2 K-1).
	LambdaWPerM2PerK       float64 `json:"lambda_w_m2_per_k"`
	LambdaStderrWPerM2PerK float64 `json:"lambda_stderr_w_m2_per_k"`
	LambdaCILowWPerM2PerK  float64 `json:"lambda_ci_low_w_m2_per_k"`
	LambdaCIHighWPerM2PerK float64 `json:"lambda_ci_high_w_m2_per_k"`
	// ECS = F2x / lambda (K); the interval maps lambda's interval through
	// F2x / lambda (unbounded, null, when lambda's lower end is <= 0).
	F2xWPerM2 float64 `json:"f2x_w_m2"`
	ECS       Num     `json:"ecs"`
	ECSCILow  Num     `json:"ecs_ci_low"`
	ECSCIHigh Num     `json:"ecs_ci_high"`
	// EquilibriumWarmingK = F / lambda: where the line meets N = 0.
	EquilibriumWarmingK Num      `json:"equilibrium_warming_k"`
	DOF                 float64  `json:"dof"`
	Rho1                float64  `json:"rho1"`
	Rho2                float64  `json:"rho2"`
	NEff                float64  `json:"n_eff"`
	Nu                  float64  `json:"nu"`
	Warnings            []string `json:"warnings"`
	// The points used, in time order (not in the JSON).
	Times []float64 `json:"-"`
	T     []float64 `json:"-"`
	Imb   []float64 `json:"-"`
}

// Gregory regresses the top-of-atmosphere imbalance N on the surface
// temperature change T (Gregory et al. 2004, Geophys. Res. Lett. 31,
// L03205, journal details from memory; the energy-budget reading of
// Gregory et al. 2002):
//
//	N = F - lambda T + e,   ECS = F2x / lambda,
//
// by ordinary least squares over the times where both are present, with
// the trend engine's noise models applied to the residuals in time order
// (trend.NoiseInflation; the formulas of trend.Window with the time axis
// replaced by T):
// white: s^2 = sum e^2/(n - 2), dof n - 2; ar1 (Santer et al. 2008):
// n_e = n (1 - r1)/(1 + r1) (capped at n), s^2 = sum e^2/(n_e - 2), dof
// n_e - 2, refused when n_e <= 3; arma11 (Foster and Rahmstorf 2011):
// variances times nu = 1 + 2 rho1/(1 - phi), phi = rho2/rho1 (AR(1) or
// white fall-backs as the trend engine's), dof n/nu - 2. Var(slope) =
// s^2 / S_TT; Var(F) = s^2 (1/n + Tbar^2 / S_TT). Intervals use Student's
// t. The N and T series are aligned by time (one resolution).
func Gregory(nSer, tSer *series.Series, opt GregoryOptions) (*GregoryResult, error) {
	if nSer == nil || tSer == nil {
		return nil, errors.New("the Gregory regression needs an imbalance series N and a temperature series T")
	}
	noise := strings.ToLower(strings.TrimSpace(opt.Noise))
	if noise == "" {
		noise = trend.NoiseAR1
	}
	if noise != trend.NoiseWhite && noise != trend.NoiseAR1 && noise != trend.NoiseARMA11 {
		return nil, fmt.Errorf("noise model %q: expected white, ar1 or arma11 for the Gregory regression", opt.Noise)
	}
	level := opt.Level
	if level == 0 {
		level = trend.DefaultLevel
	}
	if !(level > 0 && level < 1) {
		return nil, fmt.Errorf("confidence level %v: expected a value between 0 and 1, e.g. 0.95", level)
	}
	f2x := DefaultF2x()
	if opt.F2x != nil {
		var err error
		if f2x, err = opt.F2x.Normalize(); err != nil {
			return nil, fmt.Errorf("F2x: %w", err)
		}
	}
	al, err := series.Align(nSer, tSer)
	if err != nil {
		return nil, err
	}
	nw, err := al[0].WindowSpec(opt.From, opt.To)
	if err != nil {
		return nil, err
	}
	tw, err := al[1].WindowSpec(opt.From, opt.To)
	if err != nil {
		return nil, err
	}
	r := &GregoryResult{Noise: noise, Level: level, F2xWPerM2: f2x.Center(), Warnings: []string{}}
	m := len(nw.Values)
	var sx, sy float64
	first, lastI := -1, -1
	for i := range m {
		x, y := tw.Values[i], nw.Values[i]
		if math.IsNaN(x) || math.IsNaN(y) {
			continue
		}
		if first < 0 {
			first = i
		}
		lastI = i
		r.Times = append(r.Times, nw.Times[i])
		r.T = append(r.T, x)
		r.Imb = append(r.Imb, y)
		sx += x
		sy += y
	}
	n := len(r.T)
	r.N = n
	if n < 4 {
		return nil, fmt.Errorf("Gregory regression: %d times with both N and T present: expected at least 4", n)
	}
	r.From = series.StepLabel(nw.Resolution, nw.First+first)
	r.To = series.StepLabel(nw.Resolution, nw.First+lastI)
	fn := float64(n)
	xb, yb := sx/fn, sy/fn
	var sxx, sxy, syy float64
	for i := range r.T {
		dx, dy := r.T[i]-xb, r.Imb[i]-yb
		sxx += dx * dx
		sxy += dx * dy
		syy += dy * dy
	}
	if !(sxx > 0) {
		return nil, errors.New("Gregory regression: the temperature does not vary: expected a range of T")
	}
	b := sxy / sxx
	a := yb - b*xb
	e := make([]float64, m)
	var rss float64
	for i := range m {
		x, y := tw.Values[i], nw.Values[i]
		if math.IsNaN(x) || math.IsNaN(y) {
			e[i] = math.NaN()
			continue
		}
		e[i] = y - a - b*x
		rss += e[i] * e[i]
	}
	if !(rss > 1e-26*syy) {
		return nil, errors.New("Gregory regression: N lies exactly on a line in T: no residual variability to estimate the uncertainty from")
	}
	r.Rho1, r.Rho2 = acf12(e)
	var infl, dof, s2 float64
	inf := trend.NoiseInflation(noise, n, r.Rho1, r.Rho2)
	r.NEff, r.Nu = inf.NEff, inf.Nu
	switch noise {
	case trend.NoiseWhite:
		s2, infl, dof = rss/(fn-2), 1, fn-2
	case trend.NoiseAR1:
		if inf.Fallback == trend.FallbackCapped {
			r.Warnings = append(r.Warnings, fmt.Sprintf("ar1: the residuals' lag-1 autocorrelation r1 = %.3f is not positive: n_e is capped at n = %d (common practice)", r.Rho1, n))
		}
		if !(r.NEff > 3) {
			return nil, fmt.Errorf("Gregory regression, ar1: effective sample size n_e = %.2f (n = %d, r1 = %.3f) is 3 or less: too few independent values", r.NEff, n, r.Rho1)
		}
		s2, infl, dof = rss/(r.NEff-2), 1, r.NEff-2
	case trend.NoiseARMA11:
		switch inf.Fallback {
		case trend.FallbackWhite:
			r.Warnings = append(r.Warnings, fmt.Sprintf("arma11: the residuals' lag-1 autocorrelation rho1 = %.3f is not positive: the white-noise uncertainty is used (nu = 1)", r.Rho1))
		case trend.FallbackAR1:
			r.Warnings = append(r.Warnings, fmt.Sprintf("arma11: phi = rho2/rho1 = %.3f lies outside [0, 1): AR(1) with phi = rho1 is used, nu = (1 + rho1)/(1 - rho1)", r.Rho2/r.Rho1))
		}
		if !(r.NEff > 3) {
			return nil, fmt.Errorf("Gregory regression, arma11: effective sample size n/nu = %.2f is 3 or less: too few independent values", r.NEff)
		}
		s2, infl, dof = rss/(fn-2), r.Nu, r.NEff-2
	}
	r.DOF = dof
	seB := math.Sqrt(s2 * infl / sxx)
	seA := math.Sqrt(s2 * infl * (1/fn + xb*xb/sxx))
	q := distuv.StudentsT{Mu: 0, Sigma: 1, Nu: dof}.Quantile(1 - (1-level)/2)
	lam := -b
	r.ForcingWPerM2, r.ForcingStderrWPerM2 = a, seA
	r.ForcingCILowWPerM2, r.ForcingCIHighWPerM2 = a-q*seA, a+q*seA
	r.LambdaWPerM2PerK, r.LambdaStderrWPerM2PerK = lam, seB
	r.LambdaCILowWPerM2PerK, r.LambdaCIHighWPerM2PerK = lam-q*seB, lam+q*seB
	inv := func(l float64) Num {
		if !(l > 0) {
			return Num(math.Inf(1))
		}
		return Num(f2x.Center() / l)
	}
	r.ECS = inv(lam)
	r.ECSCILow = inv(r.LambdaCIHighWPerM2PerK)
	r.ECSCIHigh = inv(r.LambdaCILowWPerM2PerK)
	if lam > 0 {
		r.EquilibriumWarmingK = Num(a / lam)
	} else {
		r.EquilibriumWarmingK = Num(math.Inf(1))
		r.Warnings = append(r.Warnings, fmt.Sprintf("the fitted feedback parameter lambda = %.3g W m-2 K-1 is not positive: N does not fall as T rises, so ECS is unbounded", lam))
	}
	if !(r.LambdaCILowWPerM2PerK > 0) && lam > 0 {
		r.Warnings = append(r.Warnings, "the interval of lambda reaches zero: the upper end of the ECS interval is unbounded")
	}
	if m-n > 0 {
		r.Warnings = append(r.Warnings, fmt.Sprintf("%d steps skipped where N or T is missing", m-n))
	}
	return r, nil
}

// acf12 is the lag-1 and lag-2 autocorrelations of values on a regular
// axis with NaN gaps (R's acf without gaps; pairs of present steps).
func acf12(e []float64) (r1, r2 float64) {
	r, _ := linreg.ACFGaps(e, 2)
	if r == nil || math.IsNaN(r[1]) {
		return 0, 0
	}
	return r[1], r[2]
}
