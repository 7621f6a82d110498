package linreg

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/optimize"
)

// ARMAResult is a regression with ARMA(p, q) errors fitted by exact Gaussian
// maximum likelihood:
//
//	y_t = x_t' beta + u_t,
//	u_t = phi_1 u_{t-1} + ... + phi_p u_{t-p} + e_t + theta_1 e_{t-1} + ... + theta_q e_{t-q},
//	e_t ~ N(0, sigma2) independent,
//
// with the sign convention of R's arima (a plus sign on the MA terms).
type ARMAResult struct {
	P, Q int
	AR   []float64 // phi_1 .. phi_p
	MA   []float64 // theta_1 .. theta_q
	Beta []float64 // regression coefficients, one per column of X

	// Standard errors from the inverse of the numerical Hessian of the
	// negative log-likelihood at the optimum (see ARMAFit).
	ARSE, MASE, BetaSE []float64
	// Cov is that inverse Hessian, parameters ordered AR, MA, Beta.
	Cov *mat.SymDense

	Sigma2 float64 // innovation variance (ML: sum of squared standardised innovations / N)
	LogLik float64 // exact Gaussian log-likelihood at the optimum
	AIC    float64 // -2 LogLik + 2 (p + q + k + 1), as R counts it (sigma2 included)
	N      int     // observations used (y not NaN)

	Residuals   []float64 // y - X beta (NaN where y is missing)
	Innovations []float64 // one-step prediction errors of the residual series (NaN where y is missing)

	Evaluations int      // likelihood evaluations spent
	Warnings    []string // e.g. optimum on the stationarity/invertibility boundary
}

// ARMAFit fits y = X beta + u with ARMA(p, q) errors u by exact Gaussian
// maximum likelihood: the model R fits with
// arima(y, order = c(p, 0, q), xreg = X, include.mean = FALSE, method = "ML")
// (put a column of ones in X for an intercept). X may be nil for a pure
// ARMA fit of y; y may hold NaN for missing values (the Kalman filter skips
// them; rows of X must still be finite).
//
// Likelihood: the stationary ARMA process is written in the state-space form
// of Harvey (1989, Forecasting, Structural Time Series Models and the Kalman
// Filter; the form R's arima uses) with state dimension
// r = max(p, q + 1); the state starts from its stationary covariance
// P0 = T P0 T' + R R' and the Kalman filter gives the innovations v_t and
// their variances sigma2 F_t, so that
//
//	-2 log L = N log(2 pi sigma2) + sum log F_t + sum v_t^2 / (sigma2 F_t).
//
// For fixed ARMA parameters the filter is linear, so y and every column of
// X are filtered once and beta is the generalised least-squares solution of
// the whitened data (by QR); sigma2 = sum v_t^2 / F_t / N. What remains, a
// function of the p + q ARMA parameters, is minimised with gonum/optimize
// (BFGS, central-difference gradients) over transformed parameters that keep
// the AR part stationary and the MA part invertible: partial
// autocorrelations tanh(x) mapped to coefficients by the Durbin-Levinson
// recursion (Jones 1980, Technometrics 22, 389; R's arima does the same for
// the AR part). Several starting points are tried (Yule-Walker and
// Hannan-Rissanen 1982 estimates and zero) and the best optimum kept.
//
// Standard errors: the negative log-likelihood, with sigma2 profiled out
// analytically, is differentiated twice numerically (central differences) in
// the natural parameters (phi, theta, beta) at the optimum; its inverse is
// Cov. Profiling sigma2 out leaves the inverse-Hessian block of the other
// parameters unchanged, so these are the standard errors of the full
// log-likelihood.
//
// AR(1) and ARMA(1,1) errors with at most three columns in X (the window
// trend, the broken stick) take a fast path (arma11.go) that maximises the
// same likelihood with a scalar form of the same Kalman filter and a Newton
// method, and computes the same inverse Hessian by block inversion; it
// agrees with the general path to about 1e-6 standard errors and hands the
// fit back to it whenever the optimum is on or near the boundary or
// otherwise in doubt.
func ARMAFit(X mat.Matrix, y []float64, p, q int) (*ARMAResult, error) {
	return armaFit(X, y, p, q, true)
}

