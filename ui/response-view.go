package ui

import (
	"errors"
	"fmt"
	"math"
	"strconv"
	"strings"
	"time"

	"github.com/vugu/vugu"

	"heatledger/core/analysis"
	"heatledger/core/ebm"
	"heatledger/core/forcing"
)

var rsKindOptions = []Option{
	{forcing.KindCO2, "CO2 (ppm)"},
	{forcing.KindCH4, "CH4 (ppb)"},
	{forcing.KindN2O, "N2O (ppb)"},
	{forcing.KindAOD, "stratospheric AOD"},
	{forcing.KindTSI, "solar irradiance (W m-2)"},
	{forcing.KindERF, "forcing already in W m-2"},
}

var rsFormulaOptions = []Option{
	{forcing.FormulaMyhre1998, "Myhre et al. 1998"},
	{forcing.FormulaEtminan2016, "Etminan et al. 2016"},
}

var rsVolcanicOptions = []Option{
	{"-20", "−20 W m-2 per unit AOD (IPCC AR6)"},
	{"-25", "−25 W m-2 per unit AOD (AR5; Hansen et al. 2005)"},
	{"typed", "another factor"},
}

var rsModelOptions = []Option{
	{ebm.ModelTwoLayer, "two-layer (surface and deep ocean)"},
	{ebm.ModelOneBox, "one-box"},
}

var rsSourceOptions = []Option{
	{"physical", "physical parameters"},
	{"ecstcr", "from ECS and TCR"},
	{"preset", "a published calibration"},
}

var rsSpinupOptions = []Option{
	{"ramp", "at rest in a year, forcing ramped up"},
	{"rest", "at rest at the first step"},
}

// rsFree are the parameters a fit may free, in the order they are listed.
var rsFree = []Option{
	{ebm.FreeLambda, "lambda (feedback)"},
	{ebm.FreeGamma, "gamma (deep-ocean exchange)"},
	{ebm.FreeEfficacy, "efficacy"},
	{ebm.FreeC, "C (upper layer)"},
	{ebm.FreeC0, "C0 (deep ocean)"},
	{ebm.FreeAerosol, "aerosol scale"},
	{ebm.FreeVolcanic, "volcanic scale"},
	{ebm.FreeSolar, "solar scale"},
}

// rsPresets lists the model presets for the drop-down.
func rsPresets() []Option {
	var out []Option
	for _, p := range ebm.Presets {
		out = append(out, Option{p.Name, p.Name})
	}
	return out
}

// rsPick is the view state of one candidate forcing component.
type rsPick struct {
	On                               bool
	Kind, Reference, Scale, Efficacy string
}

// ResponseView is the Response view: forcing built from components, a
// one-box or two-layer energy balance model run over it beside the
// records, a fit to a temperature record (optionally with a heat record
// and short-term drivers), the attribution of the change to each forcing
// and the trends over a window. Its fields are view state; the runs, charts
// and tables come from core/analysis (ResponseFigure, ResponseFitFigure).
type ResponseView struct {
	WS *Workspace

	picks                        map[string]*rsPick
	formula, volcanic, volTyped  string
	albedo, co2PI, ch4PI, n2oPI  string
	model, source                string
	lambda, gamma, capC, capC0   string
	eff, ecs, tcr, tau, f2x      string
	preset                       string
	spinup, spinFrom             string
	record, second, heat, share  string
	winFrom, winTo, noise, level string

	view *analysis.ResponseView
	err  string
	ms   int // how long the last run took, for data-run-ms

	free       map[string]bool
	drivers    map[string]bool
	fitFrom    string
	fitTo      string
	fitHeat    bool
	fitLevel   string
	fit        *analysis.ResponseFitView
	fitErr     string
	fitStale   bool
	fitRunning bool
	fitStage   string
	fitDone    int
	fitGen     int
	fitMs      int

	note   string
	noteAt string // the panel whose export made the note
	sig    string // the series refs the view was computed on
	init   bool

	// the settings of the run and of the fit shown (nil: none)
	runSet, fitSet *analysis.RespondSettings
}

func (c *ResponseView) form() formState {
	return formState{
		strs: map[string]*string{"formula": &c.formula, "volcanic": &c.volcanic, "vol_typed": &c.volTyped, "albedo": &c.albedo,
			"co2_pi": &c.co2PI, "ch4_pi": &c.ch4PI, "n2o_pi": &c.n2oPI, "model": &c.model, "source": &c.source,
			"lambda": &c.lambda, "gamma": &c.gamma, "c": &c.capC, "c0": &c.capC0, "efficacy": &c.eff, "ecs": &c.ecs, "tcr": &c.tcr,
			"tau": &c.tau, "f2x": &c.f2x, "preset": &c.preset, "spinup": &c.spinup, "spinup_from": &c.spinFrom,
			"record": &c.record, "second": &c.second, "heat": &c.heat, "share": &c.share, "window_from": &c.winFrom,
			"window_to": &c.winTo, "noise": &c.noise, "level": &c.level, "fit_from": &c.fitFrom, "fit_to": &c.fitTo, "fit_level": &c.fitLevel},
		bools: map[string]*bool{"fit_heat": &c.fitHeat},
		objs:  map[string]any{"picks": &c.picks, "free": &c.free, "drivers": &c.drivers},
	}
}

