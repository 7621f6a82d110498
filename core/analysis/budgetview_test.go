package analysis

import (
	"context"
	"fmt"
	"math"
	"strconv"
	"strings"
	"testing"

	"heatledger/core/budget"
	"heatledger/core/series"
)

// TestBudgetFormDefaultsDemo: on the demo world the form starts from its
// records (surface temperature, the forcing rebuilt from its components,
// the heating rate of its ocean heat content with the ocean share 0.91)
// over its first 20 and last 15 whole years, and the run brackets the
// world's known ECS, F2x/lambda = 3.93/1.2 = 3.275 K (truth.json), within
// its 5-95 % range.
func TestBudgetFormDefaultsDemo(t *testing.T) {
	w := demoWorkspace(t)
	f := w.DefaultBudgetForm()
	if f.DT.Source != SourceSeries || !strings.HasSuffix(f.DT.Series, ":surface_anomaly") ||
		len(f.DF) != 1 || f.DF[0].Source != SourceForcing || f.DF[0].Sampling != budget.SamplingNone ||
		f.DN.Source != SourceHeat || !strings.HasSuffix(f.DN.Series, ":ocean_heat") || f.DN.OceanFraction != "0.91" {
		t.Fatalf("default form %+v", f)
	}
	if f.Base != [2]string{"1950", "1969"} || f.Final != [2]string{"2011", "2025"} || !f.Sweep || f.Draws != "100000" {
		t.Errorf("periods %v %v, sweep %v, draws %s", f.Base, f.Final, f.Sweep, f.Draws)
	}
	s, err := w.BudgetSettings(f)
	if err != nil {
		t.Fatal(err)
	}
	if s.F2x == nil || math.Abs(s.F2x.Center()-3.93) > 1e-9 || math.Abs(s.F2x.Quantile(0.95)-4.40) > 1e-9 {
		t.Errorf("F2x %+v", s.F2x)
	}
	s.Draws = 40000
	s.Sweep.Draws = 4000
	var last, total int
	v, err := w.SensitivityFigure(s, context.Background(), func(d, tot int) { last, total = d, tot })
	if err != nil {
		t.Fatal(err)
	}
	r := v.Report.Result
	ecs := demoTruth(t)["model"].(map[string]any)["ecs_k"].(float64)
	if !(r.ECS.P05 <= ecs && ecs <= r.ECS.P95) {
		t.Errorf("demo ECS median %.3f (5-95 %%: %.3f to %.3f), truth %.3f", r.ECS.Median, r.ECS.P05, r.ECS.P95, ecs)
	}
	if last != total || total != 40000+len(v.Report.Sweep.Points)*4000 {
		t.Errorf("progress %d of %d", last, total)
	}
	// the table: ECS and TCR rows, the median cell equal to the result's
	tb := v.Table
	if len(tb.Rows) != 2 || tb.Rows[0][0] != "ECS (K)" || tb.Rows[1][0] != "TCR (K)" || tb.Rows[0][2] != Fmt(r.ECS.Median) ||
		tb.Rows[1][7] != Fmt(r.TCR.P95) || len(tb.Columns) != len(tb.Rows[0]) {
		t.Errorf("table %v %v", tb.Columns, tb.Rows)
	}
	if r.NonpositiveFraction != 0 || !strings.HasPrefix(v.Nonpositive, "None of the 40000 draws") {
		t.Errorf("nonpositive %g: %q", r.NonpositiveFraction, v.Nonpositive)
	}
	// the histograms carry both ranges and both marks
	for _, svg := range []string{v.ECSSVG, v.TCRSVG} {
		for _, want := range []string{`class="hl-interval" data-series="5-95 %"`, `class="hl-interval" data-series="17-83 %"`,
			`class="hl-mark" data-series="median"`, `class="hl-mark" data-series="central estimate"`, `class="hl-bin"`} {
			if !strings.Contains(svg, want) {
				t.Errorf("histogram lacks %s", want)
			}
		}
	}
	// the inputs: one row per part with the sources named
	if len(v.Inputs.Rows) != 4 || v.Inputs.Rows[1][1] != "total forcing" || !strings.Contains(v.Inputs.Rows[2][2], "heating rates") {
		t.Errorf("inputs %v", v.Inputs.Rows)
	}
	if len(v.Figures) != 4 || v.Figures[1].SVG != "" || !strings.Contains(v.Figures[1].Note, "fixed") || v.Figures[0].SVG == "" {
		t.Errorf("input figures: %d, dF note %q", len(v.Figures), v.Figures[1].Note)
	}
	// the sweep: 15-year final periods from the first after the base period
	// (1970-1984) to the last (2011-2025), one table row each
	sw := v.Report.Sweep
	if v.Sweep == nil || len(v.Sweep.Rows) != len(sw.Points) || sw.Points[0].EndYear != 1984 || sw.Points[len(sw.Points)-1].EndYear != 2025 {
		t.Fatalf("sweep table %v", v.Sweep)
	}
	lastRow := v.Sweep.Rows[len(v.Sweep.Rows)-1]
	if lastRow[1] != "2011 to 2025" || lastRow[2] != fmtK(sw.Points[len(sw.Points)-1].ECS.Median) {
		t.Errorf("last sweep row %v", lastRow)
	}
	// early final periods have small changes and huge ranges: the axis is
	// cut and the note says where
	if !strings.Contains(v.SweepNote, "The axis stops at") || !strings.Contains(v.SweepSVG, v.SweepNote[:20]) {
		t.Errorf("sweep note %q", v.SweepNote)
	}
	for _, want := range []string{`data-series="ECS median"`, `data-series="TCR median"`, `data-series="chosen final period"`, `class="hl-band"`} {
		if !strings.Contains(v.SweepSVG, want) {
			t.Errorf("sweep chart lacks %s", want)
		}
	}
}

