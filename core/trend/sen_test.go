package trend

import (
	"encoding/json"
	"math"
	"math/rand/v2"
	"strings"
	"testing"
)

// Hand-worked example with ties, t = 1..5, y = 1, 3, 2, 3, 5.
//
//	S: pairs from y=1: +1 +1 +1 +1 = 4; from y=3 (i=2): -1, 0, +1 = 0;
//	   from y=2: +1 +1 = 2; from y=3 (i=4): +1 = 1;  S = 7.
//	ties: one group of size 2 (the two 3s): 2*1*(2*2+5) = 18.
//	VarS = (5*4*15 - 18)/18 = 282/18 = 15.666...
//	Z = (7 - 1)/sqrt(282/18) = 1.51587...
//	tau-b = 7/sqrt(10*(10 - 1)) = 0.73786...
//	slopes sorted: -1, 0, 1/2, 2/3, 2/3, 1, 1, 3/2, 2, 2; median (2/3+1)/2 = 5/6
//	per year, 8.333 per decade.
//	95 % interval: C = 1.959964*sqrt(15.667) = 7.7577, M1 = (10-C)/2 = 1.1212,
//	M2 + 1 = (10+C)/2 + 1 = 9.8788: lower = -1 + 0.1212*(0 - -1) = -0.8788,
//	upper = 2 (ranks 9 and 10 are both 2).
func TestSenHandWorkedTies(t *testing.T) {
	res, err := SenMannKendall([]float64{1, 2, 3, 4, 5}, []float64{1, 3, 2, 3, 5}, SenOptions{})
	if err != nil {
		t.Fatal(err)
	}
	check := func(name string, got, want, tol float64) {
		t.Helper()
		if math.Abs(got-want) > tol {
			t.Errorf("%s = %.12g, hand-worked %.12g", name, got, want)
		}
	}
	if res.S != 7 {
		t.Errorf("S = %d, hand-worked 7", res.S)
	}
	check("VarS", res.VarS, 282.0/18, 1e-12)
	check("Z", res.Z, 6/math.Sqrt(282.0/18), 1e-12)
	check("tau", res.Tau, 7/math.Sqrt(90), 1e-12)
	check("slope", res.SenSlopePerDecade, 10*5.0/6, 1e-12)
	C := 1.959963984540054 * math.Sqrt(282.0/18) // qnorm(0.975) from R 4.2 (trend_ref.json ci.z)
	m1 := (10 - C) / 2
	check("ci low", res.CILowPerDecade, 10*(-1+(m1-1)*1), 1e-9)
	check("ci high", res.CIHighPerDecade, 20, 1e-12)
	check("p", res.PValue, math.Erfc(res.Z/math.Sqrt2), 1e-15)
	if res.N != 5 || res.Correction != "none" {
		t.Errorf("n %d, correction %q", res.N, res.Correction)
	}
}

