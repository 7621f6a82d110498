// Package linreg holds Heatledger's least-squares machinery: ordinary least
// squares by QR decomposition, the residual autocorrelation function as R's
// acf computes it, and regression with ARMA(p, q) errors by exact Gaussian
// maximum likelihood (Kalman filter, generalised least squares).
//
// It imports only the standard library and gonum, so it builds natively and
// as GOOS=js GOARCH=wasm.
package linreg

import (
	"errors"
	"fmt"
	"math"

	"gonum.org/v1/gonum/mat"
)

// Fit is an ordinary least-squares fit y = X b + e.
type Fit struct {
	N, P       int           // observations and coefficients
	Coef       []float64     // b, one per column of X
	StdErr     []float64     // sqrt of the diagonal of Cov
	Cov        *mat.SymDense // s^2 (X'X)^-1, s^2 = RSS / (N - P)
	XtXInv     *mat.SymDense // (X'X)^-1, for noise models that rescale s^2
	Residuals  []float64     // y - X b
	Fitted     []float64     // X b
	RSS        float64       // sum of squared residuals
	DOF        int           // N - P
	ResidualSD float64       // s = sqrt(RSS / (N - P))
	Cond       float64       // 2-norm condition number of X (largest / smallest singular value)
}

// OLS fits y = X b + e by least squares.
//
// Method: Householder QR of X (gonum mat.QR, LAPACK dgeqrf), b = R^-1 Q'y,
// never the normal equations, so the accuracy is governed by cond(X), not
// cond(X)^2; one step of iterative refinement on the residual follows
// (Golub and Van Loan, Matrix Computations, ch. 5). The
// covariance is s^2 (X'X)^-1 = s^2 R^-1 R^-T with s^2 = RSS / (N - P).
//
// X must have more rows than columns, full column rank and finite entries;
// y must be finite (drop missing rows before calling). Errors name the row
// or column at fault.
func OLS(X mat.Matrix, y []float64) (*Fit, error) {
	if X == nil {
		return nil, errors.New("linreg: no design matrix")
	}
	n, p := X.Dims()
	if len(y) != n {
		return nil, fmt.Errorf("linreg: the design has %d rows but y has %d values: expected one value per row", n, len(y))
	}
	if p == 0 {
		return nil, errors.New("linreg: the design has no columns")
	}
	if n <= p {
		return nil, fmt.Errorf("linreg: %d observations for %d coefficients: expected more observations than coefficients", n, p)
	}
	for i := 0; i < n; i++ {
		if math.IsNaN(y[i]) || math.IsInf(y[i], 0) {
			return nil, fmt.Errorf("linreg: y[%d] = %v: expected a finite value (drop missing rows first)", i, y[i])
		}
		for j := 0; j < p; j++ {
			if v := X.At(i, j); math.IsNaN(v) || math.IsInf(v, 0) {
				return nil, fmt.Errorf("linreg: design row %d column %d = %v: expected a finite value", i, j, v)
			}
		}
	}
	var qr mat.QR
	qr.Factorize(X)
	var r mat.Dense
	qr.RTo(&r)
	var rmax float64
	for j := 0; j < p; j++ {
		rmax = math.Max(rmax, math.Abs(r.At(j, j)))
	}
	for j := 0; j < p; j++ {
		if rmax == 0 || math.Abs(r.At(j, j)) <= float64(n)*1e-14*rmax {
			return nil, fmt.Errorf("linreg: design column %d is (numerically) a linear combination of the columns before it: expected full column rank", j)
		}
	}
	yv := mat.NewVecDense(n, append([]float64(nil), y...))
	var b mat.VecDense
	if err := qr.SolveVecTo(&b, false, yv); err != nil {
		var c mat.Condition
		if !errors.As(err, &c) {
			return nil, fmt.Errorf("linreg: least-squares solve failed: %v", err)
		}
	}
	coef := make([]float64, p)
	for j := range coef {
		coef[j] = b.AtVec(j)
	}
	res := residualsOf(X, y, coef)
	// One step of iterative refinement: solve for the correction from the
	// current residual (the least-squares correction of X d = e).
	var d mat.VecDense
	if err := qr.SolveVecTo(&d, false, mat.NewVecDense(n, append([]float64(nil), res...))); err == nil {
		cand := make([]float64, p)
		for j := range cand {
			cand[j] = coef[j] + d.AtVec(j)
		}
		cres := residualsOf(X, y, cand)
		if sumSq(cres) <= sumSq(res) {
			coef, res = cand, cres
		}
	}
	rss := sumSq(res)
	dof := n - p
	s2 := rss / float64(dof)

	// (X'X)^-1 = R^-1 R^-T from the p x p upper triangle.
	rt := mat.NewTriDense(p, mat.Upper, nil)
	for i := 0; i < p; i++ {
		for j := i; j < p; j++ {
			rt.SetTri(i, j, r.At(i, j))
		}
	}
	var rinv mat.TriDense
	if err := rinv.InverseTri(rt); err != nil {
		var c mat.Condition
		if !errors.As(err, &c) {
			return nil, fmt.Errorf("linreg: inverting R failed: %v", err)
		}
	}
	xtxinv := mat.NewSymDense(p, nil)
	xtxinv.SymOuterK(1, &rinv)
	cov := mat.NewSymDense(p, nil)
	cov.ScaleSym(s2, xtxinv)
	se := make([]float64, p)
	for j := range se {
		se[j] = math.Sqrt(cov.At(j, j))
	}
	fitted := make([]float64, n)
	for i := range fitted {
		fitted[i] = y[i] - res[i]
	}
	cond := Cond2(X)
	return &Fit{
		N: n, P: p, Coef: coef, StdErr: se, Cov: cov, XtXInv: xtxinv,
		Residuals: res, Fitted: fitted, RSS: rss, DOF: dof,
		ResidualSD: math.Sqrt(s2), Cond: cond,
	}, nil
}

