package ui

import (
	"bytes"
	"encoding/json"
	"math"
	"slices"
	"strconv"
	"strings"
	"sync"
	"testing"
	"time"

	"github.com/vugu/vugu"
	"github.com/vugu/vugu/staticrender"
)

// rsLockEnv is an EventEnv with a real lock, for the fit's goroutine.
type rsLockEnv struct {
	mu      sync.Mutex
	renders int
}

func (e *rsLockEnv) Lock()         { e.mu.Lock() }
func (e *rsLockEnv) UnlockOnly()   { e.mu.Unlock() }
func (e *rsLockEnv) UnlockRender() { e.renders++; e.mu.Unlock() }
func (e *rsLockEnv) RLock()        { e.mu.Lock() }
func (e *rsLockEnv) RUnlock()      { e.mu.Unlock() }

// rsEnvEvent is a click whose event environment is env; anything else asked
// of it panics.
type rsEnvEvent struct {
	panicEvent
	env vugu.EventEnv
}

func (e rsEnvEvent) EventEnv() vugu.EventEnv { return e.env }

func rsDemoView(t *testing.T, h Host) (*Workspace, *ResponseView) {
	t.Helper()
	ws := NewWorkspace(h)
	ws.LoadDemo()
	rv := &ResponseView{WS: ws}
	rv.Refs()
	return ws, rv
}

// rsWaitFit waits (under the lock) until the fit's goroutine is done. The
// bound only keeps a broken fit from hanging the test run.
func rsWaitFit(t *testing.T, rv *ResponseView, env *rsLockEnv) {
	t.Helper()
	for start := time.Now(); time.Since(start) < 2*time.Minute; time.Sleep(5 * time.Millisecond) {
		env.Lock()
		running := rv.fitRunning
		env.UnlockOnly()
		if !running {
			return
		}
	}
	t.Fatal("the fit never finished")
}

func rsRowOf(tab [][]string, key string) []string {
	for _, r := range tab {
		if len(r) > 0 && r[0] == key {
			return r
		}
	}
	return nil
}

// TestResponseViewFirstVisit: the demo opens on a finished run with all
// six forcing components, the two-layer model from an 1850 spin-up, both
// temperature records and the ocean heat.
func TestResponseViewFirstVisit(t *testing.T) {
	ws, rv := rsDemoView(t, nil)
	if rv.err != "" || rv.view == nil || len(ws.Banner) > 0 {
		t.Fatalf("first run: error %q banner %q", rv.err, ws.Banner)
	}
	var comps []string
	for _, r := range rv.components() {
		comps = append(comps, r.Name+":"+rv.pick(r.Ref).Kind)
	}
	if want := []string{"co2:co2", "ch4:ch4", "n2o:n2o", "aod:aod", "tsi:tsi", "aerosol_erf:erf"}; !slices.Equal(comps, want) {
		t.Errorf("components %q, want %q", comps, want)
	}
	if refName(rv.record) != "surface_anomaly" || refName(rv.second) != "second_record" || refName(rv.heat) != "ocean_heat" || rv.winFrom != "1950" || rv.winTo != "2025" {
		t.Errorf("records %q %q %q window %s-%s", rv.record, rv.second, rv.heat, rv.winFrom, rv.winTo)
	}
	// the default parameters: ECS = 3.93 / 1.3
	if ecs, err := strconv.ParseFloat(rv.ecsText(), 64); err != nil || math.Abs(ecs-3.93/1.3) > 1e-3 {
		t.Errorf("ECS %q", rv.ecsText())
	}
	if !strings.Contains(rv.summary(), "Two-layer model: ECS 3.023 K") {
		t.Errorf("summary %q", rv.summary())
	}
	if row := rsRowOf(rv.table("derived").Rows, "spin-up"); row == nil || !strings.Contains(row[1], "1850") {
		t.Errorf("spin-up row %q", row)
	}
	if !rv.hasHeatChart() || !rv.hasAttribution() || len(rv.table("attribution").Rows) != 6+1+2 {
		t.Errorf("heat chart %v attribution %v", rv.hasHeatChart(), rv.hasAttribution())
	}
	// the fit starts with lambda, gamma and the aerosol scale free, the
	// heat record and the ocean index
	var free []string
	for _, o := range rsFree {
		if rv.free[o.Value] {
			free = append(free, o.Value)
		}
	}
	if !slices.Equal(free, []string{"lambda", "gamma", "aerosol"}) || !rv.fitHeat || !rv.drivers[refOf(t, ws, "ocean_index")] {
		t.Errorf("fit defaults: free %q heat %v drivers %v", free, rv.fitHeat, rv.drivers)
	}
	// the drivers offered exclude the record, the heat record and the components
	for _, r := range rv.driverRefs() {
		if r.Ref == rv.record || r.Ref == rv.heat || rv.pick(r.Ref).On {
			t.Errorf("%s offered as a driver", r.Ref)
		}
	}
}