// PageState is the form and the analyses of the run and the fit shown.
func (c *ResponseView) PageState() (map[string]string, []analysis.Analysis) {
	c.setup()
	return pageState("response", c.form(), shownPanel{"respond", c.runSet, "", false}, shownPanel{"fit", c.fitSet, "fitted", c.fitRunning})
}

// brief adds the run's attribution or the fit to the briefing.
func (c *ResponseView) brief(panel string) {
	c.WS.Do("adding to the brief", func() {
		c.noteAt = panel
		if panel == "run" {
			c.note = c.WS.AddToBrief(c.runSet, "run", "attribution")
		} else {
			c.note = c.WS.AddToBrief(c.fitSet, "fit", "estimates")
		}
	})
}

func (c *ResponseView) setup() {
	if c.init {
		return
	}
	c.init = true
	c.picks, c.free, c.drivers = map[string]*rsPick{}, map[string]bool{}, map[string]bool{}
	c.formula, c.volcanic, c.albedo = forcing.FormulaMyhre1998, "-20", "0.29"
	c.co2PI, c.ch4PI, c.n2oPI = "278", "722", "270"
	c.model, c.source, c.preset = ebm.ModelTwoLayer, "physical", ebm.Presets[0].Name
	c.lambda, c.gamma = rsNum(ebm.DefaultLambdaWPerM2K), rsNum(ebm.DefaultGammaWPerM2K)
	c.capC, c.capC0, c.eff = rsNum(ebm.DefaultCWYrPerM2K), rsNum(ebm.DefaultC0WYrPerM2K), rsNum(ebm.DefaultEfficacy)
	// IPCC AR6 best estimates, from memory: ECS 3 K, TCR 1.8 K
	c.ecs, c.tcr = "3", "1.8"
	c.spinup, c.spinFrom = "ramp", rsNum(ebm.DefaultSpinupFromYear)
	c.share, c.noise, c.level, c.fitLevel = rsNum(ebm.DefaultHeatShare), "ar1", "0.95", "0.95"
	d := c.WS.Analysis().ResponseDefaults()
	for _, comp := range d.Components {
		p := c.pick(comp.Series)
		p.On, p.Kind = true, comp.Kind
	}
	c.record, c.second, c.heat = d.Record, d.Second, d.Heat
	c.fitHeat = d.Heat != ""
	for _, n := range d.Drivers {
		c.drivers[n] = true
	}
	for _, f := range d.Free {
		c.free[f] = true
	}
	c.winFrom, c.winTo = d.From, d.To
	st := c.WS.ViewState("response")
	if st != nil {
		c.form().load(st)
	}
	c.refresh()
	if st != nil && st["fitted"] == "true" {
		if c.WS.Env != nil {
			c.startFit(c.WS.Env) // in the background, with its progress
		} else {
			c.fitErr = "The fit was saved with these settings: press Fit to run it again."
		}
	}
}

// num shows a default value in a form field.
func rsNum(v float64) string { return strconv.FormatFloat(v, 'g', -1, 64) }

// Refs lists the series to choose from (called first by the template).
// When the loaded series have changed since the run shown (a file added
// or removed in the Data view), choices that are gone fall back to the
// defaults and the run is made again.
func (c *ResponseView) Refs() []SeriesRef {
	c.setup()
	refs := c.WS.SeriesRefs()
	if c.refSig(refs) != c.sig {
		has := map[string]bool{}
		for _, r := range refs {
			has[r.Ref] = true
		}
		d := c.WS.Analysis().ResponseDefaults()
		if !has[c.record] {
			c.record = d.Record
		}
		if !has[c.second] {
			c.second = ""
		}
		if !has[c.heat] {
			c.heat = ""
		}
		c.refresh()
	}
	return refs
}

func (c *ResponseView) refSig(refs []SeriesRef) string {
	var b strings.Builder
	for _, r := range refs {
		b.WriteString(r.Ref)
		b.WriteByte('\n')
	}
	return b.String()
}

// pick returns the state of a candidate component, made on first use with
// the kind guessed from the series' name and unit.
func (c *ResponseView) pick(ref string) *rsPick {
	if c.picks == nil {
		c.picks = map[string]*rsPick{}
	}
	p, ok := c.picks[ref]
	if !ok {
		p = &rsPick{Kind: forcing.KindERF, Scale: "1", Efficacy: "1"}
		for _, r := range c.WS.SeriesRefs() {
			if r.Ref == ref {
				if k := analysis.ForcingKindGuess(r.Name, r.Unit); k != "" {
					p.Kind = k
				}
			}
		}
		c.picks[ref] = p
	}
	return p
}

