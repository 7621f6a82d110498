package linreg

import (
	"math"
	"sort"

	"gonum.org/v1/gonum/mat"
)

// Fast path of ARMAFit for regressions with AR(1) or ARMA(1,1) errors and at
// most three regressors (the window trend, the broken stick). It fits the
// same model by the same criterion as the general path (exact Gaussian
// likelihood, beta by GLS and sigma2 profiled out, standard errors from the
// curvature of the full log-likelihood) but exploits the structure:
//
//   - The Harvey state-space form of ARMA(1,1) (state u_t, theta e_t) keeps
//     the predicted state covariance in the form [[p, theta], [theta,
//     theta^2]] at every step, observed or missing, so the Kalman filter
//     reduces to one scalar recursion for the innovation variance factor
//     p_t = F_t and one scalar prediction a_t per filtered column:
//     observed: v = c_t - a, a <- phi c_t + (theta / p) v,
//     p <- 1 + theta^2 - theta^2 / p;
//     missing: a <- phi a, p <- phi^2 p + 2 phi theta + 1 + theta^2;
//     starting from a = 0, p = (1 + 2 phi theta + theta^2) / (1 - phi^2)
//     (the stationary variance of u; without gaps this is the innovations
//     recursion for ARMA(1,1) of Brockwell and Davis, Introduction to Time
//     Series and Forecasting, sec. 5.2, from memory; the tests check it
//     against the general filter and a dense Gaussian likelihood). AR(1) is
//     theta = 0.
//   - X is replaced once by an orthonormal basis Q of its columns on the used
//     rows (X = Q R, modified Gram-Schmidt with reorthogonalisation) and y by
//     its OLS residuals, so the whitened cross-products Q~'Q~ and Q~'u~ are
//     well conditioned and small: GLS by a k x k Cholesky of the cross
//     products accumulated in the same pass loses nothing to cancellation.
//     One pass over the data gives the profile likelihood, with no
//     allocation.
//   - The 1- or 2-dimensional profile -log L(phi, theta) is minimised by a
//     safeguarded Newton method (finite-difference gradient and Hessian,
//     eigenvalue-modified, Armijo backtracking), about 40 likelihood passes
//     in all for ARMA(1,1) where the general path spends 300 to 600: first
//     over phi = tanh(x1), theta = tanh(x2) from the best of the
//     method-of-moments, Yule-Walker AR(1) and zero starting points; then
//     probes where ARMA(1,1) likelihoods have other local optima (along the
//     common-factor ridge phi + theta = const through the optimum, and near
//     theta = +-1), each probe that beats the optimum starting another run
//     (a run that comes close to an optimum already found is stopped);
//     finally Newton on the natural scale from the best optimum, whose last
//     central-difference stencil serves the standard errors.
//   - Standard errors: with A the (phi, theta) block, C = Q~'Q~ / sigma2 the
//     beta block (in the Q basis) of the Hessian of the full -log L (sigma2
//     profiled, as R's arima), and B the cross block, block inversion gives
//     Cov(arma) = S^-1 with S = A - B' C^-1 B the Hessian of the profile
//     -log L(phi, theta) (beta and sigma2 profiled out), Cov(arma, gamma) =
//     S^-1 D' and Cov(gamma) = C^-1 + D S^-1 D', where D = d gammaHat /
//     d(phi, theta) = -C^-1 B (implicit function theorem on the GLS
//     estimate). S and D come from central differences (step 1e-4 in phi
//     and theta, as the general path) of the profile and of the GLS
//     estimate; C is exact. This is the inverse of the full Hessian that the
//     general path differentiates numerically, organised so that only the
//     ARMA parameters are differenced.
//
// Whenever the fast path cannot vouch for its answer (rank-deficient X, a
// Newton path that fails or heads for the stationarity or invertibility
// boundary with a competitive likelihood, an optimum within 5e-4 of that
// boundary, a curvature that is not positive definite) it declines and
// ARMAFit runs the general path.

const (
	a11MaxK      = 3      // regressors handled by the fast path
	a11Boundary  = 0.9995 // |phi| or |theta| beyond this: leave it to the general path
	a11NewtonH   = 1e-4   // finite-difference step of the first Newton stage (tanh scale)
	a11SEH       = 1e-4   // finite-difference step of the second stage and the standard errors (natural scale), as the general path
	a11MergeDist = 0.1    // a Newton path this close (tanh scale, max norm) to an optimum already found leads to it
)

// arma11 holds the data of one fast-path fit.
type arma11 struct {
	n, k, nc int // steps, regressors, filtered columns (k + 1)
	ma       bool
	used     int
	z        []float64 // rows of nc: centred y (NaN where missing), then Q (0 where missing)
	beta0    []float64 // OLS coefficients: y = X beta0 + u
	rinv     [a11MaxK][a11MaxK]float64
	evals    int

	// Results of the last pass.
	gamma  [a11MaxK]float64 // GLS coefficients of u on Q
	rss    float64
	sumLog float64
	cqq    [a11MaxK][a11MaxK]float64 // Cholesky factor of the whitened Q'Q (lower)
}

