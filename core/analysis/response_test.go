package analysis

import (
	"encoding/json"
	"math"
	"strings"
	"testing"

	"heatledger/core/ebm"
)

func fptr(v float64) *float64 { return &v }
func iptr(v int) *int         { return &v }

// demoForcingSettings are the demo generator's forcing choices
// (truth.json: gases from pre-industrial, volcanic relative to AOD 0.003,
// solar relative to 1361 W m-2, the aerosol column as ERF).
func demoForcingSettings() ForcingSettings {
	return ForcingSettings{Components: []ForcingComponent{
		{Series: "co2", Kind: "co2"}, {Series: "ch4", Kind: "ch4"}, {Series: "n2o", Kind: "n2o"},
		{Series: "aerosol_erf", Kind: "erf"},
		{Series: "aod", Kind: "aod", Reference: "0.003"},
		{Series: "tsi", Kind: "tsi", Reference: "1361"},
	}}
}

// TestForcingDemo: the forcing through the workspace matches the demo
// generator's 2025 total (truth.json, known truth).
func TestForcingDemo(t *testing.T) {
	w := demoWorkspace(t)
	f, err := w.Forcing(demoForcingSettings())
	if err != nil {
		t.Fatal(err)
	}
	truth := demoTruth(t)
	want := truth["outputs"].(map[string]any)["forcing_2025_mean_w_m2"].(map[string]any)["total"].(float64)
	var got float64
	for _, v := range f.Total.Values[f.Len()-12:] {
		got += v / 12
	}
	if math.Abs(got-want) > 5e-6 {
		t.Errorf("2025 total %v, generator %v", got, want)
	}
	tab := ForcingTable(f)
	if len(tab.Rows) != 912 || tab.Columns[0] != "time" || tab.Columns[7] != "total (W m-2)" || tab.Rows[0][0] != "1950-01" {
		t.Errorf("table %v, %d rows, first %v", tab.Columns, len(tab.Rows), tab.Rows[0])
	}
	for _, bad := range []ForcingSettings{
		{},
		{Components: []ForcingComponent{{Series: "nothing", Kind: "co2"}}},
		{Components: []ForcingComponent{{Series: "co2", Kind: "co2", Scale: fptr(0)}}},
		{Components: []ForcingComponent{{Series: "co2", Kind: "co2", Reference: "lots"}}},
		{Components: []ForcingComponent{{Series: "co2", Kind: "co2", Efficacy: fptr(-1)}}},
		{Components: []ForcingComponent{{Series: "co2", Kind: "co2"}}, VolcanicWPerM2PerAOD: fptr(0)},
	} {
		if _, err := w.Forcing(bad); err == nil {
			t.Errorf("%+v accepted", bad)
		}
	}
}

// TestModelSettings: presets, physical parameters and ECS/TCR resolve as
// documented; contradictions are refused.
func TestModelSettings(t *testing.T) {
	p, err := ModelSettings{}.Params()
	if err != nil || p != ebm.DefaultParams() {
		t.Errorf("defaults %+v %v", p, err)
	}
	p, err = ModelSettings{Preset: "geoffroy2013a", Lambda: fptr(1.5)}.Params()
	if err != nil || p.LambdaWPerM2K != 1.5 || p.CWYrPerM2K != 7.3 {
		t.Errorf("preset with lambda %+v %v", p, err)
	}
	p, err = ModelSettings{ECS: fptr(3), TCR: fptr(1.8)}.Params()
	d, _ := ebm.Derive(p)
	if err != nil || math.Abs(d.ECSK-3) > 1e-12 || math.Abs(d.TCRK-1.8) > 1e-9 {
		t.Errorf("ECS/TCR %+v %+v %v", p, d, err)
	}
	p, err = ModelSettings{ECS: fptr(2.5)}.Params()
	if err != nil || math.Abs(p.LambdaWPerM2K-3.93/2.5) > 1e-12 {
		t.Errorf("ECS only %+v %v", p, err)
	}
	for _, bad := range []ModelSettings{
		{Model: "three"}, {Preset: "none"}, {Lambda: fptr(-1)}, {ECS: fptr(3), Lambda: fptr(1)}, {TCR: fptr(2)},
		{ECS: fptr(3), TCR: fptr(2), Gamma: fptr(1)}, {Model: "onebox", Gamma: fptr(0.5)}, {TauFast: fptr(4)},
		{ECS: fptr(3), TCR: fptr(2), TauFast: fptr(4), C: fptr(8)},
	} {
		if _, err := bad.Params(); err == nil {
			t.Errorf("%+v accepted", bad)
		}
	}
}

