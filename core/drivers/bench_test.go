package drivers

import (
	"math"
	"math/rand/v2"
	"testing"

	"heatledger/core/linreg"
	"heatledger/core/series"
)

// benchProblem is the budget case of the Drivers issue: 900 months of
// target, three drivers each searched over 25 lags (0-24 months), so
// 25^3 = 15,625 candidate fits over a common sample of 900 months.
func benchProblem() (*series.Series, []Driver) {
	rng := rand.New(rand.NewPCG(11, 12))
	first := series.MonthIndex(1948, 1)
	n := 900 + 24
	var ds []Driver
	xs := make([]*series.Series, 3)
	for k := range xs {
		v := make([]float64, n)
		for i := range v {
			v[i] = rng.NormFloat64()
			if i > 0 {
				v[i] += 0.7 * v[i-1]
			}
		}
		xs[k] = series.New([]string{"a", "b", "c"}[k], "", series.Monthly, first, v)
		ds = append(ds, Driver{Series: xs[k], MinLag: 0, MaxLag: 24})
	}
	y := make([]float64, 900)
	for i := range y {
		idx := first + 24 + i
		t := series.StepTime(series.Monthly, idx)
		y[i] = 0.02*(t-1990) + 0.2*xs[0].At(idx-3) - 0.1*xs[1].At(idx-7) + 0.05*xs[2].At(idx-1) + 0.1*math.Cos(2*math.Pi*t) + 0.1*rng.NormFloat64()
	}
	return series.New("y", "K", series.Monthly, first+24, y), ds
}

// BenchmarkLagSearch: the whole Fit (search, final QR fit, outputs, trends)
// for the budget case. Budget: <= 1 s natively.
func BenchmarkLagSearch(b *testing.B) {
	y, ds := benchProblem()
	for b.Loop() {
		r, err := Fit(y, ds, Options{})
		if err != nil {
			b.Fatal(err)
		}
		if r.Search.Evaluated < 15625 || r.Search.N != 900 {
			b.Fatalf("evaluated %d n %d", r.Search.Evaluated, r.Search.N)
		}
	}
}

// BenchmarkLagSearchCoordinate: the same problem by coordinate descent.
func BenchmarkLagSearchCoordinate(b *testing.B) {
	y, ds := benchProblem()
	for b.Loop() {
		if _, err := Fit(y, ds, Options{Exhaustive: 1}); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkNaiveRefit100: for comparison, 100 candidates each refitted
// from scratch by QR (linreg.OLS), as the search avoids doing.
func BenchmarkNaiveRefit100(b *testing.B) {
	y, ds := benchProblem()
	m, err := newModel(y, ds, Options{})
	if err != nil {
		b.Fatal(err)
	}
	rows := m.searchSample()
	yy := make([]float64, len(rows))
	for r, i := range rows {
		yy[r] = m.y[i]
	}
	for b.Loop() {
		for c := 0; c < 100; c++ {
			cols := [][]float64{m.trendColumns(rows, 1990)[0].v}
			for k := range ds {
				cols = append(cols, m.driverColumn(k, (c+k)%25, rows).v)
			}
			for _, h := range m.cycleColumns(rows) {
				cols = append(cols, h.v)
			}
			X, _ := linreg.Design(true, cols...)
			if _, err := linreg.OLS(X, yy); err != nil {
				b.Fatal(err)
			}
		}
	}
}

// BenchmarkSearchOnly: the lag search alone (cross-products once, then the
// 15,625 candidates by incremental Cholesky) for the budget case.
func BenchmarkSearchOnly(b *testing.B) {
	y, ds := benchProblem()
	m, err := newModel(y, ds, Options{})
	if err != nil {
		b.Fatal(err)
	}
	rows := m.searchSample()
	for b.Loop() {
		sd, err := m.buildSearch(rows)
		if err != nil {
			b.Fatal(err)
		}
		sd.exhaustive()
	}
}

// BenchmarkCandidates: the 15,625 candidate evaluations alone, once the
// cross-products are built.
func BenchmarkCandidates(b *testing.B) {
	y, ds := benchProblem()
	m, err := newModel(y, ds, Options{})
	if err != nil {
		b.Fatal(err)
	}
	sd, err := m.buildSearch(m.searchSample())
	if err != nil {
		b.Fatal(err)
	}
	for b.Loop() {
		sd.exhaustive()
	}
}
