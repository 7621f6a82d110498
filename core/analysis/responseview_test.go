package analysis

import (
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"regexp"
	"slices"
	"strconv"
	"strings"
	"testing"

	"heatledger/core/series"
)

// TestForcingKindGuess: names and units of common forcing columns.
func TestForcingKindGuess(t *testing.T) {
	for _, c := range []struct{ name, unit, want string }{
		{"co2", "ppm", "co2"}, {"CO2_global", "ppm", "co2"}, {"ch4", "ppb", "ch4"}, {"methane", "ppb", "ch4"}, {"n2o", "ppb", "n2o"},
		{"aod", "1", "aod"}, {"strat_aod", "", "aod"}, {"tsi", "W m-2", "tsi"}, {"solar irradiance", "W/m2", "tsi"},
		{"aerosol_erf", "W m-2", "erf"}, {"solar_erf", "W m-2", "erf"}, {"other forcing", "W m-2", "erf"},
		{"surface_anomaly", "K", ""}, {"ocean_heat", "ZJ", ""}, {"ocean_index", "K", ""}, {"mystery", "ppb", ""}, {"co2", "", "co2"},
		{"co2", "K", ""},
	} {
		if got := ForcingKindGuess(c.name, c.unit); got != c.want {
			t.Errorf("ForcingKindGuess(%q, %q) = %q, want %q", c.name, c.unit, got, c.want)
		}
	}
}

// TestResponseDefaultsDemo: the demo's forcing file gives all six
// components, the surface record is fitted with the ocean heat and the
// ocean index, and the window is the record's whole years.
func TestResponseDefaultsDemo(t *testing.T) {
	w := demoWorkspace(t)
	d := w.ResponseDefaults()
	var got []string
	for _, c := range d.Components {
		got = append(got, c.Name+":"+c.Kind)
	}
	want := []string{"co2:co2", "ch4:ch4", "n2o:n2o", "aod:aod", "tsi:tsi", "aerosol_erf:erf"}
	if !slices.Equal(got, want) {
		t.Errorf("components %q, want %q", got, want)
	}
	if d.Record != "tessary_surface.csv:surface_anomaly" || d.Second != "tessary_surface.csv:second_record" || d.Heat != "tessary_ocean_heat.csv:ocean_heat" {
		t.Errorf("records %q %q heat %q", d.Record, d.Second, d.Heat)
	}
	if !slices.Equal(d.Drivers, []string{"tessary_surface.csv:ocean_index"}) || !slices.Equal(d.Free, []string{"lambda", "gamma", "aerosol"}) {
		t.Errorf("drivers %q free %q", d.Drivers, d.Free)
	}
	if d.From != "1950" || d.To != "2025" {
		t.Errorf("window %s to %s", d.From, d.To)
	}
	// nothing loaded: nothing chosen
	if e := (&Workspace{}).ResponseDefaults(); len(e.Components) != 0 || e.Record != "" || e.From != "" {
		t.Errorf("empty workspace defaults %+v", e)
	}
}

func demoResponseRequest(w *Workspace) ResponseRequest {
	d := w.ResponseDefaults()
	return ResponseRequest{
		Respond: RespondSettings{Forcing: ForcingSettings{Components: d.Components}, Windows: [][2]string{{d.From, d.To}}},
		Records: []string{d.Record, d.Second}, Heat: d.Heat,
	}
}

// cell finds the row whose first cell is key and returns the cell under
// the column col.
func cell(t *testing.T, tab Table, key, col string) string {
	t.Helper()
	j := slices.Index(tab.Columns, col)
	if j < 0 {
		t.Fatalf("%s: no column %q in %q", tab.Title, col, tab.Columns)
	}
	for _, r := range tab.Rows {
		if r[0] == key {
			return r[j]
		}
	}
	t.Fatalf("%s: no row %q", tab.Title, key)
	return ""
}

func num(t *testing.T, s string) float64 {
	t.Helper()
	v, err := strconv.ParseFloat(s, 64)
	if err != nil {
		t.Fatalf("%q is not a number", s)
	}
	return v
}