// newARMA11 prepares the fast path; ok is false when X has more than three
// columns or is (nearly) rank deficient on the used rows.
func newARMA11(cols [][]float64, used int, ma bool) (*arma11, bool) {
	k := len(cols) - 1
	if k > a11MaxK {
		return nil, false
	}
	y := cols[0]
	n := len(y)
	nc := k + 1
	f := &arma11{n: n, k: k, nc: nc, ma: ma, used: used}
	// z holds the columns interleaved by row; while Q and u are built,
	// missing rows hold 0 in every column (they drop out of the sums).
	z := make([]float64, n*nc)
	var orig [a11MaxK]float64
	for t, v := range y {
		if math.IsNaN(v) {
			continue
		}
		row := z[t*nc : t*nc+nc]
		row[0] = v
		for j := 0; j < k; j++ {
			x := cols[j+1][t]
			row[1+j] = x
			orig[j] += x * x
		}
	}
	// Modified Gram-Schmidt on the X columns, twice (enough for
	// orthogonality to working precision: Giraud et al. 2005, Numer. Math.
	// 101, 87), then u = y - Q Q'y the same way.
	var r [a11MaxK][a11MaxK]float64
	var qty [a11MaxK]float64
	for j := 0; j <= k; j++ {
		c := j + 1 // column of z being orthogonalised; j == k: y
		if j == k {
			c = 0
		}
		for pass := 0; pass < 2; pass++ {
			for i := 0; i < j; i++ {
				var d float64
				for t := 0; t < n; t++ {
					d += z[t*nc+1+i] * z[t*nc+c]
				}
				if j < k {
					r[i][j] += d
				} else {
					qty[i] += d
				}
				for t := 0; t < n; t++ {
					z[t*nc+c] -= d * z[t*nc+1+i]
				}
			}
		}
		if j == k {
			break
		}
		var ss float64
		for t := 0; t < n; t++ {
			ss += z[t*nc+c] * z[t*nc+c]
		}
		nrm := math.Sqrt(ss)
		if !(nrm > 1e-9*math.Sqrt(orig[j])) {
			return nil, false
		}
		r[j][j] = nrm
		for t := 0; t < n; t++ {
			z[t*nc+c] /= nrm
		}
	}
	for t, v := range y {
		if math.IsNaN(v) {
			z[t*nc] = math.NaN()
		}
	}
	f.z = z
	for j := 0; j < k; j++ {
		f.rinv[j][j] = 1 / r[j][j]
		for i := j - 1; i >= 0; i-- {
			var s float64
			for l := i + 1; l <= j; l++ {
				s += r[i][l] * f.rinv[l][j]
			}
			f.rinv[i][j] = -s / r[i][i]
		}
	}
	f.beta0 = make([]float64, k)
	for i := 0; i < k; i++ {
		for j := i; j < k; j++ {
			f.beta0[i] += f.rinv[i][j] * qty[j]
		}
	}
	return f, true
}

// pass filters u and the Q columns with the ARMA(1,1) (phi, theta) filter,
// solves the GLS problem from the accumulated cross-products and returns
// the profile -log L (beta and sigma2 concentrated out). ok is false when
// the parameters are not stationary and invertible or the solve fails.
func (f *arma11) pass(phi, theta float64) (float64, bool) {
	f.evals++
	if !(math.Abs(phi) < 1) || !(math.Abs(theta) < 1) {
		return math.Inf(1), false
	}
	var m [a11MaxK + 1][a11MaxK + 1]float64 // lower triangle of W'W
	var sumLog float64
	switch f.nc {
	case 3:
		sumLog = f.filter3(phi, theta, &m)
	default:
		sumLog = f.filterN(phi, theta, &m)
	}
	k := f.k
	// Cholesky of the whitened Q'Q (lower), then gamma.
	var l [a11MaxK][a11MaxK]float64
	for j := 0; j < k; j++ {
		d := m[j+1][j+1]
		for c := 0; c < j; c++ {
			d -= l[j][c] * l[j][c]
		}
		if !(d > 0) {
			return math.Inf(1), false
		}
		l[j][j] = math.Sqrt(d)
		for i := j + 1; i < k; i++ {
			s := m[i+1][j+1]
			for c := 0; c < j; c++ {
				s -= l[i][c] * l[j][c]
			}
			l[i][j] = s / l[j][j]
		}
	}
	var z [a11MaxK]float64
	var expl float64
	for i := 0; i < k; i++ {
		s := m[i+1][0]
		for c := 0; c < i; c++ {
			s -= l[i][c] * z[c]
		}
		z[i] = s / l[i][i]
		expl += z[i] * z[i]
	}
	for i := k - 1; i >= 0; i-- {
		s := z[i]
		for c := i + 1; c < k; c++ {
			s -= l[c][i] * f.gamma[c]
		}
		f.gamma[i] = s / l[i][i]
	}
	rss := m[0][0] - expl
	if !(rss > 0) {
		return math.Inf(1), false
	}
	f.rss, f.sumLog, f.cqq = rss, sumLog, l
	nu := float64(f.used)
	v := 0.5 * (nu*(math.Log(2*math.Pi*rss/nu)+1) + sumLog)
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return math.Inf(1), false
	}
	return v, true
}

