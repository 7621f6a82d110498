package ui

import (
	"encoding/json"
	"fmt"
	"strconv"
	"strings"
	"time"

	"github.com/vugu/vugu"

	"heatledger/core/analysis"
	"heatledger/core/series"
)

var harmonicOptions = []Option{{"0", "none"}, {"1", "1 harmonic (12 months)"}, {"2", "2 harmonics (12 and 6 months)"}}

var trendTermOptions = []Option{
	{"linear", "straight line"},
	{"none", "none (a constant level)"},
	{"broken", "broken line, breaks at given times"},
	{"series", "a series, scaled"},
}

// demoDrivers are ticked on the first visit when the demo world is loaded,
// so the view opens on a worked example.
var demoDrivers = []string{"ocean_index", "aod", "tsi"}

// driverPick is the view state of one candidate driver.
type driverPick struct {
	On             bool
	MinLag, MaxLag string // months, as typed
	Smooth3        bool
	Detrend        bool
}

// DriversView is the Drivers view: removal of short-term factors from a
// target by lagged regression, the adjusted series and each factor's
// contribution. Its fields are view state; the fit, the charts and the
// tables come from core/analysis (DriversFigure).
type DriversView struct {
	WS *Workspace

	target      string // series ref
	picks       map[string]*driverPick
	harmonics   string // "0", "1" or "2"
	trendKind   string
	breaks      string // break times as typed
	trendSeries string // series ref of the trend term "series"
	from, to    string
	noise       string
	level       string
	aFrom, aTo  string // trend-change window A
	bFrom, bTo  string // trend-change window B

	view   *analysis.DriversView
	err    string
	stale  bool // settings changed since the fit shown
	fitMs  int  // how long the last fit took, for the page's data-fit-ms
	note   string
	init   bool
	fitSet *analysis.AdjustSettings // the settings of the fit shown
}

func (c *DriversView) form() formState {
	return formState{
		strs: map[string]*string{"target": &c.target, "harmonics": &c.harmonics, "trend": &c.trendKind, "breaks": &c.breaks,
			"trend_series": &c.trendSeries, "from": &c.from, "to": &c.to, "noise": &c.noise, "level": &c.level,
			"a_from": &c.aFrom, "a_to": &c.aTo, "b_from": &c.bFrom, "b_to": &c.bTo},
		objs: map[string]any{"picks": &c.picks},
	}
}

// PageState is the form and, when a fit is shown, its analysis.
func (c *DriversView) PageState() (map[string]string, []analysis.Analysis) {
	c.setup()
	return pageState("drivers", c.form(), shownPanel{"adjust", c.fitSet, "fitted", false})
}

// brief adds the adjusted series and the coefficients to the briefing.
func (c *DriversView) brief() {
	c.WS.Do("adding to the brief", func() { c.note = c.WS.AddToBrief(c.fitSet, "adjusted", "coefficients") })
}

func (c *DriversView) setup() {
	if c.init {
		return
	}
	c.init = true
	c.picks = map[string]*driverPick{}
	c.trendKind, c.noise, c.level = "linear", "ar1", "0.95"
	if st := c.WS.ViewState("drivers"); st != nil {
		c.form().load(st)
		if st["fitted"] == "true" {
			c.WS.Do("fitting the drivers", c.run)
		}
		return
	}
	c.target = c.defaultTarget()
	c.targetDefaults()
	if given := c.WS.Analysis().WithRole(analysis.RoleDriver); len(given) > 0 {
		for _, r := range given {
			if r != c.target {
				c.pick(r).On = true
			}
		}
	} else if c.WS.HasDemo() {
		for _, r := range c.WS.SeriesRefs() {
			for _, n := range demoDrivers {
				if r.Name == n && r.Ref != c.target {
					c.pick(r.Ref).On = true
				}
			}
		}
	}
	if c.target != "" && len(c.drivers()) > 0 {
		c.WS.Do("fitting the drivers", c.run)
	}
}