// TestResponseFigureDemo: the default run on the demo. The model with the
// default parameters (ECS 3.0 K) is near the demo's truth (ECS 3.275 K,
// truth.json), so the offset that aligns it with the surface record is the
// record's baseline offset (truth.json surface.baseline_offset_k, 0.205 K)
// within 0.05 K, and the modelled warming over 1950-2025 agrees with the
// record's least-squares trend within its interval. The tables add up:
// the components' warming sums to the total (the model is linear).
func TestResponseFigureDemo(t *testing.T) {
	w := demoWorkspace(t)
	truth := demoTruth(t)
	v, err := w.ResponseFigure(demoResponseRequest(w))
	if err != nil {
		t.Fatal(err)
	}
	if v.AttributionErr != "" || v.RunSVG == "" || v.HeatSVG == "" || v.ForcingSVG == "" || v.AttributionSVG == "" || v.TrendsSVG == "" {
		t.Fatalf("view incomplete: attribution error %q", v.AttributionErr)
	}
	base := truth["surface"].(map[string]any)["baseline_offset_k"].(float64)
	if math.Abs(-v.Offset-base) > 0.05 {
		t.Errorf("offset %v, the record's baseline lies %v below the state of rest", v.Offset, base)
	}
	// forcing: six components and the total; the stacked chart has one
	// area per sign each component takes and the total line
	if len(v.Forcing.Rows) != 7 || v.Forcing.Rows[6][0] != "total" {
		t.Errorf("forcing table %q", v.Forcing.Rows)
	}
	if n := strings.Count(v.ForcingSVG, `class="hl-band"`); n < 6 || !strings.Contains(v.ForcingSVG, `data-series="total"`) {
		t.Errorf("forcing chart: %d areas", n)
	}
	for _, name := range []string{"co2", "aod", "aerosol_erf"} {
		if !strings.Contains(v.ForcingSVG, `data-series="`+name+`"`) {
			t.Errorf("forcing chart has no area named %s", name)
		}
	}
	// derived numbers
	if e := num(t, cell(t, v.Derived, "ECS, equilibrium warming for doubled CO2 (F2x / lambda)", "value")); math.Abs(e-3.93/1.3) > 1e-3 {
		t.Errorf("ECS %v", e)
	}
	if !strings.Contains(cell(t, v.Derived, "spin-up", "value"), "1850") {
		t.Errorf("spin-up %q", cell(t, v.Derived, "spin-up", "value"))
	}
	// the run chart: both records and the model
	for _, name := range []string{"surface_anomaly", "second_record", "model T"} {
		if !strings.Contains(v.RunSVG, `class="hl-line" data-series="`+name+`"`) {
			t.Errorf("run chart lacks %s", name)
		}
	}
	// attribution: the components add up to the total
	var sum float64
	for _, r := range v.Attribution.Rows[:6] {
		sum += num(t, r[3])
	}
	tot := num(t, cell(t, v.Attribution, "model, all forcings", "warming (K)"))
	if math.Abs(sum-tot) > 2e-3 || tot < 0.5 {
		t.Errorf("components sum to %v, total %v", sum, tot)
	}
	// without a component: the same as a run of the forcing without it,
	// spin-up included
	q := demoResponseRequest(w)
	q.Respond.Forcing.Components = q.Respond.Forcing.Components[1:]
	wv, err := w.ResponseFigure(q)
	if err != nil {
		t.Fatal(err)
	}
	for _, col := range []string{"warming (K)", "trend (K per decade)"} {
		got := num(t, cell(t, v.Attribution, "co2", "without it: "+col))
		want := num(t, cell(t, wv.Attribution, "model, all forcings", col))
		if math.Abs(got-want) > 2e-3*math.Max(1, math.Abs(want)) {
			t.Errorf("without co2, %s: %v; a run without it gives %v", col, got, want)
		}
	}
	// the aerosol and volcanic rows cool
	if num(t, cell(t, v.Attribution, "aerosol_erf", "warming (K)")) >= 0 {
		t.Error("aerosol warms")
	}
	// trends side by side: the model's trend lies inside the record's interval
	lo := num(t, cell(t, v.Trends, "record surface_anomaly", "95% low"))
	hi := num(t, cell(t, v.Trends, "record surface_anomaly", "95% high"))
	m := num(t, cell(t, v.Trends, "model, all forcings", "trend (K per decade)"))
	if m < lo || m > hi {
		t.Errorf("model trend %v outside the record's interval %v to %v", m, lo, hi)
	}
	if len(v.Trends.Rows) != 2+1+6 || len(v.RecordTrends) != 2 {
		t.Errorf("trends table %d rows", len(v.Trends.Rows))
	}
	if n := strings.Count(v.TrendsSVG, `class="hl-errorbar"`); n != 2 {
		t.Errorf("trend bars have %d error bars, want one per record", n)
	}
	if n := strings.Count(v.AttributionSVG, `class="hl-bar"`); n != 6+1+2 {
		t.Errorf("attribution bars %d", n)
	}
	if _, err := json.Marshal(v); err != nil {
		t.Errorf("view does not marshal: %v", err)
	}
	writeSVGs(t, "run", map[string]string{"forcing": v.ForcingSVG, "run": v.RunSVG, "heat": v.HeatSVG, "attr": v.AttributionSVG, "trends": v.TrendsSVG})
}

