package brief

import (
	"archive/zip"
	"bytes"
	"io"
	"os"
	"strings"
	"testing"

	"heatledger/core/analysis"
)

const demoPath = "../../testdata/analysis/tessary.heatledger.json"

func demo(t *testing.T) (*analysis.AnalysisFile, *analysis.Workspace) {
	t.Helper()
	data, err := os.ReadFile(demoPath)
	if err != nil {
		t.Fatal(err)
	}
	f, err := analysis.ParseAnalysisFile(data)
	if err != nil {
		t.Fatal(err)
	}
	w, err := f.Workspace()
	if err != nil {
		t.Fatal(err)
	}
	return f, w
}

// TestBuildDemo builds the demo file's brief and checks that its text
// carries the numbers the engines computed, as printed, and the
// references and caveats of the methods used.
func TestBuildDemo(t *testing.T) {
	f, w := demo(t)
	b := Build(f, w, Options{})
	if len(b.Items) != len(f.Brief.Items) {
		t.Fatalf("%d items, want %d", len(b.Items), len(f.Brief.Items))
	}
	for _, it := range b.Items {
		if it.Err != "" {
			t.Errorf("%s/%s: %s", it.Analysis, it.Part, it.Err)
		}
		if it.SVG == "" && it.Table == nil {
			t.Errorf("%s/%s: neither figure nor table", it.Analysis, it.Part)
		}
		if it.SVG != "" && it.Table == nil {
			t.Errorf("%s/%s: a figure without its numbers (text alternative)", it.Analysis, it.Part)
		}
	}
	// one methods and one results paragraph per analysis named
	if len(b.Methods) != 10 || len(b.Results) != 10 {
		t.Errorf("%d methods and %d results paragraphs, want 10 each", len(b.Methods), len(b.Results))
	}
	// the trend's numbers, as the engine gives them, printed to 3 decimals
	var ts *analysis.TrendSettings
	for _, a := range f.Analyses {
		if a.ID == "trend-demo" {
			ts = a.Settings.(*analysis.TrendSettings)
		}
	}
	rs, err := w.Trends(*ts)
	if err != nil {
		t.Fatal(err)
	}
	r := rs[0]
	want := num(r.SlopePerDecade, 3) + " ± " + num(r.StderrPerDecade, 3) + " K per decade"
	if !strings.Contains(strings.Join(b.Results, "\n"), want) {
		t.Errorf("the results do not state the trend %q:\n%s", want, b.Results[0])
	}
	all := strings.Join(append(append(append([]string{}, b.Methods...), b.Caveats...), b.References...), "\n")
	for _, s := range []string{"Santer et al. 2008", "Foster and Rahmstorf 2011", "Myhre et al. 1998", "Otto et al. 2013", "seed 4", "5000 Monte Carlo draws",
		"not a proof of cause", "two-number caricature", "no forecast", "ocean_index 3 months"} {
		if !strings.Contains(all, s) {
			t.Errorf("the brief lacks %q", s)
		}
	}
	if len(b.References) < 8 {
		t.Errorf("%d references", len(b.References))
	}
}

// TestBuildReportsFailures: an item naming a missing part or a failing
// analysis says why, and the rest is still written.
func TestBuildReportsFailures(t *testing.T) {
	f, w := demo(t)
	bad, _ := analysis.NewAnalysis("bad-trend", analysis.TrendSettings{Series: []string{"no_such_series"}})
	f.Analyses = append(f.Analyses, bad)
	f.Brief = &analysis.BriefSpec{Items: []analysis.BriefItem{{Analysis: "trend-demo", Part: "nope"}, {Analysis: "bad-trend"}, {Analysis: "trend-demo"}}}
	b := Build(f, w, Options{})
	if !strings.Contains(b.Items[0].Err, `no part "nope"`) || !strings.Contains(b.Items[1].Err, "no_such_series") || b.Items[2].Err != "" {
		t.Errorf("item errors: %q / %q / %q", b.Items[0].Err, b.Items[1].Err, b.Items[2].Err)
	}
	if !strings.Contains(strings.Join(b.Results, "\n"), "could not be run") {
		t.Error("the failed analysis is not reported in the results")
	}
	// a failure handed in is reported as it is, without running again
	failed := map[string]string{"trend-demo": "kept from before"}
	b = Build(f, w, Options{Failed: failed})
	if b.Items[2].Err != "kept from before" || !strings.Contains(b.Items[1].Err, "no_such_series") || failed["bad-trend"] == "" {
		t.Errorf("with Failed: %q / %q; failed map %v", b.Items[2].Err, b.Items[1].Err, failed)
	}
}