// TestResponseViewSettings: the form reaches the engine (model, parameter
// source, forcing choices), and bad settings show as text beside the
// settings, never in the banner.
func TestResponseViewSettings(t *testing.T) {
	ws, rv := rsDemoView(t, nil)
	ecs0 := rv.ecsText()
	rv.onC(valueEvent{value: "-5"})
	if rv.view != nil || !strings.Contains(rv.err, "C -5") {
		t.Errorf("negative C: view %v error %q", rv.view != nil, rv.err)
	}
	rv.onC(valueEvent{value: "eight"})
	if !strings.Contains(rv.err, `C: "eight" is not a number`) {
		t.Errorf("typing error %q", rv.err)
	}
	rv.onC(valueEvent{value: "8"})
	if rv.err != "" || rv.ecsText() != ecs0 {
		t.Errorf("restored: %q, ECS %s", rv.err, rv.ecsText())
	}
	// lambda sets ECS
	rv.onLambda(valueEvent{value: "1.31"})
	if ecs, _ := strconv.ParseFloat(rv.ecsText(), 64); math.Abs(ecs-3.93/1.31) > 1e-3 {
		t.Errorf("ECS %s for lambda 1.31", rv.ecsText())
	}
	// one-box: no gamma, C0 or efficacy fields, and no slow time scale
	rv.onModel(valueEvent{value: "onebox"})
	if rv.err != "" || rv.showField("gamma") || rv.showField("c0") || !rv.showField("c") || rsRowOf(rv.table("derived").Rows, "slow time scale") != nil {
		t.Errorf("one-box: error %q", rv.err)
	}
	rv.onModel(valueEvent{value: "twolayer"})
	// from ECS and TCR
	rv.onSource(valueEvent{value: "ecstcr"})
	if rv.err != "" || rv.ecsText() != "3.000" || rv.showField("lambda") || rv.showField("gamma") {
		t.Errorf("ECS/TCR: error %q ECS %s", rv.err, rv.ecsText())
	}
	if row := rsRowOf(rv.table("derived").Rows, "TCR, warming at the end of a 70-year ramp to F2x"); row == nil || row[1] != "1.8" {
		t.Errorf("TCR row %q", row)
	}
	rv.onTCR(valueEvent{value: "3.5"})
	if !strings.Contains(rv.err, "TCR 3.5 K is not below ECS 3 K") {
		t.Errorf("TCR above ECS: %q", rv.err)
	}
	rv.onTCR(valueEvent{value: "1.8"})
	// a preset: its own F2x
	rv.onSource(valueEvent{value: "preset"})
	rv.onPreset(valueEvent{value: "geoffroy2013a"})
	if rv.err != "" || rsRowOf(rv.table("derived").Rows, "F2x, forcing of doubled CO2")[1] != "3.65" || !strings.Contains(rv.presetSource(), "Geoffroy") {
		t.Errorf("preset: %q", rv.err)
	}
	rv.onSource(valueEvent{value: "physical"})
	// forcing: the AR5 volcanic factor doubles nothing but the aod row's scale of cooling
	aod := func() float64 {
		v, _ := strconv.ParseFloat(rsRowOf(rv.table("attribution").Rows, "aod")[2], 64)
		return v
	}
	a20 := aod()
	rv.onVolcanic(valueEvent{value: "-25"})
	if a25 := aod(); math.Abs(a25/a20-1.25) > 1e-3 {
		t.Errorf("aod forcing change %v with -20, %v with -25", a20, a25)
	}
	rv.onVolcanic(valueEvent{value: "typed"})
	if !strings.Contains(rv.err, "volcanic factor: empty") {
		t.Errorf("typed factor left empty: %q", rv.err)
	}
	rv.onVolTyped(valueEvent{value: "-20"})
	if rv.err != "" || math.Abs(aod()-a20) > 1e-9 {
		t.Errorf("typed -20: %q", rv.err)
	}
	rv.onFormula(valueEvent{value: "etminan2016"})
	if rv.err != "" || !strings.Contains(rsRowOf(rv.table("forcing").Rows, "co2")[3], "Etminan") {
		t.Errorf("Etminan: %q %q", rv.err, rsRowOf(rv.table("forcing").Rows, "co2"))
	}
	rv.onAlbedo(valueEvent{value: "1.5"})
	if !strings.Contains(rv.err, "albedo") {
		t.Errorf("albedo 1.5: %q", rv.err)
	}
	rv.onAlbedo(valueEvent{value: "0.29"})
	// a component: scale 0 is refused by the engine, a kind changed reaches it
	co2 := refOf(t, ws, "co2")
	rv.onCompField(co2, "scale", valueEvent{value: "0"})
	if !strings.Contains(rv.err, "scale 0") {
		t.Errorf("scale 0: %q", rv.err)
	}
	rv.onCompField(co2, "scale", valueEvent{value: "1"})
	rv.onCompField(co2, "reference", valueEvent{value: "lots"})
	if !strings.Contains(rv.err, `reference "lots"`) {
		t.Errorf("bad reference: %q", rv.err)
	}
	rv.onCompField(co2, "reference", valueEvent{value: ""})
	aer := refOf(t, ws, "aerosol_erf")
	rv.onComp(aer)
	if rv.err != "" || rsRowOf(rv.table("attribution").Rows, "aerosol_erf") != nil {
		t.Errorf("aerosol unticked: %q", rv.err)
	}
	rv.onComp(aer)
	// spin-up at rest at the first step
	rv.onSpinup(valueEvent{value: "rest"})
	if row := rsRowOf(rv.table("derived").Rows, "spin-up"); rv.err != "" || row == nil || !strings.HasPrefix(row[1], "none") {
		t.Errorf("rest: %q %q", rv.err, row)
	}
	rv.onSpinup(valueEvent{value: "ramp"})
	// a window outside the run keeps the run and says why
	rv.onWinFrom(valueEvent{value: "2090"})
	rv.onWinTo(valueEvent{value: "2095"})
	if rv.view == nil || rv.hasAttribution() || !strings.Contains(rv.attributionErr(), "2090") {
		t.Errorf("window outside the run: %q", rv.attributionErr())
	}
	rv.onWinFrom(valueEvent{value: "1979"})
	rv.onWinTo(valueEvent{value: "2024"})
	if !rv.hasAttribution() || !strings.Contains(rv.table("attribution").Title, "1979-01 to 2024-12") {
		t.Errorf("window 1979-2024: %q", rv.table("attribution").Title)
	}
	// no component at all
	for _, r := range rv.components() {
		rv.onComp(r.Ref)
	}
	if !strings.Contains(rv.err, "no forcing component") {
		t.Errorf("no component: %q", rv.err)
	}
	if len(ws.Banner) > 0 {
		t.Errorf("banner %q: user errors must show beside the settings", ws.Banner)
	}
}

