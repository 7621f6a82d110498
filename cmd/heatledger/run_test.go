package main

import (
	"bytes"
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"heatledger/core/analysis"
)

var demoAnalysisFile = filepath.Join("..", "..", "testdata", "analysis", "tessary.heatledger.json")

// demoCommands are the command lines that ask for the same numbers as the
// demo analysis file's analyses (see demoAnalyses in
// core/analysis/file_test.go). FILES stands for the embedded files.
var demoCommands = map[string][]string{
	"trend-demo":   {"trend", "--series", "surface_anomaly", "--from", "1980", "--to", "2019", "--noise", "ar1", "--level", "0.95"},
	"compare-demo": {"compare", "--series", "surface_anomaly", "--window", "1950:1979", "--window", "1980:2024", "--noise", "arma11", "--level", "0.9"},
	"grid-demo":    {"grid", "--series", "ocean_heat", "--min-years", "15", "--step", "year", "--noise", "ar1", "--level", "0.95"},
	"breaks-demo":  {"breaks", "--series", "surface_anomaly", "--from", "1970", "--max", "2", "--min-years", "15", "--sims", "30", "--seed", "7", "--model", "slope", "--noise", "ar1"},
	"sen-demo":     {"sen", "--series", "ocean_heat", "--from", "1970", "--correction", "hamed-rao", "--level", "0.95"},
	"adjust-demo": {"adjust", "--target", "surface_anomaly", "--driver", "ocean_index", "--driver", "aod:0:24", "--trend", "linear",
		"--window", "1960:1989", "--window", "1990:2019", "--noise", "ar1", "--level", "0.95"},
	"forcing-demo": append([]string{"forcing"}, runDemoComponents("component")...),
	"respond-demo": append(append([]string{"respond"}, runDemoComponents("forcing")...), "--model", "twolayer", "--ecs", "3", "--tcr", "1.8",
		"--window", "1979:2024", "--record", "surface_anomaly", "--noise", "ar1", "--level", "0.95"),
	"heat-demo":        {"heat", "--series", "ocean_heat", "--from", "2005", "--to", "2020", "--level", "0.95", "--area", "earth", "--noise", "ar1", "--ocean-fraction", "0.91"},
	"sensitivity-demo": {"sensitivity", "--full", "--dT", "0.8:0.1", "--dF", "2.5:0.4", "--dN", "0.5:0.15", "--draws", "5000", "--seed", "4"},
}

func runDemoComponents(flag string) []string {
	var out []string
	for _, c := range []string{"co2:co2", "ch4:ch4", "n2o:n2o", "aod:aod", "tsi:tsi", "aerosol_erf:erf:1.2"} {
		out = append(out, "--"+flag, c)
	}
	return append(out, "--formula", "myhre1998")
}

func compact(t *testing.T, b []byte) string {
	t.Helper()
	var buf bytes.Buffer
	if err := json.Compact(&buf, b); err != nil {
		t.Fatalf("%v in %.200s", err, b)
	}
	return buf.String()
}