// The filter runs in two regimes, each in a call-free kernel (so that the
// compiler keeps the state in registers). While p_t changes (the first
// steps, and after each missing value) the transient kernel updates p by
// its recursion, scales the products by 1/p_t (w_c w_d = v_c v_d / p_t)
// and multiplies the p_t into a running product whose log is added to
// sum log F_t when the kernel returns (before it could overflow). Once
// |p_{t+1} - p_t| <= 1e-15 p_t (the general filter's test) F, the gain and
// log F stay fixed until the next missing value, and the steady kernel
// filters the run of observed steps: v = c - a, a <- (phi + k) c - k a
// (the same update, with a shorter dependency chain), accumulating the raw
// products v_c v_d, scaled by 1/p at the end of the run.

// a11State is the filter state for up to a11MaxK + 1 columns.
type a11State struct {
	a    [a11MaxK + 1]float64
	m    [a11MaxK + 1][a11MaxK + 1]float64 // lower triangle of W'W
	p    float64
	prod float64 // product of p_t not yet logged
}

// filterN is the filter for any number of columns (up to a11MaxK + 1).
func (f *arma11) filterN(phi, theta float64, m *[a11MaxK + 1][a11MaxK + 1]float64) float64 {
	nc := f.nc
	var s a11State
	th2 := theta * theta
	s.p = (1 + 2*phi*theta + th2) / (1 - phi*phi)
	s.prod = 1
	var sumLog float64
	z := f.z
	n := f.n
	for t := 0; t < n; {
		if math.IsNaN(z[t*nc]) {
			for c := 0; c < nc; c++ {
				s.a[c] *= phi
			}
			s.p = phi*phi*s.p + 2*phi*theta + 1 + th2
			t++
			continue
		}
		var steady bool
		t, steady = transientN(z, nc, t, phi, theta, &s)
		sumLog += math.Log(s.prod)
		s.prod = 1
		if steady {
			var mm [a11MaxK + 1][a11MaxK + 1]float64
			t0 := t
			t = steadyN(z, nc, t, phi, theta/s.p, &s.a, &mm)
			if cnt := t - t0; cnt > 0 {
				ip := 1 / s.p
				for c := 0; c < nc; c++ {
					for d := 0; d <= c; d++ {
						s.m[c][d] += mm[c][d] * ip
					}
				}
				sumLog += float64(cnt) * math.Log(s.p)
			}
		}
	}
	*m = s.m
	return sumLog
}

// transientN filters observed steps from t while p changes; it stops at a
// missing value, the end, once p has converged (steady) or before the
// product of the p_t could overflow.
func transientN(z []float64, nc, t int, phi, theta float64, s *a11State) (int, bool) {
	n := len(z) / nc
	th2 := theta * theta
	var w [a11MaxK + 1]float64
	for ; t < n; t++ {
		row := z[t*nc : t*nc+nc]
		if row[0] != row[0] || s.prod > 1e250 {
			return t, false
		}
		ip := 1 / s.p
		kk := theta * ip
		for c := 0; c < nc; c++ {
			x := row[c]
			v := x - s.a[c]
			w[c] = v
			s.a[c] = phi*x + kk*v
		}
		for c := 0; c < nc; c++ {
			wc := w[c] * ip
			for d := 0; d <= c; d++ {
				s.m[c][d] += wc * w[d]
			}
		}
		s.prod *= s.p
		pn := 1 + th2 - th2*ip
		steady := math.Abs(pn-s.p) <= 1e-15*s.p
		s.p = pn
		if steady {
			return t + 1, true
		}
	}
	return t, false
}

// steadyN filters observed steps from t with fixed gain kk until a missing
// value or the end; it returns where it stopped.
func steadyN(z []float64, nc, t int, phi, kk float64, a *[a11MaxK + 1]float64, mm *[a11MaxK + 1][a11MaxK + 1]float64) int {
	var v [a11MaxK + 1]float64
	n := len(z) / nc
	c1 := phi + kk
	for ; t < n; t++ {
		row := z[t*nc : t*nc+nc]
		if row[0] != row[0] {
			break
		}
		for c := 0; c < nc; c++ {
			x := row[c]
			v[c] = x - a[c]
			a[c] = c1*x - kk*a[c]
		}
		for c := 0; c < nc; c++ {
			for d := 0; d <= c; d++ {
				mm[c][d] += v[c] * v[d]
			}
		}
	}
	return t
}