// armaFit is ARMAFit; fast = false skips the AR(1)/ARMA(1,1) fast path of
// arma11.go (for tests that compare the two).
func armaFit(X mat.Matrix, y []float64, p, q int, fast bool) (*ARMAResult, error) {
	if p < 0 || q < 0 || p > 6 || q > 6 {
		return nil, fmt.Errorf("linreg: ARMA order (%d, %d): expected orders between 0 and 6", p, q)
	}
	n := len(y)
	k := 0
	if X != nil {
		var xr int
		xr, k = X.Dims()
		if xr != n {
			return nil, fmt.Errorf("linreg: the design has %d rows but y has %d values: expected one value per row", xr, n)
		}
	}
	cols := make([][]float64, k+1) // cols[0] = y, cols[1..k] = X columns
	cols[0] = append([]float64(nil), y...)
	for j := 0; j < k; j++ {
		c := make([]float64, n)
		for i := range c {
			c[i] = X.At(i, j)
			if math.IsNaN(c[i]) || math.IsInf(c[i], 0) {
				return nil, fmt.Errorf("linreg: design row %d column %d = %v: expected a finite value", i, j, c[i])
			}
		}
		cols[j+1] = c
	}
	used := 0
	for i, v := range y {
		if math.IsInf(v, 0) {
			return nil, fmt.Errorf("linreg: y[%d] is infinite: expected a finite value or NaN for missing", i)
		}
		if !math.IsNaN(v) {
			used++
		}
	}
	npar := p + q + k
	if used < npar+3 {
		return nil, fmt.Errorf("linreg: %d observations for an ARMA(%d,%d) regression with %d coefficients: expected at least %d", used, p, q, k, npar+3)
	}

	if fast && p == 1 && q <= 1 {
		if res, ok := fitARMA11(cols, used, q == 1); ok {
			return res, nil
		}
	}

	m := &armaModel{p: p, q: q, k: k, cols: cols, n: n}
	// Check that X has full column rank on the used rows.
	if k > 0 {
		Xu, yu := m.usedRows()
		if _, err := OLS(Xu, yu); err != nil {
			return nil, err
		}
	}

	// Optimise the concentrated likelihood over the transformed ARMA parameters.
	bestX, bestF := []float64(nil), math.Inf(1)
	if p+q == 0 {
		bestX = []float64{}
		bestF = m.concentrated(bestX)
	} else {
		for _, start := range m.starts() {
			x, f := m.optimise(start)
			if f < bestF {
				bestX, bestF = x, f
			}
		}
		if bestX != nil {
			bestX, bestF = m.polish(bestX, bestF)
		}
		if bestX == nil || math.IsInf(bestF, 0) || math.IsNaN(bestF) {
			return nil, fmt.Errorf("linreg: the ARMA(%d,%d) likelihood could not be evaluated: no finite value at any starting point", p, q)
		}
	}
	phi, theta := m.untransform(bestX)
	ev := m.eval(phi, theta, true)
	if ev == nil {
		return nil, fmt.Errorf("linreg: the ARMA(%d,%d) likelihood could not be evaluated at the optimum", p, q)
	}
	res := &ARMAResult{
		P: p, Q: q, AR: phi, MA: theta, Beta: ev.beta,
		Sigma2: ev.sigma2, N: used,
		LogLik:      -ev.negLogLik,
		Evaluations: m.evals,
	}
	res.AIC = -2*res.LogLik + 2*float64(npar+1)
	for _, xv := range bestX {
		if math.Abs(math.Tanh(xv)) > 0.9999 {
			res.Warnings = append(res.Warnings, fmt.Sprintf("the ARMA(%d,%d) optimum lies on the stationarity or invertibility boundary: standard errors are unreliable", p, q))
			break
		}
	}
	// Residuals and innovations.
	res.Residuals = make([]float64, n)
	for i := range res.Residuals {
		r := y[i]
		for j := 0; j < k; j++ {
			r -= cols[j+1][i] * ev.beta[j]
		}
		res.Residuals[i] = r
	}
	res.Innovations = m.innovations(phi, theta, res.Residuals)

	// Hessian in the natural ARMA parameters and in a whitened basis of
	// beta: beta = betaHat + L g with L L' the GLS covariance of beta at the
	// optimum (L = R^-1 of the whitened design). In g the Hessian is close
	// to the identity, so central differences stay accurate even when the
	// columns of X are nearly collinear (an intercept beside calendar years);
	// the covariance is mapped back exactly, Cov(beta) = L Cov(g) L'.
	theta0 := make([]float64, 0, npar)
	theta0 = append(theta0, phi...)
	theta0 = append(theta0, theta...)
	for j := 0; j < k; j++ {
		theta0 = append(theta0, 0)
	}
	steps := make([]float64, npar)
	for i := 0; i < p+q; i++ {
		steps[i] = 1e-4
	}
	for j := 0; j < k; j++ {
		steps[p+q+j] = 1e-2
	}
	m.betaHat, m.betaL = ev.beta, ev.betaL
	if npar == 0 {
		res.Cov = nil
		res.ARSE, res.MASE, res.BetaSE = []float64{}, []float64{}, []float64{}
		return res, nil
	}
	H, ok := m.hessian(theta0, steps)
	cov := mat.NewSymDense(npar, nil)
	se := make([]float64, npar)
	var chol mat.Cholesky
	if ok && chol.Factorize(H) {
		covg := mat.NewSymDense(npar, nil)
		if err := chol.InverseTo(covg); err == nil {
			// J maps (arma, g) to (arma, beta): identity on arma, L on g.
			J := mat.NewDense(npar, npar, nil)
			for i := 0; i < p+q; i++ {
				J.Set(i, i, 1)
			}
			for a := 0; a < k; a++ {
				for b := 0; b < k; b++ {
					J.Set(p+q+a, p+q+b, ev.betaL.At(a, b))
				}
			}
			var tmp, full mat.Dense
			tmp.Mul(J, covg)
			full.Mul(&tmp, J.T())
			for i := 0; i < npar; i++ {
				for j := i; j < npar; j++ {
					cov.SetSym(i, j, 0.5*(full.At(i, j)+full.At(j, i)))
				}
				se[i] = math.Sqrt(cov.At(i, i))
			}
		} else {
			ok = false
		}
	} else {
		ok = false
	}
	if !ok {
		for i := range se {
			se[i] = math.NaN()
		}
		res.Warnings = append(res.Warnings, "the log-likelihood's curvature is not positive definite at the optimum (a flat or boundary optimum): standard errors are not available")
	}
	res.Cov = cov
	res.ARSE = se[:p:p]
	res.MASE = se[p : p+q : p+q]
	res.BetaSE = se[p+q:]
	return res, nil
}