// TestHistValuesRebin: the values rebuilt from an engine histogram fall in
// the chart's bins exactly as the engine counted them, with the draws
// outside the range and the unbounded ones counted in the chart's note.
func TestHistValuesRebin(t *testing.T) {
	w := NewWorkspace(nil, series.Options{})
	// wide inputs, so that some draws have dF - dN <= 0
	s := SensitivitySettings{
		DT:    BudgetQuantity{Typed: ptrDist(budget.Normal(1, 0.2))},
		DF:    []BudgetQuantity{{Typed: ptrDist(budget.Normal(1.5, 0.6))}},
		DN:    BudgetQuantity{Typed: ptrDist(budget.Normal(0.6, 0.3))},
		Draws: 30000, Seed: 5,
	}
	rep, err := w.Sensitivity(s, nil, nil)
	if err != nil {
		t.Fatal(err)
	}
	h := rep.Result.ECS.Histogram
	if rep.Result.NonpositiveFraction == 0 || h.Unbounded == 0 || h.Below+h.Above == 0 {
		t.Fatalf("test inputs give no unbounded or clipped draws: %+v", h)
	}
	c := histogramChart(h, "", "ECS (K)", 0, 0)
	b := c.Bin()
	if len(b.Counts) != len(h.Counts) || b.Below != h.Below || b.Above != h.Above || b.NonFinite != h.Unbounded {
		t.Fatalf("chart bins %d (below %d above %d non-finite %d), engine %d (%d %d %d)",
			len(b.Counts), b.Below, b.Above, b.NonFinite, len(h.Counts), h.Below, h.Above, h.Unbounded)
	}
	for i := range b.Counts {
		if b.Counts[i] != h.Counts[i] || math.Abs(b.Edges[i]-(h.Lo+float64(i)*h.Width)) > 1e-9*h.Width {
			t.Fatalf("bin %d: chart %d at %g, engine %d at %g", i, b.Counts[i], b.Edges[i], h.Counts[i], h.Lo+float64(i)*h.Width)
		}
	}
	// above HistogramCap draws the counts are divided by a whole factor and
	// the draws outside the range are stated beside the chart instead
	big := &budget.Histogram{Lo: h.Lo, Width: h.Width, Counts: make([]int, len(h.Counts)), Below: 40 * h.Below, Above: 40 * h.Above, Unbounded: 40 * h.Unbounded, Total: 40 * h.Total}
	for i, n := range h.Counts {
		big.Counts[i] = 40 * n
	}
	vals, k := histValues(big)
	if want := (big.Total + HistogramCap - 1) / HistogramCap; k != want || len(vals) > HistogramCap {
		t.Errorf("factor %d for %d draws (want %d), %d values", k, big.Total, want, len(vals))
	}
	bb := histogramChart(big, "", "ECS (K)", 0, 0).Bin()
	for i := range bb.Counts {
		if math.Abs(float64(bb.Counts[i])-float64(big.Counts[i])/float64(k)) > 0.5 {
			t.Fatalf("bin %d: %d drawn for %d draws / %d", i, bb.Counts[i], big.Counts[i], k)
		}
	}
	if note := histNote("ECS", big); bb.NonFinite != 0 || !strings.Contains(note, fmt.Sprintf("%d unbounded", big.Unbounded)) ||
		!strings.Contains(note, fmt.Sprintf("divided by %d", k)) {
		t.Errorf("thinned histogram: %d non-finite drawn, note %q", bb.NonFinite, note)
	}
	if note := histNote("ECS", h); strings.Contains(note, "divided") || !strings.Contains(note, fmt.Sprintf("The %d ECS draws", h.Unbounded)) {
		t.Errorf("note %q", note)
	}

	// the statement says how many and never hides them
	v := SensitivityViewOf(rep, [2]string{}, [2]string{})
	n := int(math.Round(rep.Result.NonpositiveFraction * 30000))
	if !strings.Contains(v.Nonpositive, fmt.Sprintf("(%d of 30000)", n)) || !strings.Contains(v.Nonpositive, "dF − dN ≤ 0") {
		t.Errorf("statement %q", v.Nonpositive)
	}
	if !strings.Contains(v.ECSSVG, "not finite") {
		t.Error("the ECS chart's note does not count the unbounded draws")
	}
	if rep.Result.ECS.P95 == math.Inf(1) && v.Table.Rows[0][7] != "unbounded" {
		t.Errorf("unbounded 95th percentile shown as %q", v.Table.Rows[0][7])
	}
}

