package ui

import (
	"bytes"
	"encoding/json"
	"fmt"
	"math"
	"regexp"
	"strings"
	"sync"
	"testing"

	"github.com/vugu/vugu"
	"github.com/vugu/vugu/staticrender"

	"heatledger/core/series"
)

// lockEnv is an EventEnv with a real lock that reports each render.
type lockEnv struct {
	mu      sync.Mutex
	renders chan struct{}
}

func newLockEnv() *lockEnv { return &lockEnv{renders: make(chan struct{}, 1024)} }

func (e *lockEnv) Lock()       { e.mu.Lock() }
func (e *lockEnv) UnlockOnly() { e.mu.Unlock() }
func (e *lockEnv) UnlockRender() {
	e.mu.Unlock()
	select {
	case e.renders <- struct{}{}:
	default:
	}
}
func (e *lockEnv) RLock()   { e.mu.Lock() }
func (e *lockEnv) RUnlock() { e.mu.Unlock() }

// envEvent is a click whose EventEnv is env; anything else panics.
type envEvent struct {
	panicEvent
	env vugu.EventEnv
}

func (e envEvent) EventEnv() vugu.EventEnv { return e.env }

func demoBudgetView(t *testing.T, h Host) (*Workspace, *BudgetView) {
	t.Helper()
	ws := NewWorkspace(h)
	ws.LoadDemo()
	bv := &BudgetView{WS: ws}
	bv.Refs()
	return ws, bv
}

// runAndWait presses Run and waits for the background run to end.
func runAndWait(t *testing.T, bv *BudgetView) {
	t.Helper()
	env := newLockEnv()
	bv.run(envEvent{env: env})
	for {
		env.Lock()
		running := bv.running
		env.UnlockOnly()
		if !running {
			return
		}
		<-env.renders
	}
}

func TestBudgetViewFirstVisit(t *testing.T) {
	ws, bv := demoBudgetView(t, nil)
	if bv.heatErr != "" || bv.heatView == nil || len(ws.Banner) > 0 {
		t.Fatalf("heating rate: %q, banner %q", bv.heatErr, ws.Banner)
	}
	rows := bv.table("heat").Rows
	if len(rows) != 3 || !strings.Contains(rows[1][0], "W m-2") || !strings.Contains(rows[2][0], "0.91") {
		t.Errorf("heat table %q", rows)
	}
	if refName(bv.form.DT.Series) != "surface_anomaly" || bv.form.DF[0].Source != "forcing" || refName(bv.form.DN.Series) != "ocean_heat" {
		t.Errorf("form %+v", bv.form)
	}
	if bv.formErr != "" || len(bv.previewFigures()) != 4 || len(bv.table("inputs").Rows) != 4 {
		t.Errorf("preview: error %q, %d figures", bv.formErr, len(bv.previewFigures()))
	}
	if bv.hasResult() || bv.hasImbalance() {
		t.Error("a result, or an imbalance series, on the first visit")
	}
	// Run: the result's ECS median within the 17-83 % range and the sweep
	bv.form.Draws = "20000"
	runAndWait(t, bv)
	if bv.runErr != "" || !bv.hasResult() || !bv.hasSweep() || bv.stale {
		t.Fatalf("run: %q", bv.runErr)
	}
	r := bv.result.Report.Result
	if r.Draws != 20000 || !(r.ECS.P17 < r.ECS.Median && r.ECS.Median < r.ECS.P83) || bv.table("sensitivity").Rows[0][0] != "ECS (K)" {
		t.Errorf("result %+v", r.ECS)
	}
	if bv.done != bv.total || bv.total != 20000+len(bv.result.Report.Sweep.Points)*20000 {
		t.Errorf("progress %d of %d at the end", bv.done, bv.total)
	}
	if !strings.HasPrefix(bv.nonpositive(), "None of the 20000 draws") {
		t.Errorf("statement %q", bv.nonpositive())
	}
	// a change marks the result out of date
	bv.onSeed(valueEvent{value: "2"})
	if !bv.stale || bv.form.Seed != "2" {
		t.Error("seed change did not mark the result out of date")
	}
	if len(ws.Banner) > 0 {
		t.Errorf("banner %q", ws.Banner)
	}
}

