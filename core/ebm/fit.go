package ebm

import (
	"fmt"
	"math"
	"strings"

	"gonum.org/v1/gonum/optimize"

	"heatledger/core/forcing"
	"heatledger/core/series"
)

// Names of the parameters a fit can free (FitOptions.Free). A scale factor
// on any component is "scale:NAME"; aerosol, volcanic and solar name the
// scale of the component in that role (see resolveRole).
const (
	FreeLambda   = "lambda"
	FreeGamma    = "gamma"
	FreeEfficacy = "efficacy"
	FreeC        = "c"
	FreeC0       = "c0"
	FreeAerosol  = "aerosol"
	FreeVolcanic = "volcanic"
	FreeSolar    = "solar"
	FreeOffset   = "offset" // always fitted; may be listed
	ScalePrefix  = "scale:"
	// HeatOffset names the heat-content record's own offset (ZJ).
	HeatOffset = "heat_offset"
)

// DefaultHeatShare is the share of the model's heat uptake that a heat-content
// record holds when FitOptions.HeatShare is 0: 0.91, the ocean's share of
// the heat gained 1971-2018 in IPCC AR6 (from memory). Use 1 for a
// whole-Earth inventory.
const DefaultHeatShare = 0.91

// Bounds of the dynamic parameters during a fit (outside them the fit
// refuses the point): wide enough for any plausible climate.
var fitBounds = map[string][2]float64{
	FreeLambda: {0.02, 20}, FreeGamma: {1e-3, 50}, FreeEfficacy: {0.05, 20}, FreeC: {0.05, 1000}, FreeC0: {0.5, 1e5},
}

// Regressor is an extra linear term of the temperature fit (a short-term
// driver such as an ocean index at its lag), one value per step of the
// target's axis (NaN where missing: those steps are left out).
type Regressor struct {
	Name   string
	Values []float64
}

// FitOptions describe what to fit and against what.
type FitOptions struct {
	// Target is the temperature record (K); same resolution as the forcing,
	// or annual with a monthly forcing (the model's annual means, months
	// weighted by their length in days as series.AnnualMeans, are fitted).
	Target *series.Series
	// From and To bound the fit window (series.WindowSpec).
	From, To string
	// Free lists the free parameters (Free* names or scale:NAME); the
	// offset is always fitted.
	Free []string
	// Heat, optional, is a heat-content record (ZJ) compared with HeatShare
	// times the model's heat gained (C T + C0 T0 in ZJ), at the times of the
	// record (each must fall on the start or middle of a forcing step), with
	// its own offset.
	Heat      *series.Series
	HeatShare float64 // 0 means DefaultHeatShare
	// HeatWeight multiplies the squared heat residuals (K^2 per ZJ^2) in
	// the objective. 0 means automatic: a first fit with 1e-4 (0.1 K worth
	// 10 ZJ, common practice), then the ratio of the two residual
	// variances, so each record counts by its own noise (inverse-variance
	// weighting).
	HeatWeight float64
	// Extra are linear terms on the target's axis fitted together with the
	// model ("forced response plus ENSO").
	Extra []Regressor
	// Level is the confidence level of the intervals (0 means 0.95).
	Level float64
	// Step, if set, is called before every evaluation of the objective; a
	// page uses it to hand control back to the browser now and then. An
	// error from it stops the fit, and Fit returns that error.
	Step func() error
}

// Estimate is a fitted parameter.
type Estimate struct {
	Name string `json:"name"`
	// Component is the forcing component of a scale factor.
	Component string  `json:"component,omitempty"`
	Value     float64 `json:"value"`
	StdErr    float64 `json:"stderr"`
	Low       float64 `json:"low"`
	High      float64 `json:"high"`
}

// Interval is a derived quantity with its uncertainty; Low and High are nil
// when unbounded.
type Interval struct {
	Value  float64  `json:"value"`
	StdErr float64  `json:"stderr"`
	Low    *float64 `json:"low"`
	High   *float64 `json:"high"`
}