// Against R 4.2: cor.test(y, t, method = "kendall", exact = FALSE) (tau-b,
// z without continuity correction), the same with continuity = TRUE, and a
// brute-force Mann-Kendall S, tie-corrected VarS, Sen slope and its
// interpolated Gilbert interval (ci.lower_interp / upper_interp), all
// computed with R 4.2 by testdata/ref/trend_ref.R on R's LakeHuron, nhtemp,
// Nile, statsmodels' elnino (monthly) and the first 30 LakeHuron values.
func TestSenMannKendallReference(t *testing.T) {
	ref := brkLoadRef(t)
	type set struct {
		name string
		t, y []float64
		mk   brkRefMK
		kf   brkRefKendall // exact = FALSE
		kc   *brkRefKendall
	}
	var sets []set
	for _, name := range []string{"LakeHuron", "nhtemp", "Nile", "elnino"} {
		d := ref.Datasets[name]
		kc := d.Kend.ExactFalseCont
		sets = append(sets, set{name, d.T, d.Y, d.MKSen, d.Kend.ExactFalse, &kc})
	}
	sh := ref.Short
	sets = append(sets, set{"LakeHuron[1:30]", sh.T, sh.Y, sh.MKSen, sh.ExactFals, nil})
	rel := func(got, want float64) float64 { return math.Abs(got-want) / math.Max(math.Abs(want), 1e-300) }
	for _, s := range sets {
		res, err := SenMannKendall(s.t, s.y, SenOptions{})
		if err != nil {
			t.Fatal(err)
		}
		if float64(res.S) != s.mk.S || res.N != s.mk.N {
			t.Errorf("%s: S %d n %d, R %v %d", s.name, res.S, res.N, s.mk.S, s.mk.N)
		}
		if rel(res.VarS, s.mk.VarS) > 1e-12 {
			t.Errorf("%s: VarS %.15g, R %.15g", s.name, res.VarS, s.mk.VarS)
		}
		if rel(res.Z, s.mk.ZCont) > 1e-12 || rel(res.PValue, s.mk.PCont) > 1e-9 {
			t.Errorf("%s: Z %.15g p %.15g, R %.15g %.15g", s.name, res.Z, res.PValue, s.mk.ZCont, s.mk.PCont)
		}
		if s.kc != nil && (rel(res.Z, s.kc.Statistic) > 1e-12 || rel(res.PValue, s.kc.PValue) > 1e-9) {
			t.Errorf("%s: Z %.15g p %.15g, cor.test continuity %.15g %.15g", s.name, res.Z, res.PValue, s.kc.Statistic, s.kc.PValue)
		}
		// cor.test without continuity: z = S/sqrt(VarS).
		if z := float64(res.S) / math.Sqrt(res.VarS); rel(z, s.kf.Statistic) > 1e-12 {
			t.Errorf("%s: S/sqrt(VarS) %.15g, cor.test z %.15g", s.name, z, s.kf.Statistic)
		}
		if rel(res.Tau, s.kf.Tau) > 1e-12 {
			t.Errorf("%s: tau %.15g, cor.test %.15g", s.name, res.Tau, s.kf.Tau)
		}
		if rel(res.SenSlopePerDecade/10, s.mk.SenSlope) > 1e-12 {
			t.Errorf("%s: Sen slope %.15g per year, R %.15g", s.name, res.SenSlopePerDecade/10, s.mk.SenSlope)
		}
		if rel(res.CILowPerDecade/10, s.mk.CI.LowerInterp) > 1e-9 || rel(res.CIHighPerDecade/10, s.mk.CI.UpperInterp) > 1e-9 {
			t.Errorf("%s: interval [%.15g, %.15g] per year, R [%.15g, %.15g]", s.name,
				res.CILowPerDecade/10, res.CIHighPerDecade/10, s.mk.CI.LowerInterp, s.mk.CI.UpperInterp)
		}
	}
}

// n/n* of Hamed and Rao by a direct transcription of their formula (all
// lags, significance by |r_k| > 1.96/sqrt(n)), checked on an AR(1) series;
// the corrected variance is larger, the interval wider, the p-value larger.
func TestSenHamedRaoFormula(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	n := 200
	tt := brkAnnual(1820, n)
	y := brkAR1(rng, n, 0.7, 0.2)
	for i := range y {
		y[i] += 0.004 * float64(i)
	}
	plain, err := SenMannKendall(tt, y, SenOptions{})
	if err != nil {
		t.Fatal(err)
	}
	hr, err := SenMannKendall(tt, y, SenOptions{Correction: "hamed-rao"})
	if err != nil {
		t.Fatal(err)
	}
	// Independent transcription.
	b := plain.SenSlopePerDecade / 10
	x := make([]float64, n)
	for i := range x {
		x[i] = y[i] - b*tt[i]
	}
	rank := make([]float64, n)
	for i := range x {
		less, eq := 0, 0
		for j := range x {
			if x[j] < x[i] {
				less++
			} else if x[j] == x[i] {
				eq++
			}
		}
		rank[i] = float64(less) + float64(eq+1)/2
	}
	mean := float64(n+1) / 2
	var den float64
	for _, r := range rank {
		den += (r - mean) * (r - mean)
	}
	fn := float64(n)
	f := 1.0
	for k := 1; k < n; k++ {
		var num float64
		for i := 0; i+k < n; i++ {
			num += (rank[i] - mean) * (rank[i+k] - mean)
		}
		if rk := num / den; math.Abs(rk) > 1.96/math.Sqrt(fn) {
			fk := float64(k)
			f += 2 / (fn * (fn - 1) * (fn - 2)) * (fn - fk) * (fn - fk - 1) * (fn - fk - 2) * rk
		}
	}
	f = math.Max(f, 1)
	if math.Abs(hr.VarianceFactor-f) > 1e-12*f || math.Abs(hr.VarS-f*plain.VarS) > 1e-9*hr.VarS {
		t.Errorf("factor %.12g VarS %.12g; transcription %.12g, %.12g", hr.VarianceFactor, hr.VarS, f, f*plain.VarS)
	}
	if len(hr.LagsUsed) == 0 || hr.LagsUsed[0] != 1 {
		t.Errorf("AR(1) 0.7: lags used %v", hr.LagsUsed)
	}
	if hr.S != plain.S || hr.SenSlopePerDecade != plain.SenSlopePerDecade {
		t.Errorf("correction changed S or the slope")
	}
	// On average over AR(1) 0.7 series the factor is well above 1 (single
	// series vary a lot: significant negative autocorrelations at longer
	// lags can cancel the short ones), and the interval and p-value grow.
	var avg float64
	wider := 0
	const runs = 50
	for r := 0; r < runs; r++ {
		y := brkAR1(rng, 100, 0.7, 0.2)
		p, _ := SenMannKendall(tt[:100], y, SenOptions{})
		h, _ := SenMannKendall(tt[:100], y, SenOptions{Correction: "hamed-rao"})
		avg += h.VarianceFactor / runs
		if h.VarianceFactor > 1 && h.PValue >= p.PValue && h.CIHighPerDecade-h.CILowPerDecade > p.CIHighPerDecade-p.CILowPerDecade {
			wider++
		}
	}
	if avg < 1.8 || wider < runs*3/4 {
		t.Errorf("mean factor %v, widened in %d of %d", avg, wider, runs)
	}
	t.Logf("mean n/n* %.2f, widened in %d of %d", avg, wider, runs)
}

