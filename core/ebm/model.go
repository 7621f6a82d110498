// Package ebm holds Heatledger's energy balance models: the one-box model
// and the two-layer model with ocean heat uptake efficacy (Held et al.
// 2010, J. Climate 23, 2418; Geoffroy et al. 2013a,b, J. Climate 26, 1841
// and 1859), their exact integration for forcing held constant over each
// step, parameters from ECS and TCR, presets, fitting to a temperature
// record (optionally with a heat-content record) and attribution of a change
// or a trend to each forcing component.
//
// Two-layer model, T the surface (upper layer) and T0 the deep-ocean
// temperature anomaly in K, F the forcing in W m-2, time in years:
//
//	C  dT/dt  = F - lambda T - eps gamma (T - T0)
//	C0 dT0/dt = gamma (T - T0)
//	N         = F - lambda T - (eps - 1) gamma (T - T0)   (top-of-atmosphere imbalance)
//
// C and C0 in W yr m-2 K-1 (heat capacity per unit area), lambda and gamma in
// W m-2 K-1, eps dimensionless. The one-box model is C dT/dt = F - lambda T,
// N = F - lambda T.
//
// Heat: H = C T + C0 T0 (W yr m-2). Adding the two equations gives
// dH/dt = F - lambda T - (eps - 1) gamma (T - T0) = N for every eps, so the
// time integral of N equals the heat gained, C T + C0 T0, whatever the
// efficacy. With eps != 1 the upper layer loses eps gamma (T - T0) while the
// deep layer gains gamma (T - T0); the difference (eps - 1) gamma (T - T0) is
// part of N (radiated to space), so what differs from C T + C0 T0 is the
// integral of F - lambda T, not that of N. Heat in ZJ over the whole Earth:
// H * 5.10e14 m2 * 3.15576e7 s / 1e21 (a year of 365.25 days).
//
// The package imports the standard library, gonum, and the core packages
// series, forcing, linreg, trend and drivers (for the ARMA(1,1) inflation of
// Foster and Rahmstorf 2011), so it builds natively and as GOOS=js
// GOARCH=wasm.
package ebm

import (
	"fmt"
	"math"
	"strings"

	"heatledger/core/forcing"
)

// Models (the values of Params.Model).
const (
	ModelOneBox   = "onebox"
	ModelTwoLayer = "twolayer"
)

// Defaults of the physical parameters (Params.Normalized fills zeros with
// them). C = 8, C0 = 100 W yr m-2 K-1 and gamma = 0.7 W m-2 K-1 are round
// values near the CMIP5 multi-model means of Geoffroy et al. 2013a (from
// memory: C 7.3, C0 106, gamma 0.73); lambda = 1.3 W m-2 K-1 gives
// ECS = 3.93 / 1.3 = 3.0 K, the IPCC AR6 best estimate (from memory).
const (
	DefaultLambdaWPerM2K = 1.3
	DefaultGammaWPerM2K  = 0.7
	DefaultCWYrPerM2K    = 8.0
	DefaultC0WYrPerM2K   = 100.0
	DefaultEfficacy      = 1.0
)

// EarthAreaM2 and SecondsPerYear convert W yr m-2 over the whole Earth to
// joules (5.10e14 m2; 365.25 days). ZJPerWYrM2 = 16.094376 ZJ.
const (
	EarthAreaM2    = 5.10e14
	SecondsPerYear = 365.25 * 86400
	ZJPerWYrM2     = EarthAreaM2 * SecondsPerYear / 1e21
)

// TCRYears is the length of the ramp of TCR: forcing rising linearly to
// F2x over 70 years (CO2 growing 1 % a year doubles in about 70 years and
// its forcing, logarithmic in concentration, then rises linearly).
const TCRYears = 70.0

// Params are a model's physical parameters. Units are in the names; the JSON
// keys are the CLI's.
type Params struct {
	Model         string  `json:"-"`
	LambdaWPerM2K float64 `json:"lambda"`   // climate feedback parameter
	GammaWPerM2K  float64 `json:"gamma"`    // heat exchange coefficient (two-layer)
	CWYrPerM2K    float64 `json:"c"`        // upper-layer heat capacity
	C0WYrPerM2K   float64 `json:"c0"`       // deep-layer heat capacity (two-layer)
	Efficacy      float64 `json:"efficacy"` // ocean heat uptake efficacy eps (two-layer)
	F2xWPerM2     float64 `json:"f2x"`      // forcing of doubled CO2, for ECS and TCR
}

