package forcing

import (
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"heatledger/core/series"
)

// TestMyhreDoubling: Myhre et al. 1998 (Geophys. Res. Lett. 25, 2715):
// 5.35 ln 2 = 3.708 W m-2 for doubled CO2 (../shared/CHECKS.md).
func TestMyhreDoubling(t *testing.T) {
	if f := CO2Myhre1998(556, 278); math.Abs(f-3.708) > 5e-4 {
		t.Errorf("doubled CO2: %v W m-2, want 3.708", f)
	}
	if f := CO2Myhre1998(300, 300); f != 0 {
		t.Errorf("no change: %v", f)
	}
}

// TestGasValuesAR5: the Myhre et al. 1998 CH4 and N2O expressions with the
// overlap term for 1750-2011 (CH4 722 -> 1803 ppb, N2O 270 -> 324.2 ppb)
// against IPCC AR5 WG1 table 8.2 (CH4 0.48, N2O 0.17 W m-2; from memory,
// and AR5's own inputs differ slightly: tolerance 0.02 W m-2). Etminan et
// al. 2016: doubled CO2 about 3.80 W m-2 and CH4 1750-2011 about 0.61 W
// m-2 (both from memory: tolerance 0.015).
func TestGasValuesAR5(t *testing.T) {
	if f := CH4Myhre1998(1803, 722, 270); math.Abs(f-0.48) > 0.02 {
		t.Errorf("CH4 1750-2011: %v W m-2, AR5 0.48", f)
	}
	if f := N2OMyhre1998(324.2, 270, 722); math.Abs(f-0.17) > 0.02 {
		t.Errorf("N2O 1750-2011: %v W m-2, AR5 0.17", f)
	}
	if f := CO2Etminan2016(556, 278, 270); math.Abs(f-3.80) > 0.015 {
		t.Errorf("Etminan doubled CO2: %v W m-2, want about 3.80", f)
	}
	if f := CH4Etminan2016(1803, 722, 324.2); math.Abs(f-0.61) > 0.015 {
		t.Errorf("Etminan CH4 1750-2011: %v W m-2, want about 0.61", f)
	}
	// every expression is zero at its reference, and the overlap term
	// lowers CH4 and N2O forcing
	if CH4Myhre1998(900, 900, 300) != 0 || N2OMyhre1998(300, 300, 900) != 0 || N2OEtminan2016(300, 300, 400, 1800) != 0 || CH4Etminan2016(1000, 1000, 300) != 0 {
		t.Error("non-zero forcing at the reference")
	}
	if CH4Myhre1998(1803, 722, 270) >= 0.036*(math.Sqrt(1803)-math.Sqrt(722)) {
		t.Error("overlap term does not reduce CH4 forcing")
	}
}

// TestVolcanicSolar: the aod factor (-20 AR6, -25 AR5/Hansen et al. 2005)
// and dTSI (1 - 0.29)/4.
func TestVolcanicSolar(t *testing.T) {
	if f := Volcanic(0.103, 0.003, DefaultVolcanicWPerM2PerAOD); math.Abs(f+2) > 1e-12 {
		t.Errorf("volcanic %v", f)
	}
	if f := Volcanic(0.1, 0, AR5VolcanicWPerM2PerAOD); math.Abs(f+2.5) > 1e-12 {
		t.Errorf("volcanic AR5 %v", f)
	}
	if f := Solar(1362, 1361, DefaultAlbedo); math.Abs(f-0.1775) > 1e-12 {
		t.Errorf("solar %v", f)
	}
}

func demo(t *testing.T) map[string]*series.Series {
	t.Helper()
	b, err := os.ReadFile(filepath.Join("..", "..", "testdata", "demo", "tessary_forcing.csv"))
	if err != nil {
		t.Fatal(err)
	}
	r, err := series.Read("tessary_forcing.csv", b, series.Options{})
	if err != nil {
		t.Fatal(err)
	}
	out := map[string]*series.Series{}
	for _, s := range r.Series {
		out[s.Name] = s
	}
	return out
}