// TestResponseViewFit: the default fit on the demo in its goroutine gives
// the parameters with standard errors; the demo's true lambda (1.2,
// testdata/demo/truth.json) lies in lambda's interval; a combination the
// model refuses shows as the fit's error; cancel drops the result.
func TestResponseViewFit(t *testing.T) {
	ws, rv := rsDemoView(t, nil)
	env := &rsLockEnv{}
	rv.runFit(rsEnvEvent{env: env})
	rsWaitFit(t, rv, env)
	if rv.fitErr != "" || rv.fit == nil || len(ws.Banner) > 0 {
		t.Fatalf("fit: error %q banner %q", rv.fitErr, ws.Banner)
	}
	lam := rsRowOf(rv.table("estimates").Rows, "lambda")
	if lam == nil {
		t.Fatalf("estimates %q", rv.table("estimates").Rows)
	}
	lo, _ := strconv.ParseFloat(lam[4], 64)
	hi, _ := strconv.ParseFloat(lam[5], 64)
	se, _ := strconv.ParseFloat(lam[3], 64)
	if !(se > 0) || lo > 1.2 || hi < 1.2 {
		t.Errorf("lambda row %q", lam)
	}
	for _, want := range []string{"gamma", "aerosol", "offset", "heat_offset", "ocean_index"} {
		if rsRowOf(rv.table("estimates").Rows, want) == nil {
			t.Errorf("no estimate %s", want)
		}
	}
	if !rv.hasTable("drivers") || !rv.hasTable("residual") || rsRowOf(rv.table("implied").Rows, "ECS") == nil || rv.fit.HeatSVG == "" {
		t.Errorf("fit tables incomplete")
	}
	if env.renders < 2 {
		t.Errorf("%d renders asked", env.renders)
	}
	// a later change marks the fit out of date; using the fitted values
	// moves them into the form and runs the model with them
	rv.onFitFrom(valueEvent{value: "1960"})
	if !rv.fitStale {
		t.Error("fit not marked out of date")
	}
	fitted := rv.fit.Response.Fit.Params.LambdaWPerM2K
	rv.useFitted()
	if l, _ := strconv.ParseFloat(rv.lambda, 64); l != fitted || rv.err != "" || rv.fitStale || !rv.noteIn("fit") {
		t.Errorf("after using the fitted values: lambda %q (fit %v) error %q", rv.lambda, fitted, rv.err)
	}
	if ecs, _ := strconv.ParseFloat(rv.ecsText(), 64); math.Abs(ecs-3.93/fitted) > 1e-3 {
		t.Errorf("run ECS %s after using lambda %v", rv.ecsText(), fitted)
	}

	// refused: the one-box model has no gamma
	rv.onModel(valueEvent{value: "onebox"})
	rv.runFit(rsEnvEvent{env: env})
	rsWaitFit(t, rv, env)
	if rv.fit != nil || !strings.Contains(rv.fitErr, "one-box model has no gamma") {
		t.Errorf("one-box with gamma free: %q", rv.fitErr)
	}
	rv.onModel(valueEvent{value: "twolayer"})
	// the heat box without a heat record
	rv.onHeat(valueEvent{value: ""})
	rv.runFit(rsEnvEvent{env: env})
	if rv.fitRunning || !strings.Contains(rv.fitErr, "no heat record") {
		t.Errorf("heat fit without a record: %q", rv.fitErr)
	}
	rv.onFitHeat()
	// cancel: the result is dropped
	rv.runFit(rsEnvEvent{env: env})
	rv.cancelFit()
	if rv.fitRunning || rv.fitErr != "Fit cancelled." {
		t.Errorf("after cancel: running %v error %q", rv.fitRunning, rv.fitErr)
	}
	before := env.renders
	for start := time.Now(); time.Since(start) < 2*time.Minute; time.Sleep(5 * time.Millisecond) {
		env.Lock()
		n := env.renders
		env.UnlockOnly()
		if n > before {
			break
		}
	}
	env.Lock()
	if rv.fit != nil || rv.fitErr != "Fit cancelled." {
		t.Errorf("cancelled fit shown: %v %q", rv.fit != nil, rv.fitErr)
	}
	env.UnlockOnly()
	if len(ws.Banner) > 0 {
		t.Errorf("banner %q", ws.Banner)
	}
}