// defaultTarget is the first series given the target role, else the
// demo's surface_anomaly when present, else the first series.
func (c *DriversView) defaultTarget() string {
	if given := c.WS.Analysis().WithRole(analysis.RoleTarget); len(given) > 0 {
		return given[0]
	}
	refs := c.WS.SeriesRefs()
	for _, r := range refs {
		if r.Name == "surface_anomaly" {
			return r.Ref
		}
	}
	if len(refs) > 0 {
		return refs[0].Ref
	}
	return ""
}

// targetSeries is the chosen target, or nil.
func (c *DriversView) targetSeries() *series.Series {
	if c.target == "" {
		return nil
	}
	s, err := c.WS.Analysis().Find(c.target)
	if err != nil {
		return nil
	}
	return s
}

// targetDefaults sets the settings that follow from the target: the
// annual-cycle terms (2 for a monthly target, 0 for an annual one) and the
// two comparison windows (the two halves of its whole years).
func (c *DriversView) targetDefaults() {
	s := c.targetSeries()
	c.harmonics = "2"
	c.aFrom, c.aTo, c.bFrom, c.bTo = "", "", "", ""
	if s == nil || s.Len() == 0 {
		return
	}
	if s.Resolution == series.Annual {
		c.harmonics = "0"
	}
	c.aFrom, c.aTo, c.bFrom, c.bTo = halves(s)
}

// halves splits a series' whole years into two windows of (nearly) equal
// length, the neutral default for a two-window comparison; empty strings
// when it holds fewer than ten whole years.
func halves(s *series.Series) (aFrom, aTo, bFrom, bTo string) {
	if s == nil || s.Len() == 0 {
		return
	}
	y0, y1 := s.WholeYears()
	if y1-y0 < 9 {
		return
	}
	mid := (y0 + y1) / 2
	return strconv.Itoa(y0), strconv.Itoa(mid), strconv.Itoa(mid + 1), strconv.Itoa(y1)
}

// Refs lists the series to choose from (called first by the template). A
// target that is gone (its file removed) falls back to the default.
func (c *DriversView) Refs() []SeriesRef {
	c.setup()
	refs := c.WS.SeriesRefs()
	found := false
	for _, r := range refs {
		if r.Ref == c.target {
			found = true
		}
	}
	if (!found && c.target != "") || (c.target == "" && len(refs) > 0) {
		c.target = c.defaultTarget()
		c.targetDefaults()
	}
	return refs
}

// driverRefs lists the candidate drivers: every series but the target.
func (c *DriversView) driverRefs() []SeriesRef {
	var out []SeriesRef
	for _, r := range c.WS.SeriesRefs() {
		if r.Ref != c.target {
			out = append(out, r)
		}
	}
	return out
}

// pick returns the state of a candidate driver, made on first use.
func (c *DriversView) pick(ref string) *driverPick {
	if c.picks == nil {
		c.picks = map[string]*driverPick{}
	}
	p, ok := c.picks[ref]
	if !ok {
		p = &driverPick{MinLag: "0", MaxLag: "12"}
		c.picks[ref] = p
	}
	return p
}

// drivers are the ticked candidates, in list order.
func (c *DriversView) drivers() []SeriesRef {
	var out []SeriesRef
	for _, r := range c.driverRefs() {
		if p, ok := c.picks[r.Ref]; ok && p.On {
			out = append(out, r)
		}
	}
	return out
}

