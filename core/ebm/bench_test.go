package ebm

import (
	"math"
	"testing"

	"heatledger/core/series"
)

// BenchmarkIntegrate900: the allocation-free inner run, two-layer model,
// 900 months (budget: 50 microseconds natively).
func BenchmarkIntegrate900(b *testing.B) {
	q, err := NewPropagator(DefaultParams(), 1.0/12)
	if err != nil {
		b.Fatal(err)
	}
	f := make([]float64, 900)
	for i := range f {
		f[i] = 2 * float64(i) / 900
	}
	mt, mt0, et, et0 := make([]float64, 900), make([]float64, 900), make([]float64, 900), make([]float64, 900)
	b.ReportAllocs()
	for b.Loop() {
		q.Integrate(f, [2]float64{}, mt, mt0, et, et0)
	}
}

// BenchmarkSimulate900One: Simulate, two-layer, 900 months, one forcing
// component (output series allocated: T, T0, N, heat, the component's
// response).
func BenchmarkSimulate900One(b *testing.B) {
	v := make([]float64, 900)
	for i := range v {
		v[i] = 2 * float64(i) / 900
	}
	f := testForcing(b, series.Monthly, series.MonthIndex(1950, 1), map[string][]float64{"a": v}, "a")
	b.ReportAllocs()
	for b.Loop() {
		if _, err := Simulate(f, DefaultParams(), RunOptions{}); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkSimulate900: a full two-layer run over 900 months with three
// forcing components (each component's response, the total, N and heat
// series).
func BenchmarkSimulate900(b *testing.B) {
	cols := map[string][]float64{"a": make([]float64, 900), "b": make([]float64, 900), "c": make([]float64, 900)}
	for i := range 900 {
		cols["a"][i] = 2 * float64(i) / 900
		cols["b"][i] = -0.5 * float64(i) / 900
		cols["c"][i] = 0.1 * math.Sin(float64(i)/20)
	}
	f := testForcing(b, series.Monthly, series.MonthIndex(1950, 1), cols, "a", "b", "c")
	b.ReportAllocs()
	for b.Loop() {
		if _, err := Simulate(f, DefaultParams(), RunOptions{}); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkFitDemo4: a fit with four free parameters (lambda, gamma, the
// aerosol scale and the offset) to the demo world's 912 months
// (budget: 200 ms natively).
func BenchmarkFitDemo4(b *testing.B) {
	ss := demoSeries(b)
	f := demoForcing(b, ss)
	opt := FitOptions{Target: ss["surface_anomaly"], Free: []string{"lambda", "gamma", "aerosol", "offset"}}
	b.ReportAllocs()
	for b.Loop() {
		if _, err := Fit(f, DefaultParams(), RunOptions{}, opt); err != nil {
			b.Fatal(err)
		}
	}
}