func TestResponseViewExports(t *testing.T) {
	h := &savingHost{}
	ws, rv := rsDemoView(t, h)
	env := &rsLockEnv{}
	rv.runFit(rsEnvEvent{env: env})
	rsWaitFit(t, rv, env)
	for _, name := range []string{"derived", "forcing", "attribution", "trends", "estimates"} {
		rv.copyTable(name)
	}
	for _, name := range []string{"run", "forcingseries", "attribution", "trends", "estimates", "fitrun"} {
		rv.saveCSV(name)
	}
	rv.saveJSON("run")
	rv.saveJSON("fit")
	for _, name := range []string{"run", "heat", "forcing", "attribution", "trends", "fit"} {
		rv.saveSVG(name)
	}
	if len(ws.Banner) > 0 {
		t.Fatalf("banner %q", ws.Banner)
	}
	if len(h.copied) != 5 || !strings.HasPrefix(h.copied[0], "quantity\tvalue\tunit\n") || !strings.HasPrefix(h.copied[4], "parameter\tmeaning\testimate\tstandard error") {
		t.Errorf("copied %d tables, first %.40q", len(h.copied), h.copied[0])
	}
	stem := "response-surface_anomaly"
	run := string(h.saved[stem+"-run.csv"])
	if head, _, _ := strings.Cut(run, "\n"); !strings.HasPrefix(head, "time,forcing (W m-2),T (K)") || strings.Count(run, "\n") != 913 {
		t.Errorf("run CSV head %q, %d lines", head, strings.Count(run, "\n"))
	}
	if !strings.Contains(string(h.saved[stem+"-fit-run.csv"]), "fitted (K)") {
		t.Error("fitted run CSV lacks the fitted values")
	}
	if head, _, _ := strings.Cut(string(h.saved[stem+"-forcing.csv"]), "\n"); head != "time,co2 (W m-2),ch4 (W m-2),n2o (W m-2),aod (W m-2),tsi (W m-2),aerosol_erf (W m-2),total (W m-2)" {
		t.Errorf("forcing CSV head %q", head)
	}
	var j struct {
		Response struct {
			Model  string `json:"model"`
			Params struct {
				Lambda float64 `json:"lambda"`
			} `json:"params"`
		} `json:"response"`
		Derived struct{ Rows [][]string } `json:"derived"`
	}
	if err := json.Unmarshal(h.saved[stem+"-run.json"], &j); err != nil || j.Response.Model != "twolayer" || j.Response.Params.Lambda != 1.3 || len(j.Derived.Rows) == 0 {
		t.Errorf("run JSON %+v %v", j, err)
	}
	var f struct {
		Estimates struct{ Rows [][]string } `json:"estimates"`
	}
	if err := json.Unmarshal(h.saved[stem+"-fit.json"], &f); err != nil || rsRowOf(f.Estimates.Rows, "lambda") == nil {
		t.Errorf("fit JSON %v", err)
	}
	for _, name := range []string{"run", "heat", "forcing", "attribution", "trends", "fit"} {
		if !strings.HasPrefix(string(h.saved[stem+"-"+name+".svg"]), "<svg") {
			t.Errorf("%s chart not saved as SVG", name)
		}
	}
}