// components are the ticked candidates, in list order.
func (c *ResponseView) components() []SeriesRef {
	var out []SeriesRef
	for _, r := range c.WS.SeriesRefs() {
		if p, ok := c.picks[r.Ref]; ok && p.On {
			out = append(out, r)
		}
	}
	return out
}

// refPlaceholder says what an empty reference means for a kind.
func rsRefPlaceholder(kind string) string {
	switch kind {
	case forcing.KindCO2, forcing.KindCH4, forcing.KindN2O:
		return "pre-industrial"
	case forcing.KindAOD:
		return "first year"
	case forcing.KindTSI:
		return "mean"
	}
	return "0"
}

// optNum reads an optional number from a form field: nil when empty.
func rsOptNum(text, what string) (*float64, error) {
	t := strings.TrimSpace(text)
	if t == "" {
		return nil, nil
	}
	v, err := strconv.ParseFloat(t, 64)
	if err != nil || math.IsNaN(v) || math.IsInf(v, 0) {
		return nil, fmt.Errorf("%s: %q is not a number", what, text)
	}
	return &v, nil
}

// needNum reads a number that must be given.
func rsNeedNum(text, what string) (*float64, error) {
	v, err := rsOptNum(text, what)
	if err == nil && v == nil {
		err = fmt.Errorf("%s: empty; type a number", what)
	}
	return v, err
}

// forcingSettings turns the forcing part of the form into the request.
func (c *ResponseView) forcingSettings() (analysis.ForcingSettings, error) {
	s := analysis.ForcingSettings{Formula: c.formula}
	comps := c.components()
	if len(comps) == 0 {
		return s, fmt.Errorf("no forcing component ticked: tick the series that make up the forcing (load them in the Data view first)")
	}
	names := map[string]int{}
	for _, r := range comps {
		names[r.Name]++
	}
	for _, r := range comps {
		p := c.pick(r.Ref)
		fc := analysis.ForcingComponent{Series: r.Ref, Name: r.Name, Kind: p.Kind, Reference: strings.TrimSpace(p.Reference)}
		if names[r.Name] > 1 {
			fc.Name = r.Ref
		}
		if fc.Reference == "pre-industrial" {
			fc.Reference = forcing.RefPreindustrial
		}
		var err error
		if fc.Scale, err = rsNeedNum(p.Scale, "component "+fc.Name+", scale"); err != nil {
			return s, err
		}
		if fc.Efficacy, err = rsNeedNum(p.Efficacy, "component "+fc.Name+", efficacy"); err != nil {
			return s, err
		}
		s.Components = append(s.Components, fc)
	}
	var err error
	switch c.volcanic {
	case "typed":
		if s.VolcanicWPerM2PerAOD, err = rsNeedNum(c.volTyped, "volcanic factor"); err != nil {
			return s, err
		}
	default:
		if s.VolcanicWPerM2PerAOD, err = rsNeedNum(c.volcanic, "volcanic factor"); err != nil {
			return s, err
		}
	}
	for _, f := range []struct {
		text, what string
		dst        **float64
	}{{c.albedo, "solar albedo", &s.Albedo}, {c.co2PI, "pre-industrial CO2", &s.CO2PreindustrialPPM},
		{c.ch4PI, "pre-industrial CH4", &s.CH4PreindustrialPPB}, {c.n2oPI, "pre-industrial N2O", &s.N2OPreindustrialPPB}} {
		if *f.dst, err = rsOptNum(f.text, f.what); err != nil {
			return s, err
		}
	}
	if s.Albedo != nil && !(*s.Albedo >= 0 && *s.Albedo < 1) {
		return s, fmt.Errorf("solar albedo %v: expected a value from 0 to below 1, e.g. 0.29", *s.Albedo)
	}
	return s, nil
}

// modelSettings turns the model part of the form into the request: the
// fields of the chosen parameter source that apply to the chosen model.
func (c *ResponseView) modelSettings() (analysis.ModelSettings, error) {
	m := analysis.ModelSettings{Model: c.model}
	two := c.model == ebm.ModelTwoLayer
	var err error
	set := func(text, what string, dst **float64, need bool) {
		if err != nil {
			return
		}
		if need {
			*dst, err = rsNeedNum(text, what)
		} else {
			*dst, err = rsOptNum(text, what)
		}
	}
	switch c.source {
	case "physical":
		set(c.lambda, "lambda", &m.Lambda, true)
		set(c.capC, "C", &m.C, true)
		if two {
			set(c.gamma, "gamma", &m.Gamma, true)
			set(c.capC0, "C0", &m.C0, true)
			set(c.eff, "efficacy", &m.Efficacy, true)
		}
	case "ecstcr":
		set(c.ecs, "ECS", &m.ECS, true)
		set(c.tcr, "TCR", &m.TCR, true)
		set(c.tau, "fast time scale", &m.TauFast, false)
		if two {
			if strings.TrimSpace(c.tau) == "" {
				set(c.capC, "C", &m.C, true)
			}
			set(c.capC0, "C0", &m.C0, true)
			set(c.eff, "efficacy", &m.Efficacy, true)
		}
	case "preset":
		m.Preset = c.preset
	default:
		return m, fmt.Errorf("parameters: %q is not a source of parameters", c.source)
	}
	set(c.f2x, "F2x", &m.F2x, false)
	return m, err
}

