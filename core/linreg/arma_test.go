package linreg

import (
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// checkArima compares an ARMAFit with R's arima(..., method = "ML") values.
// Our optimiser converges more tightly than R's optim, so the comparison
// is: log-likelihood at least R's minus 1e-6 and within 1e-3; coefficients
// within 2 % of their standard error; standard errors within 3 % (R's come
// from a finite-difference Hessian with 1e-3 steps in transformed space).
func checkArima(t *testing.T, name string, got *ARMAResult, want refArima) {
	t.Helper()
	if got.LogLik < want.LogLik-1e-6 || math.Abs(got.LogLik-want.LogLik) > 1e-3 {
		t.Errorf("%s loglik %.10g, R %.10g", name, got.LogLik, want.LogLik)
	}
	if relErr(got.Sigma2, want.Sigma2) > 1e-3 {
		t.Errorf("%s sigma2 %.10g, R %.10g", name, got.Sigma2, want.Sigma2)
	}
	if math.Abs(got.AIC-want.AIC) > 2e-3 {
		t.Errorf("%s AIC %.10g, R %.10g", name, got.AIC, want.AIC)
	}
	type pv struct {
		key     string
		est, se float64
	}
	var ps []pv
	for i, v := range got.AR {
		ps = append(ps, pv{"ar" + string(rune('1'+i)), v, got.ARSE[i]})
	}
	for i, v := range got.MA {
		ps = append(ps, pv{"ma" + string(rune('1'+i)), v, got.MASE[i]})
	}
	ps = append(ps, pv{"intercept", got.Beta[0], got.BetaSE[0]}, pv{"slope", got.Beta[1], got.BetaSE[1]})
	for _, p := range ps {
		wc, ok := want.Coef[p.key]
		if !ok {
			t.Fatalf("%s: reference lacks %s", name, p.key)
		}
		ws := want.SE[p.key]
		if math.Abs(p.est-wc) > 0.02*ws {
			t.Errorf("%s %s = %.8g, R %.8g (diff %.2g SE)", name, p.key, p.est, wc, math.Abs(p.est-wc)/ws)
		}
		if relErr(p.se, ws) > 0.03 {
			t.Errorf("%s se(%s) = %.6g, R %.6g (rel %.2g)", name, p.key, p.se, ws, relErr(p.se, ws))
		}
	}
}

func TestARMAFitAgainstR(t *testing.T) {
	ref := loadRef(t)
	for _, name := range refNames {
		d := ref.Datasets[name]
		X, _ := Design(true, d.T)
		for _, c := range []struct {
			p, q int
			want refArima
		}{{1, 1, d.Arima101}, {1, 0, d.Arima100}} {
			// arima(y, order = c(p,0,q), xreg = t, method = "ML"), computed
			// with R 4.2 by testdata/ref/trend_ref.R.
			fit, err := ARMAFit(X, d.Y, c.p, c.q)
			if err != nil {
				t.Fatalf("%s (%d,0,%d): %v", name, c.p, c.q, err)
			}
			if fit.N != c.want.NObs {
				t.Errorf("%s N %d, R nobs %d", name, fit.N, c.want.NObs)
			}
			checkArima(t, name+" ARMA("+string(rune('0'+c.p))+","+string(rune('0'+c.q))+")", fit, c.want)
			t.Logf("%s (%d,0,%d): %d likelihood evaluations, loglik %.8f (R %.8f)", name, c.p, c.q, fit.Evaluations, fit.LogLik, c.want.LogLik)
		}
	}
}

func TestARMAFitLakeHuronDocExample(t *testing.T) {
	ref := loadRef(t)
	d := ref.Datasets["LakeHuron"]
	x := make([]float64, len(d.Year))
	for i, yr := range d.Year {
		x[i] = yr - 1920
	}
	X, _ := Design(true, x)
	fit, err := ARMAFit(X, d.Y, 2, 0)
	if err != nil {
		t.Fatal(err)
	}
	// R documentation example, ?arima: arima(LakeHuron, order = c(2,0,0),
	// xreg = time(LakeHuron) - 1920) prints ar1 1.0048, ar2 -0.2913,
	// intercept 579.0993, trend -0.0216 (s.e. 0.0081) (../shared/CHECKS.md).
	// Tolerance: half a unit in the printed last digit plus 1 % of the
	// standard error (optimisers stop at slightly different points).
	printed := []struct {
		name      string
		got, want float64
		se        float64
	}{
		{"ar1", fit.AR[0], 1.0048, fit.ARSE[0]},
		{"ar2", fit.AR[1], -0.2913, fit.ARSE[1]},
		{"intercept", fit.Beta[0], 579.0993, fit.BetaSE[0]},
		{"trend", fit.Beta[1], -0.0216, fit.BetaSE[1]},
		{"se(trend)", fit.BetaSE[1], 0.0081, 0},
	}
	for _, p := range printed {
		if math.Abs(p.got-p.want) > 0.5e-4+0.01*p.se {
			t.Errorf("%s = %.6f, R documentation prints %.4f", p.name, p.got, p.want)
		}
	}
	// The same fit with full digits, computed with R 4.2 by
	// testdata/ref/trend_ref.R (arima's default CSS-ML).
	want := ref.Doc
	if fit.LogLik < want.LogLik-1e-6 || math.Abs(fit.LogLik-want.LogLik) > 1e-3 {
		t.Errorf("loglik %.10g, R %.10g", fit.LogLik, want.LogLik)
	}
	for _, c := range []struct {
		key     string
		est, se float64
	}{{"ar1", fit.AR[0], fit.ARSE[0]}, {"ar2", fit.AR[1], fit.ARSE[1]}, {"intercept", fit.Beta[0], fit.BetaSE[0]}, {"slope", fit.Beta[1], fit.BetaSE[1]}} {
		if math.Abs(c.est-want.Coef[c.key]) > 0.02*want.SE[c.key] {
			t.Errorf("%s = %.8g, R %.8g", c.key, c.est, want.Coef[c.key])
		}
		if relErr(c.se, want.SE[c.key]) > 0.03 {
			t.Errorf("se(%s) = %.6g, R %.6g", c.key, c.se, want.SE[c.key])
		}
	}
}

// gaussNegLogLik is -log L of u ~ N(0, Sigma) by dense Cholesky, with the
// ARMA(1,1) autocovariances (Box, Jenkins and Reinsel, Time Series
// Analysis, sec. 3.4; from memory, cross-checked by TestSimulateARMA11Moments): gamma_0 = s2 (1 + 2 phi theta + theta^2) /
// (1 - phi^2), gamma_1 = s2 (1 + phi theta)(phi + theta) / (1 - phi^2),
// gamma_k = phi gamma_{k-1}; rows where u is NaN are dropped.
func gaussNegLogLik(u []float64, phi, theta, s2 float64) float64 {
	var idx []int
	for i, v := range u {
		if !math.IsNaN(v) {
			idx = append(idx, i)
		}
	}
	n := len(idx)
	g0 := s2 * (1 + 2*phi*theta + theta*theta) / (1 - phi*phi)
	g1 := s2 * (1 + phi*theta) * (phi + theta) / (1 - phi*phi)
	gam := func(k int) float64 {
		if k == 0 {
			return g0
		}
		return g1 * math.Pow(phi, float64(k-1))
	}
	S := mat.NewSymDense(n, nil)
	for a := 0; a < n; a++ {
		for b := a; b < n; b++ {
			S.SetSym(a, b, gam(idx[b]-idx[a]))
		}
	}
	var ch mat.Cholesky
	if !ch.Factorize(S) {
		return math.NaN()
	}
	x := mat.NewVecDense(n, nil)
	for a, i := range idx {
		x.SetVec(a, u[i])
	}
	var sol mat.VecDense
	_ = ch.SolveVecTo(&sol, x)
	q := mat.Dot(x, &sol)
	return 0.5 * (float64(n)*math.Log(2*math.Pi) + ch.LogDet() + q)
}

func TestKalmanLikelihoodMatchesDenseGaussian(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 8))
	u := SimulateARMA11(rng, 60, 0.6, -0.3, 1.3)
	u[10], u[11], u[40] = math.NaN(), math.NaN(), math.NaN()
	m := &armaModel{p: 1, q: 1, k: 0, cols: [][]float64{u}, n: len(u)}
	for _, c := range []struct{ phi, theta float64 }{{0.6, -0.3}, {0.9, 0.4}, {-0.5, 0.7}, {0.2, 0}} {
		// fullNegLogLik profiles sigma2; compare at the profiled sigma2.
		got := m.fullNegLogLik([]float64{c.phi, c.theta})
		s, _ := newSSM([]float64{c.phi}, []float64{c.theta})
		w := [][]float64{make([]float64, len(u))}
		_, used := s.filter([][]float64{u}, w)
		var rss float64
		for _, v := range w[0] {
			rss += v * v
		}
		s2 := rss / float64(used)
		want := gaussNegLogLik(u, c.phi, c.theta, s2)
		if math.Abs(got-want) > 1e-9*math.Abs(want) {
			t.Errorf("phi %g theta %g: Kalman -logL %.12g, dense Gaussian %.12g", c.phi, c.theta, got, want)
		}
	}
}