// armaModel holds the data of one ARMAFit call.
type armaModel struct {
	p, q, k int
	n       int
	cols    [][]float64 // y, then the X columns
	evals   int

	w [][]float64 // whitening buffers, one per column

	// Set before the Hessian: beta = betaHat + betaL g.
	betaHat []float64
	betaL   *mat.Dense
}

func (m *armaModel) usedRows() (*mat.Dense, []float64) {
	var rows []float64
	var yu []float64
	for i, v := range m.cols[0] {
		if math.IsNaN(v) {
			continue
		}
		yu = append(yu, v)
		for j := 0; j < m.k; j++ {
			rows = append(rows, m.cols[j+1][i])
		}
	}
	return mat.NewDense(len(yu), m.k, rows), yu
}

// parTrans maps unconstrained values to the coefficients of a stationary
// AR polynomial: partial autocorrelations tanh(x), then Durbin-Levinson.
func parTrans(x []float64) []float64 {
	p := len(x)
	a := make([]float64, p)
	tmp := make([]float64, p)
	for j := 0; j < p; j++ {
		pacf := math.Tanh(x[j])
		copy(tmp, a)
		a[j] = pacf
		for i := 0; i < j; i++ {
			a[i] = tmp[i] - pacf*tmp[j-i-1]
		}
	}
	return a
}

// invParTrans is the inverse of parTrans (reverse Durbin-Levinson). ok is
// false when the coefficients are not stationary.
func invParTrans(a []float64) ([]float64, bool) {
	p := len(a)
	cur := append([]float64(nil), a...)
	x := make([]float64, p)
	for j := p - 1; j >= 0; j-- {
		pacf := cur[j]
		if !(math.Abs(pacf) < 1) {
			return nil, false
		}
		x[j] = math.Atanh(pacf)
		den := 1 - pacf*pacf
		prev := make([]float64, j)
		for i := 0; i < j; i++ {
			prev[i] = (cur[i] + pacf*cur[j-i-1]) / den
		}
		cur = prev
	}
	return x, true
}

// untransform maps the optimiser's vector to (phi, theta).
func (m *armaModel) untransform(x []float64) (phi, theta []float64) {
	phi = parTrans(x[:m.p])
	a := parTrans(x[m.p : m.p+m.q])
	theta = make([]float64, m.q)
	for i := range a {
		theta[i] = -a[i]
	}
	return phi, theta
}

