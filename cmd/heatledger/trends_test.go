package main

import (
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

var demoSurface = filepath.Join("..", "..", "testdata", "demo", "tessary_surface.csv")

// jsonKeys runs the CLI and checks that the JSON object has every key of
// the contract.
func jsonKeys(t *testing.T, keys []string, args ...string) map[string]any {
	t.Helper()
	code, out, errs := runCLI(args...)
	if code != 0 {
		t.Fatalf("%v: exit %d: %s", args, code, errs)
	}
	var m map[string]any
	if err := json.Unmarshal([]byte(out), &m); err != nil {
		t.Fatalf("%v: %v\n%s", args, err, out)
	}
	for _, k := range keys {
		if _, ok := m[k]; !ok {
			t.Errorf("%v: no %q in %s", args[0], k, out)
		}
	}
	return m
}

var trendKeys = []string{"series", "from", "to", "n", "noise", "level", "slope_per_decade", "stderr_per_decade",
	"ci_low_per_decade", "ci_high_per_decade", "p_value", "dof", "rho1", "rho2", "phi", "nu", "n_eff", "residual_sd", "warnings"}

func TestTrendContract(t *testing.T) {
	for _, noise := range []string{"white", "ar1", "arma11", "arma11-ml"} {
		m := jsonKeys(t, trendKeys, "trend", "--json", "--series", "surface_anomaly", "--from", "1980", "--to", "2019", "--noise", noise, demoSurface)
		// the window 1980 to 2019 holds 1980-01 to 2019-12 (issue 3)
		if m["from"] != "1980-01" || m["to"] != "2019-12" || m["n"] != 480.0 || m["noise"] != noise {
			t.Errorf("%s: %v %v %v %v", noise, m["from"], m["to"], m["n"], m["noise"])
		}
	}
}

func TestCompareContract(t *testing.T) {
	m := jsonKeys(t, []string{"windows", "difference_per_decade", "stderr_per_decade", "p_value", "broken_stick"},
		"compare", "--json", "--series", "surface_anomaly", "--window", "1960:1989", "--window", "1990:2019", "--noise", "arma11", demoSurface)
	if ws, _ := m["windows"].([]any); len(ws) != 2 {
		t.Fatalf("windows %v", m["windows"])
	}
	bs, _ := m["broken_stick"].(map[string]any)
	for _, k := range []string{"break", "slope_change_per_decade", "stderr_per_decade", "p_value"} {
		if _, ok := bs[k]; !ok {
			t.Errorf("broken_stick lacks %q", k)
		}
	}
}

func TestGridContract(t *testing.T) {
	csv := filepath.Join(t.TempDir(), "g.csv")
	m := jsonKeys(t, []string{"cells", "min_years", "step", "noise", "excluding_full_trend", "warnings"},
		"grid", "--json", "--series", "surface_anomaly", "--min-years", "20", "--csv", csv, demoSurface)
	b, err := os.ReadFile(csv)
	if err != nil {
		t.Fatal(err)
	}
	rows := strings.Count(strings.TrimSpace(string(b)), "\n") // header excluded
	if float64(rows) < m["cells"].(float64) {
		t.Errorf("csv has %d rows for %v cells", rows, m["cells"])
	}
}

func TestBreaksContract(t *testing.T) {
	m := jsonKeys(t, []string{"selected", "breaks", "segments", "bic", "p_values"},
		"breaks", "--json", "--series", "surface_anomaly", "--sims", "49", "--seed", "3", demoSurface)
	if _, ok := m["breaks"].([]any); !ok {
		t.Errorf("breaks is not a list: %v", m["breaks"])
	}
}

func TestSenContract(t *testing.T) {
	jsonKeys(t, []string{"sen_slope_per_decade", "ci_low_per_decade", "ci_high_per_decade", "s", "var_s", "z", "p_value", "tau"},
		"sen", "--json", "--series", "surface_anomaly", "--from", "1990", "--to", "2020", "--correction", "hamed-rao", demoSurface)
}

func TestTrendErrors(t *testing.T) {
	cases := []struct {
		args []string
		code int
		want string
	}{
		{[]string{"trend", demoSurface}, 2, "--series"},
		{[]string{"trend", "--series", "nope", demoSurface}, 1, "no series named"},
		{[]string{"trend", "--series", "surface_anomaly", "--noise", "pink", demoSurface}, 2, "noise"},
		{[]string{"trend", "--series", "surface_anomaly", "--from", "2100", demoSurface}, 1, "no steps"},
		{[]string{"compare", "--series", "surface_anomaly", "--window", "1970:1990", demoSurface}, 2, "two --window"},
		{[]string{"compare", "--series", "surface_anomaly", "--window", "1970-1990", "--window", "1991:2000", demoSurface}, 2, "FROM:TO"},
	}
	for _, c := range cases {
		code, _, errs := runCLI(c.args...)
		if code != c.code || !strings.Contains(errs, c.want) {
			t.Errorf("%v: exit %d (want %d), stderr %q lacks %q", c.args, code, c.code, errs, c.want)
		}
	}
}