// request turns the form into the run's request.
func (c *ResponseView) request() (analysis.ResponseRequest, error) {
	var q analysis.ResponseRequest
	fs, err := c.forcingSettings()
	if err != nil {
		return q, err
	}
	ms, err := c.modelSettings()
	if err != nil {
		return q, err
	}
	s := analysis.RespondSettings{Forcing: fs, Model: ms, Noise: c.noise, Level: parseLevel(c.level)}
	switch c.spinup {
	case "rest":
		s.Spinup = ebm.SpinupRest
	default:
		if s.SpinupFrom, err = rsNeedNum(c.spinFrom, "spin-up year"); err != nil {
			return q, err
		}
	}
	s.Windows = [][2]string{{c.winFrom, c.winTo}}
	q.Respond = s
	if c.record != "" {
		q.Records = append(q.Records, c.record)
	}
	if c.second != "" && c.second != c.record {
		q.Records = append(q.Records, c.second)
	}
	q.Heat = c.heat
	sh, err := rsOptNum(c.share, "heat share")
	if err != nil {
		return q, err
	}
	if sh != nil {
		if !(*sh > 0) {
			return q, fmt.Errorf("heat share %v: expected a positive number (0.91 for an ocean record, 1 for the whole Earth)", *sh)
		}
		q.HeatShare = *sh
	}
	return q, nil
}

// fitSettings are the run's settings with the fit asked for.
func (c *ResponseView) fitSettings() (analysis.RespondSettings, error) {
	q, err := c.request()
	if err != nil {
		return analysis.RespondSettings{}, err
	}
	s := q.Respond
	if c.record == "" {
		return s, fmt.Errorf("no temperature record chosen: choose the record to fit under Records")
	}
	f := &analysis.ResponseFitSettings{Target: c.record, From: c.fitFrom, To: c.fitTo, Level: parseLevel(c.fitLevel)}
	for _, o := range rsFree {
		if c.free[o.Value] {
			f.Free = append(f.Free, o.Value)
		}
	}
	if c.fitHeat {
		if c.heat == "" {
			return s, fmt.Errorf("fit with the heat record: no heat record chosen under Records; choose one or untick the box")
		}
		f.Heat = c.heat
		if q.HeatShare > 0 {
			sh := q.HeatShare
			f.HeatShare = &sh
		}
	}
	for _, r := range c.driverRefs() {
		if c.drivers[r.Ref] {
			f.Drivers = append(f.Drivers, analysis.AdjustDriver{Name: r.Ref})
		}
	}
	s.Fit = f
	return s, nil
}

// refresh makes the run again (a few milliseconds: it runs in the
// handler). The fit shown goes out of date.
func (c *ResponseView) refresh() {
	c.sig = c.refSig(c.WS.SeriesRefs())
	c.err = ""
	if c.fit != nil {
		c.fitStale = true
	}
	q, err := c.request()
	if err != nil {
		c.err, c.view, c.runSet = err.Error(), nil, nil
		return
	}
	start := time.Now()
	v, err := c.WS.Analysis().ResponseFigure(q)
	c.ms = int(time.Since(start) / time.Millisecond)
	if err != nil {
		c.err, c.view = err.Error(), nil
		return
	}
	c.view = v
	run := q.Respond
	c.WS.Model = &run
	shown := q.Respond
	shown.Record = c.record
	c.runSet = &shown
}

// --- handlers ----------------------------------------------------------------------

// set returns a change handler that stores a form field and runs the
// model again.
func (c *ResponseView) set(field *string, what string) func(vugu.DOMEvent) {
	return func(ev vugu.DOMEvent) {
		c.WS.Do("changing "+what, func() {
			*field = strings.TrimSpace(ev.PropString("target", "value"))
			c.refresh()
		})
	}
}

// setFit returns a change handler for a fit setting (the run stays).
func (c *ResponseView) setFit(field *string, what string) func(vugu.DOMEvent) {
	return func(ev vugu.DOMEvent) {
		c.WS.Do("changing "+what, func() {
			*field = strings.TrimSpace(ev.PropString("target", "value"))
			if c.fit != nil {
				c.fitStale = true
			}
		})
	}
}

func (c *ResponseView) onComp(ref string) {
	c.WS.Do("choosing a forcing component", func() {
		p := c.pick(ref)
		p.On = !p.On
		c.refresh()
	})
}

