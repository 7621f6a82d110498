package trend

import (
	"encoding/json"
	"math"
	"math/rand/v2"
	"os"
	"sort"
	"strings"
	"testing"

	"gonum.org/v1/gonum/stat/distuv"

	"heatledger/core/linreg"
	"heatledger/core/series"
)

// twRefArima is an arima(..., method = "ML") entry of
// testdata/ref/trend_ref.json (computed with R 4.2 by testdata/ref/trend_ref.R).
type twRefArima struct {
	Coef map[string]float64 `json:"coef"`
	SE   map[string]float64 `json:"se"`
}

type twRefSet struct {
	T     []float64 `json:"t"`
	Y     []float64 `json:"y"`
	Month []int     `json:"month"`
	LM    struct {
		Coef  map[string]float64 `json:"coef"`
		SE    map[string]float64 `json:"se"`
		Sigma float64            `json:"sigma"`
		DF    int                `json:"df"`
	} `json:"lm"`
	ACF struct {
		ACF []float64 `json:"acf"`
	} `json:"acf_resid"`
	Arima101  twRefArima `json:"arima_101"`
	Segmented *struct {
		Psi  float64            `json:"psi"`
		Coef map[string]float64 `json:"coef"`
	} `json:"segmented"`
}

func twLoadRef(t *testing.T) map[string]twRefSet {
	t.Helper()
	b, err := os.ReadFile("../../testdata/ref/trend_ref.json")
	if err != nil {
		t.Fatalf("reference file: %v", err)
	}
	var r struct {
		Datasets map[string]twRefSet `json:"datasets"`
	}
	if err := json.Unmarshal(b, &r); err != nil {
		t.Fatal(err)
	}
	return r.Datasets
}

var twRefNames = []string{"LakeHuron", "Nile", "nhtemp", "elnino"}

func twRel(got, want float64) float64 {
	if want == 0 {
		return math.Abs(got)
	}
	return math.Abs(got-want) / math.Abs(want)
}

func TestWindowWhiteAgainstR(t *testing.T) {
	ref := twLoadRef(t)
	for _, name := range twRefNames {
		d := ref[name]
		r, err := Window(d.T, d.Y, Options{Noise: NoiseWhite})
		if err != nil {
			t.Fatal(err)
		}
		// lm(y ~ t) and acf of its residuals, computed with R 4.2 by
		// testdata/ref/trend_ref.R.
		if e := twRel(r.SlopePerYear, d.LM.Coef["slope"]); e > 1e-10 {
			t.Errorf("%s slope %.15g, R %.15g", name, r.SlopePerYear, d.LM.Coef["slope"])
		}
		if e := twRel(r.StderrPerDecade/10, d.LM.SE["slope"]); e > 1e-10 {
			t.Errorf("%s SE %.15g, R %.15g", name, r.StderrPerDecade/10, d.LM.SE["slope"])
		}
		if e := twRel(r.Intercept, d.LM.Coef["intercept"]); e > 1e-9 {
			t.Errorf("%s intercept %.15g, R %.15g", name, r.Intercept, d.LM.Coef["intercept"])
		}
		if e := twRel(r.ResidualSD, d.LM.Sigma); e > 1e-10 {
			t.Errorf("%s residual SD %.15g, R %.15g", name, r.ResidualSD, d.LM.Sigma)
		}
		if r.DOF == nil || *r.DOF != float64(d.LM.DF) {
			t.Errorf("%s dof %v, R %d", name, r.DOF, d.LM.DF)
		}
		if math.Abs(r.Rho1-d.ACF.ACF[0]) > 1e-10 || math.Abs(r.Rho2-d.ACF.ACF[1]) > 1e-10 {
			t.Errorf("%s rho1, rho2 = %.12g, %.12g; R acf %.12g, %.12g", name, r.Rho1, r.Rho2, d.ACF.ACF[0], d.ACF.ACF[1])
		}
		if math.Abs(r.SlopePerDecade-10*r.SlopePerYear) > 1e-15*math.Abs(r.SlopePerDecade) {
			t.Errorf("%s per decade %g vs per year %g", name, r.SlopePerDecade, r.SlopePerYear)
		}
		// The interval is slope +- t_{0.975, df} SE and the p-value 2 P(T > |slope/SE|).
		tq := distuv.StudentsT{Mu: 0, Sigma: 1, Nu: float64(d.LM.DF)}
		q := tq.Quantile(0.975)
		if math.Abs(r.CIHighPerDecade-r.SlopePerDecade-q*r.StderrPerDecade) > 1e-12 ||
			math.Abs(r.SlopePerDecade-r.CILowPerDecade-q*r.StderrPerDecade) > 1e-12 {
			t.Errorf("%s interval [%g, %g] not slope +- %g SE", name, r.CILowPerDecade, r.CIHighPerDecade, q)
		}
		if p := 2 * (1 - tq.CDF(math.Abs(r.SlopePerDecade/r.StderrPerDecade))); math.Abs(p-r.PValue) > 1e-12 {
			t.Errorf("%s p %g, expected %g", name, r.PValue, p)
		}
	}
}

