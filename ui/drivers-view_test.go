package ui

import (
	"bytes"
	"encoding/json"
	"regexp"
	"slices"
	"strconv"
	"strings"
	"testing"

	"github.com/vugu/vugu"
	"github.com/vugu/vugu/staticrender"
)

// valueEvent is a change event whose target holds a value; anything else
// asked of it panics.
type valueEvent struct {
	panicEvent
	value string
}

func (e valueEvent) PropString(keys ...string) string {
	if len(keys) == 2 && keys[0] == "target" && keys[1] == "value" {
		return e.value
	}
	panic("test: PropString " + strings.Join(keys, "."))
}

// savingHost records downloads and clipboard text.
type savingHost struct {
	fakeHost
	saved  map[string][]byte
	copied []string
}

func (h *savingHost) Save(name, mime string, data []byte) {
	if h.saved == nil {
		h.saved = map[string][]byte{}
	}
	h.saved[name] = data
}

func (h *savingHost) Copy(text string) { h.copied = append(h.copied, text) }

var _ Exporter = (*savingHost)(nil)
var _ Host = (*savingHost)(nil)

func demoDriversView(t *testing.T, h Host) (*Workspace, *DriversView) {
	t.Helper()
	ws := NewWorkspace(h)
	ws.LoadDemo()
	dv := &DriversView{WS: ws}
	dv.Refs()
	return ws, dv
}

func refOf(t *testing.T, ws *Workspace, name string) string {
	t.Helper()
	for _, r := range ws.SeriesRefs() {
		if r.Name == name {
			return r.Ref
		}
	}
	t.Fatalf("no series %s", name)
	return ""
}

// TestDriversViewFirstVisit: the demo opens on a worked example whose
// index lag is near the demo world's built-in 3 months (truth.json).
func TestDriversViewFirstVisit(t *testing.T) {
	ws, dv := demoDriversView(t, nil)
	if refName(dv.target) != "surface_anomaly" || dv.harmonics != "2" || dv.aFrom != "1950" || dv.bTo != "2025" {
		t.Errorf("defaults: target %s harmonics %s windows %s-%s %s-%s", dv.target, dv.harmonics, dv.aFrom, dv.aTo, dv.bFrom, dv.bTo)
	}
	var ticked []string
	for _, r := range dv.drivers() {
		ticked = append(ticked, r.Name)
	}
	if !slices.Equal(ticked, []string{"ocean_index", "aod", "tsi"}) {
		t.Errorf("ticked %q", ticked)
	}
	if dv.err != "" || dv.view == nil || len(ws.Banner) > 0 {
		t.Fatalf("first fit: error %q banner %q", dv.err, ws.Banner)
	}
	row := dv.table("coef").Rows[0]
	lag, err := strconv.Atoi(row[1])
	if row[0] != "ocean_index" || err != nil || lag < 2 || lag > 4 {
		t.Errorf("first coefficient row %q", row)
	}
	if !dv.hasChange() || len(dv.figures()) != 3 {
		t.Errorf("change table %v, %d contribution charts", dv.hasChange(), len(dv.figures()))
	}
}

