package ui

import (
	"context"
	"fmt"
	"strconv"
	"strings"

	"github.com/vugu/vugu"

	"heatledger/core/analysis"
	"heatledger/core/series"
)

// Option is one entry of a drop-down list.
type Option struct{ Value, Label string }

var noiseOptions = []Option{
	{"white", "white noise (ordinary least squares)"},
	{"ar1", "AR(1): Santer et al. 2008"},
	{"arma11", "ARMA(1,1): Foster and Rahmstorf 2011"},
	{"arma11-ml", "ARMA(1,1) by maximum likelihood"},
}

var levelOptions = []Option{{"0.9", "90 %"}, {"0.95", "95 %"}, {"0.99", "99 %"}}

var perOptions = []Option{{"decade", "per decade"}, {"year", "per year"}, {"century", "per century"}}

var smoothOptions = []Option{
	{"none", "none"},
	{"running", "centred running mean"},
	{"lowess", "LOWESS (Cleveland 1979)"},
}

// TrendsView is the Trends view: the trend of one or more series over a
// window with its uncertainty, the two-window comparison, the trend grid,
// change points and the nonparametric trend. Its fields are view state;
// every number comes from core/analysis.
type TrendsView struct {
	WS *Workspace

	picked  map[string]bool // series refs drawn and fitted
	from    string
	to      string
	noise   string
	level   string
	per     string
	smooth  string
	smoothN string // running mean steps or LOWESS span
	// anomalies: fit monthly series as anomalies from their own mean
	// seasonal cycle
	anomalies bool

	main    *analysis.TrendView
	mainErr string

	// comparison
	aFrom, aTo, bFrom, bTo string
	cmp                    *analysis.CompareView
	cmpErr                 string

	// grid
	gridMin   string
	gridStep  string
	gridNoise string
	gridMark  string
	grid      *analysis.GridView
	gridErr   string

	// change points
	brkMax, brkMin, brkSims, brkSeed, brkModel string
	brk                                        *analysis.BreaksView
	brkErr                                     string
	brkRunning                                 bool
	brkDone, brkTotal                          int
	brkCancel                                  context.CancelFunc

	// nonparametric
	senCorr string
	sen     *analysis.Table
	senErr  string

	note string // last action's note (copied, saved)
	init bool

	// the settings of each panel as last computed (nil: not shown)
	// the grid cell in keyboard focus: its key and step indices
	gridCell     string
	gridS, gridE int

	mainSet    *analysis.TrendSettings
	mainSmooth analysis.SmoothSettings // the smoothing drawn with it
	cmpSet     *analysis.CompareSettings
	gridSet    *analysis.GridSettings
	brkSet     *analysis.BreaksSettings
	senSet     *analysis.SenSettings
}

func (c *TrendsView) form() formState {
	return formState{
		strs: map[string]*string{"from": &c.from, "to": &c.to, "noise": &c.noise, "level": &c.level, "per": &c.per,
			"smooth": &c.smooth, "smooth_n": &c.smoothN, "a_from": &c.aFrom, "a_to": &c.aTo, "b_from": &c.bFrom, "b_to": &c.bTo,
			"grid_min": &c.gridMin, "grid_step": &c.gridStep, "grid_noise": &c.gridNoise, "grid_mark": &c.gridMark,
			"brk_max": &c.brkMax, "brk_min": &c.brkMin, "brk_sims": &c.brkSims, "brk_seed": &c.brkSeed, "brk_model": &c.brkModel,
			"sen_corr": &c.senCorr},
		bools: map[string]*bool{"anomalies": &c.anomalies},
		objs:  map[string]any{"picked": &c.picked},
	}
}

// PageState is the form and the analyses of the panels shown.
func (c *TrendsView) PageState() (map[string]string, []analysis.Analysis) {
	c.setup()
	return pageState("trends", c.form(), shownPanel{"trend", c.mainSet, "", false}, shownPanel{"compare", c.cmpSet, "shown_compare", false},
		shownPanel{"grid", c.gridSet, "shown_grid", false}, shownPanel{"breaks", c.brkSet, "shown_breaks", c.brkRunning}, shownPanel{"sen", c.senSet, "shown_sen", false})
}