// transform maps (phi, theta) to the optimiser's vector, clipping partial
// autocorrelations to +-0.95 (used for starting values only).
func (m *armaModel) transform(phi, theta []float64) []float64 {
	x := make([]float64, 0, m.p+m.q)
	clip := func(a []float64) []float64 {
		if v, ok := invParTrans(a); ok {
			for i := range v {
				v[i] = math.Max(-1.83, math.Min(1.83, v[i])) // tanh(1.83) ~ 0.95
			}
			return v
		}
		return make([]float64, len(a))
	}
	x = append(x, clip(phi)...)
	ma := make([]float64, len(theta))
	for i := range theta {
		ma[i] = -theta[i]
	}
	x = append(x, clip(ma)...)
	return x
}

// stationary reports whether phi is a stationary and theta an invertible polynomial.
func stationary(phi, theta []float64) bool {
	if _, ok := invParTrans(phi); !ok {
		return false
	}
	ma := make([]float64, len(theta))
	for i := range theta {
		ma[i] = -theta[i]
	}
	_, ok := invParTrans(ma)
	return ok
}

// ssm is the Harvey state-space form of a stationary ARMA(p, q) process
// with unit innovation variance.
type ssm struct {
	r   int
	phi []float64 // length r (zero padded)
	rv  []float64 // R = (1, theta_1, ..., theta_{r-1})
	p0  []float64 // stationary state covariance, r x r row-major
}

func newSSM(phi, theta []float64) (*ssm, bool) {
	r := max(len(phi), len(theta)+1)
	s := &ssm{r: r, phi: make([]float64, r), rv: make([]float64, r)}
	copy(s.phi, phi)
	s.rv[0] = 1
	copy(s.rv[1:], theta)
	// Solve vec(P) = (T (x) T) vec(P) + vec(R R').
	r2 := r * r
	A := mat.NewDense(r2, r2, nil)
	b := mat.NewVecDense(r2, nil)
	tAt := func(i, j int) float64 {
		v := 0.0
		if j == 0 {
			v = s.phi[i]
		}
		if j == i+1 {
			v += 1
		}
		return v
	}
	for i := 0; i < r; i++ {
		for j := 0; j < r; j++ {
			row := i*r + j
			b.SetVec(row, s.rv[i]*s.rv[j])
			for a := 0; a < r; a++ {
				tia := tAt(i, a)
				if tia == 0 {
					continue
				}
				for c := 0; c < r; c++ {
					tjc := tAt(j, c)
					if tjc == 0 {
						continue
					}
					A.Set(row, a*r+c, A.At(row, a*r+c)-tia*tjc)
				}
			}
			A.Set(row, row, A.At(row, row)+1)
		}
	}
	var x mat.VecDense
	if err := x.SolveVec(A, b); err != nil {
		return nil, false
	}
	s.p0 = make([]float64, r2)
	for i := range s.p0 {
		s.p0[i] = x.AtVec(i)
		if math.IsNaN(s.p0[i]) {
			return nil, false
		}
	}
	return s, s.p0[0] > 0
}

// filter runs the Kalman filter over the given columns (shared gains; NaN in
// cols[0] marks a missing step for all columns) and returns the
// standardised innovations w[c][t] = v_t / sqrt(F_t) (0 at missing steps),
// sum log F_t and the number of used steps.
func (s *ssm) filter(cols [][]float64, w [][]float64) (sumLog float64, used int) {
	r := s.r
	nc := len(cols)
	n := len(cols[0])
	P := append([]float64(nil), s.p0...)
	Pf := make([]float64, r*r)
	TP := make([]float64, r*r)
	Pn := make([]float64, r*r)
	a := make([][]float64, nc)
	for c := range a {
		a[c] = make([]float64, r)
	}
	K := make([]float64, r)
	steady := false
	var F, isf, logF float64
	for t := 0; t < n; t++ {
		miss := math.IsNaN(cols[0][t])
		if miss {
			steady = false
		}
		if !steady {
			F = P[0]
			isf = 1 / math.Sqrt(F)
			logF = math.Log(F)
			for i := 0; i < r; i++ {
				K[i] = P[i*r] / F
			}
		}
		if !miss {
			for c := 0; c < nc; c++ {
				ac := a[c]
				v := cols[c][t] - ac[0]
				w[c][t] = v * isf
				for i := 0; i < r; i++ {
					ac[i] += K[i] * v
				}
			}
			sumLog += logF
			used++
		} else {
			for c := 0; c < nc; c++ {
				w[c][t] = 0
			}
		}
		// Predict the states: a <- T a, (T a)_i = phi_i a_0 + a_{i+1}.
		for c := 0; c < nc; c++ {
			ac := a[c]
			a0 := ac[0]
			for i := 0; i < r-1; i++ {
				ac[i] = s.phi[i]*a0 + ac[i+1]
			}
			ac[r-1] = s.phi[r-1] * a0
		}
		if steady {
			continue
		}
		change := s.predictCov(P, Pf, TP, Pn, miss)
		P, Pn = Pn, P
		if !miss && change < 1e-15*math.Max(1, P[0]) {
			// Converged: the next step's F and K equal this one's to
			// rounding; keep them fixed from here.
			steady = true
			F = P[0]
			isf = 1 / math.Sqrt(F)
			logF = math.Log(F)
			for i := 0; i < r; i++ {
				K[i] = P[i*r] / F
			}
		}
	}
	return sumLog, used
}