// Worked cases computed by hand (exact fractions), with the formulas of
// Santer et al. 2008 (ar1) and Foster and Rahmstorf 2011 (arma11):
// y = 10 + 0.5 (t - tbar) + e with residual patterns chosen orthogonal to
// 1 and t, so the OLS residuals are exactly e.
func TestWindowNoiseModelsHandWorked(t *testing.T) {
	mk := func(e []float64) ([]float64, []float64) {
		n := len(e)
		tt := make([]float64, n)
		y := make([]float64, n)
		tbar := 2000.5 + float64(n-1)/2
		for i := range e {
			tt[i] = 2000.5 + float64(i)
			y[i] = 10 + 0.5*(tt[i]-tbar) + e[i]
		}
		return tt, y
	}
	near := func(name string, got, want float64) {
		t.Helper()
		if math.Abs(got-want) > 1e-12*math.Max(1, math.Abs(want)) {
			t.Errorf("%s = %.15g, hand %.15g", name, got, want)
		}
	}

	// Case 1: n = 12, e = (1,1,1,-1,-1,-1,-1,-1,-1,1,1,1).
	// sum e = 0, sum (t - tbar) e = -13.5 + 4.5 - 4.5 + 13.5 = 0; sum e^2 = 12;
	// S_tt = 2 (0.25 + 2.25 + 6.25 + 12.25 + 20.25 + 30.25) = 143;
	// lag-1 products: nine +1, two -1 -> r1 = 7/12; lag-2: six +1, four -1 -> r2 = 2/12.
	tt, y := mk([]float64{1, 1, 1, -1, -1, -1, -1, -1, -1, 1, 1, 1})
	w, err := Window(tt, y, Options{Noise: NoiseWhite})
	if err != nil {
		t.Fatal(err)
	}
	near("slope per decade", w.SlopePerDecade, 5)
	near("rho1", w.Rho1, 7.0/12)
	near("rho2", w.Rho2, 2.0/12)
	near("white SE", w.StderrPerDecade, 10*math.Sqrt(12.0/10/143)) // s^2 = 12/10
	near("white dof", *w.DOF, 10)

	// ar1: n_e = 12 (5/12)/(19/12) = 60/19; s^2 = 12/(60/19 - 2) = 114/11;
	// SE = sqrt(114/11/143); dof = 60/19 - 2 = 22/19.
	a, err := Window(tt, y, Options{Noise: NoiseAR1})
	if err != nil {
		t.Fatal(err)
	}
	near("ar1 n_e", *a.NEff, 60.0/19)
	near("ar1 SE", a.StderrPerDecade, 10*math.Sqrt(114.0/11/143))
	near("ar1 dof", *a.DOF, 22.0/19)

	// arma11: phi = (2/12)/(7/12) = 2/7; nu = 1 + 2 (7/12)/(5/7) = 79/30;
	// SE = sqrt(12/10/143 * 79/30); dof = 12/(79/30) - 2 = 202/79.
	f, err := Window(tt, y, Options{Noise: NoiseARMA11})
	if err != nil {
		t.Fatal(err)
	}
	near("arma11 phi", *f.Phi, 2.0/7)
	near("arma11 nu", *f.Nu, 79.0/30)
	near("arma11 SE", f.StderrPerDecade, 10*math.Sqrt(12.0/10/143*79/30))
	near("arma11 dof", *f.DOF, 202.0/79)
	near("arma11 n_eff", *f.NEff, 360.0/79)
	if len(f.Warnings) == 0 || !strings.Contains(strings.Join(f.Warnings, " "), "15 years") {
		t.Errorf("12-year window: expected the short-window warning, got %q", f.Warnings)
	}

	// Case 2: n = 8, e = (1,1,-1,-1,-1,-1,1,1): sum e^2 = 8, S_tt = 42,
	// r1 = 3/8, r2 = -2/8 -> phi = -2/3 < 0: arma11 falls back to AR(1)
	// with phi = rho1: nu = (1 + 3/8)/(1 - 3/8) = 2.2, SE = sqrt(8/6/42 * 2.2),
	// dof = 8/2.2 - 2.
	tt, y = mk([]float64{1, 1, -1, -1, -1, -1, 1, 1})
	f, err = Window(tt, y, Options{Noise: NoiseARMA11})
	if err != nil {
		t.Fatal(err)
	}
	near("fallback rho1", f.Rho1, 3.0/8)
	near("fallback rho2", f.Rho2, -2.0/8)
	near("fallback phi", *f.Phi, 3.0/8)
	near("fallback nu", *f.Nu, 2.2)
	near("fallback SE", f.StderrPerDecade, 10*math.Sqrt(8.0/6/42*2.2))
	near("fallback dof", *f.DOF, 8/2.2-2)
	if !strings.Contains(strings.Join(f.Warnings, " "), "AR(1) with phi = rho1") {
		t.Errorf("expected the AR(1) fall-back warning, got %q", f.Warnings)
	}
	// ar1 on case 2: n_e = 8 (5/8)/(11/8) = 40/11; s^2 = 8/(40/11 - 2) = 44/9.
	a, err = Window(tt, y, Options{Noise: NoiseAR1})
	if err != nil {
		t.Fatal(err)
	}
	near("case 2 ar1 SE", a.StderrPerDecade, 10*math.Sqrt(44.0/9/42))

	// Case 3: n = 6, e = (1,-1,0,0,-1,1): r1 = -2/4 < 0. ar1 caps n_e at n
	// (so the SE equals white's) and arma11 falls back to white, both with warnings.
	tt, y = mk([]float64{1, -1, 0, 0, -1, 1})
	a, err = Window(tt, y, Options{Noise: NoiseAR1})
	if err != nil {
		t.Fatal(err)
	}
	w, _ = Window(tt, y, Options{Noise: NoiseWhite})
	near("case 3 r1", a.Rho1, -0.5)
	near("capped n_e", *a.NEff, 6)
	near("capped SE", a.StderrPerDecade, w.StderrPerDecade)
	if !strings.Contains(strings.Join(a.Warnings, " "), "capped") {
		t.Errorf("expected the capped n_e warning, got %q", a.Warnings)
	}
	f, _ = Window(tt, y, Options{Noise: NoiseARMA11})
	near("white fall-back SE", f.StderrPerDecade, w.StderrPerDecade)
	if f.Phi != nil || !strings.Contains(strings.Join(f.Warnings, " "), "white") {
		t.Errorf("expected the white fall-back (phi null, warning), got phi %v, %q", f.Phi, f.Warnings)
	}
}

