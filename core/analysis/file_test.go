package analysis

import (
	"bytes"
	"encoding/json"
	"errors"
	"flag"
	"os"
	"path/filepath"
	"reflect"
	"strconv"
	"strings"
	"testing"

	"heatledger/core/budget"
	"heatledger/core/series"
)

var update = flag.Bool("update", false, "rewrite testdata/analysis/tessary.heatledger.json from testdata/demo")

const demoAnalysisPath = "../../testdata/analysis/tessary.heatledger.json"

func ptr[T any](v T) *T { return &v }

// demoAnalyses has one analysis of every kind on the Tessary demo data.
// The CLI test (cmd/heatledger/run_test.go) runs the same settings as
// command lines; keep the two in step.
func demoAnalyses() []any {
	fc := ForcingSettings{Formula: "myhre1998", Components: []ForcingComponent{
		{Series: "co2", Kind: "co2"}, {Series: "ch4", Kind: "ch4"}, {Series: "n2o", Kind: "n2o"},
		{Series: "aod", Kind: "aod"}, {Series: "tsi", Kind: "tsi"}, {Series: "aerosol_erf", Kind: "erf", Scale: ptr(1.2)},
	}}
	return []any{
		TrendSettings{Series: []string{"surface_anomaly"}, From: "1980", To: "2019", Noise: "ar1", Level: 0.95},
		CompareSettings{Series: "surface_anomaly", WindowA: [2]string{"1950", "1979"}, WindowB: [2]string{"1980", "2024"}, Noise: "arma11", Level: 0.9},
		GridSettings{Series: "ocean_heat", MinYears: 15, Step: "year", Noise: "ar1", Level: 0.95},
		BreaksSettings{Series: "surface_anomaly", From: "1970", Max: 2, MinYears: 15, Sims: 30, Seed: 7, Model: "slope", Noise: "ar1"},
		SenSettings{Series: "ocean_heat", From: "1970", Correction: "hamed-rao", Level: 0.95},
		AdjustSettings{Target: "surface_anomaly", Drivers: []AdjustDriver{{Name: "ocean_index"}, {Name: "aod", MinLag: ptr(0), MaxLag: ptr(24)}},
			Harmonics: ptr(-1), Trend: "linear", Windows: [][2]string{{"", ""}, {"1960", "1989"}, {"1990", "2019"}},
			Change: &[2][2]string{{"1960", "1989"}, {"1990", "2019"}}, Noise: "ar1", Level: 0.95},
		fc,
		RespondSettings{Forcing: fc, Model: ModelSettings{Model: "twolayer", ECS: ptr(3.0), TCR: ptr(1.8)},
			Windows: [][2]string{{"1979", "2024"}}, Record: "surface_anomaly", Noise: "ar1", Level: 0.95},
		HeatSettings{Series: "ocean_heat", From: "2005", To: "2020", Level: 0.95, HeatInput: HeatInput{Area: "earth", Noise: "ar1", OceanFraction: 0.91}},
		SensitivitySettings{DT: BudgetQuantity{Typed: &budget.Dist{Kind: "normal", Mean: 0.8, SD: 0.1}},
			DF: []BudgetQuantity{{Typed: &budget.Dist{Kind: "normal", Mean: 2.5, SD: 0.4}}},
			DN: BudgetQuantity{Typed: &budget.Dist{Kind: "normal", Mean: 0.5, SD: 0.15}}, Draws: 5000, Seed: 4},
	}
}

