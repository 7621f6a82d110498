package ui

import (
	"context"
	"fmt"
	"strconv"
	"strings"
	"time"

	"github.com/vugu/vugu"

	"heatledger/core/analysis"
	"heatledger/core/budget"
)

var heatUnitOptions = []Option{
	{"", "the series' own unit"},
	{"zj", "ZJ (1e21 J)"},
	{"j", "J"},
	{"j_m2", "J m-2 (per square metre of the area below)"},
}

var areaOptions = []Option{
	{"earth", "Earth's surface (5.10e14 m2)"},
	{"ocean", "the world ocean (3.61e14 m2)"},
	{"custom", "another area (m2)"},
}

var oceanShareOptions = []Option{
	{"", "none: the series' own heat gain"},
	{"0.91", "0.91 of the total goes into the ocean (" + analysis.OceanFractionSource + ")"},
}

var samplingOptions = []Option{
	{budget.SamplingAR1, "AR(1) sampling uncertainty"},
	{budget.SamplingWhite, "independent values"},
	{budget.SamplingNone, "exact (no sampling uncertainty)"},
}

// BudgetView is the Budget view: the heating rate of a heat content, the
// energy-budget sensitivity by Monte Carlo, its dependence on the final
// period and the Gregory regression. Its fields are view state; the form
// is read, and every number computed, by core/analysis.
type BudgetView struct {
	WS *Workspace

	init bool
	sig  string // the loaded series when the form was made

	// heating rate
	heat       analysis.HeatSettings
	heatArea   string // earth, ocean or custom
	heatAreaM2 string // the custom area as typed
	heatFrac   string // "" or the ocean share as a number
	heatView   *analysis.HeatView
	heatErr    string

	// energy budget
	form    analysis.BudgetForm
	preview *analysis.BudgetPreview
	formErr string

	running     bool
	cancel      context.CancelFunc
	done, total int
	result      *analysis.SensitivityView
	runErr      string
	stale       bool
	runMs       int

	// Gregory regression
	grN, grT string
	gregory  *analysis.GregoryView
	grErr    string

	note string

	// the settings of the heating rate and of the Monte Carlo shown
	heatSet *analysis.HeatSettings
	runSet  *analysis.SensitivitySettings
}

func (c *BudgetView) formState() formState {
	return formState{
		strs: map[string]*string{"heat_area": &c.heatArea, "heat_area_m2": &c.heatAreaM2, "heat_frac": &c.heatFrac, "gregory_n": &c.grN, "gregory_t": &c.grT},
		objs: map[string]any{"heat": &c.heat, "form": &c.form},
	}
}

// PageState is the form and the analyses of the heating rate and of the
// Monte Carlo shown.
func (c *BudgetView) PageState() (map[string]string, []analysis.Analysis) {
	c.Refs()
	return pageState("budget", c.formState(), shownPanel{"heat", c.heatSet, "", false}, shownPanel{"sensitivity", c.runSet, "ran", c.running})
}

// brief adds the heating rate or the sensitivity to the briefing.
func (c *BudgetView) brief(panel string) {
	c.WS.Do("adding to the brief", func() {
		if panel == "heat" {
			c.note = c.WS.AddToBrief(c.heatSet, "rate", "table")
		} else {
			c.note = c.WS.AddToBrief(c.runSet, "ecs", "table")
		}
	})
}

// signature lists the loaded series; the form is checked again when it
// changes.
func (c *BudgetView) signature() string {
	var refs []string
	for _, r := range c.WS.SeriesRefs() {
		refs = append(refs, r.Ref)
	}
	return strings.Join(refs, "\n")
}

