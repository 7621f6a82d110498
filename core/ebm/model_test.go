package ebm

import (
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"testing"

	"heatledger/core/forcing"
	"heatledger/core/series"
)

func relErr(got, want float64) float64 {
	if want == 0 {
		return math.Abs(got)
	}
	return math.Abs(got-want) / math.Abs(want)
}

// geoffroy holds the two-layer modes written out as in Geoffroy et al.
// 2013a (J. Climate 26, 1841, section 2; efficacy as in 2013b, J. Climate
// 26, 1859; formulas from memory), independently of the package's
// Sylvester-formula integrator:
//
//	b = (lambda + eps gamma)/C + gamma/C0,  b* = (lambda + eps gamma)/C - gamma/C0,
//	delta = b^2 - 4 lambda gamma/(C C0),
//	tau_f = C C0 (b - sqrt delta)/(2 lambda gamma),  tau_s = C C0 (b + sqrt delta)/(2 lambda gamma),
//	phi_f = C (b* - sqrt delta)/(2 eps gamma),  phi_s = C (b* + sqrt delta)/(2 eps gamma),
//	a_f = phi_s tau_f lambda / (C (phi_s - phi_f)),  a_s = -phi_f tau_s lambda / (C (phi_s - phi_f)).
type geoffroy struct{ lam, tf, ts, pf, ps, af, as float64 }

func newGeoffroy(p Params) geoffroy {
	l, g, c, c0, e := p.LambdaWPerM2K, p.GammaWPerM2K, p.CWYrPerM2K, p.C0WYrPerM2K, p.Efficacy
	b := (l+e*g)/c + g/c0
	bs := (l+e*g)/c - g/c0
	d := math.Sqrt(b*b - 4*l*g/(c*c0))
	r := geoffroy{lam: l}
	r.tf = c * c0 * (b - d) / (2 * l * g)
	r.ts = c * c0 * (b + d) / (2 * l * g)
	r.pf = c * (bs - d) / (2 * e * g)
	r.ps = c * (bs + d) / (2 * e * g)
	r.af = r.ps * r.tf * l / (c * (r.ps - r.pf))
	r.as = -r.pf * r.ts * l / (c * (r.ps - r.pf))
	return r
}

// step is the response to a step of forcing f from rest (Geoffroy et al.
// 2013a): T = (f/lambda)(1 - a_f e^(-t/tau_f) - a_s e^(-t/tau_s)),
// T0 = (f/lambda)(1 - phi_f a_f e^(-t/tau_f) - phi_s a_s e^(-t/tau_s)).
func (g geoffroy) step(f, t float64) (T, T0 float64) {
	ef, es := math.Exp(-t/g.tf), math.Exp(-t/g.ts)
	return f / g.lam * (1 - g.af*ef - g.as*es), f / g.lam * (1 - g.pf*g.af*ef - g.ps*g.as*es)
}

// ramp is the response to forcing r t from rest, the time integral of the
// step response: T = (r/lambda)[t - sum_i a_i tau_i (1 - e^(-t/tau_i))],
// T0 the same with a_i phi_i.
func (g geoffroy) ramp(r, t float64) (T, T0 float64) {
	ff, fs := g.tf*(1-math.Exp(-t/g.tf)), g.ts*(1-math.Exp(-t/g.ts))
	return r / g.lam * (t - g.af*ff - g.as*fs), r / g.lam * (t - g.pf*g.af*ff - g.ps*g.as*fs)
}

var (
	plain    = Params{Model: ModelTwoLayer, LambdaWPerM2K: 1.2, GammaWPerM2K: 0.7, CWYrPerM2K: 8, C0WYrPerM2K: 100, Efficacy: 1, F2xWPerM2: 3.93}
	withEff  = Params{Model: ModelTwoLayer, LambdaWPerM2K: 1.1, GammaWPerM2K: 0.8, CWYrPerM2K: 7, C0WYrPerM2K: 90, Efficacy: 1.4, F2xWPerM2: 3.93}
	oneBoxP  = Params{Model: ModelOneBox, LambdaWPerM2K: 1.3, CWYrPerM2K: 8, F2xWPerM2: 3.93}
	twoCases = []struct {
		name string
		p    Params
	}{{"eps=1", plain}, {"eps=1.4", withEff}}
)