// restore applies a loaded form and recomputes the panels that were shown
// (the change-point search in the background, as after a click).
func (c *TrendsView) restore(st map[string]string) {
	c.form().load(st)
	c.refresh()
	if st["shown_compare"] == "true" {
		c.runCompare()
	}
	if st["shown_grid"] == "true" {
		c.runGrid()
	}
	if st["shown_sen"] == "true" {
		c.runSen()
	}
	if st["shown_breaks"] == "true" {
		if c.WS.Env != nil {
			c.startBreaks(c.WS.Env) // in the background, with its progress
		} else {
			c.brkErr = "The change-point search was saved with these settings: press Search to run it again."
		}
	}
}

// brief adds a panel's figure or table to the briefing.
func (c *TrendsView) brief(panel string) {
	c.WS.Do("adding to the brief", func() {
		switch panel {
		case "main":
			d := &analysis.Display{Smooth: c.mainSmooth, Per: c.per}
			if d.Per == "decade" {
				d.Per = ""
			}
			if d.Smooth.Kind == "none" {
				d.Smooth = analysis.SmoothSettings{}
			}
			c.note = c.WS.AddToBriefDrawn(c.mainSet, d, "figure")
		case "compare":
			c.note = c.WS.AddToBrief(c.cmpSet, "figure", "table")
		case "grid":
			d := &analysis.Display{Mark: c.gridMark}
			if d.Mark == "zero" {
				d.Mark = ""
			}
			c.note = c.WS.AddToBriefDrawn(c.gridSet, d, "figure")
		case "breaks":
			c.note = c.WS.AddToBrief(c.brkSet, "figure", "table")
		case "sen":
			c.note = c.WS.AddToBrief(c.senSet, "table")
		}
	})
}

func (c *TrendsView) setup() {
	if c.init {
		return
	}
	c.init = true
	c.picked = map[string]bool{}
	c.noise, c.level, c.per, c.smooth, c.smoothN = "ar1", "0.95", "decade", "none", ""
	c.gridMin, c.gridStep, c.gridNoise, c.gridMark = "10", "year", "ar1", "zero"
	c.brkMax, c.brkMin, c.brkSims, c.brkSeed, c.brkModel = "3", "10", "500", "1", "slope"
	c.senCorr = "none"
	if st := c.WS.ViewState("trends"); st != nil {
		c.restore(st)
		return
	}
	first := ""
	if given := c.WS.Analysis().WithRole(analysis.RoleTarget); len(given) > 0 {
		first = given[0] // the record the user marked to explain
	} else if refs := c.WS.SeriesRefs(); len(refs) > 0 {
		first = refs[0].Ref
	}
	if first != "" {
		c.picked[first] = true
		if s, err := c.WS.Analysis().Find(first); err == nil {
			c.aFrom, c.aTo, c.bFrom, c.bTo = halves(s)
		}
	}
	c.refresh()
}

// Refs lists the series to choose from (called by the template).
func (c *TrendsView) Refs() []SeriesRef {
	c.setup()
	return c.WS.SeriesRefs()
}

// pickedRefs keeps the picked series in list order and drops any that are
// gone (a file removed in the Data view).
func (c *TrendsView) pickedRefs() []string {
	var out []string
	for _, r := range c.WS.SeriesRefs() {
		if c.picked[r.Ref] {
			out = append(out, r.Ref)
		}
	}
	return out
}

func (c *TrendsView) first() string {
	p := c.pickedRefs()
	if len(p) == 0 {
		return ""
	}
	return p[0]
}

func parseLevel(s string) float64 {
	v, _ := strconv.ParseFloat(s, 64)
	return v
}