type armaEval struct {
	negLogLik float64
	beta      []float64
	betaL     *mat.Dense // sigma R^-1: GLS covariance of beta is betaL betaL'
	sigma2    float64
}

// eval computes the likelihood concentrated over beta (GLS) and sigma2.
func (m *armaModel) eval(phi, theta []float64, wantSE bool) *armaEval {
	m.evals++
	s, ok := newSSM(phi, theta)
	if !ok {
		return nil
	}
	if m.w == nil {
		m.w = make([][]float64, len(m.cols))
		for c := range m.w {
			m.w[c] = make([]float64, m.n)
		}
	}
	w := m.w
	sumLog, used := s.filter(m.cols, w)
	ev := &armaEval{}
	var rss float64
	if m.k > 0 {
		// GLS: least squares of the whitened y on the whitened X (in place).
		beta, r, rs, ok := householderLS(w[1:], w[0])
		if !ok {
			return nil
		}
		ev.beta, rss = beta, rs
		if wantSE {
			// L = sigma R^-1 (upper triangular): Cov(beta) = L L'.
			sig := math.Sqrt(rss / float64(used))
			ev.betaL = mat.NewDense(m.k, m.k, nil)
			rinv := invUpper(r)
			for i := 0; i < m.k; i++ {
				for j := i; j < m.k; j++ {
					ev.betaL.Set(i, j, sig*rinv[i][j])
				}
			}
		}
	} else {
		for _, v := range w[0] {
			rss += v * v
		}
	}
	ev.sigma2 = rss / float64(used)
	if !(ev.sigma2 > 0) {
		return nil
	}
	ev.negLogLik = 0.5 * (float64(used)*(math.Log(2*math.Pi*ev.sigma2)+1) + sumLog)
	if math.IsNaN(ev.negLogLik) || math.IsInf(ev.negLogLik, 0) {
		return nil
	}
	return ev
}

// householderLS solves min ||y - X b|| for the columns X (modified in
// place, as is y) by Householder QR (Golub and Van Loan, Matrix
// Computations, ch. 5). It returns b, the
// k x k upper triangle R and the residual sum of squares; ok is false when
// X is numerically rank deficient.
func householderLS(X [][]float64, y []float64) (b []float64, r [][]float64, rss float64, ok bool) {
	k := len(X)
	n := len(y)
	if n <= k {
		return nil, nil, 0, false
	}
	r = make([][]float64, k)
	var maxDiag float64
	for j := 0; j < k; j++ {
		x := X[j]
		var ss float64
		for i := j; i < n; i++ {
			ss += x[i] * x[i]
		}
		norm := math.Sqrt(ss)
		if norm == 0 {
			return nil, nil, 0, false
		}
		alpha := -math.Copysign(norm, x[j])
		// v = x[j:] - alpha e1, stored in x[j:]; H = I - 2 v v'/(v'v).
		x[j] -= alpha
		var vv float64
		for i := j; i < n; i++ {
			vv += x[i] * x[i]
		}
		apply := func(c []float64) {
			var d float64
			for i := j; i < n; i++ {
				d += x[i] * c[i]
			}
			f := 2 * d / vv
			for i := j; i < n; i++ {
				c[i] -= f * x[i]
			}
		}
		r[j] = make([]float64, k)
		r[j][j] = alpha
		for c := j + 1; c < k; c++ {
			apply(X[c])
			r[j][c] = X[c][j]
		}
		apply(y)
		maxDiag = math.Max(maxDiag, math.Abs(alpha))
	}
	for j := 0; j < k; j++ {
		if math.Abs(r[j][j]) <= float64(n)*1e-14*maxDiag {
			return nil, nil, 0, false
		}
	}
	b = make([]float64, k)
	for j := k - 1; j >= 0; j-- {
		v := y[j]
		for c := j + 1; c < k; c++ {
			v -= r[j][c] * b[c]
		}
		b[j] = v / r[j][j]
	}
	for i := k; i < n; i++ {
		rss += y[i] * y[i]
	}
	return b, r, rss, true
}