// TestStepResponseClosedForm: the integrator against the closed-form step
// response of Geoffroy et al. 2013a (sum of two exponentials with the
// eigenvalues of the 2x2 system), with and without efficacy, at several
// times, to 1e-9 relative.
func TestStepResponseClosedForm(t *testing.T) {
	for _, c := range twoCases {
		g := newGeoffroy(c.p)
		if math.Abs(g.af+g.as-1) > 1e-12 {
			t.Fatalf("%s: a_f + a_s = %v", c.name, g.af+g.as)
		}
		d, err := Derive(c.p)
		if err != nil {
			t.Fatal(err)
		}
		if relErr(d.TauFastYears, g.tf) > 1e-12 || relErr(*d.TauSlowYears, g.ts) > 1e-12 || relErr(d.AFast, g.af) > 1e-12 || relErr(d.ASlow, g.as) > 1e-12 {
			t.Errorf("%s: derived %+v (tau_s %v), Geoffroy tau_f %v tau_s %v a_f %v a_s %v", c.name, d, *d.TauSlowYears, g.tf, g.ts, g.af, g.as)
		}
		const f = 3.93
		for _, spy := range []int{1, 12} {
			q, err := NewPropagator(c.p, 1/float64(spy))
			if err != nil {
				t.Fatal(err)
			}
			var x [2]float64
			checks := map[int]bool{1: true, 7: true, 60: true, 600: true, 6000: true, 24000: true}
			for i := 1; i <= 24000; i++ {
				x, _, _ = q.Step(x, f)
				if i%spy == 0 && checks[i/spy] {
					tm := float64(i / spy)
					T, T0 := g.step(f, tm)
					if relErr(x[0], T) > 1e-9 || relErr(x[1], T0) > 1e-9 {
						t.Errorf("%s, %d steps a year, year %v: T %v T0 %v, closed form %v %v", c.name, spy, tm, x[0], x[1], T, T0)
					}
				}
			}
		}
	}
}

// TestOneBoxExactUpdate: the one-box model against its exact update
// T[n+1] = T[n] e^(-dt/tau) + (F/lambda)(1 - e^(-dt/tau)), tau = C/lambda
// (../shared/CHECKS.md), for a changing forcing.
func TestOneBoxExactUpdate(t *testing.T) {
	q, err := NewPropagator(oneBoxP, 1.0/12)
	if err != nil {
		t.Fatal(err)
	}
	tau := oneBoxP.CWYrPerM2K / oneBoxP.LambdaWPerM2K
	a := math.Exp(-1.0 / 12 / tau)
	var x [2]float64
	want := 0.0
	for i := range 2400 {
		f := 2*math.Sin(float64(i)/30) + float64(i)/500
		x, _, _ = q.Step(x, f)
		want = want*a + f/oneBoxP.LambdaWPerM2K*(1-a)
		if relErr(x[0], want) > 1e-11 || x[1] != 0 {
			t.Fatalf("step %d: T %v T0 %v, exact update %v", i, x[0], x[1], want)
		}
	}
	d, _ := Derive(oneBoxP)
	if d.TauSlowYears != nil || d.AFast != 1 || relErr(d.TauFastYears, tau) > 1e-14 {
		t.Errorf("one-box derived %+v", d)
	}
}

// TestRampClosedForm: the exact ramp state (RampState, used for TCR and the
// spin-up) against the closed-form linear-ramp response written with the
// modes of Geoffroy et al. 2013a, and a monthly run of the ramp held
// constant at its mid-month value over each month against both.
func TestRampClosedForm(t *testing.T) {
	for _, c := range twoCases {
		g := newGeoffroy(c.p)
		r := 0.05
		for _, tm := range []float64{0.5, 3, 70, 250, 1000} {
			x, err := RampState(c.p, r, tm)
			if err != nil {
				t.Fatal(err)
			}
			T, T0 := g.ramp(r, tm)
			if relErr(x[0], T) > 1e-9 || relErr(x[1], T0) > 1e-9 {
				t.Errorf("%s, t %v: ramp state %v, closed form %v %v", c.name, tm, x, T, T0)
			}
		}
		// TCR: the ramp to F2x over 70 years.
		d, _ := Derive(c.p)
		T70, _ := g.ramp(c.p.F2xWPerM2/70, 70)
		if relErr(d.TCRK, T70) > 1e-9 {
			t.Errorf("%s: TCR %v, closed form %v", c.name, d.TCRK, T70)
		}
		// A monthly simulation of the ramp (piecewise constant at the
		// mid-month value): the forcing error r (s - dt/2) within a step
		// leaves about r dt^3/(12 C) per step in T, which adds up to about
		// r dt^2/(12 C) = 3.6e-6 K here: close, not equal.
		q, _ := NewPropagator(c.p, 1.0/12)
		var x [2]float64
		for i := range 70 * 12 {
			x, _, _ = q.Step(x, r*(float64(i)+0.5)/12)
		}
		T, _ := g.ramp(r, 70)
		if e := math.Abs(x[0] - T); e > 2*r/(144*12*c.p.CWYrPerM2K) || e == 0 {
			t.Errorf("%s: monthly ramp run %v vs closed form %v (difference %g)", c.name, x[0], T, e)
		}
	}
	// one-box ramp: T = (r/lambda)[t - tau (1 - e^(-t/tau))]
	tau := oneBoxP.CWYrPerM2K / oneBoxP.LambdaWPerM2K
	x, _ := RampState(oneBoxP, 0.04, 30)
	if want := 0.04 / oneBoxP.LambdaWPerM2K * (30 - tau*(1-math.Exp(-30/tau))); relErr(x[0], want) > 1e-12 || x[1] != 0 {
		t.Errorf("one-box ramp %v, want %v", x, want)
	}
}