// filter3 is filterN for y and two regressors (the window trend), with
// both kernels unrolled.
func (f *arma11) filter3(phi, theta float64, m *[a11MaxK + 1][a11MaxK + 1]float64) float64 {
	var s steady3State
	th2 := theta * theta
	p := (1 + 2*phi*theta + th2) / (1 - phi*phi)
	var sumLog float64
	z := f.z
	n := f.n
	for t := 0; t < n; {
		if z[3*t] != z[3*t] { // missing
			s.a0 *= phi
			s.a1 *= phi
			s.a2 *= phi
			p = phi*phi*p + 2*phi*theta + 1 + th2
			t++
			continue
		}
		var steady bool
		var prod float64
		t, p, prod, steady = transient3(z, t, phi, theta, p, &s)
		sumLog += math.Log(prod)
		if steady {
			t0 := t
			var r steady3State
			r.a0, r.a1, r.a2 = s.a0, s.a1, s.a2
			t = steady3(z, t, phi, theta/p, &r)
			s.a0, s.a1, s.a2 = r.a0, r.a1, r.a2
			if cnt := t - t0; cnt > 0 {
				ip := 1 / p
				s.m00 += r.m00 * ip
				s.m10 += r.m10 * ip
				s.m11 += r.m11 * ip
				s.m20 += r.m20 * ip
				s.m21 += r.m21 * ip
				s.m22 += r.m22 * ip
				sumLog += float64(cnt) * math.Log(p)
			}
		}
	}
	m[0][0], m[1][0], m[1][1], m[2][0], m[2][1], m[2][2] = s.m00, s.m10, s.m11, s.m20, s.m21, s.m22
	return sumLog
}

type steady3State struct {
	a0, a1, a2                   float64
	m00, m10, m11, m20, m21, m22 float64
}

// transient3 is transientN for three columns; it returns where it stopped,
// the new p, the product of the p_t used and whether p has converged.
func transient3(z []float64, t int, phi, theta, p float64, s *steady3State) (int, float64, float64, bool) {
	a0, a1, a2 := s.a0, s.a1, s.a2
	m00, m10, m11, m20, m21, m22 := s.m00, s.m10, s.m11, s.m20, s.m21, s.m22
	th2 := theta * theta
	prod := 1.0
	steady := false
	for ; 3*t+2 < len(z); t++ {
		x0, x1, x2 := z[3*t], z[3*t+1], z[3*t+2]
		if x0 != x0 || prod > 1e250 {
			break
		}
		ip := 1 / p
		kk := theta * ip
		v0, v1, v2 := x0-a0, x1-a1, x2-a2
		a0 = phi*x0 + kk*v0
		a1 = phi*x1 + kk*v1
		a2 = phi*x2 + kk*v2
		s0, s1, s2 := v0*ip, v1*ip, v2*ip
		m00 += v0 * s0
		m10 += v1 * s0
		m11 += v1 * s1
		m20 += v2 * s0
		m21 += v2 * s1
		m22 += v2 * s2
		prod *= p
		pn := 1 + th2 - th2*ip
		steady = math.Abs(pn-p) <= 1e-15*p
		p = pn
		if steady {
			t++
			break
		}
	}
	s.a0, s.a1, s.a2 = a0, a1, a2
	s.m00, s.m10, s.m11, s.m20, s.m21, s.m22 = m00, m10, m11, m20, m21, m22
	return t, p, prod, steady
}

// steady3 is steadyN for three columns (the accumulators start from zero).
func steady3(z []float64, t int, phi, kk float64, s *steady3State) int {
	a0, a1, a2 := s.a0, s.a1, s.a2
	var m00, m10, m11, m20, m21, m22 float64
	c := phi + kk
	for ; 3*t+2 < len(z); t++ {
		x0, x1, x2 := z[3*t], z[3*t+1], z[3*t+2]
		if x0 != x0 {
			break
		}
		v0, v1, v2 := x0-a0, x1-a1, x2-a2
		a0 = c*x0 - kk*a0
		a1 = c*x1 - kk*a1
		a2 = c*x2 - kk*a2
		m00 += v0 * v0
		m10 += v1 * v0
		m11 += v1 * v1
		m20 += v2 * v0
		m21 += v2 * v1
		m22 += v2 * v2
	}
	s.a0, s.a1, s.a2 = a0, a1, a2
	s.m00, s.m10, s.m11, s.m20, s.m21, s.m22 = m00, m10, m11, m20, m21, m22
	return t
}