// Refs lists the series to choose from (called first by the template). On
// the first visit, and when the loaded series change so that a chosen one
// is gone, the settings start again from the defaults for what is loaded.
func (c *BudgetView) Refs() []SeriesRef {
	refs := c.WS.SeriesRefs()
	if sig := c.signature(); !c.init || sig != c.sig {
		first := !c.init
		c.init, c.sig = true, sig
		if st := c.WS.ViewState("budget"); first && st != nil {
			c.WS.Do("restoring the Budget view", func() {
				c.defaults()
				c.formState().load(st)
				c.refreshHeat()
				c.refreshPreview()
				if st["ran"] == "true" {
					if c.WS.Env != nil {
						c.start(c.WS.Env) // in the background, with its progress
					} else {
						c.runErr = "The energy-budget run was saved with these settings: press Run to draw again."
					}
				}
			})
		} else if first || c.lostSeries() {
			c.WS.Do("setting up the Budget view", c.defaults)
		} else {
			c.WS.Do("updating the Budget view", func() {
				c.refreshHeat()
				c.refreshPreview()
			})
		}
	}
	return refs
}

// lostSeries reports whether a series the settings name is gone.
func (c *BudgetView) lostSeries() bool {
	aw := c.WS.Analysis()
	gone := func(ref string) bool {
		if ref == "" {
			return false
		}
		_, err := aw.Find(ref)
		return err != nil
	}
	if gone(c.heat.Series) || gone(c.grN) || gone(c.grT) {
		return true
	}
	for _, k := range c.slots() {
		q := c.q(k)
		if (q.Source == analysis.SourceSeries || q.Source == analysis.SourceHeat) && gone(q.Series) {
			return true
		}
	}
	return false
}

// defaults sets every setting from the loaded series and computes the
// heating rate and the input previews (the Monte Carlo waits for Run).
func (c *BudgetView) defaults() {
	aw := c.WS.Analysis()
	c.heat = aw.DefaultHeatSettings()
	c.heatArea, c.heatAreaM2 = "earth", ""
	c.heatFrac = ""
	if c.heat.OceanFraction > 0 {
		c.heatFrac = strconv.FormatFloat(c.heat.OceanFraction, 'g', -1, 64)
	}
	c.form = aw.DefaultBudgetForm()
	c.grN, c.grT = "", aw.DefaultTemperature()
	if n := aw.ImbalanceCandidates(); len(n) > 0 {
		c.grN = n[0]
	}
	c.result, c.runErr, c.stale, c.gregory, c.grErr = nil, "", false, nil, ""
	c.runSet = nil
	c.refreshHeat()
	c.refreshPreview()
}

// --- heating rate ----------------------------------------------------------------

func (c *BudgetView) heatSettings() (analysis.HeatSettings, error) {
	s := c.heat
	s.Area = c.heatArea
	if c.heatArea == "custom" {
		s.Area = strings.TrimSpace(c.heatAreaM2)
		if s.Area == "" {
			return s, fmt.Errorf("area: type the area in square metres, e.g. 3.61e14")
		}
	}
	s.OceanFraction = 0
	if c.heatFrac != "" {
		v, err := strconv.ParseFloat(c.heatFrac, 64)
		if err != nil {
			return s, fmt.Errorf("ocean share %q: expected a number such as 0.91", c.heatFrac)
		}
		s.OceanFraction = v
	}
	return s, nil
}

func (c *BudgetView) refreshHeat() {
	c.heatView, c.heatErr, c.heatSet = nil, "", nil
	if c.heat.Series == "" {
		c.heatErr = "No heat-content series chosen: load a file with a heat content in ZJ, J or J m-2, or pick a series and give its unit."
		return
	}
	s, err := c.heatSettings()
	if err == nil {
		c.heatView, err = c.WS.Analysis().HeatFigure(s)
	}
	if err != nil {
		c.heatErr = err.Error()
		c.heatView = nil
		return
	}
	c.heatSet = &s
}

// setHeat returns a change handler for a heating-rate field.
func (c *BudgetView) setHeat(field *string, what string) func(vugu.DOMEvent) {
	return func(ev vugu.DOMEvent) {
		c.WS.Do("changing "+what, func() {
			*field = strings.TrimSpace(ev.PropString("target", "value"))
			c.refreshHeat()
		})
	}
}

