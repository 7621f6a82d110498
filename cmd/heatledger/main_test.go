package main

import (
	"bytes"
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

func runCLI(args ...string) (code int, stdout, stderr string) {
	var o, e bytes.Buffer
	code = run(args, &o, &e)
	return code, o.String(), e.String()
}

func TestInspectJSONContract(t *testing.T) {
	dir := t.TempDir()
	f := filepath.Join(dir, "a.csv")
	os.WriteFile(f, []byte("# note\nyear,anomaly (K)\n1990,0.1\n1991,\n1992,0.3\n"), 0o644)
	code, out, errs := runCLI("inspect", "--json", f)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	// the field names are the contract of issue 2
	var raw map[string]any
	if err := json.Unmarshal([]byte(out), &raw); err != nil {
		t.Fatal(err)
	}
	ss := raw["series"].([]any)
	s := ss[0].(map[string]any)
	for _, k := range []string{"name", "unit", "resolution", "start", "end", "count", "missing"} {
		if _, ok := s[k]; !ok {
			t.Errorf("missing field %q in %v", k, s)
		}
	}
	if s["name"] != "anomaly" || s["unit"] != "K" || s["resolution"] != "annual" || s["start"] != 1990.5 ||
		s["end"] != 1992.5 || s["count"] != 3.0 || s["missing"] != 1.0 {
		t.Errorf("series %v", s)
	}
	if _, ok := raw["warnings"].([]any); !ok {
		t.Errorf("warnings not a list: %v", raw["warnings"])
	}
}

func TestInspectBadFileExit1(t *testing.T) {
	bad := filepath.Join("..", "..", "testdata", "bad", "text_in_value.csv")
	code, _, errs := runCLI("inspect", bad)
	if code != 1 || !strings.HasPrefix(errs, bad+":4:2: ") {
		t.Fatalf("exit %d, stderr %q", code, errs)
	}
}

func TestUsageExit2(t *testing.T) {
	for _, args := range [][]string{{}, {"nonsense"}, {"inspect"}, {"inspect", "--no-such-flag", "x.csv"}, {"inspect", "--delimiter", "pipe", "x.csv"}} {
		if code, _, _ := runCLI(args...); code != 2 {
			t.Errorf("%v: exit %d, want 2", args, code)
		}
	}
}

func TestInspectSVG(t *testing.T) {
	out := filepath.Join(t.TempDir(), "c.svg")
	demo := filepath.Join("..", "..", "testdata", "demo", "tessary_surface.csv")
	code, stdout, errs := runCLI("inspect", demo, "--svg", out)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	if !strings.Contains(stdout, "surface_anomaly") || !strings.Contains(stdout, "1950-01") {
		t.Errorf("table %q", stdout)
	}
	b, err := os.ReadFile(out)
	if err != nil || !bytes.Contains(b, []byte("<svg")) || !bytes.Contains(b, []byte(`data-series="surface_anomaly (K)"`)) {
		t.Errorf("svg: %v %.200s", err, b)
	}
}