func TestDriversViewErrorsAndStale(t *testing.T) {
	ws, dv := demoDriversView(t, nil)
	dv.onFrom(valueEvent{value: " 2100 "})
	if !dv.stale || dv.from != "2100" {
		t.Errorf("after a change: stale %v from %q", dv.stale, dv.from)
	}
	dv.fit()
	if dv.view != nil || !strings.Contains(dv.err, "2100") || dv.stale {
		t.Errorf("fit from 2100: view %v error %q stale %v", dv.view != nil, dv.err, dv.stale)
	}
	dv.onFrom(valueEvent{value: ""})
	ix := refOf(t, ws, "ocean_index")
	dv.onMinLag(ix, valueEvent{value: "two"})
	dv.fit()
	if !strings.Contains(dv.err, "ocean_index") || !strings.Contains(dv.err, "two") {
		t.Errorf("lag typing error %q", dv.err)
	}
	dv.onMinLag(ix, valueEvent{value: "5"})
	dv.onMaxLag(ix, valueEvent{value: "3"})
	dv.fit()
	if !strings.Contains(dv.err, "ocean_index") {
		t.Errorf("reversed lag range: %q", dv.err)
	}
	dv.onMinLag(ix, valueEvent{value: "0"})
	dv.onMaxLag(ix, valueEvent{value: "12"})
	// an incomplete comparison window is named
	dv.onB2(valueEvent{value: ""})
	dv.fit()
	if !strings.Contains(dv.err, "window B end") {
		t.Errorf("incomplete window: %q", dv.err)
	}
	dv.onB2(valueEvent{value: "2012"})
	// comparison windows without data keep the fit and say why
	dv.onA1(valueEvent{value: "2090"})
	dv.onA2(valueEvent{value: "2095"})
	dv.fit()
	if dv.err != "" || dv.view == nil || dv.hasChange() || !strings.Contains(dv.changeErr(), "window A") {
		t.Errorf("windows outside the data: error %q change error %q", dv.err, dv.changeErr())
	}
	// a broken trend needs break times; a series trend needs a series
	dv.onTrend(valueEvent{value: "broken"})
	dv.fit()
	if !strings.Contains(dv.err, "break") {
		t.Errorf("broken trend without breaks: %q", dv.err)
	}
	dv.onBreaks(valueEvent{value: "1976, 1998-06"})
	dv.fit()
	if dv.err != "" || len(dv.view.Result.Trend.Segments) != 3 {
		t.Errorf("broken trend: %q", dv.err)
	}
	dv.onTrend(valueEvent{value: "series"})
	dv.fit()
	if !strings.Contains(dv.err, "trend") {
		t.Errorf("series trend without a series: %q", dv.err)
	}
	dv.onTrendSeries(valueEvent{value: refOf(t, ws, "co2")})
	dv.fit()
	if dv.err != "" || dv.view.Result.Trend.SeriesCoef == nil {
		t.Errorf("series trend: %q", dv.err)
	}
	// no driver ticked
	for _, r := range dv.drivers() {
		dv.onDriver(r.Ref)
	}
	dv.fit()
	if !strings.Contains(dv.err, "no driver") {
		t.Errorf("no driver: %q", dv.err)
	}
	if len(ws.Banner) > 0 {
		t.Errorf("banner %q: user errors must show beside the settings", ws.Banner)
	}
}

// TestDriversViewAnnualTarget: an annual target turns the annual cycle
// off; monthly drivers then get the engine's resolution message.
func TestDriversViewAnnualTarget(t *testing.T) {
	ws, dv := demoDriversView(t, nil)
	dv.onTarget(valueEvent{value: refOf(t, ws, "ocean_heat")})
	if dv.harmonics != "0" {
		t.Errorf("harmonics %s for an annual target", dv.harmonics)
	}
	dv.fit()
	if !strings.Contains(dv.err, "annual") || !strings.Contains(dv.err, "ocean_heat") {
		t.Errorf("monthly drivers for an annual target: %q", dv.err)
	}
	// the target is not offered as its own driver
	for _, r := range dv.driverRefs() {
		if r.Ref == dv.target {
			t.Error("target listed as a driver")
		}
	}
}