func demoFile(t *testing.T) *AnalysisFile {
	t.Helper()
	f := NewAnalysisFile()
	for _, n := range []string{"tessary_surface.csv", "tessary_forcing.csv", "tessary_ocean_heat.csv"} {
		b, err := os.ReadFile(filepath.Join("..", "..", "testdata", "demo", n))
		if err != nil {
			t.Fatal(err)
		}
		f.Files = append(f.Files, DataFile{Name: n, Text: string(b)})
	}
	f.Roles = map[string]string{"surface_anomaly": RoleTarget, "ocean_index": RoleDriver, "aod": RoleDriver, "co2": RoleForcing, "ocean_heat": RoleHeat}
	for _, s := range demoAnalyses() {
		k := KindOf(s)
		a, err := NewAnalysis(k+"-demo", s)
		if err != nil {
			t.Fatal(err)
		}
		f.Analyses = append(f.Analyses, a)
	}
	f.Brief = &BriefSpec{Title: "Tessary: how fast it warms, and why", Items: []BriefItem{
		{Analysis: "trend-demo"}, {Analysis: "compare-demo", Part: "table"}, {Analysis: "grid-demo"},
		{Analysis: "breaks-demo"}, {Analysis: "sen-demo", Part: "table"}, {Analysis: "adjust-demo", Part: "adjusted"},
		{Analysis: "forcing-demo"}, {Analysis: "respond-demo", Part: "attribution"}, {Analysis: "heat-demo", Part: "rate"},
		{Analysis: "sensitivity-demo", Part: "ecs"}, {Analysis: "sensitivity-demo", Part: "table"},
	}}
	return f
}

func TestDemoAnalysisFileUpToDate(t *testing.T) {
	want, err := demoFile(t).Marshal()
	if err != nil {
		t.Fatal(err)
	}
	if *update {
		if err := os.WriteFile(demoAnalysisPath, want, 0o644); err != nil {
			t.Fatal(err)
		}
	}
	got, err := os.ReadFile(demoAnalysisPath)
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(got, want) {
		t.Fatalf("%s is stale: run go test ./core/analysis -run TestDemoAnalysisFileUpToDate -update", demoAnalysisPath)
	}
}

func readDemo(t *testing.T) (*AnalysisFile, []byte) {
	t.Helper()
	data, err := os.ReadFile(demoAnalysisPath)
	if err != nil {
		t.Fatal(err)
	}
	f, err := ParseAnalysisFile(data)
	if err != nil {
		t.Fatal(err)
	}
	return f, data
}

func TestAnalysisFileRoundTrip(t *testing.T) {
	f, data := readDemo(t)
	if !reflect.DeepEqual(f, demoFile(t)) {
		t.Error("parsed file differs from the one written")
	}
	again, err := f.Marshal()
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(again, data) {
		t.Error("marshal(parse(file)) differs from the file")
	}
	// every kind is there, once
	seen := map[string]bool{}
	for _, a := range f.Analyses {
		seen[a.Kind] = true
	}
	for _, k := range Kinds {
		if !seen[k] {
			t.Errorf("the demo file has no %s analysis", k)
		}
	}
	// plain json.Unmarshal reads the same
	var g AnalysisFile
	if err := json.Unmarshal(data, &g); err != nil || !reflect.DeepEqual(&g, f) {
		t.Errorf("json.Unmarshal: %v", err)
	}
}

func TestRunDemoReproducible(t *testing.T) {
	f, _ := readDemo(t)
	r1, err := Run(f)
	if err != nil {
		t.Fatal(err)
	}
	for _, r := range r1.Results {
		if r.Error != "" || len(r.Result) == 0 {
			t.Errorf("%s: error %q, result %d bytes", r.ID, r.Error, len(r.Result))
		}
	}
	if len(r1.Results) != len(f.Analyses) {
		t.Fatalf("%d results for %d analyses", len(r1.Results), len(f.Analyses))
	}
	b1, err := r1.Marshal()
	if err != nil {
		t.Fatal(err)
	}
	f2, _ := readDemo(t)
	r2, err := Run(f2)
	if err != nil {
		t.Fatal(err)
	}
	b2, _ := r2.Marshal()
	if !bytes.Equal(b1, b2) {
		t.Error("two runs of the same file give different reports")
	}
	// a different seed changes the Monte Carlo results (the check can fail)
	for i, a := range f2.Analyses {
		if s, ok := a.Settings.(*SensitivitySettings); ok {
			s.Seed = 5
			v, err := mustWorkspace(t, f2).RunAnalysis(f2.Analyses[i])
			if err != nil {
				t.Fatal(err)
			}
			b, _ := json.Marshal(v)
			if bytes.Equal(b, r1.Results[i].Result) {
				t.Error("another seed gave the same sensitivity result")
			}
		}
	}
	var rep map[string]any
	if err := json.Unmarshal(b1, &rep); err != nil || rep["format"] != ReportFormat || rep["version"] != 1.0 {
		t.Errorf("report header: %v %v", err, rep["format"])
	}
}

