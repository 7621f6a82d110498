package budget

import (
	"encoding/json"
	"math"
	"math/rand/v2"
	"os"
	"strings"
	"testing"

	"heatledger/core/series"
	"heatledger/core/trend"
)

// 1 ZJ/yr over Earth's surface (5.10e14 m2, 365.25-day year) is
// 0.0621 W m-2 (../shared/CHECKS.md).
func TestZJPerYearOverEarth(t *testing.T) {
	got := ZJPerYearToWPerM2(1, EarthAreaM2)
	if math.Round(got*1e4)/1e4 != 0.0621 {
		t.Fatalf("1 ZJ/yr = %.6f W m-2, want 0.0621", got)
	}
	// the conversion is linear in the rate and inverse in the area
	if r := ZJPerYearToWPerM2(10, EarthAreaM2/2); math.Abs(r-20*got) > 1e-12 {
		t.Fatalf("10 ZJ/yr over half the area = %g, want %g", r, 20*got)
	}
}

// IPCC AR6 (as ../shared/CHECKS.md gives it): 152 ZJ over 2006-2018 is
// 0.79 W m-2 and 282 ZJ over 1971-2006 is 0.50 W m-2, over Earth's
// surface. Only the interval length end - start (12 and 35 years)
// reproduces both; counting the years inclusively (13 and 36) does not.
func TestIPCCAR6HeatingRates(t *testing.T) {
	cases := []struct {
		zj, from, to, want float64
	}{
		{152, 2006, 2018, 0.79},
		{282, 1971, 2006, 0.50},
	}
	for _, c := range cases {
		got := ChangeToWPerM2(c.zj, c.to-c.from, EarthAreaM2)
		if math.Round(got*100)/100 != c.want {
			t.Errorf("%g ZJ over %g-%g: %.4f W m-2, want %.2f", c.zj, c.from, c.to, got, c.want)
		}
		incl := ChangeToWPerM2(c.zj, c.to-c.from+1, EarthAreaM2)
		if math.Round(incl*100)/100 == c.want {
			t.Errorf("%g ZJ over %g-%g counted inclusively also gives %.2f: the convention test is void", c.zj, c.from, c.to, c.want)
		}
	}
}

func noisyLine(n int, first int, slope, sd float64, seed uint64) []float64 {
	r := rand.New(rand.NewPCG(seed, 7))
	v := make([]float64, n)
	for i := range v {
		v[i] = slope*float64(i) + sd*r.NormFloat64()
	}
	return v
}

// The heating rate is the trend engine's slope converted: checked against
// trend.Window directly, and invariant to the unit the same heat content
// is written in (ZJ, J, 1e22 J, J m-2 per ocean area).
func TestHeatUnitsAndTrend(t *testing.T) {
	zj := noisyLine(40, 1980, 9, 4, 1)
	s := series.New("ohc", "ZJ", series.Annual, 1980, zj)
	h, err := Heat(s, HeatOptions{Noise: "ar1"})
	if err != nil {
		t.Fatal(err)
	}
	tr, err := trend.Window(s.Times, s.Values, trend.Options{Noise: "ar1"})
	if err != nil {
		t.Fatal(err)
	}
	conv := ZJPerYearToWPerM2(1, EarthAreaM2)
	if math.Abs(h.ZJPerYear-tr.SlopePerYear) > 1e-12 || math.Abs(h.RateWPerM2-tr.SlopePerYear*conv) > 1e-12 ||
		math.Abs(h.StderrWPerM2-tr.StderrPerDecade/10*conv) > 1e-12 || math.Abs(h.CIHighWPerM2-tr.CIHighPerDecade/10*conv) > 1e-12 {
		t.Fatalf("heat %+v disagrees with the trend %+v", h, tr)
	}
	if h.AreaM2 != EarthAreaM2 || h.Unit != UnitZJ {
		t.Fatalf("area %g unit %s", h.AreaM2, h.Unit)
	}
	scaled := func(unit string, f float64, opt HeatOptions) *HeatResult {
		v := make([]float64, len(zj))
		for i := range v {
			v[i] = zj[i] * f
		}
		opt.Noise = "ar1"
		r, err := Heat(series.New("ohc", unit, series.Annual, 1980, v), opt)
		if err != nil {
			t.Fatalf("%s: %v", unit, err)
		}
		return r
	}
	for _, c := range []struct {
		unit string
		f    float64
		opt  HeatOptions
	}{
		{"J", 1e21, HeatOptions{}},
		{"10^22 J", 0.1, HeatOptions{}},
		{"1e22 J", 0.1, HeatOptions{}},
		{"J m-2", 1e21 / OceanAreaM2, HeatOptions{ContentAreaM2: OceanAreaM2}},
		{"J/m2", 1e21 / EarthAreaM2, HeatOptions{}},
		{"", 1e21, HeatOptions{Unit: "j"}},
	} {
		r := scaled(c.unit, c.f, c.opt)
		if math.Abs(r.RateWPerM2/h.RateWPerM2-1) > 1e-9 || math.Abs(r.StderrWPerM2/h.StderrWPerM2-1) > 1e-9 || math.Abs(r.ZJPerYear/h.ZJPerYear-1) > 1e-9 {
			t.Errorf("unit %q: rate %g +- %g, want %g +- %g", c.unit, r.RateWPerM2, r.StderrWPerM2, h.RateWPerM2, h.StderrWPerM2)
		}
	}
	// Over the ocean's area the same heat gain is a larger flux.
	oc, _ := ParseArea("ocean")
	r := scaled("ZJ", 1, HeatOptions{Area: oc})
	if math.Abs(r.RateWPerM2/h.RateWPerM2-EarthAreaM2/OceanAreaM2) > 1e-9 || !hasWarning(r.Warnings, "ocean's area") {
		t.Errorf("ocean area: rate %g (want %g), warnings %v", r.RateWPerM2, h.RateWPerM2*EarthAreaM2/OceanAreaM2, r.Warnings)
	}
	// An ocean fraction scales the imbalance by 1/f, over Earth's surface.
	r = scaled("ZJ", 1, HeatOptions{OceanFraction: 0.9, Area: oc})
	if r.ImbalanceWPerM2 == nil || math.Abs(*r.ImbalanceWPerM2-h.RateWPerM2/0.9) > 1e-12 || math.Abs(*r.ImbalanceStderrWPerM2-h.StderrWPerM2/0.9) > 1e-12 {
		t.Errorf("imbalance %v, want %g", r.ImbalanceWPerM2, h.RateWPerM2/0.9)
	}
	// Time shift invariance: the same values a century later give the same rate.
	later, err := Heat(series.New("ohc", "ZJ", series.Annual, 2080, zj), HeatOptions{Noise: "ar1"})
	if err != nil || math.Abs(later.RateWPerM2-h.RateWPerM2) > 1e-9 {
		t.Errorf("time shift: %v %v", later, err)
	}
}