// invUpper inverts an upper-triangular matrix by back substitution.
func invUpper(r [][]float64) [][]float64 {
	k := len(r)
	inv := make([][]float64, k)
	for i := range inv {
		inv[i] = make([]float64, k)
	}
	for c := 0; c < k; c++ {
		inv[c][c] = 1 / r[c][c]
		for i := c - 1; i >= 0; i-- {
			var v float64
			for j := i + 1; j <= c; j++ {
				v += r[i][j] * inv[j][c]
			}
			inv[i][c] = -v / r[i][i]
		}
	}
	return inv
}

// concentrated is the optimiser's objective: -log L / N over transformed parameters.
func (m *armaModel) concentrated(x []float64) float64 {
	phi, theta := m.untransform(x)
	ev := m.eval(phi, theta, false)
	if ev == nil {
		return math.Inf(1)
	}
	return ev.negLogLik / float64(m.n)
}

// fullNegLogLik is -log L at (phi, theta, g) with sigma2 profiled out and
// beta = betaHat + betaL g (betaL nil: g is beta itself).
func (m *armaModel) fullNegLogLik(par []float64) float64 {
	phi := par[:m.p]
	theta := par[m.p : m.p+m.q]
	beta := par[m.p+m.q:]
	if m.betaL != nil {
		g := beta
		beta = make([]float64, m.k)
		for a := 0; a < m.k; a++ {
			v := m.betaHat[a]
			for b := 0; b < m.k; b++ {
				v += m.betaL.At(a, b) * g[b]
			}
			beta[a] = v
		}
	}
	if !stationary(phi, theta) {
		return math.NaN()
	}
	m.evals++
	s, ok := newSSM(phi, theta)
	if !ok {
		return math.NaN()
	}
	u := make([]float64, m.n)
	for t := range u {
		v := m.cols[0][t]
		for j := 0; j < m.k; j++ {
			v -= m.cols[j+1][t] * beta[j]
		}
		u[t] = v
	}
	w := [][]float64{make([]float64, m.n)}
	sumLog, used := s.filter([][]float64{u}, w)
	var rss float64
	for _, v := range w[0] {
		rss += v * v
	}
	s2 := rss / float64(used)
	return 0.5 * (float64(used)*(math.Log(2*math.Pi*s2)+1) + sumLog)
}

// innovations returns the one-step prediction errors v_t of u (NaN where missing).
func (m *armaModel) innovations(phi, theta, u []float64) []float64 {
	s, ok := newSSM(phi, theta)
	out := make([]float64, len(u))
	if !ok {
		for i := range out {
			out[i] = math.NaN()
		}
		return out
	}
	// Run the filter on u; w holds v/sqrt(F): recover v by rerunning F.
	w := [][]float64{make([]float64, len(u))}
	s.filter([][]float64{u}, w)
	// F_t -> 1 quickly for invertible models; report v_t = w_t sqrt(F_t)
	// by recomputing F_t with a second pass on the covariance only.
	F := s.innovationVariances(len(u), u)
	for i := range out {
		if math.IsNaN(u[i]) {
			out[i] = math.NaN()
		} else {
			out[i] = w[0][i] * math.Sqrt(F[i])
		}
	}
	return out
}

// innovationVariances returns F_t (unit innovation variance) for each step.
func (s *ssm) innovationVariances(n int, y []float64) []float64 {
	r := s.r
	P := append([]float64(nil), s.p0...)
	Pf := make([]float64, r*r)
	TP := make([]float64, r*r)
	Pn := make([]float64, r*r)
	F := make([]float64, n)
	for t := 0; t < n; t++ {
		F[t] = P[0]
		s.predictCov(P, Pf, TP, Pn, math.IsNaN(y[t]))
		P, Pn = Pn, P
	}
	return F
}

