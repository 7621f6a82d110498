package analysis

import (
	"fmt"
	"math"
	"strconv"
	"strings"

	"heatledger/core/drivers"
	"heatledger/core/ebm"
	"heatledger/core/forcing"
	"heatledger/core/series"
	"heatledger/core/trend"
)

// ForcingComponent is one data column of a forcing and how it becomes ERF
// (see forcing.Component).
type ForcingComponent struct {
	// Series is the series' name, or FILE:NAME when several files hold it.
	Series string `json:"series"`
	// Name labels the component (default: Series).
	Name string `json:"name,omitempty"`
	// Kind is co2 (ppm), ch4 (ppb), n2o (ppb), aod, tsi (W m-2) or erf.
	Kind string `json:"kind"`
	// Scale multiplies the forcing (default 1; 0 is refused: leave the
	// component out instead). Efficacy weights it in the model (default 1).
	Scale    *float64 `json:"scale,omitempty"`
	Efficacy *float64 `json:"efficacy,omitempty"`
	// Reference is preindustrial, first (the first year of the axis), mean
	// or a number in the series' unit; empty means the kind's default
	// (preindustrial for the gases, first for aod, mean for tsi, 0 for erf).
	Reference string `json:"reference,omitempty"`
}

// ForcingSettings ask for a forcing built from components (core/forcing).
// Absent settings take forcing's defaults: Myhre et al. 1998, -20 W m-2
// per unit AOD, albedo 0.29, pre-industrial 278 ppm, 722 ppb, 270 ppb.
type ForcingSettings struct {
	Components           []ForcingComponent `json:"components"`
	Formula              string             `json:"formula,omitempty"` // myhre1998 or etminan2016
	VolcanicWPerM2PerAOD *float64           `json:"volcanic_w_m2_per_aod,omitempty"`
	Albedo               *float64           `json:"albedo,omitempty"`
	CO2PreindustrialPPM  *float64           `json:"co2_preindustrial_ppm,omitempty"`
	CH4PreindustrialPPB  *float64           `json:"ch4_preindustrial_ppb,omitempty"`
	N2OPreindustrialPPB  *float64           `json:"n2o_preindustrial_ppb,omitempty"`
}

// Forcing builds the forcing table: each component's ERF and the totals.
func (w *Workspace) Forcing(s ForcingSettings) (*forcing.Result, error) {
	if len(s.Components) == 0 {
		return nil, fmt.Errorf("no forcing components chosen: give each series with its kind (%s)", strings.Join(forcing.Kinds, ", "))
	}
	var comps []forcing.Component
	for i, c := range s.Components {
		if strings.TrimSpace(c.Series) == "" {
			return nil, fmt.Errorf("forcing component %d: no series named", i+1)
		}
		ser, err := w.Find(c.Series)
		if err != nil {
			return nil, fmt.Errorf("forcing component %q: %w", c.Series, err)
		}
		fc := forcing.Component{Name: c.Name, Kind: c.Kind, Series: ser}
		if fc.Name == "" {
			fc.Name = c.Series
		}
		if c.Scale != nil {
			if *c.Scale == 0 {
				return nil, fmt.Errorf("forcing component %q: scale 0 would remove it: leave the component out instead", fc.Name)
			}
			fc.Scale = *c.Scale
		}
		if c.Efficacy != nil {
			if !(*c.Efficacy > 0) {
				return nil, fmt.Errorf("forcing component %q: efficacy %v: expected a positive number", fc.Name, *c.Efficacy)
			}
			fc.Efficacy = *c.Efficacy
		}
		if fc.Reference, fc.ReferenceValue, err = forcing.ParseReference(c.Reference); err != nil {
			return nil, fmt.Errorf("forcing component %q: %w", fc.Name, err)
		}
		comps = append(comps, fc)
	}
	set := forcing.Settings{Formula: s.Formula}
	for _, p := range []struct {
		v    *float64
		dst  *float64
		what string
	}{{s.VolcanicWPerM2PerAOD, &set.VolcanicWPerM2PerAOD, "volcanic factor"}, {s.Albedo, &set.Albedo, "albedo"},
		{s.CO2PreindustrialPPM, &set.CO2PreindustrialPPM, "pre-industrial CO2"}, {s.CH4PreindustrialPPB, &set.CH4PreindustrialPPB, "pre-industrial CH4"},
		{s.N2OPreindustrialPPB, &set.N2OPreindustrialPPB, "pre-industrial N2O"}} {
		if p.v != nil {
			if *p.v == 0 && p.what != "albedo" {
				return nil, fmt.Errorf("%s 0: expected a non-zero value (leave it out for the default)", p.what)
			}
			*p.dst = *p.v
		}
	}
	return forcing.Build(comps, set)
}