// OLSRows is OLS with the design given as rows (rows[i] is row i of X).
func OLSRows(rows [][]float64, y []float64) (*Fit, error) {
	X, err := FromRows(rows)
	if err != nil {
		return nil, err
	}
	return OLS(X, y)
}

// FromRows builds a design matrix from rows of equal length.
func FromRows(rows [][]float64) (*mat.Dense, error) {
	if len(rows) == 0 || len(rows[0]) == 0 {
		return nil, errors.New("linreg: empty design: expected at least one row and one column")
	}
	p := len(rows[0])
	data := make([]float64, 0, len(rows)*p)
	for i, r := range rows {
		if len(r) != p {
			return nil, fmt.Errorf("linreg: design row %d has %d columns, row 0 has %d: expected rows of equal length", i, len(r), p)
		}
		data = append(data, r...)
	}
	return mat.NewDense(len(rows), p, data), nil
}

// Design builds a design matrix from columns of equal length, with a
// leading column of ones when intercept is true.
func Design(intercept bool, cols ...[]float64) (*mat.Dense, error) {
	p := len(cols)
	if intercept {
		p++
	}
	if p == 0 {
		return nil, errors.New("linreg: empty design: expected at least one column")
	}
	n := -1
	for j, c := range cols {
		if n >= 0 && len(c) != n {
			return nil, fmt.Errorf("linreg: design column %d has %d values, column 0 has %d: expected columns of equal length", j, len(c), n)
		}
		n = len(c)
	}
	if n < 0 {
		return nil, errors.New("linreg: an intercept-only design needs its length: pass a column")
	}
	if n == 0 {
		return nil, errors.New("linreg: empty design: expected at least one row")
	}
	X := mat.NewDense(n, p, nil)
	for i := 0; i < n; i++ {
		k := 0
		if intercept {
			X.Set(i, 0, 1)
			k = 1
		}
		for j, c := range cols {
			X.Set(i, k+j, c[i])
		}
	}
	return X, nil
}

func residualsOf(X mat.Matrix, y, b []float64) []float64 {
	n, p := X.Dims()
	res := make([]float64, n)
	for i := 0; i < n; i++ {
		var f float64
		for j := 0; j < p; j++ {
			f += X.At(i, j) * b[j]
		}
		res[i] = y[i] - f
	}
	return res
}

func sumSq(x []float64) float64 {
	var s float64
	for _, v := range x {
		s += v * v
	}
	return s
}

// ACF returns the sample autocorrelations r_0 .. r_maxLag of e exactly as
// R's acf(e, lag.max = maxLag, demean = TRUE) computes them (the standard
// sample autocorrelation of Box and Jenkins, Time Series Analysis, 1976):
//
//	r_k = sum_{t=1}^{n-k} (e_t - m)(e_{t+k} - m) / sum_{t=1}^{n} (e_t - m)^2,  m = mean(e).
//
// r_0 = 1. maxLag is cut to len(e) - 1. The values are NaN when e has
// fewer than two values or no variability. e must not hold NaN.
func ACF(e []float64, maxLag int) []float64 {
	n := len(e)
	if maxLag > n-1 {
		maxLag = n - 1
	}
	if maxLag < 0 {
		return nil
	}
	var m float64
	for _, v := range e {
		m += v
	}
	m /= float64(n)
	d := make([]float64, n)
	var c0 float64
	for i, v := range e {
		d[i] = v - m
		c0 += d[i] * d[i]
	}
	r := make([]float64, maxLag+1)
	for k := range r {
		if c0 == 0 || n < 2 {
			r[k] = math.NaN()
			continue
		}
		var s float64
		for i := 0; i+k < n; i++ {
			s += d[i] * d[i+k]
		}
		r[k] = s / c0
	}
	return r
}

// ACFGaps is ACF for values on a regular axis with NaN where a step has no
// value: the mean of the present values is removed, c_k sums the products
// of the pairs k steps apart that are both present, and r_k = c_k / c_0
// with c_0 the sum of squares of every present value. Without gaps it is
// R's acf exactly (Box and Jenkins 1976). It also returns the number of
// present values; r is nil when there are none, and NaN (k >= 1) when they
// have no variability.
func ACFGaps(e []float64, maxLag int) (r []float64, present int) {
	var sum float64
	for _, v := range e {
		if !math.IsNaN(v) {
			sum += v
			present++
		}
	}
	if present == 0 || maxLag < 0 {
		return nil, present
	}
	m := sum / float64(present)
	c := make([]float64, maxLag+1)
	for i, v := range e {
		if math.IsNaN(v) {
			continue
		}
		d := v - m
		for k := 0; k <= maxLag && i+k < len(e); k++ {
			if w := e[i+k]; !math.IsNaN(w) {
				c[k] += d * (w - m)
			}
		}
	}
	r = make([]float64, maxLag+1)
	for k := range r {
		if c[0] == 0 {
			r[k] = math.NaN()
			continue
		}
		r[k] = c[k] / c[0]
	}
	return r, present
}