func TestWindowRefusesTooFewEffectiveValues(t *testing.T) {
	// A parabola over 20 years: the residuals about the line are smooth,
	// strongly autocorrelated.
	n := 20
	tt := make([]float64, n)
	y := make([]float64, n)
	for i := range tt {
		tt[i] = 1990.5 + float64(i)
		y[i] = (float64(i) - 9.5) * (float64(i) - 9.5) / 10
	}
	// Independent arithmetic: OLS residuals and r1 by plain loops.
	var tb, yb float64
	for i := range tt {
		tb += tt[i]
		yb += y[i]
	}
	tb /= float64(n)
	yb /= float64(n)
	var sxy, sxx float64
	for i := range tt {
		sxy += (tt[i] - tb) * (y[i] - yb)
		sxx += (tt[i] - tb) * (tt[i] - tb)
	}
	e := make([]float64, n)
	for i := range e {
		e[i] = y[i] - yb - sxy/sxx*(tt[i]-tb)
	}
	r1 := linreg.ACF(e, 1)[1]
	ne := float64(n) * (1 - r1) / (1 + r1)
	if ne > 3 {
		t.Fatalf("test construction: n_e = %g, expected <= 3", ne)
	}
	_, err := Window(tt, y, Options{Noise: NoiseAR1})
	if err == nil || !strings.Contains(err.Error(), "n_e") {
		t.Errorf("n_e = %.2f: expected a refusal naming n_e, got %v", ne, err)
	}
}