func mustWorkspace(t *testing.T, f *AnalysisFile) *Workspace {
	t.Helper()
	w, err := f.Workspace()
	if err != nil {
		t.Fatal(err)
	}
	return w
}

func TestRunFailureIsolated(t *testing.T) {
	f, _ := readDemo(t)
	bad, _ := NewAnalysis("missing", TrendSettings{Series: []string{"no_such_series"}})
	badSen, _ := NewAnalysis("late", SenSettings{Series: "ocean_heat", From: "2090"})
	f.Analyses = append([]Analysis{bad}, append(f.Analyses[:1], badSen)...)
	rep, err := Run(f)
	if err != nil {
		t.Fatal(err)
	}
	if rep.Failed() != 2 || !strings.Contains(rep.Results[0].Error, "no_such_series") || rep.Results[0].Result != nil {
		t.Errorf("failed %d, first %+v", rep.Failed(), rep.Results[0])
	}
	if rep.Results[1].Error != "" || rep.Results[1].Kind != KindTrend || len(rep.Results[1].Result) == 0 {
		t.Errorf("the good analysis after a failing one: %+v", rep.Results[1])
	}
	if rep.Results[2].Error == "" {
		t.Error("a window after the data did not fail")
	}
	b, _ := rep.Marshal()
	if !bytes.Contains(b, []byte(`"error": "no series named \"no_such_series\"`)) {
		t.Errorf("report: %.300s", b)
	}
}

func TestWorkspaceReadingOptions(t *testing.T) {
	f := NewAnalysisFile()
	none := []float64{}
	f.Files = []DataFile{
		{Name: "a.csv", Text: "year;t (K)\n1990;-999\n1991;120\n1992;130\n", Reading: ReadingOptions{Delimiter: "semicolon", Scale: 0.01, Missing: &none}},
		{Name: "b.csv", Text: "year,t (K)\n1990,0\n1991,-999\n1992,2\n"},
	}
	w, err := f.Workspace()
	if err != nil {
		t.Fatal(err)
	}
	a, err := w.Find("a.csv:t")
	if err != nil {
		t.Fatal(err)
	}
	if a.Values[0] != -9.99 || a.Values[1] != 1.2 {
		t.Errorf("a: %v", a.Values)
	}
	b, _ := w.Find("b.csv:t")
	if b.Values[1] == b.Values[1] { // NaN: the default codes apply
		t.Errorf("b: %v", b.Values)
	}
	// a file that does not read is named with where
	f.Files[1].Text = "year,t (K)\n1990,1\n1991,warm\n"
	if _, err := f.Workspace(); err == nil || !strings.Contains(err.Error(), "b.csv:3:2") {
		t.Errorf("bad embedded file: %v", err)
	}
	if _, err := Run(f); err == nil {
		t.Error("Run read a damaged embedded file")
	}
	r := ReadingOf(mustOptions(t, ReadingOptions{Delimiter: "tab", Scale: 2, DateOrder: "dmy", MinDays: 15, Missing: &none}))
	if r.Delimiter != "tab" || r.Scale != 2 || r.DateOrder != "dmy" || r.MinDays != 15 || r.Missing == nil || len(*r.Missing) != 0 {
		t.Errorf("ReadingOf: %+v", r)
	}
}