// FitResult is a fitted model.
type FitResult struct {
	Params  Params  `json:"params"`
	Derived Derived `json:"derived"`
	// Estimates: the free parameters in the order asked, then offset (K),
	// heat_offset (ZJ, with a heat record) and each extra regressor.
	Estimates []Estimate `json:"estimates"`
	// ECS and TCR implied by the fit: ECS's interval maps lambda's interval
	// through F2x/lambda; TCR's is the delta method (gradient of the
	// simulated TCR by central differences).
	ECS   Interval `json:"ecs"`
	TCR   Interval `json:"tcr"`
	Level float64  `json:"level"`
	// N is the number of temperature values fitted, HeatN of heat values.
	N     int `json:"n"`
	HeatN int `json:"heat_n"`
	// RMSE and R2 of the temperature fit; HeatRMSEZJ of the heat fit.
	RMSE       float64  `json:"rmse"`
	R2         float64  `json:"r2"`
	HeatRMSEZJ *float64 `json:"heat_rmse_zj"`
	HeatWeight float64  `json:"heat_weight"`
	HeatShare  float64  `json:"heat_share"`
	// Rho1, Rho2 and Nu: residual autocorrelations of the temperature fit and
	// the ARMA(1,1) variance inflation of Foster and Rahmstorf 2011
	// (drivers.Inflation) applied to the covariance; HeatNu the same for the
	// heat residuals.
	Rho1   float64 `json:"rho1"`
	Rho2   float64 `json:"rho2"`
	Nu     float64 `json:"nu"`
	HeatNu float64 `json:"heat_nu"`
	// Names and Correlation: the correlation matrix of the estimates.
	Names       []string    `json:"names"`
	Correlation [][]float64 `json:"correlation"`
	Evaluations int         `json:"evaluations"`
	Warnings    []string    `json:"warnings"`

	// Target and Heat are the records fitted.
	Target *series.Series `json:"-"`
	Heat   *series.Series `json:"-"`
	// Forcing is the forcing with the fitted scales; Run the model run with
	// the fitted parameters over it. Fitted = model T (annual means for an
	// annual target) + offset + extra terms on the target's axis;
	// Residuals = Target - Fitted on the fitted steps (NaN elsewhere).
	Forcing       *forcing.Result `json:"-"`
	Run           *Run            `json:"-"`
	Fitted        *series.Series  `json:"-"`
	Residuals     *series.Series  `json:"-"`
	HeatFitted    *series.Series  `json:"-"`
	HeatResiduals *series.Series  `json:"-"`
}

// Estimate returns the named estimate.
func (r *FitResult) Estimate(name string) (Estimate, bool) {
	for _, e := range r.Estimates {
		if e.Name == name {
			return e, true
		}
	}
	return Estimate{}, false
}

// Fit fits the model to a temperature record (and optionally a heat-content
// record) by least squares.
//
// Model of the data: y_i = T_model(t_i; theta, s) + offset + sum_j b_j z_j(t_i)
// + e_i, with theta the free dynamic parameters (lambda, gamma, eps, C, C0),
// s the free scale factors of forcing components, z_j the extra regressors;
// heat records: H_i = share (C T + C0 T0)(t_i) ZJ + heat offset + e'_i.
// T_model is a Run from the spin-up of run (RunOptions).
//
// Method: the model is linear in the forcing, so for given theta the scales,
// offsets and extra terms enter linearly; they are solved by least squares
// inside the objective (variable projection, Golub and Pereyra 1973,
// SIAM J. Numer. Anal. 10, 413), and theta is found by Nelder-Mead
// (gonum/optimize) over log theta (which keeps every parameter positive),
// restarted once from the best point. Covariance: J the Jacobian of the
// model values in all parameters at the optimum (central differences for
// theta, the design columns for the rest), Cov = s^2 nu (J'J)^-1 with
// s^2 = RSS/(n - p) and nu the ARMA(1,1) inflation of Foster and Rahmstorf
// 2011 from the residuals' lag-1 and lag-2 autocorrelations; with a heat
// record each record's rows count as 1/(s_k^2 nu_k). Intervals are
// estimate +- q SE with q Student's t on n/nu - p degrees of freedom.
//
// Refused: unknown or repeated names; parameters the model has not (gamma,
// eps, C0 of the one-box model); lambda free together with a scale on every
// component (the data see lambda only through F/lambda then); fewer than
// p + 3 values. Warned: C0 free without a heat record or on a record
// shorter than the slow time scale; gamma and eps free together without a
// heat record; estimates correlated beyond 0.95; parameters at their bounds;
// negative scales.
func Fit(f *forcing.Result, start Params, run RunOptions, opt FitOptions) (*FitResult, error) {
	ft, err := newFitter(f, start, run, opt)
	if err != nil {
		return nil, err
	}
	res, err := ft.fit()
	if ft.stopped != nil {
		return nil, ft.stopped
	}
	return res, err
}

// fitter holds the prepared problem and the buffers of the objective.
type fitter struct {
	// stopped is the error of FitOptions.Step that stopped the fit
	stopped error

	f     *forcing.Result
	base  Params
	opt   FitOptions
	level float64
	warns []string

	dyn     []string // dynamic free parameter names (canonical)
	scaled  []int    // component index of each free scale
	scaleAs []string // the name asked for each free scale
	// groups: 0 = the fixed components, 1.. = each free-scale component:
	// their efficacy-weighted forcing and first-year means for the spin-up.
	gF    [][]float64
	gMean []float64
	sp    spinup
	dt    float64

	// temperature rows
	tRows  []int     // target index of each row
	tStep  [][2]int  // forcing steps [lo, hi) averaged for each row
	tLeap  []bool    // annual rows: the year is a leap year (month weights)
	yT     []float64 // target values
	extras [][]float64
	// heat rows
	hRows []int
	hStep []int  // forcing step
	hMid  []bool // mid-step (else the state at the step's start)
	yH    []float64
	share float64
	w     float64 // heat weight

	// buffers
	colT, colH  [][]float64 // per group
	tm          []float64   // step means of T for one group run
	hEnd, hHalf []float64   // heat at step ends / middles for one group run
	ls          lsq
	evals       int
}

