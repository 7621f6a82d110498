package linreg

import (
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// TestSingularValuesAgainstGonum checks the Jacobi singular values
// against gonum's LAPACK-style SVD (mat.SVD, a reference library) on
// random designs, well and badly conditioned, and on the NIST Longley
// design with its intercept column (Longley 1967, in the NIST StRD
// units), which is very badly conditioned.
func TestSingularValuesAgainstGonum(t *testing.T) {
	r := rand.New(rand.NewPCG(1, 2))
	for trial := 0; trial < 40; trial++ {
		n, p := 5+r.IntN(200), 1+r.IntN(8)
		if p > n {
			p = n
		}
		a := mat.NewDense(n, p, nil)
		scale := math.Pow(10, float64(r.IntN(7)-3))
		for i := 0; i < n; i++ {
			for j := 0; j < p; j++ {
				a.Set(i, j, r.NormFloat64()*math.Pow(scale, float64(j)))
			}
		}
		if trial%5 == 0 && p > 1 { // nearly collinear columns
			for i := 0; i < n; i++ {
				a.Set(i, p-1, a.At(i, 0)*2+1e-7*r.NormFloat64())
			}
		}
		var svd mat.SVD
		if !svd.Factorize(a, mat.SVDNone) {
			t.Fatal("gonum SVD failed")
		}
		want := svd.Values(nil)
		got := SingularValues(a)
		for k := range want {
			if d := math.Abs(got[k] - want[k]); d > 1e-9*want[0] && d > 1e-8*want[k] {
				t.Errorf("trial %d (%dx%d): singular value %d = %g, gonum %g", trial, n, p, k, got[k], want[k])
			}
		}
	}
	longley, _ := longleyNIST(t)
	var svd mat.SVD
	svd.Factorize(longley, mat.SVDNone)
	sv := svd.Values(nil)
	want := sv[0] / sv[len(sv)-1]
	if got := Cond2(longley); math.Abs(got-want) > 1e-6*want {
		t.Errorf("Longley condition number %g, gonum %g", got, want)
	}
	if got := Cond2(mat.NewDense(3, 2, []float64{1, 2, 2, 4, 3, 6})); !math.IsInf(got, 1) && got < 1e15 {
		t.Errorf("rank-deficient matrix: condition %g, want +Inf or huge", got)
	}
}