// TestNoiseInflation: the formulas of Santer et al. 2008 (ar1) and Foster
// and Rahmstorf 2011 (arma11) worked by hand, and each fall-back.
func TestNoiseInflation(t *testing.T) {
	check := func(name string, got Inflation, neff, nu, phi float64, fb Fallback) {
		t.Helper()
		eq := func(a, b float64) bool {
			return (math.IsNaN(a) && math.IsNaN(b)) || a == b || math.Abs(a-b) <= 1e-14*math.Abs(b)
		}
		if !eq(got.NEff, neff) || !eq(got.Nu, nu) || !eq(got.Phi, phi) || got.Fallback != fb {
			t.Errorf("%s: got %+v, want n_eff %v nu %v phi %v fall-back %d", name, got, neff, nu, phi, fb)
		}
	}
	nan := math.NaN()
	check("white", NoiseInflation(NoiseWhite, 30, 0.5, 0.25), 30, 1, nan, FallbackNone)
	// n_e = 30 (1 - 0.5)/(1 + 0.5) = 10.
	check("ar1", NoiseInflation(NoiseAR1, 30, 0.5, 0.25), 10, 1, nan, FallbackNone)
	check("ar1, r1 <= 0", NoiseInflation(NoiseAR1, 30, -0.2, 0.1), 30, 1, nan, FallbackCapped)
	check("ar1, r1 NaN", NoiseInflation(NoiseAR1, 30, nan, nan), 30, 1, nan, FallbackCapped)
	// phi = 0.25/0.5 = 0.5, nu = 1 + 2 (0.5)/(1 - 0.5) = 3, n/nu = 10.
	check("arma11", NoiseInflation(NoiseARMA11, 30, 0.5, 0.25), 10, 3, 0.5, FallbackNone)
	// phi = 0.75, nu = 1 + 0.8/0.25 = 4.2.
	check("arma11, phi 0.75", NoiseInflation(NoiseARMA11, 42, 0.4, 0.3), 10, 4.2, 0.75, FallbackNone)
	check("arma11, rho1 <= 0", NoiseInflation(NoiseARMA11, 30, -0.1, 0.2), 30, 1, nan, FallbackWhite)
	check("arma11, rho1 NaN", NoiseInflation(NoiseARMA11, 30, nan, nan), 30, 1, nan, FallbackWhite)
	// phi < 0 and phi >= 1: AR(1) with phi = rho1, nu = 1.3/0.7.
	check("arma11, phi < 0", NoiseInflation(NoiseARMA11, 13, 0.3, -0.1), 13/(1.3/0.7), 1.3/0.7, 0.3, FallbackAR1)
	check("arma11, phi > 1", NoiseInflation(NoiseARMA11, 13, 0.3, 0.35), 13/(1.3/0.7), 1.3/0.7, 0.3, FallbackAR1)
	check("arma11, rho1 = 1", NoiseInflation(NoiseARMA11, 13, 1, -0.5), 0, math.Inf(1), 1, FallbackAR1)
	check("arma11-ml", NoiseInflation(NoiseARMA11ML, 30, 0.5, 0.25), 30, 1, nan, FallbackNone)
}

