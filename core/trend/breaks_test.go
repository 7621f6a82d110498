package trend

import (
	"context"
	"encoding/json"
	"errors"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// brkRefSet is one dataset of testdata/ref/trend_ref.json, computed with
// R 4.2 by testdata/ref/trend_ref.R.
type brkRefSet struct {
	N         int       `json:"n"`
	Year      []float64 `json:"year"`
	T         []float64 `json:"t"`
	Y         []float64 `json:"y"`
	Segmented *struct {
		Psi  float64            `json:"psi"`
		Coef map[string]float64 `json:"coef"`
		RSS  float64            `json:"rss"`
		// PsiRange is segmented's admissible range (5-95 % quantiles of t).
		PsiRange []float64 `json:"psi_range"`
		Profile  struct {
			Psi float64 `json:"psi"`
			RSS float64 `json:"rss"`
		} `json:"profile"`
	} `json:"segmented"`
	MKSen brkRefMK `json:"mann_kendall_sen"`
	Kend  struct {
		ExactFalse     brkRefKendall `json:"exact_false"`
		ExactFalseCont brkRefKendall `json:"exact_false_continuity"`
		Default        brkRefKendall `json:"default"`
		TiesInY        bool          `json:"ties_in_y"`
	} `json:"kendall"`
}

type brkRefKendall struct {
	Tau       float64 `json:"tau"`
	Statistic float64 `json:"statistic"`
	PValue    float64 `json:"p_value"`
}

type brkRefMK struct {
	N        int     `json:"n"`
	S        float64 `json:"S"`
	Ties     []int   `json:"tie_group_sizes"`
	VarS     float64 `json:"var_S"`
	ZCont    float64 `json:"z_continuity"`
	PCont    float64 `json:"p_value_two_sided_continuity"`
	SenSlope float64 `json:"sen_slope"`
	NSlopes  int     `json:"n_slopes"`
	CI       struct {
		LowerInterp float64 `json:"lower_interp"`
		UpperInterp float64 `json:"upper_interp"`
	} `json:"ci"`
}

type brkRefFile struct {
	Datasets map[string]*brkRefSet `json:"datasets"`
	Short    struct {
		T         []float64     `json:"t"`
		Y         []float64     `json:"y"`
		ExactFals brkRefKendall `json:"exact_false"`
		MKSen     brkRefMK      `json:"mann_kendall_sen"`
	} `json:"kendall_exact_short"`
	Nile struct {
		H           int       `json:"h_obs"`
		Breakpoints []int     `json:"breakpoints"`
		Breakdates  []float64 `json:"breakdates"`
		ByBreaks    []struct {
			Breaks      int     `json:"breaks"`
			Breakpoints []int   `json:"breakpoints"`
			RSS         float64 `json:"rss"`
			BIC         float64 `json:"bic"`
		} `json:"by_breaks"`
	} `json:"nile_breakpoints"`
}

func brkLoadRef(t *testing.T) *brkRefFile {
	t.Helper()
	b, err := os.ReadFile(filepath.Join("..", "..", "testdata", "ref", "trend_ref.json"))
	if err != nil {
		t.Fatalf("reading reference values: %v", err)
	}
	var r brkRefFile
	if err := json.Unmarshal(b, &r); err != nil {
		t.Fatalf("parsing trend_ref.json: %v", err)
	}
	return &r
}

// brkAR1 returns n values of stationary AR(1) noise.
func brkAR1(rng *rand.Rand, n int, phi, sd float64) []float64 {
	x := make([]float64, n)
	x[0] = rng.NormFloat64() * sd
	s := sd * math.Sqrt(1-phi*phi)
	for i := 1; i < n; i++ {
		x[i] = phi*x[i-1] + rng.NormFloat64()*s
	}
	return x
}

func brkAnnual(first, n int) []float64 {
	t := make([]float64, n)
	for i := range t {
		t[i] = float64(first+i) + 0.5
	}
	return t
}

// The O(k)-per-configuration search must give the same best RSS as a plain
// QR least squares fit at every configuration of the grid (property).
func TestBreaksGridMatchesQR(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	tt := brkAnnual(1950, 40)
	y := brkAR1(rng, 40, 0.4, 0.2)
	for i := range y {
		y[i] += 0.01*(tt[i]-1950) + 0.03*math.Max(tt[i]-1975, 0) + 300
	}
	o, _ := brkDefaults(BreaksOptions{MaxBreaks: 2, MinYears: 8})
	s, err := brkNewSlope(tt, y, o, 1)
	if err != nil {
		t.Fatal(err)
	}
	rss, br := s.gridRSS(y, 2, true)
	qrRSS := func(b []float64) float64 {
		f := s.fitted(y, b)
		var r float64
		for i := range y {
			r += (y[i] - f[i]) * (y[i] - f[i])
		}
		return r
	}
	// Brute force over the same candidates.
	best := []float64{qrRSS(nil), math.Inf(1), math.Inf(1)}
	var arg [3][]float64
	for _, i := range s.cand {
		b1 := tt[i]
		if r := qrRSS([]float64{b1}); r < best[1] {
			best[1], arg[1] = r, []float64{b1}
		}
		for _, j := range s.cand {
			b2 := tt[j]
			if b2-b1 < 8-1e-9 {
				continue
			}
			if r := qrRSS([]float64{b1, b2}); r < best[2] {
				best[2], arg[2] = r, []float64{b1, b2}
			}
		}
	}
	for k := 0; k <= 2; k++ {
		if math.Abs(rss[k]-best[k]) > 1e-9*best[k] {
			t.Errorf("k=%d: grid RSS %.12g, QR brute force %.12g", k, rss[k], best[k])
		}
		for j := range arg[k] {
			if br[k][j] != arg[k][j] {
				t.Errorf("k=%d: grid breaks %v, brute force %v", k, br[k], arg[k])
			}
		}
	}
}

// One continuous break, checked against R's segmented (Muggeo 2003):
// psi and the slope change U1.t computed with R 4.2 by
// testdata/ref/trend_ref.R (segmented 1.6.2), on R's LakeHuron and nhtemp
// and on statsmodels' elnino (monthly: annual candidates, refined to the
// month, then continuously). Our search minimises the same broken-stick RSS
// over a continuous break time, so psi must agree to the precision
// segmented converges to; the reference notes that its psi and an
// independent brute-force profile minimiser agree to about 1e-5 years, so
// the tolerance is 1e-4 years, 1e-4 relative on the slopes, and our RSS
// may not exceed segmented's (we find the minimum; it iterates to it).
// For elnino segmented restricts psi to [1953.09, 2007.91]; the unrestricted
// minimum lies near the record's end, which our 10-year minimum segment
// also excludes.
func TestBreaksSegmentedReference(t *testing.T) {
	ref := brkLoadRef(t)
	for _, name := range []string{"LakeHuron", "nhtemp", "elnino"} {
		d := ref.Datasets[name]
		sg := d.Segmented
		res, err := Breaks(d.T, d.Y, BreaksOptions{MaxBreaks: 1, Sims: -1, Boot: -1})
		if err != nil {
			t.Fatal(err)
		}
		fit := res.ByK[1]
		if len(fit.Breaks) != 1 {
			t.Fatalf("%s: no one-break fit", name)
		}
		if d := math.Abs(fit.Breaks[0] - sg.Psi); d > 1e-4 {
			t.Errorf("%s: break %.7f, segmented psi %.7f (profile %.7f)", name, fit.Breaks[0], sg.Psi, sg.Profile.Psi)
		}
		if fit.RSS > sg.RSS*(1+1e-12) || fit.RSS < sg.RSS*(1-1e-6) {
			t.Errorf("%s: RSS %.12g, segmented %.12g", name, fit.RSS, sg.RSS)
		}
		t.Logf("%s: break %.9f, segmented psi %.9f, profile %.9f", name, fit.Breaks[0], sg.Psi, sg.Profile.Psi)
		segs := fit.Segments
		s0 := segs[0].SlopePerDecade / 10
		s1 := segs[1].SlopePerDecade / 10
		if math.Abs(s0-sg.Coef["slope1"]) > 1e-4*math.Abs(sg.Coef["slope1"]) {
			t.Errorf("%s: slope before %.8g, segmented %.8g", name, s0, sg.Coef["slope1"])
		}
		if math.Abs((s1-s0)-sg.Coef["U1_t"]) > 1e-4*math.Abs(sg.Coef["U1_t"]) {
			t.Errorf("%s: slope change %.8g, segmented U1.t %.8g", name, s1-s0, sg.Coef["U1_t"])
		}
	}
}

// Mean shifts in R's Nile series against strucchange::breakpoints(Nile ~ 1)
// with h = 0.15 (15 observations), computed with R 4.2 by
// testdata/ref/trend_ref.R (strucchange 1.5.3): the best partitions for
// k = 0..4 breaks, their RSS and BIC (same parameter count: k+1 means, k
// break dates, the variance), and the one selected break after 1898 (Cobb
// 1978). strucchange reports the last observation before the break.
func TestBreaksMeanNile(t *testing.T) {
	ref := brkLoadRef(t)
	d := ref.Datasets["Nile"]
	res, err := Breaks(d.T, d.Y, BreaksOptions{Model: "mean", MaxBreaks: 4, MinYears: 15, Sims: 199, Boot: 200, Seed: 7})
	if err != nil {
		t.Fatal(err)
	}
	if ref.Nile.H != 15 {
		t.Fatalf("reference h = %d observations, expected 15", ref.Nile.H)
	}
	for _, bb := range ref.Nile.ByBreaks {
		if bb.Breaks > 4 {
			continue
		}
		fit := res.ByK[bb.Breaks]
		if math.Abs(fit.RSS-bb.RSS) > 1e-9*bb.RSS {
			t.Errorf("k=%d: RSS %.10g, strucchange %.10g", bb.Breaks, fit.RSS, bb.RSS)
		}
		if math.Abs(fit.BIC-bb.BIC) > 1e-9*bb.BIC {
			t.Errorf("k=%d: BIC %.10g, strucchange %.10g", bb.Breaks, fit.BIC, bb.BIC)
		}
		for j, bp := range bb.Breakpoints {
			// strucchange's 1-based index of the last observation before
			// the break is our 0-based index of the first one after.
			want := (d.T[bp-1] + d.T[bp]) / 2
			if j >= len(fit.Breaks) || fit.Breaks[j] != want {
				t.Errorf("k=%d: breaks %v, strucchange last-before indices %v", bb.Breaks, fit.Breaks, bb.Breakpoints)
				break
			}
		}
	}
	if res.SelectedBIC != 1 || res.Selected != 1 || len(res.Breaks) != 1 {
		t.Fatalf("selected %d (BIC %d), expected 1; p-values %v", res.Selected, res.SelectedBIC, res.PValues)
	}
	b := res.Breaks[0]
	if b.LastBefore == nil || *b.LastBefore-0.5 != ref.Nile.Breakdates[0] || ref.Nile.Breakdates[0] != 1898 {
		t.Errorf("last year before the break %v, strucchange %v", b.LastBefore, ref.Nile.Breakdates)
	}
	if !(b.CILow <= b.Time && b.Time <= b.CIHigh) || b.CIHigh-b.CILow > 20 {
		t.Errorf("break %v interval [%v, %v]", b.Time, b.CILow, b.CIHigh)
	}
	if res.PValues[0] > 0.01 {
		t.Errorf("the Nile step has Monte Carlo p = %v; expected < 0.01", res.PValues[0])
	}
	if len(res.Segments) != 2 || res.Segments[0].Mean == nil || !(*res.Segments[0].Mean > *res.Segments[1].Mean) {
		t.Errorf("segments %+v", res.Segments)
	}
	t.Logf("Nile: break %v [%v, %v], p %v, segments %v %v", b.Time, b.CILow, b.CIHigh, res.PValues, *res.Segments[0].Mean, *res.Segments[1].Mean)
}

// A break built into seeded test series (known truth): flat until 1985,
// then warming at 0.25 per decade, plus AR(1) noise (phi 0.3, SD 0.08). Over
// 20 series the break must be found in nearly all, the estimates must centre
// on 1985, and the 95 % intervals must cover it in most (a sample of 20:
// at least 16, well below the 19 expected, so a fair method passes).
func TestBreaksFindsBuiltInBreak(t *testing.T) {
	rng := rand.New(rand.NewPCG(11, 12))
	tt := brkAnnual(1950, 75)
	const series = 20
	found, cover := 0, 0
	var sumErr, sumSlope0, sumSlope1 float64
	for s := 0; s < series; s++ {
		y := brkAR1(rng, 75, 0.3, 0.08)
		for i := range y {
			y[i] += 0.025*math.Max(tt[i]-1985, 0) + 14
		}
		res, err := Breaks(tt, y, BreaksOptions{Seed: uint64(s), Sims: 99, Boot: 100})
		if err != nil {
			t.Fatal(err)
		}
		if res.Selected != 1 {
			t.Logf("series %d: %d breaks selected (BIC %v, p %v)", s, res.Selected, res.BIC, res.PValues)
			continue
		}
		found++
		b := res.Breaks[0]
		sumErr += b.Time - 1985
		sumSlope0 += res.Segments[0].SlopePerDecade
		sumSlope1 += res.Segments[1].SlopePerDecade
		if b.CILow <= 1985 && 1985 <= b.CIHigh {
			cover++
		}
	}
	if found < series-2 {
		t.Errorf("break found in %d of %d series", found, series)
	}
	f := float64(found)
	if me := sumErr / f; math.Abs(me) > 1.5 {
		t.Errorf("mean break error %.2f years", me)
	}
	if s0, s1 := sumSlope0/f, sumSlope1/f; math.Abs(s0) > 0.03 || math.Abs(s1-0.25) > 0.03 {
		t.Errorf("mean slopes %.3f and %.3f per decade; true 0 and 0.25", s0, s1)
	}
	if cover < 16 {
		t.Errorf("95 %% interval covered the true break in %d of %d series", cover, found)
	}
	t.Logf("found %d/%d, mean error %.2f years, covered %d", found, series, sumErr/f, cover)
}

// With little noise the continuous refinement must recover a break that
// lies between observation times, in annual and in monthly data (the
// monthly search runs on annual candidates, moves each break to the month,
// then refines it continuously).
func TestBreaksRecoversOffGridBreak(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 6))
	for _, monthly := range []bool{false, true} {
		var tt []float64
		if monthly {
			for i := 0; i < 12*60; i++ {
				tt = append(tt, 1960+(float64(i%12)+0.5)/12+float64(i/12))
			}
		} else {
			tt = brkAnnual(1960, 60)
		}
		y := make([]float64, len(tt))
		const b1, b2 = 1978.37, 2001.81
		for i, x := range tt {
			y[i] = 0.01*(x-1960) + 0.03*math.Max(x-b1, 0) - 0.05*math.Max(x-b2, 0) + 0.002*rng.NormFloat64()
		}
		res, err := Breaks(tt, y, BreaksOptions{MaxBreaks: 3, Sims: 49, Boot: 50, Seed: 1})
		if err != nil {
			t.Fatal(err)
		}
		if res.Selected != 2 {
			t.Fatalf("monthly=%v: selected %d, expected 2 (BIC %v, p %v)", monthly, res.Selected, res.BIC, res.PValues)
		}
		for j, want := range []float64{b1, b2} {
			b := res.Breaks[j]
			if math.Abs(b.Time-want) > 0.1 || !(b.CILow <= want && want <= b.CIHigh) {
				t.Errorf("monthly=%v: break %d at %.3f [%.3f, %.3f], true %v", monthly, j, b.Time, b.CILow, b.CIHigh, want)
			}
		}
		for j, want := range []float64{0.1, 0.4, -0.1} {
			if got := res.Segments[j].SlopePerDecade; math.Abs(got-want) > 0.01 {
				t.Errorf("monthly=%v: segment %d slope %.4f per decade, true %v", monthly, j, got, want)
			}
		}
	}
}