func (c *BudgetView) onHeatSeries(ev vugu.DOMEvent) {
	c.setHeat(&c.heat.Series, "the heat-content series")(ev)
}
func (c *BudgetView) onHeatUnit(ev vugu.DOMEvent) {
	c.setHeat(&c.heat.Unit, "the heat-content unit")(ev)
}
func (c *BudgetView) onHeatArea(ev vugu.DOMEvent)   { c.setHeat(&c.heatArea, "the area")(ev) }
func (c *BudgetView) onHeatAreaM2(ev vugu.DOMEvent) { c.setHeat(&c.heatAreaM2, "the area")(ev) }
func (c *BudgetView) onHeatFrom(ev vugu.DOMEvent)   { c.setHeat(&c.heat.From, "the window start")(ev) }
func (c *BudgetView) onHeatTo(ev vugu.DOMEvent)     { c.setHeat(&c.heat.To, "the window end")(ev) }
func (c *BudgetView) onHeatNoise(ev vugu.DOMEvent)  { c.setHeat(&c.heat.Noise, "the noise model")(ev) }
func (c *BudgetView) onHeatFrac(ev vugu.DOMEvent)   { c.setHeat(&c.heatFrac, "the ocean share")(ev) }

func (c *BudgetView) heatContentMarkup() vugu.HTML {
	if c.heatView == nil {
		return ""
	}
	return vugu.HTML(c.heatView.ContentSVG)
}

func (c *BudgetView) heatRateMarkup() vugu.HTML {
	if c.heatView == nil {
		return ""
	}
	return vugu.HTML(c.heatView.RateSVG)
}

func (c *BudgetView) heatWarnings() []string {
	if c.heatView == nil {
		return nil
	}
	return c.heatView.Warnings
}

// --- the energy-budget form ------------------------------------------------------

// slots name the inputs of the form in order: "dT", "dF:0", "dF:1", ...,
// "dN".
func (c *BudgetView) slots() []string {
	out := []string{"dT"}
	for k := range c.form.DF {
		out = append(out, "dF:"+strconv.Itoa(k))
	}
	return append(out, "dN")
}

// q returns the form of a slot (a spare one for a slot that is gone, so a
// late event changes nothing).
func (c *BudgetView) q(key string) *analysis.QuantityForm {
	switch {
	case key == "dT":
		return &c.form.DT
	case key == "dN":
		return &c.form.DN
	case strings.HasPrefix(key, "dF:"):
		k, err := strconv.Atoi(strings.TrimPrefix(key, "dF:"))
		if err == nil && k >= 0 && k < len(c.form.DF) {
			return &c.form.DF[k]
		}
	}
	return &analysis.QuantityForm{}
}

func role(key string) string {
	if strings.HasPrefix(key, "dF") {
		return "dF"
	}
	return key
}

// slotTitle is the heading of a slot's row.
func (c *BudgetView) slotTitle(key string) string {
	switch role(key) {
	case "dT":
		return "dT: warming between the periods (K)"
	case "dN":
		return "dN: change in Earth's energy imbalance (W m-2)"
	}
	if len(c.form.DF) == 1 {
		return "dF: forcing change (W m-2)"
	}
	k, _ := strconv.Atoi(strings.TrimPrefix(key, "dF:"))
	return fmt.Sprintf("dF part %d of %d (W m-2)", k+1, len(c.form.DF))
}