func TestARMAFitOrderZeroIsOLS(t *testing.T) {
	// With p = q = 0 the ML fit is OLS; sigma2 = RSS/n and the Hessian
	// standard errors are the OLS ones times sqrt((n - k)/n) (ML variance).
	rng := rand.New(rand.NewPCG(3, 4))
	n := 50
	x := make([]float64, n)
	y := make([]float64, n)
	for i := range x {
		x[i] = float64(i) / 7
		y[i] = 1 + 0.5*x[i] + rng.NormFloat64()
	}
	X, _ := Design(true, x)
	ols, _ := OLS(X, y)
	fit, err := ARMAFit(X, y, 0, 0)
	if err != nil {
		t.Fatal(err)
	}
	for j := 0; j < 2; j++ {
		if relErr(fit.Beta[j], ols.Coef[j]) > 1e-10 {
			t.Errorf("beta[%d] %.12g, OLS %.12g", j, fit.Beta[j], ols.Coef[j])
		}
		want := ols.StdErr[j] * math.Sqrt(float64(n-2)/float64(n))
		if relErr(fit.BetaSE[j], want) > 1e-5 {
			t.Errorf("se[%d] %.10g, expected %.10g", j, fit.BetaSE[j], want)
		}
	}
	if relErr(fit.Sigma2, ols.RSS/float64(n)) > 1e-12 {
		t.Errorf("sigma2 %g, RSS/n %g", fit.Sigma2, ols.RSS/float64(n))
	}
}