// ModelSettings choose the model and its parameters. Precedence: the
// preset (or the defaults), then the physical parameters given, then ECS
// and TCR (which set lambda and solve gamma, or C for the one-box model;
// with TauFast also C).
type ModelSettings struct {
	Model    string   `json:"model,omitempty"` // onebox or twolayer (default)
	Preset   string   `json:"preset,omitempty"`
	ECS      *float64 `json:"ecs,omitempty"`      // K
	TCR      *float64 `json:"tcr,omitempty"`      // K
	TauFast  *float64 `json:"tau_fast,omitempty"` // years
	Lambda   *float64 `json:"lambda,omitempty"`   // W m-2 K-1
	Gamma    *float64 `json:"gamma,omitempty"`    // W m-2 K-1
	C        *float64 `json:"c,omitempty"`        // W yr m-2 K-1
	C0       *float64 `json:"c0,omitempty"`       // W yr m-2 K-1
	Efficacy *float64 `json:"efficacy,omitempty"` // ocean heat uptake efficacy
	F2x      *float64 `json:"f2x,omitempty"`      // W m-2
}

// Params resolves the model settings to parameters.
func (m ModelSettings) Params() (ebm.Params, error) {
	p := ebm.DefaultParams()
	if m.Preset != "" {
		pr, err := ebm.PresetByName(m.Preset)
		if err != nil {
			return p, err
		}
		p = pr.Params
	}
	if m.Model != "" {
		p.Model = m.Model
	}
	set := func(v *float64, dst *float64, what string) error {
		if v == nil {
			return nil
		}
		if !(*v > 0) || math.IsInf(*v, 0) {
			return fmt.Errorf("%s %v: expected a positive number", what, *v)
		}
		*dst = *v
		return nil
	}
	for _, s := range []struct {
		v    *float64
		dst  *float64
		what string
	}{{m.Lambda, &p.LambdaWPerM2K, "lambda"}, {m.Gamma, &p.GammaWPerM2K, "gamma"}, {m.C, &p.CWYrPerM2K, "C"}, {m.C0, &p.C0WYrPerM2K, "C0"},
		{m.Efficacy, &p.Efficacy, "efficacy"}, {m.F2x, &p.F2xWPerM2, "F2x"}} {
		if err := set(s.v, s.dst, s.what); err != nil {
			return p, err
		}
	}
	p, err := p.Normalized()
	if err != nil {
		return p, err
	}
	if p.Model == ebm.ModelOneBox && (m.Gamma != nil || m.C0 != nil || m.Efficacy != nil) {
		return p, fmt.Errorf("the one-box model has no gamma, C0 or efficacy: use the two-layer model, or leave them out")
	}
	switch {
	case m.ECS != nil && m.TCR != nil:
		if m.Lambda != nil {
			return p, fmt.Errorf("give lambda or ECS, not both (ECS = F2x / lambda)")
		}
		if p.Model == ebm.ModelTwoLayer && m.Gamma != nil {
			return p, fmt.Errorf("with ECS and TCR gamma is solved for: leave gamma out")
		}
		if p.Model == ebm.ModelOneBox && m.C != nil {
			return p, fmt.Errorf("with ECS and TCR the one-box model's C is solved for: leave C out")
		}
		if m.TauFast != nil && m.C != nil {
			return p, fmt.Errorf("with ECS, TCR and the fast time scale C is solved for: leave C out")
		}
		tau := 0.0
		if m.TauFast != nil {
			tau = *m.TauFast
			if !(tau > 0) {
				return p, fmt.Errorf("fast time scale %v years: expected a positive number", tau)
			}
		}
		return ebm.FromECSTCR(p, *m.ECS, *m.TCR, tau)
	case m.ECS != nil:
		if m.Lambda != nil {
			return p, fmt.Errorf("give lambda or ECS, not both (ECS = F2x / lambda)")
		}
		if !(*m.ECS > 0) || math.IsInf(*m.ECS, 0) {
			return p, fmt.Errorf("ECS %v K: expected a positive number", *m.ECS)
		}
		p.LambdaWPerM2K = p.F2xWPerM2 / *m.ECS
		if m.TauFast != nil {
			return p, fmt.Errorf("the fast time scale needs both ECS and TCR")
		}
	case m.TCR != nil:
		return p, fmt.Errorf("TCR needs ECS as well (lambda = F2x / ECS; gamma is then solved from TCR)")
	case m.TauFast != nil:
		return p, fmt.Errorf("the fast time scale needs ECS and TCR")
	}
	return p, nil
}