type refCase struct {
	Name     string    `json:"name"`
	Model    string    `json:"model"`
	Lambda   float64   `json:"lambda"`
	Gamma    float64   `json:"gamma"`
	C        float64   `json:"c"`
	C0       float64   `json:"c0"`
	Efficacy float64   `json:"efficacy"`
	Forcing  []float64 `json:"forcing"`
	EndT     []float64 `json:"end_t"`
	EndT0    []float64 `json:"end_t0"`
	MeanT    []float64 `json:"mean_t"`
	IntN     []float64 `json:"int_n"`
}

// TestGoldenSolveIVP: monthly runs with a time-varying forcing against
// scipy's solve_ivp (DOP853, rtol 1e-12, atol 1e-14): values computed with
// scipy 1.10 by testdata/ref/ebm_ref.py. End-of-month states, monthly
// means of T and the running integral of N agree to 1e-9 relative
// (1e-11 K absolute near zero crossings).
func TestGoldenSolveIVP(t *testing.T) {
	b, err := os.ReadFile(filepath.Join("..", "..", "testdata", "ref", "ebm_ref.json"))
	if err != nil {
		t.Fatal(err)
	}
	var ref struct {
		Cases []refCase `json:"cases"`
	}
	if err := json.Unmarshal(b, &ref); err != nil {
		t.Fatal(err)
	}
	if len(ref.Cases) != 3 {
		t.Fatalf("%d cases", len(ref.Cases))
	}
	close := func(got, want float64) bool { return math.Abs(got-want) <= 1e-9*math.Abs(want)+1e-11 }
	for _, c := range ref.Cases {
		p := Params{Model: c.Model, LambdaWPerM2K: c.Lambda, GammaWPerM2K: c.Gamma, CWYrPerM2K: c.C, C0WYrPerM2K: c.C0, Efficacy: c.Efficacy}
		q, err := NewPropagator(p, 1.0/12)
		if err != nil {
			t.Fatal(err)
		}
		var x [2]float64
		intN := 0.0
		bad := 0
		for i, f := range c.Forcing {
			var mt, mt0 float64
			x, mt, mt0 = q.Step(x, f)
			intN += q.Imbalance(f, [2]float64{mt, mt0}) / 12
			if !close(x[0], c.EndT[i]) || !close(x[1], c.EndT0[i]) || !close(mt, c.MeanT[i]) || !close(intN, c.IntN[i]) {
				if bad < 5 {
					t.Errorf("%s month %d: T %v T0 %v mean %v intN %v; solve_ivp %v %v %v %v", c.Name, i, x[0], x[1], mt, intN, c.EndT[i], c.EndT0[i], c.MeanT[i], c.IntN[i])
				}
				bad++
			}
		}
	}
}

// TestEnergyConservation: N summed over the steps (its step means times
// dt) equals the heat gained, C T + C0 T0, to rounding; by the model
// equations this holds for every efficacy (see the package comment), so
// both eps = 1 and eps = 1.4 are checked. The integral of F - lambda T,
// by contrast, differs from the heat gained when eps != 1.
func TestEnergyConservation(t *testing.T) {
	for _, c := range twoCases {
		q, _ := NewPropagator(c.p, 1.0/12)
		var x [2]float64
		sumN, sumFL := 0.0, 0.0
		for i := range 1800 {
			f := 3*float64(i)/1800 - 2*math.Exp(-math.Pow((float64(i)-700)/10, 2))
			var mt, mt0 float64
			x, mt, mt0 = q.Step(x, f)
			sumN += q.Imbalance(f, [2]float64{mt, mt0}) / 12
			sumFL += (f - c.p.LambdaWPerM2K*mt) / 12
		}
		h := q.HeatWYrPerM2(x)
		if math.Abs(sumN-h) > 1e-12*math.Abs(h) {
			t.Errorf("%s: sum N dt %v, C T + C0 T0 %v", c.name, sumN, h)
		}
		if c.p.Efficacy != 1 && math.Abs(sumFL-h) < 1e-3*math.Abs(h) {
			t.Errorf("%s: the integral of F - lambda T (%v) should differ from the heat %v with efficacy", c.name, sumFL, h)
		}
	}
}