// sourceOptions are the sources a slot offers.
func (c *BudgetView) sourceOptions(key string) []Option {
	switch role(key) {
	case "dT":
		return []Option{{analysis.SourceSeries, "period means of a series"}, {analysis.SourceTyped, "typed distribution"}}
	case "dN":
		return []Option{{analysis.SourceHeat, "heating rates of a heat content"}, {analysis.SourceSeries, "period means of an imbalance series"},
			{analysis.SourceModel, "the energy balance model's imbalance (Response view)"}, {analysis.SourceTyped, "typed distribution"}}
	}
	out := []Option{}
	if _, ok := c.WS.Analysis().GuessForcing(); ok || c.q(key).Source == analysis.SourceForcing {
		out = append(out, Option{analysis.SourceForcing, "total forcing built from the loaded components"})
	}
	return append(out, Option{analysis.SourceSeries, "period means of a forcing series"}, Option{analysis.SourceTyped, "typed distribution"})
}

func (c *BudgetView) isDF(key string) bool { return role(key) == "dF" }

func (c *BudgetView) canRemove(key string) bool { return c.isDF(key) && len(c.form.DF) > 1 }

func (c *BudgetView) showSeries(key string) bool {
	s := c.q(key).Source
	return s == analysis.SourceSeries || s == analysis.SourceHeat
}

func (c *BudgetView) showSampling(key string) bool {
	s := c.q(key).Source
	return s == analysis.SourceSeries || s == analysis.SourceForcing
}

func (c *BudgetView) showHeat(key string) bool { return c.q(key).Source == analysis.SourceHeat }

func (c *BudgetView) showTyped(key string) bool { return c.q(key).Source == analysis.SourceTyped }

func (c *BudgetView) showForcing(key string) bool { return c.q(key).Source == analysis.SourceForcing }

func (c *BudgetView) showModel(key string) bool { return c.q(key).Source == analysis.SourceModel }

// modelText says which model run gives dN.
func (c *BudgetView) modelText() string {
	if c.WS.Model == nil {
		return "The imbalance N of the Response view's default model run (two-layer, spun up from 1850, forcing from the loaded components), taken as exact: compare it with the heat-content estimate. Open the Response view to choose the model."
	}
	return "The imbalance N of the model as last run in the Response view, taken as exact: compare it with the heat-content estimate."
}

// settings are the Monte Carlo settings from the form, with the Response
// view's model for a dN taken from the model.
func (c *BudgetView) settings(aw *analysis.Workspace) (analysis.SensitivitySettings, error) {
	f := c.form
	if f.DN.Source == analysis.SourceModel {
		f.DN.Model = c.WS.Model
	}
	return aw.BudgetSettings(f)
}

func (c *BudgetView) forcingText() string {
	fs, _ := c.WS.Analysis().GuessForcing()
	return "Built with Heatledger's forcing formulas from " + analysis.ForcingSummary(fs) + " (kinds read from the names and units). Its wiggles are signal, so its period means are taken as exact by default: add a typed part for the forcing's own uncertainty."
}

func distLabelA(f analysis.DistForm) string { return analysis.DistKindOf(f.Kind).A }
func distLabelB(f analysis.DistForm) string { return analysis.DistKindOf(f.Kind).B }

func distKindOptions() []Option {
	var out []Option
	for _, k := range analysis.DistKinds {
		out = append(out, Option{k.Value, k.Label})
	}
	return out
}

// setQ stores one field of a slot: name, source, series, sampling, share,
// kind, a or b.
func (c *BudgetView) setQ(key, field string, ev vugu.DOMEvent) {
	c.WS.Do("changing an energy-budget input", func() {
		v := strings.TrimSpace(ev.PropString("target", "value"))
		q := c.q(key)
		switch field {
		case "name":
			q.Name = v
		case "source":
			q.Source = v
			if (v == analysis.SourceSeries || v == analysis.SourceHeat) && !c.fits(q) {
				q.Series = c.WS.Analysis().BudgetSeriesDefault(role(key), v)
			}
			if v == analysis.SourceHeat && q.OceanFraction == "" {
				q.OceanFraction = "0.91"
			}
			if v == analysis.SourceForcing && q.Sampling == "" {
				q.Sampling = budget.SamplingNone
			}
		case "series":
			q.Series = v
		case "sampling":
			q.Sampling = v
		case "share":
			q.OceanFraction = v
		case "kind":
			q.Typed = q.Typed.Convert(v)
		case "a":
			q.Typed.A = v
		case "b":
			q.Typed.B = v
		}
		c.formChanged()
	})
}

