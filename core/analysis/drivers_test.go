package analysis

import (
	"encoding/json"
	"math"
	"strings"
	"testing"
)

// TestAdjustDemo: the settings reach the engine. Known truth
// (testdata/demo/truth.json): the ocean index enters both demo records at a
// lag of 3 months with coefficient 0.1.
func TestAdjustDemo(t *testing.T) {
	w := demoWorkspace(t)
	truth := demoTruth(t)["surface"].(map[string]any)
	lag := int(truth["index_lag_months"].(float64))
	coef := truth["index_coefficient_k"].(float64)
	var s AdjustSettings
	// The settings as the page would save them (JSON).
	if err := json.Unmarshal([]byte(`{"target":"surface_anomaly","drivers":[{"name":"ocean_index"},{"name":"aod","max_lag":24},{"name":"tsi"}],
		"harmonics":-1,"windows":[["1960","1989"],["1990","2019"]],"change":[["1960","1989"],["1990","2019"]],"noise":"arma11"}`), &s); err != nil {
		t.Fatal(err)
	}
	r, err := w.Adjust(s)
	if err != nil {
		t.Fatal(err)
	}
	d := r.Drivers[0]
	if d.Name != "ocean_index" || d.LagMonths != lag || d.MinLag != 0 || d.MaxLag != 12 || r.Drivers[1].MaxLag != 24 {
		t.Errorf("driver %+v", d)
	}
	if math.Abs(d.Estimate-coef) > 2*d.StdErr {
		t.Errorf("coefficient %v +- %v, truth %v", d.Estimate, d.StdErr, coef)
	}
	if r.Harmonics != 2 || len(r.Trends) != 2 || r.Trends[0].Raw.Noise != "arma11" || r.Change == nil {
		t.Errorf("harmonics %d trends %d change %v", r.Harmonics, len(r.Trends), r.Change)
	}
}

func TestAdjustOptions(t *testing.T) {
	w := demoWorkspace(t)
	zero, three := 0, 3
	r, err := w.Adjust(AdjustSettings{Target: "second_record", Drivers: []AdjustDriver{{Name: "ocean_index", MinLag: &three, MaxLag: &three, Smooth3: true}, {Name: "tsi", MinLag: &zero, MaxLag: &zero, Detrend: true}},
		Harmonics: &zero, Trend: "broken", Breaks: []string{"1980", "2000-07"}, From: "1960", To: "2020"})
	if err != nil {
		t.Fatal(err)
	}
	if r.Search != nil || r.Harmonics != 0 || len(r.Trend.Segments) != 3 || math.Abs(r.Trend.Breaks[1]-2000.5) > 1e-12 || r.From != "1960-01" || r.To != "2020-12" {
		t.Errorf("search %v harmonics %d trend %+v window %s-%s", r.Search, r.Harmonics, r.Trend, r.From, r.To)
	}
	cases := []struct {
		s    AdjustSettings
		want string
	}{
		{AdjustSettings{}, "no target series"},
		{AdjustSettings{Target: "nope"}, `no series named "nope"`},
		{AdjustSettings{Target: "surface_anomaly", Drivers: []AdjustDriver{{Name: "enso"}}}, `driver: no series named "enso"`},
		{AdjustSettings{Target: "surface_anomaly", Trend: "broken", Breaks: []string{"soon"}}, `break: time "soon"`},
		{AdjustSettings{Target: "surface_anomaly", Trend: "series", TrendSeries: "nope"}, `trend series: no series named`},
		{AdjustSettings{Target: "surface_anomaly", Drivers: []AdjustDriver{{Name: "aod", MinLag: &three, MaxLag: &zero}}}, `lag range 3 to 0`},
	}
	for _, c := range cases {
		if _, err := w.Adjust(c.s); err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%+v: want %q, got %v", c.s, c.want, err)
		}
	}
}