// On a straight line plus AR(1) noise (phi 0.5, the order of annual
// temperature residuals: common practice) no break should be chosen in at
// least 90 % of seeded series.
func TestBreaksNullChoosesNone(t *testing.T) {
	const series = 100
	rng := rand.New(rand.NewPCG(21, 22))
	tt := brkAnnual(1960, 60)
	zero, bicZero := 0, 0
	for s := 0; s < series; s++ {
		y := brkAR1(rng, 60, 0.5, 0.1)
		for i := range y {
			y[i] += 0.015 * (tt[i] - 1960)
		}
		res, err := Breaks(tt, y, BreaksOptions{MaxBreaks: 3, Sims: 99, Boot: -1, Seed: uint64(s)})
		if err != nil {
			t.Fatal(err)
		}
		if res.Selected == 0 {
			zero++
		}
		if res.SelectedBIC == 0 {
			bicZero++
		}
	}
	if zero < series*9/10 {
		t.Errorf("k = 0 chosen in %d of %d null series; expected at least 90 %%", zero, series)
	}
	t.Logf("k = 0 in %d of %d series (BIC alone: %d)", zero, series, bicZero)
}

func brkBenchSeries() ([]float64, []float64) {
	rng := rand.New(rand.NewPCG(31, 32))
	tt := brkAnnual(1950, 75)
	y := brkAR1(rng, 75, 0.4, 0.1)
	for i, x := range tt {
		y[i] += 0.01*(x-1950) + 0.015*math.Max(x-1976, 0)
	}
	return tt, y
}