// fits reports whether a slot's series is still loaded.
func (c *BudgetView) fits(q *analysis.QuantityForm) bool {
	if q.Series == "" {
		return false
	}
	_, err := c.WS.Analysis().Find(q.Series)
	return err == nil
}

func (c *BudgetView) onQName(key string, ev vugu.DOMEvent)     { c.setQ(key, "name", ev) }
func (c *BudgetView) onQSource(key string, ev vugu.DOMEvent)   { c.setQ(key, "source", ev) }
func (c *BudgetView) onQSeries(key string, ev vugu.DOMEvent)   { c.setQ(key, "series", ev) }
func (c *BudgetView) onQSampling(key string, ev vugu.DOMEvent) { c.setQ(key, "sampling", ev) }
func (c *BudgetView) onQShare(key string, ev vugu.DOMEvent)    { c.setQ(key, "share", ev) }
func (c *BudgetView) onQKind(key string, ev vugu.DOMEvent)     { c.setQ(key, "kind", ev) }
func (c *BudgetView) onQA(key string, ev vugu.DOMEvent)        { c.setQ(key, "a", ev) }
func (c *BudgetView) onQB(key string, ev vugu.DOMEvent)        { c.setQ(key, "b", ev) }

// setForm returns a change handler for a field of the form.
func (c *BudgetView) setForm(field *string, what string) func(vugu.DOMEvent) {
	return func(ev vugu.DOMEvent) {
		c.WS.Do("changing "+what, func() {
			*field = strings.TrimSpace(ev.PropString("target", "value"))
			c.formChanged()
		})
	}
}

func (c *BudgetView) onBase1(ev vugu.DOMEvent)  { c.setForm(&c.form.Base[0], "the base period")(ev) }
func (c *BudgetView) onBase2(ev vugu.DOMEvent)  { c.setForm(&c.form.Base[1], "the base period")(ev) }
func (c *BudgetView) onFinal1(ev vugu.DOMEvent) { c.setForm(&c.form.Final[0], "the final period")(ev) }
func (c *BudgetView) onFinal2(ev vugu.DOMEvent) { c.setForm(&c.form.Final[1], "the final period")(ev) }
func (c *BudgetView) onDraws(ev vugu.DOMEvent)  { c.setForm(&c.form.Draws, "the number of draws")(ev) }
func (c *BudgetView) onSeed(ev vugu.DOMEvent)   { c.setForm(&c.form.Seed, "the seed")(ev) }
func (c *BudgetView) onF2xA(ev vugu.DOMEvent)   { c.setForm(&c.form.F2x.A, "F2x")(ev) }
func (c *BudgetView) onF2xB(ev vugu.DOMEvent)   { c.setForm(&c.form.F2x.B, "F2x")(ev) }
func (c *BudgetView) onHeatNoiseBudget(ev vugu.DOMEvent) {
	c.setForm(&c.form.HeatNoise, "the noise model of the heating rates")(ev)
}

func (c *BudgetView) onF2xKind(ev vugu.DOMEvent) {
	c.WS.Do("changing F2x", func() {
		c.form.F2x = c.form.F2x.Convert(strings.TrimSpace(ev.PropString("target", "value")))
		c.formChanged()
	})
}

func (c *BudgetView) onSweep() {
	c.WS.Do("changing the period sweep", func() {
		c.form.Sweep = !c.form.Sweep
		c.formChanged()
	})
}