func newFitter(f *forcing.Result, start Params, run RunOptions, opt FitOptions) (*fitter, error) {
	if f == nil || f.Len() == 0 {
		return nil, fmt.Errorf("no forcing to fit the model with")
	}
	if opt.Target == nil {
		return nil, fmt.Errorf("no temperature record to fit the model to")
	}
	p, err := start.Normalized()
	if err != nil {
		return nil, err
	}
	ft := &fitter{f: f, base: p, opt: opt, level: opt.Level, share: opt.HeatShare, w: opt.HeatWeight}
	if ft.level == 0 {
		ft.level = 0.95
	}
	if !(ft.level > 0 && ft.level < 1) {
		return nil, fmt.Errorf("confidence level %v: expected a value between 0 and 1", ft.level)
	}
	if ft.share == 0 {
		ft.share = DefaultHeatShare
	}
	if !(ft.share > 0) || math.IsInf(ft.share, 0) {
		return nil, fmt.Errorf("heat share %v: expected a positive number (0.91 for an ocean record, 1 for the whole Earth)", ft.share)
	}
	if ft.w < 0 || math.IsNaN(ft.w) || math.IsInf(ft.w, 0) {
		return nil, fmt.Errorf("heat weight %v: expected a positive number, or 0 for automatic", ft.w)
	}
	if err := ft.resolveFree(); err != nil {
		return nil, err
	}
	ft.dt = 1 / float64(f.Resolution.StepsPerYear())
	if ft.sp, err = newSpinup(f, run); err != nil {
		return nil, err
	}
	if err := ft.groups(); err != nil {
		return nil, err
	}
	if err := ft.rows(); err != nil {
		return nil, err
	}
	ft.separability()
	n := f.Len()
	ng := len(ft.gF)
	ft.colT, ft.colH = make([][]float64, ng), make([][]float64, ng)
	for g := range ng {
		ft.colT[g] = make([]float64, len(ft.tRows))
		ft.colH[g] = make([]float64, len(ft.hRows))
	}
	ft.tm, ft.hEnd, ft.hHalf = make([]float64, n), make([]float64, n), make([]float64, n)
	ft.ls = newLsq(len(ft.tRows)+len(ft.hRows), ft.nLinear())
	return ft, nil
}

// resolveRole finds the component of a role: volcanic = the aod component,
// solar = the tsi component, aerosol = the component whose name holds
// "aer" (each must be unique).
func resolveRole(f *forcing.Result, role string) (int, error) {
	var hits []int
	for i, c := range f.Components {
		switch role {
		case FreeVolcanic:
			if c.Kind == forcing.KindAOD {
				hits = append(hits, i)
			}
		case FreeSolar:
			if c.Kind == forcing.KindTSI {
				hits = append(hits, i)
			}
		case FreeAerosol:
			if strings.Contains(strings.ToLower(c.Name), "aer") && c.Kind != forcing.KindAOD {
				hits = append(hits, i)
			}
		}
	}
	what := map[string]string{FreeVolcanic: "of kind aod", FreeSolar: "of kind tsi", FreeAerosol: "whose name contains \"aer\""}[role]
	switch len(hits) {
	case 1:
		return hits[0], nil
	case 0:
		return -1, fmt.Errorf("free parameter %q: no forcing component %s: name the component with scale:NAME", role, what)
	}
	var names []string
	for _, h := range hits {
		names = append(names, f.Components[h].Name)
	}
	return -1, fmt.Errorf("free parameter %q: several components %s (%s): name one with scale:NAME", role, what, strings.Join(names, ", "))
}