// DefaultParams is the two-layer model with the default parameters.
func DefaultParams() Params {
	return Params{Model: ModelTwoLayer, LambdaWPerM2K: DefaultLambdaWPerM2K, GammaWPerM2K: DefaultGammaWPerM2K,
		CWYrPerM2K: DefaultCWYrPerM2K, C0WYrPerM2K: DefaultC0WYrPerM2K, Efficacy: DefaultEfficacy, F2xWPerM2: forcing.DefaultF2xWPerM2}
}

// Normalized fills zero fields with the defaults (the one-box model gets
// gamma = 0, C0 = 0, eps = 1) and checks every parameter.
func (p Params) Normalized() (Params, error) {
	p.Model = strings.ToLower(strings.TrimSpace(p.Model))
	switch p.Model {
	case "", ModelTwoLayer, "two-layer":
		p.Model = ModelTwoLayer
	case ModelOneBox, "one-box":
		p.Model = ModelOneBox
	default:
		return p, fmt.Errorf("model %q: expected %s or %s", p.Model, ModelOneBox, ModelTwoLayer)
	}
	def := func(v *float64, d float64) {
		if *v == 0 {
			*v = d
		}
	}
	def(&p.LambdaWPerM2K, DefaultLambdaWPerM2K)
	def(&p.CWYrPerM2K, DefaultCWYrPerM2K)
	def(&p.F2xWPerM2, forcing.DefaultF2xWPerM2)
	if p.Model == ModelOneBox {
		p.GammaWPerM2K, p.C0WYrPerM2K, p.Efficacy = 0, 0, 1
	} else {
		def(&p.GammaWPerM2K, DefaultGammaWPerM2K)
		def(&p.C0WYrPerM2K, DefaultC0WYrPerM2K)
		def(&p.Efficacy, DefaultEfficacy)
	}
	return p, p.check()
}

func (p Params) check() error {
	pos := func(v float64, what string) error {
		if !(v > 0) || math.IsInf(v, 0) {
			return fmt.Errorf("%s %v: expected a positive finite number", what, v)
		}
		return nil
	}
	if err := pos(p.LambdaWPerM2K, "lambda (W m-2 K-1)"); err != nil {
		return err
	}
	if err := pos(p.CWYrPerM2K, "C (W yr m-2 K-1)"); err != nil {
		return err
	}
	if err := pos(p.F2xWPerM2, "F2x (W m-2)"); err != nil {
		return err
	}
	if p.Model == ModelTwoLayer {
		if err := pos(p.GammaWPerM2K, "gamma (W m-2 K-1; for gamma = 0 use the one-box model)"); err != nil {
			return err
		}
		if err := pos(p.C0WYrPerM2K, "C0 (W yr m-2 K-1)"); err != nil {
			return err
		}
		if err := pos(p.Efficacy, "efficacy"); err != nil {
			return err
		}
	}
	return nil
}

// mat2 is a 2x2 matrix, row major.
type mat2 [2][2]float64

// system is the model's linear system x' = A x + u F, x = (T, T0),
// u = (1/C, 0), with the eigenvalues of A: lf (fast, more negative) and ls
// (slow). For the one-box model A = diag(-lambda/C, 0) and T0 stays 0.
type system struct {
	p      Params
	a      mat2
	lf, ls float64
	onebox bool
}

func newSystem(p Params) system {
	s := system{p: p, onebox: p.Model == ModelOneBox}
	if s.onebox {
		s.a = mat2{{-p.LambdaWPerM2K / p.CWYrPerM2K, 0}, {0, 0}}
		s.lf, s.ls = s.a[0][0], 0
		return s
	}
	l, g, c, c0, e := p.LambdaWPerM2K, p.GammaWPerM2K, p.CWYrPerM2K, p.C0WYrPerM2K, p.Efficacy
	s.a = mat2{{-(l + e*g) / c, e * g / c}, {g / c0, -g / c0}}
	half := (s.a[0][0] + s.a[1][1]) / 2
	det := l * g / (c * c0)
	d := (s.a[0][0] - s.a[1][1]) / 2
	root := math.Sqrt(d*d + s.a[0][1]*s.a[1][0]) // > 0: the off-diagonal product is positive
	s.lf = half - root
	s.ls = det / s.lf // the product of the eigenvalues is det; avoids cancellation
	return s
}

// fn evaluates f(A) by Sylvester's formula for a 2x2 matrix with distinct
// eigenvalues: f(A) = [f(ls)(A - lf I) - f(lf)(A - ls I)] / (ls - lf).
// For the one-box model only the T entry is used: f(A)_00 = f(lf), and the
// T0 row is f(0) on the diagonal.
func (s *system) fn(f func(l float64) float64) mat2 {
	if s.onebox {
		return mat2{{f(s.lf), 0}, {0, f(0)}}
	}
	fl, fs := f(s.lf), f(s.ls)
	var m mat2
	for r := range 2 {
		for c := range 2 {
			id := 0.0
			if r == c {
				id = 1
			}
			m[r][c] = (fs*(s.a[r][c]-s.lf*id) - fl*(s.a[r][c]-s.ls*id)) / (s.ls - s.lf)
		}
	}
	return m
}

