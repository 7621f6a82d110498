package drivers

import (
	"errors"
	"fmt"
	"math"

	"gonum.org/v1/gonum/floats"
)

// pivotTol: a candidate whose driver columns are this close to collinear
// (1 - R^2 of one normalised, partialled column on the others below it, a
// variance inflation above 1e10) is skipped as unidentifiable.
const pivotTol = 1e-10

// searchData holds what the lag search needs, computed once.
//
// Method (the Frisch-Waugh-Lovell theorem: Frisch and Waugh 1933,
// Econometrica; Lovell 1963, JASA; citations from memory): with F the fixed columns (intercept,
// trend term, annual cycle) over the common sample, every candidate driver
// column z_kj (driver k at its j-th lag) and the target y are replaced by
// their residuals from F (projection on an orthonormal basis of F by
// modified Gram-Schmidt, applied twice for accuracy: "twice is enough",
// Giraud et al. 2005, Numer. Math., citation from memory). The RSS of the full model at
// lags (j_1..j_K) equals the RSS of the partialled y on the partialled
// driver columns. Each partialled column is scaled to unit length, u_kj, and
// the search keeps
//
//	yy = y~'y~,   g_kj = u_kj'y~,   C_{kj,lm} = u_kj'u_lm  (k < l, all lag pairs).
//
// A candidate is then a K x K problem: A = [C] with unit diagonal,
// A = L L' (Cholesky), w = L^-1 g, RSS = yy - w'w (= yy - b'X'y of the
// normal equations). The exhaustive search extends the Cholesky factor one
// driver at a time, so each leaf costs O(K) on top of its parent.
type searchData struct {
	n     int
	yy    float64
	nl    []int
	g     [][]float64
	ok    [][]bool
	cross [][][]float64 // cross[k][l], k < l: u_kj'u_lm at j*nl[l]+m
	evals int
}

// buildSearch computes the search data over the common-sample rows.
func (m *model) buildSearch(rows []int) (*searchData, error) {
	n := len(rows)
	fixed := []column{{"intercept", ones(n)}}
	fixed = append(fixed, m.trendColumns(rows, meanAt(m.t, rows))...)
	fixed = append(fixed, m.cycleColumns(rows)...)
	q, err := orthonormal(fixed)
	if err != nil {
		return nil, fmt.Errorf("lag search over the common sample (%d months between %s): %w", n, m.windowText(), err)
	}
	y := make([]float64, n)
	for r, i := range rows {
		y[r] = m.y[i]
	}
	partial(q, y)
	sd := &searchData{n: n, yy: dot(y, y)}
	K := len(m.drv)
	u := make([][][]float64, K)
	sd.nl = make([]int, K)
	sd.g = make([][]float64, K)
	sd.ok = make([][]bool, K)
	for k, d := range m.drv {
		sd.nl[k] = len(d.lags)
		u[k] = make([][]float64, len(d.lags))
		sd.g[k] = make([]float64, len(d.lags))
		sd.ok[k] = make([]bool, len(d.lags))
		usable := false
		for j, l := range d.lags {
			z := m.driverColumn(k, l, rows).v
			n0 := math.Sqrt(dot(z, z))
			partial(q, z)
			s := math.Sqrt(dot(z, z))
			if !(n0 > 0) || !(s > 1e-9*n0) {
				continue
			}
			for i := range z {
				z[i] /= s
			}
			u[k][j] = z
			sd.g[k][j] = dot(z, y)
			sd.ok[k][j] = true
			usable = true
		}
		if !usable {
			return nil, fmt.Errorf("driver %q is constant, or fully explained by the trend and annual-cycle terms, at every lag from %d to %d months between %s", d.name, d.lags[0], d.lags[len(d.lags)-1], m.windowText())
		}
	}
	sd.cross = make([][][]float64, K)
	for k := 0; k < K; k++ {
		sd.cross[k] = make([][]float64, K)
		for l := k + 1; l < K; l++ {
			c := make([]float64, sd.nl[k]*sd.nl[l])
			for j := 0; j < sd.nl[k]; j++ {
				if u[k][j] == nil {
					continue
				}
				for mm := 0; mm < sd.nl[l]; mm++ {
					if u[l][mm] == nil {
						continue
					}
					c[j*sd.nl[l]+mm] = dot(u[k][j], u[l][mm])
				}
			}
			sd.cross[k][l] = c
		}
	}
	return sd, nil
}

// eval is the RSS at the lag positions js (+Inf when a column is unusable
// or the drivers are collinear there).
func (sd *searchData) eval(js []int) float64 {
	K := len(js)
	var L [MaxDrivers][MaxDrivers]float64
	var w [MaxDrivers]float64
	var acc float64
	for d := 0; d < K; d++ {
		if !sd.ok[d][js[d]] {
			return math.Inf(1)
		}
		s := 1.0
		for e := 0; e < d; e++ {
			v := sd.cross[e][d][js[e]*sd.nl[d]+js[d]]
			for r := 0; r < e; r++ {
				v -= L[d][r] * L[e][r]
			}
			v /= L[e][e]
			L[d][e] = v
			s -= v * v
		}
		if !(s > pivotTol) {
			return math.Inf(1)
		}
		L[d][d] = math.Sqrt(s)
		wd := sd.g[d][js[d]]
		for e := 0; e < d; e++ {
			wd -= L[d][e] * w[e]
		}
		wd /= L[d][d]
		w[d] = wd
		acc += wd * wd
	}
	sd.evals++
	return math.Max(sd.yy-acc, 0)
}