// addComponent adds a typed part of dF (for example a skewed aerosol
// part: lognormal with both ends negative).
func (c *BudgetView) addComponent() {
	c.WS.Do("adding a forcing component", func() {
		c.form.DF = append(c.form.DF, analysis.QuantityForm{
			Name:   "added part " + strconv.Itoa(len(c.form.DF)+1),
			Source: analysis.SourceTyped,
			Typed:  analysis.DistForm{Kind: "normal", A: "0", B: "0.2"},
		})
		c.formChanged()
	})
}

func (c *BudgetView) removeComponent(key string) {
	c.WS.Do("removing a forcing component", func() {
		k, err := strconv.Atoi(strings.TrimPrefix(key, "dF:"))
		if err != nil || k < 0 || k >= len(c.form.DF) || len(c.form.DF) < 2 {
			return
		}
		c.form.DF = append(c.form.DF[:k:k], c.form.DF[k+1:]...)
		c.formChanged()
	})
}

// periodsFromData sets the periods suggested for the chosen series.
func (c *BudgetView) periodsFromData() {
	c.WS.Do("suggesting periods", func() {
		c.form.Base, c.form.Final = c.WS.Analysis().DefaultPeriods(c.form)
		c.formChanged()
	})
}

// formChanged checks the form, redraws the previews and marks the result
// shown as out of date.
func (c *BudgetView) formChanged() {
	if c.result != nil {
		c.stale = true
	}
	c.refreshPreview()
}

// refreshPreview reads the form and draws the input distributions from a
// short Monte Carlo run (analysis.PreviewDraws draws, a few milliseconds).
func (c *BudgetView) refreshPreview() {
	c.preview, c.formErr = nil, ""
	aw := c.WS.Analysis()
	s, err := c.settings(aw)
	if err == nil {
		c.preview, err = aw.BudgetPreviewFigure(s)
	}
	if err != nil {
		c.formErr = err.Error()
		c.preview = nil
	}
}

func (c *BudgetView) previewFigures() []analysis.InputFigure {
	if c.preview == nil {
		return nil
	}
	return c.preview.Figures
}

func inputMarkup(f analysis.InputFigure) vugu.HTML { return vugu.HTML(f.SVG) }

func (c *BudgetView) inputsTable() analysis.Table {
	switch {
	case c.result != nil && !c.stale:
		return c.result.Inputs
	case c.preview != nil:
		return c.preview.Inputs
	}
	return analysis.Table{}
}

func (c *BudgetView) previewWarnings() []string {
	if c.preview == nil {
		return nil
	}
	return c.preview.Warnings
}

// --- running the Monte Carlo -------------------------------------------------------

// run starts the Monte Carlo (and the period sweep) in the background: the
// work hands the page back to the browser every few tens of milliseconds,
// so the progress bar moves and Cancel works.
func (c *BudgetView) run(ev vugu.DOMEvent) {
	c.WS.Do("starting the energy-budget Monte Carlo", func() { c.start(ev.EventEnv()) })
}

func (c *BudgetView) start(env vugu.EventEnv) {
	c.WS.Do("starting the energy-budget Monte Carlo", func() {
		if c.running {
			return
		}
		aw := c.WS.Analysis()
		s, err := c.settings(aw)
		if err != nil {
			c.formErr = err.Error()
			return
		}
		c.runErr, c.note = "", ""
		ctx, cancel := context.WithCancel(context.Background())
		c.cancel, c.running, c.done, c.total = cancel, true, 0, 0
		go func() {
			c.WS.Yield() // hand the click back to the browser first
			start := time.Now()
			progress := c.WS.Progress(env, func(done, total int) { c.done, c.total = done, total })
			var v *analysis.SensitivityView
			var err error
			func() {
				defer func() {
					if r := recover(); r != nil {
						err = fmt.Errorf("the energy-budget run failed: %v", r)
					}
				}()
				v, err = aw.SensitivityFigure(s, ctx, progress)
			}()
			env.Lock()
			defer env.UnlockRender()
			c.running, c.cancel = false, nil
			c.runMs = int(time.Since(start) / time.Millisecond)
			if err != nil {
				if ctx.Err() != nil {
					c.runErr = "Energy-budget run cancelled."
				} else {
					c.runErr = err.Error()
				}
				return
			}
			c.result, c.stale, c.runSet = v, false, &s
			c.WS.Changed()
		}()
	})
}