// TestExportsEscapeAndZip: labels from files never become markup in the
// HTML or the Markdown, and the zip reads back with archive/zip (the
// standard library's reader checks the CRC-32 of every entry).
func TestExportsEscapeAndZip(t *testing.T) {
	b := &Brief{Title: `<script>alert(1)</script> & "x"`, Methods: []string{"a <b>bold</b> claim_with *stars*"}, Results: []string{"r"},
		Items: []Item{{Analysis: "a", Part: "table", Title: "<i>t</i>", Table: &analysis.Table{Columns: []string{"<c>"}, Rows: [][]string{{"|pipe|"}}}}}}
	h := b.HTML()
	if strings.Contains(h, "<script>") || strings.Contains(h, "<b>bold") || strings.Contains(h, "<i>t") || strings.Contains(h, "<c>") {
		t.Errorf("markup leaked into the HTML:\n%s", h)
	}
	md, _ := b.Markdown()
	for _, bad := range []string{"<script>", "<b>", "*stars*", "|pipe|"} {
		if strings.Contains(md, bad) {
			t.Errorf("Markdown holds %q unescaped:\n%s", bad, md)
		}
	}
	files := []ZipFile{{Name: "brief.md", Data: []byte(md)}, {Name: "figure-01-a-figure.svg", Data: []byte("<svg></svg>")}, {Name: "empty.txt"}}
	z := Zip(files)
	r, err := zip.NewReader(bytes.NewReader(z), int64(len(z)))
	if err != nil {
		t.Fatal(err)
	}
	if len(r.File) != len(files) {
		t.Fatalf("%d entries", len(r.File))
	}
	for i, zf := range r.File {
		rc, err := zf.Open()
		if err != nil {
			t.Fatal(err)
		}
		got, err := io.ReadAll(rc)
		if err != nil {
			t.Fatalf("%s: %v", zf.Name, err)
		}
		if zf.Name != files[i].Name || !bytes.Equal(got, files[i].Data) {
			t.Errorf("entry %d: %s %q", i, zf.Name, got)
		}
	}
}

func TestNum(t *testing.T) {
	for _, c := range []struct {
		v    float64
		d    int
		want string
	}{{0.1449, 3, "0.145"}, {-0.0001, 3, "0.000"}, {-1.5, 1, "-1.5"}} {
		if got := num(c.v, c.d); got != c.want {
			t.Errorf("num(%v, %d) = %q, want %q", c.v, c.d, got, c.want)
		}
	}
}

// TestDisplayChoices: an item drawn with the page's choices (smoothing,
// slope unit, grid mark) shows them, and the text stays that of the
// standard run.
func TestDisplayChoices(t *testing.T) {
	f, w := demo(t)
	plain := Build(f, w, Options{})
	f.Brief.Items = []analysis.BriefItem{
		{Analysis: "trend-demo", Display: &analysis.Display{Smooth: analysis.SmoothSettings{Kind: "running", Window: 12}, Per: "century"}},
		{Analysis: "grid-demo", Display: &analysis.Display{Mark: "full"}},
		{Analysis: "grid-demo"},
	}
	b := Build(f, w, Options{})
	for _, it := range b.Items {
		if it.Err != "" {
			t.Fatalf("%s: %s", it.Analysis, it.Err)
		}
	}
	if !strings.Contains(b.Items[0].SVG, "running mean") {
		t.Error("the trend figure drawn with a running mean does not show it")
	}
	if !strings.Contains(strings.Join(b.Items[0].Table.Columns, " "), "century") {
		t.Errorf("the trend figure's table is not per century: %v", b.Items[0].Table.Columns)
	}
	if b.Items[1].SVG == b.Items[2].SVG {
		t.Error("the grid marked against the full-record trend is drawn as the one marked against zero")
	}
	if plain.Results[0] != b.Results[0] {
		t.Errorf("drawing choices changed the text:\n%s\n%s", plain.Results[0], b.Results[0])
	}
}