// unitEquilibrium is x* per unit forcing: (1/lambda)(1, 1), or (1/lambda, 0)
// for the one-box model.
func (s *system) unitEquilibrium() [2]float64 {
	if s.onebox {
		return [2]float64{1 / s.p.LambdaWPerM2K, 0}
	}
	return [2]float64{1 / s.p.LambdaWPerM2K, 1 / s.p.LambdaWPerM2K}
}

// phi1(z) = (e^z - 1)/z and phi2(z) = (e^z - 1 - z)/z^2, with their series
// near 0 so that neither loses digits.
func phi1(z float64) float64 {
	if z == 0 {
		return 1
	}
	return math.Expm1(z) / z
}

func phi2(z float64) float64 {
	if math.Abs(z) < 1e-3 {
		return 0.5 + z*(1.0/6+z*(1.0/24+z*(1.0/120+z/720)))
	}
	return (math.Expm1(z) - z) / (z * z)
}

func mulVec(m mat2, v [2]float64) [2]float64 {
	return [2]float64{m[0][0]*v[0] + m[0][1]*v[1], m[1][0]*v[0] + m[1][1]*v[1]}
}

// Propagator advances the model by one step of DtYears with the forcing held
// constant over the step, exactly: with x = (T, T0) and x* = (F/lambda)(1, 1)
// the equilibrium of that forcing,
//
//	x(t + s) = x* + exp(A s) (x(t) - x*),
//
// so x_end = E x + g_E F with E = exp(A dt), g_E = (I - E) x*/F; the mean
// over the step is M x + g_M F with M = (1/dt) int_0^dt exp(A s) ds =
// phi1(A dt); the state at mid-step uses exp(A dt/2). The matrix functions
// come from the eigenvalues of A (Sylvester's formula), the same
// eigen-decomposition that gives the two time scales of Geoffroy et al.
// 2013a. A step costs a few multiplications and allocates nothing; n steps
// of dt/k and steps of dt agree to rounding (exp(A dt/k)^k = exp(A dt)).
type Propagator struct {
	p                Params
	DtYears          float64
	e, m, h          mat2
	ge, gm, gh       [2]float64
	nT, nT0          float64 // N = F - nT T - nT0 T0
	heatC, heatC0    float64 // H = C T + C0 T0
	lambdaF, lambdaS float64
}

// NewPropagator builds the propagator of step dtYears (> 0).
func NewPropagator(p Params, dtYears float64) (*Propagator, error) {
	p, err := p.Normalized()
	if err != nil {
		return nil, err
	}
	if !(dtYears > 0) || math.IsInf(dtYears, 0) {
		return nil, fmt.Errorf("time step %v years: expected a positive number", dtYears)
	}
	q := &Propagator{}
	q.init(p, dtYears)
	return q, nil
}

// init fills the propagator for checked parameters (no allocation).
func (q *Propagator) init(p Params, dt float64) {
	s := newSystem(p)
	q.p, q.DtYears = p, dt
	q.lambdaF, q.lambdaS = s.lf, s.ls
	q.e = s.fn(func(l float64) float64 { return math.Exp(l * dt) })
	q.m = s.fn(func(l float64) float64 { return phi1(l * dt) })
	q.h = s.fn(func(l float64) float64 { return math.Exp(l * dt / 2) })
	xs := s.unitEquilibrium()
	// I - f(A) from 1 - f(l) directly, so that nothing cancels.
	ie := s.fn(func(l float64) float64 { return -math.Expm1(l * dt) })
	im := s.fn(func(l float64) float64 { z := l * dt; return -z * phi2(z) })
	ih := s.fn(func(l float64) float64 { return -math.Expm1(l * dt / 2) })
	if s.onebox { // the T0 row stays at rest
		ie[1][1], im[1][1], ih[1][1] = 0, 0, 0
	}
	q.ge, q.gm, q.gh = mulVec(ie, xs), mulVec(im, xs), mulVec(ih, xs)
	em1 := (p.Efficacy - 1) * p.GammaWPerM2K
	q.nT, q.nT0 = p.LambdaWPerM2K+em1, -em1
	q.heatC, q.heatC0 = p.CWYrPerM2K, p.C0WYrPerM2K
}

// Params returns the (normalised) parameters.
func (q *Propagator) Params() Params { return q.p }

