package trend

import (
	"bytes"
	"encoding/csv"
	"encoding/json"
	"math"
	"math/rand/v2"
	"sort"
	"strconv"
	"strings"
	"testing"

	"heatledger/core/series"
)

// twCheckCell compares a grid cell with Window on the same values: slope
// and SE to 1e-9 relative (the slope relative to max(|slope|, SE)), dof to
// 1e-9, the same refusals and the same interval decisions (unless the
// t statistic sits within 1e-9 of the quantile).
func twCheckCell(t *testing.T, tt, y []float64, g *GridResult, c GridCell, noise string) bool {
	t.Helper()
	w, err := Window(tt[c.StartIndex:c.EndIndex+1], y[c.StartIndex:c.EndIndex+1], Options{Noise: noise, Level: g.Level})
	if c.Skipped {
		if err == nil {
			t.Errorf("cell %d-%d skipped but Window gives slope %g", c.StartIndex, c.EndIndex, w.SlopePerDecade)
			return false
		}
		return true
	}
	if err != nil {
		t.Errorf("cell %d-%d: Window refuses (%v) but the grid gives slope %g", c.StartIndex, c.EndIndex, err, c.SlopePerDecade)
		return false
	}
	ok := true
	scale := math.Max(math.Abs(w.SlopePerDecade), w.StderrPerDecade)
	if math.Abs(c.SlopePerDecade-w.SlopePerDecade) > 1e-9*scale {
		t.Errorf("cell %d-%d slope %.15g, Window %.15g", c.StartIndex, c.EndIndex, c.SlopePerDecade, w.SlopePerDecade)
		ok = false
	}
	if twRel(c.StderrPerDecade, w.StderrPerDecade) > 1e-9 {
		t.Errorf("cell %d-%d SE %.15g, Window %.15g (rel %.2g)", c.StartIndex, c.EndIndex, c.StderrPerDecade, w.StderrPerDecade, twRel(c.StderrPerDecade, w.StderrPerDecade))
		ok = false
	}
	if twRel(c.DOF, *w.DOF) > 1e-9 {
		t.Errorf("cell %d-%d dof %.15g, Window %.15g", c.StartIndex, c.EndIndex, c.DOF, *w.DOF)
		ok = false
	}
	if c.N != w.N {
		t.Errorf("cell %d-%d n %d, Window %d", c.StartIndex, c.EndIndex, c.N, w.N)
		ok = false
	}
	q := (w.CIHighPerDecade - w.SlopePerDecade) / w.StderrPerDecade
	exZero := w.CILowPerDecade > 0 || w.CIHighPerDecade < 0
	full := g.FullSlopePerDecade
	exFull := w.CILowPerDecade > full || w.CIHighPerDecade < full
	tie := func(x float64) bool { return math.Abs(math.Abs(x)/w.StderrPerDecade-q) < 1e-9*q }
	if c.ExcludesZero != exZero && !tie(w.SlopePerDecade) {
		t.Errorf("cell %d-%d excludes zero %v, Window interval [%g, %g]", c.StartIndex, c.EndIndex, c.ExcludesZero, w.CILowPerDecade, w.CIHighPerDecade)
		ok = false
	}
	if c.ExcludesFull != exFull && !tie(w.SlopePerDecade-full) {
		t.Errorf("cell %d-%d excludes full %v, Window interval [%g, %g], full %g", c.StartIndex, c.EndIndex, c.ExcludesFull, w.CILowPerDecade, w.CIHighPerDecade, full)
		ok = false
	}
	return ok
}

// The grid agrees with Window cell by cell (issue check "the grid agrees
// with the window trend cell by cell"): every cell of a monthly grid with
// missing values, under both noise models, at monthly and annual steps.
func TestGridAgreesWithWindowEveryCell(t *testing.T) {
	tt, y := twSimSeries(31, 180, 0.03, 0.7, -0.2, 0.1)
	for _, i := range []int{0, 17, 18, 19, 90, 179} {
		y[i] = math.NaN()
	}
	for _, noise := range []string{NoiseAR1, NoiseARMA11} {
		for _, step := range []string{GridStepMonth, GridStepYear} {
			g, err := Grid(tt, y, GridOptions{MinYears: 3, Step: step, Noise: noise})
			if err != nil {
				t.Fatal(err)
			}
			bad := 0
			for _, c := range g.Windows {
				if !twCheckCell(t, tt, y, g, c, noise) {
					bad++
					if bad > 10 {
						t.Fatalf("%s %s: too many mismatches", noise, step)
					}
				}
			}
			t.Logf("%s step %s: %d cells checked (%d skipped)", noise, step, len(g.Windows), g.Skipped)
		}
	}
}