// TestRunMatchesCommands: every result of `heatledger run` is, to the last
// digit, what the analysis' own command prints with --json.
func TestRunMatchesCommands(t *testing.T) {
	data, err := os.ReadFile(demoAnalysisFile)
	if err != nil {
		t.Fatal(err)
	}
	f, err := analysis.ParseAnalysisFile(data)
	if err != nil {
		t.Fatal(err)
	}
	dir := t.TempDir()
	var files []string
	for _, d := range f.Files {
		p := filepath.Join(dir, d.Name)
		if err := os.WriteFile(p, []byte(d.Text), 0o644); err != nil {
			t.Fatal(err)
		}
		files = append(files, p)
	}
	code, out, errs := runCLI("run", "--json", demoAnalysisFile)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	var rep struct {
		Format  string `json:"format"`
		Results []struct {
			ID     string          `json:"id"`
			Kind   string          `json:"kind"`
			Result json.RawMessage `json:"result"`
			Error  string          `json:"error"`
		} `json:"results"`
	}
	if err := json.Unmarshal([]byte(out), &rep); err != nil || rep.Format != "heatledger-report" {
		t.Fatalf("%v: %.300s", err, out)
	}
	if len(rep.Results) != len(demoCommands) {
		t.Errorf("%d results, %d commands", len(rep.Results), len(demoCommands))
	}
	for _, r := range rep.Results {
		args, ok := demoCommands[r.ID]
		if !ok {
			t.Errorf("no command for %s", r.ID)
			continue
		}
		args = append(append([]string{}, args...), "--json")
		if r.Kind != "sensitivity" {
			args = append(args, files...)
		}
		code, cli, errs := runCLI(args...)
		if code != 0 {
			t.Errorf("%s: %v: exit %d: %s", r.ID, args, code, errs)
			continue
		}
		got := r.Result
		switch r.Kind {
		case "trend": // one object per series
			var list []json.RawMessage
			if err := json.Unmarshal(got, &list); err != nil || len(list) != 1 {
				t.Fatalf("trend result: %v", err)
			}
			got = list[0]
		case "sensitivity": // the Monte Carlo result beside the optional parts
			var s struct{ Result json.RawMessage }
			if err := json.Unmarshal(got, &s); err != nil {
				t.Fatal(err)
			}
			got = s.Result
		}
		if compact(t, got) != compact(t, []byte(cli)) {
			t.Errorf("%s: the report differs from `heatledger %s`:\nrun:     %.400s\ncommand: %.400s", r.ID, r.Kind, compact(t, got), compact(t, []byte(cli)))
		}
	}
	// the CLI report is the core's, byte for byte, and the same every time
	core, err := analysis.Run(f)
	if err != nil {
		t.Fatal(err)
	}
	want, _ := core.Marshal()
	if out != string(want) {
		t.Error("`heatledger run --json` differs from analysis.Run")
	}
	if _, again, _ := runCLI("run", "--json", demoAnalysisFile); again != out {
		t.Error("two runs differ")
	}
}

func TestRunOutDir(t *testing.T) {
	out := filepath.Join(t.TempDir(), "report")
	code, text, errs := runCLI("run", "--out", out, demoAnalysisFile)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	for _, w := range []string{"trend-demo", "surface_anomaly 1980-01 to 2019-12", "sensitivity-demo", "ECS median"} {
		if !strings.Contains(text, w) {
			t.Errorf("summary lacks %q:\n%s", w, text)
		}
	}
	_, js, _ := runCLI("run", "--json", demoAnalysisFile)
	b, err := os.ReadFile(filepath.Join(out, "report.json"))
	if err != nil || string(b) != js {
		t.Errorf("report.json: %v", err)
	}
	var rep analysis.Report
	json.Unmarshal(b, &rep)
	for _, r := range rep.Results {
		one, err := os.ReadFile(filepath.Join(out, r.ID+".json"))
		if err != nil {
			t.Errorf("%s: %v", r.ID, err)
			continue
		}
		var m struct {
			ID     string
			Result json.RawMessage
		}
		if json.Unmarshal(one, &m) != nil || m.ID != r.ID || compact(t, m.Result) != compact(t, r.Result) {
			t.Errorf("%s.json: %.200s", r.ID, one)
		}
	}
	// the demo file holds a brief: brief.md with its figures, brief.html
	md, err := os.ReadFile(filepath.Join(out, "brief.md"))
	if err != nil {
		t.Fatal(err)
	}
	html, err := os.ReadFile(filepath.Join(out, "brief.html"))
	if err != nil || !strings.HasPrefix(string(html), "<!DOCTYPE html>") {
		t.Errorf("brief.html: %v", err)
	}
	if !strings.Contains(text, "brief: "+filepath.Join(out, "brief.md")) {
		t.Errorf("the summary does not name the brief:\n%s", text)
	}
	links := 0
	for _, line := range strings.Split(string(md), "\n") {
		if i := strings.Index(line, "](figure-"); i >= 0 && strings.HasPrefix(line, "![") {
			name := strings.TrimSuffix(line[i+2:], ")")
			links++
			if svg, err := os.ReadFile(filepath.Join(out, name)); err != nil || !strings.HasPrefix(string(svg), "<svg") {
				t.Errorf("brief.md links %s: %v", name, err)
			}
		}
	}
	if links < 5 {
		t.Errorf("brief.md links %d figures", links)
	}
}