func hasWarning(ws []string, sub string) bool {
	for _, w := range ws {
		if strings.Contains(w, sub) {
			return true
		}
	}
	return false
}

func TestHeatRefusals(t *testing.T) {
	s := series.New("ohc", "", series.Annual, 1980, noisyLine(30, 1980, 5, 2, 2))
	if _, err := Heat(s, HeatOptions{}); err == nil || !strings.Contains(err.Error(), "no unit") {
		t.Errorf("no unit: %v", err)
	}
	s.Unit = "furlongs"
	if _, err := Heat(s, HeatOptions{}); err == nil || !strings.Contains(err.Error(), "furlongs") {
		t.Errorf("bad unit: %v", err)
	}
	s.Unit = "ZJ"
	for _, opt := range []HeatOptions{
		{OceanFraction: 1.5}, {OceanFraction: -0.2}, {Area: Area{M2: -1}}, {DiffHalfWidth: -1},
		{From: "2030"}, {Noise: "pink"}, {ContentAreaM2: math.NaN()},
	} {
		if _, err := Heat(s, opt); err == nil {
			t.Errorf("%+v: no error", opt)
		}
	}
	if _, err := Heat(nil, HeatOptions{}); err == nil {
		t.Error("nil series: no error")
	}
	for _, a := range []string{"mars", "-3", "0", "NaN", "Inf"} {
		if _, err := ParseArea(a); err == nil {
			t.Errorf("area %q: no error", a)
		}
	}
	if a, err := ParseArea("3.61e14"); err != nil || a.M2 != 3.61e14 {
		t.Errorf("numeric area: %v %v", a, err)
	}
	// a setting that contradicts the series' own unit is obeyed, with a warning
	r, err := Heat(s, HeatOptions{Unit: "j"})
	if err != nil || !hasWarning(r.Warnings, "read as") {
		t.Errorf("unit override: %v", err)
	}
}