func TestBudgetViewCancel(t *testing.T) {
	ws, bv := demoBudgetView(t, nil)
	bv.form.Draws = "2000000"
	env := newLockEnv()
	bv.run(envEvent{env: env})
	bv.cancelRun()
	for {
		env.Lock()
		running := bv.running
		env.UnlockOnly()
		if !running {
			break
		}
		<-env.renders
	}
	if !strings.Contains(bv.runErr, "cancelled") || bv.hasResult() || len(ws.Banner) > 0 {
		t.Errorf("after cancel: %q, result %v, banner %q", bv.runErr, bv.hasResult(), ws.Banner)
	}
	// the next run works
	bv.form.Draws = "1000"
	runAndWait(t, bv)
	if bv.runErr != "" || !bv.hasResult() {
		t.Errorf("run after cancel: %q", bv.runErr)
	}
}

func TestBudgetViewErrors(t *testing.T) {
	ws, bv := demoBudgetView(t, nil)
	bv.onDraws(valueEvent{value: "many"})
	if !strings.Contains(bv.formErr, "draws") || bv.preview != nil {
		t.Errorf("draws: %q", bv.formErr)
	}
	bv.run(envEvent{}) // refused before any work: EventEnv is never asked
	if bv.running || !strings.Contains(bv.formErr, "draws") {
		t.Error("a run started with bad draws")
	}
	bv.onDraws(valueEvent{value: "1000"})
	bv.onFinal1(valueEvent{value: "2090"})
	bv.onFinal2(valueEvent{value: "2099"})
	if !strings.Contains(bv.formErr, "final period") {
		t.Errorf("final period without data: %q", bv.formErr)
	}
	bv.periodsFromData()
	if bv.formErr != "" || bv.form.Final != [2]string{"2011", "2025"} {
		t.Errorf("periods from the data: %v %q", bv.form.Final, bv.formErr)
	}
	// a typed dN: switching kinds keeps the range; bad numbers are named
	bv.onQSource("dN", valueEvent{value: "typed"})
	bv.onQKind("dN", valueEvent{value: "lognormal90"})
	if bv.form.DN.Typed.Kind != "lognormal90" || bv.formErr != "" {
		t.Errorf("dN as lognormal90: %+v %q", bv.form.DN.Typed, bv.formErr)
	}
	bv.onQA("dN", valueEvent{value: "-0.2"})
	if !strings.Contains(bv.formErr, "dN") || !strings.Contains(bv.formErr, "sign") {
		t.Errorf("mixed signs: %q", bv.formErr)
	}
	bv.onQKind("dN", valueEvent{value: "normal"})
	bv.onQA("dN", valueEvent{value: "0.5"})
	bv.onQB("dN", valueEvent{value: "x"})
	if !strings.Contains(bv.formErr, `SD: "x"`) {
		t.Errorf("bad SD: %q", bv.formErr)
	}
	bv.onQB("dN", valueEvent{value: "0.1"})
	if bv.formErr != "" {
		t.Errorf("typed dN: %q", bv.formErr)
	}
	// an added dF part, its removal, and a part from a series
	bv.addComponent()
	if len(bv.form.DF) != 2 || !bv.lastDF("dF:1") || bv.lastDF("dF:0") || !bv.canRemove("dF:0") {
		t.Fatalf("after adding: %+v", bv.form.DF)
	}
	bv.onQName("dF:1", valueEvent{value: "aerosol"})
	bv.onQKind("dF:1", valueEvent{value: "lognormal90"})
	bv.onQA("dF:1", valueEvent{value: "-0.8"})
	bv.onQB("dF:1", valueEvent{value: "-0.1"})
	if bv.formErr != "" || len(bv.table("inputs").Rows) != 6 {
		t.Errorf("aerosol part: %q, inputs %q", bv.formErr, bv.table("inputs").Rows)
	}
	bv.onQSource("dF:1", valueEvent{value: "series"})
	if refName(bv.form.DF[1].Series) != "tsi" || !bv.showSampling("dF:1") || bv.showTyped("dF:1") {
		t.Errorf("dF part from a series: %+v", bv.form.DF[1])
	}
	bv.removeComponent("dF:0")
	if len(bv.form.DF) != 1 || bv.form.DF[0].Name != "aerosol" || bv.canRemove("dF:0") {
		t.Errorf("after removing: %+v", bv.form.DF)
	}
	bv.removeComponent("dF:0") // the last part stays
	if len(bv.form.DF) != 1 {
		t.Error("removed the last dF part")
	}
	// F2x kind switch and a bad value
	bv.onF2xKind(valueEvent{value: "normal"})
	if bv.form.F2x.A != "3.93" {
		t.Errorf("F2x as normal: %+v", bv.form.F2x)
	}
	bv.onF2xB(valueEvent{value: "-1"})
	if !strings.Contains(bv.formErr, "F2x") {
		t.Errorf("F2x: %q", bv.formErr)
	}
	// heating rate: a window without data, a custom area
	bv.onHeatFrom(valueEvent{value: "2100"})
	if bv.heatView != nil || !strings.Contains(bv.heatErr, "2100") {
		t.Errorf("heat window 2100: %q", bv.heatErr)
	}
	bv.onHeatFrom(valueEvent{value: ""})
	bv.onHeatArea(valueEvent{value: "custom"})
	if !strings.Contains(bv.heatErr, "area") {
		t.Errorf("custom area empty: %q", bv.heatErr)
	}
	bv.onHeatAreaM2(valueEvent{value: "2.55e14"})
	if bv.heatErr != "" || !strings.Contains(bv.table("heat").Rows[1][0], "2.55e+14 m2") {
		t.Errorf("custom area: %q %q", bv.heatErr, bv.table("heat").Rows)
	}
	bv.onHeatFrac(valueEvent{value: ""})
	if len(bv.table("heat").Rows) != 2 {
		t.Error("imbalance row without an ocean share")
	}
	if len(ws.Banner) > 0 {
		t.Errorf("banner %q: user errors must show beside the settings", ws.Banner)
	}
}