// arma11Innovations returns the one-step prediction errors v_t of u under
// ARMA(1,1) (phi, theta) with unit innovation variance (NaN where u is NaN).
func arma11Innovations(phi, theta float64, u []float64) []float64 {
	out := make([]float64, len(u))
	th2 := theta * theta
	p := (1 + 2*phi*theta + th2) / (1 - phi*phi)
	var a float64
	for t, x := range u {
		if math.IsNaN(x) {
			out[t] = math.NaN()
			a *= phi
			p = phi*phi*p + 2*phi*theta + 1 + th2
			continue
		}
		v := x - a
		out[t] = v
		a = phi*x + theta/p*v
		p = 1 + th2 - th2/p
	}
	return out
}

// par maps the optimiser's vector to (phi, theta).
func (f *arma11) par(x [2]float64) (float64, float64) {
	if f.ma {
		return math.Tanh(x[0]), math.Tanh(x[1])
	}
	return math.Tanh(x[0]), 0
}

func (f *arma11) obj(x [2]float64) float64 {
	phi, theta := f.par(x)
	v, _ := f.pass(phi, theta)
	return v
}

func (f *arma11) dim() int {
	if f.ma {
		return 2
	}
	return 1
}

// stencil returns the finite-difference gradient and Hessian of fn at x
// (f0 = fn(x)) with step h: central differences for the gradient and the
// diagonal; for the cross term the four-point central formula when full,
// else the forward formula (f(+h,+h) - f(+h,0) - f(0,+h) + f0) / h^2, one
// evaluation instead of four, accurate enough to steer Newton's method. When
// rec is not nil it records the GLS coefficients at the axis points
// (rec[i][0] at +h, rec[i][1] at -h).
func (f *arma11) stencil(fn func([2]float64) float64, x [2]float64, f0, h float64, full bool, rec *[2][2][a11MaxK]float64) (g [2]float64, H [2][2]float64) {
	d := f.dim()
	var fp, fm [2]float64
	for i := 0; i < d; i++ {
		xp, xm := x, x
		xp[i] += h
		xm[i] -= h
		fp[i] = fn(xp)
		if rec != nil {
			rec[i][0] = f.gamma
		}
		fm[i] = fn(xm)
		if rec != nil {
			rec[i][1] = f.gamma
		}
		g[i] = (fp[i] - fm[i]) / (2 * h)
		H[i][i] = (fp[i] - 2*f0 + fm[i]) / (h * h)
	}
	if d == 2 {
		at := func(s0, s1 float64) float64 {
			return fn([2]float64{x[0] + s0*h, x[1] + s1*h})
		}
		if full {
			H[0][1] = (at(1, 1) - at(1, -1) - at(-1, 1) + at(-1, -1)) / (4 * h * h)
		} else {
			H[0][1] = (at(1, 1) - fp[0] - fp[1] + f0) / (h * h)
		}
		H[1][0] = H[0][1]
	}
	return g, H
}

// newtonDir returns the modified Newton direction -H~^-1 g, with H~ the
// Hessian with its eigenvalues replaced by max(|lambda|, floor), and
// whether H itself was positive definite.
func newtonDir(d int, g [2]float64, H [2][2]float64) ([2]float64, bool) {
	if d == 1 {
		h := H[0][0]
		pd := h > 0
		h = math.Max(math.Abs(h), 1e-8*(1+math.Abs(h)))
		return [2]float64{-g[0] / h}, pd
	}
	a, b, c := H[0][0], H[0][1], H[1][1]
	tr, det := a+c, a*c-b*b
	disc := math.Sqrt(math.Max(0, 0.25*(a-c)*(a-c)+b*b))
	l1, l2 := 0.5*tr+disc, 0.5*tr-disc // l1 >= l2
	pd := l2 > 0 && det > 0
	// Eigenvectors: for l1, (b, l1 - a) or (l1 - c, b).
	var v1 [2]float64
	if math.Abs(l1-a) > math.Abs(l1-c) {
		v1 = [2]float64{b, l1 - a}
	} else {
		v1 = [2]float64{l1 - c, b}
	}
	nv := math.Hypot(v1[0], v1[1])
	if nv == 0 {
		v1 = [2]float64{1, 0}
	} else {
		v1[0] /= nv
		v1[1] /= nv
	}
	v2 := [2]float64{-v1[1], v1[0]}
	floor := 1e-8 * (1 + math.Max(math.Abs(l1), math.Abs(l2)))
	m1 := math.Max(math.Abs(l1), floor)
	m2 := math.Max(math.Abs(l2), floor)
	g1 := v1[0]*g[0] + v1[1]*g[1]
	g2 := v2[0]*g[0] + v2[1]*g[1]
	return [2]float64{-(g1/m1)*v1[0] - (g2/m2)*v2[0], -(g1/m1)*v1[1] - (g2/m2)*v2[1]}, pd
}

// Outcomes of a Newton run.
const (
	a11Failed    = iota // no convergence, or values that are not finite
	a11Converged        // Newton decrement below the tolerance
	a11ToBorder         // left |phi|, |theta| <= a11Boundary (tanh scale only)
	a11Merged           // came within a11MergeDist of an optimum in near
)