// predictCov is the covariance half of one Kalman step for the state space
// form of the ARMA errors (F = P[0] the unit innovation variance): the
// filtered covariance Pf = P - P e1 e1' P / F (P itself at a missing step),
// then the prediction Pn = T Pf T' + R R' with (T a)_i = phi_i a_0 + a_{i+1}.
// Pf and TP are scratch. It returns the largest change |Pn - P|, by which
// the filter sees that it has reached its steady state.
func (s *ssm) predictCov(P, Pf, TP, Pn []float64, miss bool) (change float64) {
	r := s.r
	if !miss {
		F := P[0]
		for i := 0; i < r; i++ {
			for j := 0; j < r; j++ {
				Pf[i*r+j] = P[i*r+j] - P[i*r]*P[j]/F
			}
		}
	} else {
		copy(Pf, P)
	}
	for i := 0; i < r; i++ {
		for j := 0; j < r; j++ {
			v := s.phi[i] * Pf[j]
			if i+1 < r {
				v += Pf[(i+1)*r+j]
			}
			TP[i*r+j] = v
		}
	}
	for i := 0; i < r; i++ {
		for j := 0; j < r; j++ {
			v := s.phi[j] * TP[i*r]
			if j+1 < r {
				v += TP[i*r+j+1]
			}
			v += s.rv[i] * s.rv[j]
			Pn[i*r+j] = v
			change = math.Max(change, math.Abs(v-P[i*r+j]))
		}
	}
	return change
}

// starts returns starting points (transformed) for the optimiser.
func (m *armaModel) starts() [][]float64 {
	var out [][]float64
	// Residuals of the OLS fit on the used rows, in time order with NaN kept.
	u := append([]float64(nil), m.cols[0]...)
	if m.k > 0 {
		Xu, yu := m.usedRows()
		if f, err := OLS(Xu, yu); err == nil {
			for t := range u {
				if math.IsNaN(u[t]) {
					continue
				}
				for j := 0; j < m.k; j++ {
					u[t] -= m.cols[j+1][t] * f.Coef[j]
				}
			}
		}
	}
	var present []float64
	for _, v := range u {
		if !math.IsNaN(v) {
			present = append(present, v)
		}
	}
	zero := make([]float64, m.p+m.q)
	// Yule-Walker AR(p) with zero MA.
	if phi, ok := yuleWalker(present, m.p); ok {
		out = append(out, m.transform(phi, make([]float64, m.q)))
	}
	// Hannan-Rissanen (1982): long AR for the innovations, then regress
	// u_t on u_{t-1..p} and e_{t-1..q}.
	if m.q > 0 {
		if phi, theta, ok := hannanRissanen(present, m.p, m.q); ok {
			out = append(out, m.transform(phi, theta))
		}
	}
	out = append(out, zero)
	return out
}

func yuleWalker(u []float64, p int) ([]float64, bool) {
	if p == 0 {
		return nil, true
	}
	if len(u) <= p+1 {
		return nil, false
	}
	r := ACF(u, p)
	for _, v := range r {
		if math.IsNaN(v) {
			return nil, false
		}
	}
	// Durbin-Levinson on the autocorrelations.
	phi := make([]float64, p)
	tmp := make([]float64, p)
	v := 1.0
	for k := 1; k <= p; k++ {
		num := r[k]
		for j := 1; j < k; j++ {
			num -= phi[j-1] * r[k-j]
		}
		pk := num / v
		if !(math.Abs(pk) < 1) {
			return nil, false
		}
		copy(tmp, phi)
		phi[k-1] = pk
		for j := 1; j < k; j++ {
			phi[j-1] = tmp[j-1] - pk*tmp[k-j-1]
		}
		v *= 1 - pk*pk
	}
	return phi, true
}

func hannanRissanen(u []float64, p, q int) (phi, theta []float64, ok bool) {
	n := len(u)
	m := int(math.Min(math.Max(float64(p+q)+5, math.Round(math.Sqrt(float64(n)))), float64(n/4)))
	if m < 1 || n-m-max(p, q) < p+q+5 {
		return nil, nil, false
	}
	a, ok := yuleWalker(u, m)
	if !ok {
		return nil, nil, false
	}
	e := make([]float64, n)
	for t := m; t < n; t++ {
		v := u[t]
		for j := 1; j <= m; j++ {
			v -= a[j-1] * u[t-j]
		}
		e[t] = v
	}
	start := m + max(p, q)
	rows := n - start
	X := mat.NewDense(rows, p+q, nil)
	yv := make([]float64, rows)
	for t := start; t < n; t++ {
		for j := 1; j <= p; j++ {
			X.Set(t-start, j-1, u[t-j])
		}
		for j := 1; j <= q; j++ {
			X.Set(t-start, p+j-1, e[t-j])
		}
		yv[t-start] = u[t]
	}
	f, err := OLS(X, yv)
	if err != nil {
		return nil, nil, false
	}
	return f.Coef[:p], f.Coef[p:], true
}

