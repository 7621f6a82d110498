package analysis

import (
	"context"
	"encoding/json"
	"errors"
	"math"
	"strings"
	"testing"

	"heatledger/core/budget"
	"heatledger/core/series"
)

func TestHeatDemo(t *testing.T) {
	w := demoWorkspace(t)
	truth := demoTruth(t)
	want := truth["outputs"].(map[string]any)["mean_imbalance_2005_2020_w_m2"].(float64)
	r, err := w.Heat(HeatSettings{Series: "ocean_heat", HeatInput: HeatInput{OceanFraction: 0.91}, From: "2005", To: "2020"})
	if err != nil {
		t.Fatal(err)
	}
	// the demo world's known truth (testdata/demo/truth.json)
	if !(*r.ImbalanceCILowWPerM2 <= want && want <= *r.ImbalanceCIHighWPerM2) || r.Unit != budget.UnitZJ || r.AreaM2 != budget.EarthAreaM2 {
		t.Errorf("imbalance %g (%g to %g), truth %g", *r.ImbalanceWPerM2, *r.ImbalanceCILowWPerM2, *r.ImbalanceCIHighWPerM2, want)
	}
	if r.Rates == nil || r.Rates.Len() != 76 {
		t.Errorf("rate series %v", r.Rates)
	}
	oc, err := w.Heat(HeatSettings{Series: "ocean_heat", HeatInput: HeatInput{Area: "ocean"}, From: "2005", To: "2020"})
	if err != nil || math.Abs(oc.RateWPerM2/r.RateWPerM2-budget.EarthAreaM2/budget.OceanAreaM2) > 1e-9 {
		t.Errorf("ocean area: %v %v", oc, err)
	}
	for _, s := range []HeatSettings{{}, {Series: "nope"}, {Series: "ocean_heat", HeatInput: HeatInput{Area: "moon"}},
		{Series: "ocean_heat", HeatInput: HeatInput{ContentArea: "x"}}, {Series: "surface_anomaly"}} {
		if _, err := w.Heat(s); err == nil {
			t.Errorf("%+v: no error", s)
		}
	}
}

// demoForcing is the demo world's total effective radiative forcing,
// rebuilt from tessary_forcing.csv with the generator's own formulas
// (testdata/demo/gen.go: Myhre et al. 1998 for CO2, CH4 and N2O with
// their overlap term, -20 W m-2 per unit AOD above 0.003, solar
// dTSI 0.71/4 from 1361 W m-2, the aerosol column as is).
func demoForcing(t *testing.T, w *Workspace) *series.Series {
	get := func(n string) *series.Series {
		s, err := w.Find(n)
		if err != nil {
			t.Fatal(err)
		}
		return s
	}
	co2, ch4, n2o, aod, tsi, aer := get("co2"), get("ch4"), get("n2o"), get("aod"), get("tsi"), get("aerosol_erf")
	ov := func(m, n float64) float64 {
		mn := m * n
		return 0.47 * math.Log(1+2.01e-5*math.Pow(mn, 0.75)+5.31e-15*m*math.Pow(mn, 1.52))
	}
	v := make([]float64, co2.Len())
	for i := range v {
		c, m, n := co2.Values[i], ch4.Values[i], n2o.Values[i]
		v[i] = 5.35*math.Log(c/278) +
			0.036*(math.Sqrt(m)-math.Sqrt(722)) - (ov(m, 270) - ov(722, 270)) +
			0.12*(math.Sqrt(n)-math.Sqrt(270)) - (ov(722, n) - ov(722, 270)) +
			aer.Values[i] - 20*(aod.Values[i]-0.003) + (tsi.Values[i]-1361)*0.71/4
	}
	return series.New("erf", "W m-2", series.Monthly, co2.First, v)
}