// refresh recomputes the main trend (fast for every noise model).
func (c *TrendsView) refresh() {
	c.main, c.mainErr, c.mainSet = nil, "", nil
	refs := c.pickedRefs()
	if len(refs) == 0 {
		c.mainErr = "Tick at least one series to fit its trend."
		return
	}
	sm := analysis.SmoothSettings{Kind: c.smooth}
	switch c.smooth {
	case "running":
		n, err := strconv.Atoi(strings.TrimSpace(c.smoothN))
		if err != nil {
			c.mainErr = fmt.Sprintf("Running mean: %q is not a whole number of steps (e.g. 12 or 60 for monthly data).", c.smoothN)
			return
		}
		sm.Window = n
	case "lowess":
		f, err := strconv.ParseFloat(strings.TrimSpace(c.smoothN), 64)
		if err != nil {
			c.mainErr = fmt.Sprintf("LOWESS span: %q is not a fraction between 0 and 1 (e.g. 0.2).", c.smoothN)
			return
		}
		sm.Span = f
	}
	set := analysis.TrendSettings{Series: refs, From: c.from, To: c.to, Noise: c.noise, Level: parseLevel(c.level), Anomalies: c.anomalies}
	v, err := c.WS.Analysis().TrendFigure(set, sm, c.per)
	if err != nil {
		c.mainErr = err.Error()
		return
	}
	c.main, c.mainSet, c.mainSmooth = v, &set, sm
}

func (c *TrendsView) onPick(ref string) {
	c.WS.Do("choosing a series", func() {
		c.picked[ref] = !c.picked[ref]
		c.refresh()
	})
}

func (c *TrendsView) isPicked(ref string) bool { return c.picked[ref] }

func (c *TrendsView) onAnomalies() {
	c.WS.Do("changing the seasonal cycle setting", func() {
		c.anomalies = !c.anomalies
		c.refresh()
	})
}

func (c *TrendsView) onText(field *string, what string) func(vugu.DOMEvent) {
	return func(ev vugu.DOMEvent) {
		c.WS.Do("changing "+what, func() {
			*field = strings.TrimSpace(ev.PropString("target", "value"))
			c.refresh()
		})
	}
}

func (c *TrendsView) onFrom(ev vugu.DOMEvent)    { c.onText(&c.from, "the window start")(ev) }
func (c *TrendsView) onTo(ev vugu.DOMEvent)      { c.onText(&c.to, "the window end")(ev) }
func (c *TrendsView) onNoise(ev vugu.DOMEvent)   { c.onText(&c.noise, "the noise model")(ev) }
func (c *TrendsView) onLevel(ev vugu.DOMEvent)   { c.onText(&c.level, "the level")(ev) }
func (c *TrendsView) onPer(ev vugu.DOMEvent)     { c.onText(&c.per, "the slope unit")(ev) }
func (c *TrendsView) onSmoothN(ev vugu.DOMEvent) { c.onText(&c.smoothN, "the smoothing")(ev) }

func (c *TrendsView) onSmooth(ev vugu.DOMEvent) {
	c.WS.Do("changing the smoothing", func() {
		c.smooth = ev.PropString("target", "value")
		switch c.smooth {
		case "running":
			c.smoothN = "12"
			if s, err := c.WS.Analysis().Find(c.first()); err == nil && s.Resolution == series.Annual {
				c.smoothN = "5"
			}
		case "lowess":
			c.smoothN = "0.2"
		default:
			c.smoothN = ""
		}
		c.refresh()
	})
}

// preset sets the window: "all", or the last N whole years of the first
// picked series.
func (c *TrendsView) preset(which string) {
	c.WS.Do("setting the window", func() {
		switch which {
		case "all":
			c.from, c.to = "", ""
		default:
			n, _ := strconv.Atoi(which)
			s, err := c.WS.Analysis().Find(c.first())
			if err != nil {
				c.mainErr = err.Error()
				return
			}
			// the last n complete calendar years
			_, endY := s.WholeYears()
			c.from, c.to = strconv.Itoa(endY-n+1), strconv.Itoa(endY)
		}
		c.refresh()
	})
}

