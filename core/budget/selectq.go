package budget

import (
	"math"
	"math/bits"
	"slices"
)

// Quantiles returns the sample quantiles of a at the probabilities ps
// (each in [0, 1]) by R's default definition (Hyndman and Fan 1996 type 7):
// with the order statistics x_(1) <= ... <= x_(n), h = (n - 1) p,
// k = floor(h),
//
//	Q(p) = x_(k+1) + (h - k) (x_(k+2) - x_(k+1)),
//
// exact to the draws. An interpolation towards +Inf gives +Inf. a must
// hold no NaN; it is reordered in place (partially sorted). The order
// statistics are found by selection (Hoare 1961 quickselect, median-of-3
// pivots, recursing on the targets either side of each one found; x_(k+2)
// is then the least value of the segment after x_(k+1)), about 3n
// comparisons for a handful of probabilities instead of the n log2 n of a
// full sort; a subrange that partitions badly falls back to sorting.
func Quantiles(a []float64, ps ...float64) []float64 {
	out := make([]float64, len(ps))
	n := len(a)
	if n == 0 {
		for i := range out {
			out[i] = math.NaN()
		}
		return out
	}
	ks := make([]int, 0, len(ps))
	for _, p := range ps {
		k := int(math.Floor(float64(n-1) * p))
		ks = append(ks, min(max(k, 0), n-1))
	}
	slices.Sort(ks)
	ks = slices.Compact(ks)
	multiSelect(a, 0, n, ks, 2*bits.Len(uint(n)))
	// x_(k+2) is the least value of the partitioned segment after k
	for j, k := range ks {
		end := n
		if j+1 < len(ks) {
			end = ks[j+1]
		}
		if k+1 >= end {
			continue
		}
		m := k + 1
		for i := k + 2; i < end; i++ {
			if a[i] < a[m] {
				m = i
			}
		}
		a[k+1], a[m] = a[m], a[k+1]
	}
	for i, p := range ps {
		h := float64(n-1) * p
		k := int(math.Floor(h))
		k = min(max(k, 0), n-1)
		f := h - float64(k)
		lo := a[k]
		if f == 0 || k+1 >= n {
			out[i] = lo
			continue
		}
		hi := a[k+1]
		switch {
		case lo == hi:
			out[i] = lo
		case math.IsInf(hi, 1) || math.IsInf(lo, -1):
			out[i] = hi
			if math.IsInf(lo, -1) {
				out[i] = lo
			}
		default:
			out[i] = lo + f*(hi-lo)
		}
	}
	return out
}

// multiSelect places the order statistics with indices ks (sorted, all in
// [lo, hi)) at their positions: for each k in ks, a[k] is the value a full
// sort would put there, and a[lo:k] <= a[k] <= a[k+1:hi].
func multiSelect(a []float64, lo, hi int, ks []int, depth int) {
	for len(ks) > 0 {
		if hi-lo <= 16 || depth <= 0 {
			slices.Sort(a[lo:hi])
			return
		}
		depth--
		// Hoare partition around the median of three.
		mid := lo + (hi-lo)/2
		x, y, z := a[lo], a[mid], a[hi-1]
		pivot := y
		if (x <= y) == (y <= z) {
			pivot = y
		} else if (y <= x) == (x <= z) {
			pivot = x
		} else {
			pivot = z
		}
		i, j := lo-1, hi
		for {
			for i++; a[i] < pivot; i++ {
			}
			for j--; a[j] > pivot; j-- {
			}
			if i >= j {
				break
			}
			a[i], a[j] = a[j], a[i]
		}
		// a[lo:j+1] <= pivot <= a[j+1:hi]
		split := j + 1
		var left, right []int
		for idx, k := range ks {
			if k >= split {
				left, right = ks[:idx], ks[idx:]
				break
			}
			left = ks
		}
		if len(left) > 0 && len(right) > 0 {
			multiSelect(a, lo, split, left, depth)
			ks, lo = right, split
			continue
		}
		if len(left) > 0 {
			ks, hi = left, split
		} else {
			ks, lo = right, split
		}
	}
}