// Budget (issue: change points with K = 3 and 500 simulations on 75 annual
// points <= 5 s in the page).
func BenchmarkBreaksK3Sims500(b *testing.B) {
	tt, y := brkBenchSeries()
	for b.Loop() {
		if _, err := Breaks(tt, y, BreaksOptions{MaxBreaks: 3, Sims: 500, Seed: 1}); err != nil {
			b.Fatal(err)
		}
	}
}

func BenchmarkBreaksMeanMonthly(b *testing.B) {
	rng := rand.New(rand.NewPCG(41, 42))
	n := 900
	tt := make([]float64, n)
	for i := range tt {
		tt[i] = 1950 + (float64(i)+0.5)/12
	}
	y := brkAR1(rng, n, 0.8, 1)
	for b.Loop() {
		if _, err := Breaks(tt, y, BreaksOptions{Model: "mean", MaxBreaks: 3, Sims: 500, Seed: 1}); err != nil {
			b.Fatal(err)
		}
	}
}

func BenchmarkBreaksSlopeMonthly(b *testing.B) {
	rng := rand.New(rand.NewPCG(41, 42))
	n := 900
	tt := make([]float64, n)
	for i := range tt {
		tt[i] = 1950 + (float64(i)+0.5)/12
	}
	y := brkAR1(rng, n, 0.8, 0.1)
	for b.Loop() {
		if _, err := Breaks(tt, y, BreaksOptions{MaxBreaks: 3, Sims: 500, Seed: 1}); err != nil {
			b.Fatal(err)
		}
	}
}