// TestMonthlyAnnualAgree: a run with 12 monthly steps of an annual-constant
// forcing and a run with one annual step agree at every year's end (state)
// and in each year's mean temperature, to 1e-12 relative (exp(A/12)^12 =
// exp(A): only rounding differs). This is the tolerance stated for runs of
// the same piecewise-constant forcing at the two resolutions.
func TestMonthlyAnnualAgree(t *testing.T) {
	for _, c := range append(twoCases, struct {
		name string
		p    Params
	}{"onebox", oneBoxP}) {
		years := 200
		fy := make([]float64, years)
		fm := make([]float64, 12*years)
		for y := range fy {
			fy[y] = 0.02*float64(y) + 0.5*math.Sin(float64(y)/3)
			for m := range 12 {
				fm[12*y+m] = fy[y]
			}
		}
		qa, _ := NewPropagator(c.p, 1)
		qm, _ := NewPropagator(c.p, 1.0/12)
		ma, ea, ea0 := make([]float64, years), make([]float64, years), make([]float64, years)
		mm, em, em0 := make([]float64, 12*years), make([]float64, 12*years), make([]float64, 12*years)
		qa.Integrate(fy, [2]float64{}, ma, nil, ea, ea0)
		qm.Integrate(fm, [2]float64{}, mm, nil, em, em0)
		for y := 1; y < years; y++ {
			mean := 0.0
			for m := range 12 {
				mean += mm[12*y+m] / 12
			}
			k := 12*y + 11
			if relErr(em[k], ea[y]) > 1e-12 || math.Abs(em0[k]-ea0[y]) > 1e-12*math.Abs(ea0[y])+1e-15 || relErr(mean, ma[y]) > 1e-12 {
				t.Fatalf("%s year %d: monthly end %v %v mean %v; annual %v %v %v", c.name, y, em[k], em0[k], mean, ea[y], ea0[y], ma[y])
			}
		}
	}
}

// TestFromECSTCR: parameters solved from ECS and TCR reproduce them (TCR
// from the simulated ramp), for the two-layer model with C given, with the
// fast time scale given, and for the one-box model; impossible requests
// are refused with the reachable range.
func TestFromECSTCR(t *testing.T) {
	for _, c := range []struct {
		base     Params
		ecs, tcr float64
		tau      float64
	}{
		{DefaultParams(), 3.0, 1.8, 0},
		{withEff, 2.5, 1.6, 0},
		{DefaultParams(), 3.0, 1.8, 4.0},
		{oneBoxP, 3.0, 2.2, 0},
	} {
		p, err := FromECSTCR(c.base, c.ecs, c.tcr, c.tau)
		if err != nil {
			t.Fatalf("%+v: %v", c, err)
		}
		d, _ := Derive(p)
		if relErr(d.ECSK, c.ecs) > 1e-12 || relErr(d.TCRK, c.tcr) > 1e-9 {
			t.Errorf("%+v: got ECS %v TCR %v (params %+v)", c, d.ECSK, d.TCRK, p)
		}
		if c.tau > 0 && relErr(d.TauFastYears, c.tau) > 1e-6 {
			t.Errorf("tau_fast %v, want %v", d.TauFastYears, c.tau)
		}
	}
	if _, err := FromECSTCR(DefaultParams(), 3, 2.9, 0); err == nil {
		t.Error("TCR near ECS with C = 8 should be out of reach")
	}
	if _, err := FromECSTCR(DefaultParams(), 3, 3.5, 0); err == nil {
		t.Error("TCR above ECS accepted")
	}
	if _, err := FromECSTCR(oneBoxP, 3, 2, 4); err == nil {
		t.Error("one-box with ECS, TCR and tau accepted")
	}
}

func TestParamsErrors(t *testing.T) {
	for _, p := range []Params{
		{Model: "threebox"},
		{LambdaWPerM2K: -1},
		{Model: ModelTwoLayer, GammaWPerM2K: math.Inf(1)},
		{CWYrPerM2K: math.NaN()},
	} {
		if _, err := p.Normalized(); err == nil {
			t.Errorf("%+v accepted", p)
		}
	}
	if _, err := NewPropagator(DefaultParams(), 0); err == nil {
		t.Error("zero step accepted")
	}
	for _, pr := range Presets {
		if _, err := Derive(pr.Params); err != nil || pr.Source == "" {
			t.Errorf("preset %s: %v", pr.Name, err)
		}
	}
}

// testForcing builds a forcing result from named ERF columns.
func testForcing(t testing.TB, res series.Resolution, first int, cols map[string][]float64, order ...string) *forcing.Result {
	t.Helper()
	var comps []forcing.Component
	for _, n := range order {
		comps = append(comps, forcing.Component{Name: n, Kind: forcing.KindERF, Series: series.New(n, "W m-2", res, first, cols[n])})
	}
	f, err := forcing.Build(comps, forcing.Settings{})
	if err != nil {
		t.Fatal(err)
	}
	return f
}