// Step advances x by one step of forcing f: the state at the end,
// E x + g_E f, and the mean of T and T0 over the step, M x + g_M f (see
// Propagator).
func (q *Propagator) Step(x [2]float64, f float64) (end [2]float64, meanT, meanT0 float64) {
	end[0] = q.e[0][0]*x[0] + q.e[0][1]*x[1] + q.ge[0]*f
	end[1] = q.e[1][0]*x[0] + q.e[1][1]*x[1] + q.ge[1]*f
	meanT = q.m[0][0]*x[0] + q.m[0][1]*x[1] + q.gm[0]*f
	meanT0 = q.m[1][0]*x[0] + q.m[1][1]*x[1] + q.gm[1]*f
	return
}

// Half is the state half a step after x under forcing f:
// exp(A dt/2) x + (I - exp(A dt/2)) x*.
func (q *Propagator) Half(x [2]float64, f float64) [2]float64 {
	return [2]float64{q.h[0][0]*x[0] + q.h[0][1]*x[1] + q.gh[0]*f, q.h[1][0]*x[0] + q.h[1][1]*x[1] + q.gh[1]*f}
}

// Imbalance is N = F - lambda T - (eps - 1) gamma (T - T0) in W m-2.
func (q *Propagator) Imbalance(f float64, x [2]float64) float64 { return f - q.nT*x[0] - q.nT0*x[1] }

// HeatWYrPerM2 is H = C T + C0 T0 in W yr m-2.
func (q *Propagator) HeatWYrPerM2(x [2]float64) float64 { return q.heatC*x[0] + q.heatC0*x[1] }

// Integrate runs the model over the forcing f (one value per step, held
// over the step; the update of Step, x_end = E x + g_E f) from state x0 and writes the mean of T and T0 over each
// step into meanT and meanT0 and the state at each step's end into endT and
// endT0 (any of them may be nil; those given need len(f) elements). It
// returns the final state. It allocates nothing.
func (q *Propagator) Integrate(f []float64, x0 [2]float64, meanT, meanT0, endT, endT0 []float64) [2]float64 {
	e00, e01, e10, e11 := q.e[0][0], q.e[0][1], q.e[1][0], q.e[1][1]
	m00, m01, m10, m11 := q.m[0][0], q.m[0][1], q.m[1][0], q.m[1][1]
	g0, g1, h0, h1 := q.ge[0], q.ge[1], q.gm[0], q.gm[1]
	t, t0 := x0[0], x0[1]
	all := len(meanT) >= len(f) && len(meanT0) >= len(f) && len(endT) >= len(f) && len(endT0) >= len(f)
	for i, fi := range f {
		mt := m00*t + m01*t0 + h0*fi
		mt0 := m10*t + m11*t0 + h1*fi
		t, t0 = e00*t+e01*t0+g0*fi, e10*t+e11*t0+g1*fi
		if all {
			meanT[i], meanT0[i], endT[i], endT0[i] = mt, mt0, t, t0
			continue
		}
		if meanT != nil {
			meanT[i] = mt
		}
		if meanT0 != nil {
			meanT0[i] = mt0
		}
		if endT != nil {
			endT[i] = t
		}
		if endT0 != nil {
			endT0[i] = t0
		}
	}
	return [2]float64{t, t0}
}

// RampState is the exact state after a forcing rising linearly from 0 at
// rate r (W m-2 per year) for l years from rest:
//
//	x(l) = r int_0^l exp(A (l - s)) u s ds = r l^2 phi2(A l) u,   u = (1/C, 0),
//
// phi2(z) = (e^z - 1 - z)/z^2 (from x' = A x + u r t; with the modes of
// Geoffroy et al. 2013a this is T(l) = (r/lambda)[l - sum_i a_i tau_i
// (1 - exp(-l/tau_i))]).
func RampState(p Params, r, l float64) ([2]float64, error) {
	p, err := p.Normalized()
	if err != nil {
		return [2]float64{}, err
	}
	if !(l >= 0) || math.IsInf(l, 0) || math.IsNaN(r) || math.IsInf(r, 0) {
		return [2]float64{}, fmt.Errorf("ramp of %v W m-2 per year over %v years: expected finite numbers and a non-negative length", r, l)
	}
	s := newSystem(p)
	return rampState(&s, r, l), nil
}

func rampState(s *system, r, l float64) [2]float64 {
	m := s.fn(func(lam float64) float64 { return l * l * phi2(lam*l) })
	u := 1 / s.p.CWYrPerM2K
	x := [2]float64{r * m[0][0] * u, r * m[1][0] * u}
	if s.onebox {
		x[1] = 0
	}
	return x
}

// tcr is the surface temperature at the end of a 70-year linear ramp to
// F2x, from the exact ramp solution (what a simulation with the forcing
// rising linearly within every step gives).
func tcr(s *system) float64 {
	return rampState(s, s.p.F2xWPerM2/TCRYears, TCRYears)[0]
}