// Near-degenerate cells:
//   - a large offset (values near 10,000 varying by 0.1), where raw prefix
//     sums of y^2 would cancel catastrophically;
//   - a record that is flat and then rises steeply with little noise
//     (1e-3 against a rise of 50): in the steep part the local line is far
//     from the full-record line, the sums cancel badly, and those cells are
//     recomputed directly (counted in g.direct);
//   - the shortest windows (3 annual values, dof 1);
//   - strongly autocorrelated short windows that are refused (n_e <= 3).
//
// (A line with noise 1e-9 of its range is out of reach: Window itself is
// then accurate only to about 1e-7, as rounding the values to doubles
// already perturbs the residuals by that much.)
func TestGridNearDegenerateCells(t *testing.T) {
	tt, y := twSimSeries(41, 150, 0.02, 0.5, 0, 0.1)
	for i := range y {
		y[i] += 1e4
	}
	g, err := Grid(tt, y, GridOptions{MinYears: 2, Step: GridStepMonth, Noise: NoiseAR1})
	if err != nil {
		t.Fatal(err)
	}
	for _, c := range g.Windows {
		if !twCheckCell(t, tt, y, g, c, NoiseAR1) {
			break
		}
	}

	tt, y = twSimSeries(43, 240, 0, 0.5, 0, 1e-3)
	for i := 120; i < 240; i++ {
		y[i] += 5 * (tt[i] - tt[120])
	}
	g, err = Grid(tt, y, GridOptions{MinYears: 2, Step: GridStepMonth, Noise: NoiseARMA11})
	if err != nil {
		t.Fatal(err)
	}
	if g.direct == 0 {
		t.Errorf("flat-then-steep record: expected some cells recomputed directly")
	}
	t.Logf("flat-then-steep: %d of %d cells recomputed directly", g.direct, len(g.Windows))
	for _, c := range g.Windows {
		if !twCheckCell(t, tt, y, g, c, NoiseARMA11) {
			break
		}
	}

	ta := make([]float64, 12)
	ya := make([]float64, 12)
	for i := range ta {
		ta[i] = 1990.5 + float64(i)
		ya[i] = math.Sin(float64(i)*1.7) + 0.1*float64(i)
	}
	g, err = Grid(ta, ya, GridOptions{MinYears: 3, Noise: NoiseAR1})
	if err != nil {
		t.Fatal(err)
	}
	for _, c := range g.Windows {
		if !twCheckCell(t, ta, ya, g, c, NoiseAR1) {
			break
		}
	}

	// Strong autocorrelation, short windows: many refusals.
	rng2 := rand.New(rand.NewPCG(5, 5))
	n := 60
	ta = make([]float64, n)
	ya = make([]float64, n)
	prev := 0.0
	for i := range ta {
		ta[i] = 1950.5 + float64(i)
		prev = 0.95*prev + rng2.NormFloat64()
		ya[i] = 0.01*float64(i) + prev
	}
	for _, noise := range []string{NoiseAR1, NoiseARMA11} {
		g, err = Grid(ta, ya, GridOptions{MinYears: 4, Noise: noise})
		if err != nil {
			t.Fatal(err)
		}
		if g.Skipped == 0 {
			t.Errorf("%s: expected some refused windows in a phi = 0.95 annual record", noise)
		}
		for _, c := range g.Windows {
			if !twCheckCell(t, ta, ya, g, c, noise) {
				break
			}
		}
	}
}

func TestGridCountsAndSteps(t *testing.T) {
	// 900 months at monthly steps, windows of at least 120 months:
	// sum over lengths L = 120..900 of (900 - L + 1) = 781 * 782 / 2.
	tt, y := twSimSeries(51, 900, 0.02, 0.6, 0, 0.1)
	g, err := Grid(tt, y, GridOptions{MinYears: 10, Step: GridStepMonth, Noise: NoiseAR1})
	if err != nil {
		t.Fatal(err)
	}
	if len(g.Windows) != 781*782/2 {
		t.Errorf("%d windows, expected %d", len(g.Windows), 781*782/2)
	}
	if g.Cells+g.Skipped != len(g.Windows) {
		t.Errorf("cells %d + skipped %d != windows %d", g.Cells, g.Skipped, len(g.Windows))
	}
	if math.Abs(g.ExpectedByChance-0.05*float64(g.Cells)) > 1e-9 {
		t.Errorf("expected by chance %g, 5 %% of %d cells is %g", g.ExpectedByChance, g.Cells, 0.05*float64(g.Cells))
	}
	ex := 0
	for _, c := range g.Windows {
		if c.ExcludesFull {
			ex++
		}
	}
	if ex != g.ExcludingFullTrend {
		t.Errorf("ExcludingFullTrend %d, cells say %d", g.ExcludingFullTrend, ex)
	}
	// Annual steps on monthly data: January starts, December ends, whole
	// years: 75 years, windows of 10..75 years: sum (75 - L + 1) = 66 * 67 / 2.
	g, err = Grid(tt, y, GridOptions{MinYears: 10, Step: GridStepYear, Noise: NoiseARMA11})
	if err != nil {
		t.Fatal(err)
	}
	if len(g.Windows) != 66*67/2 {
		t.Errorf("annual steps: %d windows, expected %d", len(g.Windows), 66*67/2)
	}
	for _, c := range g.Windows {
		if c.StartIndex%12 != 0 || c.EndIndex%12 != 11 {
			t.Fatalf("window %d-%d does not run January to December", c.StartIndex, c.EndIndex)
		}
	}
	// Check a sample of these cells against Window too.
	for _, k := range []int{0, 1, 500, 1000, len(g.Windows) - 1} {
		twCheckCell(t, tt, y, g, g.Windows[k], NoiseARMA11)
	}
}