// optimise minimises the concentrated objective from one start.
func (m *armaModel) optimise(start []float64) ([]float64, float64) {
	f0 := m.concentrated(start)
	if math.IsInf(f0, 0) || math.IsNaN(f0) {
		return nil, math.Inf(1)
	}
	prob := optimize.Problem{
		Func: m.concentrated,
		Grad: func(grad, x []float64) {
			xx := append([]float64(nil), x...)
			for i := range x {
				h := 1e-5
				xx[i] = x[i] + h
				fp := m.concentrated(xx)
				xx[i] = x[i] - h
				fm := m.concentrated(xx)
				xx[i] = x[i]
				g := (fp - fm) / (2 * h)
				if math.IsNaN(g) || math.IsInf(g, 0) {
					g = 0
				}
				grad[i] = g
			}
		},
	}
	settings := &optimize.Settings{
		GradientThreshold: 1e-9,
		Converger:         &optimize.FunctionConverge{Absolute: 1e-13, Relative: 1e-13, Iterations: 30},
		MajorIterations:   400,
	}
	res, err := optimize.Minimize(prob, start, settings, &optimize.BFGS{})
	bx, bf := start, f0
	if res != nil && !math.IsNaN(res.F) && res.F < bf {
		bx, bf = res.X, res.F
	}
	_ = err
	return append([]float64(nil), bx...), bf
}

// polish restarts from the best BFGS point with Nelder-Mead (guards
// against a line search that stopped early on a flat ridge).
func (m *armaModel) polish(bx []float64, bf float64) ([]float64, float64) {
	nm, err := optimize.Minimize(optimize.Problem{Func: m.concentrated}, bx,
		&optimize.Settings{Converger: &optimize.FunctionConverge{Absolute: 1e-14, Relative: 1e-14, Iterations: 60}, FuncEvaluations: 2000},
		&optimize.NelderMead{InitialVertices: nil, SimplexSize: 0.05})
	_ = err
	if nm != nil && !math.IsNaN(nm.F) && nm.F < bf {
		bx, bf = nm.X, nm.F
	}
	return append([]float64(nil), bx...), bf
}

// hessian is the central-difference Hessian of fullNegLogLik at x with the
// given steps (shrunk when a step would leave the stationary region).
func (m *armaModel) hessian(x, h []float64) (*mat.SymDense, bool) {
	d := len(x)
	f := func(v []float64) float64 { return m.fullNegLogLik(v) }
	f0 := f(x)
	if math.IsNaN(f0) {
		return nil, false
	}
	// Shrink ARMA steps until all +-h points are valid.
	for i := 0; i < m.p+m.q; i++ {
		for tries := 0; tries < 30; tries++ {
			xp := append([]float64(nil), x...)
			xm := append([]float64(nil), x...)
			xp[i] += 2 * h[i]
			xm[i] -= 2 * h[i]
			if !math.IsNaN(f(xp)) && !math.IsNaN(f(xm)) {
				break
			}
			h[i] /= 2
		}
	}
	H := mat.NewSymDense(d, nil)
	xx := append([]float64(nil), x...)
	at := func(i, j int, si, sj float64) float64 {
		copy(xx, x)
		xx[i] += si * h[i]
		xx[j] += sj * h[j]
		return f(xx)
	}
	for i := 0; i < d; i++ {
		fp := at(i, i, 1, 0)
		fm := at(i, i, -1, 0)
		H.SetSym(i, i, (fp-2*f0+fm)/(h[i]*h[i]))
		for j := i + 1; j < d; j++ {
			v := (at(i, j, 1, 1) - at(i, j, 1, -1) - at(i, j, -1, 1) + at(i, j, -1, -1)) / (4 * h[i] * h[j])
			H.SetSym(i, j, v)
		}
	}
	for i := 0; i < d; i++ {
		for j := i; j < d; j++ {
			if v := H.At(i, j); math.IsNaN(v) || math.IsInf(v, 0) {
				return nil, false
			}
		}
	}
	return H, true
}
