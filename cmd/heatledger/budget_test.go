package main

import (
	"math"
	"path/filepath"
	"strings"
	"testing"
)

var demoHeat = filepath.Join("..", "..", "testdata", "demo", "tessary_ocean_heat.csv")

var heatKeys = []string{"zj_per_year", "rate_w_m2", "stderr_w_m2", "ci_low_w_m2", "ci_high_w_m2", "area_m2", "warnings"}

func TestHeatContract(t *testing.T) {
	for _, noise := range []string{"white", "ar1", "arma11", "arma11-ml"} {
		m := jsonKeys(t, heatKeys, "heat", "--json", "--series", "ocean_heat", "--from", "2005", "--to", "2020", "--noise", noise, demoHeat)
		// 1 ZJ/yr = 0.0621 W m-2 over Earth's surface (../shared/CHECKS.md)
		if m["area_m2"] != 5.1e14 || math.Abs(m["rate_w_m2"].(float64)/m["zj_per_year"].(float64)-0.0621) > 5e-5 {
			t.Errorf("%s: area %v rate %v zj %v", noise, m["area_m2"], m["rate_w_m2"], m["zj_per_year"])
		}
		if _, ok := m["warnings"].([]any); !ok {
			t.Errorf("%s: warnings %v is not a list", noise, m["warnings"])
		}
	}
	m := jsonKeys(t, append(heatKeys, "imbalance_w_m2"), "heat", "--json", "--series", "ocean_heat", "--ocean-fraction", "ar6", "--area", "ocean", "--unit", "zj", demoHeat)
	if m["area_m2"] != 3.61e14 || m["ocean_fraction"] != 0.91 {
		t.Errorf("ocean: %v %v", m["area_m2"], m["ocean_fraction"])
	}
	code, out, errs := runCLI("heat", "--series", "ocean_heat", "--ocean-fraction", "0.91", demoHeat)
	if code != 0 || !strings.Contains(out, "heating rate") || !strings.Contains(out, "energy imbalance estimate") {
		t.Errorf("text: exit %d\n%s%s", code, out, errs)
	}
}

var summaryKeys = []string{"central", "median", "mean", "p05", "p17", "p83", "p95"}

func TestSensitivityContract(t *testing.T) {
	m := jsonKeys(t, []string{"ecs", "tcr", "nonpositive_fraction", "draws"},
		"sensitivity", "--json", "--dT", "0.8:0.1", "--dF", "2.5:0.4", "--dN", "0.5:0.15", "--draws", "20000", "--seed", "4")
	for _, k := range []string{"ecs", "tcr"} {
		s, ok := m[k].(map[string]any)
		if !ok {
			t.Fatalf("%s: %v", k, m[k])
		}
		for _, f := range summaryKeys {
			if _, ok := s[f].(float64); !ok {
				t.Errorf("%s.%s = %v, want a number", k, f, s[f])
			}
		}
		if _, ok := s["histogram"]; ok {
			t.Errorf("%s: histogram without --full", k)
		}
	}
	ecs := m["ecs"].(map[string]any)
	// default F2x 3.93: central 3.93 * 0.8 / 2.0
	if math.Abs(ecs["central"].(float64)-3.93*0.8/2) > 1e-12 || m["draws"] != 20000.0 {
		t.Errorf("central %v draws %v", ecs["central"], m["draws"])
	}
	// an unbounded upper tail is null, with the fraction reported
	m = jsonKeys(t, []string{"ecs", "tcr", "nonpositive_fraction", "draws"},
		"sensitivity", "--json", "--dT", "0.9:0.12", "--dF", "1.2:0.5", "--dN", "0.6:0.2", "--f2x", "3.9:0", "--draws", "20000")
	if v, ok := m["ecs"].(map[string]any)["p95"]; !ok || v != nil || !(m["nonpositive_fraction"].(float64) > 0.05) {
		t.Errorf("unbounded: p95 %v fraction %v", v, m["nonpositive_fraction"])
	}
	// components: two --dF summed; --full adds histograms
	m = jsonKeys(t, []string{"ecs", "tcr", "inputs"}, "sensitivity", "--json", "--full", "--dT", "0.8:0.1",
		"--dF", "3.2:0.3", "--dF", "lognormal90:-1.6:-0.3", "--dN", "0.5:0.1", "--draws", "5000")
	if _, ok := m["ecs"].(map[string]any)["histogram"].(map[string]any); !ok {
		t.Errorf("--full: no histogram")
	}
	code, out, errs := runCLI("sensitivity", "--dT", "0.8:0.1", "--dF", "2.5:0.4", "--dN", "0.5:0.15", "--draws", "2000")
	if code != 0 || !strings.Contains(out, "ECS (K)") || !strings.Contains(out, "TCR (K)") {
		t.Errorf("text: exit %d\n%s%s", code, out, errs)
	}
}

func TestBudgetUsageErrors(t *testing.T) {
	for _, args := range [][]string{
		{"heat", "--json", demoHeat},                                            // no --series
		{"heat", "--series", "ocean_heat"},                                      // no file
		{"heat", "--series", "ocean_heat", "--unit", "furlongs", demoHeat},      // bad unit
		{"heat", "--series", "ocean_heat", "--area", "moon", demoHeat},          // bad area
		{"heat", "--series", "ocean_heat", "--noise", "pink", demoHeat},         // bad noise
		{"heat", "--series", "ocean_heat", "--ocean-fraction", "1.5", demoHeat}, // bad fraction
		{"heat", "--series", "ocean_heat", "--level", "2", demoHeat},            // bad level
		{"sensitivity", "--dT", "0.8:0.1", "--dF", "2.5:0.4"},                   // no --dN
		{"sensitivity", "--dT", "0.8", "--dF", "2.5:0.4", "--dN", "0.5:0.1"},    // not MEAN:SD
		{"sensitivity", "--dT", "0.8:-1", "--dF", "2.5:0.4", "--dN", "0.5:0.1"}, // negative SD
		{"sensitivity", "--dT", "0.8:0.1", "--dF", "2.5:0.4", "--dN", "0.5:0.1", "--draws", "3"},
		{"sensitivity", "--dT", "0.8:0.1", "--dF", "2.5:0.4", "--dN", "0.5:0.1", "--f2x", "x:1"},
		{"sensitivity", "--dT", "0.8:0.1", "--dF", "2.5:0.4", "--dN", "0.5:0.1", "file.csv"},
		{"sensitivity", "--bogus"},
	} {
		code, _, errs := runCLI(args...)
		if code != 2 {
			t.Errorf("%v: exit %d, want 2 (%s)", args, code, errs)
		}
	}
	// an analysis failure is exit 1: a window with no data
	if code, _, errs := runCLI("heat", "--series", "ocean_heat", "--from", "2100", demoHeat); code != 1 || errs == "" {
		t.Errorf("window past the data: exit %d %s", code, errs)
	}
}