// The guard: a strongly alternating series has negative rank
// autocorrelation, which would shrink (or, in short series, negate) the
// variance; the factor is floored at 1 and a warning says so.
func TestSenHamedRaoGuard(t *testing.T) {
	floored := 0
	defer func() {
		if floored == 0 {
			t.Errorf("no case reached the floor: the guard went untested")
		}
	}()
	for _, n := range []int{6, 12, 40} {
		tt := brkAnnual(2000, n)
		y := make([]float64, n)
		for i := range y {
			y[i] = 0.01*float64(i) + 0.5*float64(1-2*(i%2))
		}
		res, err := SenMannKendall(tt, y, SenOptions{Correction: "hamed-rao"})
		if err != nil {
			t.Fatal(err)
		}
		raw, _ := senHamedRao(tt, y, res.SenSlopePerDecade/10)
		if res.VarianceFactor != 1 || !(res.VarS > 0) || res.VarS != res.VarSUncorrected {
			t.Errorf("n=%d: factor %v (raw %v), VarS %v", n, res.VarianceFactor, raw, res.VarS)
		}
		if raw < 1 {
			floored++
		}
		if raw < 1 && len(res.Warnings) == 0 {
			t.Errorf("n=%d: raw factor %v but no warning", n, raw)
		}
	}
}

// Serial correlation and size: for trend-free AR(1) noise (phi 0.6), the
// plain test rejects at 5 % far too often and Hamed-Rao brings the rate
// down (Monte Carlo, 400 seeded series of 50 values). Trend-free
// prewhitening is logged, not asserted: it is known to overstate
// significance when the trend is weak (Bayazit and Onoz 2007, from memory),
// and does so here.
func TestSenCorrectionsSize(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 8))
	tt := brkAnnual(1970, 50)
	rej := map[string]int{}
	const runs = 400
	for r := 0; r < runs; r++ {
		y := brkAR1(rng, 50, 0.6, 1)
		for _, c := range []string{"none", "hamed-rao", "prewhiten"} {
			res, err := SenMannKendall(tt, y, SenOptions{Correction: c})
			if err != nil {
				t.Fatal(err)
			}
			if res.PValue < 0.05 {
				rej[c]++
			}
		}
	}
	t.Logf("rejections at 5 %% of %d: %v", runs, rej)
	if rej["none"] < runs/5 {
		t.Errorf("plain test rejected only %d of %d autocorrelated series; expected far more than 5 %%", rej["none"], runs)
	}
	if rej["hamed-rao"] > rej["none"]*3/4 {
		t.Errorf("hamed-rao rejected %d of %d (plain %d)", rej["hamed-rao"], runs, rej["none"])
	}
}