// TestResponsePage: the view builds with its charts, tables and buttons,
// and every handler it has survives a panic (as TestEveryHandlerRecovers
// does for the views listed in Views()).
func TestResponsePage(t *testing.T) {
	ws, rv := rsDemoView(t, &fakeHost{})
	env := &rsLockEnv{}
	rv.runFit(rsEnvEvent{env: env})
	rsWaitFit(t, rv, env)
	benv, err := vugu.NewBuildEnv()
	if err != nil {
		t.Fatal(err)
	}
	br := benv.RunBuild(rv)
	var buf bytes.Buffer
	if err := staticrender.New(&buf).Render(br); err != nil {
		t.Fatal(err)
	}
	page := buf.String()
	for _, want := range []string{`id="hl-rs-run-chart"`, `id="hl-rs-forcing-chart"`, `id="hl-rs-heat-chart"`, `id="hl-rs-derived"`, `id="hl-rs-estimates"`,
		`id="hl-rs-attribution"`, `id="hl-rs-trends"`, `id="hl-rs-fit-chart"`, `data-ecs="3.023"`, `class="hl-band" data-series="co2"`} {
		if !strings.Contains(page, want) {
			t.Errorf("response page lacks %s", want)
		}
	}
	for _, bad := range []string{`id="hl-rs-error"`, `id="hl-rs-fit-error"`, `id="hl-rs-busy"`} {
		if strings.Contains(page, bad) {
			t.Errorf("page shows %s", bad)
		}
	}
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
	// Fit, use, 5 + 3 + 5 + 3 + 3 exports
	if clicks < 2+19 {
		t.Errorf("%d click handlers", clicks)
	}
	// 10 series x 5 component fields, 33 other settings, 8 free parameters
	if changes < 10*5+25+8 {
		t.Errorf("%d change handlers", changes)
	}
	ws.Banner = nil
	checkHandlers(t, ws, hs)
	ws.BeforeEvent = nil
	benv.RunBuild(rv)
}
