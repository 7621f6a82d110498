package ebm

import (
	"fmt"
	"math"
)

// Derived are the quantities that follow from the parameters.
type Derived struct {
	// ECSK = F2x / lambda (K), the equilibrium warming for doubled CO2.
	ECSK float64 `json:"ecs"`
	// TCRK is the surface warming at the end of a 70-year linear ramp of
	// the forcing to F2x, from the exact ramp solution (RampState), not the
	// approximation F2x / (lambda + gamma).
	TCRK float64 `json:"tcr"`
	// TauFastYears and TauSlowYears are -1/eigenvalue of the 2x2 system;
	// AFast and ASlow the amplitudes of the two modes in the surface
	// temperature's step response (Geoffroy et al. 2013a, eqs. for tau_f,
	// tau_s, a_f, a_s; with efficacy Geoffroy et al. 2013b):
	//
	//	T(t) = (F/lambda) [1 - a_f exp(-t/tau_f) - a_s exp(-t/tau_s)],  a_f + a_s = 1.
	//
	// With phi_i = (C l_i + lambda + eps gamma)/(eps gamma) the ratio T0/T
	// of mode i (l_i = -1/tau_i), a_f = (phi_s - 1)/(phi_s - phi_f) and
	// a_s = (1 - phi_f)/(phi_s - phi_f) (both layers start at rest).
	// One-box: tau_f = C/lambda, a_f = 1, a_s = 0, TauSlowYears nil.
	TauFastYears float64  `json:"tau_fast"`
	TauSlowYears *float64 `json:"tau_slow"`
	AFast        float64  `json:"a_fast"`
	ASlow        float64  `json:"a_slow"`
}

// Derive computes the derived quantities of p.
func Derive(p Params) (Derived, error) {
	p, err := p.Normalized()
	if err != nil {
		return Derived{}, err
	}
	s := newSystem(p)
	d := Derived{ECSK: p.F2xWPerM2 / p.LambdaWPerM2K, TCRK: tcr(&s), TauFastYears: -1 / s.lf}
	if s.onebox {
		d.AFast, d.ASlow = 1, 0
		return d, nil
	}
	ts := -1 / s.ls
	d.TauSlowYears = &ts
	eg := p.Efficacy * p.GammaWPerM2K
	phiF := (p.CWYrPerM2K*s.lf + p.LambdaWPerM2K + eg) / eg
	phiS := (p.CWYrPerM2K*s.ls + p.LambdaWPerM2K + eg) / eg
	d.AFast = (phiS - 1) / (phiS - phiF)
	d.ASlow = (1 - phiF) / (phiS - phiF)
	return d, nil
}

// FromECSTCR returns the parameters of the model base.Model with
// lambda = F2x / ECS and the remaining free parameter solved so that the
// simulated TCR (Derived.TCRK) equals tcr:
//
//   - two-layer: gamma, with C, C0 and eps from base (bisection on
//     log gamma; TCR falls as gamma grows, from the one-box value with C at
//     gamma -> 0 towards the one-box value with C + C0);
//   - two-layer with tauFastYears > 0: C and gamma together, so that the
//     fast time scale is tauFastYears as well (bisection on log C around
//     the inner solve for gamma);
//   - one-box: C (TCR falls as C grows); tauFastYears must then be 0.
//
// Errors say which range the requested TCR must lie in.
func FromECSTCR(base Params, ecsK, tcrK, tauFastYears float64) (Params, error) {
	p, err := base.Normalized()
	if err != nil {
		return p, err
	}
	if !(ecsK > 0) || !(tcrK > 0) || math.IsInf(ecsK, 0) || math.IsInf(tcrK, 0) {
		return p, fmt.Errorf("ECS %v K and TCR %v K: expected positive numbers", ecsK, tcrK)
	}
	if tcrK >= ecsK {
		return p, fmt.Errorf("TCR %v K is not below ECS %v K: the warming at the end of a 70-year ramp is always less than the equilibrium warming", tcrK, ecsK)
	}
	if tauFastYears < 0 || math.IsNaN(tauFastYears) {
		return p, fmt.Errorf("fast time scale %v years: expected a positive number (or 0 to keep C)", tauFastYears)
	}
	p.LambdaWPerM2K = p.F2xWPerM2 / ecsK
	if p.Model == ModelOneBox {
		if tauFastYears > 0 {
			return p, fmt.Errorf("the one-box model has one time scale C/lambda, fixed by ECS and TCR: give either TCR or the fast time scale")
		}
		c, err := solveLog(func(c float64) float64 { q := p; q.CWYrPerM2K = c; return tcrOf(q) - tcrK }, 1e-3, 1e4)
		if err != nil {
			return p, fmt.Errorf("no one-box heat capacity gives TCR %v K with ECS %v K (C from 0.001 to 10000 W yr m-2 K-1 gives TCR %.3g to %.3g K)",
				tcrK, ecsK, tcrWith(p, func(q *Params) { q.CWYrPerM2K = 1e4 }), tcrWith(p, func(q *Params) { q.CWYrPerM2K = 1e-3 }))
		}
		p.CWYrPerM2K = c
		return p, nil
	}
	if tauFastYears == 0 {
		g, err := solveGamma(p, tcrK)
		if err != nil {
			return p, err
		}
		p.GammaWPerM2K = g
		return p, nil
	}
	// Outer bisection on log C: tau_f grows with C.
	var inner error
	h := func(c float64) float64 {
		q := p
		q.CWYrPerM2K = c
		g, err := solveGamma(q, tcrK)
		if err != nil {
			inner = err
			if tcrK > tcrWith(q, func(r *Params) { r.GammaWPerM2K = gammaLo }) {
				return 1 // TCR too high for this C: a smaller C
			}
			return -1 // too low: a larger C
		}
		q.GammaWPerM2K = g
		s := newSystem(q)
		return -1/s.lf - tauFastYears
	}
	c, err := solveLog(h, 0.05, 500)
	if err != nil {
		if inner != nil {
			return p, fmt.Errorf("no two-layer parameters give ECS %v K, TCR %v K and a fast time scale of %v years with C0 %v and efficacy %v: %v",
				ecsK, tcrK, tauFastYears, p.C0WYrPerM2K, p.Efficacy, inner)
		}
		return p, fmt.Errorf("no upper-layer heat capacity between 0.05 and 500 W yr m-2 K-1 gives a fast time scale of %v years with ECS %v K and TCR %v K", tauFastYears, ecsK, tcrK)
	}
	p.CWYrPerM2K = c
	p.GammaWPerM2K, err = solveGamma(p, tcrK)
	return p, err
}