func TestGridOutputs(t *testing.T) {
	tt, y := twSimSeries(61, 360, 0.02, 0.6, 0, 0.1)
	s := series.New("tessary surface", "K", series.Monthly, series.MonthIndex(1950, 1), y)
	g, err := SeriesGrid(s, GridOptions{MinYears: 20})
	if err != nil {
		t.Fatal(err)
	}
	b, err := json.Marshal(g)
	if err != nil {
		t.Fatal(err)
	}
	var m map[string]any
	_ = json.Unmarshal(b, &m)
	var keys []string
	for k := range m {
		keys = append(keys, k)
	}
	sort.Strings(keys)
	if strings.Join(keys, ",") != "cells,excluding_full_trend,min_years,noise,step,warnings" {
		t.Errorf("grid JSON keys %v", keys)
	}
	if !strings.Contains(strings.Join(g.Warnings, " "), "by chance alone") {
		t.Errorf("expected the multiple-testing statement, got %q", g.Warnings)
	}
	var buf bytes.Buffer
	if err := g.WriteCSV(&buf); err != nil {
		t.Fatal(err)
	}
	recs, err := csv.NewReader(&buf).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	if strings.Join(recs[0], ",") != "start,end,n,slope_per_decade,stderr_per_decade,excludes_zero,excludes_full" {
		t.Errorf("CSV header %v", recs[0])
	}
	if len(recs) != len(g.Windows)+1 {
		t.Errorf("%d CSV rows for %d windows", len(recs)-1, len(g.Windows))
	}
	// First window: 1950-01 to 1969-12 (20 years, annual steps).
	r := recs[1]
	if r[0] != "1950-01" || r[1] != "1969-12" || r[2] != "240" {
		t.Errorf("first CSV row %v", r)
	}
	w, _ := SeriesWindow(s, "1950", "1969", Options{Noise: NoiseAR1})
	slope, _ := strconv.ParseFloat(r[3], 64)
	if math.Abs(slope-w.SlopePerDecade) > 1e-9*math.Abs(w.SlopePerDecade) {
		t.Errorf("CSV slope %s, Window %g", r[3], w.SlopePerDecade)
	}
	_ = tt
}

func TestGridErrors(t *testing.T) {
	tt, y := twSimSeries(71, 120, 0.02, 0.6, 0, 0.1)
	if _, err := Grid(tt, y, GridOptions{Noise: NoiseARMA11ML}); err == nil || !strings.Contains(err.Error(), "ar1 or arma11") {
		t.Errorf("arma11-ml grid: %v", err)
	}
	if _, err := Grid(tt, y, GridOptions{MinYears: 20}); err == nil || !strings.Contains(err.Error(), "shorter than") {
		t.Errorf("record shorter than the minimum: %v", err)
	}
	irr := append([]float64(nil), tt...)
	irr[50] += 0.01
	if _, err := Grid(irr, y, GridOptions{MinYears: 5}); err == nil || !strings.Contains(err.Error(), "regular") {
		t.Errorf("irregular axis: %v", err)
	}
	ta := []float64{1950.5, 1951.5, 1952.5, 1953.5, 1954.5, 1955.5}
	if _, err := Grid(ta, []float64{1, 3, 2, 4, 3, 5}, GridOptions{MinYears: 3, Step: GridStepMonth}); err == nil || !strings.Contains(err.Error(), "annual") {
		t.Errorf("monthly steps on annual data: %v", err)
	}
	if _, err := Grid(tt, y, GridOptions{Step: "week"}); err == nil {
		t.Error("unknown step: no error")
	}
}

// BenchmarkGrid900Monthly: every window of at least 10 years of a 900-month
// series at monthly steps (305,371 cells). Budget: 1 s natively.
func BenchmarkGrid900Monthly(b *testing.B) {
	tt, y := twSimSeries(81, 900, 0.02, 0.8, -0.3, 0.1)
	for _, noise := range []string{NoiseAR1, NoiseARMA11} {
		b.Run(noise, func(b *testing.B) {
			for i := 0; i < b.N; i++ {
				g, err := Grid(tt, y, GridOptions{MinYears: 10, Step: GridStepMonth, Noise: noise})
				if err != nil || len(g.Windows) != 305371 {
					b.Fatal(err)
				}
			}
		})
	}
}