func ptrDist(d budget.Dist) *budget.Dist { return &d }

// TestHeatFigureDemo: the heating-rate panel on the demo's ocean heat
// content. 1 ZJ per year is 0.0621 W m-2 over Earth's surface
// (../shared/CHECKS.md); the imbalance row is the rate over the ocean
// share.
func TestHeatFigureDemo(t *testing.T) {
	w := demoWorkspace(t)
	hs := w.DefaultHeatSettings()
	if !strings.HasSuffix(hs.Series, ":ocean_heat") || hs.OceanFraction != 0.91 || hs.Noise != "ar1" {
		t.Fatalf("default heat settings %+v", hs)
	}
	hs.From, hs.To = "2005", "2020"
	v, err := w.HeatFigure(hs)
	if err != nil {
		t.Fatal(err)
	}
	r := v.Result
	if len(v.Table.Rows) != 3 || !strings.Contains(v.Table.Rows[1][0], "W m-2") || !strings.Contains(v.Table.Rows[2][0], "imbalance") {
		t.Fatalf("table %v", v.Table.Rows)
	}
	zj, _ := strconv.ParseFloat(v.Table.Rows[0][1], 64)
	wm2, _ := strconv.ParseFloat(v.Table.Rows[1][1], 64)
	imb, _ := strconv.ParseFloat(v.Table.Rows[2][1], 64)
	// ../shared/CHECKS.md: 1 ZJ/yr = 0.0621 W m-2 over 5.10e14 m2
	if math.Abs(wm2/zj-0.0621) > 0.0001 || math.Abs(imb-wm2/0.91) > 0.002*wm2 {
		t.Errorf("%g ZJ/yr -> %g W m-2 -> imbalance %g", zj, wm2, imb)
	}
	// the demo world's mean imbalance 2005-2020 (truth.json) lies in the
	// imbalance row's interval
	want := demoTruth(t)["outputs"].(map[string]any)["mean_imbalance_2005_2020_w_m2"].(float64)
	lo, _ := strconv.ParseFloat(v.Table.Rows[2][3], 64)
	hi, _ := strconv.ParseFloat(v.Table.Rows[2][4], 64)
	if !(lo <= want && want <= hi) {
		t.Errorf("imbalance interval %g to %g, truth %g", lo, hi, want)
	}
	if !strings.Contains(v.Caption, "2005-01") && !strings.Contains(v.Caption, "2005") {
		t.Errorf("caption %q", v.Caption)
	}
	// the content chart: the series and its trend, whose line has the
	// fitted slope over the window
	for _, want := range []string{`data-series="ocean_heat"`, `data-series="trend 2005 to 2020"`} {
		if !strings.Contains(v.ContentSVG, want) {
			t.Errorf("content chart lacks %s", want)
		}
	}
	if !strings.Contains(v.RateSVG, `data-series="centred differences"`) || !strings.Contains(v.RateSVG, `class="hl-band"`) {
		t.Error("rate chart lacks the differences or the interval band")
	}
	if r.Rates == nil || r.Rates.Len() != 76 {
		t.Errorf("rate series %v", r.Rates)
	}
	// over the ocean's area the W m-2 row scales by the areas; without an
	// ocean share there is no imbalance row
	hs.Area, hs.OceanFraction = "ocean", 0
	o, err := w.HeatFigure(hs)
	if err != nil {
		t.Fatal(err)
	}
	ow, _ := strconv.ParseFloat(o.Table.Rows[1][1], 64)
	if len(o.Table.Rows) != 2 || math.Abs(ow/wm2-budget.EarthAreaM2/budget.OceanAreaM2) > 0.002 || !strings.Contains(o.Table.Rows[1][0], "the ocean") {
		t.Errorf("ocean area: %v", o.Table.Rows)
	}
	// values taken as J instead of ZJ: 1e21 times smaller
	hs.Area, hs.Unit = "earth", "j"
	j, err := w.HeatFigure(hs)
	if err != nil || math.Abs(j.Result.ZJPerYear*1e21/r.ZJPerYear-1) > 1e-9 {
		t.Errorf("unit j: %v %v", j, err)
	}
	for _, bad := range []HeatSettings{{Series: hs.Series, From: "2100"}, {Series: "tessary_surface.csv:surface_anomaly"}, {}} {
		if _, err := w.HeatFigure(bad); err == nil {
			t.Errorf("%+v accepted", bad)
		}
	}
}