// settings turns the view state into the analysis request; typing errors
// are reported in the words of the form.
func (c *DriversView) settings() (analysis.AdjustSettings, error) {
	s := analysis.AdjustSettings{Target: c.target, Trend: c.trendKind, From: c.from, To: c.to, Noise: c.noise, Level: parseLevel(c.level)}
	if c.target == "" {
		return s, fmt.Errorf("no target chosen: load a file in the Data view first")
	}
	ds := c.drivers()
	if len(ds) == 0 {
		return s, fmt.Errorf("no driver ticked: tick one or more series to remove from %s", refName(c.target))
	}
	for _, r := range ds {
		p := c.pick(r.Ref)
		lo, err1 := strconv.Atoi(strings.TrimSpace(p.MinLag))
		hi, err2 := strconv.Atoi(strings.TrimSpace(p.MaxLag))
		switch {
		case err1 != nil:
			return s, fmt.Errorf("driver %s: shortest lag %q is not a whole number of months", r.Name, p.MinLag)
		case err2 != nil:
			return s, fmt.Errorf("driver %s: longest lag %q is not a whole number of months", r.Name, p.MaxLag)
		}
		s.Drivers = append(s.Drivers, analysis.AdjustDriver{Name: r.Ref, MinLag: &lo, MaxLag: &hi, Smooth3: p.Smooth3, Detrend: p.Detrend})
	}
	h, err := strconv.Atoi(c.harmonics)
	if err != nil {
		return s, fmt.Errorf("annual cycle: %q is not 0, 1 or 2 harmonics", c.harmonics)
	}
	s.Harmonics = &h
	switch c.trendKind {
	case "broken":
		for _, b := range strings.FieldsFunc(c.breaks, func(r rune) bool { return r == ',' || r == ';' || r == ' ' }) {
			s.Breaks = append(s.Breaks, b)
		}
		if len(s.Breaks) == 0 {
			return s, fmt.Errorf("broken trend: type one or more break times (e.g. 1976 or 1998-06, separated by commas)")
		}
	case "series":
		if c.trendSeries == "" {
			return s, fmt.Errorf("trend term: choose the series whose scaled copy stands for the trend")
		}
		s.TrendSeries = c.trendSeries
	}
	win := []string{c.aFrom, c.aTo, c.bFrom, c.bTo}
	if strings.Join(win, "") != "" {
		for i, w := range win {
			if w == "" {
				return s, fmt.Errorf("trend change: window %c %s is empty: give all four times, or none to skip the table", 'A'+i/2, []string{"start", "end"}[i%2])
			}
		}
		s.Change = &[2][2]string{{c.aFrom, c.aTo}, {c.bFrom, c.bTo}}
	}
	return s, nil
}

// refName is the series name of a "FILE:NAME" ref.
func refName(ref string) string {
	if i := strings.LastIndex(ref, ":"); i >= 0 {
		return ref[i+1:]
	}
	return ref
}

// run fits the model and keeps the view (charts and tables are built once
// per fit, never during rendering). The lag search takes some milliseconds,
// so it runs in the click's handler.
func (c *DriversView) run() {
	c.note, c.err, c.stale, c.fitSet = "", "", false, nil
	s, err := c.settings()
	if err != nil {
		c.err = err.Error()
		c.view = nil
		return
	}
	start := time.Now()
	v, err := c.WS.Analysis().DriversFigure(s)
	c.fitMs = int(time.Since(start) / time.Millisecond)
	if err != nil {
		c.err = err.Error()
		c.view = nil
		return
	}
	c.view, c.fitSet = v, &s
}

// fit is the Fit button.
func (c *DriversView) fit() { c.WS.Do("fitting the drivers", c.run) }

// changed marks the fit shown as out of date.
func (c *DriversView) changed() {
	if c.view != nil {
		c.stale = true
	}
}

func (c *DriversView) onTarget(ev vugu.DOMEvent) {
	c.WS.Do("choosing the target", func() {
		c.target = ev.PropString("target", "value")
		if c.trendSeries == c.target {
			c.trendSeries = ""
		}
		c.targetDefaults()
		c.changed()
	})
}

func (c *DriversView) onDriver(ref string) {
	c.WS.Do("choosing a driver", func() {
		p := c.pick(ref)
		p.On = !p.On
		c.changed()
	})
}

func (c *DriversView) onMinLag(ref string, ev vugu.DOMEvent) {
	c.WS.Do("changing a lag", func() {
		c.pick(ref).MinLag = strings.TrimSpace(ev.PropString("target", "value"))
		c.changed()
	})
}

func (c *DriversView) onMaxLag(ref string, ev vugu.DOMEvent) {
	c.WS.Do("changing a lag", func() {
		c.pick(ref).MaxLag = strings.TrimSpace(ev.PropString("target", "value"))
		c.changed()
	})
}