// Prewhitening tests n-1 values built as x_i - r1 x_{i-1} + b t_i; with no
// significant lag-1 autocorrelation the series is tested as it is.
func TestSenPrewhiten(t *testing.T) {
	rng := rand.New(rand.NewPCG(9, 10))
	tt := brkAnnual(1960, 60)
	y := brkAR1(rng, 60, 0.7, 0.3)
	for i := range y {
		y[i] += 0.01 * float64(i)
	}
	pw, err := SenMannKendall(tt, y, SenOptions{Correction: "prewhiten"})
	if err != nil {
		t.Fatal(err)
	}
	b := pw.SenSlopePerDecade / 10
	x := make([]float64, 60)
	for i := range x {
		x[i] = y[i] - b*tt[i]
	}
	r1 := brkACF(x, 1)
	w := make([]float64, 59)
	for i := 1; i < 60; i++ {
		w[i-1] = x[i] - r1*x[i-1] + b*tt[i]
	}
	direct, _ := SenMannKendall(tt[1:], w, SenOptions{})
	if pw.N != 59 || pw.S != direct.S || pw.VarS != direct.VarS || pw.R1 != r1 {
		t.Errorf("prewhitened n %d S %d VarS %v r1 %v; direct %d %v %v", pw.N, pw.S, pw.VarS, pw.R1, direct.S, direct.VarS, r1)
	}
	white := make([]float64, 60)
	for i := range white {
		white[i] = float64(i%7) * 0.1 // no lag-1 correlation to speak of
	}
	a, _ := SenMannKendall(tt, white, SenOptions{Correction: "prewhiten"})
	p, _ := SenMannKendall(tt, white, SenOptions{})
	if math.Abs(brkACF(white, 1)) <= 1.96/math.Sqrt(60) && (a.S != p.S || a.N != 60 || len(a.Warnings) == 0) {
		t.Errorf("insignificant r1: S %d n %d warnings %v; plain S %d", a.S, a.N, a.Warnings, p.S)
	}
}

// Slopes are per unit time: a gap in the record must not change the slope
// of an exact line, and time units are decimal years (per decade = 10 x).
func TestSenPerTimeWithGaps(t *testing.T) {
	tt := []float64{1990.5, 1991.5, 1992.5, 1995.5, 1996.5, 2001.5, 2002.5}
	y := make([]float64, len(tt))
	for i := range y {
		y[i] = 0.03*(tt[i]-1990) + 2
	}
	y = append(y, math.NaN())
	tt = append(tt, 2003.5)
	res, err := SenMannKendall(tt, y, SenOptions{})
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(res.SenSlopePerDecade-0.3) > 1e-12 || math.Abs(res.CILowPerDecade-0.3) > 1e-12 || math.Abs(res.CIHighPerDecade-0.3) > 1e-12 {
		t.Errorf("slope %v [%v, %v], expected exactly 0.3 per decade", res.SenSlopePerDecade, res.CILowPerDecade, res.CIHighPerDecade)
	}
	if res.N != 7 || res.S != 21 || math.Abs(res.Tau-1) > 1e-15 || len(res.Warnings) == 0 {
		t.Errorf("n %d S %d tau %v warnings %v", res.N, res.S, res.Tau, res.Warnings)
	}
}

func TestSenBadInputAndJSON(t *testing.T) {
	tt := brkAnnual(2000, 10)
	y := make([]float64, 10)
	for _, c := range []struct {
		name string
		t, y []float64
		o    SenOptions
		want string
	}{
		{"lengths", tt, y[:9], SenOptions{}, "10 times but 9 values"},
		{"order", []float64{1, 2, 2, 3}, y[:4], SenOptions{}, "strictly increasing"},
		{"few", tt[:3], y[:3], SenOptions{}, "at least 4"},
		{"correction", tt, y, SenOptions{Correction: "yes"}, "hamed-rao"},
		{"level", tt, y, SenOptions{Level: 2}, "between 0 and 1"},
	} {
		if _, err := SenMannKendall(c.t, c.y, c.o); err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%s: error %v; expected %q", c.name, err, c.want)
		}
	}
	// Constant series: an answer, not an error, and valid JSON (no NaN).
	res, err := SenMannKendall(tt, y, SenOptions{Correction: "hamed-rao"})
	if err != nil {
		t.Fatal(err)
	}
	b, err := json.Marshal(res)
	if err != nil {
		t.Fatalf("constant series: %v", err)
	}
	var m map[string]any
	_ = json.Unmarshal(b, &m)
	for _, k := range []string{"sen_slope_per_decade", "ci_low_per_decade", "ci_high_per_decade", "s", "var_s", "z", "p_value", "tau", "correction", "n", "warnings"} {
		if _, ok := m[k]; !ok {
			t.Errorf("JSON lacks %q: %s", k, b)
		}
	}
	if res.PValue != 1 || res.Z != 0 {
		t.Errorf("constant series: z %v p %v", res.Z, res.PValue)
	}
}

func BenchmarkSenMonthly900(b *testing.B) {
	rng := rand.New(rand.NewPCG(1, 1))
	n := 900
	tt := make([]float64, n)
	for i := range tt {
		tt[i] = 1950 + (float64(i)+0.5)/12
	}
	y := brkAR1(rng, n, 0.8, 0.2)
	for b.Loop() {
		if _, err := SenMannKendall(tt, y, SenOptions{Correction: "hamed-rao"}); err != nil {
			b.Fatal(err)
		}
	}
}