// TestDistForm: each kind reads as the engine's distribution; errors name
// the field; switching kinds keeps the 5-95 % range.
func TestDistForm(t *testing.T) {
	for _, c := range []struct {
		f        DistForm
		lo, hi   float64 // the 5 % and 95 % points
		wantKind string
	}{
		{DistForm{"normal", "2", "0.5"}, 2 - 0.5*1.6448536269514722, 2 + 0.5*1.6448536269514722, budget.DistNormal},
		{DistForm{"normal90", "3.46", "4.40"}, 3.46, 4.40, budget.DistNormal},
		{DistForm{"lognormal90", "-1.6", "-0.3"}, -1.6, -0.3, budget.DistLognormal},
		{DistForm{"uniform", "0.4", "0.6"}, 0.41, 0.59, budget.DistUniform},
	} {
		d, err := c.f.Dist()
		if err != nil {
			t.Errorf("%+v: %v", c.f, err)
			continue
		}
		if d.Kind != c.wantKind || math.Abs(d.Quantile(0.05)-c.lo) > 1e-9 || math.Abs(d.Quantile(0.95)-c.hi) > 1e-9 {
			t.Errorf("%+v: %+v, 5-95 %% %g to %g", c.f, d, d.Quantile(0.05), d.Quantile(0.95))
		}
		// to lognormal90 and back to normal90 keeps the range (to 4 digits)
		if c.wantKind != budget.DistLognormal && c.lo > 0 {
			g := c.f.Convert("lognormal90")
			gd, err := g.Dist()
			if err != nil || math.Abs(gd.Quantile(0.05)-c.lo) > 1e-3*c.hi || math.Abs(gd.Quantile(0.95)-c.hi) > 1e-3*c.hi {
				t.Errorf("%+v as lognormal90: %+v %v", c.f, g, err)
			}
		}
	}
	if g := (DistForm{"normal90", "3.46", "4.40"}).Convert("normal"); g.A != "3.93" || g.B != "0.2857" {
		t.Errorf("normal90 to normal: %+v", g)
	}
	if g := (DistForm{"normal", "x", "1"}).Convert("uniform"); g != (DistForm{"uniform", "x", "1"}) {
		t.Errorf("unreadable form converted: %+v", g)
	}
	for _, c := range []struct {
		f    DistForm
		want string
	}{
		{DistForm{"normal", "2", "wide"}, `SD: "wide" is not a number`},
		{DistForm{"normal", "", "1"}, `mean: "" is not a number`},
		{DistForm{"normal", "2", "-1"}, "negative"},
		{DistForm{"lognormal90", "-1", "0.5"}, "one sign"},
		{DistForm{"uniform", "2", "1"}, "above"},
		{DistForm{"normal90", "5", "4"}, "above"},
		{DistForm{"gamma", "1", "2"}, "gamma"},
		{DistForm{"normal", "NaN", "1"}, "not a number"},
	} {
		if _, err := c.f.Dist(); err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%+v: error %v, want %q", c.f, err, c.want)
		}
	}
}