// TestDemoForcingTruth: known truth. The demo generator
// (testdata/demo/gen.go) computed each component from the rounded values
// it wrote, with the settings in truth.json; the 2025 means of our
// components and total match its forcing_2025_mean_w_m2 (written to 6
// decimals).
func TestDemoForcingTruth(t *testing.T) {
	ss := demo(t)
	b, err := os.ReadFile(filepath.Join("..", "..", "testdata", "demo", "truth.json"))
	if err != nil {
		t.Fatal(err)
	}
	var truth struct {
		Forcing struct {
			AODBackground float64 `json:"aod_background"`
			TSIRef        float64 `json:"tsi_reference_w_m2"`
			Factor        float64 `json:"volcanic_factor_w_m2_per_aod"`
			Albedo        float64 `json:"solar_albedo"`
		} `json:"forcing"`
		Outputs struct {
			F2025 map[string]float64 `json:"forcing_2025_mean_w_m2"`
		} `json:"outputs"`
	}
	if err := json.Unmarshal(b, &truth); err != nil {
		t.Fatal(err)
	}
	r, err := Build([]Component{
		{Name: "co2", Kind: KindCO2, Series: ss["co2"]},
		{Name: "ch4", Kind: KindCH4, Series: ss["ch4"]},
		{Name: "n2o", Kind: KindN2O, Series: ss["n2o"]},
		{Name: "aerosol", Kind: KindERF, Series: ss["aerosol_erf"]},
		{Name: "volcanic", Kind: KindAOD, Series: ss["aod"], Reference: RefValue, ReferenceValue: truth.Forcing.AODBackground},
		{Name: "solar", Kind: KindTSI, Series: ss["tsi"], Reference: RefValue, ReferenceValue: truth.Forcing.TSIRef},
	}, Settings{VolcanicWPerM2PerAOD: truth.Forcing.Factor, Albedo: truth.Forcing.Albedo})
	if err != nil {
		t.Fatal(err)
	}
	if r.From != "1950-01" || r.To != "2025-12" || r.Len() != 912 || len(r.Warnings) != 0 {
		t.Fatalf("axis %s..%s (%d), warnings %v", r.From, r.To, r.Len(), r.Warnings)
	}
	mean2025 := func(s *series.Series) float64 {
		var m float64
		for _, v := range s.Values[900:] {
			m += v / 12
		}
		return m
	}
	for _, c := range r.Components {
		if got, want := mean2025(c.ERF), truth.Outputs.F2025[c.Name]; math.Abs(got-want) > 2e-6 {
			t.Errorf("%s: 2025 mean %v, generator %v", c.Name, got, want)
		}
	}
	if got, want := mean2025(r.Total), truth.Outputs.F2025["total"]; math.Abs(got-want) > 5e-6 {
		t.Errorf("total: 2025 mean %v, generator %v", got, want)
	}
	if r.Components[0].ReferenceMode != RefPreindustrial || r.Components[0].Reference != 278 {
		t.Errorf("co2 reference %+v", r.Components[0])
	}
}

func mk(name, unit string, first int, v ...float64) *series.Series {
	return series.New(name, unit, series.Annual, first, v)
}

// TestBuildAxisGapsReferences: the axis is the span every component covers;
// interior gaps are interpolated and counted; references resolve as
// documented; efficacy weights the effective total only.
func TestBuildAxisGapsReferences(t *testing.T) {
	nan := math.NaN()
	r, err := Build([]Component{
		{Kind: KindERF, Series: mk("a", "W m-2", 2000, nan, 1, 2, nan, 4, 5, 6), Efficacy: 2},
		{Kind: KindAOD, Series: mk("v", "", 2001, 0.1, 0.2, 0.3, 0.4, 0.5)},
		{Kind: KindTSI, Series: mk("s", "W/m2", 1999, 1360, 1361, 1362, 1363, 1364, 1365, 1366, 1367, 1368), Scale: 2},
		{Name: "g", Kind: KindERF, Series: mk("x", "W m-2", 2001, 1, 1, 1, 1, 1), Reference: RefFirst},
	}, Settings{})
	if err != nil {
		t.Fatal(err)
	}
	if r.From != "2001" || r.To != "2005" || r.Len() != 5 {
		t.Fatalf("axis %s..%s", r.From, r.To)
	}
	a, v, s, g := r.Components[0], r.Components[1], r.Components[2], r.Components[3]
	if a.Filled != 1 || a.ERF.Values[2] != 3 || len(r.Warnings) != 1 || !strings.Contains(r.Warnings[0], "interpolation") {
		t.Errorf("gap: %+v %v warnings %v", a, a.ERF.Values, r.Warnings)
	}
	// aod: default reference = first year (0.1); tsi: the mean over the axis (1364), scale 2
	if v.ReferenceMode != RefFirst || v.Reference != 0.1 || math.Abs(v.LastWPerM2-(-20*0.4)) > 1e-12 {
		t.Errorf("aod %+v", v)
	}
	if s.ReferenceMode != RefMean || s.Reference != 1364 || math.Abs(s.FirstWPerM2-2*(-2)*0.71/4) > 1e-12 {
		t.Errorf("tsi %+v", s)
	}
	if g.Name != "g" || g.Series != "x" || g.LastWPerM2 != 0 {
		t.Errorf("named component %+v", g)
	}
	for i := range 5 {
		tot := a.ERF.Values[i] + v.ERF.Values[i] + s.ERF.Values[i] + g.ERF.Values[i]
		eff := 2*a.ERF.Values[i] + v.ERF.Values[i] + s.ERF.Values[i] + g.ERF.Values[i]
		if math.Abs(r.Total.Values[i]-tot) > 1e-12 || math.Abs(r.Effective.Values[i]-eff) > 1e-12 {
			t.Errorf("step %d: total %v (want %v), effective %v (want %v)", i, r.Total.Values[i], tot, r.Effective.Values[i], eff)
		}
	}
	// Rescaled and Without rebuild the totals.
	rs, err := r.Rescaled(map[string]float64{"v": 3})
	if err != nil || rs.Components[1].Scale != 3 || math.Abs(rs.Total.Values[4]-(r.Total.Values[4]+2*v.ERF.Values[4])) > 1e-12 || r.Components[1].Scale != 1 {
		t.Errorf("rescaled: %v %+v", err, rs.Components[1])
	}
	wo, err := r.Without("a")
	if err != nil || len(wo.Components) != 3 || math.Abs(wo.Effective.Values[4]-(r.Effective.Values[4]-2*a.ERF.Values[4])) > 1e-12 {
		t.Errorf("without: %v", err)
	}
	if _, err := r.Without("a", "v", "s", "g"); err == nil {
		t.Error("removing every component accepted")
	}
}