func TestARMAFitRecoversSimulatedParameters(t *testing.T) {
	rng := rand.New(rand.NewPCG(11, 12))
	n := 2000
	u := SimulateARMA11(rng, n, 0.7, 0.3, 0.5)
	x := make([]float64, n)
	y := make([]float64, n)
	for i := range x {
		x[i] = float64(i) / 12
		y[i] = 2 + 0.01*x[i] + u[i]
	}
	X, _ := Design(true, x)
	fit, err := ARMAFit(X, y, 1, 1)
	if err != nil {
		t.Fatal(err)
	}
	// Known truth, within 4 standard errors.
	if math.Abs(fit.AR[0]-0.7) > 4*fit.ARSE[0] || math.Abs(fit.MA[0]-0.3) > 4*fit.MASE[0] {
		t.Errorf("phi %.3f (se %.3f), theta %.3f (se %.3f): expected 0.7, 0.3", fit.AR[0], fit.ARSE[0], fit.MA[0], fit.MASE[0])
	}
	if math.Abs(fit.Beta[1]-0.01) > 4*fit.BetaSE[1] {
		t.Errorf("slope %.4f (se %.4f), expected 0.01", fit.Beta[1], fit.BetaSE[1])
	}
	if relErr(math.Sqrt(fit.Sigma2), 0.5) > 0.05 {
		t.Errorf("sigma %.3f, expected 0.5", math.Sqrt(fit.Sigma2))
	}
	// Missing values are skipped by the filter, not filled.
	y[100], y[101], y[500] = math.NaN(), math.NaN(), math.NaN()
	fit2, err := ARMAFit(X, y, 1, 1)
	if err != nil {
		t.Fatal(err)
	}
	if fit2.N != n-3 || !math.IsNaN(fit2.Residuals[100]) {
		t.Errorf("with 3 missing: N %d, residual[100] %g", fit2.N, fit2.Residuals[100])
	}
	if math.Abs(fit2.AR[0]-fit.AR[0]) > 0.5*fit.ARSE[0] {
		t.Errorf("3 missing values moved phi from %.4f to %.4f", fit.AR[0], fit2.AR[0])
	}
}

func TestARMAFitWithoutRegressors(t *testing.T) {
	rng := rand.New(rand.NewPCG(21, 22))
	u := SimulateARMA11(rng, 600, 0, 0.5, 1)
	// White noise, no parameters: nothing to differentiate, no panic.
	fit, err := ARMAFit(nil, u, 0, 0)
	if err != nil || fit.Cov != nil || len(fit.BetaSE) != 0 {
		t.Fatalf("ARMA(0,0) without regressors: %v %+v", err, fit)
	}
	// Pure MA(1), truth theta = 0.5.
	fit, err = ARMAFit(nil, u, 0, 1)
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(fit.MA[0]-0.5) > 4*fit.MASE[0] || !(fit.MASE[0] > 0) {
		t.Errorf("MA(1): theta %.3f (se %.3f), truth 0.5", fit.MA[0], fit.MASE[0])
	}
}