// writeSVGs writes charts to $HL_SVG_DIR when set (to look at them).
func writeSVGs(t *testing.T, stem string, m map[string]string) {
	dir := os.Getenv("HL_SVG_DIR")
	if dir == "" {
		return
	}
	for k, s := range m {
		if err := os.WriteFile(filepath.Join(dir, stem+"-"+k+".svg"), []byte(s), 0o644); err != nil {
			t.Error(err)
		}
	}
}

// TestResponseFigureHeat: the heat chart's model line passes through the
// record: with the demo's parameters (truth.json) and the ocean share, the
// model's heat gained and the record (built from it plus noise) differ by
// an offset only, so after the offset their differences are small.
func TestResponseFigureHeat(t *testing.T) {
	w := demoWorkspace(t)
	truth := demoTruth(t)
	model := truth["model"].(map[string]any)
	q := demoResponseRequest(w)
	q.Respond.Model = ModelSettings{Lambda: fptr(model["lambda_w_m2_per_k"].(float64)), Gamma: fptr(model["gamma_w_m2_per_k"].(float64))}
	v, err := w.ResponseFigure(q)
	if err != nil {
		t.Fatal(err)
	}
	heat, _ := w.Find(q.Heat)
	var worst float64
	for i, y := range heat.Values {
		if m := respHeatAt(v.Response.Run, heat.Times[i]); !math.IsNaN(y) && !math.IsNaN(m) {
			worst = math.Max(worst, math.Abs(y-(0.91*m+v.HeatOffset)))
		}
	}
	// the generator's heat noise and the spin-up's guessed history
	// (truth.json) allow some ZJ; a wrong share or unit gives hundreds
	if worst > 40 || worst == 0 {
		t.Errorf("largest heat misfit %v ZJ", worst)
	}
	// the model's heat at a step's end equals the run's own value
	r := v.Response.Run
	if got := respHeatAt(r, r.StepStart(10)+1.0/12); math.Abs(got-r.HeatZJ[10]) > 1e-9 {
		t.Errorf("heat at the end of step 10: %v, run %v", got, r.HeatZJ[10])
	}
	if !math.IsNaN(respHeatAt(r, 1800)) {
		t.Error("heat before the run")
	}
}

// TestResponseFigureErrors: user mistakes come back as errors naming the
// setting; a window outside the run keeps the run and says why.
func TestResponseFigureErrors(t *testing.T) {
	w := demoWorkspace(t)
	q := demoResponseRequest(w)
	q.Respond.Windows = [][2]string{{"2090", "2095"}}
	v, err := w.ResponseFigure(q)
	if err != nil || v.AttributionErr == "" || !strings.Contains(v.AttributionErr, "2090") || v.AttributionSVG != "" || v.RunSVG == "" {
		t.Errorf("window outside the run: %v, attribution error %q", err, v.AttributionErr)
	}
	for what, bad := range map[string]func(*ResponseRequest){
		"C":          func(q *ResponseRequest) { q.Respond.Model.C = fptr(-5) },
		"record":     func(q *ResponseRequest) { q.Records = []string{"nothing"} },
		"heat":       func(q *ResponseRequest) { q.Heat = "nothing" },
		"heat share": func(q *ResponseRequest) { q.HeatShare = -1 },
		"scale":      func(q *ResponseRequest) { q.Respond.Forcing.Components[0].Scale = fptr(0) },
	} {
		q := demoResponseRequest(w)
		bad(&q)
		if _, err := w.ResponseFigure(q); err == nil || !strings.Contains(err.Error(), what) {
			t.Errorf("%s: error %v", what, err)
		}
	}
}