// ResponseFitSettings ask for a fit of the model to a temperature record.
type ResponseFitSettings struct {
	// Target is the temperature record (NAME or FILE:NAME).
	Target string `json:"target"`
	// Free lists the free parameters: lambda, gamma, efficacy, c, c0,
	// aerosol, volcanic, solar or scale:COMPONENT (the offset is always
	// fitted).
	Free []string `json:"free,omitempty"`
	From string   `json:"from,omitempty"`
	To   string   `json:"to,omitempty"`
	// Heat is an optional heat-content record (ZJ) with HeatShare (default
	// 0.91) and HeatWeight (default automatic).
	Heat       string   `json:"heat,omitempty"`
	HeatShare  *float64 `json:"heat_share,omitempty"`
	HeatWeight *float64 `json:"heat_weight,omitempty"`
	// Drivers are short-term factors fitted together with the model's
	// response ("forced response plus ENSO"): their lags are searched by the
	// Drivers engine with the response as its trend term, then the model is
	// refitted with them.
	Drivers []AdjustDriver `json:"drivers,omitempty"`
	Level   float64        `json:"level,omitempty"`
}

// RespondSettings ask for a model run over a forcing, optionally fitted,
// and its attribution over windows.
type RespondSettings struct {
	Forcing ForcingSettings `json:"forcing"`
	Model   ModelSettings   `json:"model"`
	// Spinup is ramp (default: at rest in SpinupFrom, default 1850, each
	// forcing rising linearly to its first-year mean) or rest.
	Spinup     string               `json:"spinup,omitempty"`
	SpinupFrom *float64             `json:"spinup_from,omitempty"`
	Fit        *ResponseFitSettings `json:"fit,omitempty"`
	// Windows are FROM, TO pairs for the attribution tables.
	Windows [][2]string `json:"windows,omitempty"`
	// Record is trended beside the attribution (default: the fit target).
	Record string `json:"record,omitempty"`
	// Noise and Level are the trend settings of the record (default ar1, 0.95).
	Noise string  `json:"noise,omitempty"`
	Level float64 `json:"level,omitempty"`
	// Step, if set, is called often during a fit (see ebm.FitOptions.Step):
	// the page yields to the browser there and stops the fit when it
	// returns an error.
	Step func() error `json:"-"`
}

// Response is the outcome of Respond.
type Response struct {
	Forcing *forcing.Result `json:"forcing"`
	Params  ebm.Params      `json:"params"`
	Model   string          `json:"model"`
	Derived ebm.Derived     `json:"derived"`
	// Run is the model run (with the fitted parameters and scales when
	// fitting).
	Run *ebm.Run       `json:"-"`
	Fit *ebm.FitResult `json:"fit"`
	// Adjust is the Drivers engine's fit of the record on the model's
	// response (trend term) and the drivers, when drivers were asked for:
	// its adjusted series, window trends and residuals.
	Adjust *drivers.Result `json:"adjust,omitempty"`
	// ResidualTrends are the trends of the record less the fitted model
	// (and drivers) over each window.
	ResidualTrends []*trend.Result    `json:"residual_trends,omitempty"`
	Attribution    []*ebm.Attribution `json:"attribution,omitempty"`
	Notes          []string           `json:"notes"`
	Warnings       []string           `json:"warnings"`
}