// The centred difference is exact for a quadratic heat content: its rate
// at step i is the derivative at t_i. Ends and gaps give NaN.
func TestRateSeries(t *testing.T) {
	v := make([]float64, 12)
	for i := range v {
		tt := float64(1990+i) + 0.5
		v[i] = 0.3*(tt-1990)*(tt-1990) + 2*(tt-1990)
	}
	v[7] = math.NaN()
	s := series.New("h", "ZJ", series.Annual, 1990, v)
	r := RateSeries(s, 1, EarthAreaM2)
	conv := ZJPerYearToWPerM2(1, EarthAreaM2)
	for i, x := range r.Values {
		tt := s.Times[i] - 1990
		want := (0.6*tt + 2) * conv
		switch {
		case i == 0 || i == 11 || i == 6 || i == 8:
			if !math.IsNaN(x) {
				t.Errorf("step %d: %g, want NaN", i, x)
			}
		case i == 7:
			if math.Abs(x-want) > 1e-12 { // its neighbours are present
				t.Errorf("step %d: %g want %g", i, x, want)
			}
		default:
			if math.Abs(x-want) > 1e-12 {
				t.Errorf("step %d: %g want %g", i, x, want)
			}
		}
	}
	if r.Unit != "W m-2" || r.First != 1990 {
		t.Errorf("rate series %s first %d", r.Unit, r.First)
	}
	r2 := RateSeries(s, 2, EarthAreaM2)
	if !math.IsNaN(r2.Values[1]) || math.IsNaN(r2.Values[2]) {
		t.Errorf("half-width 2: %v", r2.Values)
	}
}

type demoTruth struct {
	OceanHeat struct {
		OceanFraction  float64 `json:"ocean_fraction"`
		EarthAreaM2    float64 `json:"earth_area_m2"`
		SecondsPerYear float64 `json:"seconds_per_year"`
	} `json:"ocean_heat"`
	Outputs struct {
		MeanImbalance float64 `json:"mean_imbalance_2005_2020_w_m2"`
	} `json:"outputs"`
}

// The demo world (testdata/demo, known truth): the heating rate of its
// ocean heat content over 2005-2020, divided by the ocean's share 0.91,
// agrees with the model's mean imbalance over 2005-2020 within the
// rate's 95 % interval. (The heat content is the model state at mid-year;
// the truth is the model's heat gain from the start of 2005 to the end of
// 2020 over 16 years.)
func TestDemoWorldImbalance(t *testing.T) {
	b, err := os.ReadFile("../../testdata/demo/tessary_ocean_heat.csv")
	if err != nil {
		t.Fatal(err)
	}
	rd, err := series.Read("tessary_ocean_heat.csv", b, series.Options{})
	if err != nil {
		t.Fatal(err)
	}
	var tr demoTruth
	tb, err := os.ReadFile("../../testdata/demo/truth.json")
	if err != nil {
		t.Fatal(err)
	}
	if err := json.Unmarshal(tb, &tr); err != nil {
		t.Fatal(err)
	}
	if tr.OceanHeat.EarthAreaM2 != EarthAreaM2 || tr.OceanHeat.SecondsPerYear != SecondsPerYear {
		t.Fatalf("the demo world's conventions changed: %+v", tr.OceanHeat)
	}
	for _, noise := range []string{"white", "ar1", "arma11", "arma11-ml"} {
		h, err := Heat(rd.Series[0], HeatOptions{From: "2005", To: "2020", OceanFraction: tr.OceanHeat.OceanFraction, Noise: noise})
		if err != nil {
			t.Fatal(err)
		}
		want := tr.Outputs.MeanImbalance
		if h.N != 16 || !(*h.ImbalanceCILowWPerM2 <= want && want <= *h.ImbalanceCIHighWPerM2) {
			t.Errorf("%s: imbalance %.4f (%.4f to %.4f, n %d), truth %.4f", noise, *h.ImbalanceWPerM2, *h.ImbalanceCILowWPerM2, *h.ImbalanceCIHighWPerM2, h.N, want)
		}
		// without the ocean fraction the rate is the ocean's share only
		if math.Abs(h.RateWPerM2-*h.ImbalanceWPerM2*tr.OceanHeat.OceanFraction) > 1e-12 {
			t.Errorf("%s: rate %g vs imbalance %g", noise, h.RateWPerM2, *h.ImbalanceWPerM2)
		}
	}
}

func TestParseHeatUnit(t *testing.T) {
	for in, want := range map[string]HeatUnit{
		"ZJ": {Kind: UnitZJ, Scale: 1}, "zj": {Kind: UnitZJ, Scale: 1}, "1e21 J": {Kind: UnitJ, Scale: 1},
		"10^22 J": {Kind: UnitJ, Scale: 10}, "J": {Kind: UnitJ, Scale: 1e-21}, "J m-2": {Kind: UnitJM2, Scale: 1},
		"j_m2": {Kind: UnitJM2, Scale: 1}, "1e9 J m-2": {Kind: UnitJM2, Scale: 1e9},
	} {
		got, err := ParseHeatUnit(in)
		if err != nil || got.Kind != want.Kind || math.Abs(got.Scale/want.Scale-1) > 1e-12 {
			t.Errorf("%q: %+v %v, want %+v", in, got, err, want)
		}
	}
	for _, bad := range []string{"", "K", "1e22", "W m-2", "10^x J"} {
		if _, err := ParseHeatUnit(bad); err == nil {
			t.Errorf("%q: no error", bad)
		}
	}
}