// A step placed at a month inside a monthly series is found to the month
// (annual candidate boundaries, then refined), and its interval covers it.
func TestBreaksMeanMonthlyStep(t *testing.T) {
	rng := rand.New(rand.NewPCG(51, 52))
	n := 12 * 50
	tt := make([]float64, n)
	y := brkAR1(rng, n, 0.6, 0.3)
	const first = 12*23 + 7 // first month after the step: 1983-08
	for i := range tt {
		tt[i] = 1960 + (float64(i)+0.5)/12
		if i >= first {
			y[i] += 1.5
		}
	}
	res, err := Breaks(tt, y, BreaksOptions{Model: "mean", MaxBreaks: 2, Sims: 99, Boot: 100, Seed: 2})
	if err != nil {
		t.Fatal(err)
	}
	want := (tt[first-1] + tt[first]) / 2
	if res.Selected != 1 || res.Breaks[0].Time != want || *res.Breaks[0].LastBefore != tt[first-1] {
		t.Fatalf("selected %d, breaks %+v; expected one at %v (p %v)", res.Selected, res.Breaks, want, res.PValues)
	}
	if b := res.Breaks[0]; !(b.CILow <= want && want <= b.CIHigh) {
		t.Errorf("interval [%v, %v] misses %v", b.CILow, b.CIHigh, want)
	}
	if d := *res.Segments[1].Mean - *res.Segments[0].Mean; math.Abs(d-1.5) > 0.3 {
		t.Errorf("step %v, true 1.5", d)
	}
}

