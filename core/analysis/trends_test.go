package analysis

import (
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"heatledger/core/series"
)

func demoWorkspace(t *testing.T) *Workspace {
	t.Helper()
	var files []File
	for _, n := range []string{"tessary_surface.csv", "tessary_forcing.csv", "tessary_ocean_heat.csv"} {
		b, err := os.ReadFile(filepath.Join("..", "..", "testdata", "demo", n))
		if err != nil {
			t.Fatal(err)
		}
		files = append(files, File{n, b})
	}
	w := NewWorkspace(files, series.Options{})
	for _, l := range w.Files {
		if l.Err != nil {
			t.Fatal(l.Err)
		}
	}
	return w
}

func demoTruth(t *testing.T) map[string]any {
	b, err := os.ReadFile(filepath.Join("..", "..", "testdata", "demo", "truth.json"))
	if err != nil {
		t.Fatal(err)
	}
	var m map[string]any
	if err := json.Unmarshal(b, &m); err != nil {
		t.Fatal(err)
	}
	return m
}

// TestDemoTrendCoversTruth: known truth (CHECKS.md, second way). The demo
// world's forced warming 1979-2024 (truth.json outputs) lies inside the
// 95 % interval of the observed record's trend under the autocorrelated
// noise models, while the two records' trends differ as built (the second
// record warms by the factor 0.85).
func TestDemoTrendCoversTruth(t *testing.T) {
	w := demoWorkspace(t)
	truth := demoTruth(t)["outputs"].(map[string]any)["t_trend_1979_2024_k_per_decade"].(float64)
	for _, noise := range []string{"ar1", "arma11", "arma11-ml"} {
		rs, err := w.Trends(TrendSettings{Series: []string{"surface_anomaly", "second_record"}, From: "1979", To: "2024", Noise: noise})
		if err != nil {
			t.Fatal(err)
		}
		r := rs[0]
		if !(r.CILowPerDecade <= truth && truth <= r.CIHighPerDecade) {
			t.Errorf("%s: interval %.4f..%.4f misses the true forced trend %.4f", noise, r.CILowPerDecade, r.CIHighPerDecade, truth)
		}
		if rs[1].SlopePerDecade >= r.SlopePerDecade {
			t.Errorf("%s: second record %.4f not below the first %.4f", noise, rs[1].SlopePerDecade, r.SlopePerDecade)
		}
	}
}

// TestDemoSenAgreesWithOLS: on the demo record the Theil-Sen slope and the
// OLS slope agree within the OLS interval (property: both estimate the same
// linear rate when the noise is symmetric).
func TestDemoSenAgreesWithOLS(t *testing.T) {
	w := demoWorkspace(t)
	rs, err := w.Trends(TrendSettings{Series: []string{"surface_anomaly"}, From: "1990", To: "2020", Noise: "arma11"})
	if err != nil {
		t.Fatal(err)
	}
	s, err := w.Sen(SenSettings{Series: "surface_anomaly", From: "1990", To: "2020"})
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(s.SenSlopePerDecade-rs[0].SlopePerDecade) > 2*rs[0].StderrPerDecade {
		t.Errorf("Sen %.4f vs OLS %.4f +- %.4f", s.SenSlopePerDecade, rs[0].SlopePerDecade, rs[0].StderrPerDecade)
	}
}

func TestParseWindow(t *testing.T) {
	if w, err := ParseWindow("1970:1999"); err != nil || w != [2]string{"1970", "1999"} {
		t.Errorf("%v %v", w, err)
	}
	if w, err := ParseWindow("1991-01:2020-12"); err != nil || w[1] != "2020-12" {
		t.Errorf("%v %v", w, err)
	}
	for _, bad := range []string{"1970", "1970-1999", ":1999", "a:b", "1970:1980:1990"} {
		if _, err := ParseWindow(bad); err == nil {
			t.Errorf("%q accepted", bad)
		}
	}
}

func TestTrendFigure(t *testing.T) {
	w := demoWorkspace(t)
	v, err := w.TrendFigure(TrendSettings{Series: []string{"surface_anomaly", "second_record"}, From: "1979", To: "2024", Noise: "arma11"}, SmoothSettings{Kind: "lowess", Span: 0.2}, "century")
	if err != nil {
		t.Fatal(err)
	}
	if len(v.Table.Rows) != 2 || v.Table.Rows[0][0] != "surface_anomaly" || v.Table.Rows[0][1] != "K" {
		t.Errorf("table %v", v.Table)
	}
	// per century is ten times per decade
	if v.Table.Rows[0][6] != Fmt(10*v.Results[0].SlopePerDecade) {
		t.Errorf("per-century slope %s vs %v", v.Table.Rows[0][6], v.Results[0].SlopePerDecade)
	}
	for _, want := range []string{`data-series="surface_anomaly (K)"`, "hl-band", "LOWESS"} {
		if !strings.Contains(v.SVG, want) {
			t.Errorf("svg lacks %s", want)
		}
	}
	if _, err := w.TrendFigure(TrendSettings{Series: []string{"surface_anomaly"}}, SmoothSettings{Kind: "running", Window: 5000}, ""); err == nil {
		t.Error("running mean longer than the series accepted")
	}
}