func TestWindowARMA11MLAgainstR(t *testing.T) {
	ref := twLoadRef(t)
	for _, name := range twRefNames {
		d := ref[name]
		r, err := Window(d.T, d.Y, Options{Noise: NoiseARMA11ML})
		if err != nil {
			t.Fatal(err)
		}
		// arima(y, order = c(1,0,1), xreg = t, method = "ML"), computed with
		// R 4.2 by testdata/ref/trend_ref.R.
		w := d.Arima101
		if math.Abs(r.SlopePerYear-w.Coef["slope"]) > 0.02*w.SE["slope"] {
			t.Errorf("%s ML slope %.8g, R %.8g", name, r.SlopePerYear, w.Coef["slope"])
		}
		if twRel(r.StderrPerDecade/10, w.SE["slope"]) > 0.03 {
			t.Errorf("%s ML SE %.6g, R %.6g", name, r.StderrPerDecade/10, w.SE["slope"])
		}
		if math.Abs(*r.Phi-w.Coef["ar1"]) > 0.02*w.SE["ar1"] || math.Abs(*r.Theta-w.Coef["ma1"]) > 0.02*w.SE["ma1"] {
			t.Errorf("%s phi %.6g theta %.6g, R %.6g %.6g", name, *r.Phi, *r.Theta, w.Coef["ar1"], w.Coef["ma1"])
		}
		if r.DOF != nil || !r.Normal {
			t.Errorf("%s: arma11-ml should use the normal distribution (dof null)", name)
		}
		if math.Abs(r.CIHighPerDecade-r.SlopePerDecade-1.959963984540054*r.StderrPerDecade) > 1e-12 {
			t.Errorf("%s: ML interval is not slope +- 1.96 SE", name)
		}
	}
}

func TestWindowSeasonalAndMissingWarnings(t *testing.T) {
	ref := twLoadRef(t)
	d := ref["elnino"]
	// The elnino file carries its seasonal cycle ("seasonal cycle not removed").
	r, err := Window(d.T, d.Y, Options{Noise: NoiseAR1})
	if err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(strings.Join(r.Warnings, " "), "seasonal cycle") {
		t.Errorf("raw elnino: expected the seasonal warning, got %q", r.Warnings)
	}
	// Monthly anomalies (each calendar month minus its mean): no warning.
	var sum [13]float64
	var cnt [13]float64
	for i, m := range d.Month {
		sum[m] += d.Y[i]
		cnt[m]++
	}
	anom := make([]float64, len(d.Y))
	for i, m := range d.Month {
		anom[i] = d.Y[i] - sum[m]/cnt[m]
	}
	r, err = Window(d.T, anom, Options{Noise: NoiseAR1})
	if err != nil {
		t.Fatal(err)
	}
	if strings.Contains(strings.Join(r.Warnings, " "), "seasonal") {
		t.Errorf("elnino anomalies: unexpected seasonal warning %q", r.Warnings)
	}
	// Missing values: skipped and counted; the slope is the OLS slope of
	// the values present.
	y := append([]float64(nil), anom...)
	for _, i := range []int{5, 6, 7, 300, 731} {
		y[i] = math.NaN()
	}
	r, err = Window(d.T, y, Options{Noise: NoiseWhite})
	if err != nil {
		t.Fatal(err)
	}
	var tp, yp []float64
	for i, v := range y {
		if !math.IsNaN(v) {
			tp = append(tp, d.T[i])
			yp = append(yp, v)
		}
	}
	X, _ := linreg.Design(true, tp)
	ols, _ := linreg.OLS(X, yp)
	if r.N != len(y)-5 || r.Missing != 5 || twRel(r.SlopePerYear, ols.Coef[1]) > 1e-10 || twRel(r.StderrPerDecade/10, ols.StdErr[1]) > 1e-10 {
		t.Errorf("with 5 missing: n %d missing %d slope %g (OLS %g)", r.N, r.Missing, r.SlopePerYear, ols.Coef[1])
	}
	if !strings.Contains(strings.Join(r.Warnings, " "), "5 missing values skipped") {
		t.Errorf("expected the missing-values warning, got %q", r.Warnings)
	}
	// Lag pairs skip gaps: rho1 from pairs of present neighbours only.
	var e []float64
	for i := range y {
		if math.IsNaN(y[i]) {
			e = append(e, math.NaN())
			continue
		}
		e = append(e, y[i]-ols.Coef[0]-ols.Coef[1]*d.T[i])
	}
	var c0, c1, m float64
	k := 0
	for _, v := range e {
		if !math.IsNaN(v) {
			m += v
			k++
		}
	}
	m /= float64(k)
	for i, v := range e {
		if math.IsNaN(v) {
			continue
		}
		c0 += (v - m) * (v - m)
		if i+1 < len(e) && !math.IsNaN(e[i+1]) {
			c1 += (v - m) * (e[i+1] - m)
		}
	}
	if math.Abs(r.Rho1-c1/c0) > 1e-12 {
		t.Errorf("rho1 with gaps %.15g, expected %.15g", r.Rho1, c1/c0)
	}
}