func (c *TrendsView) mainMarkup() vugu.HTML {
	if c.main == nil {
		return ""
	}
	return vugu.HTML(c.main.SVG)
}

func (c *TrendsView) rows() [][]string {
	if c.main == nil {
		return nil
	}
	return c.main.Table.Rows
}

func (c *TrendsView) columns() []string {
	if c.main == nil {
		return nil
	}
	return c.main.Table.Columns
}

// warnings are the trend engine's notes for every series fitted.
func (c *TrendsView) warnings() []string {
	if c.main == nil {
		return nil
	}
	var out []string
	for _, r := range c.main.Results {
		for _, w := range r.Warnings {
			out = append(out, r.Series+": "+w)
		}
	}
	return out
}

func (c *TrendsView) stem() string {
	return "trend-" + fileStem(strings.Join(c.names(), "-"))
}

func (c *TrendsView) names() []string {
	var out []string
	for _, r := range c.pickedRefs() {
		if i := strings.LastIndex(r, ":"); i >= 0 {
			r = r[i+1:]
		}
		out = append(out, r)
	}
	return out
}

// export offers the main results: what is "tsv" (clipboard), "csv", "json"
// or "svg".
func (c *TrendsView) export(what string) {
	c.WS.Do("exporting the trend", func() {
		if c.main == nil {
			c.note = "Nothing to export yet."
			return
		}
		c.exportTable(what, c.stem(), c.main.Table, c.main.Results, c.main.SVG)
	})
}

func (c *TrendsView) exportTable(what, stem string, t analysis.Table, obj any, svg string) {
	switch what {
	case "tsv":
		c.WS.Copy(t.TSV())
		c.note = "Table copied as tab-separated text."
	case "csv":
		c.WS.Save(stem+".csv", "text/csv", []byte(t.CSV()))
		c.note = "Saved " + stem + ".csv."
	case "json":
		c.WS.Save(stem+".json", "application/json", jsonBytes(obj))
		c.note = "Saved " + stem + ".json."
	case "svg":
		c.WS.Save(stem+".svg", "image/svg+xml", []byte(svg))
		c.note = "Saved " + stem + ".svg."
	}
}

// --- comparison ---------------------------------------------------------------

func (c *TrendsView) onA1(ev vugu.DOMEvent) { c.setCmp(&c.aFrom, ev) }
func (c *TrendsView) onA2(ev vugu.DOMEvent) { c.setCmp(&c.aTo, ev) }
func (c *TrendsView) onB1(ev vugu.DOMEvent) { c.setCmp(&c.bFrom, ev) }
func (c *TrendsView) onB2(ev vugu.DOMEvent) { c.setCmp(&c.bTo, ev) }

func (c *TrendsView) setCmp(f *string, ev vugu.DOMEvent) {
	c.WS.Do("changing a comparison window", func() { *f = strings.TrimSpace(ev.PropString("target", "value")) })
}

func (c *TrendsView) runCompare() {
	c.WS.Do("comparing two windows", func() {
		c.cmp, c.cmpErr, c.cmpSet = nil, "", nil
		set := analysis.CompareSettings{Series: c.first(),
			WindowA: [2]string{c.aFrom, c.aTo}, WindowB: [2]string{c.bFrom, c.bTo}, Noise: c.noise, Level: parseLevel(c.level)}
		v, err := c.WS.Analysis().CompareFigure(set)
		if err != nil {
			c.cmpErr = err.Error()
			return
		}
		c.cmp, c.cmpSet = v, &set
	})
}

func (c *TrendsView) cmpMarkup() vugu.HTML {
	if c.cmp == nil {
		return ""
	}
	return vugu.HTML(c.cmp.SVG)
}

func (c *TrendsView) exportCmp(what string) {
	c.WS.Do("exporting the comparison", func() {
		if c.cmp != nil {
			c.exportTable(what, "compare-"+fileStem(strings.Join(c.names(), "-")), c.cmp.Table, c.cmp.Result, c.cmp.SVG)
		}
	})
}

