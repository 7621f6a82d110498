package ebm

import (
	"fmt"
	"math"
	"strings"
	"sync"

	"heatledger/core/forcing"
	"heatledger/core/series"
)

// Spin-up modes (the values of RunOptions.Spinup).
const (
	// SpinupRamp starts the model at rest at SpinupFromYear and raises each
	// component's forcing linearly from zero to its mean over the first year
	// of the axis, reached at the start of the first step; the state there
	// comes from the exact ramp solution (RampState).
	SpinupRamp = "ramp"
	// SpinupRest starts the model at rest at the start of the first step.
	SpinupRest = "rest"
	// DefaultSpinupFromYear: the ramp starts at 1850.0 (common practice:
	// the start of the instrumental record stands in for pre-industrial).
	DefaultSpinupFromYear = 1850.0
)

// RunOptions say how a run starts.
//
// Why a spin-up: a record that starts in, say, 1950 meets a climate that is
// not at rest; started at rest, the model would spend its first decades
// catching up with the forcing already present, and a fit would read that
// as a low sensitivity. The ramp is a guess at the earlier history. Its
// error is small for the surface: the fast mode (a few years) forgets the
// guess within a decade, and the slow mode carries only
// a_s (dIntegral F)/(lambda tau_s), with dIntegral F the difference between the guessed and
// the true forcing integral. For the demo world (true forcing from 1850,
// rising faster than linearly; data from 1950) the ramp from 1850 puts T and
// T0 in 2025 within 0.02 K of the generator's (a test checks it). The heat
// uptake since rest depends on the whole guessed history and is less
// certain; heat-content records are compared as changes (each has its own
// offset), which removes that.
type RunOptions struct {
	// Spinup is SpinupRamp (default) or SpinupRest.
	Spinup string
	// SpinupFromYear is the decimal year of rest for SpinupRamp (0 means
	// DefaultSpinupFromYear). When it is not before the first step the run
	// starts at rest at the first step.
	SpinupFromYear float64
}

// State is the model state at a moment.
type State struct {
	TimeYear float64 `json:"time"`    // decimal year
	TK       float64 `json:"t"`       // surface temperature anomaly
	T0K      float64 `json:"t0"`      // deep-ocean temperature anomaly
	NWPerM2  float64 `json:"n"`       // top-of-atmosphere imbalance with the forcing of the step that ends there
	HeatZJ   float64 `json:"heat_zj"` // heat gained since rest, (C T + C0 T0) over the whole Earth
}

// ComponentRun is the response to one forcing component (its efficacy-
// weighted forcing e_k ERF_k), the model being linear.
type ComponentRun struct {
	Name     string
	Kind     string
	Efficacy float64
	ERF      *series.Series // scaled forcing, W m-2 (without the efficacy)
	T        *series.Series // mean surface response over each step, K
	HeatZJ   []float64      // heat at each step's end, ZJ
	// Initial is the component's part of the state at the first step's start
	// (from the spin-up ramp).
	Initial [2]float64
}

// Run is a model run over a forcing axis. Series share the forcing's axis
// (and its Times slice: treat it as read-only);
// T, T0 and N are means over each step (comparable with monthly or annual
// mean records); EndT, EndT0 and HeatZJ are states at each step's end.
type Run struct {
	Params  Params
	Derived Derived
	// SpinupFromYear is the year of rest (the first step's start when there
	// was no spin-up); SpinupYears the length of the ramp (0 without).
	SpinupFromYear float64
	SpinupYears    float64
	Forcing        *series.Series // the effective forcing, sum e_k ERF_k, W m-2
	T, T0, N       *series.Series
	EndT, EndT0    []float64
	HeatZJ         []float64
	Components     []ComponentRun
	Initial, Final State
	Notes          []string
}

// StepStart is the decimal-year time at which step i starts.
func (r *Run) StepStart(i int) float64 {
	return r.T.Times[i] - 0.5/float64(r.T.Resolution.StepsPerYear())
}