// Respond builds the forcing, sets up the model, runs or fits it and
// attributes the change over each window.
func (w *Workspace) Respond(s RespondSettings) (*Response, error) {
	f, err := w.Forcing(s.Forcing)
	if err != nil {
		return nil, err
	}
	p, err := s.Model.Params()
	if err != nil {
		return nil, err
	}
	run := ebm.RunOptions{Spinup: s.Spinup}
	if s.SpinupFrom != nil {
		if math.IsNaN(*s.SpinupFrom) || *s.SpinupFrom == 0 {
			return nil, fmt.Errorf("spin-up start %v: expected a year", *s.SpinupFrom)
		}
		run.SpinupFromYear = *s.SpinupFrom
	}
	out := &Response{Forcing: f, Warnings: append([]string{}, f.Warnings...), Notes: []string{}}
	var record *series.Series
	if s.Fit != nil {
		if record, err = w.respondFit(s, f, p, run, out); err != nil {
			return nil, err
		}
	} else {
		if out.Run, err = ebm.Simulate(f, p, run); err != nil {
			return nil, err
		}
	}
	out.Params, out.Model, out.Derived = out.Run.Params, out.Run.Params.Model, out.Run.Derived
	out.Notes = append(out.Notes, out.Run.Notes...)
	if s.Record != "" {
		if record, err = w.Find(s.Record); err != nil {
			return nil, fmt.Errorf("record: %w", err)
		}
	}
	topt := trend.Options{Noise: s.Noise, Level: s.Level}
	for _, win := range s.Windows {
		a, err := out.Run.Attribute(win[0], win[1], record, topt)
		if err != nil {
			return nil, err
		}
		out.Attribution = append(out.Attribution, a)
		for _, m := range a.Warnings {
			out.Warnings = append(out.Warnings, fmt.Sprintf("attribution %s to %s: %s", a.From, a.To, m))
		}
	}
	if s.Fit != nil {
		res := out.Fit.Residuals
		if out.Adjust != nil {
			res = out.Adjust.Residuals
		}
		for _, win := range s.Windows {
			tr, err := trend.SeriesWindow(res, win[0], win[1], topt)
			if err != nil {
				out.Warnings = append(out.Warnings, fmt.Sprintf("residual trend %s to %s: %v", win[0], win[1], err))
				continue
			}
			out.ResidualTrends = append(out.ResidualTrends, tr)
		}
	}
	return out, nil
}

// respondFit fits the model (and the drivers, when asked) and fills out.
func (w *Workspace) respondFit(s RespondSettings, f *forcing.Result, p ebm.Params, run ebm.RunOptions, out *Response) (*series.Series, error) {
	fs := s.Fit
	if fs.Target == "" {
		return nil, fmt.Errorf("no temperature record chosen for the fit")
	}
	target, err := w.Find(fs.Target)
	if err != nil {
		return nil, fmt.Errorf("fit record: %w", err)
	}
	opt := ebm.FitOptions{Target: target, From: fs.From, To: fs.To, Free: fs.Free, Level: fs.Level, Step: s.Step}
	if fs.Heat != "" {
		if opt.Heat, err = w.Find(fs.Heat); err != nil {
			return nil, fmt.Errorf("heat record: %w", err)
		}
	}
	if fs.HeatShare != nil {
		if !(*fs.HeatShare > 0) {
			return nil, fmt.Errorf("heat share %v: expected a positive number (0.91 for an ocean record, 1 for the whole Earth)", *fs.HeatShare)
		}
		opt.HeatShare = *fs.HeatShare
	}
	if fs.HeatWeight != nil {
		if !(*fs.HeatWeight > 0) {
			return nil, fmt.Errorf("heat weight %v: expected a positive number (leave it out for automatic weighting)", *fs.HeatWeight)
		}
		opt.HeatWeight = *fs.HeatWeight
	}
	fit, err := ebm.Fit(f, p, run, opt)
	if err != nil {
		return nil, err
	}
	if len(fs.Drivers) > 0 {
		// 1. lags (and the drivers' preprocessing) from the Drivers engine
		// with the model's response as the trend term
		adj, err := w.adjustOnResponse(target, fit, fs, s.Windows, s.Noise, s.Level, nil)
		if err != nil {
			return nil, err
		}
		// 2. refit the model with the drivers' columns as extra terms:
		// contribution_k / b_k = the processed driver at its lag, centred
		for k, d := range adj.Drivers {
			if d.Estimate == 0 {
				return nil, fmt.Errorf("driver %q has a zero coefficient: leave it out", d.Name)
			}
			v := make([]float64, len(target.Values))
			for i, c := range adj.Contributions[k].Values {
				v[i] = c / d.Estimate
			}
			opt.Extra = append(opt.Extra, ebm.Regressor{Name: d.Name, Values: v})
		}
		if fit, err = ebm.Fit(f, fit.Params, run, opt); err != nil {
			return nil, err
		}
		// 3. the final adjustment on the refitted response at those lags
		lags := make([]int, len(adj.Drivers))
		for k, d := range adj.Drivers {
			lags[k] = d.LagMonths
		}
		if adj, err = w.adjustOnResponse(target, fit, fs, s.Windows, s.Noise, s.Level, lags); err != nil {
			return nil, err
		}
		out.Adjust = adj
		for _, m := range adj.Warnings {
			out.Warnings = append(out.Warnings, "drivers: "+m)
		}
	}
	out.Fit = fit
	out.Run = fit.Run
	out.Forcing = fit.Forcing
	out.Warnings = append(out.Warnings, fit.Warnings...)
	return target, nil
}