// TestRespondDemo: a run with attribution, then fits on the demo world.
// Known truth (truth.json): with the ocean heat content and the ocean
// index fitted together with the model ("forced response plus ENSO"),
// lambda, gamma and the aerosol scale are recovered within their
// intervals, the index gets its lag (3 months, within one) and coefficient
// (0.1 K per K) back, and the residual trend over 1979-2024 is compatible with zero.
func TestRespondDemo(t *testing.T) {
	w := demoWorkspace(t)
	truth := demoTruth(t)
	r, err := w.Respond(RespondSettings{Forcing: demoForcingSettings(), Windows: [][2]string{{"1979", "2024"}}, Record: "surface_anomaly"})
	if err != nil {
		t.Fatal(err)
	}
	if r.Fit != nil || r.Run == nil || r.Model != "twolayer" || len(r.Attribution) != 1 || r.Attribution[0].Record == nil || r.Run.Final.TimeYear != 2026 {
		t.Fatalf("run: %+v", r)
	}
	if _, err := json.Marshal(r); err != nil {
		t.Errorf("response does not marshal: %v", err)
	}
	tab := ResponseTable(r)
	if len(tab.Rows) != 912 || len(tab.Columns) != 12 {
		t.Errorf("run table %v, %d rows", tab.Columns, len(tab.Rows))
	}

	r, err = w.Respond(RespondSettings{Forcing: demoForcingSettings(), Windows: [][2]string{{"1979", "2024"}},
		Fit: &ResponseFitSettings{Target: "surface_anomaly", Free: []string{"lambda", "gamma", "aerosol"}, Heat: "ocean_heat",
			Drivers: []AdjustDriver{{Name: "ocean_index", MinLag: iptr(0), MaxLag: iptr(6)}}}})
	if err != nil {
		t.Fatal(err)
	}
	model := truth["model"].(map[string]any)
	want := map[string]float64{"lambda": model["lambda_w_m2_per_k"].(float64), "gamma": model["gamma_w_m2_per_k"].(float64),
		"aerosol": truth["forcing"].(map[string]any)["aerosol_scale"].(float64)}
	for name, v := range want {
		e, ok := r.Fit.Estimate(name)
		if !ok || e.Low > v || e.High < v {
			t.Errorf("%s = %+v, truth %v", name, e, v)
		}
	}
	surf := truth["surface"].(map[string]any)
	// the index is strongly autocorrelated (AR(2), root modulus 0.96), so
	// neighbouring lags fit almost equally well: within one month
	if r.Adjust == nil || len(r.Adjust.Drivers) != 1 || math.Abs(float64(r.Adjust.Drivers[0].LagMonths)-surf["index_lag_months"].(float64)) > 1 {
		t.Fatalf("adjust %+v", r.Adjust)
	}
	e, ok := r.Fit.Estimate("ocean_index")
	if c := surf["index_coefficient_k"].(float64); !ok || e.Low > c || e.High < c {
		t.Errorf("index coefficient %+v, truth %v", e, c)
	}
	if len(r.ResidualTrends) != 1 || r.ResidualTrends[0].CILowPerDecade > 0 || r.ResidualTrends[0].CIHighPerDecade < 0 {
		t.Errorf("residual trends %+v", r.ResidualTrends)
	}
	if r.Params.LambdaWPerM2K != r.Fit.Params.LambdaWPerM2K || r.Forcing.Components[3].Scale == 1 {
		t.Errorf("response params %+v, aerosol scale %v", r.Params, r.Forcing.Components[3].Scale)
	}
	tab = ResponseTable(r)
	if len(tab.Columns) != 15 || !strings.Contains(strings.Join(tab.Columns, ","), "surface_anomaly (K),fitted (K),residual (K)") {
		t.Errorf("fit table columns %v", tab.Columns)
	}
	if _, err := json.Marshal(r); err != nil {
		t.Errorf("response does not marshal: %v", err)
	}

	for _, bad := range []RespondSettings{
		{Forcing: demoForcingSettings(), Fit: &ResponseFitSettings{}},
		{Forcing: demoForcingSettings(), Fit: &ResponseFitSettings{Target: "nothing"}},
		{Forcing: demoForcingSettings(), Fit: &ResponseFitSettings{Target: "surface_anomaly", Heat: "nothing"}},
		{Forcing: demoForcingSettings(), Fit: &ResponseFitSettings{Target: "surface_anomaly", HeatShare: fptr(-1)}},
		{Forcing: demoForcingSettings(), Spinup: "sideways"},
		{Forcing: demoForcingSettings(), Windows: [][2]string{{"2040", "2050"}}},
		{Forcing: demoForcingSettings(), Model: ModelSettings{Model: "onebox", C0: fptr(50)}},
	} {
		if _, err := w.Respond(bad); err == nil {
			t.Errorf("%+v accepted", bad)
		}
	}
}
