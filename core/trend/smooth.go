package trend

// Smoothing for display: a centred running mean and LOWESS.

import (
	"fmt"
	"math"
	"sort"
)

// RunningMean returns the centred running mean of y over a window of the
// given number of steps.
//
// Odd window w = 2m + 1: out_i = mean(y_{i-m} .. y_{i+m}), equal weights.
// Even window w = 2m: the centred "2 x w" moving average, weights 1/(2w) on
// y_{i-m} and y_{i+m} and 1/w on the w - 1 values between (the centring
// used for an even period in classical decomposition; R's decompose() uses
// the filter c(0.5, rep(1, w - 1), 0.5)/w).
//
// Missing values: out_i is the weighted mean of the values present in the
// window, renormalised by their weights, when they carry at least half of
// the window's total weight; otherwise NaN. Edges: where the window reaches
// past either end of the series, out_i is NaN (no shrinking windows, so the
// smooth never changes character at the ends).
func RunningMean(y []float64, window int) ([]float64, error) {
	if window < 1 {
		return nil, fmt.Errorf("running mean: window %d steps; expected at least 1", window)
	}
	n := len(y)
	out := make([]float64, n)
	m := window / 2
	for i := range out {
		out[i] = math.NaN()
		if i-m < 0 || i+m >= n {
			continue
		}
		var sw, swy float64
		for j := i - m; j <= i+m; j++ {
			w := 1.0
			if window%2 == 0 && (j == i-m || j == i+m) {
				w = 0.5
			}
			if !math.IsNaN(y[j]) {
				sw += w
				swy += w * y[j]
			}
		}
		if 2*sw >= float64(window) {
			out[i] = swy / sw
		}
	}
	return out, nil
}

// LowessOptions are the settings of Lowess.
type LowessOptions struct {
	// Span is f, the fraction of the points in each local fit (0 means 2/3,
	// R's lowess default). Each fit uses the q = max(2, floor(f n + 1e-7))
	// nearest points.
	Span float64
	// Iter is the number of robustness iterations: 0 means 3 (R's default),
	// a negative value means none.
	Iter int
	// Delta: local fits are skipped for points within Delta of the last
	// fitted x and filled by linear interpolation (R uses 1 % of the x
	// range by default); 0 fits at every point, exactly.
	Delta float64
}

// Lowess smooths y against x by locally weighted regression (Cleveland 1979,
// J. Am. Stat. Assoc. 74, 829): at each x_i a straight line is fitted by
// weighted least squares to the q = floor(f n) nearest points with tricube
// weights (1 - (d/h)^3)^3, h the distance to the farthest of them
// (weights 1 within 0.001 h, 0 beyond 0.999 h; points tied with the farthest
// join in; when the weighted spread of x is below 0.001 of the x range the
// local fit is a weighted mean). Robustness iterations then reweight each
// point by the bisquare B(e_i / 6s) = (1 - (e_i/6s)^2)^2 of its residual,
// s the median absolute residual, and refit; they stop early when 6s is
// below 1e-7 of the mean absolute residual. These are the conventions of
// Cleveland's published procedure as R's lowess() implements it.
//
// The result is aligned with the input: out_i is the smooth at x_i, NaN
// where x_i or y_i is missing. x need not be sorted.
func Lowess(x, y []float64, opt LowessOptions) ([]float64, error) {
	if len(x) != len(y) {
		return nil, fmt.Errorf("lowess: %d x values but %d y values", len(x), len(y))
	}
	f := opt.Span
	if f == 0 {
		f = 2.0 / 3
	}
	if !(f > 0 && f <= 1) {
		return nil, fmt.Errorf("lowess: span %v; expected a fraction in (0, 1]", opt.Span)
	}
	iter := opt.Iter
	if iter == 0 {
		iter = 3
	} else if iter < 0 {
		iter = 0
	}
	if !(opt.Delta >= 0) || math.IsInf(opt.Delta, 0) {
		return nil, fmt.Errorf("lowess: delta %v; expected a finite number >= 0", opt.Delta)
	}
	out := make([]float64, len(x))
	idx := make([]int, 0, len(x))
	for i := range x {
		out[i] = math.NaN()
		if math.IsInf(x[i], 0) || math.IsInf(y[i], 0) {
			return nil, fmt.Errorf("lowess: point %d is infinite", i)
		}
		if !math.IsNaN(x[i]) && !math.IsNaN(y[i]) {
			idx = append(idx, i)
		}
	}
	if len(idx) == 0 {
		return out, nil
	}
	sort.SliceStable(idx, func(a, b int) bool { return x[idx[a]] < x[idx[b]] })
	xs := make([]float64, len(idx))
	ys := make([]float64, len(idx))
	for k, i := range idx {
		xs[k], ys[k] = x[i], y[i]
	}
	fit := lowessSorted(xs, ys, f, iter, opt.Delta)
	for k, i := range idx {
		out[i] = fit[k]
	}
	return out, nil
}