// TestEtminanCompanions: with the Etminan et al. 2016 expressions the other
// gases come from the components present, else from the pre-industrial
// values.
func TestEtminanCompanions(t *testing.T) {
	co2 := mk("c", "ppm", 2000, 400, 410)
	n2o := mk("n", "ppb", 2000, 330, 331)
	r, err := Build([]Component{{Kind: KindCO2, Series: co2}, {Kind: KindN2O, Series: n2o}}, Settings{Formula: "etminan"})
	if err != nil {
		t.Fatal(err)
	}
	if got, want := r.Components[0].ERF.Values[1], CO2Etminan2016(410, 278, 331); got != want {
		t.Errorf("co2 %v, want %v", got, want)
	}
	if got, want := r.Components[1].ERF.Values[0], N2OEtminan2016(330, 270, 400, 722); got != want {
		t.Errorf("n2o %v, want %v", got, want)
	}
	if r.Settings.Formula != FormulaEtminan2016 || !strings.Contains(r.Components[0].Formula, "from memory") {
		t.Errorf("formula %q %q", r.Settings.Formula, r.Components[0].Formula)
	}
}

// TestBuildErrors: bad input is refused with a message naming the component
// and what was expected.
func TestBuildErrors(t *testing.T) {
	ok := mk("c", "ppm", 2000, 300, 310)
	monthly := series.New("m", "W m-2", series.Monthly, series.MonthIndex(2000, 1), []float64{1, 2, 3})
	for _, c := range []struct {
		comps []Component
		set   Settings
		want  string
	}{
		{nil, Settings{}, "no forcing components"},
		{[]Component{{Kind: "ozone", Series: ok}}, Settings{}, "kind"},
		{[]Component{{Kind: KindCO2}}, Settings{}, "no series"},
		{[]Component{{Kind: KindCO2, Series: mk("c", "ppb", 2000, 300000)}}, Settings{}, "expects ppm"},
		{[]Component{{Kind: KindCO2, Series: mk("c", "", 2000, 0, 1)}}, Settings{}, "non-positive"},
		{[]Component{{Kind: KindCH4, Series: mk("m", "", 2000, 1.8, 1.9)}}, Settings{}, "ppm?"},
		{[]Component{{Kind: KindN2O, Series: mk("n", "ppm", 2000, 0.3)}}, Settings{}, "expects ppb"},
		{[]Component{{Kind: KindCO2, Series: ok}, {Kind: KindERF, Series: monthly}}, Settings{}, "same resolution"},
		{[]Component{{Kind: KindCO2, Series: ok}, {Kind: KindERF, Series: mk("e", "", 2010, 1)}}, Settings{}, "no common span"},
		{[]Component{{Kind: KindCO2, Series: ok}, {Kind: KindCO2, Series: ok}}, Settings{}, "used twice"},
		{[]Component{{Kind: KindAOD, Series: ok, Reference: RefPreindustrial}}, Settings{}, "no pre-industrial"},
		{[]Component{{Kind: KindCO2, Series: ok, Reference: "yesterday"}}, Settings{}, "reference"},
		{[]Component{{Kind: KindCO2, Series: ok, Reference: RefValue, ReferenceValue: -1}}, Settings{}, "positive"},
		{[]Component{{Kind: KindCO2, Series: mk("c", "", 2000, math.NaN())}}, Settings{}, "no values"},
		{[]Component{{Kind: KindCO2, Series: ok, Efficacy: -1}}, Settings{}, "efficacy"},
		{[]Component{{Kind: KindCO2, Series: ok}}, Settings{Formula: "ipcc"}, "formula"},
		{[]Component{{Kind: KindCO2, Series: ok}}, Settings{Albedo: 1.2}, "albedo"},
	} {
		_, err := Build(c.comps, c.set)
		if err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%+v: error %v, want %q", c.comps, err, c.want)
		}
	}
	for _, s := range []string{"first", "mean", "preindustrial", "pi", "0.003", ""} {
		if _, _, err := ParseReference(s); err != nil {
			t.Errorf("ParseReference(%q): %v", s, err)
		}
	}
	if _, _, err := ParseReference("soon"); err == nil {
		t.Error("ParseReference accepted text")
	}
}
