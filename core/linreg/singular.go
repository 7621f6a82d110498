package linreg

import (
	"math"
	"sort"

	"gonum.org/v1/gonum/mat"
)

// SingularValues returns the singular values of an n x p matrix (n >= p),
// largest first, by the one-sided Jacobi method (Hestenes 1958; Demmel and
// Veselic 1992; both references from memory): plane rotations make the
// columns mutually orthogonal, and the singular values are then the column
// norms. It is accurate to a few units of rounding relative to each value
// and, for the narrow design matrices of this package, small and quick; it
// keeps gonum's general SVD (which is much larger) out of the page.
func SingularValues(a mat.Matrix) []float64 {
	n, p := a.Dims()
	cols := make([][]float64, p)
	for j := range cols {
		c := make([]float64, n)
		for i := range c {
			c[i] = a.At(i, j)
		}
		cols[j] = c
	}
	const eps = 1e-15
	for sweep := 0; sweep < 80; sweep++ {
		rotated := false
		for i := 0; i < p-1; i++ {
			for j := i + 1; j < p; j++ {
				ci, cj := cols[i], cols[j]
				var alpha, beta, gamma float64
				for k := range ci {
					alpha += ci[k] * ci[k]
					beta += cj[k] * cj[k]
					gamma += ci[k] * cj[k]
				}
				if gamma == 0 || math.Abs(gamma) <= eps*math.Sqrt(alpha*beta) {
					continue
				}
				rotated = true
				zeta := (beta - alpha) / (2 * gamma)
				t := math.Copysign(1, zeta) / (math.Abs(zeta) + math.Sqrt(1+zeta*zeta))
				c := 1 / math.Sqrt(1+t*t)
				s := c * t
				for k := range ci {
					x, y := ci[k], cj[k]
					ci[k] = c*x - s*y
					cj[k] = s*x + c*y
				}
			}
		}
		if !rotated {
			break
		}
	}
	sv := make([]float64, p)
	for j, c := range cols {
		var ss float64
		for _, v := range c {
			ss += v * v
		}
		sv[j] = math.Sqrt(ss)
	}
	sort.Sort(sort.Reverse(sort.Float64Slice(sv)))
	return sv
}

// Cond2 is the 2-norm condition number of a matrix with at least as many
// rows as columns: its largest singular value over its smallest (+Inf
// when the smallest is 0).
func Cond2(a mat.Matrix) float64 {
	sv := SingularValues(a)
	if len(sv) == 0 || !(sv[len(sv)-1] > 0) {
		return math.Inf(1)
	}
	return sv[0] / sv[len(sv)-1]
}