// onCompField stores a component's kind, reference, scale or efficacy.
func (c *ResponseView) onCompField(ref, field string, ev vugu.DOMEvent) {
	c.WS.Do("changing a forcing component", func() {
		p := c.pick(ref)
		v := strings.TrimSpace(ev.PropString("target", "value"))
		switch field {
		case "kind":
			p.Kind = v
		case "reference":
			p.Reference = v
		case "scale":
			p.Scale = v
		case "efficacy":
			p.Efficacy = v
		}
		c.refresh()
	})
}

func (c *ResponseView) onFormula(ev vugu.DOMEvent)  { c.set(&c.formula, "the formula")(ev) }
func (c *ResponseView) onVolcanic(ev vugu.DOMEvent) { c.set(&c.volcanic, "the volcanic factor")(ev) }
func (c *ResponseView) onVolTyped(ev vugu.DOMEvent) { c.set(&c.volTyped, "the volcanic factor")(ev) }
func (c *ResponseView) onAlbedo(ev vugu.DOMEvent)   { c.set(&c.albedo, "the albedo")(ev) }
func (c *ResponseView) onCO2PI(ev vugu.DOMEvent)    { c.set(&c.co2PI, "a pre-industrial value")(ev) }
func (c *ResponseView) onCH4PI(ev vugu.DOMEvent)    { c.set(&c.ch4PI, "a pre-industrial value")(ev) }
func (c *ResponseView) onN2OPI(ev vugu.DOMEvent)    { c.set(&c.n2oPI, "a pre-industrial value")(ev) }
func (c *ResponseView) onModel(ev vugu.DOMEvent)    { c.set(&c.model, "the model")(ev) }
func (c *ResponseView) onSource(ev vugu.DOMEvent)   { c.set(&c.source, "the parameter source")(ev) }
func (c *ResponseView) onLambda(ev vugu.DOMEvent)   { c.set(&c.lambda, "lambda")(ev) }
func (c *ResponseView) onGamma(ev vugu.DOMEvent)    { c.set(&c.gamma, "gamma")(ev) }
func (c *ResponseView) onC(ev vugu.DOMEvent)        { c.set(&c.capC, "C")(ev) }
func (c *ResponseView) onC0(ev vugu.DOMEvent)       { c.set(&c.capC0, "C0")(ev) }
func (c *ResponseView) onEff(ev vugu.DOMEvent)      { c.set(&c.eff, "the efficacy")(ev) }
func (c *ResponseView) onECS(ev vugu.DOMEvent)      { c.set(&c.ecs, "ECS")(ev) }
func (c *ResponseView) onTCR(ev vugu.DOMEvent)      { c.set(&c.tcr, "TCR")(ev) }
func (c *ResponseView) onTau(ev vugu.DOMEvent)      { c.set(&c.tau, "the fast time scale")(ev) }
func (c *ResponseView) onPreset(ev vugu.DOMEvent)   { c.set(&c.preset, "the preset")(ev) }
func (c *ResponseView) onF2x(ev vugu.DOMEvent)      { c.set(&c.f2x, "F2x")(ev) }
func (c *ResponseView) onSpinup(ev vugu.DOMEvent)   { c.set(&c.spinup, "the spin-up")(ev) }
func (c *ResponseView) onSpinFrom(ev vugu.DOMEvent) { c.set(&c.spinFrom, "the spin-up year")(ev) }
func (c *ResponseView) onRecord(ev vugu.DOMEvent)   { c.set(&c.record, "the record")(ev) }
func (c *ResponseView) onSecond(ev vugu.DOMEvent)   { c.set(&c.second, "the second record")(ev) }
func (c *ResponseView) onHeat(ev vugu.DOMEvent)     { c.set(&c.heat, "the heat record")(ev) }
func (c *ResponseView) onShare(ev vugu.DOMEvent)    { c.set(&c.share, "the heat share")(ev) }
func (c *ResponseView) onWinFrom(ev vugu.DOMEvent)  { c.set(&c.winFrom, "the window")(ev) }
func (c *ResponseView) onWinTo(ev vugu.DOMEvent)    { c.set(&c.winTo, "the window")(ev) }
func (c *ResponseView) onNoise(ev vugu.DOMEvent)    { c.set(&c.noise, "the noise model")(ev) }
func (c *ResponseView) onLevel(ev vugu.DOMEvent)    { c.set(&c.level, "the interval")(ev) }
func (c *ResponseView) onFitFrom(ev vugu.DOMEvent)  { c.setFit(&c.fitFrom, "the fit window")(ev) }
func (c *ResponseView) onFitTo(ev vugu.DOMEvent)    { c.setFit(&c.fitTo, "the fit window")(ev) }
func (c *ResponseView) onFitLevel(ev vugu.DOMEvent) { c.setFit(&c.fitLevel, "the interval")(ev) }