func TestDriversViewExports(t *testing.T) {
	h := &savingHost{}
	ws, dv := demoDriversView(t, h)
	dv.download("csv")
	dv.download("json")
	dv.download("table:change")
	dv.saveSVG("fit")
	dv.saveSVG("adjusted")
	dv.saveSVG("change")
	for k := range dv.figures() {
		dv.saveSVG(contributionKey(k))
	}
	dv.copyTable("coef")
	if len(ws.Banner) > 0 {
		t.Fatalf("banner %q", ws.Banner)
	}
	stem := "drivers-surface_anomaly"
	csv := string(h.saved[stem+"-series.csv"])
	head, _, _ := strings.Cut(csv, "\n")
	for _, want := range []string{"time", "surface_anomaly", "adjusted", "contribution ocean_index (lag", "contribution aod", "contribution tsi"} {
		if !strings.Contains(head, want) {
			t.Errorf("series CSV header %q lacks %q", head, want)
		}
	}
	if n := strings.Count(csv, "\n"); n != dv.view.Result.TargetSeries.Len()+1 {
		t.Errorf("series CSV has %d lines", n)
	}
	var j struct {
		Result struct {
			Target  string `json:"target"`
			Drivers []struct {
				Name string `json:"name"`
			} `json:"drivers"`
		} `json:"result"`
		Coefficients struct{ Rows [][]string } `json:"coefficients"`
	}
	if err := json.Unmarshal(h.saved[stem+".json"], &j); err != nil {
		t.Fatalf("JSON: %v", err)
	}
	if j.Result.Target != "surface_anomaly" || len(j.Result.Drivers) != 3 || len(j.Coefficients.Rows) != 4 {
		t.Errorf("JSON %+v", j)
	}
	if !strings.HasPrefix(string(h.saved[stem+"-trend-change.csv"]), "term,") {
		t.Error("change table CSV")
	}
	for _, name := range []string{"-fit.svg", "-adjusted.svg", "-trend-change.svg", "-ocean_index.svg", "-aod.svg", "-tsi.svg"} {
		if !strings.HasPrefix(string(h.saved[stem+name]), "<svg") {
			t.Errorf("%s not saved as SVG", stem+name)
		}
	}
	if len(h.copied) != 1 || !strings.HasPrefix(h.copied[0], "term\tlag (months)\t") {
		t.Errorf("copied %q", h.copied)
	}
}

// TestDriversPage: the view in the page shows its charts, tables and
// export buttons (so TestEveryHandlerRecovers reaches their handlers).
func TestDriversPage(t *testing.T) {
	ws := NewWorkspace(&fakeHost{})
	ws.LoadDemo()
	root := &Root{WS: ws, current: "drivers"}
	env, err := vugu.NewBuildEnv()
	if err != nil {
		t.Fatal(err)
	}
	br := env.RunBuild(root)
	hs := handlers(br)
	clicks, changes := 0, 0
	for _, h := range hs {
		switch h.EventType {
		case "click":
			clicks++
		case "change":
			changes++
		}
	}
	// Fit, 4 + 3 + 3 + 3 export buttons, one SVG button per driver; the
	// switcher's tabs
	if clicks < 1+13+3+len(Views()) {
		t.Errorf("%d click handlers", clicks)
	}
	if changes < 15 {
		t.Errorf("%d change handlers", changes)
	}
	var buf bytes.Buffer
	if err := staticrender.New(&buf).Render(br); err != nil {
		t.Fatal(err)
	}
	page := buf.String()
	for _, want := range []string{`id="hl-dr-coef"`, `id="hl-dr-change"`, `id="hl-dr-json"`, `data-driver="ocean_index"`, `id="hl-dr-fit-chart"`, `class="hl-line" data-series="surface_anomaly"`} {
		if !strings.Contains(page, want) {
			t.Errorf("drivers page lacks %s", want)
		}
	}
	if strings.Contains(page, `id="hl-dr-error"`) {
		t.Error("error shown on the first visit")
	}
	// options of unticked drivers are hidden, those of ticked ones shown
	opts := regexp.MustCompile(`<div class="hl-row hl-driver-opts"( hidden)?`).FindAllStringSubmatch(page, -1)
	shown := 0
	for _, m := range opts {
		if m[1] == "" {
			shown++
		}
	}
	if len(opts) == 0 || shown != 3 {
		t.Errorf("%d driver option rows, %d shown, want 3", len(opts), shown)
	}
}