// Progress reaches the total exactly once at the end, and a canceled
// context stops the Monte Carlo with ErrBreaksCanceled.
func TestBreaksProgressAndCancel(t *testing.T) {
	tt, y := brkBenchSeries()
	var calls, last, total int
	_, err := Breaks(tt, y, BreaksOptions{MaxBreaks: 2, Sims: 30, Boot: 20, Progress: func(d, n int) {
		calls++
		if d < last || d > n {
			t.Errorf("progress %d of %d after %d", d, n, last)
		}
		last, total = d, n
	}})
	if err != nil {
		t.Fatal(err)
	}
	if last != total || total != 2*30+20 {
		t.Errorf("progress ended at %d of %d, expected %d", last, total, 2*30+20)
	}
	ctx, cancel := context.WithCancel(context.Background())
	n := 0
	_, err = Breaks(tt, y, BreaksOptions{Sims: 500, Context: ctx, Progress: func(d, _ int) {
		n = d
		if d == 10 {
			cancel()
		}
	}})
	if !errors.Is(err, ErrBreaksCanceled) {
		t.Fatalf("error %v; expected cancellation", err)
	}
	if n != 10 {
		t.Errorf("work went on to %d after cancel at 10", n)
	}
}

// The JSON field names are the CLI contract.
func TestBreaksJSONContract(t *testing.T) {
	tt, y := brkBenchSeries()
	for _, model := range []string{"slope", "mean"} {
		res, err := Breaks(tt, y, BreaksOptions{Model: model, MaxBreaks: 2, Sims: 20, Boot: 20, MinYears: 15})
		if err != nil {
			t.Fatal(err)
		}
		if len(res.Breaks) == 0 {
			res.Breaks = []BreaksPoint{{}}
			res.Segments = append(res.Segments, res.Segments[0])
		}
		b, err := json.Marshal(res)
		if err != nil {
			t.Fatal(err)
		}
		var m map[string]any
		if err := json.Unmarshal(b, &m); err != nil {
			t.Fatal(err)
		}
		for _, k := range []string{"selected", "breaks", "segments", "bic", "p_values"} {
			if _, ok := m[k]; !ok {
				t.Errorf("%s: JSON lacks %q: %s", model, k, b)
			}
		}
		br := m["breaks"].([]any)[0].(map[string]any)
		for _, k := range []string{"time", "ci_low", "ci_high"} {
			if _, ok := br[k]; !ok {
				t.Errorf("%s: break lacks %q", model, k)
			}
		}
		sg := m["segments"].([]any)[0].(map[string]any)
		keys := []string{"from", "to", "slope_per_decade"}
		if model == "mean" {
			keys = append(keys, "mean")
		}
		for _, k := range keys {
			if _, ok := sg[k]; !ok {
				t.Errorf("%s: segment lacks %q", model, k)
			}
		}
		if len(m["bic"].([]any)) != 3 || len(m["p_values"].([]any)) != 2 {
			t.Errorf("%s: bic %v, p_values %v", model, m["bic"], m["p_values"])
		}
	}
}