func (c *BudgetView) cancelRun() {
	c.WS.Do("cancelling", func() {
		if c.cancel != nil {
			c.cancel()
		}
	})
}

func (c *BudgetView) progressText() string {
	if c.total == 0 {
		return "Drawing…"
	}
	return fmt.Sprintf("%d of %d draws", c.done, c.total)
}

func (c *BudgetView) hasResult() bool { return c.result != nil }

func (c *BudgetView) hasSweep() bool { return c.result != nil && c.result.Sweep != nil }

func (c *BudgetView) ecsMarkup() vugu.HTML {
	if c.result == nil {
		return ""
	}
	return vugu.HTML(c.result.ECSSVG)
}

func (c *BudgetView) tcrMarkup() vugu.HTML {
	if c.result == nil {
		return ""
	}
	return vugu.HTML(c.result.TCRSVG)
}

func (c *BudgetView) sweepMarkup() vugu.HTML {
	if c.result == nil {
		return ""
	}
	return vugu.HTML(c.result.SweepSVG)
}

func (c *BudgetView) nonpositive() string {
	if c.result == nil {
		return ""
	}
	return c.result.Nonpositive
}

func (c *BudgetView) nonpositiveClass() string {
	if c.result != nil && c.result.Report.Result.NonpositiveFraction > 0 {
		return "hl-budget-key hl-budget-key-warn"
	}
	return "hl-budget-key"
}

func (c *BudgetView) resultWarnings() []string {
	if c.result == nil {
		return nil
	}
	return c.result.Warnings
}

func (c *BudgetView) runMsText() string { return strconv.Itoa(c.runMs) }

// --- Gregory regression ------------------------------------------------------------

func (c *BudgetView) imbalanceRefs() []SeriesRef {
	var out []SeriesRef
	cands := map[string]bool{}
	for _, r := range c.WS.Analysis().ImbalanceCandidates() {
		cands[r] = true
	}
	for _, r := range c.WS.SeriesRefs() {
		if cands[r.Ref] {
			out = append(out, r)
		}
	}
	return out
}

func (c *BudgetView) hasImbalance() bool { return len(c.imbalanceRefs()) > 0 }

func (c *BudgetView) onGrN(ev vugu.DOMEvent) {
	c.WS.Do("choosing N", func() { c.grN = strings.TrimSpace(ev.PropString("target", "value")) })
}

func (c *BudgetView) onGrT(ev vugu.DOMEvent) {
	c.WS.Do("choosing T", func() { c.grT = strings.TrimSpace(ev.PropString("target", "value")) })
}

func (c *BudgetView) regress() {
	c.WS.Do("running the Gregory regression", func() {
		c.gregory, c.grErr = nil, ""
		var f2x *budget.Dist
		if d, err := c.form.F2x.Dist(); err == nil {
			f2x = &d
		}
		v, err := c.WS.Analysis().GregoryFigure(analysis.GregorySettings{N: c.grN, T: c.grT, Noise: "ar1"}, f2x)
		if err != nil {
			c.grErr = err.Error()
			return
		}
		c.gregory = v
	})
}

// --- exports ---------------------------------------------------------------------

// table returns one of the view's tables: heat, sensitivity, inputs, sweep
// or gregory.
func (c *BudgetView) table(name string) analysis.Table {
	switch name {
	case "heat":
		if c.heatView != nil {
			return c.heatView.Table
		}
	case "sensitivity":
		if c.result != nil {
			return c.result.Table
		}
	case "inputs":
		return c.inputsTable()
	case "sweep":
		if c.result != nil && c.result.Sweep != nil {
			return *c.result.Sweep
		}
	case "gregory":
		if c.gregory != nil {
			return c.gregory.Table
		}
	}
	return analysis.Table{}
}