// newton minimises fn from x (fx = fn(x)) by the safeguarded Newton
// method: natural is false on the tanh scale (cheap cross term; the run
// stops at the boundary region or near an optimum in near), true on the
// natural scale (full stencil; rec receives the GLS coefficients of its
// last stencil). It stops when the Hessian is positive definite and the
// Newton decrement g' H^-1 g is below tol (sqrt of it is the distance to the
// optimum in standard errors); with stepOnExit it first takes that last
// step (when a second stage follows). It returns the last point, its value,
// the stencil's Hessian there and the outcome.
func (f *arma11) newton(fn func([2]float64) float64, x [2]float64, fx float64, natural bool, tol float64, stepOnExit bool, rec *[2][2][a11MaxK]float64, near [][2]float64) ([2]float64, float64, [2][2]float64, int) {
	d := f.dim()
	h, lim, maxIt := a11NewtonH, 1.0, 60 // lim: longest step (tanh scale)
	if natural {
		h, lim, maxIt = a11SEH, 0.5, 20
	}
	for it := 0; it < maxIt; it++ {
		if !natural {
			for _, p := range near {
				if math.Max(math.Abs(x[0]-p[0]), math.Abs(x[1]-p[1])) < a11MergeDist {
					return x, fx, [2][2]float64{}, a11Merged
				}
			}
			if phi, theta := f.par(x); math.Abs(phi) > a11Boundary || math.Abs(theta) > a11Boundary {
				return x, fx, [2][2]float64{}, a11ToBorder
			}
		}
		g, H := f.stencil(fn, x, fx, h, natural, rec)
		for i := 0; i < d; i++ {
			if math.IsNaN(g[i]) || math.IsInf(g[i], 0) {
				return x, fx, H, a11Failed
			}
			for j := 0; j < d; j++ {
				if math.IsNaN(H[i][j]) || math.IsInf(H[i][j], 0) {
					return x, fx, H, a11Failed
				}
			}
		}
		dir, pd := newtonDir(d, g, H)
		dec := -(g[0]*dir[0] + g[1]*dir[1]) // g' H~^-1 g >= 0
		converged := pd && dec < tol
		if converged && !stepOnExit {
			return x, fx, H, a11Converged
		}
		if l := math.Hypot(dir[0], dir[1]); l > lim {
			dir[0] *= lim / l
			dir[1] *= lim / l
		}
		slope := g[0]*dir[0] + g[1]*dir[1]
		step := 1.0
		moved := false
		for ls := 0; ls < 40; ls++ {
			xn := [2]float64{x[0] + step*dir[0], x[1] + step*dir[1]}
			if fnew := fn(xn); fnew <= fx+1e-4*step*slope {
				x, fx, moved = xn, fnew, true
				break
			}
			step /= 2
		}
		switch {
		case converged:
			return x, fx, H, a11Converged
		case !moved && pd && dec < 1e3*tol:
			// No decrease along the Newton direction: the gradient is
			// finite-difference noise; converged to rounding.
			return x, fx, H, a11Converged
		case !moved:
			return x, fx, H, a11Failed
		}
	}
	return x, fx, [2][2]float64{}, a11Failed
}

// starts returns starting points (transformed) for the Newton runs: the
// method-of-moments ARMA(1,1) (ARMA(1,1) only), Yule-Walker AR(1) (phi =
// r1, theta = 0) and zero, from the lag-1 and lag-2 autocorrelations of
// the OLS residuals (as R's acf, over the values present).
func (f *arma11) starts() [][2]float64 {
	nc := f.nc
	var s0, cnt float64
	for t := 0; t < f.n; t++ {
		if v := f.z[t*nc]; !math.IsNaN(v) {
			s0 += v
			cnt++
		}
	}
	mean := s0 / cnt
	var c0, c1, c2, d1, d2 float64 // d1, d2: the two previous present values (demeaned)
	seen := 0
	for t := 0; t < f.n; t++ {
		v := f.z[t*nc]
		if math.IsNaN(v) {
			continue
		}
		e := v - mean
		c0 += e * e
		if seen >= 1 {
			c1 += e * d1
		}
		if seen >= 2 {
			c2 += e * d2
		}
		d2, d1 = d1, e
		seen++
	}
	clip := func(v float64) float64 { return math.Atanh(math.Max(-0.95, math.Min(0.95, v))) }
	var out [][2]float64
	if c0 > 0 {
		r1, r2 := c1/c0, c2/c0
		if f.ma {
			if phi, theta, ok := moments11(r1, r2); ok {
				out = append(out, [2]float64{clip(phi), clip(theta)})
			}
		}
		out = append(out, [2]float64{clip(r1), 0})
	}
	return append(out, [2]float64{0, 0})
}