// Bad input gets an error that says what was expected; nothing panics.
func TestBreaksBadInput(t *testing.T) {
	tt := brkAnnual(1950, 40)
	y := make([]float64, 40)
	cases := []struct {
		name string
		t, y []float64
		o    BreaksOptions
		want string
	}{
		{"lengths", tt, y[:39], BreaksOptions{}, "40 times but 39 values"},
		{"order", []float64{1, 3, 2, 4, 5, 6, 7}, make([]float64, 7), BreaksOptions{}, "strictly increasing"},
		{"nan time", []float64{1, math.NaN(), 3}, make([]float64, 3), BreaksOptions{}, "finite decimal year"},
		{"inf value", tt, append(append([]float64{}, y[:39]...), math.Inf(1)), BreaksOptions{}, "infinite"},
		{"too few", tt[:4], y[:4], BreaksOptions{}, "at least 6"},
		{"max", tt, y, BreaksOptions{MaxBreaks: 5}, "1 to 4"},
		{"min years", tt, y, BreaksOptions{MinYears: -1}, "positive"},
		{"model", tt, y, BreaksOptions{Model: "steps"}, "\"slope\" or \"mean\""},
		{"noise", tt, y, BreaksOptions{Noise: "red"}, "arma11"},
		{"level", tt, y, BreaksOptions{Level: 1.5}, "between 0 and 1"},
		{"boot", tt, y, BreaksOptions{BootMethod: "wild"}, "blocks"},
	}
	for _, c := range cases {
		_, err := Breaks(c.t, c.y, c.o)
		if err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%s: error %v; expected it to say %q", c.name, err, c.want)
		}
	}
	// A constant series and a record too short for any break are answers,
	// not errors.
	res, err := Breaks(tt, y, BreaksOptions{Sims: 9, Boot: 9})
	if err != nil || res.Selected != 0 {
		t.Errorf("constant series: %v, %+v", err, res)
	}
	res, err = Breaks(tt[:15], y[:15], BreaksOptions{Sims: 9})
	if err != nil || res.MaxBreaks != 0 || len(res.Warnings) == 0 {
		t.Errorf("short series: %v, %+v", err, res)
	}
}