func (c *ResponseView) onFree(name string) {
	c.WS.Do("choosing a free parameter", func() {
		c.free[name] = !c.free[name]
		if c.fit != nil {
			c.fitStale = true
		}
	})
}

func (c *ResponseView) onFitHeat() {
	c.WS.Do("choosing the heat record for the fit", func() {
		c.fitHeat = !c.fitHeat
		if c.fit != nil {
			c.fitStale = true
		}
	})
}

func (c *ResponseView) onDriver(ref string) {
	c.WS.Do("choosing a short-term driver", func() {
		c.drivers[ref] = !c.drivers[ref]
		if c.fit != nil {
			c.fitStale = true
		}
	})
}

// driverRefs are the candidate short-term drivers: every series but the
// record and the ticked forcing components.
func (c *ResponseView) driverRefs() []SeriesRef {
	var out []SeriesRef
	for _, r := range c.WS.SeriesRefs() {
		if r.Ref == c.record || r.Ref == c.heat {
			continue
		}
		if p, ok := c.picks[r.Ref]; ok && p.On {
			continue
		}
		out = append(out, r)
	}
	return out
}

// runFit starts the fit in the background: the click is handed back to
// the browser first, so the progress line shows; the fit itself (a
// Nelder-Mead search of some hundreds of model runs, and a lag search with
// drivers) runs in one piece, then the browser gets a turn before the
// tables are drawn. Cancel stops the fit at its next hand-back to the
// browser and drops the result.
func (c *ResponseView) runFit(ev vugu.DOMEvent) {
	c.WS.Do("starting the fit", func() { c.startFit(ev.EventEnv()) })
}

func (c *ResponseView) startFit(env vugu.EventEnv) {
	c.WS.Do("starting the fit", func() {
		if c.fitRunning {
			return
		}
		s, err := c.fitSettings()
		if err != nil {
			c.fitErr, c.fit, c.fitStale, c.fitSet = err.Error(), nil, false, nil
			return
		}
		aw := c.WS.Analysis()
		kept := s
		c.fitGen++
		gen := c.fitGen
		c.fitRunning, c.fitStage, c.fitDone, c.fitErr = true, "Fitting the model to the record…", 0, ""
		go func() {
			c.WS.Yield() // let the browser draw the progress line first
			start := time.Now()
			last := start
			// the fit hands control back to the browser every ~40 ms, so
			// the page stays responsive and Cancel stops the work
			s.Step = func() error {
				if time.Since(last) < 40*time.Millisecond {
					return nil
				}
				c.WS.Yield()
				last = time.Now()
				env.RLock()
				live := c.fitGen == gen
				env.RUnlock()
				if !live {
					return errFitCancelled
				}
				return nil
			}
			var r *analysis.Response
			var v *analysis.ResponseFitView
			err := rsSafely(func() (err error) { r, err = aw.Respond(s); return err })
			env.Lock()
			live := c.fitGen == gen
			if live && err == nil {
				c.fitStage, c.fitDone = "Drawing the fit…", 1
			}
			env.UnlockRender()
			if !live {
				return
			}
			if err == nil {
				c.WS.Yield()
				err = rsSafely(func() (err error) { v, err = analysis.ResponseFitViewOf(r); return err })
			}
			env.Lock()
			defer env.UnlockRender()
			if c.fitGen != gen {
				return // cancelled meanwhile
			}
			c.fitRunning, c.fitMs = false, int(time.Since(start)/time.Millisecond)
			if err != nil {
				c.fitErr, c.fit, c.fitSet = err.Error(), nil, nil
				return
			}
			c.fit, c.fitStale, c.fitErr, c.fitSet = v, false, "", &kept
			c.WS.Changed()
		}()
	})
}

// rsSafely runs f, turning a panic into an error (the goroutine of a fit
// is outside Workspace.Do).
func rsSafely(f func() error) (err error) {
	defer func() {
		if r := recover(); r != nil {
			err = fmt.Errorf("the fit failed: %v", r)
		}
	}()
	return f()
}

func (c *ResponseView) cancelFit() {
	c.WS.Do("cancelling the fit", func() {
		if !c.fitRunning {
			return
		}
		c.fitGen++
		c.fitRunning = false
		c.fitErr = "Fit cancelled."
	})
}