func TestTableExports(t *testing.T) {
	tb := Table{Columns: []string{"a", "b"}, Rows: [][]string{{"=cmd()", "-0.5"}, {"x\ty", "1e-3"}}}
	if got := tb.CSV(); got != "a,b\n'=cmd(),-0.5\nx\ty,1e-3\n" {
		t.Errorf("csv %q", got)
	}
	if got := tb.TSV(); got != "a\tb\n=cmd()\t-0.5\nx y\t1e-3\n" {
		t.Errorf("tsv %q", got)
	}
}

func TestComparePanels(t *testing.T) {
	w := demoWorkspace(t)
	v, err := w.CompareFigure(CompareSettings{Series: "surface_anomaly", WindowA: [2]string{"1960", "1989"}, WindowB: [2]string{"1990", "2019"}, Noise: "arma11"})
	if err != nil {
		t.Fatal(err)
	}
	if len(v.Table.Rows) != 4 || !strings.Contains(v.SVG, "broken stick") {
		t.Errorf("compare view %v", v.Table.Rows)
	}
	b, err := w.BreaksFigure(BreaksSettings{Series: "surface_anomaly", Sims: 19, Seed: 2}, nil, nil)
	if err != nil {
		t.Fatal(err)
	}
	if len(b.Table.Rows) != b.Result.Selected+1 || !strings.Contains(b.SVG, "fitted segments") {
		t.Errorf("breaks view %v", b.Table.Rows)
	}
	if bt := BreaksTable(b.Result); len(bt.Rows) != len(b.Result.BIC) {
		t.Errorf("breaks table %v", bt.Rows)
	}
}

func TestGridFigure(t *testing.T) {
	w := demoWorkspace(t)
	v, err := w.GridFigure(GridSettings{Series: "surface_anomaly", MinYears: 20, Noise: "arma11"}, "full")
	if err != nil {
		t.Fatal(err)
	}
	// 76 years, windows of at least 20 years at annual steps: sum over
	// lengths 20..76 of (77 - L) = 57*58/2 = 1653 windows
	if v.Result.Cells != 1653 {
		t.Errorf("cells %d, want 1653", v.Result.Cells)
	}
	if !strings.Contains(v.SVG, `data-key="1950-01|1969-12"`) || !strings.Contains(v.SVG, "excludes the full-record trend") {
		t.Errorf("heatmap lacks a key or the mark legend")
	}
	if _, err := w.GridFigure(GridSettings{Series: "surface_anomaly"}, "other"); err == nil {
		t.Error("bad mark accepted")
	}
}

func TestFmtYear(t *testing.T) {
	// the last month of 2025 sits at 2025 + 11.5/12; a table must not round it into 2026
	for in, want := range map[float64]string{2025 + 11.5/12: "2025.96", 1999.8945: "1999.89", 1950: "1950.00", math.NaN(): "-"} {
		if got := FmtYear(in); got != want {
			t.Errorf("FmtYear(%v) = %q, want %q", in, got, want)
		}
	}
}

// TestTrendAnomalies: the elnino file (statsmodels' dataset, monthly sea
// surface temperature with its seasonal cycle in it) draws the seasonal-cycle
// warning; as monthly anomalies it does not. OLS is linear, so the two slopes
// differ by exactly the slope of the removed climatology (raw - anomalies),
// computed here independently with the textbook formula.
func TestTrendAnomalies(t *testing.T) {
	b, err := os.ReadFile(filepath.Join("..", "..", "testdata", "elnino", "elnino.csv"))
	if err != nil {
		t.Fatal(err)
	}
	w := NewWorkspace([]File{{"elnino.csv", b}}, series.Options{})
	raw, err := w.Trends(TrendSettings{Series: []string{"elnino"}, Noise: "arma11"})
	if err != nil {
		t.Fatal(err)
	}
	an, err := w.Trends(TrendSettings{Series: []string{"elnino"}, Noise: "arma11", Anomalies: true})
	if err != nil {
		t.Fatal(err)
	}
	seasonal := func(ws []string) bool {
		for _, m := range ws {
			if strings.Contains(m, "seasonal cycle") {
				return true
			}
		}
		return false
	}
	if !seasonal(raw[0].Warnings) || seasonal(an[0].Warnings) {
		t.Errorf("seasonal warning: raw %v, anomalies %v", raw[0].Warnings, an[0].Warnings)
	}
	s, _ := w.Find("elnino")
	a, err := w.trendSeries("elnino", true)
	if err != nil {
		t.Fatal(err)
	}
	var tb, cb float64
	n := float64(s.Len())
	for i := range s.Values {
		tb += s.Times[i] / n
		cb += (s.Values[i] - a.Values[i]) / n
	}
	var stc, stt float64
	for i := range s.Values {
		stc += (s.Times[i] - tb) * (s.Values[i] - a.Values[i] - cb)
		stt += (s.Times[i] - tb) * (s.Times[i] - tb)
	}
	climSlope := 10 * stc / stt
	if d := raw[0].SlopePerDecade - an[0].SlopePerDecade; math.Abs(d-climSlope) > 1e-9 {
		t.Errorf("slopes differ by %v, the climatology's slope is %v", d, climSlope)
	}
	if an[0].StderrPerDecade >= raw[0].StderrPerDecade {
		t.Errorf("anomalies should shrink the residual noise: SE %v vs %v", an[0].StderrPerDecade, raw[0].StderrPerDecade)
	}
}