// Shifting time moves the breaks by the same amount; scaling the values
// scales the slopes and leaves the breaks; the same seed gives the same
// answer; missing values are skipped and flagged (properties).
func TestBreaksInvariances(t *testing.T) {
	tt, y := brkBenchSeries()
	for i, x := range tt {
		y[i] += 0.02 * math.Max(x-1990, 0)
	}
	o := BreaksOptions{MaxBreaks: 2, Sims: 49, Boot: 49, Seed: 9}
	base, err := Breaks(tt, y, o)
	if err != nil {
		t.Fatal(err)
	}
	if base.Selected == 0 {
		t.Fatalf("test series shows no break: %+v", base)
	}
	again, _ := Breaks(tt, y, o)
	a, _ := json.Marshal(base)
	b, _ := json.Marshal(again)
	if string(a) != string(b) {
		t.Errorf("same seed, different results")
	}
	ts := make([]float64, len(tt))
	ys := make([]float64, len(y))
	for i := range tt {
		ts[i] = tt[i] + 300
		ys[i] = 10*y[i] - 4
	}
	sh, err := Breaks(ts, ys, o)
	if err != nil {
		t.Fatal(err)
	}
	if sh.Selected != base.Selected {
		t.Fatalf("selected %d after shift and scale, %d before", sh.Selected, base.Selected)
	}
	for j := range base.Breaks {
		if d := sh.Breaks[j].Time - 300 - base.Breaks[j].Time; math.Abs(d) > 1e-6 {
			t.Errorf("break %d moved by %v", j, d)
		}
		if d := sh.Breaks[j].CIHigh - 300 - base.Breaks[j].CIHigh; math.Abs(d) > 0.5 {
			t.Errorf("break %d interval moved by %v", j, d)
		}
	}
	for k := range base.PValues {
		if d := sh.PValues[k] - base.PValues[k]; math.Abs(d) > 0.03 {
			t.Errorf("p-value %d: %v after shift and scale, %v before", k, sh.PValues[k], base.PValues[k])
		}
	}
	for j := range base.Segments {
		if d := sh.Segments[j].SlopePerDecade - 10*base.Segments[j].SlopePerDecade; math.Abs(d) > 1e-6*math.Abs(sh.Segments[j].SlopePerDecade)+1e-9 {
			t.Errorf("segment %d slope off by %v", j, d)
		}
	}
	yn := append([]float64{}, y...)
	yn[3], yn[40] = math.NaN(), math.NaN()
	mres, err := Breaks(tt, yn, o)
	if err != nil {
		t.Fatal(err)
	}
	if mres.N != len(y)-2 || !math.IsNaN(mres.Fitted[3]) || math.IsNaN(mres.Fitted[4]) || len(mres.Warnings) == 0 {
		t.Errorf("missing values: n %d, fitted %v %v, warnings %v", mres.N, mres.Fitted[3], mres.Fitted[4], mres.Warnings)
	}
}

// A long record with many breaks would need a search tree too large to
// keep: the grid is thinned, refined locally, and a warning says so; the
// built-in breaks are still found.
func TestBreaksLargeSearchThinned(t *testing.T) {
	rng := rand.New(rand.NewPCG(61, 62))
	tt := brkAnnual(1800, 220)
	y := brkAR1(rng, 220, 0.2, 0.05)
	for i, x := range tt {
		y[i] += 0.02*math.Max(x-1850, 0) - 0.04*math.Max(x-1900, 0) + 0.05*math.Max(x-1960, 0)
	}
	res, err := Breaks(tt, y, BreaksOptions{MaxBreaks: 4, Sims: 19, Boot: 19, Seed: 1})
	if err != nil {
		t.Fatal(err)
	}
	thinned := false
	for _, w := range res.Warnings {
		thinned = thinned || strings.Contains(w, "thinned")
	}
	if !thinned {
		t.Errorf("no thinning warning: %v", res.Warnings)
	}
	fit := res.ByK[3]
	for j, want := range []float64{1850, 1900, 1960} {
		if math.Abs(fit.Breaks[j]-want) > 2 {
			t.Errorf("break %d at %v, true %v", j, fit.Breaks[j], want)
		}
	}
}