func TestBudgetViewExports(t *testing.T) {
	h := &savingHost{}
	ws, bv := demoBudgetView(t, h)
	bv.download("json:sensitivity")
	if !strings.Contains(bv.note, "Nothing") || len(h.saved) != 0 {
		t.Errorf("saved before a run: %q", bv.note)
	}
	bv.form.Draws = "5000"
	runAndWait(t, bv)
	for _, what := range []string{"csv:heat", "json:heat", "svg:content", "svg:rate", "csv:sensitivity", "json:sensitivity",
		"svg:ecs", "svg:tcr", "csv:sweep", "svg:sweep", "csv:inputs"} {
		bv.download(what)
	}
	bv.copyTable("sensitivity")
	bv.copyTable("heat")
	if len(ws.Banner) > 0 {
		t.Fatalf("banner %q", ws.Banner)
	}
	for _, name := range []string{"heat-ocean_heat.csv", "heat-ocean_heat.json", "budget-sensitivity.csv", "budget-period-sweep.csv", "budget-inputs.csv"} {
		if _, ok := h.saved[name]; !ok {
			t.Errorf("%s not saved", name)
		}
	}
	for _, name := range []string{"heat-ocean_heat-content.svg", "heat-ocean_heat-rate.svg", "budget-ecs.svg", "budget-tcr.svg", "budget-period-sweep.svg"} {
		if !strings.HasPrefix(string(h.saved[name]), "<svg") {
			t.Errorf("%s not saved as SVG", name)
		}
	}
	if !strings.HasPrefix(string(h.saved["budget-sensitivity.csv"]), "quantity,central estimate,median,") {
		t.Errorf("sensitivity CSV %q", h.saved["budget-sensitivity.csv"])
	}
	if n := strings.Count(string(h.saved["budget-period-sweep.csv"]), "\n"); n != len(bv.result.Report.Sweep.Points)+1 {
		t.Errorf("sweep CSV has %d lines", n)
	}
	var j struct {
		Report struct {
			Result struct {
				Draws int `json:"draws"`
				ECS   struct {
					Median *float64 `json:"median"`
				} `json:"ecs"`
				NonpositiveFraction *float64 `json:"nonpositive_fraction"`
			} `json:"result"`
		} `json:"report"`
		Nonpositive string `json:"nonpositive"`
	}
	if err := json.Unmarshal(h.saved["budget-sensitivity.json"], &j); err != nil {
		t.Fatal(err)
	}
	if j.Report.Result.Draws != 5000 || j.Report.Result.ECS.Median == nil || math.Abs(*j.Report.Result.ECS.Median-bv.result.Report.Result.ECS.Median) > 1e-12 ||
		j.Report.Result.NonpositiveFraction == nil || j.Nonpositive == "" {
		t.Errorf("JSON %+v", j)
	}
	if len(h.copied) != 2 || !strings.HasPrefix(h.copied[0], "quantity\tcentral estimate\t") || !strings.Contains(h.copied[1], "W m-2") {
		t.Errorf("copied %q", h.copied)
	}
}