// TestBudgetSettingsErrors: bad typing is refused with the input and field
// named; periods without data are refused by the preview with the period
// named.
func TestBudgetSettingsErrors(t *testing.T) {
	w := demoWorkspace(t)
	base := w.DefaultBudgetForm()
	for _, c := range []struct {
		edit func(*BudgetForm)
		want string
	}{
		{func(f *BudgetForm) { f.Draws = "lots" }, "draws"},
		{func(f *BudgetForm) { f.Draws = "3000000" }, "draws"},
		{func(f *BudgetForm) { f.Seed = "-1" }, "seed"},
		{func(f *BudgetForm) { f.F2x = DistForm{"normal", "-3", "0.1"} }, "F2x"},
		{func(f *BudgetForm) { f.F2x = DistForm{"normal", "3.9", "x"} }, "F2x: SD"},
		{func(f *BudgetForm) { f.DT.Series = "" }, "dT: no series"},
		{func(f *BudgetForm) { f.DT.Series = "nothing" }, "dT: no series named"},
		{func(f *BudgetForm) { f.DN.OceanFraction = "1.5" }, "dN: ocean share"},
		{func(f *BudgetForm) { f.DF = nil }, "dF: no forcing"},
		{func(f *BudgetForm) {
			f.DF = append(f.DF, QuantityForm{Name: "aerosol", Source: SourceTyped, Typed: DistForm{"lognormal90", "-1", "1"}})
		}, "dF (aerosol): lognormal"},
		{func(f *BudgetForm) { f.DT.Source = "guess" }, "dT: source"},
	} {
		f := base
		f.DF = append([]QuantityForm(nil), base.DF...)
		c.edit(&f)
		if _, err := w.BudgetSettings(f); err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("error %v, want %q", err, c.want)
		}
	}
	f := base
	f.Final = [2]string{"2090", "2099"}
	s, err := w.BudgetSettings(f)
	if err != nil {
		t.Fatal(err)
	}
	if _, err := w.BudgetPreviewFigure(s); err == nil || !strings.Contains(err.Error(), "final period") {
		t.Errorf("final period without data: %v", err)
	}
	f = base
	f.Base = [2]string{"", "1969"}
	s, _ = w.BudgetSettings(f)
	if _, err := w.BudgetPreviewFigure(s); err == nil || !strings.Contains(err.Error(), "period") {
		t.Errorf("empty base period start: %v", err)
	}
}