// lowessSorted runs the procedure on x sorted ascending.
func lowessSorted(x, y []float64, f float64, iter int, delta float64) []float64 {
	n := len(x)
	ys := make([]float64, n)
	if n < 2 {
		copy(ys, y)
		return ys
	}
	q := max(2, min(n, int(f*float64(n)+1e-7)))
	w := make([]float64, n)
	rw := make([]float64, n)
	res := make([]float64, n)
	abs := make([]float64, n)
	for it := 0; it <= iter; it++ {
		robust := it > 0
		left, right := 0, q-1
		last := -1
		i := 0
		for {
			// Slide the window of q nearest points along to x_i.
			for right < n-1 && x[i]-x[left] > x[right+1]-x[i] {
				left++
				right++
			}
			v, ok := lowessLocal(x, y, x[i], left, right, w, robust, rw)
			if ok {
				ys[i] = v
			} else {
				ys[i] = y[i]
			}
			if last < i-1 { // fill skipped points by linear interpolation
				d := x[i] - x[last]
				for j := last + 1; j < i; j++ {
					a := (x[j] - x[last]) / d
					ys[j] = a*ys[i] + (1-a)*ys[last]
				}
			}
			last = i
			cut := x[last] + delta
			j := last + 1
			for ; j < n; j++ {
				if x[j] > cut {
					break
				}
				if x[j] == x[last] { // ties share the fit
					ys[j] = ys[last]
					last = j
				}
			}
			i = max(last+1, j-1)
			if last >= n-1 {
				break
			}
		}
		var sc float64
		for k := range res {
			res[k] = y[k] - ys[k]
			sc += math.Abs(res[k])
		}
		sc /= float64(n)
		if it == iter {
			break
		}
		for k := range res {
			abs[k] = math.Abs(res[k])
		}
		sort.Float64s(abs)
		m := n / 2
		var cmad float64
		if n%2 == 0 {
			cmad = 3 * (abs[m] + abs[m-1])
		} else {
			cmad = 6 * abs[m]
		}
		if cmad < 1e-7*sc {
			break
		}
		c9, c1 := 0.999*cmad, 0.001*cmad
		for k := range res {
			r := math.Abs(res[k])
			switch {
			case r <= c1:
				rw[k] = 1
			case r <= c9:
				u := r / cmad
				rw[k] = (1 - u*u) * (1 - u*u)
			default:
				rw[k] = 0
			}
		}
	}
	return ys
}

// lowessLocal is the local weighted linear fit at xs over points
// left..right (extended to the right over ties), robustness weights rw
// applied when robust. It reports false when all weights vanish.
func lowessLocal(x, y []float64, xs float64, left, right int, w []float64, robust bool, rw []float64) (float64, bool) {
	n := len(x)
	rng := x[n-1] - x[0]
	h := math.Max(xs-x[left], x[right]-xs)
	h9, h1 := 0.999*h, 0.001*h
	var a float64
	j := left
	for ; j < n; j++ {
		w[j] = 0
		r := math.Abs(x[j] - xs)
		if r <= h9 {
			if r <= h1 {
				w[j] = 1
			} else {
				u := r / h
				u = 1 - u*u*u
				w[j] = u * u * u
			}
			if robust {
				w[j] *= rw[j]
			}
			a += w[j]
		} else if x[j] > xs {
			break
		}
	}
	nrt := j - 1
	if a <= 0 {
		return 0, false
	}
	for k := left; k <= nrt; k++ {
		w[k] /= a
	}
	if h > 0 {
		var xm float64
		for k := left; k <= nrt; k++ {
			xm += w[k] * x[k]
		}
		b := xs - xm
		var c float64
		for k := left; k <= nrt; k++ {
			c += w[k] * (x[k] - xm) * (x[k] - xm)
		}
		if math.Sqrt(c) > 0.001*rng {
			b /= c
			for k := left; k <= nrt; k++ {
				w[k] *= b*(x[k]-xm) + 1
			}
		}
	}
	var v float64
	for k := left; k <= nrt; k++ {
		v += w[k] * y[k]
	}
	return v, true
}