func TestWindowJSONContract(t *testing.T) {
	tt, y := twSimSeries(1, 240, 0.02, 0.6, 0, 0.1)
	want := []string{"series", "from", "to", "n", "noise", "level", "slope_per_decade", "stderr_per_decade", "ci_low_per_decade", "ci_high_per_decade", "p_value", "dof", "rho1", "rho2", "phi", "nu", "n_eff", "residual_sd", "warnings"}
	sort.Strings(want)
	for _, noise := range []string{NoiseWhite, NoiseAR1, NoiseARMA11, NoiseARMA11ML} {
		r, err := Window(tt, y, Options{Noise: noise})
		if err != nil {
			t.Fatal(err)
		}
		b, err := json.Marshal(r)
		if err != nil {
			t.Fatalf("%s: %v", noise, err)
		}
		var m map[string]any
		if err := json.Unmarshal(b, &m); err != nil {
			t.Fatal(err)
		}
		var keys []string
		for k := range m {
			keys = append(keys, k)
		}
		sort.Strings(keys)
		if strings.Join(keys, ",") != strings.Join(want, ",") {
			t.Errorf("%s JSON keys %v, contract %v", noise, keys, want)
		}
		if m["warnings"] == nil {
			t.Errorf("%s: warnings should be [] not null", noise)
		}
		null := func(k string) bool { return m[k] == nil }
		switch noise {
		case NoiseWhite:
			if null("dof") || !null("phi") || !null("nu") || !null("n_eff") {
				t.Errorf("white: %s", b)
			}
		case NoiseAR1:
			if null("dof") || null("n_eff") || !null("nu") || !null("phi") {
				t.Errorf("ar1: %s", b)
			}
		case NoiseARMA11:
			if null("dof") || null("n_eff") || null("nu") || null("phi") {
				t.Errorf("arma11: %s", b)
			}
		case NoiseARMA11ML:
			if !null("dof") || null("phi") || null("nu") {
				t.Errorf("arma11-ml: %s", b)
			}
		}
	}
}

func TestSeriesWindow(t *testing.T) {
	tt, y := twSimSeries(2, 600, 0.02, 0.5, 0, 0.1) // 1950-01 .. 1999-12
	s := series.New("tessary surface", "K", series.Monthly, series.MonthIndex(1950, 1), y)
	if math.Abs(s.Times[0]-tt[0]) > 1e-12 {
		t.Fatalf("test axis %g vs series %g", tt[0], s.Times[0])
	}
	r, err := SeriesWindow(s, "1980", "1989", Options{Noise: NoiseARMA11})
	if err != nil {
		t.Fatal(err)
	}
	if r.Series != "tessary surface" || r.From != "1980-01" || r.To != "1989-12" || r.N != 120 {
		t.Errorf("series window: %q %s..%s n=%d", r.Series, r.From, r.To, r.N)
	}
	w, _ := Window(s.Times[360:480], s.Values[360:480], Options{Noise: NoiseARMA11})
	if r.SlopePerDecade != w.SlopePerDecade || r.StderrPerDecade != w.StderrPerDecade {
		t.Errorf("SeriesWindow differs from Window on the same steps")
	}
	if _, err := SeriesWindow(s, "2010", "2020", Options{}); err == nil {
		t.Error("window outside the series: no error")
	}
	if _, err := SeriesWindow(s, "1980", "1980-02", Options{}); err == nil || !strings.Contains(err.Error(), "tessary surface") {
		t.Errorf("two values: expected an error naming the series, got %v", err)
	}
}