// TestBudgetTypedPreview: typed inputs with an added skewed aerosol part;
// the preview draws every input, dF as the sum of its parts.
func TestBudgetTypedPreview(t *testing.T) {
	w := demoWorkspace(t)
	f := w.DefaultBudgetForm()
	f.DT = QuantityForm{Source: SourceTyped, Typed: DistForm{"normal", "0.9", "0.1"}}
	f.DF = []QuantityForm{
		{Name: "greenhouse", Source: SourceTyped, Typed: DistForm{"normal", "3", "0.3"}},
		{Name: "aerosol", Source: SourceTyped, Typed: DistForm{"lognormal90", "-1.6", "-0.3"}},
	}
	f.DN = QuantityForm{Source: SourceTyped, Typed: DistForm{"uniform", "0.4", "0.6"}}
	s, err := w.BudgetSettings(f)
	if err != nil {
		t.Fatal(err)
	}
	p, err := w.BudgetPreviewFigure(s)
	if err != nil {
		t.Fatal(err)
	}
	if len(p.Figures) != 4 {
		t.Fatalf("%d figures", len(p.Figures))
	}
	for _, fig := range p.Figures {
		if fig.SVG == "" || !strings.Contains(fig.SVG, `data-series="central"`) {
			t.Errorf("%s: no histogram with its central mark (%q)", fig.Role, fig.Note)
		}
	}
	// dF: two parts and their total, the total's centre the sum
	var rows []string
	for _, r := range p.Inputs.Rows {
		rows = append(rows, r[0]+"/"+r[1])
	}
	if strings.Join(rows, " ") != "dT/ dF/greenhouse dF/aerosol dF/total dN/ F2x/F2x" {
		t.Errorf("input rows %q", rows)
	}
	want := 3 - math.Sqrt(1.6*0.3)
	if got, _ := strconv.ParseFloat(p.Inputs.Rows[3][3], 64); math.Abs(got-want) > 1e-3 {
		t.Errorf("dF total centre %g, want %g", got, want)
	}
	// with only typed inputs there is nothing to sweep
	if w.DefaultBudgetForm().hasSeries() != true || f.hasSeries() {
		t.Error("hasSeries")
	}
}

// TestGuessForcingAndImbalance: the demo's forcing file gives six
// components; an imbalance series in W m-2 is offered for the Gregory
// regression, the forcing components are not.
func TestGuessForcingAndImbalance(t *testing.T) {
	w := demoWorkspace(t)
	fs, ok := w.GuessForcing()
	var kinds []string
	for _, c := range fs.Components {
		kinds = append(kinds, c.Name+"="+c.Kind)
	}
	if !ok || strings.Join(kinds, " ") != "co2=co2 ch4=ch4 n2o=n2o aod=aod tsi=tsi aerosol_erf=erf" {
		t.Errorf("guessed %q", kinds)
	}
	if c := w.ImbalanceCandidates(); len(c) != 0 {
		t.Errorf("demo imbalance candidates %q", c)
	}
	if got := w.BudgetSeriesDefault("dN", SourceSeries); got != "" {
		t.Errorf("dN series default %q without an imbalance series", got)
	}
	if got := w.BudgetSeriesDefault("dF", SourceSeries); !strings.HasSuffix(got, ":tsi") {
		t.Errorf("dF series default %q", got)
	}
	// an empty workspace: typed placeholders that say so, no sweep
	e := NewWorkspace(nil, series.Options{})
	f := e.DefaultBudgetForm()
	if f.DT.Source != SourceTyped || f.DF[0].Source != SourceTyped || f.DN.Source != SourceTyped || f.Sweep ||
		!strings.Contains(f.DF[0].Name, "replace") {
		t.Errorf("empty workspace form %+v", f)
	}
	if _, ok := e.GuessForcing(); ok {
		t.Error("forcing guessed from nothing")
	}
	if s, err := e.BudgetSettings(f); err != nil {
		t.Error(err)
	} else if p, err := e.BudgetPreviewFigure(s); err != nil || len(p.Figures) != 4 {
		t.Errorf("typed preview: %v", err)
	}
}