func (c *TrendsView) cmpWarnings() []string {
	if c.cmp == nil {
		return nil
	}
	return c.cmp.Result.Warnings
}

// --- grid ---------------------------------------------------------------------

func (c *TrendsView) onGridMin(ev vugu.DOMEvent)   { c.setPlain(&c.gridMin, ev) }
func (c *TrendsView) onGridStep(ev vugu.DOMEvent)  { c.setPlain(&c.gridStep, ev) }
func (c *TrendsView) onGridNoise(ev vugu.DOMEvent) { c.setPlain(&c.gridNoise, ev) }
func (c *TrendsView) onGridMark(ev vugu.DOMEvent)  { c.setPlain(&c.gridMark, ev) }

func (c *TrendsView) setPlain(f *string, ev vugu.DOMEvent) {
	c.WS.Do("changing a setting", func() { *f = strings.TrimSpace(ev.PropString("target", "value")) })
}

func (c *TrendsView) runGrid() {
	c.WS.Do("computing the trend grid", func() {
		c.grid, c.gridErr, c.gridSet, c.gridCell = nil, "", nil, ""
		min, err := strconv.ParseFloat(c.gridMin, 64)
		if err != nil || !(min > 0) {
			c.gridErr = fmt.Sprintf("Shortest window: %q is not a positive number of years.", c.gridMin)
			return
		}
		set := analysis.GridSettings{Series: c.first(), MinYears: min, Step: c.gridStep, Noise: c.gridNoise, Level: parseLevel(c.level)}
		v, err := c.WS.Analysis().GridFigure(set, c.gridMark)
		if err != nil {
			c.gridErr = err.Error()
			return
		}
		c.grid, c.gridSet = v, &set
	})
}

func (c *TrendsView) gridMarkup() vugu.HTML {
	if c.grid == nil {
		return ""
	}
	return vugu.HTML(c.grid.SVG)
}

// onGridClick sets the trend window to the clicked cell's window.
func (c *TrendsView) onGridClick(ev vugu.DOMEvent) {
	c.WS.Do("choosing a window from the grid", func() {
		t := ev.JSEventTarget()
		if !t.Truthy() {
			return
		}
		el := t.Call("closest", "[data-key]")
		if !el.Truthy() {
			return
		}
		c.useGridKey(el.Call("getAttribute", "data-key").String())
	})
}

// onGridKey walks the grid's cells from the keyboard: the left and right
// arrows move the window's start, up and down its end (by one step, or
// ten with Shift); Enter or Space uses the window. The cell in focus is
// read out in #hl-grid-cell.
func (c *TrendsView) onGridKey(ev vugu.DOMEvent) {
	c.WS.Do("choosing a window from the grid", func() {
		if c.grid == nil || len(c.grid.Labels) == 0 {
			return
		}
		step := 1
		if ev.PropBool("shiftKey") {
			step = 10
		}
		ds, de := 0, 0
		switch ev.PropString("key") {
		case "ArrowLeft":
			ds = -step
		case "ArrowRight":
			ds = step
		case "ArrowDown":
			de = -step
		case "ArrowUp":
			de = step
		case "Enter", " ":
			ev.PreventDefault()
			if c.gridCell != "" {
				c.useGridKey(c.gridCell)
			}
			return
		default:
			return
		}
		ev.PreventDefault()
		labels := c.grid.Labels
		if c.gridCell == "" {
			// start at the longest window
			for s := 0; s < len(labels) && c.gridCell == ""; s++ {
				if k := labels[s] + analysis.GridKeySep + labels[len(labels)-1]; c.grid.Titles[k] != "" {
					c.gridS, c.gridE, c.gridCell = s, len(labels)-1, k
				}
			}
			return
		}
		s, e := c.gridS, c.gridE
		for i := 0; i < len(labels); i++ {
			s, e = s+ds, e+de
			if s < 0 || e < 0 || s >= len(labels) || e >= len(labels) {
				return // at the edge: stay on the cell in focus
			}
			if k := labels[s] + analysis.GridKeySep + labels[e]; c.grid.Titles[k] != "" {
				c.gridS, c.gridE, c.gridCell = s, e, k
				return
			}
		}
	})
}