// The demo world's known truth: its two-layer model has ECS = F2x/lambda
// = 3.93/1.2 = 3.275 K (truth.json). The energy budget from its records
// (surface temperature, forcing rebuilt from its inputs, imbalance from its
// ocean heat content / 0.91) over 1955-1970 and 2006-2025, with F2x the
// model's own 3.93 W m-2, brackets it within the 5-95 % range.
func TestSensitivityDemo(t *testing.T) {
	w := demoWorkspace(t)
	ecs := demoTruth(t)["model"].(map[string]any)["ecs_k"].(float64)
	f2x := budget.Normal(3.93, 0)
	s := SensitivitySettings{
		Base: [2]string{"1955", "1970"}, Final: [2]string{"2006", "2025"},
		DT:  BudgetQuantity{Series: "surface_anomaly"},
		DF:  []BudgetQuantity{{Name: "total", Data: demoForcing(t, w), Sampling: "none"}},
		DN:  BudgetQuantity{Series: "ocean_heat", Heat: &HeatInput{OceanFraction: 0.91}},
		F2x: &f2x, Draws: 50000, Seed: 1,
		Sweep: &SweepSettings{FinalYears: 20, Draws: 5000},
	}
	var last, total, calls int
	rep, err := w.Sensitivity(s, context.Background(), func(d, tot int) {
		if d < last {
			t.Errorf("progress went back: %d after %d", d, last)
		}
		last, total = d, tot
		calls++
	})
	if err != nil {
		t.Fatal(err)
	}
	r := rep.Result
	if !(r.ECS.P05 <= ecs && ecs <= r.ECS.P95) {
		t.Errorf("demo ECS %.3f (5-95 %%: %.3f to %.3f), truth %.3f", r.ECS.Median, r.ECS.P05, r.ECS.P95, ecs)
	}
	t.Logf("demo: ECS central %.3f median %.3f (%.3f to %.3f), TCR %.3f; truth ECS %.3f", r.ECS.Central, r.ECS.Median, r.ECS.P05, r.ECS.P95, r.TCR.Median, ecs)
	if rep.Sweep == nil || last != total || total != 50000+len(rep.Sweep.Points)*5000 || calls < 10 {
		t.Fatalf("progress %d of %d in %d calls; sweep %v", last, total, calls, rep.Sweep != nil)
	}
	// the sweep's 20-year final periods start after the base period (the
	// first is 1971-1990) and end by 2025, the last complete year
	pts := rep.Sweep.Points
	if pts[0].EndYear != 1990 || pts[len(pts)-1].EndYear != 2025 {
		t.Errorf("sweep ends %d to %d", pts[0].EndYear, pts[len(pts)-1].EndYear)
	}
	// the analysis file round-trips (Data is not saved)
	b, err := json.Marshal(s)
	if err != nil {
		t.Fatal(err)
	}
	var back SensitivitySettings
	if err := json.Unmarshal(b, &back); err != nil || back.DN.Heat.OceanFraction != 0.91 || back.Base != s.Base || back.DF[0].Sampling != "none" || back.Sweep.FinalYears != 20 {
		t.Errorf("settings round trip: %s %v", b, err)
	}
	if !strings.Contains(string(b), `"dT":{"series":"surface_anomaly"}`) {
		t.Errorf("settings JSON %s", b)
	}
	// cancel
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	if _, err := w.Sensitivity(s, ctx, nil); !errors.Is(err, context.Canceled) {
		t.Errorf("cancelled: %v", err)
	}
}

func TestSensitivityTypedAndGregory(t *testing.T) {
	w := demoWorkspace(t)
	var s SensitivitySettings
	js := `{"dT":{"typed":{"dist":"normal","mean":0.8,"sd":0.1}},
	        "dF":[{"name":"greenhouse","typed":{"dist":"normal","mean":3.2,"sd":0.3}},
	              {"name":"aerosol","typed":{"dist":"lognormal","p05":-1.6,"p95":-0.3}}],
	        "dN":{"typed":{"dist":"uniform","low":0.4,"high":0.6}},
	        "draws":20000,"seed":3}`
	if err := json.Unmarshal([]byte(js), &s); err != nil {
		t.Fatal(err)
	}
	rep, err := w.Sensitivity(s, nil, nil)
	if err != nil {
		t.Fatal(err)
	}
	aerMedian := -math.Sqrt(1.6 * 0.3)
	want := 3.93 * 0.8 / (3.2 + aerMedian - 0.5)
	if math.Abs(rep.Result.ECS.Central-want) > 1e-12 || rep.Result.Draws != 20000 || rep.Sweep != nil || rep.Gregory != nil {
		t.Errorf("typed: central %g want %g", rep.Result.ECS.Central, want)
	}
	// Gregory regression with N handed in directly (as from an energy
	// balance model run): N = 2 - 1.25 T exactly plus a small wiggle
	T, _ := w.Find("surface_anomaly")
	T = T.AnnualMeans(12)
	nv := make([]float64, T.Len())
	for i, x := range T.Values {
		nv[i] = 2 - 1.25*x + 0.02*math.Sin(float64(i))
	}
	tAnnual := series.New("t_annual", "K", series.Annual, T.First, T.Values)
	w2 := &Workspace{Files: append(w.Files, Loaded{Result: &series.Result{Series: []*series.Series{tAnnual}}})}
	s.Gregory = &GregorySettings{T: "t_annual", NData: series.New("N", "W m-2", series.Annual, T.First, nv), Noise: "white"}
	rep, err = w2.Sensitivity(s, nil, nil)
	if err != nil {
		t.Fatal(err)
	}
	if g := rep.Gregory; g == nil || math.Abs(g.LambdaWPerM2PerK-1.25) > 0.01 || math.Abs(g.ForcingWPerM2-2) > 0.01 {
		t.Errorf("Gregory %+v", rep.Gregory)
	}
	for name, bad := range map[string]SensitivitySettings{
		"missing series": {DT: BudgetQuantity{Series: "nope"}, DF: s.DF, DN: s.DN},
		"no dF":          {DT: s.DT, DN: s.DN},
		"bad heat area":  {DT: s.DT, DF: s.DF, DN: BudgetQuantity{Series: "ocean_heat", Heat: &HeatInput{Area: "moon"}}},
		"gregory no T":   {DT: s.DT, DF: s.DF, DN: s.DN, Gregory: &GregorySettings{N: "ocean_heat", T: "nope"}},
		"sweep typed":    {DT: s.DT, DF: s.DF, DN: s.DN, Sweep: &SweepSettings{}},
	} {
		if _, err := w.Sensitivity(bad, nil, nil); err == nil {
			t.Errorf("%s: no error", name)
		}
	}
}