func (ft *fitter) resolveFree() error {
	seen := map[string]bool{}
	seenComp := map[int]bool{}
	for _, raw := range ft.opt.Free {
		name := strings.TrimSpace(raw)
		key := strings.ToLower(name)
		if key == "eps" {
			key = FreeEfficacy
		}
		if seen[key] {
			return fmt.Errorf("free parameter %q is listed twice", name)
		}
		seen[key] = true
		switch key {
		case FreeLambda, FreeC:
			ft.dyn = append(ft.dyn, key)
		case FreeGamma, FreeEfficacy, FreeC0:
			if ft.base.Model == ModelOneBox {
				return fmt.Errorf("free parameter %q: the one-box model has no %s (use the two-layer model)", name, key)
			}
			ft.dyn = append(ft.dyn, key)
		case FreeOffset:
		case FreeAerosol, FreeVolcanic, FreeSolar:
			k, err := resolveRole(ft.f, key)
			if err != nil {
				return err
			}
			if seenComp[k] {
				return fmt.Errorf("free parameter %q: the scale of %q is already free", name, ft.f.Components[k].Name)
			}
			seenComp[k] = true
			ft.scaled, ft.scaleAs = append(ft.scaled, k), append(ft.scaleAs, key)
		default:
			if !strings.HasPrefix(key, ScalePrefix) {
				return fmt.Errorf("free parameter %q: expected lambda, gamma, efficacy, c, c0, offset, aerosol, volcanic, solar or scale:NAME", name)
			}
			cn := strings.TrimSpace(name[len(ScalePrefix):])
			k := ft.f.Index(cn)
			if k < 0 {
				var names []string
				for _, c := range ft.f.Components {
					names = append(names, c.Name)
				}
				return fmt.Errorf("free parameter %q: no forcing component %q (the components are %s)", name, cn, strings.Join(names, ", "))
			}
			if seenComp[k] {
				return fmt.Errorf("free parameter %q: the scale of %q is already free", name, cn)
			}
			seenComp[k] = true
			ft.scaled, ft.scaleAs = append(ft.scaled, k), append(ft.scaleAs, name)
		}
	}
	if len(ft.scaled) == len(ft.f.Components) && contains(ft.dyn, FreeLambda) {
		return fmt.Errorf("lambda cannot be free together with a scale on every forcing component: the record then sees the total forcing's scale and 1/lambda almost only as their ratio; fix lambda or keep one component's scale (e.g. the greenhouse gases) fixed")
	}
	return nil
}

func contains(list []string, s string) bool {
	for _, v := range list {
		if v == s {
			return true
		}
	}
	return false
}

// groups splits the components into the fixed group and one group per free
// scale, each as efficacy-weighted forcing.
func (ft *fitter) groups() error {
	n := ft.f.Len()
	free := map[int]bool{}
	for _, k := range ft.scaled {
		free[k] = true
	}
	fixed := make([]float64, n)
	ft.gF = [][]float64{fixed}
	for k, c := range ft.f.Components {
		if free[k] {
			continue
		}
		for i, v := range c.ERF.Values {
			fixed[i] += c.Efficacy * v
		}
	}
	for _, k := range ft.scaled {
		c := ft.f.Components[k]
		g := make([]float64, n)
		nz := false
		for i, v := range c.ERF.Values {
			g[i] = c.Efficacy * v
			nz = nz || g[i] != 0
		}
		if !nz {
			return fmt.Errorf("the scale of %q cannot be fitted: its forcing is zero throughout", c.Name)
		}
		ft.gF = append(ft.gF, g)
	}
	ft.gMean = make([]float64, len(ft.gF))
	for g, v := range ft.gF {
		var m float64
		for _, x := range v[:ft.sp.firstSteps] {
			m += x
		}
		ft.gMean[g] = m / float64(ft.sp.firstSteps)
	}
	return nil
}