func TestARMAFitErrors(t *testing.T) {
	X, _ := Design(true, []float64{1, 2, 3, 4})
	if _, err := ARMAFit(X, []float64{1, 2, 3, 4}, 1, 1); err == nil {
		t.Error("too few observations: no error")
	}
	if _, err := ARMAFit(X, []float64{1, 2, 3}, 1, 0); err == nil {
		t.Error("length mismatch: no error")
	}
	if _, err := ARMAFit(nil, []float64{1, 2, 3}, -1, 0); err == nil {
		t.Error("negative order: no error")
	}
	y := make([]float64, 30)
	for i := range y {
		y[i] = math.NaN()
	}
	X30, _ := Design(true, make([]float64, 30))
	if _, err := ARMAFit(X30, y, 1, 0); err == nil {
		t.Error("all missing: no error")
	}
}

func TestTransformRoundTrip(t *testing.T) {
	for _, x := range [][]float64{{0.3}, {-1.2, 0.4}, {0.9, -0.8, 0.1}} {
		a := parTrans(x)
		back, ok := invParTrans(a)
		if !ok {
			t.Fatalf("invParTrans(%v) not stationary", a)
		}
		for i := range x {
			if math.Abs(back[i]-x[i]) > 1e-12 {
				t.Errorf("round trip %v -> %v -> %v", x, a, back)
			}
		}
	}
	// AR(2) stationarity triangle: (1.0048, -0.2913) is stationary, (0.5, 0.6) is not.
	if !stationary([]float64{1.0048, -0.2913}, nil) || stationary([]float64{0.5, 0.6}, nil) {
		t.Error("stationarity test wrong on the AR(2) triangle")
	}
}

func TestSimulateARMA11Moments(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 6))
	phi, theta, sigma := 0.8, -0.3, 0.2
	n := 200000
	u := SimulateARMA11(rng, n, phi, theta, sigma)
	// ARMA(1,1) moments as in gaussNegLogLik (Box, Jenkins and Reinsel, from memory).
	g0 := sigma * sigma * (1 + 2*phi*theta + theta*theta) / (1 - phi*phi)
	rho1 := (1 + phi*theta) * (phi + theta) / (1 + 2*phi*theta + theta*theta)
	r := ACF(u, 2)
	var v float64
	for _, x := range u {
		v += x * x
	}
	v /= float64(n)
	if relErr(v, g0) > 0.03 {
		t.Errorf("variance %.5f, theory %.5f", v, g0)
	}
	if math.Abs(r[1]-rho1) > 0.01 || math.Abs(r[2]-phi*rho1) > 0.01 {
		t.Errorf("acf %.4f %.4f, theory %.4f %.4f", r[1], r[2], rho1, phi*rho1)
	}
	if SimulateARMA11(rng, 10, 1, 0, 1) != nil || SimulateARMA11(rng, -1, 0.5, 0, 1) != nil {
		t.Error("non-stationary phi or negative n: expected nil")
	}
	// The start is stationary: the first value has the stationary variance.
	var s0 float64
	for i := 0; i < 4000; i++ {
		x := SimulateARMA11(rng, 1, 0.95, 0, 1)[0]
		s0 += x * x
	}
	if relErr(s0/4000, 1/(1-0.95*0.95)) > 0.1 {
		t.Errorf("first-value variance %.3f, stationary %.3f", s0/4000, 1/(1-0.95*0.95))
	}
}

// BenchmarkARMAFit900: regression on (1, t) with ARMA(1,1) errors, 900 monthly values.
func BenchmarkARMAFit900(b *testing.B) {
	rng := rand.New(rand.NewPCG(9, 10))
	u := SimulateARMA11(rng, 900, 0.8, -0.3, 0.1)
	x := make([]float64, 900)
	y := make([]float64, 900)
	for i := range x {
		x[i] = float64(i)/12 - 37.5
		y[i] = 0.02*x[i] + u[i]
	}
	X, _ := Design(true, x)
	for i := 0; i < b.N; i++ {
		if _, err := ARMAFit(X, y, 1, 1); err != nil {
			b.Fatal(err)
		}
	}
}