func (c *BudgetView) heatStem() string {
	return "heat-" + fileStem(refName(c.heat.Series))
}

// copyTable puts a table on the clipboard as tab-separated text.
func (c *BudgetView) copyTable(name string) {
	c.WS.Do("copying the table", func() { c.note = c.WS.CopyTable(c.table(name)) })
}

// download offers "csv:TABLE", "json:heat", "json:sensitivity",
// "json:gregory" or "svg:CHART" (content, rate, ecs, tcr, sweep).
func (c *BudgetView) download(what string) {
	c.WS.Do("saving a Budget result", func() {
		kind, name, _ := strings.Cut(what, ":")
		var file, mime string
		var data []byte
		switch kind {
		case "csv":
			t := c.table(name)
			if len(t.Columns) == 0 {
				c.note = "Nothing to save yet."
				return
			}
			file, mime, data = c.stemOf(name)+".csv", "text/csv", []byte(t.CSV())
		case "json":
			var obj any
			switch {
			case name == "heat" && c.heatView != nil:
				obj = c.heatView
			case name == "sensitivity" && c.result != nil:
				obj = c.result
			case name == "gregory" && c.gregory != nil:
				obj = c.gregory
			}
			if obj == nil {
				c.note = "Nothing to save yet."
				return
			}
			file, mime, data = c.stemOf(name)+".json", "application/json", jsonBytes(obj)
		case "svg":
			svg := c.svgOf(name)
			if svg == "" {
				c.note = "Nothing to save yet."
				return
			}
			file, mime, data = c.stemOf(name)+".svg", "image/svg+xml", []byte(svg)
		default:
			return
		}
		c.WS.Save(file, mime, data)
		c.note = "Saved " + file + "."
	})
}

func (c *BudgetView) stemOf(name string) string {
	switch name {
	case "heat":
		return c.heatStem()
	case "content":
		return c.heatStem() + "-content"
	case "rate":
		return c.heatStem() + "-rate"
	case "sensitivity":
		return "budget-sensitivity"
	case "inputs":
		return "budget-inputs"
	case "ecs":
		return "budget-ecs"
	case "tcr":
		return "budget-tcr"
	case "sweep":
		return "budget-period-sweep"
	case "gregory":
		return "budget-gregory"
	}
	return "budget"
}

func (c *BudgetView) svgOf(name string) string {
	switch name {
	case "content", "rate":
		if c.heatView == nil {
			return ""
		}
		if name == "content" {
			return c.heatView.ContentSVG
		}
		return c.heatView.RateSVG
	case "ecs", "tcr", "sweep":
		if c.result == nil {
			return ""
		}
		return map[string]string{"ecs": c.result.ECSSVG, "tcr": c.result.TCRSVG, "sweep": c.result.SweepSVG}[name]
	}
	return ""
}

// lastDF reports whether a slot is the last part of dF (where the Add
// button sits).
func (c *BudgetView) lastDF(key string) bool {
	return key == "dF:"+strconv.Itoa(len(c.form.DF)-1)
}

func (c *BudgetView) f2xNote() string { return "Default: " + analysis.F2xSource + "." }

// histNote says which draws a histogram leaves out ("ecs" or "tcr").
func (c *BudgetView) histNote(which string) string {
	if c.result == nil {
		return ""
	}
	if which == "ecs" {
		return c.result.ECSNote
	}
	return c.result.TCRNote
}

// sweepNote says how to read the sweep chart, and where its axis was cut.
func (c *BudgetView) sweepNote() string {
	if c.result == nil {
		return ""
	}
	return strings.TrimSpace("Lines: the median of each final period's draws; darker bands the 17-83 % range, lighter ones the 5-95 % range; the dashed line marks the final period chosen above. " + c.result.SweepNote)
}