func TestWindowInvariances(t *testing.T) {
	tt, y := twSimSeries(3, 360, 0.015, 0.7, -0.2, 0.12)
	for _, noise := range []string{NoiseWhite, NoiseAR1, NoiseARMA11} {
		base, err := Window(tt, y, Options{Noise: noise})
		if err != nil {
			t.Fatal(err)
		}
		// Shifting time by a constant changes nothing but the intercept.
		ts := make([]float64, len(tt))
		for i := range tt {
			ts[i] = tt[i] - 1000
		}
		sh, _ := Window(ts, y, Options{Noise: noise})
		if twRel(sh.SlopePerDecade, base.SlopePerDecade) > 1e-9 || twRel(sh.StderrPerDecade, base.StderrPerDecade) > 1e-9 {
			t.Errorf("%s: time shift changed slope/SE", noise)
		}
		// Scaling y scales slope and SE and leaves p, rho and dof alone;
		// adding a constant changes nothing.
		ys := make([]float64, len(y))
		for i := range y {
			ys[i] = 3.5*y[i] + 7
		}
		sc, _ := Window(tt, ys, Options{Noise: noise})
		if twRel(sc.SlopePerDecade, 3.5*base.SlopePerDecade) > 1e-9 || twRel(sc.StderrPerDecade, 3.5*base.StderrPerDecade) > 1e-9 ||
			math.Abs(sc.PValue-base.PValue) > 1e-9 || math.Abs(sc.Rho1-base.Rho1) > 1e-12 {
			t.Errorf("%s: scaling y by 3.5: slope %g vs %g", noise, sc.SlopePerDecade, 3.5*base.SlopePerDecade)
		}
	}
}

func TestWindowErrors(t *testing.T) {
	tt := []float64{2000.5, 2001.5, 2002.5, 2003.5}
	y := []float64{1, 2, 1.5, 3}
	cases := []struct {
		name string
		t, y []float64
		opt  Options
		want string
	}{
		{"noise", tt, y, Options{Noise: "red"}, "expected white, ar1"},
		{"level", tt, y, Options{Level: 1.5}, "between 0 and 1"},
		{"lengths", tt, y[:3], Options{}, "one value per time"},
		{"order", []float64{2000, 2002, 2001, 2003}, y, Options{}, "increasing"},
		{"few", tt, []float64{1, math.NaN(), math.NaN(), 2}, Options{}, "at least 3"},
		{"line", tt, []float64{1, 2, 3, 4}, Options{Noise: NoiseWhite}, "straight line"},
		{"inf", tt, []float64{1, math.Inf(1), 3, 4}, Options{}, "infinite"},
		{"nan time", []float64{2000, math.NaN(), 2002, 2003}, y, Options{}, "finite"},
	}
	for _, c := range cases {
		_, err := Window(c.t, c.y, c.opt)
		if err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%s: err = %v, expected it to contain %q", c.name, err, c.want)
		}
	}
}

// twSimSeries is a monthly series from 1950-01: slope per year plus
// ARMA(1,1) noise.
func twSimSeries(seed uint64, n int, slope, phi, theta, sigma float64) ([]float64, []float64) {
	rng := rand.New(rand.NewPCG(seed, seed*7+1))
	u := linreg.SimulateARMA11(rng, n, phi, theta, sigma)
	tt := make([]float64, n)
	y := make([]float64, n)
	for i := range tt {
		tt[i] = 1950 + (float64(i)+0.5)/12
		y[i] = slope*(tt[i]-1950) + u[i]
	}
	return tt, y
}