// rows maps the records onto the forcing's steps.
func (ft *fitter) rows() error {
	f, tg := ft.f, ft.opt.Target
	win, err := tg.WindowSpec(ft.opt.From, ft.opt.To)
	if err != nil {
		return fmt.Errorf("fit window: %w", err)
	}
	for _, x := range ft.opt.Extra {
		if len(x.Values) != len(tg.Values) {
			return fmt.Errorf("extra term %q has %d values: expected one per step of %q (%d)", x.Name, len(x.Values), tg.Name, len(tg.Values))
		}
	}
	n := f.Len()
	var outside, noExtra int
	switch {
	case tg.Resolution == f.Resolution:
	case tg.Resolution == series.Annual && f.Resolution == series.Monthly:
	default:
		return fmt.Errorf("record %q is %s but the forcing is %s: give a monthly forcing, or fit the record's annual means", tg.Name, tg.Resolution, f.Resolution)
	}
	ft.extras = make([][]float64, len(ft.opt.Extra))
	for i, v := range win.Values {
		if math.IsNaN(v) {
			continue
		}
		idx := win.First + i // target step index
		var lo, hi int
		if tg.Resolution == f.Resolution {
			lo = idx - f.First
			hi = lo + 1
		} else {
			lo = idx*12 - f.First
			hi = lo + 12
		}
		if lo < 0 || hi > n {
			outside++
			continue
		}
		ti := idx - tg.First
		skip := false
		for _, x := range ft.opt.Extra {
			if math.IsNaN(x.Values[ti]) {
				skip = true
			}
		}
		if skip {
			noExtra++
			continue
		}
		ft.tRows = append(ft.tRows, ti)
		ft.tStep = append(ft.tStep, [2]int{lo, hi})
		ft.tLeap = append(ft.tLeap, series.DaysInMonth(idx, 2) == 29)
		ft.yT = append(ft.yT, v)
		for j, x := range ft.opt.Extra {
			ft.extras[j] = append(ft.extras[j], x.Values[ti])
		}
	}
	if outside > 0 {
		ft.warns = append(ft.warns, fmt.Sprintf("%d value(s) of %q in the fit window lie outside the forcing's span %s to %s and were not fitted", outside, tg.Name, f.From, f.To))
	}
	if noExtra > 0 {
		ft.warns = append(ft.warns, fmt.Sprintf("%d value(s) of %q were not fitted because an extra term has no value there", noExtra, tg.Name))
	}
	if h := ft.opt.Heat; h != nil {
		hw, err := h.WindowSpec(ft.opt.From, ft.opt.To)
		if err != nil {
			return fmt.Errorf("fit window of the heat record: %w", err)
		}
		start := f.Total.Times[0] - ft.dt/2
		hout := 0
		for i, v := range hw.Values {
			if math.IsNaN(v) {
				continue
			}
			k := (hw.Times[i] - start) / ft.dt
			kr := math.Round(k)
			kh := math.Round(k - 0.5)
			switch {
			case math.Abs(k-kr) < 1e-6:
				if kr < 0 || int(kr) > n {
					hout++
					continue
				}
				ft.hStep, ft.hMid = append(ft.hStep, int(kr)), append(ft.hMid, false)
			case math.Abs(k-0.5-kh) < 1e-6:
				if kh < 0 || int(kh) >= n {
					hout++
					continue
				}
				ft.hStep, ft.hMid = append(ft.hStep, int(kh)), append(ft.hMid, true)
			default:
				return fmt.Errorf("heat record %q: time %v falls neither on the start nor on the middle of a forcing step", h.Name, hw.Times[i])
			}
			ft.hRows = append(ft.hRows, hw.First+i-h.First)
			ft.yH = append(ft.yH, v)
		}
		if hout > 0 {
			ft.warns = append(ft.warns, fmt.Sprintf("%d value(s) of the heat record %q lie outside the forcing's span and were not fitted", hout, h.Name))
		}
		if len(ft.hRows) < 3 {
			return fmt.Errorf("heat record %q has %d value(s) inside the fit window and the forcing's span: expected at least 3", h.Name, len(ft.hRows))
		}
	}
	p := len(ft.dyn) + ft.nLinear()
	if len(ft.tRows) < p+3 {
		return fmt.Errorf("record %q has %d value(s) to fit inside the window and the forcing's span: expected at least %d for %d parameters", tg.Name, len(ft.tRows), p+3, p)
	}
	return nil
}

// nLinear counts the linear parameters: scales, offset, heat offset, extras.
func (ft *fitter) nLinear() int {
	n := len(ft.scaled) + 1 + len(ft.opt.Extra)
	if ft.opt.Heat != nil {
		n++
	}
	return n
}

// separability warns about combinations a record can hardly separate.
func (ft *fitter) separability() {
	years := float64(len(ft.tRows))
	if ft.opt.Target.Resolution == series.Monthly {
		years /= 12
	}
	if contains(ft.dyn, FreeC0) {
		if ft.opt.Heat == nil {
			ft.warns = append(ft.warns, "C0 is free without a heat-content record: the surface record constrains the deep ocean's heat capacity only weakly; expect a wide interval")
		}
		if d, err := Derive(ft.base); err == nil && d.TauSlowYears != nil && years < *d.TauSlowYears {
			ft.warns = append(ft.warns, fmt.Sprintf("C0 is free on a record of %.0f years, shorter than the slow time scale (%.0f years at the starting values): C0 and gamma are hard to separate", years, *d.TauSlowYears))
		}
	}
	if contains(ft.dyn, FreeGamma) && contains(ft.dyn, FreeEfficacy) && ft.opt.Heat == nil {
		ft.warns = append(ft.warns, "gamma and efficacy are both free without a heat-content record: the surface record sees mostly their product")
	}
}

// dynParams maps log-parameters to a Params; ok is false outside bounds.
func (ft *fitter) dynParams(x []float64) (Params, bool) {
	p := ft.base
	for i, name := range ft.dyn {
		v := math.Exp(x[i])
		b := fitBounds[name]
		if !(v >= b[0] && v <= b[1]) {
			return p, false
		}
		switch name {
		case FreeLambda:
			p.LambdaWPerM2K = v
		case FreeGamma:
			p.GammaWPerM2K = v
		case FreeEfficacy:
			p.Efficacy = v
		case FreeC:
			p.CWYrPerM2K = v
		case FreeC0:
			p.C0WYrPerM2K = v
		}
	}
	return p, true
}

func dynValue(p Params, name string) float64 {
	switch name {
	case FreeLambda:
		return p.LambdaWPerM2K
	case FreeGamma:
		return p.GammaWPerM2K
	case FreeEfficacy:
		return p.Efficacy
	case FreeC:
		return p.CWYrPerM2K
	case FreeC0:
		return p.C0WYrPerM2K
	}
	return math.NaN()
}