func (c *DriversView) onSmooth3(ref string) {
	c.WS.Do("changing a driver option", func() {
		p := c.pick(ref)
		p.Smooth3 = !p.Smooth3
		c.changed()
	})
}

func (c *DriversView) onDetrend(ref string) {
	c.WS.Do("changing a driver option", func() {
		p := c.pick(ref)
		p.Detrend = !p.Detrend
		c.changed()
	})
}

// set returns a change handler that stores a form field.
func (c *DriversView) set(field *string, what string) func(vugu.DOMEvent) {
	return func(ev vugu.DOMEvent) {
		c.WS.Do("changing "+what, func() {
			*field = strings.TrimSpace(ev.PropString("target", "value"))
			c.changed()
		})
	}
}

func (c *DriversView) onHarmonics(ev vugu.DOMEvent) { c.set(&c.harmonics, "the annual cycle")(ev) }
func (c *DriversView) onTrend(ev vugu.DOMEvent)     { c.set(&c.trendKind, "the trend term")(ev) }
func (c *DriversView) onBreaks(ev vugu.DOMEvent)    { c.set(&c.breaks, "the break times")(ev) }
func (c *DriversView) onTrendSeries(ev vugu.DOMEvent) {
	c.set(&c.trendSeries, "the trend series")(ev)
}
func (c *DriversView) onFrom(ev vugu.DOMEvent)  { c.set(&c.from, "the fit window")(ev) }
func (c *DriversView) onTo(ev vugu.DOMEvent)    { c.set(&c.to, "the fit window")(ev) }
func (c *DriversView) onNoise(ev vugu.DOMEvent) { c.set(&c.noise, "the noise model")(ev) }
func (c *DriversView) onLevel(ev vugu.DOMEvent) { c.set(&c.level, "the interval")(ev) }
func (c *DriversView) onA1(ev vugu.DOMEvent)    { c.set(&c.aFrom, "window A")(ev) }
func (c *DriversView) onA2(ev vugu.DOMEvent)    { c.set(&c.aTo, "window A")(ev) }
func (c *DriversView) onB1(ev vugu.DOMEvent)    { c.set(&c.bFrom, "window B")(ev) }
func (c *DriversView) onB2(ev vugu.DOMEvent)    { c.set(&c.bTo, "window B")(ev) }

// --- what the template shows -----------------------------------------------------

func (c *DriversView) hasView() bool { return c.view != nil }

func (c *DriversView) emptyHint() bool { return c.view == nil && c.err == "" }

func (c *DriversView) targetLabel() string {
	for _, r := range c.WS.SeriesRefs() {
		if r.Ref == c.target {
			return r.Label
		}
	}
	return "no target"
}

func (c *DriversView) fitMarkup() vugu.HTML {
	if c.view == nil {
		return ""
	}
	return vugu.HTML(c.view.FitSVG)
}

func (c *DriversView) adjustedMarkup() vugu.HTML {
	if c.view == nil {
		return ""
	}
	return vugu.HTML(c.view.AdjustedSVG)
}

func (c *DriversView) changeMarkup() vugu.HTML {
	if c.view == nil {
		return ""
	}
	return vugu.HTML(c.view.ChangeSVG)
}

func (c *DriversView) figures() []analysis.DriverFigure {
	if c.view == nil {
		return nil
	}
	return c.view.Contributions
}

func figureMarkup(f analysis.DriverFigure) vugu.HTML { return vugu.HTML(f.SVG) }

// table returns one of the view's tables by name: coef, lags, stats,
// trends or change.
func (c *DriversView) table(name string) analysis.Table {
	if c.view == nil {
		return analysis.Table{}
	}
	switch name {
	case "coef":
		return c.view.Coefficients
	case "lags":
		return c.view.Lags
	case "stats":
		return c.view.Stats
	case "trends":
		return c.view.Trends
	case "change":
		if c.view.Change != nil {
			return *c.view.Change
		}
	}
	return analysis.Table{}
}

