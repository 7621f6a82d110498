package budget

import "testing"

// Budget in the page: 100,000 draws <= 100 ms.
func BenchmarkSensitivity100k(b *testing.B) {
	aer, _ := Range90(DistLognormal, -2.0, -0.4)
	in := Inputs{
		DT: typed(Normal(1.1, 0.1)),
		DF: []Quantity{{Name: "greenhouse", Dist: &Dist{Kind: DistNormal, Mean: 3.6, SD: 0.3}}, {Name: "aerosol", Dist: &aer}},
		DN: typed(Normal(0.6, 0.1)),
	}
	for b.Loop() {
		if _, err := Sensitivity(in, MCOptions{Draws: 100000, Seed: 1}); err != nil {
			b.Fatal(err)
		}
	}
}

// Budget in the page: the sweep over 60 end years with 20,000 draws each
// <= 2 s (T from a series with AR(1) sampling; F and N exact series).
func BenchmarkSweep60x20k(b *testing.B) {
	T, F, N := synthWorld(4)
	in := Inputs{Base: Period{"1850", "1900"}, Final: Period{"2011", "2020"},
		DT: Quantity{Series: T}, DF: []Quantity{{Series: F, Sampling: "none"}}, DN: Quantity{Series: N, Sampling: "none"}}
	for b.Loop() {
		r, err := Sweep(in, SweepOptions{FinalYears: 10, FirstEnd: 1961, LastEnd: 2020, Draws: 20000, Seed: 1})
		if err != nil || len(r.Points) != 60 {
			b.Fatal(err)
		}
	}
}

func BenchmarkQuantiles100k(b *testing.B) {
	T := make([]float64, 100000)
	for i := range T {
		T[i] = float64((i * 7919) % 100003)
	}
	a := make([]float64, len(T))
	for b.Loop() {
		copy(a, T)
		Quantiles(a, 0.005, 0.05, 0.17, 0.5, 0.83, 0.95, 0.995)
	}
}