// Simulate runs the model p (Held et al. 2010; Geoffroy et al. 2013a,b;
// see the package comment) over the forcing f, held constant over each
// step, with the exact update of Propagator: x_end = E x + g_E F,
// E = exp(A dt). It runs the total effective forcing sum_k e_k ERF_k and
// every component on its own (e_k ERF_k; the model is linear, so the
// component responses add up to the total, spin-up included), from the
// spin-up state of opt. T, T0 and N are the exact means over each step
// (N = F - lambda T - (eps - 1) gamma (T - T0) is linear in the state);
// HeatZJ = (C T + C0 T0) x ZJPerWYrM2 at each step's end, the heat gained
// since rest.
func Simulate(f *forcing.Result, p Params, opt RunOptions) (*Run, error) {
	if f == nil || f.Total == nil || f.Len() == 0 {
		return nil, fmt.Errorf("no forcing to run the model with")
	}
	p, err := p.Normalized()
	if err != nil {
		return nil, err
	}
	d, err := Derive(p)
	if err != nil {
		return nil, err
	}
	res := f.Resolution
	dt := 1 / float64(res.StepsPerYear())
	var q Propagator
	q.init(p, dt)
	sp, err := newSpinup(f, opt)
	if err != nil {
		return nil, err
	}
	n := f.Len()
	// every output array comes from one allocation: 6 for the run, 2 per
	// component; the 3 scratch arrays come from a pool
	slab := make([]float64, (6+2*len(f.Components))*n)
	take := func() []float64 {
		v := slab[:n:n]
		slab = slab[n:]
		return v
	}
	r := &Run{Params: p, Derived: d, SpinupFromYear: sp.from, SpinupYears: sp.years, Forcing: f.Effective,
		EndT: take(), EndT0: take(), HeatZJ: take()}
	if sp.note != "" {
		r.Notes = append(r.Notes, sp.note)
	}
	sys := newSystem(p)
	times := f.Total.Times // shared by every output series (read-only)
	mk := func(name, unit string, v []float64) *series.Series {
		return &series.Series{Name: name, Unit: unit, Resolution: res, First: f.First, Times: times, Values: v}
	}
	var x0 [2]float64
	scratch := getScratch(3 * n)
	defer scratchPool.Put(scratch)
	eff, et, et0 := (*scratch)[:n:n], (*scratch)[n:2*n:2*n], (*scratch)[2*n:3*n]
	zc, zc0 := p.CWYrPerM2K*ZJPerWYrM2, p.C0WYrPerM2K*ZJPerWYrM2
	for _, c := range f.Components {
		cr := ComponentRun{Name: c.Name, Kind: c.Kind, Efficacy: c.Efficacy, ERF: c.ERF, HeatZJ: take()}
		for i, v := range c.ERF.Values {
			eff[i] = c.Efficacy * v
		}
		cr.Initial = sp.state(&sys, eff)
		x0[0] += cr.Initial[0]
		x0[1] += cr.Initial[1]
		tm := take()
		q.Integrate(eff, cr.Initial, tm, nil, et, et0)
		for i := range et {
			cr.HeatZJ[i] = zc*et[i] + zc0*et0[i]
		}
		cr.T = mk(c.Name, "K", tm)
		r.Components = append(r.Components, cr)
	}
	tm, t0m, nm := take(), take(), take()
	fe := f.Effective.Values
	q.Integrate(fe, x0, tm, t0m, r.EndT, r.EndT0)
	for i := range fe {
		nm[i] = q.Imbalance(fe[i], [2]float64{tm[i], t0m[i]}) // N is linear in the state: its step mean
		r.HeatZJ[i] = zc*r.EndT[i] + zc0*r.EndT0[i]
	}
	r.T = mk("model T", "K", tm)
	r.T0 = mk("model T0", "K", t0m)
	r.N = mk("model N", "W m-2", nm)
	start := r.StepStart(0)
	r.Initial = State{TimeYear: start, TK: x0[0], T0K: x0[1], NWPerM2: q.Imbalance(fe[0], x0), HeatZJ: q.HeatWYrPerM2(x0) * ZJPerWYrM2}
	xe := [2]float64{r.EndT[n-1], r.EndT0[n-1]}
	r.Final = State{TimeYear: start + float64(n)*dt, TK: xe[0], T0K: xe[1], NWPerM2: q.Imbalance(fe[n-1], xe), HeatZJ: r.HeatZJ[n-1]}
	return r, nil
}

// scratchPool keeps Simulate's scratch arrays between runs (a fit runs the
// model hundreds of times).
var scratchPool sync.Pool

func getScratch(n int) *[]float64 {
	if p, ok := scratchPool.Get().(*[]float64); ok && cap(*p) >= n {
		*p = (*p)[:n]
		return p
	}
	b := make([]float64, n)
	return &b
}

// spinup holds the resolved spin-up of a run.
type spinup struct {
	from, years float64
	firstSteps  int // steps averaged for the ramp's end value
	note        string
}

func newSpinup(f *forcing.Result, opt RunOptions) (spinup, error) {
	dt := 1 / float64(f.Resolution.StepsPerYear())
	start := f.Total.Times[0] - dt/2
	mode := strings.ToLower(strings.TrimSpace(opt.Spinup))
	sp := spinup{from: start, firstSteps: min(f.Len(), f.Resolution.StepsPerYear())}
	switch mode {
	case "", SpinupRamp:
		from := opt.SpinupFromYear
		if from == 0 {
			from = DefaultSpinupFromYear
		}
		if math.IsNaN(from) || math.IsInf(from, 0) {
			return sp, fmt.Errorf("spin-up start %v: expected a year", from)
		}
		if from >= start {
			sp.note = fmt.Sprintf("no spin-up: the forcing starts at %s, not after the spin-up year %g; the model starts at rest there", fmtYear(start), from)
			return sp, nil
		}
		sp.from, sp.years = from, start-from
		sp.note = fmt.Sprintf("spin-up: at rest in %s, each forcing rising linearly to its mean over the first year of the axis by %s", fmtYear(from), fmtYear(start))
	case SpinupRest:
		sp.note = fmt.Sprintf("no spin-up: the model starts at rest at %s", fmtYear(start))
	default:
		return sp, fmt.Errorf("spin-up %q: expected %s or %s", opt.Spinup, SpinupRamp, SpinupRest)
	}
	return sp, nil
}

// state is the spin-up state for a forcing series (the ramp's end value is
// the mean of its first year).
func (sp *spinup) state(sys *system, f []float64) [2]float64 {
	if sp.years == 0 {
		return [2]float64{}
	}
	var m float64
	for _, v := range f[:sp.firstSteps] {
		m += v
	}
	m /= float64(sp.firstSteps)
	return rampState(sys, m/sp.years, sp.years)
}

func fmtYear(t float64) string { return fmt.Sprintf("%.4g", t) }