// columns runs the model for every group with parameters p and fills
// colT (step means, averaged over each row's steps) and colH (heat in ZJ at
// each heat row). No allocation.
func (ft *fitter) columns(p Params) {
	var q Propagator
	q.init(p, ft.dt)
	sys := newSystem(p)
	needMid := false
	for _, m := range ft.hMid {
		needMid = needMid || m
	}
	for g, fg := range ft.gF {
		var x [2]float64
		if ft.sp.years > 0 {
			x = rampState(&sys, ft.gMean[g]/ft.sp.years, ft.sp.years)
		}
		x0 := x
		ft.runGroup(&q, x, fg, needMid)
		ct := ft.colT[g]
		for r, st := range ft.tStep {
			if st[1]-st[0] == 1 {
				ct[r] = ft.tm[st[0]]
				continue
			}
			w := &monthWeights[0]
			if ft.tLeap[r] {
				w = &monthWeights[1]
			}
			var s float64
			for i := st[0]; i < st[1]; i++ {
				s += w[i-st[0]] * ft.tm[i]
			}
			ct[r] = s
		}
		ch := ft.colH[g]
		for r, k := range ft.hStep {
			switch {
			case ft.hMid[r]:
				ch[r] = ft.hHalf[k]
			case k == 0:
				ch[r] = q.HeatWYrPerM2(x0) * ZJPerWYrM2
			default:
				ch[r] = ft.hEnd[k-1]
			}
		}
	}
}

// monthWeights weight the months of a common and a leap year by their
// length in days, as series.AnnualMeans does.
var monthWeights = func() (w [2][12]float64) {
	for k, y := range []int{2001, 2004} {
		for m := range 12 {
			w[k][m] = float64(series.DaysInMonth(y, m+1)) / float64(365+k)
		}
	}
	return
}()

// runGroup runs one group's forcing from x, filling the step means of T
// and the heat (ZJ) at each step's end and, when needMid, middle.
func (ft *fitter) runGroup(q *Propagator, x [2]float64, fg []float64, needMid bool) {
	e00, e01, e10, e11 := q.e[0][0], q.e[0][1], q.e[1][0], q.e[1][1]
	m00, m01, g0, g1, gm0 := q.m[0][0], q.m[0][1], q.ge[0], q.ge[1], q.gm[0]
	c, c0 := q.heatC*ZJPerWYrM2, q.heatC0*ZJPerWYrM2
	t, t0 := x[0], x[1]
	tm, hEnd := ft.tm[:len(fg)], ft.hEnd[:len(fg)]
	for i, fi := range fg {
		if needMid {
			h := q.Half([2]float64{t, t0}, fi)
			ft.hHalf[i] = c*h[0] + c0*h[1]
		}
		tm[i] = m00*t + m01*t0 + gm0*fi
		t, t0 = e00*t+e01*t0+g0*fi, e10*t+e11*t0+g1*fi
		hEnd[i] = c*t + c0*t0
	}
}

// design fills the least-squares problem for the current columns: the
// response y - fixed group and the linear columns (free scales, offset,
// heat offset, extras), heat rows weighted by sqrt(w).
func (ft *fitter) design(w float64) {
	nt := len(ft.tRows)
	sw := math.Sqrt(w)
	ls := &ft.ls
	for r := range nt {
		ls.y[r] = ft.yT[r] - ft.colT[0][r]
	}
	for r := range ft.hRows {
		ls.y[nt+r] = sw * (ft.yH[r] - ft.share*ft.colH[0][r])
	}
	j := 0
	for g := 1; g < len(ft.gF); g++ {
		c := ls.a[j]
		copy(c, ft.colT[g])
		for r := range ft.hRows {
			c[nt+r] = sw * ft.share * ft.colH[g][r]
		}
		j++
	}
	c := ls.a[j] // offset
	for r := range c {
		if r < nt {
			c[r] = 1
		} else {
			c[r] = 0
		}
	}
	j++
	if ft.opt.Heat != nil {
		c := ls.a[j]
		for r := range c {
			if r < nt {
				c[r] = 0
			} else {
				c[r] = sw
			}
		}
		j++
	}
	for _, e := range ft.extras {
		c := ls.a[j]
		copy(c, e)
		for r := nt; r < len(c); r++ {
			c[r] = 0
		}
		j++
	}
}

// objective is the weighted RSS after the linear solve.
func (ft *fitter) objective(x []float64, w float64) float64 {
	ft.evals++
	if ft.stopped != nil {
		return math.Inf(1)
	}
	if ft.opt.Step != nil {
		if err := ft.opt.Step(); err != nil {
			ft.stopped = err
			return math.Inf(1)
		}
	}
	p, ok := ft.dynParams(x)
	if !ok {
		return math.Inf(1)
	}
	ft.columns(p)
	ft.design(w)
	rss, ok := ft.ls.solve()
	if !ok {
		return math.Inf(1)
	}
	return rss
}