// moments11 solves the ARMA(1,1) autocorrelations rho1 = (1 + phi theta)
// (phi + theta) / (1 + 2 phi theta + theta^2), rho2 = phi rho1 (the
// formulas of gaussNegLogLik's test, Box, Jenkins and Reinsel) for phi =
// rho2 / rho1 and the invertible theta; ok is false when rho1 is near zero
// or phi is not stationary.
func moments11(r1, r2 float64) (phi, theta float64, ok bool) {
	if !(math.Abs(r1) > 1e-3) {
		return 0, 0, false
	}
	phi = r2 / r1
	if !(math.Abs(phi) < 0.99) {
		return 0, 0, false
	}
	// theta^2 (r1 - phi) + theta (2 phi r1 - 1 - phi^2) + (r1 - phi) = 0;
	// the roots multiply to 1: take the one of modulus <= 1.
	a := r1 - phi
	b := 2*phi*r1 - 1 - phi*phi
	if math.Abs(a) < 1e-12 {
		return phi, 0, true
	}
	disc := b*b - 4*a*a
	if disc < 0 { // |rho1| too large for this phi: the closest, theta = +-1
		return phi, math.Copysign(1, -b/a), true
	}
	q := -0.5 * (b + math.Copysign(math.Sqrt(disc), b))
	return phi, a / q, true
}