func (c *DriversView) hasChange() bool { return c.view != nil && c.view.Change != nil }

func (c *DriversView) changeErr() string {
	if c.view == nil {
		return ""
	}
	return c.view.ChangeErr
}

func (c *DriversView) searchNote() string {
	if c.view == nil {
		return ""
	}
	return c.view.SearchNote
}

func (c *DriversView) warnings() []string {
	if c.view == nil {
		return nil
	}
	return c.view.Warnings
}

func (c *DriversView) fitMsText() string { return strconv.Itoa(c.fitMs) }

// --- exports ---------------------------------------------------------------------

func (c *DriversView) stem() string {
	if c.view == nil {
		return "drivers"
	}
	return "drivers-" + fileStem(c.view.Result.Target)
}

// copyTable puts one of the tables on the clipboard as tab-separated text.
func (c *DriversView) copyTable(name string) {
	c.WS.Do("copying the table", func() { c.note = c.WS.CopyTable(c.table(name)) })
}

// download offers the series as CSV (the target, fitted, adjusted series
// and each contribution as columns), the result as JSON, or a table as
// CSV ("table:NAME").
func (c *DriversView) download(what string) {
	c.WS.Do("saving the drivers result", func() {
		if c.view == nil {
			c.note = "Nothing to save yet: press Fit first."
			return
		}
		stem := c.stem()
		switch {
		case what == "csv":
			var b strings.Builder
			if err := c.view.Result.WriteCSV(&b); err != nil {
				c.note = "The series could not be written: " + err.Error()
				return
			}
			c.WS.Save(stem+"-series.csv", "text/csv", []byte(b.String()))
			c.note = "Saved " + stem + "-series.csv."
		case what == "json":
			b, err := json.MarshalIndent(c.view, "", "  ")
			if err != nil {
				c.note = "The result could not be written as JSON: " + err.Error()
				return
			}
			c.WS.Save(stem+".json", "application/json", append(b, '\n'))
			c.note = "Saved " + stem + ".json."
		case strings.HasPrefix(what, "table:"):
			name := strings.TrimPrefix(what, "table:")
			t := c.table(name)
			if len(t.Columns) == 0 {
				c.note = "Nothing to save: that table is empty."
				return
			}
			file := stem + "-" + tableFiles[name] + ".csv"
			c.WS.Save(file, "text/csv", []byte(t.CSV()))
			c.note = "Saved " + file + "."
		}
	})
}

// tableFiles names the CSV file of each table.
var tableFiles = map[string]string{"coef": "coefficients", "lags": "lags", "stats": "statistics", "trends": "trends", "change": "trend-change"}

// saveSVG offers a chart: fit, adjusted, change, or contribution:K.
func (c *DriversView) saveSVG(which string) {
	c.WS.Do("saving a chart", func() {
		if c.view == nil {
			return
		}
		stem := c.stem()
		var svg, name string
		switch {
		case which == "fit":
			svg, name = c.view.FitSVG, stem+"-fit.svg"
		case which == "adjusted":
			svg, name = c.view.AdjustedSVG, stem+"-adjusted.svg"
		case which == "change":
			svg, name = c.view.ChangeSVG, stem+"-trend-change.svg"
		case strings.HasPrefix(which, "contribution:"):
			k, err := strconv.Atoi(strings.TrimPrefix(which, "contribution:"))
			if err != nil || k < 0 || k >= len(c.view.Contributions) {
				return
			}
			f := c.view.Contributions[k]
			svg, name = f.SVG, stem+"-"+fileStem(f.Driver)+".svg"
		}
		if svg == "" {
			return
		}
		c.WS.Save(name, "image/svg+xml", []byte(svg))
		c.note = "Saved " + name + "."
	})
}

// contributionKey is the saveSVG argument of the k-th contribution chart.
func contributionKey(k int) string { return "contribution:" + strconv.Itoa(k) }

// lagText shows a driver's lag for its figure's data attribute.
func lagText(f analysis.DriverFigure) string { return strconv.Itoa(f.LagMonths) }
