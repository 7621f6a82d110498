package main

import (
	"encoding/csv"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

var respondHeatFile = filepath.Join("..", "..", "testdata", "demo", "tessary_ocean_heat.csv")

// demoComponents are the demo world's forcing components as the generator
// used them (truth.json).
var demoComponents = []string{"--forcing", "co2:co2", "--forcing", "ch4:ch4", "--forcing", "n2o:n2o", "--forcing", "aerosol_erf:erf",
	"--forcing", "aod:aod", "--forcing", "tsi:tsi", "--reference", "aod=0.003", "--reference", "tsi=1361"}

func TestForcingContract(t *testing.T) {
	m := jsonKeys(t, []string{"components", "total_last"}, "forcing", "--json", "--component", "co2:co2", "--component", "aod:aod:1.5",
		"--component", "aerosol_erf:erf", "--reference", "aod=0.003", demoForcing)
	cs := m["components"].([]any)
	if len(cs) != 3 {
		t.Fatalf("components %v", cs)
	}
	for _, c := range cs {
		cm := c.(map[string]any)
		for _, k := range []string{"name", "kind", "first", "last"} {
			if _, ok := cm[k]; !ok {
				t.Errorf("component lacks %q: %v", k, cm)
			}
		}
	}
	// The demo's 2025-12 values: co2 5.35 ln(C/278); aerosol as given.
	c0, c2 := cs[0].(map[string]any), cs[2].(map[string]any)
	if c0["name"] != "co2" || c0["kind"] != "co2" || math.Abs(c0["first"].(float64)-5.35*math.Log(300.075/278)) > 1e-12 || c2["last"] != -1.1006 {
		t.Errorf("components %v", cs)
	}
	if a := cs[1].(map[string]any); a["scale"] != 1.5 || a["first"] != 0.0 {
		t.Errorf("aod %v", a)
	}
	sum := c0["last"].(float64) + cs[1].(map[string]any)["last"].(float64) + c2["last"].(float64)
	if math.Abs(m["total_last"].(float64)-sum) > 1e-12 {
		t.Errorf("total_last %v, sum %v", m["total_last"], sum)
	}

	// CSV on standard output, or into --csv OUT
	code, out, errs := runCLI("forcing", "--component", "co2:co2", "--component", "tsi:tsi", demoForcing)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	recs, err := csv.NewReader(strings.NewReader(out)).ReadAll()
	if err != nil || len(recs) != 913 || strings.Join(recs[0], ",") != "time,co2 (W m-2),tsi (W m-2),total (W m-2)" || recs[1][0] != "1950-01" {
		t.Errorf("csv %v: %d rows, head %v", err, len(recs), recs[0])
	}
	file := filepath.Join(t.TempDir(), "f.csv")
	code, out, _ = runCLI("forcing", "--component", "co2:co2", "--csv", file, demoForcing)
	b, err := os.ReadFile(file)
	if code != 0 || out != "" || err != nil || !strings.HasPrefix(string(b), "time,co2 (W m-2),total (W m-2)\n1950-01,") {
		t.Errorf("--csv: exit %d, stdout %q, file %q %v", code, out, string(b[:min(len(b), 60)]), err)
	}
}

var respondKeys = []string{"model", "params", "derived", "fit", "final", "warnings"}

func sub(t *testing.T, m map[string]any, key string, keys ...string) map[string]any {
	t.Helper()
	s, ok := m[key].(map[string]any)
	if !ok {
		t.Fatalf("%q is not an object: %v", key, m[key])
	}
	for _, k := range keys {
		if _, ok := s[k]; !ok {
			t.Errorf("%s lacks %q: %v", key, k, s)
		}
	}
	return s
}

func TestRespondContract(t *testing.T) {
	args := append([]string{"respond"}, demoComponents...)
	m := jsonKeys(t, respondKeys, append(args, "--model", "twolayer", "--lambda", "1.2", demoForcing)...)
	p := sub(t, m, "params", "lambda", "gamma", "c", "c0", "efficacy", "f2x")
	d := sub(t, m, "derived", "ecs", "tcr", "tau_fast", "tau_slow", "a_fast", "a_slow")
	f := sub(t, m, "final", "time", "t", "t0", "n", "heat_zj")
	if m["model"] != "twolayer" || m["fit"] != nil || p["lambda"] != 1.2 || p["c"] != 8.0 || p["c0"] != 100.0 || p["gamma"] != 0.7 || p["f2x"] != 3.93 {
		t.Errorf("model %v fit %v params %v", m["model"], m["fit"], p)
	}
	if math.Abs(d["ecs"].(float64)-3.275) > 1e-12 || d["tau_slow"] == nil || math.Abs(d["a_fast"].(float64)+d["a_slow"].(float64)-1) > 1e-12 {
		t.Errorf("derived %v", d)
	}
	// the demo generator's state at the end of 2025 (truth.json), from the
	// spin-up ramp: within 0.02 K
	if f["time"] != 2026.0 || math.Abs(f["t"].(float64)-0.994877) > 0.02 || math.Abs(f["t0"].(float64)-0.201998) > 0.02 {
		t.Errorf("final %v", f)
	}

	// ECS and TCR, one-box
	m = jsonKeys(t, respondKeys, append(args, "--model", "onebox", "--ecs", "3", "--tcr", "2.2", demoForcing)...)
	d = sub(t, m, "derived")
	if math.Abs(d["ecs"].(float64)-3) > 1e-9 || math.Abs(d["tcr"].(float64)-2.2) > 1e-6 || d["tau_slow"] != nil || d["a_slow"] != 0.0 {
		t.Errorf("one-box derived %v", d)
	}

	// a fit, with the run written as CSV
	file := filepath.Join(t.TempDir(), "run.csv")
	m = jsonKeys(t, respondKeys, append(args, "--fit", "surface_anomaly", "--free", "lambda,gamma,aerosol", "--heat", "ocean_heat",
		"--window", "1979:2024", "--csv", file, demoSurface, demoForcing, respondHeatFile)...)
	fit := sub(t, m, "fit", "free", "rmse", "r2")
	free := sub(t, fit, "free", "lambda", "gamma", "aerosol", "offset")
	for name, truth := range map[string]float64{"lambda": 1.2, "gamma": 0.7, "aerosol": 1} {
		e := free[name].(map[string]any)
		if v, se := e["value"].(float64), e["stderr"].(float64); math.Abs(v-truth) > 2.5*se || se <= 0 {
			t.Errorf("%s = %v +- %v, truth %v", name, v, se, truth)
		}
	}
	if p := sub(t, m, "params"); math.Abs(p["lambda"].(float64)-free["lambda"].(map[string]any)["value"].(float64)) > 1e-12 {
		t.Errorf("params %v vs fit %v", p, free["lambda"])
	}
	if at := m["attribution"].([]any); len(at) != 1 {
		t.Errorf("attribution %v", at)
	}
	b, err := os.ReadFile(file)
	if err != nil || !strings.HasPrefix(string(b), "time,forcing (W m-2),T (K),T0 (K),N (W m-2),heat (ZJ),response to co2 (K)") || strings.Count(string(b), "\n") != 913 {
		t.Errorf("run csv: %v %q", err, string(b[:min(len(b), 120)]))
	}

	// text summary
	code, out, errs := runCLI(append(args, "--text", "--window", "1979:2024", demoForcing)...)
	if code != 0 || !strings.Contains(out, "ECS 3.023 K") || !strings.Contains(out, "attribution 1979-01 to 2024-12") {
		t.Errorf("text: exit %d %s\n%s", code, errs, out)
	}
}

func TestRespondErrors(t *testing.T) {
	base := append([]string{"respond"}, demoComponents...)
	for _, c := range []struct {
		args []string
		code int
		want string
	}{
		{[]string{"respond", demoForcing}, 2, "--forcing"},
		{[]string{"respond", "--forcing", "co2:ozone", demoForcing}, 2, "unknown kind"},
		{[]string{"respond", "--forcing", "co2", demoForcing}, 2, "no kind"},
		{[]string{"respond", "--forcing", "co2:co2:zero", demoForcing}, 2, "not a number"},
		{[]string{"respond", "--forcing", "co2:co2:0", demoForcing}, 2, "scale of 0"},
		{[]string{"respond", "--forcing", "co2:co2", "--reference", "ch4=first", demoForcing}, 2, "not one of"},
		{append(base, "--model", "threebox", demoForcing), 2, "--model"},
		{append(base, "--free", "lambda", demoForcing), 2, "need --fit"},
		{append(base, "--spinup-from", "long ago", demoForcing), 2, "--spinup-from"},
		{append(base, "--lambda", "fast", demoForcing), 2, "not a number"},
		{append(base, "--window", "1990", demoForcing), 2, "FROM:TO"},
		{append(base, "--fit", "nothing", demoForcing), 1, "no series named"},
		{append(base, "--fit", "surface_anomaly", "--free", "lambda", "--free", "x", demoForcing, demoSurface), 1, ""},
		{append(base, "--ecs", "3", "--tcr", "3.5", demoForcing), 1, "TCR"},
		{append(base, "--fit", "surface_anomaly", "--free", "lambda,scale:co2,scale:ch4,scale:n2o,scale:aerosol_erf,scale:aod,scale:tsi", demoForcing, demoSurface), 1, "every forcing component"},
		{[]string{"forcing", "--component", "co2:co2", "--formula", "best", demoForcing}, 2, "--formula"},
		{[]string{"forcing", "--component", "co2:co2", "--component-efficacy", "co2=-1", demoForcing}, 2, "positive"},
		{[]string{"forcing", "--component", "nothing:co2", demoForcing}, 1, "no series named"},
		{[]string{"forcing", "--component", "co2:co2"}, 2, "no input files"},
	} {
		code, _, errs := runCLI(c.args...)
		if code != c.code || !strings.Contains(errs, c.want) {
			t.Errorf("%v: exit %d (want %d), stderr %q (want %q)", c.args[1:], code, c.code, errs, c.want)
		}
	}
}