// gridCellText is the cell in keyboard focus, read out.
func (c *TrendsView) gridCellText() string {
	if c.grid == nil || c.gridCell == "" {
		return "Focus the grid and use the arrow keys to walk its cells (left and right: start; up and down: end; Shift: ten steps), Enter to use a window."
	}
	return c.grid.Titles[c.gridCell]
}

// useGridKey sets the window from a heatmap key "FROM|TO".
func (c *TrendsView) useGridKey(key string) {
	parts := strings.Split(key, analysis.GridKeySep)
	if len(parts) != 2 {
		return
	}
	c.from, c.to = parts[0], parts[1]
	c.refresh()
	c.note = "Window set to " + c.from + " – " + c.to + " from the grid."
}

func (c *TrendsView) exportGrid(what string) {
	c.WS.Do("exporting the grid", func() {
		if c.grid == nil {
			return
		}
		stem := "grid-" + fileStem(strings.Join(c.names(), "-"))
		switch what {
		case "csv":
			var b strings.Builder
			if err := c.grid.Result.WriteCSV(&b); err != nil {
				panic(err)
			}
			c.WS.Save(stem+".csv", "text/csv", []byte(b.String()))
			c.note = "Saved " + stem + ".csv."
		case "json":
			c.WS.Save(stem+".json", "application/json", jsonBytes(c.grid.Result))
			c.note = "Saved " + stem + ".json."
		case "svg":
			c.WS.Save(stem+".svg", "image/svg+xml", []byte(c.grid.SVG))
			c.note = "Saved " + stem + ".svg."
		}
	})
}

// --- change points ------------------------------------------------------------

func (c *TrendsView) onBrkMax(ev vugu.DOMEvent)   { c.setPlain(&c.brkMax, ev) }
func (c *TrendsView) onBrkMin(ev vugu.DOMEvent)   { c.setPlain(&c.brkMin, ev) }
func (c *TrendsView) onBrkSims(ev vugu.DOMEvent)  { c.setPlain(&c.brkSims, ev) }
func (c *TrendsView) onBrkSeed(ev vugu.DOMEvent)  { c.setPlain(&c.brkSeed, ev) }
func (c *TrendsView) onBrkModel(ev vugu.DOMEvent) { c.setPlain(&c.brkModel, ev) }

// runBreaks starts the change-point search in the background: the Monte
// Carlo work hands the page back to the browser every few tens of
// milliseconds, so the progress bar moves and Cancel works.
func (c *TrendsView) runBreaks(ev vugu.DOMEvent) {
	c.WS.Do("starting the change-point search", func() { c.startBreaks(ev.EventEnv()) })
}

func (c *TrendsView) startBreaks(env vugu.EventEnv) {
	c.WS.Do("starting the change-point search", func() {
		if c.brkRunning {
			return
		}
		c.brk, c.brkErr, c.brkSet = nil, "", nil
		k, err1 := strconv.Atoi(c.brkMax)
		min, err2 := strconv.ParseFloat(c.brkMin, 64)
		sims, err3 := strconv.Atoi(c.brkSims)
		seed, err4 := strconv.ParseUint(c.brkSeed, 10, 64)
		switch {
		case err1 != nil || k < 1 || k > 4:
			c.brkErr = "Most breaks: expected a whole number from 1 to 4."
			return
		case err2 != nil || !(min > 0):
			c.brkErr = "Shortest segment: expected a positive number of years."
			return
		case err3 != nil || sims < 19 || sims > 100000:
			c.brkErr = "Simulations: expected a whole number from 19 to 100000."
			return
		case err4 != nil:
			c.brkErr = "Seed: expected a whole number of 0 or more."
			return
		}
		settings := analysis.BreaksSettings{Series: c.first(), From: c.from, To: c.to, Max: k, MinYears: min, Sims: sims, Seed: seed, Model: c.brkModel}
		ctx, cancel := context.WithCancel(context.Background())
		c.brkCancel, c.brkRunning, c.brkDone, c.brkTotal = cancel, true, 0, 0
		aw := c.WS.Analysis()
		go func() {
			c.WS.Yield() // hand the click back to the browser first
			progress := c.WS.Progress(env, func(done, total int) { c.brkDone, c.brkTotal = done, total })
			var v *analysis.BreaksView
			var err error
			func() {
				defer func() {
					if r := recover(); r != nil {
						err = fmt.Errorf("the change-point search failed: %v", r)
					}
				}()
				v, err = aw.BreaksFigure(settings, ctx, progress)
			}()
			env.Lock()
			defer env.UnlockRender()
			c.brkRunning, c.brkCancel = false, nil
			if err != nil {
				if ctx.Err() != nil {
					c.brkErr = "Change-point search cancelled."
				} else {
					c.brkErr = err.Error()
				}
				return
			}
			c.brk, c.brkSet = v, &settings
			c.WS.Changed()
		}()
	})
}