// TestResponseFitFigureDemo: known truth (truth.json). The default fit of
// the Response view (lambda, gamma and the aerosol scale free, with the
// ocean heat and the ocean index) recovers lambda and the aerosol scale
// within their intervals; the tables show them with standard errors; the
// drivers' table gives the index its lag back within a month.
func TestResponseFitFigureDemo(t *testing.T) {
	w := demoWorkspace(t)
	truth := demoTruth(t)
	d := w.ResponseDefaults()
	q := demoResponseRequest(w)
	s := q.Respond
	s.Fit = &ResponseFitSettings{Target: d.Record, Free: d.Free, Heat: d.Heat}
	for _, n := range d.Drivers {
		s.Fit.Drivers = append(s.Fit.Drivers, AdjustDriver{Name: n})
	}
	v, err := w.ResponseFitFigure(s)
	if err != nil {
		t.Fatal(err)
	}
	model := truth["model"].(map[string]any)
	for name, want := range map[string]float64{"lambda": model["lambda_w_m2_per_k"].(float64), "aerosol": 1} {
		lo := num(t, cell(t, v.Estimates, name, "95% low"))
		hi := num(t, cell(t, v.Estimates, name, "95% high"))
		se := num(t, cell(t, v.Estimates, name, "standard error"))
		if lo > want || hi < want || !(se > 0) {
			t.Errorf("%s: %v to %v (SE %v), truth %v", name, lo, hi, se, want)
		}
	}
	ecs := num(t, cell(t, v.Implied, "ECS", "estimate"))
	if math.Abs(ecs-model["ecs_k"].(float64)) > 0.5 {
		t.Errorf("ECS %v, truth %v", ecs, model["ecs_k"])
	}
	if v.Drivers == nil || len(v.Drivers.Rows) != 1 {
		t.Fatalf("drivers table %+v", v.Drivers)
	}
	lag := num(t, v.Drivers.Rows[0][1])
	if math.Abs(lag-truth["surface"].(map[string]any)["index_lag_months"].(float64)) > 1 {
		t.Errorf("index lag %v", lag)
	}
	if v.Residual == nil || len(v.Residual.Rows) != 1 || v.HeatSVG == "" {
		t.Errorf("residual trends %+v, heat chart %v", v.Residual, v.HeatSVG != "")
	}
	for _, name := range []string{"surface_anomaly", "forced response", "fitted, with drivers"} {
		if !strings.Contains(v.FitSVG, `data-series="`+name+`"`) {
			t.Errorf("fit chart lacks %s", name)
		}
	}
	if _, err := json.Marshal(v); err != nil {
		t.Errorf("fit view does not marshal: %v", err)
	}
	writeSVGs(t, "fit", map[string]string{"fit": v.FitSVG, "heat": v.HeatSVG})

	// a combination the data cannot separate is refused
	s.Fit = &ResponseFitSettings{Target: d.Record, Free: []string{"lambda", "scale:co2", "scale:ch4", "scale:n2o", "scale:aod", "scale:tsi", "scale:aerosol_erf"}}
	if _, err := w.ResponseFitFigure(s); err == nil || !strings.Contains(err.Error(), "lambda cannot be free") {
		t.Errorf("lambda with every scale: %v", err)
	}
	s.Fit = nil
	if _, err := w.ResponseFitFigure(s); err == nil {
		t.Error("no fit accepted")
	}
}

// TestResponseFitAnnualTarget: an annual record against a monthly forcing
// is fitted on the model's annual means, and the chart's forced part sits
// on the record's years.
func TestResponseFitAnnualTarget(t *testing.T) {
	w := demoWorkspace(t)
	rec, err := w.Find("surface_anomaly")
	if err != nil {
		t.Fatal(err)
	}
	ann := rec.AnnualMeans(12)
	ann.Name, ann.Source = "surface_annual", "annual.csv"
	w.Files = append(w.Files, Loaded{File: "annual.csv", Result: &series.Result{Series: []*series.Series{ann}}})
	q := demoResponseRequest(w)
	s := q.Respond
	s.Fit = &ResponseFitSettings{Target: "surface_annual", Free: []string{"lambda"}}
	v, err := w.ResponseFitFigure(s)
	if err != nil {
		t.Fatal(err)
	}
	m := regexp.MustCompile(`data-series="fitted forced response" d="M([^"]*)"`).FindStringSubmatch(v.FitSVG)
	if m == nil || strings.Count(m[1], " ")+2 < 70 {
		t.Errorf("forced response line of the annual fit: %v", m != nil)
	}
}

// BenchmarkResponseFigure: the run with its charts and tables, as the
// page makes it on every change of a setting.
func BenchmarkResponseFigure(b *testing.B) {
	var files []File
	for _, n := range []string{"tessary_surface.csv", "tessary_forcing.csv", "tessary_ocean_heat.csv"} {
		data, err := os.ReadFile(filepath.Join("..", "..", "testdata", "demo", n))
		if err != nil {
			b.Fatal(err)
		}
		files = append(files, File{n, data})
	}
	w := NewWorkspace(files, series.Options{})
	q := demoResponseRequest(w)
	for b.Loop() {
		if _, err := w.ResponseFigure(q); err != nil {
			b.Fatal(err)
		}
	}
}