// TestGregoryFigure: N built as F - lambda T from the demo's temperature
// with F = 2 W m-2 and lambda = 1.2 W m-2 K-1 plus small noise; the
// regression recovers both and ECS = F2x/lambda.
func TestGregoryFigure(t *testing.T) {
	w := demoWorkspace(t)
	T, err := w.Find("surface_anomaly")
	if err != nil {
		t.Fatal(err)
	}
	var b strings.Builder
	b.WriteString("date,toa_imbalance (W m-2)\n")
	for i, v := range T.Values {
		y, m := series.YearMonth(T.First + i)
		n := 2 - 1.2*v + 0.02*math.Sin(float64(i)*1.7)
		fmt.Fprintf(&b, "%d-%02d,%.5f\n", y, m, n)
	}
	w.Files = append(w.Files, Load([]File{{"imbalance.csv", []byte(b.String())}}, series.Options{})...)
	c := w.ImbalanceCandidates()
	if len(c) != 1 || c[0] != "imbalance.csv:toa_imbalance" {
		t.Fatalf("candidates %q", c)
	}
	f2x := budget.Normal(3.93, 0.2)
	v, err := w.GregoryFigure(GregorySettings{N: c[0], T: w.DefaultTemperature()}, &f2x)
	if err != nil {
		t.Fatal(err)
	}
	r := v.Result
	if math.Abs(r.ForcingWPerM2-2) > 0.01 || math.Abs(r.LambdaWPerM2PerK-1.2) > 0.01 || math.Abs(float64(r.ECS)-3.93/r.LambdaWPerM2PerK) > 1e-9 {
		t.Errorf("F %g lambda %g ECS %g", r.ForcingWPerM2, r.LambdaWPerM2PerK, float64(r.ECS))
	}
	if len(v.Table.Rows) != 4 || v.Table.Rows[1][1] != Fmt(r.LambdaWPerM2PerK) || !strings.Contains(v.Caption, "points") {
		t.Errorf("table %v caption %q", v.Table.Rows, v.Caption)
	}
	for _, g := range []GregorySettings{{T: "surface_anomaly"}, {N: c[0]}, {N: "nothing", T: "surface_anomaly"}, {N: c[0], T: "ocean_heat"}} {
		if _, err := w.GregoryFigure(g, nil); err == nil {
			t.Errorf("%+v accepted", g)
		}
	}
}

// TestDefaultPeriodsShort: a short record gets thirds of its whole years.
func TestDefaultPeriodsShort(t *testing.T) {
	var b strings.Builder
	b.WriteString("year,t (K)\n")
	for y := 1991; y <= 2020; y++ {
		fmt.Fprintf(&b, "%d,%g\n", y, 0.02*float64(y-1991))
	}
	w := NewWorkspace([]File{{"short.csv", []byte(b.String())}}, series.Options{})
	f := w.DefaultBudgetForm()
	if f.Base != [2]string{"1991", "2000"} || f.Final != [2]string{"2011", "2020"} {
		t.Errorf("periods %v %v", f.Base, f.Final)
	}
}

// TestBudgetDNFromModel: dN may come from the energy balance model (the
// Response view's run) as a consistency check. The resolved dN is exactly the
// difference of the model imbalance's period means, computed here from
// ModelImbalance directly.
func TestBudgetDNFromModel(t *testing.T) {
	w := demoWorkspace(t)
	f := w.DefaultBudgetForm()
	f.DN = QuantityForm{Source: SourceModel}
	f.Draws, f.Sweep = "2000", false
	s, err := w.BudgetSettings(f)
	if err != nil {
		t.Fatal(err)
	}
	v, err := w.SensitivityFigure(s, context.Background(), nil)
	if err != nil {
		t.Fatal(err)
	}
	n, err := w.ModelImbalance(nil)
	if err != nil {
		t.Fatal(err)
	}
	mean := func(from, to int) float64 {
		var sum float64
		k := 0
		for i, v := range n.Values {
			if y, _ := series.YearMonth(n.First + i); y >= from && y <= to {
				sum += v
				k++
			}
		}
		return sum / float64(k)
	}
	want := mean(2011, 2025) - mean(1950, 1969)
	var got *budget.InputSummary
	for i, in := range v.Report.Result.Inputs {
		if in.Role == "dN" {
			got = &v.Report.Result.Inputs[i]
		}
	}
	if got == nil || math.Abs(got.Center-want) > 1e-9 || got.SD != 0 {
		t.Fatalf("dN from the model: %+v, want centre %v with no spread", got, want)
	}
	if !(v.Report.Result.ECS.Median > 0) {
		t.Errorf("ECS median %v", v.Report.Result.ECS.Median)
	}
}