func (c *TrendsView) cancelBreaks() {
	c.WS.Do("cancelling", func() {
		if c.brkCancel != nil {
			c.brkCancel()
		}
	})
}

func (c *TrendsView) brkMarkup() vugu.HTML {
	if c.brk == nil {
		return ""
	}
	return vugu.HTML(c.brk.SVG)
}

func (c *TrendsView) brkTable() analysis.Table {
	if c.brk == nil {
		return analysis.Table{}
	}
	return analysis.BreaksTable(c.brk.Result)
}

func (c *TrendsView) brkBreaks() [][]string {
	if c.brk == nil {
		return nil
	}
	var out [][]string
	for i, b := range c.brk.Result.Breaks {
		out = append(out, []string{strconv.Itoa(i + 1), analysis.FmtYear(b.Time), analysis.FmtYear(b.CILow), analysis.FmtYear(b.CIHigh)})
	}
	return out
}

func (c *TrendsView) brkProgress() string {
	if c.brkTotal == 0 {
		return "Searching…"
	}
	// the total counts the simulations of every break tested and the
	// bootstrap runs, so it exceeds the number of simulations asked for
	return fmt.Sprintf("%d of %d Monte Carlo runs", c.brkDone, c.brkTotal)
}

func (c *TrendsView) exportBrk(what string) {
	c.WS.Do("exporting the change points", func() {
		if c.brk != nil {
			c.exportTable(what, "breaks-"+fileStem(strings.Join(c.names(), "-")), c.brk.Table, c.brk.Result, c.brk.SVG)
		}
	})
}

// --- nonparametric --------------------------------------------------------------

func (c *TrendsView) onSenCorr(ev vugu.DOMEvent) { c.setPlain(&c.senCorr, ev) }

func (c *TrendsView) runSen() {
	c.WS.Do("computing the Sen slope", func() {
		c.sen, c.senErr, c.senSet = nil, "", nil
		set := analysis.SenSettings{Series: c.first(), From: c.from, To: c.to, Correction: c.senCorr, Level: parseLevel(c.level)}
		r, err := c.WS.Analysis().Sen(set)
		if err != nil {
			c.senErr = err.Error()
			return
		}
		t := analysis.SenTable(r)
		c.sen, c.senSet = &t, &set
	})
}

func (c *TrendsView) senRows() [][]string {
	if c.sen == nil {
		return nil
	}
	return c.sen.Rows
}

func (c *TrendsView) senColumns() []string {
	if c.sen == nil {
		return nil
	}
	return c.sen.Columns
}

func (c *TrendsView) copySen() {
	c.WS.Do("copying the table", func() {
		if c.sen != nil {
			c.WS.Copy(c.sen.TSV())
			c.note = "Table copied as tab-separated text."
		}
	})
}

func (c *TrendsView) firstLabel() string {
	f := c.first()
	for _, r := range c.WS.SeriesRefs() {
		if r.Ref == f {
			return r.Label
		}
	}
	return "no series picked"
}