// minimise runs Nelder-Mead from x0, restarted once from its best point.
func (ft *fitter) minimise(x0 []float64, w float64) ([]float64, float64, error) {
	if len(x0) == 0 {
		return x0, ft.objective(x0, w), nil
	}
	prob := optimize.Problem{Func: func(x []float64) float64 { return ft.objective(x, w) },
		Status: func() (optimize.Status, error) {
			if ft.stopped != nil {
				return optimize.Failure, ft.stopped
			}
			return optimize.NotTerminated, nil
		}}
	x := append([]float64(nil), x0...)
	best := math.Inf(1)
	for round := range 2 {
		set := &optimize.Settings{Converger: &optimize.FunctionConverge{Relative: 1e-11, Absolute: 1e-14, Iterations: 30 * len(x)}, FuncEvaluations: 4000}
		size := 0.25
		if round > 0 {
			size = 0.05
		}
		res, err := optimize.Minimize(prob, x, set, &optimize.NelderMead{SimplexSize: size})
		if res == nil {
			return nil, 0, fmt.Errorf("the optimiser failed: %v", err)
		}
		if res.F < best {
			best = res.F
			x = append(x[:0], res.X...)
		}
		if res.Status == optimize.FunctionEvaluationLimit {
			ft.warns = append(ft.warns, "the optimiser stopped at its evaluation limit: the fit may not have converged")
		}
	}
	if math.IsInf(best, 1) || math.IsNaN(best) {
		return nil, 0, fmt.Errorf("no parameter values inside the bounds give a model that can be fitted")
	}
	x, best = ft.polish(x, best, w)
	return x, best, nil
}

// polish refines x by Levenberg-Marquardt on the profiled residuals
// (Marquardt 1963, SIAM J. Appl. Math. 11, 431): the Jacobian of the
// residuals after the linear solve by central differences in log theta,
// steps solving (J'J + mu diag(J'J)) d = -J'r, accepted only when the RSS
// falls. Nelder-Mead finds the basin; this reaches the bottom of long
// narrow valleys (lambda against gamma, say) that the simplex crawls along.
func (ft *fitter) polish(x []float64, rss, w float64) ([]float64, float64) {
	nd := len(x)
	m := len(ft.ls.res)
	r0 := make([]float64, m)
	J := make([][]float64, nd)
	for i := range J {
		J[i] = make([]float64, m)
	}
	up, dn := make([]float64, m), make([]float64, m)
	A := make([][]float64, nd)
	for i := range A {
		A[i] = make([]float64, nd+1)
	}
	g := make([]float64, nd)
	xt := make([]float64, nd)
	mu := 1e-3
	const h = 1e-6
	for range 100 {
		if math.IsInf(ft.objective(x, w), 1) {
			return x, rss
		}
		copy(r0, ft.ls.res)
		ok := true
		for i := range nd {
			copy(xt, x)
			xt[i] = x[i] + h
			if math.IsInf(ft.objective(xt, w), 1) {
				ok = false
				break
			}
			copy(up, ft.ls.res)
			xt[i] = x[i] - h
			if math.IsInf(ft.objective(xt, w), 1) {
				ok = false
				break
			}
			copy(dn, ft.ls.res)
			for k := range m {
				J[i][k] = (up[k] - dn[k]) / (2 * h)
			}
		}
		if !ok {
			return x, rss
		}
		for i := range nd {
			g[i] = dotv(J[i], r0)
			for j := range nd {
				A[i][j] = dotv(J[i], J[j])
			}
		}
		improved := false
		for range 12 {
			// (J'J + mu diag) d = J'r (residuals r = y - model: the step is +d)
			M := make([][]float64, nd)
			for i := range nd {
				M[i] = make([]float64, nd+1)
				copy(M[i], A[i][:nd])
				M[i][i] *= 1 + mu
				M[i][nd] = -g[i]
			}
			d, solved := gauss(M)
			if !solved {
				mu *= 10
				continue
			}
			for i := range nd {
				xt[i] = x[i] + d[i]
			}
			if f := ft.objective(xt, w); f < rss {
				small := true
				for i := range nd {
					small = small && math.Abs(d[i]) < 1e-10
				}
				rel := (rss - f) / math.Max(rss, 1e-300)
				copy(x, xt)
				rss = f
				mu = math.Max(mu/3, 1e-12)
				improved = true
				if small || rel < 1e-14 {
					return x, rss
				}
				break
			}
			mu *= 4
		}
		if !improved {
			return x, rss
		}
	}
	return x, rss
}