func mustOptions(t *testing.T, r ReadingOptions) (o series.Options) {
	t.Helper()
	o, err := r.Options()
	if err != nil {
		t.Fatal(err)
	}
	return o
}

// parseErr parses and returns the *FileError.
func parseErr(t *testing.T, text string) *FileError {
	t.Helper()
	_, err := ParseAnalysisFile([]byte(text))
	var fe *FileError
	if !errors.As(err, &fe) {
		t.Fatalf("%q: error %v is not a *FileError", text, err)
	}
	return fe
}

func TestVersionRefusal(t *testing.T) {
	newer := parseErr(t, "{\n  \"format\": \"heatledger-analysis\",\n  \"version\": 2,\n  \"future_field\": 1\n}")
	if newer.Line != 3 || newer.Column != 14 || !strings.Contains(newer.Msg, "version 2 is newer") || !strings.Contains(newer.Msg, "(version 1)") {
		t.Errorf("newer: %v", newer)
	}
	older := parseErr(t, `{"format":"heatledger-analysis","version":0,"files":[],"analyses":[]}`)
	if older.Column != 43 || !strings.Contains(older.Msg, "version 0 is older") || !strings.Contains(older.Msg, "1 to 1") {
		t.Errorf("older: %v", older)
	}
	if e := parseErr(t, `{"format":"heatledger-report","version":1}`); !strings.Contains(e.Msg, "report") {
		t.Errorf("report: %v", e)
	}
	if e := parseErr(t, `{"version":1}`); !strings.Contains(e.Msg, "not a Heatledger analysis file") {
		t.Errorf("no format: %v", e)
	}
	if e := parseErr(t, `{"format":"heatledger-analysis","version":1.5}`); !strings.Contains(e.Msg, "whole number for version") {
		t.Errorf("1.5: %v", e)
	}
}

func TestUnknownFieldPath(t *testing.T) {
	text := `{"format":"heatledger-analysis","version":1,"files":[],"analyses":[
 {"id":"a","kind":"trend","settings":{"series":["x"]}},
 {"id":"b","kind":"respond","settings":{"model":{"ecs":3,"lambada":1}}}]}`
	e := parseErr(t, text)
	if e.Path != "analyses[1].settings.model.lambada" || e.Line != 3 || e.Column != 58 || !strings.Contains(e.Msg, `unknown field "lambada"`) || !strings.Contains(e.Msg, "lambda") {
		t.Errorf("%v (path %s)", e, e.Path)
	}
	e = parseErr(t, `{"format":"heatledger-analysis","version":1,"files":[{"name":"a","text":"","reading":{"delim":"tab"}}],"analyses":[]}`)
	if e.Path != "files[0].reading.delim" || !strings.Contains(e.Msg, "delimiter") {
		t.Errorf("%v (path %s)", e, e.Path)
	}
	// the embedded heat settings' fields are known
	if _, err := ParseAnalysisFile([]byte(`{"format":"heatledger-analysis","version":1,"files":[],"analyses":[{"id":"h","kind":"heat","settings":{"series":"x","area":"ocean","ocean_fraction":0.9}}]}`)); err != nil {
		t.Error(err)
	}
}

func TestLineColumn(t *testing.T) {
	data := []byte("ab\nçé{x\n")
	if l, c := lineCol(data, bytes.IndexByte(data, 'x')); l != 2 || c != 4 {
		t.Errorf("line %d column %d", l, c)
	}
}

func TestNewAnalysisKinds(t *testing.T) {
	for _, k := range Kinds {
		a, err := NewAnalysis("x", reflect.New(kindTypes[k]).Interface())
		if err != nil || a.Kind != k {
			t.Errorf("%s: %v %v", k, a.Kind, err)
		}
	}
	if _, err := NewAnalysis("x", 3); err == nil {
		t.Error("an int made an analysis")
	}
	if _, err := NewAnalysis("../x", TrendSettings{}); err == nil {
		t.Error("a path as ID")
	}
}