// useFitted copies the fitted parameters and scales into the form, so the
// run, the attribution and the trends follow the fitted model.
func (c *ResponseView) useFitted() {
	c.WS.Do("using the fitted values", func() {
		if c.fit == nil || c.fit.Response.Fit == nil {
			return
		}
		p := c.fit.Response.Fit.Params
		c.source, c.model = "physical", p.Model
		c.lambda, c.capC = rsNum(p.LambdaWPerM2K), rsNum(p.CWYrPerM2K)
		if p.Model == ebm.ModelTwoLayer {
			c.gamma, c.capC0, c.eff = rsNum(p.GammaWPerM2K), rsNum(p.C0WYrPerM2K), rsNum(p.Efficacy)
		}
		c.f2x = rsNum(p.F2xWPerM2)
		for _, e := range c.fit.Response.Fit.Estimates {
			if e.Component == "" {
				continue
			}
			for _, r := range c.components() {
				if r.Name == e.Component || r.Ref == e.Component {
					pk := c.pick(r.Ref)
					old, err := strconv.ParseFloat(pk.Scale, 64)
					if err != nil {
						old = 1
					}
					// the fit's scale multiplies the component as it was
					pk.Scale = rsNum(old * e.Value)
				}
			}
		}
		c.refresh()
		c.fitStale = false
		c.say("fit", "The run now uses the fitted parameters and scales (the record's offset and the drivers are not part of the run).")
	})
}

// --- what the template shows -------------------------------------------------------

func (c *ResponseView) hasView() bool { return c.view != nil }
func (c *ResponseView) hasFit() bool  { return c.fit != nil }

func (c *ResponseView) markup(which string) vugu.HTML {
	if c.view == nil {
		return ""
	}
	switch which {
	case "forcing":
		return vugu.HTML(c.view.ForcingSVG)
	case "run":
		return vugu.HTML(c.view.RunSVG)
	case "heat":
		return vugu.HTML(c.view.HeatSVG)
	case "attribution":
		return vugu.HTML(c.view.AttributionSVG)
	case "trends":
		return vugu.HTML(c.view.TrendsSVG)
	}
	return ""
}

func (c *ResponseView) fitMarkup(which string) vugu.HTML {
	if c.fit == nil {
		return ""
	}
	if which == "heat" {
		return vugu.HTML(c.fit.HeatSVG)
	}
	return vugu.HTML(c.fit.FitSVG)
}

func (c *ResponseView) hasHeatChart() bool { return c.view != nil && c.view.HeatSVG != "" }
func (c *ResponseView) hasAttribution() bool {
	return c.view != nil && c.view.AttributionSVG != ""
}
func (c *ResponseView) attributionErr() string {
	if c.view == nil {
		return ""
	}
	return c.view.AttributionErr
}

// table returns one of the view's tables by name.
func (c *ResponseView) table(name string) analysis.Table {
	switch name {
	case "forcing", "derived", "attribution", "trends":
		if c.view == nil {
			return analysis.Table{}
		}
		return map[string]analysis.Table{"forcing": c.view.Forcing, "derived": c.view.Derived, "attribution": c.view.Attribution, "trends": c.view.Trends}[name]
	case "estimates", "implied", "stats":
		if c.fit == nil {
			return analysis.Table{}
		}
		return map[string]analysis.Table{"estimates": c.fit.Estimates, "implied": c.fit.Implied, "stats": c.fit.Stats}[name]
	case "drivers":
		if c.fit != nil && c.fit.Drivers != nil {
			return *c.fit.Drivers
		}
	case "residual":
		if c.fit != nil && c.fit.Residual != nil {
			return *c.fit.Residual
		}
	case "run":
		if c.view != nil {
			return analysis.ResponseTable(c.view.Response)
		}
	case "fitrun":
		if c.fit != nil {
			return analysis.ResponseTable(c.fit.Response)
		}
	case "forcingseries":
		if c.view != nil {
			return analysis.ForcingTable(c.view.Response.Forcing)
		}
	}
	return analysis.Table{}
}

func (c *ResponseView) hasTable(name string) bool { return len(c.table(name).Columns) > 0 }

func (c *ResponseView) warnings() []string {
	if c.view == nil {
		return nil
	}
	return c.view.Warnings
}

func (c *ResponseView) notes() []string {
	if c.view == nil {
		return nil
	}
	return c.view.Notes
}

func (c *ResponseView) fitWarnings() []string {
	if c.fit == nil {
		return nil
	}
	return c.fit.Warnings
}

// ecsText is the derived ECS for the data attribute of the results.
func (c *ResponseView) ecsText() string {
	if c.view == nil {
		return ""
	}
	return strconv.FormatFloat(c.view.Response.Derived.ECSK, 'f', 3, 64)
}

func (c *ResponseView) msText() string    { return strconv.Itoa(c.ms) }
func (c *ResponseView) fitMsText() string { return strconv.Itoa(c.fitMs) }

func (c *ResponseView) presetSource() string {
	if p, err := ebm.PresetByName(c.preset); err == nil {
		return p.Source
	}
	return ""
}

func (c *ResponseView) twoLayer() bool { return c.model == ebm.ModelTwoLayer }

// showField says whether a model field applies to the chosen source and
// model.
func (c *ResponseView) showField(name string) bool {
	two := c.twoLayer()
	switch c.source {
	case "physical":
		switch name {
		case "lambda", "c":
			return true
		case "gamma", "c0", "eff":
			return two
		}
	case "ecstcr":
		switch name {
		case "ecs", "tcr", "tau":
			return true
		case "c":
			return two && strings.TrimSpace(c.tau) == ""
		case "c0", "eff":
			return two
		}
	case "preset":
		return name == "preset"
	}
	return false
}