func TestRunDamagedAndUsage(t *testing.T) {
	bad := filepath.Join("..", "..", "testdata", "bad-analysis", "string_level.heatledger.json")
	code, _, errs := runCLI("run", bad)
	if code != 1 || !strings.HasPrefix(errs, bad+":10:16: expected a number for analyses[2].settings.level, found a string") {
		t.Errorf("exit %d: %q", code, errs)
	}
	for _, args := range [][]string{{"run"}, {"run", "a", "b"}, {"run", "--nope", demoAnalysisFile}, {"pack", "x.csv"}, {"pack", "--out", "x.json", "x.csv"}} {
		if code, _, errs := runCLI(args...); code != 2 {
			t.Errorf("%v: exit %d, want 2 (%s)", args, code, errs)
		}
	}
	if code, _, errs := runCLI("run", filepath.Join(t.TempDir(), "none.heatledger.json")); code != 1 || errs == "" {
		t.Errorf("missing file: exit %d", code)
	}
}

func TestRunFailingAnalysisAndPack(t *testing.T) {
	dir := t.TempDir()
	csv := filepath.Join(dir, "obs.csv")
	os.WriteFile(csv, []byte("year;t (K)\n1990;0,1\n1991;0,3\n1992;0,2\n1993;0,5\n1994;0,4\n1995;0,6\n"), 0o644)
	af := filepath.Join(dir, "w.heatledger.json")
	// the semicolon file with decimal commas reads as detected
	if code, _, errs := runCLI("pack", "--out", af, csv); code != 0 {
		t.Fatalf("pack: exit %d: %s", code, errs)
	}
	if code, _, errs := runCLI("pack", "--out", af, csv); code != 1 || !strings.Contains(errs, "--force") {
		t.Errorf("pack over a file: exit %d: %s", code, errs)
	}
	data, _ := os.ReadFile(af)
	f, err := analysis.ParseAnalysisFile(data)
	if err != nil || len(f.Files) != 1 || f.Files[0].Name != "obs.csv" || len(f.Analyses) != 0 {
		t.Fatalf("%v %+v", err, f)
	}
	good, _ := analysis.NewAnalysis("ok", analysis.TrendSettings{Series: []string{"t"}, Noise: "white", Level: 0.95})
	bad, _ := analysis.NewAnalysis("bad", analysis.SenSettings{Series: "nothing"})
	f.Analyses = []analysis.Analysis{bad, good}
	data, _ = f.Marshal()
	os.WriteFile(af, data, 0o644)
	code, out, errs := runCLI("run", af)
	if code != 1 || !strings.Contains(errs, "analysis bad (sen): no series named \"nothing\"") || !strings.Contains(out, "ok ") || !strings.Contains(out, "per decade") {
		t.Errorf("exit %d\n%s\n%s", code, out, errs)
	}
	// a damaged embedded CSV is named with where
	f.Files[0].Text = "year,t (K)\n1990,1\n1991,hot\n"
	data, _ = f.Marshal()
	os.WriteFile(af, data, 0o644)
	if code, _, errs := runCLI("run", af); code != 1 || !strings.Contains(errs, "obs.csv:3:2") {
		t.Errorf("exit %d: %s", code, errs)
	}
	badCSV := filepath.Join("..", "..", "testdata", "bad", "text_in_value.csv")
	if code, _, errs := runCLI("pack", "--out", filepath.Join(dir, "b.heatledger.json"), badCSV); code != 1 || !strings.Contains(errs, "text_in_value.csv:4:2") {
		t.Errorf("pack of a bad CSV: exit %d: %s", code, errs)
	}
}