// Monte Carlo coverage (seeded): a known trend plus ARMA(1,1) noise with
// phi = 0.8, theta = -0.3, 2,000 runs. Foster and Rahmstorf's arma11
// interval must cover the true slope in 93-97 % of runs; the white-noise
// interval, which ignores the autocorrelation, clearly less (< 85 %).
// Property check (CHECKS.md: Monte Carlo coverage).
//
// Series length: n = 720 months. The arma11 interval's coverage reaches
// 95 % from below as n grows, because rho1 and rho2 estimated from
// residuals are biased low: with 20,000 runs it was 93.3 % at n = 360,
// 94.1 % at 600 and 94.5 % at 720. At n = 360 a 2,000-run estimate (MC
// standard error 0.6 %) sits on the 93 % edge, so the test uses 720, where
// the 93-97 % band is about three standard errors wide on the low side.
// A refused window (n/nu <= 3) counts as a miss.
func TestWindowCoverageMonteCarlo(t *testing.T) {
	const runs, n = 2000, 720
	const phi, theta, sigma, slope = 0.8, -0.3, 0.1, 0.02
	rng := rand.New(rand.NewPCG(20260101, 42))
	tt := make([]float64, n)
	for i := range tt {
		tt[i] = 1960 + (float64(i)+0.5)/12
	}
	y := make([]float64, n)
	cover := map[string]int{}
	refused := 0
	for run := 0; run < runs; run++ {
		u := linreg.SimulateARMA11(rng, n, phi, theta, sigma)
		for i := range y {
			y[i] = slope*(tt[i]-1960) + u[i]
		}
		for _, noise := range []string{NoiseWhite, NoiseAR1, NoiseARMA11} {
			r, err := Window(tt, y, Options{Noise: noise})
			if err != nil {
				refused++
				continue
			}
			if r.CILowPerDecade <= 10*slope && 10*slope <= r.CIHighPerDecade {
				cover[noise]++
			}
		}
	}
	if refused > 0 {
		t.Logf("%d windows refused (counted as misses)", refused)
	}
	frac := func(k string) float64 { return float64(cover[k]) / runs }
	t.Logf("coverage of the 95%% interval over %d runs: white %.3f, ar1 %.3f, arma11 %.3f", runs, frac(NoiseWhite), frac(NoiseAR1), frac(NoiseARMA11))
	if f := frac(NoiseARMA11); f < 0.93 || f > 0.97 {
		t.Errorf("arma11 coverage %.3f, expected 0.93-0.97", f)
	}
	if f := frac(NoiseWhite); f >= 0.85 {
		t.Errorf("white coverage %.3f, expected clearly below 0.95 (< 0.85)", f)
	}
}

func BenchmarkWindow900(b *testing.B) {
	tt, y := twSimSeries(9, 900, 0.02, 0.8, -0.3, 0.1)
	for _, noise := range []string{NoiseWhite, NoiseAR1, NoiseARMA11, NoiseARMA11ML} {
		b.Run(noise, func(b *testing.B) {
			for i := 0; i < b.N; i++ {
				if _, err := Window(tt, y, Options{Noise: noise}); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}

// Nothing panics on odd user input: every call returns a result or an error.
func TestTrendOddInputsDoNotPanic(t *testing.T) {
	nan := math.NaN()
	ts := [][]float64{nil, {}, {2000.5}, {2000.5, 2001.5}, {2000.5, 2001.5, 2002.5, 2003.5, 2004.5}}
	ys := [][]float64{nil, {}, {1}, {1, nan}, {nan, nan, nan, nan, nan}, {2, 2, 2, 2, 2}, {1, 2, 3, 4, 5}, {1, nan, 3, 2, 5}}
	opts := []Options{{}, {Noise: NoiseARMA11ML}, {Noise: NoiseARMA11, Level: nan}, {Noise: NoiseAR1, Level: 0.999999}}
	for _, tt := range ts {
		for _, y := range ys {
			for _, o := range opts {
				func() {
					defer func() {
						if r := recover(); r != nil {
							t.Errorf("panic on t=%v y=%v opt=%+v: %v", tt, y, o, r)
						}
					}()
					_, _ = Window(tt, y, o)
					_, _ = BrokenStick(tt, y, 2002, o)
					_, _ = BrokenStick(tt, y, nan, o)
					_, _ = Compare(tt, y, Span{2000, 2002}, Span{2002, 2005}, o)
					_, _ = Compare(tt, y, Span{nan, 2002}, Span{2002, 2005}, o)
					_, _ = Grid(tt, y, GridOptions{MinYears: 2, Noise: o.Noise, Level: o.Level})
					_, _ = Grid(tt, y, GridOptions{MinYears: nan})
				}()
			}
		}
	}
	_, _ = SeriesWindow(nil, "", "", Options{})
	_, _ = SeriesCompare(nil, [2]string{}, [2]string{}, Options{})
	_, _ = SeriesGrid(nil, GridOptions{})
}