// TestBadAnalysisFiles reads testdata/bad-analysis/cases.tsv: each damaged
// file must be refused at the line and column given, with the words given.
func TestBadAnalysisFiles(t *testing.T) {
	dir := filepath.Join("..", "..", "testdata", "bad-analysis")
	man, err := os.ReadFile(filepath.Join(dir, "cases.tsv"))
	if err != nil {
		t.Fatal(err)
	}
	n := 0
	for _, line := range strings.Split(string(man), "\n") {
		if line == "" || strings.HasPrefix(line, "#") {
			continue
		}
		f := strings.Split(line, "\t")
		if len(f) != 4 {
			t.Fatalf("manifest line %q", line)
		}
		n++
		data, err := os.ReadFile(filepath.Join(dir, f[0]))
		if err != nil {
			t.Fatal(err)
		}
		_, err = ParseAnalysisFile(data)
		var fe *FileError
		if !errors.As(err, &fe) {
			t.Errorf("%s: error %v, want a *FileError", f[0], err)
			continue
		}
		if pos := strings.Join([]string{itoa(fe.Line), itoa(fe.Column)}, ":"); pos != f[1]+":"+f[2] {
			t.Errorf("%s: at %s, want %s:%s (%s)", f[0], pos, f[1], f[2], fe.Msg)
		}
		for _, w := range strings.Split(f[3], "|") {
			if !strings.Contains(fe.Msg, w) {
				t.Errorf("%s: %q lacks %q", f[0], fe.Msg, w)
			}
		}
	}
	if n < 20 {
		t.Errorf("only %d cases", n)
	}
}

func itoa(i int) string { return strconv.Itoa(i) }

// FuzzParseAnalysisFile: no input panics; what parses marshals and parses
// again to the same.
func FuzzParseAnalysisFile(f *testing.F) {
	files, _ := filepath.Glob(filepath.Join("..", "..", "testdata", "bad-analysis", "*.json"))
	for _, p := range files {
		b, _ := os.ReadFile(p)
		f.Add(b)
	}
	f.Add([]byte(`{"format":"heatledger-analysis","version":1,"files":[{"name":"a.csv","text":"year,t\n1990,1\n1991,2\n1992,4\n"}],"analyses":[{"id":"t","kind":"trend","settings":{"series":["t"]}}]}`))
	f.Add([]byte(`{"format":"heatledger-analysis","version":1,"files":[],"roles":{"t":"target"},"analyses":[{"id":"t","kind":"trend","settings":{"series":["t"]}}],"brief":{"title":"x","items":[{"analysis":"t","part":"figure"}]},"page":{"trends":{"noise":"ar1"}}}`))
	f.Fuzz(func(t *testing.T, data []byte) {
		af, err := ParseAnalysisFile(data)
		if err != nil {
			var fe *FileError
			if !errors.As(err, &fe) || fe.Line < 1 || fe.Column < 1 {
				t.Fatalf("error %v without a place", err)
			}
			return
		}
		b, err := af.Marshal()
		if err != nil {
			t.Fatal(err)
		}
		if _, err := ParseAnalysisFile(b); err != nil {
			t.Fatalf("re-parse: %v", err)
		}
	})
}

// TestBriefItemsChecked: a brief item must name one of the file's
// analyses; the refusal says where.
func TestBriefItemsChecked(t *testing.T) {
	data := []byte("{\n  \"format\": \"heatledger-analysis\",\n  \"version\": 1,\n  \"files\": [],\n  \"analyses\": [],\n  \"brief\": {\"items\": [{\"analysis\": \"gone\"}]}\n}\n")
	_, err := ParseAnalysisFile(data)
	var fe *FileError
	if !errors.As(err, &fe) || fe.Path != "brief.items[0].analysis" || fe.Line != 6 || !strings.Contains(fe.Msg, `"gone"`) {
		t.Fatalf("error %v (%+v), want brief.items[0].analysis at line 6", err, fe)
	}
}