// gauss solves the augmented system M (n x n+1) by Gaussian elimination
// with partial pivoting.
func gauss(M [][]float64) ([]float64, bool) {
	n := len(M)
	for c := range n {
		p := c
		for r := c + 1; r < n; r++ {
			if math.Abs(M[r][c]) > math.Abs(M[p][c]) {
				p = r
			}
		}
		if M[p][c] == 0 || math.IsNaN(M[p][c]) {
			return nil, false
		}
		M[c], M[p] = M[p], M[c]
		for r := c + 1; r < n; r++ {
			f := M[r][c] / M[c][c]
			for k := c; k <= n; k++ {
				M[r][k] -= f * M[c][k]
			}
		}
	}
	x := make([]float64, n)
	for r := n - 1; r >= 0; r-- {
		s := M[r][n]
		for k := r + 1; k < n; k++ {
			s -= M[r][k] * x[k]
		}
		x[r] = s / M[r][r]
	}
	return x, true
}

func (ft *fitter) fit() (*FitResult, error) {
	x0 := make([]float64, len(ft.dyn))
	for i, name := range ft.dyn {
		v := dynValue(ft.base, name)
		b := fitBounds[name]
		x0[i] = math.Log(math.Min(math.Max(v, b[0]*1.01), b[1]/1.01))
	}
	w := ft.w
	auto := ft.opt.Heat != nil && w == 0
	if auto {
		w = 1e-4
	}
	x, _, err := ft.minimise(x0, w)
	if err != nil {
		return nil, err
	}
	if auto {
		// inverse-variance weights from the first fit's residuals
		ft.objective(x, w)
		rt, rh := ft.blockRSS(w)
		st := rt / float64(len(ft.tRows))
		sh := rh / float64(len(ft.hRows))
		if sh > 0 && st > 0 {
			w = st / sh
		}
		if x, _, err = ft.minimise(x, w); err != nil {
			return nil, err
		}
	}
	if math.IsInf(ft.objective(x, w), 1) {
		return nil, fmt.Errorf("the fitted model cannot be evaluated (parameters at their bounds?)")
	}
	return ft.result(x, w)
}

// blockRSS splits the current weighted residuals into the temperature and
// the (unweighted) heat sums of squares.
func (ft *fitter) blockRSS(w float64) (rt, rh float64) {
	nt := len(ft.tRows)
	for r, e := range ft.ls.res {
		if r < nt {
			rt += e * e
		} else {
			rh += e * e / w
		}
	}
	return
}

func spinMode(sp spinup) string {
	if sp.years > 0 {
		return SpinupRamp
	}
	return SpinupRest
}

func indexOf(list []string, s string) int {
	for i, v := range list {
		if v == s {
			return i
		}
	}
	return -1
}

func nanSlice(n int) []float64 {
	v := make([]float64, n)
	for i := range v {
		v[i] = math.NaN()
	}
	return v
}

// lsq is a small least-squares solver on preallocated buffers: modified
// Gram-Schmidt with one reorthogonalisation ("twice is enough", Giraud et
// al. 2005), back substitution for the coefficients.
type lsq struct {
	n, p int
	a    [][]float64 // columns (overwritten by Q)
	y    []float64
	r    [][]float64
	qty  []float64
	beta []float64
	res  []float64
	norm []float64
}

func newLsq(n, p int) lsq {
	l := lsq{n: n, p: p, y: make([]float64, n), res: make([]float64, n), qty: make([]float64, p), beta: make([]float64, p), norm: make([]float64, p)}
	l.a = make([][]float64, p)
	l.r = make([][]float64, p)
	for j := range p {
		l.a[j] = make([]float64, n)
		l.r[j] = make([]float64, p)
	}
	return l
}

// solve fits y on the columns; it returns the residual sum of squares and
// false when the columns are (numerically) dependent.
func (l *lsq) solve() (float64, bool) {
	for j := range l.p {
		c := l.a[j]
		l.norm[j] = math.Sqrt(dotv(c, c))
		for i := range j {
			l.r[i][j] = 0
		}
		for pass := 0; pass < 2; pass++ {
			for i := range j {
				d := dotv(l.a[i], c)
				l.r[i][j] += d
				axpy(-d, l.a[i], c)
			}
		}
		nrm := math.Sqrt(dotv(c, c))
		if !(nrm > 1e-10*l.norm[j]) {
			return math.Inf(1), false
		}
		l.r[j][j] = nrm
		for k := range c {
			c[k] /= nrm
		}
	}
	copy(l.res, l.y)
	for pass := 0; pass < 2; pass++ {
		for j := range l.p {
			d := dotv(l.a[j], l.res)
			if pass == 0 {
				l.qty[j] = d
			} else {
				l.qty[j] += d
			}
			axpy(-d, l.a[j], l.res)
		}
	}
	for j := l.p - 1; j >= 0; j-- {
		s := l.qty[j]
		for k := j + 1; k < l.p; k++ {
			s -= l.r[j][k] * l.beta[k]
		}
		l.beta[j] = s / l.r[j][j]
	}
	return dotv(l.res, l.res), true
}

func dotv(a, b []float64) float64 {
	var s float64
	for i := range a {
		s += a[i] * b[i]
	}
	return s
}

func axpy(a float64, x, y []float64) {
	for i := range x {
		y[i] += a * x[i]
	}
}
