package linreg

import (
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// a11Case is a regression with ARMA(1,1) or AR(1) errors for the fast-path
// tests: columns of X (nil: no regressors) and y (NaN for gaps).
type a11Case struct {
	name string
	X    *mat.Dense
	y    []float64
	q    int
}

// a11Design returns the columns 1, t [, (t - tb)_+] on a monthly axis
// centred at 0 (as the window trend and the broken stick build them).
func a11Design(n, k int) *mat.Dense {
	X := mat.NewDense(n, k, nil)
	for i := 0; i < n; i++ {
		t := (float64(i) - float64(n-1)/2) / 12
		if k > 0 {
			X.Set(i, 0, 1)
		}
		if k > 1 {
			X.Set(i, 1, t)
		}
		if k > 2 {
			X.Set(i, 2, math.Max(0, t-2))
		}
	}
	return X
}

// a11Gaps sets runs of y to NaN: at the start, single values, a run in the
// middle and the end.
func a11Gaps(y []float64) {
	n := len(y)
	for _, i := range []int{0, 1, n / 7, n / 3, n/3 + 1, n/3 + 2, n/3 + 3, n / 2, n - 1} {
		y[i] = math.NaN()
	}
}

// a11Cases are simulated series (seeded) with well-determined interior
// optima, with and without gaps, with 0 to 3 regressors.
func a11Cases() []a11Case {
	var cs []a11Case
	for i, c := range []struct {
		n, k       int
		phi, theta float64
		gaps       bool
	}{
		{900, 2, 0.8, -0.3, false},
		{900, 2, 0.8, -0.3, true},
		{600, 2, 0.6, 0.4, true},
		{360, 3, 0.9, 0.2, false},
		{360, 3, 0.7, -0.4, true},
		{240, 1, 0.5, 0.5, true},
		{300, 0, 0.85, -0.5, true},
		{120, 2, 0.7, 0, false},
	} {
		rng := rand.New(rand.NewPCG(uint64(100+i), 7))
		u := SimulateARMA11(rng, c.n, c.phi, c.theta, 0.1)
		var Xm *mat.Dense
		y := make([]float64, c.n)
		copy(y, u)
		if c.k > 0 {
			Xm = a11Design(c.n, c.k)
			for r := range y {
				y[r] += 14.2
				if c.k > 1 {
					y[r] += 0.02 * Xm.At(r, 1)
				}
			}
		}
		if c.gaps {
			a11Gaps(y)
		}
		name := "sim" + string(rune('A'+i))
		cs = append(cs, a11Case{name + " ARMA(1,1)", Xm, y, 1}, a11Case{name + " AR(1)", Xm, y, 0})
	}
	return cs
}

// a11Cols returns the columns armaFit filters: y, then X.
func a11Cols(X *mat.Dense, y []float64) [][]float64 {
	cols := [][]float64{y}
	if X != nil {
		n, k := X.Dims()
		for j := 0; j < k; j++ {
			c := make([]float64, n)
			for i := range c {
				c[i] = X.At(i, j)
			}
			cols = append(cols, c)
		}
	}
	return cols
}

func a11Used(y []float64) int {
	used := 0
	for _, v := range y {
		if !math.IsNaN(v) {
			used++
		}
	}
	return used
}

// The scalar filter's profile likelihood and GLS coefficients equal the
// general Harvey-form Kalman filter's (armaModel.eval, itself checked
// against a dense Gaussian likelihood), with gaps and 0 to 3 regressors,
// over the whole parameter square.
func TestARMA11FilterMatchesGeneralFilter(t *testing.T) {
	pars := [][2]float64{{0.8, -0.3}, {0.6, 0.4}, {-0.5, 0.7}, {0.2, 0}, {0.95, -0.9}, {-0.9, -0.95}, {0.99, 0.5}, {0, 0}}
	for _, c := range a11Cases() {
		if c.q == 0 {
			continue
		}
		cols := a11Cols(c.X, c.y)
		k := len(cols) - 1
		f, ok := newARMA11(cols, a11Used(c.y), true)
		if !ok {
			t.Fatalf("%s: fast path refused the design", c.name)
		}
		m := &armaModel{p: 1, q: 1, k: k, cols: cols, n: len(c.y)}
		for _, p := range pars {
			got, ok := f.pass(p[0], p[1])
			ev := m.eval([]float64{p[0]}, []float64{p[1]}, false)
			if !ok || ev == nil {
				t.Fatalf("%s (%v): fast ok %v, general %v", c.name, p, ok, ev != nil)
			}
			if math.Abs(got-ev.negLogLik) > 1e-10*math.Abs(ev.negLogLik) {
				t.Errorf("%s phi %g theta %g: fast -logL %.14g, general %.14g", c.name, p[0], p[1], got, ev.negLogLik)
			}
			for i := 0; i < k; i++ {
				b := f.beta0[i]
				for j := i; j < k; j++ {
					b += f.rinv[i][j] * f.gamma[j]
				}
				if math.Abs(b-ev.beta[i]) > 1e-9*(1+math.Abs(ev.beta[i])) {
					t.Errorf("%s phi %g theta %g: beta[%d] fast %.12g, general %.12g", c.name, p[0], p[1], i, b, ev.beta[i])
				}
			}
		}
	}
	// Without regressors the pass is -log L at sigma2 = RSS/N: compare with
	// the dense Gaussian likelihood directly.
	rng := rand.New(rand.NewPCG(3, 9))
	u := SimulateARMA11(rng, 80, 0.7, 0.3, 1)
	u[0], u[20], u[21], u[79] = math.NaN(), math.NaN(), math.NaN(), math.NaN()
	f, _ := newARMA11([][]float64{u}, a11Used(u), true)
	for _, p := range pars {
		got, _ := f.pass(p[0], p[1])
		want := gaussNegLogLik(u, p[0], p[1], f.rss/float64(f.used))
		if math.Abs(got-want) > 1e-9*math.Abs(want) {
			t.Errorf("no regressors, phi %g theta %g: fast -logL %.12g, dense Gaussian %.12g", p[0], p[1], got, want)
		}
	}
}

// a11Agree compares a fast-path fit with the general path's.
func a11Agree(t *testing.T, name string, fast, gen *ARMAResult) {
	t.Helper()
	if fast.N != gen.N || fast.P != gen.P || fast.Q != gen.Q || len(fast.Warnings) != 0 || len(gen.Warnings) != 0 {
		t.Fatalf("%s: N %d/%d, order (%d,%d)/(%d,%d), warnings %q / %q", name, fast.N, gen.N, fast.P, fast.Q, gen.P, gen.Q, fast.Warnings, gen.Warnings)
	}
	// Both optimise the same likelihood to its rounding level (observed
	// differences about 1e-11); the fast path must not be worse.
	if fast.LogLik < gen.LogLik-1e-9 || math.Abs(fast.LogLik-gen.LogLik) > 1e-8 {
		t.Errorf("%s: loglik fast %.12g, general %.12g", name, fast.LogLik, gen.LogLik)
	}
	if relErr(fast.Sigma2, gen.Sigma2) > 1e-8 || math.Abs(fast.AIC-gen.AIC) > 2e-8 {
		t.Errorf("%s: sigma2 %.12g / %.12g, AIC %.12g / %.12g", name, fast.Sigma2, gen.Sigma2, fast.AIC, gen.AIC)
	}
	est := func(r *ARMAResult) []float64 { return append(append(append([]float64{}, r.AR...), r.MA...), r.Beta...) }
	se := func(r *ARMAResult) []float64 {
		return append(append(append([]float64{}, r.ARSE...), r.MASE...), r.BetaSE...)
	}
	fe, ge, fs, gs := est(fast), est(gen), se(fast), se(gen)
	if len(fe) != len(ge) || len(fs) != len(gs) {
		t.Fatalf("%s: %d / %d parameters", name, len(fe), len(ge))
	}
	for i := range fe {
		// Estimates within 1e-4 standard errors; standard errors (both from
		// central differences with step 1e-4 in phi, theta) within 2e-5
		// relative (observed: 1.3e-6 at most for both).
		if math.Abs(fe[i]-ge[i]) > 1e-4*gs[i] {
			t.Errorf("%s: parameter %d fast %.10g, general %.10g (%.2g SE)", name, i, fe[i], ge[i], math.Abs(fe[i]-ge[i])/gs[i])
		}
		if relErr(fs[i], gs[i]) > 2e-5 {
			t.Errorf("%s: SE %d fast %.8g, general %.8g (rel %.2g)", name, i, fs[i], gs[i], relErr(fs[i], gs[i]))
		}
		for j := range fe {
			// Correlations agree too.
			fc := fast.Cov.At(i, j) / (fs[i] * fs[j])
			gc := gen.Cov.At(i, j) / (gs[i] * gs[j])
			if math.Abs(fc-gc) > 1e-5 {
				t.Errorf("%s: correlation (%d,%d) fast %.8f, general %.8f", name, i, j, fc, gc)
			}
		}
	}
	scale := math.Sqrt(gen.Sigma2)
	for i := range gen.Residuals {
		if math.IsNaN(gen.Residuals[i]) != math.IsNaN(fast.Residuals[i]) || math.IsNaN(gen.Innovations[i]) != math.IsNaN(fast.Innovations[i]) {
			t.Fatalf("%s: missing pattern differs at %d", name, i)
		}
		if math.Abs(fast.Residuals[i]-gen.Residuals[i]) > 1e-5*scale || math.Abs(fast.Innovations[i]-gen.Innovations[i]) > 1e-5*scale {
			t.Errorf("%s: step %d residual %.8g / %.8g, innovation %.8g / %.8g", name, i, fast.Residuals[i], gen.Residuals[i], fast.Innovations[i], gen.Innovations[i])
			break
		}
	}
}

// The fast path (AR(1) and ARMA(1,1) with up to three regressors) and the
// general path (BFGS and Nelder-Mead over the Harvey-form likelihood, a
// numerical Hessian of the full log-likelihood) give the same fit on
// simulated series, with and without gaps, and on R's datasets.
func TestARMA11FastMatchesGeneral(t *testing.T) {
	cases := a11Cases()
	ref := loadRef(t)
	for _, name := range refNames {
		d := ref.Datasets[name]
		X, _ := Design(true, d.T)
		cases = append(cases, a11Case{name + " ARMA(1,1)", X, d.Y, 1}, a11Case{name + " AR(1)", X, d.Y, 0})
	}
	for _, c := range cases {
		fast, ok := fitARMA11(a11Cols(c.X, c.y), a11Used(c.y), c.q == 1)
		if !ok {
			t.Errorf("%s: the fast path declined", c.name)
			continue
		}
		var X mat.Matrix
		if c.X != nil {
			X = c.X
		}
		gen, err := armaFit(X, c.y, 1, c.q, false)
		if err != nil {
			t.Fatal(err)
		}
		via, err := ARMAFit(X, c.y, 1, c.q)
		if err != nil {
			t.Fatal(err)
		}
		if via.Evaluations != fast.Evaluations || via.LogLik != fast.LogLik {
			t.Errorf("%s: ARMAFit did not take the fast path", c.name)
		}
		a11Agree(t, c.name, fast, gen)
		t.Logf("%s: %d evaluations (general %d), loglik %.9f", c.name, fast.Evaluations, gen.Evaluations, fast.LogLik)
	}
}

// When the likelihood peaks on the invertibility boundary (an
// over-differenced series: MA root at -1), the fast path declines and
// ARMAFit returns the general path's fit with its boundary warning.
func TestARMA11DeclinesAtBoundary(t *testing.T) {
	rng := rand.New(rand.NewPCG(41, 42))
	n := 200
	e := make([]float64, n+1)
	for i := range e {
		e[i] = rng.NormFloat64()
	}
	y := make([]float64, n)
	x := make([]float64, n)
	for i := range y {
		x[i] = float64(i) / 12
		y[i] = 0.3*x[i] + e[i+1] - e[i]
	}
	X, _ := Design(true, x)
	if _, ok := fitARMA11(a11Cols(X, y), n, true); ok {
		t.Fatal("the fast path accepted an optimum on the invertibility boundary")
	}
	got, err := ARMAFit(X, y, 1, 1)
	if err != nil {
		t.Fatal(err)
	}
	gen, _ := armaFit(X, y, 1, 1, false)
	if got.LogLik != gen.LogLik || got.MA[0] != gen.MA[0] || len(got.Warnings) == 0 {
		t.Errorf("boundary case: ARMAFit loglik %v theta %v warnings %q; general %v %v", got.LogLik, got.MA[0], got.Warnings, gen.LogLik, gen.MA[0])
	}
	if !(got.MA[0] < -0.999) {
		t.Errorf("theta = %v: expected the MA root at -1", got.MA[0])
	}
}

// A rank-deficient design is refused by the general path's check, not
// fitted by the fast path.
func TestARMA11RankDeficient(t *testing.T) {
	n := 50
	X := mat.NewDense(n, 3, nil)
	y := make([]float64, n)
	for i := 0; i < n; i++ {
		X.Set(i, 0, 1)
		X.Set(i, 1, float64(i))
		X.Set(i, 2, 2+3*float64(i))
		y[i] = math.Sin(float64(i))
	}
	if _, err := ARMAFit(X, y, 1, 1); err == nil {
		t.Error("collinear design: expected an error")
	}
}

// BenchmarkARMAFit900General: the general path on BenchmarkARMAFit900's data.
func BenchmarkARMAFit900General(b *testing.B) {
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
		if _, err := armaFit(X, y, 1, 1, false); err != nil {
			b.Fatal(err)
		}
	}
}