// adjustOnResponse runs the Drivers engine on the target with the fitted
// model's response (on the target's axis) as the trend term; lags, when
// given, fix each driver's lag.
func (w *Workspace) adjustOnResponse(target *series.Series, fit *ebm.FitResult, fs *ResponseFitSettings, windows [][2]string, noise string, level float64, lags []int) (*drivers.Result, error) {
	resp := fit.Run.T
	if target.Resolution == series.Annual && resp.Resolution == series.Monthly {
		resp = resp.AnnualMeans(12)
	}
	resp = resp.Clone()
	resp.Name = "model response"
	var ds []drivers.Driver
	for k, d := range fs.Drivers {
		dr, err := w.driver(d)
		if err != nil {
			return nil, err
		}
		if lags != nil {
			dr.MinLag, dr.MaxLag = lags[k], lags[k]
		}
		ds = append(ds, dr)
	}
	opt := drivers.Options{Trend: drivers.TrendSeries, TrendSeries: resp, From: fs.From, To: fs.To, Noise: noise, Level: level}
	for _, win := range windows {
		opt.Windows = append(opt.Windows, drivers.Window{From: win[0], To: win[1]})
	}
	r, err := drivers.Fit(target, ds, opt)
	if err != nil {
		return nil, fmt.Errorf("forced response plus drivers: %w", err)
	}
	return r, nil
}

// ForcingTable is the forcing as a table: time (YYYY-MM or YYYY), each
// component's ERF and the total, W m-2.
func ForcingTable(f *forcing.Result) Table {
	t := Table{Title: "Effective radiative forcing (W m-2)", Columns: []string{"time"}}
	for _, c := range f.Components {
		t.Columns = append(t.Columns, c.Name+" (W m-2)")
	}
	t.Columns = append(t.Columns, "total (W m-2)")
	for i := range f.Len() {
		row := []string{series.StepLabel(f.Resolution, f.First+i)}
		for _, c := range f.Components {
			row = append(row, respCell(c.ERF.Values[i]))
		}
		t.Rows = append(t.Rows, append(row, respCell(f.Total.Values[i])))
	}
	return t
}

// ResponseTable is the run as a table, one row per step: time, the
// effective forcing, T, T0 and N (means over the step), the heat gained at
// the step's end (ZJ), each component's response and, with a fit, the
// record, the fitted values and the residuals (on the record's steps).
func ResponseTable(r *Response) Table {
	run := r.Run
	t := Table{Title: "Model run", Columns: []string{"time", "forcing (W m-2)", "T (K)", "T0 (K)", "N (W m-2)", "heat (ZJ)"}}
	for _, c := range run.Components {
		t.Columns = append(t.Columns, "response to "+c.Name+" (K)")
	}
	var tg, fitted, resid *series.Series
	if r.Fit != nil && r.Fit.Fitted.Resolution == run.T.Resolution {
		tg, fitted, resid = r.Fit.Target, r.Fit.Fitted, r.Fit.Residuals
		t.Columns = append(t.Columns, tg.Name+" (K)", "fitted (K)", "residual (K)")
	}
	for i := range run.T.Values {
		idx := run.T.First + i
		row := []string{series.StepLabel(run.T.Resolution, idx), respCell(run.Forcing.Values[i]), respCell(run.T.Values[i]), respCell(run.T0.Values[i]),
			respCell(run.N.Values[i]), respCell(run.HeatZJ[i])}
		for _, c := range run.Components {
			row = append(row, respCell(c.T.Values[i]))
		}
		if fitted != nil {
			row = append(row, respCell(tg.At(idx)), respCell(fitted.At(idx)), respCell(resid.At(idx)))
		}
		t.Rows = append(t.Rows, row)
	}
	return t
}

func respCell(v float64) string {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return ""
	}
	return strconv.FormatFloat(v, 'g', 10, 64)
}