// fitARMA11 runs the fast path; ok is false when it declines (see above).
func fitARMA11(cols [][]float64, used int, ma bool) (*ARMAResult, bool) {
	f, ok := newARMA11(cols, used, ma)
	if !ok {
		return nil, false
	}
	// Stage 1 on the tanh scale from the best of the starting points (the
	// next best when a run heads for the boundary), until the Newton
	// decrement is below 1e-6.
	type cand struct {
		x [2]float64
		f float64
	}
	var cs []cand
	for _, s := range f.starts() {
		if v := f.obj(s); !math.IsInf(v, 0) {
			cs = append(cs, cand{s, v})
		}
	}
	sort.Slice(cs, func(i, j int) bool { return cs[i].f < cs[j].f })
	bestX, bestF := [2]float64{}, math.Inf(1)
	borderF := math.Inf(1)
	var found [][2]float64
	run := func(c cand) bool {
		x, fx, _, st := f.newton(f.obj, c.x, c.f, false, 1e-6, true, nil, found)
		switch st {
		case a11Failed:
			return false
		case a11ToBorder:
			borderF = math.Min(borderF, fx)
		case a11Converged:
			found = append(found, x)
			if fx < bestF {
				bestX, bestF = x, fx
			}
		}
		return true
	}
	for _, c := range cs {
		if !run(c) {
			return nil, false
		}
		if len(found) > 0 {
			break
		}
	}
	if len(found) == 0 {
		return nil, false
	}
	// Probes for other local optima, where ARMA(1,1) likelihoods have
	// them: along the common-factor ridge through the optimum (phi + theta
	// fixed: near-white noise is nearly the same model for any phi = -theta)
	// and near the invertibility boundary theta = +-1; for AR(1), across
	// phi. A probe better than the best optimum so far starts another
	// Newton run.
	var probes [][2]float64
	if f.ma {
		phi, theta := f.par(bestX)
		for _, p := range []float64{-0.6, 0, 0.6} {
			probes = append(probes, [2]float64{p, math.Max(-0.97, math.Min(0.97, phi+theta-p))})
		}
		for _, p := range []float64{-0.85, -0.5, 0.5, 0.85} {
			probes = append(probes, [2]float64{p, -0.97}, [2]float64{p, 0.97})
		}
	} else {
		for _, p := range []float64{-0.9, -0.5, 0, 0.5, 0.9} {
			probes = append(probes, [2]float64{p, 0})
		}
	}
	for _, pp := range probes {
		pr := [2]float64{math.Atanh(pp[0]), math.Atanh(pp[1])}
		near := false
		for _, p := range found {
			near = near || math.Max(math.Abs(pr[0]-p[0]), math.Abs(pr[1]-p[1])) < 3*a11MergeDist
		}
		if near {
			continue
		}
		if v := f.obj(pr); v < bestF && !run(cand{pr, v}) {
			return nil, false
		}
	}
	// A path heading for the boundary with a competitive likelihood: the
	// optimum may lie on it; the general path reports that case.
	if len(found) == 0 || borderF < bestF+0.5 {
		return nil, false
	}
	phi, theta := f.par(bestX)
	if math.Abs(phi) > a11Boundary || math.Abs(theta) > a11Boundary {
		return nil, false
	}
	// Stage 2 on the natural scale with the full stencil: its last Hessian,
	// at the optimum, is S below.
	nat := func(v [2]float64) float64 {
		r, _ := f.pass(v[0], v[1])
		return r
	}
	var rec [2][2][a11MaxK]float64
	x0, nll, S, st := f.newton(nat, [2]float64{phi, theta}, bestF, true, 1e-9, false, &rec, nil)
	if st != a11Converged {
		return nil, false
	}
	phi, theta = x0[0], x0[1]
	if math.Abs(phi) > a11Boundary || math.Abs(theta) > a11Boundary {
		return nil, false
	}
	if _, ok := f.pass(phi, theta); !ok {
		return nil, false
	}
	gamma, rss, l := f.gamma, f.rss, f.cqq
	d, k := f.dim(), f.k
	// S^-1 (1 x 1 or 2 x 2).
	var Si [2][2]float64
	if d == 1 {
		if !(S[0][0] > 0) {
			return nil, false
		}
		Si[0][0] = 1 / S[0][0]
	} else {
		det := S[0][0]*S[1][1] - S[0][1]*S[1][0]
		if !(S[0][0] > 0) || !(det > 0) {
			return nil, false
		}
		Si = [2][2]float64{{S[1][1] / det, -S[0][1] / det}, {-S[1][0] / det, S[0][0] / det}}
	}
	// D[j][i] = d gamma_j / d par_i.
	var D [a11MaxK][2]float64
	for i := 0; i < d; i++ {
		for j := 0; j < k; j++ {
			D[j][i] = (rec[i][0][j] - rec[i][1][j]) / (2 * a11SEH)
		}
	}
	sigma2 := rss / float64(used)
	// C^-1 = sigma2 (L L')^-1 in the Q basis.
	var li [a11MaxK][a11MaxK]float64 // L^-1 (lower)
	for j := 0; j < k; j++ {
		li[j][j] = 1 / l[j][j]
		for i := j + 1; i < k; i++ {
			var s float64
			for c := j; c < i; c++ {
				s += l[i][c] * li[c][j]
			}
			li[i][j] = -s / l[i][i]
		}
	}
	npar := d + k
	// Covariance in (arma, gamma), then mapped to (arma, beta).
	cg := make([][]float64, npar)
	for i := range cg {
		cg[i] = make([]float64, npar)
	}
	for a := 0; a < d; a++ {
		for b := 0; b < d; b++ {
			cg[a][b] = Si[a][b]
		}
	}
	for j := 0; j < k; j++ {
		for a := 0; a < d; a++ {
			var s float64 // (S^-1 D')[a][j]
			for b := 0; b < d; b++ {
				s += Si[a][b] * D[j][b]
			}
			cg[a][d+j] = s
			cg[d+j][a] = s
		}
		for j2 := 0; j2 < k; j2++ {
			var ci float64 // sigma2 (L^-T L^-1)[j][j2]
			for c := max(j, j2); c < k; c++ {
				ci += li[c][j] * li[c][j2]
			}
			var dsd float64
			for a := 0; a < d; a++ {
				for b := 0; b < d; b++ {
					dsd += D[j][a] * Si[a][b] * D[j2][b]
				}
			}
			cg[d+j][d+j2] = sigma2*ci + dsd
		}
	}
	// J = diag(I, R^-1): Cov = J cg J'.
	jm := func(i, c int) float64 {
		if i < d || c < d {
			if i == c {
				return 1
			}
			return 0
		}
		return f.rinv[i-d][c-d]
	}
	cov := mat.NewSymDense(npar, nil)
	se := make([]float64, npar)
	for i := 0; i < npar; i++ {
		for j := i; j < npar; j++ {
			var s float64
			for a := 0; a < npar; a++ {
				ja := jm(i, a)
				if ja == 0 {
					continue
				}
				for b := 0; b < npar; b++ {
					if jb := jm(j, b); jb != 0 {
						s += ja * cg[a][b] * jb
					}
				}
			}
			cov.SetSym(i, j, s)
		}
		v := cov.At(i, i)
		if !(v > 0) {
			return nil, false
		}
		se[i] = math.Sqrt(v)
	}
	beta := make([]float64, k)
	for i := 0; i < k; i++ {
		beta[i] = f.beta0[i]
		for j := i; j < k; j++ {
			beta[i] += f.rinv[i][j] * gamma[j]
		}
	}
	y := cols[0]
	resid := make([]float64, f.n)
	for t, v := range y {
		r := v
		for j := 0; j < k; j++ {
			r -= cols[j+1][t] * beta[j]
		}
		resid[t] = r
	}
	res := &ARMAResult{
		P: 1, AR: []float64{phi}, Beta: beta,
		Sigma2: sigma2, LogLik: -nll, N: used,
		Cov: cov, ARSE: se[:1:1], BetaSE: se[d:],
		Residuals:   resid,
		Innovations: arma11Innovations(phi, theta, resid),
		Evaluations: f.evals,
	}
	if ma {
		res.Q, res.MA, res.MASE = 1, []float64{theta}, se[1:2:2]
	} else {
		res.MA, res.MASE = []float64{}, []float64{}
	}
	res.AIC = -2*res.LogLik + 2*float64(npar+1)
	return res, true
}