// TestBudgetViewFilesChange: a new imbalance series is offered to the
// Gregory regression; removing a chosen series starts the form again.
func TestBudgetViewFilesChange(t *testing.T) {
	ws, bv := demoBudgetView(t, nil)
	T, err := ws.Analysis().Find("surface_anomaly")
	if err != nil {
		t.Fatal(err)
	}
	var b strings.Builder
	b.WriteString("date,toa_net (W m-2)\n")
	for i, v := range T.Values {
		y, m := series.YearMonth(T.First + i)
		fmt.Fprintf(&b, "%d-%02d,%.4f\n", y, m, 1.5-1.1*v+0.03*math.Cos(float64(i)))
	}
	ws.Add("toa.csv", []byte(b.String()))
	bv.Refs()
	if !bv.hasImbalance() || bv.form.DF[0].Source != "forcing" {
		t.Fatalf("imbalance refs %v", bv.imbalanceRefs())
	}
	bv.onGrN(valueEvent{value: "toa.csv:toa_net"})
	bv.regress()
	if bv.grErr != "" || bv.gregory == nil || math.Abs(bv.gregory.Result.LambdaWPerM2PerK-1.1) > 0.02 {
		t.Fatalf("Gregory: %q", bv.grErr)
	}
	// the heat file goes: the form starts again without it
	for _, f := range ws.Files {
		if f.Name == "tessary_ocean_heat.csv" {
			ws.Remove(f.ID)
		}
	}
	bv.Refs()
	if bv.heat.Series != "" || bv.heatView != nil || bv.heatErr == "" || bv.form.DN.Source != "typed" || bv.gregory != nil {
		t.Errorf("after removing the heat file: series %q, dN %+v", bv.heat.Series, bv.form.DN)
	}
	if bv.formErr != "" || len(ws.Banner) > 0 {
		t.Errorf("form error %q banner %q", bv.formErr, ws.Banner)
	}
}

// TestBudgetPage: the view in the page, with every control built (so
// TestEveryHandlerRecovers reaches their handlers) and inputs of other
// sources hidden.
func TestBudgetPage(t *testing.T) {
	ws := NewWorkspace(&fakeHost{})
	ws.LoadDemo()
	root := &Root{WS: ws, current: "budget"}
	bv := root.view().(*BudgetView)
	bv.Refs()
	bv.form.Draws = "2000"
	runAndWait(t, bv)
	bv.running = true // so the progress row and its Cancel button are built
	env, err := vugu.NewBuildEnv()
	if err != nil {
		t.Fatal(err)
	}
	br := env.RunBuild(root)
	clicks, changes := 0, 0
	for _, h := range handlers(br) {
		switch h.EventType {
		case "click":
			clicks++
		case "change":
			changes++
		}
	}
	// heat exports 5, periods 1, remove/add per slot 2x3, run, cancel,
	// result exports 5, input exports 2, sweep exports 3, Regress; the tabs
	if clicks < 5+1+6+2+5+2+3+1+len(Views()) {
		t.Errorf("%d click handlers", clicks)
	}
	// heat 8; periods 4; per slot 9 x 3; F2x 3; draws, seed, sweep; N, T
	if changes < 8+4+27+3+3+2 {
		t.Errorf("%d change handlers", changes)
	}
	var buf bytes.Buffer
	if err := staticrender.New(&buf).Render(br); err != nil {
		t.Fatal(err)
	}
	page := buf.String()
	defer func() {
		// every handler of the full view (result exports, Cancel) recovers
		// a panic, as TestEveryHandlerRecovers checks for the first visit
		checkHandlers(t, ws, handlers(br))
		ws.BeforeEvent = nil
		env.RunBuild(root)
	}()
	for _, want := range []string{`id="hl-bu-heat-table"`, `id="hl-bu-table"`, `id="hl-bu-ecs-chart"`, `id="hl-bu-sweep-chart"`,
		`id="hl-bu-progress"`, `id="hl-bu-cancel"`, `id="hl-bu-nonpositive"`, `data-slot="dF:0"`, `id="hl-bu-gregory-needs"`, `data-role="F2x"`} {
		if !strings.Contains(page, want) {
			t.Errorf("budget page lacks %s", want)
		}
	}
	if strings.Contains(page, `id="hl-bu-form-error"`) || strings.Contains(page, `id="hl-bu-heat-error"`) {
		t.Error("an error shown on the first visit")
	}
	// the typed rows of the three series-based slots are hidden
	typed := regexp.MustCompile(`<div class="hl-row"( hidden="hidden")?>\s*<label class="hl-field">Distribution`).FindAllStringSubmatch(page, -1)
	hidden := 0
	for _, m := range typed {
		if m[1] != "" {
			hidden++
		}
	}
	if len(typed) != 4 || hidden != 3 {
		t.Errorf("%d typed rows, %d hidden; want 4 (3 slots and F2x) with the 3 slots' hidden", len(typed), hidden)
	}
}