// exhaustive tries every combination (lexicographic order; ties keep the
// first, i.e. the shortest lags of the earlier drivers).
func (sd *searchData) exhaustive() ([]int, float64) {
	K := len(sd.nl)
	var L [MaxDrivers][MaxDrivers]float64
	var w [MaxDrivers]float64
	js := make([]int, K)
	best := make([]int, K)
	bestRSS := math.Inf(1)
	var rec func(d int, acc float64)
	rec = func(d int, acc float64) {
		if d == K {
			sd.evals++
			if rss := math.Max(sd.yy-acc, 0); rss < bestRSS {
				bestRSS = rss
				copy(best, js)
			}
			return
		}
		for j := 0; j < sd.nl[d]; j++ {
			if !sd.ok[d][j] {
				continue
			}
			js[d] = j
			s := 1.0
			for e := 0; e < d; e++ {
				v := sd.cross[e][d][js[e]*sd.nl[d]+j]
				for r := 0; r < e; r++ {
					v -= L[d][r] * L[e][r]
				}
				v /= L[e][e]
				L[d][e] = v
				s -= v * v
			}
			if !(s > pivotTol) {
				continue
			}
			L[d][d] = math.Sqrt(s)
			wd := sd.g[d][j]
			for e := 0; e < d; e++ {
				wd -= L[d][e] * w[e]
			}
			wd /= L[d][d]
			w[d] = wd
			rec(d+1, acc+wd*wd)
		}
	}
	rec(0, 0)
	return best, bestRSS
}

// coordinate is coordinate descent: from each start, each driver's lag in
// turn is set to its best value with the others held, sweeping until a
// full sweep changes nothing; the best end point over the starts wins. The
// starts are the middle, the shortest and the longest lags, then
// pseudo-random points from a fixed seed (the splitmix64 generator of
// Steele, Lea and Flood 2014, citation from memory),
// so the result is reproducible.
func (sd *searchData) coordinate(starts int) ([]int, float64) {
	K := len(sd.nl)
	rng := uint64(0x9E3779B97F4A7C15)
	next := func() uint64 {
		rng += 0x9E3779B97F4A7C15
		z := rng
		z = (z ^ (z >> 30)) * 0xBF58476D1CE4E5B9
		z = (z ^ (z >> 27)) * 0x94D049BB133111EB
		return z ^ (z >> 31)
	}
	best := make([]int, K)
	bestRSS := math.Inf(1)
	for s := 0; s < starts; s++ {
		js := make([]int, K)
		for k := range js {
			switch s {
			case 0:
				js[k] = sd.nl[k] / 2
			case 1:
				js[k] = 0
			case 2:
				js[k] = sd.nl[k] - 1
			default:
				js[k] = int(next() % uint64(sd.nl[k]))
			}
		}
		cur := sd.eval(js)
		for sweep := 0; sweep < 1000; sweep++ {
			changed := false
			for k := 0; k < K; k++ {
				orig := js[k]
				bj, br := orig, cur
				for j := 0; j < sd.nl[k]; j++ {
					if j == orig {
						continue
					}
					js[k] = j
					if r := sd.eval(js); r < br {
						bj, br = j, r
					}
				}
				js[k] = bj
				if bj != orig {
					changed = true
					cur = br
				}
			}
			if !changed {
				break
			}
		}
		if cur < bestRSS {
			bestRSS = cur
			copy(best, js)
		}
	}
	return best, bestRSS
}

// ones is a column of n ones.
func ones(n int) []float64 {
	c := make([]float64, n)
	for i := range c {
		c[i] = 1
	}
	return c
}

func meanAt(v []float64, rows []int) float64 {
	var s float64
	for _, i := range rows {
		s += v[i]
	}
	return s / float64(len(rows))
}

func dot(a, b []float64) float64 { return floats.Dot(a, b) }

// orthonormal returns an orthonormal basis of the columns by modified
// Gram-Schmidt with one reorthogonalisation, or an error naming the first
// column that is (numerically) a combination of the ones before it.
func orthonormal(cols []column) ([][]float64, error) {
	var q [][]float64
	for _, c := range cols {
		v := append([]float64(nil), c.v...)
		n0 := math.Sqrt(dot(v, v))
		partial(q, v)
		nv := math.Sqrt(dot(v, v))
		if !(n0 > 0) || !(nv > 1e-10*n0) {
			if len(q) == 0 {
				return nil, fmt.Errorf("column %q is zero", c.name)
			}
			return nil, fmt.Errorf("column %q is a linear combination of the columns before it: expected independent terms", c.name)
		}
		for i := range v {
			v[i] /= nv
		}
		q = append(q, v)
	}
	return q, nil
}

// partial removes from v its projection on the orthonormal columns q,
// twice (modified Gram-Schmidt order).
func partial(q [][]float64, v []float64) {
	for pass := 0; pass < 2; pass++ {
		for _, c := range q {
			floats.AddScaled(v, -dot(c, v), c)
		}
	}
}

// firstDependent names the first of the columns that is a combination of
// the ones before it (used to explain a rank-deficient design).
func firstDependent(cols []column) error {
	if _, err := orthonormal(cols); err != nil {
		return err
	}
	return errors.New("the design is numerically rank deficient")
}