func (c *ResponseView) fitProgress() string { return c.fitStage }

// summary is the run in one line: model, ECS, TCR and time scales.
func (c *ResponseView) summary() string {
	if c.view == nil {
		return ""
	}
	r := c.view.Response
	d := r.Derived
	s := fmt.Sprintf("%s model: ECS %s K, TCR %s K; fast time scale %s years", rsModelName(r.Model), analysis.Fmt(d.ECSK), analysis.Fmt(d.TCRK), analysis.Fmt(d.TauFastYears))
	if d.TauSlowYears != nil {
		s += fmt.Sprintf(", slow %s years", analysis.Fmt(*d.TauSlowYears))
	}
	f := r.Run.Final
	return s + fmt.Sprintf("; at the run's end (%s) the surface is %s K above rest, with a top-of-atmosphere imbalance of %s W m-2.",
		analysis.FmtYear(f.TimeYear), analysis.Fmt(f.TK), analysis.Fmt(f.NWPerM2))
}

func rsModelName(m string) string {
	if m == ebm.ModelOneBox {
		return "One-box"
	}
	return "Two-layer"
}

// --- exports -----------------------------------------------------------------------

// rsPanelOf is the panel each table or chart belongs to (where the
// note of its export shows).
var rsPanelOf = map[string]string{
	"derived": "results", "run": "results", "heat": "results",
	"forcing": "forcing", "forcingseries": "forcing",
	"estimates": "fit", "implied": "fit", "stats": "fit", "drivers": "fit", "residual": "fit", "fitrun": "fit", "fit": "fit", "fitheat": "fit",
	"attribution": "attribution", "trends": "trends",
}

// say sets the note of an export of table or chart name.
func (c *ResponseView) say(name, text string) {
	c.note, c.noteAt = text, rsPanelOf[name]
}

// noteIn says whether the note belongs to a panel.
func (c *ResponseView) noteIn(panel string) bool { return c.note != "" && c.noteAt == panel }

// rsTableFiles names the CSV file of each table.
var rsTableFiles = map[string]string{
	"forcing": "forcing-components", "forcingseries": "forcing", "derived": "model", "attribution": "attribution", "trends": "window-trends",
	"estimates": "fit-parameters", "implied": "fit-sensitivity", "stats": "fit-statistics", "drivers": "fit-drivers", "residual": "fit-residual-trends",
	"run": "run", "fitrun": "fit-run",
}

func (c *ResponseView) stem() string {
	if c.record != "" {
		return "response-" + fileStem(refName(c.record))
	}
	return "response"
}

// copyTable puts one of the tables on the clipboard as tab-separated text.
func (c *ResponseView) copyTable(name string) {
	c.WS.Do("copying the table", func() { c.say(name, c.WS.CopyTable(c.table(name))) })
}

// saveCSV offers one of the tables as a CSV file.
func (c *ResponseView) saveCSV(name string) {
	c.WS.Do("saving a table", func() {
		t := c.table(name)
		if len(t.Columns) == 0 {
			c.say(name, "Nothing to save yet.")
			return
		}
		file := c.stem() + "-" + rsTableFiles[name] + ".csv"
		c.WS.Save(file, "text/csv", []byte(t.CSV()))
		c.say(name, "Saved "+file+".")
	})
}

// saveJSON offers the run ("run") or the fit ("fit") as JSON.
func (c *ResponseView) saveJSON(which string) {
	c.WS.Do("saving the result", func() {
		var obj any
		switch {
		case which == "fit" && c.fit != nil:
			obj = c.fit
		case which == "run" && c.view != nil:
			obj = c.view
		default:
			c.say(which, "Nothing to save yet.")
			return
		}
		file := c.stem() + "-" + which + ".json"
		c.WS.Save(file, "application/json", jsonBytes(obj))
		c.say(which, "Saved "+file+".")
	})
}

// saveSVG offers a chart: forcing, run, heat, attribution, trends, fit or
// fitheat.
func (c *ResponseView) saveSVG(which string) {
	c.WS.Do("saving a chart", func() {
		var svg string
		switch which {
		case "fit":
			svg = string(c.fitMarkup("fit"))
		case "fitheat":
			svg = string(c.fitMarkup("heat"))
		default:
			svg = string(c.markup(which))
		}
		if svg == "" {
			c.say(which, "Nothing to save yet.")
			return
		}
		file := c.stem() + "-" + which + ".svg"
		c.WS.Save(file, "image/svg+xml", []byte(svg))
		c.say(which, "Saved "+file+".")
	})
}

// errFitCancelled stops a fit whose result nobody wants any more.
var errFitCancelled = errors.New("fit cancelled")