// gammaLo and gammaHi bound the search for gamma (W m-2 K-1).
const gammaLo, gammaHi = 1e-6, 1e3

func tcrOf(p Params) float64 {
	s := newSystem(p)
	return tcr(&s)
}

func tcrWith(p Params, set func(*Params)) float64 {
	set(&p)
	return tcrOf(p)
}

func solveGamma(p Params, tcrK float64) (float64, error) {
	g, err := solveLog(func(g float64) float64 { q := p; q.GammaWPerM2K = g; return tcrOf(q) - tcrK }, gammaLo, gammaHi)
	if err != nil {
		hi := tcrWith(p, func(q *Params) { q.GammaWPerM2K = gammaLo })
		lo := tcrWith(p, func(q *Params) { q.GammaWPerM2K = gammaHi })
		return 0, fmt.Errorf("no gamma gives TCR %v K with ECS %.4g K, C %v and C0 %v: the two-layer model gives TCR from %.3g K (strong deep-ocean coupling) to %.3g K (none); change C or C0, or the TCR",
			tcrK, p.F2xWPerM2/p.LambdaWPerM2K, p.CWYrPerM2K, p.C0WYrPerM2K, lo, hi)
	}
	return g, nil
}

// solveLog finds x in [lo, hi] with f(x) = 0 by bisection on log x; f must
// change sign over the interval.
func solveLog(f func(float64) float64, lo, hi float64) (float64, error) {
	a, b := math.Log(lo), math.Log(hi)
	fa, fb := f(lo), f(hi)
	if math.IsNaN(fa) || math.IsNaN(fb) || fa*fb > 0 {
		return 0, fmt.Errorf("no sign change")
	}
	if fa == 0 {
		return lo, nil
	}
	if fb == 0 {
		return hi, nil
	}
	for range 200 {
		m := (a + b) / 2
		if m == a || m == b {
			break
		}
		fm := f(math.Exp(m))
		if fm == 0 {
			return math.Exp(m), nil
		}
		if (fm > 0) == (fa > 0) {
			a, fa = m, fm
		} else {
			b = m
		}
	}
	return math.Exp((a + b) / 2), nil
}

// Preset is a published calibration of the model.
type Preset struct {
	Name   string `json:"name"`
	Source string `json:"source"`
	Params Params `json:"params"`
}

// Presets are published multi-model calibrations. Every number is from
// memory (nobody here read it from the paper while writing this): check the
// tables before relying on them.
var Presets = []Preset{
	{Name: "geoffroy2013a", Source: "Geoffroy et al. 2013a (J. Climate 26, 1841), two-layer fit to CMIP5 abrupt 4xCO2 runs, multi-model mean, eps = 1; from memory; F2x half their mean 4xCO2 forcing, from memory",
		Params: Params{Model: ModelTwoLayer, LambdaWPerM2K: 1.13, GammaWPerM2K: 0.73, CWYrPerM2K: 7.3, C0WYrPerM2K: 106, Efficacy: 1, F2xWPerM2: 3.65}},
	{Name: "geoffroy2013b", Source: "Geoffroy et al. 2013b (J. Climate 26, 1859), two-layer model with ocean heat uptake efficacy, CMIP5 multi-model mean; from memory",
		Params: Params{Model: ModelTwoLayer, LambdaWPerM2K: 1.06, GammaWPerM2K: 0.67, CWYrPerM2K: 7.7, C0WYrPerM2K: 89, Efficacy: 1.28, F2xWPerM2: 3.65}},
	{Name: "default", Source: "Heatledger's defaults: round values near the CMIP5 means, lambda giving ECS 3.0 K with F2x 3.93 W m-2 (IPCC AR6 best estimates, from memory)",
		Params: DefaultParams()},
}

// PresetByName looks a preset up.
func PresetByName(name string) (Preset, error) {
	for _, p := range Presets {
		if p.Name == name {
			return p, nil
		}
	}
	var names []string
	for _, p := range Presets {
		names = append(names, p.Name)
	}
	return Preset{}, fmt.Errorf("no preset named %q: expected one of %v", name, names)
}
