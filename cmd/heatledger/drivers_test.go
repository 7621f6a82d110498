package main

import (
	"encoding/csv"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

var demoForcing = filepath.Join("..", "..", "testdata", "demo", "tessary_forcing.csv")

// adjustKeys and adjustDriverKeys are the contract of the Drivers issue.
var adjustKeys = []string{"target", "n", "dropped", "drivers", "trend_per_decade", "trend_stderr_per_decade", "r2", "aic", "adjusted_trend", "warnings"}
var adjustDriverKeys = []string{"name", "lag_months", "coefficient", "stderr", "stderr_arma11", "standardized"}

func TestAdjustContract(t *testing.T) {
	out := filepath.Join(t.TempDir(), "adj.csv")
	m := jsonKeys(t, adjustKeys, "adjust", "--json", "--target", "surface_anomaly", "--driver", "ocean_index", "--driver", "aod:0:24",
		"--driver", "tsi:1:1", "--from", "1955", "--to", "2020", "--csv", out, demoSurface, demoForcing)
	ds, _ := m["drivers"].([]any)
	if len(ds) != 3 {
		t.Fatalf("drivers %v", m["drivers"])
	}
	for _, d := range ds {
		dm := d.(map[string]any)
		for _, k := range adjustDriverKeys {
			if _, ok := dm[k]; !ok {
				t.Errorf("driver lacks %q: %v", k, dm)
			}
		}
	}
	d0 := ds[0].(map[string]any)
	// The searched lag lies in its range; the fixed one is kept.
	if l := d0["lag_months"].(float64); d0["name"] != "ocean_index" || l < 0 || l > 12 || ds[2].(map[string]any)["lag_months"] != 1.0 {
		t.Errorf("drivers %v", ds)
	}
	// 1955-01..2020-12 is 792 months; none lack a term at these lags.
	if m["target"] != "surface_anomaly" || m["n"] != 792.0 || m["dropped"] != 0.0 {
		t.Errorf("target %v n %v dropped %v", m["target"], m["n"], m["dropped"])
	}
	at, _ := m["adjusted_trend"].(map[string]any)
	for _, k := range trendKeys {
		if _, ok := at[k]; !ok {
			t.Errorf("adjusted_trend lacks %q", k)
		}
	}
	if at["from"] != "1955-01" || at["to"] != "2020-12" || at["noise"] != "ar1" {
		t.Errorf("adjusted_trend window %v..%v noise %v", at["from"], at["to"], at["noise"])
	}
	if _, ok := m["trend_per_decade"].(float64); !ok {
		t.Errorf("trend_per_decade %v", m["trend_per_decade"])
	}
	f, err := os.Open(out)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	recs, err := csv.NewReader(f).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	head := strings.Join(recs[0], ",")
	for _, want := range []string{"time", "surface_anomaly", "fitted", "adjusted", "contribution ocean_index (lag ", "contribution tsi (lag 1)"} {
		if !strings.Contains(head, want) {
			t.Errorf("csv header %q lacks %q", head, want)
		}
	}
	if recs[1][0] != "1950-01" || len(recs) != 913 {
		t.Errorf("csv: %d rows, first %v", len(recs), recs[1])
	}
}

func TestAdjustOptionsCLI(t *testing.T) {
	m := jsonKeys(t, adjustKeys, "adjust", "--json", "--target", "second_record", "--driver", "ocean_index:3:3", "--smooth", "ocean_index",
		"--driver", "tsi:0:0", "--detrend", "tsi", "--harmonics", "1", "--trend", "broken", "--break", "1980", "--noise", "arma11",
		"--window", "1960:1989", "--window", "1990:2019", demoSurface, demoForcing)
	if m["dropped"].(float64) <= 0 || m["trend_change"] == nil || m["harmonics"] != 1.0 || m["trend"] != "broken" {
		t.Errorf("dropped %v trend_change %v harmonics %v trend %v", m["dropped"], m["trend_change"], m["harmonics"], m["trend"])
	}
	if rs, _ := m["dropped_reasons"].([]any); len(rs) == 0 {
		t.Errorf("no dropped_reasons")
	}
	m = jsonKeys(t, adjustKeys, "adjust", "--json", "--target", "surface_anomaly", "--driver", "ocean_index:3:3", "--trend", "none", demoSurface)
	if m["trend_per_decade"] != nil || m["trend_stderr_per_decade"] != nil {
		t.Errorf("no trend term, yet trend_per_decade %v", m["trend_per_decade"])
	}
	code, out, errs := runCLI("adjust", "--target", "surface_anomaly", "--driver", "ocean_index", "--window", "1960:1989", "--window", "1990:2019", demoSurface)
	if code != 0 || !strings.Contains(out, "trend change from 1960-01..1989-12") || !strings.Contains(out, "ocean_index") {
		t.Errorf("text output: exit %d %s %s", code, out, errs)
	}
}

func TestAdjustErrors(t *testing.T) {
	base := []string{"adjust", "--target", "surface_anomaly"}
	cases := []struct {
		args []string
		code int
		want string
	}{
		{[]string{"--driver", "aod:5:2", demoSurface}, 2, "ends before it starts"},
		{[]string{"--driver", "aod:x:3", demoSurface}, 2, "not whole numbers"},
		{[]string{"--driver", "aod:3", demoSurface}, 2, "NAME:MINLAG:MAXLAG"},
		{[]string{"--driver", ":0:12", demoSurface}, 2, "no name"},
		{[]string{"--driver", "aod:1.5:3", demoSurface}, 2, "not whole numbers"},
		{[]string{demoSurface}, 2, "--driver"},
		{[]string{"--driver", "ocean_index", "--harmonics", "3", demoSurface}, 2, "--harmonics"},
		{[]string{"--driver", "ocean_index", "--trend", "cubic", demoSurface}, 2, "--trend"},
		{[]string{"--driver", "ocean_index", "--trend", "broken", demoSurface}, 2, "--break"},
		{[]string{"--driver", "ocean_index", "--smooth", "aod", demoSurface}, 2, "not one of the --driver names"},
		{[]string{"--driver", "ocean_index", "--window", "1970-1990", demoSurface}, 2, "FROM:TO"},
		{[]string{"--driver", "enso", demoSurface}, 1, `no series named "enso"`},
		{[]string{"--driver", "ocean_index", "--from", "2100", demoSurface}, 1, "fit window"},
		{[]string{"--driver", "aod:7:7", "--from", "1950", "--to", "1955", demoSurface}, 1, `no series named "aod"`},
	}
	for _, c := range cases {
		code, _, errs := runCLI(append(append([]string{}, base...), c.args...)...)
		if code != c.code || !strings.Contains(errs, c.want) {
			t.Errorf("%v: exit %d (want %d), stderr %q lacks %q", c.args, code, c.code, errs, c.want)
		}
	}
	code, _, errs := runCLI("adjust", "--driver", "aod", demoSurface)
	if code != 2 || !strings.Contains(errs, "--target") {
		t.Errorf("no target: exit %d %s", code, errs)
	}
}
