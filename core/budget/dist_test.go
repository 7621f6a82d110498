package budget

import (
	"math"
	"math/rand/v2"
	"slices"
	"strings"
	"testing"
)

func TestDistNormalize(t *testing.T) {
	d, err := Range90(DistNormal, 1, 3)
	if err != nil || math.Abs(d.Mean-2) > 1e-15 || math.Abs(d.Quantile(0.05)-1) > 1e-12 || math.Abs(d.Quantile(0.95)-3) > 1e-12 {
		t.Fatalf("normal from 5-95 %%: %+v %v", d, err)
	}
	// a mirrored lognormal (skewed negative, like an aerosol forcing)
	d, err = Range90(DistLognormal, -1.9, -0.4)
	if err != nil || math.Abs(d.Quantile(0.05)+1.9) > 1e-12 || math.Abs(d.Quantile(0.95)+0.4) > 1e-12 || d.Median >= 0 {
		t.Fatalf("negative lognormal: %+v %v (q05 %g q95 %g)", d, err, d.Quantile(0.05), d.Quantile(0.95))
	}
	if math.Abs(d.Center()+math.Sqrt(1.9*0.4)) > 1e-12 || !(d.MeanValue() < d.Center()) {
		t.Fatalf("negative lognormal centre %g mean %g", d.Center(), d.MeanValue())
	}
	d, err = Range90(DistLognormal, 0.5, 2)
	if err != nil || math.Abs(d.Median-1) > 1e-12 || math.Abs(d.Quantile(0.95)-2) > 1e-12 {
		t.Fatalf("lognormal: %+v %v", d, err)
	}
	for _, bad := range []Dist{
		{Kind: "gamma"}, {Kind: DistNormal, SD: -1}, {Kind: DistNormal, Mean: 1, P05: 0, P95: 2},
		{Kind: DistLognormal}, {Kind: DistLognormal, P05: -1, P95: 1}, {Kind: DistLognormal, Median: 1, LogSD: -1},
		{Kind: DistUniform, Low: 2, High: 1}, {Kind: DistUniform, P05: 1, P95: 2}, {Kind: DistNormal, Mean: math.NaN()},
		{Kind: DistNormal, P05: 3, P95: 1},
	} {
		if _, err := bad.Normalize(); err == nil {
			t.Errorf("%+v: no error", bad)
		}
	}
	if d, err := (Dist{Mean: 2, SD: 1}).Normalize(); err != nil || d.Kind != DistNormal {
		t.Errorf("empty kind: %+v %v", d, err)
	}
}

// Drawing through transform reproduces each distribution's own quantiles
// (Dist.Quantile, from the analytic inverse CDF) within Monte Carlo error.
func TestDistSampling(t *testing.T) {
	const n = 200000
	r := rand.New(rand.NewPCG(3, 4))
	z, u := make([]float64, n), make([]float64, n)
	for i := range z {
		z[i], u[i] = r.NormFloat64(), r.Float64()
	}
	for _, d := range []Dist{Normal(1, 0.3), Lognormal(-0.9, 0.5), Lognormal(2, 0.2), Uniform(-1, 3)} {
		std := z
		if d.uniformVariate() {
			std = u
		}
		x := make([]float64, n)
		d.transform(x, std, 1, false)
		y := make([]float64, n)
		d.transform(y, std, -1, false)
		if y[10] != -x[10] || y[n-1] != -x[n-1] {
			t.Errorf("%s: sign -1 gives %g, want %g", d, y[10], -x[10])
		}
		ps := []float64{0.05, 0.25, 0.5, 0.75, 0.95}
		q := Quantiles(x, ps...)
		for i, p := range ps {
			// tolerance: 5 MC standard errors of a quantile, sqrt(p(1-p)/n)/pdf
			tol := 5 * math.Sqrt(p*(1-p)/n) / d.PDF(d.Quantile(p))
			if math.Abs(q[i]-d.Quantile(p)) > tol {
				t.Errorf("%s: sample q%.2f = %g, want %g +- %g", d, p, q[i], d.Quantile(p), tol)
			}
		}
		var s float64
		for _, v := range x {
			s += v
		}
		if m := s / n; math.Abs(m-d.MeanValue()) > 5*d.StdDev()/math.Sqrt(n) {
			t.Errorf("%s: sample mean %g, want %g", d, m, d.MeanValue())
		}
	}
}

// Each density integrates to 1 (trapezoid rule over its 1e-6..1-1e-6 range).
func TestDistPDF(t *testing.T) {
	for _, d := range []Dist{Normal(1, 0.3), Lognormal(-0.9, 0.5), Lognormal(2, 0.2), Uniform(-1, 3)} {
		lo, hi := d.Quantile(1e-7), d.Quantile(1-1e-7)
		const m = 200000
		h := (hi - lo) / m
		var s float64
		for i := 0; i <= m; i++ {
			w := 1.0
			if i == 0 || i == m {
				w = 0.5
			}
			s += w * d.PDF(lo+float64(i)*h)
		}
		if math.Abs(s*h-1) > 2e-3 {
			t.Errorf("%s: density integrates to %g", d, s*h)
		}
	}
}

func TestParseDist(t *testing.T) {
	for in, want := range map[string]Dist{
		"0.8:0.1":            Normal(0.8, 0.1),
		"normal:-1:0.5":      Normal(-1, 0.5),
		"lognormal:-0.9:0.4": Lognormal(-0.9, 0.4),
		"uniform:1:2":        Uniform(1, 2),
		" 2.5 : 0 ":          Normal(2.5, 0),
		"normal90:1:3":       Normal(2, 1/z95),
		"lognormal90:0.5:2":  Lognormal(1, math.Log(4)/(2*z95)),
	} {
		got, err := ParseDist(in)
		if err != nil || got.Kind != want.Kind || math.Abs(got.Center()-want.Center()) > 1e-12 || math.Abs(got.StdDev()-want.StdDev()) > 1e-12 {
			t.Errorf("%q: %+v %v, want %+v", in, got, err, want)
		}
	}
	for _, bad := range []string{"", "1", "1:2:3:4", "a:1", "1:b", "1:-1", "gamma:1:2", "lognormal:0:1", "uniform:3:1", "1:NaN", "1:Inf"} {
		if _, err := ParseDist(bad); err == nil {
			t.Errorf("%q: no error", bad)
		} else if !strings.Contains(err.Error(), bad) {
			t.Errorf("%q: the error %q does not quote the input", bad, err)
		}
	}
}

// Quantiles agrees with a full sort and R's type-7 definition on arrays
// with ties and +Inf values.
func TestQuantilesExact(t *testing.T) {
	// R: quantile(1:10, c(0, 0.05, 0.5, 0.83, 1)) = 1, 1.45, 5.5, 8.47, 10
	// (type 7: 1 + (n - 1) p, by hand).
	q := Quantiles([]float64{10, 3, 7, 1, 9, 2, 8, 4, 6, 5}, 0, 0.05, 0.5, 0.83, 1)
	for i, w := range []float64{1, 1.45, 5.5, 8.47, 10} {
		if math.Abs(q[i]-w) > 1e-12 {
			t.Errorf("1:10 quantile %d: %g want %g", i, q[i], w)
		}
	}
	r := rand.New(rand.NewPCG(11, 12))
	ps := []float64{0.005, 0.05, 0.17, 0.5, 0.83, 0.95, 0.995, 0, 1}
	for trial := range 300 {
		n := 1 + r.IntN(3000)
		a := make([]float64, n)
		for i := range a {
			switch trial % 4 {
			case 0:
				a[i] = r.NormFloat64()
			case 1:
				a[i] = float64(r.IntN(5)) // heavy ties
			case 2:
				a[i] = r.NormFloat64()
				if r.Float64() < 0.2 {
					a[i] = math.Inf(1)
				}
			case 3:
				a[i] = float64(i) // sorted input
				if trial%8 == 3 {
					a[i] = float64(n - i) // reversed
				}
			}
		}
		s := slices.Clone(a)
		slices.Sort(s)
		got := Quantiles(a, ps...)
		for i, p := range ps {
			h := float64(n-1) * p
			k := int(math.Floor(h))
			want := s[k]
			if f := h - float64(k); f > 0 && k+1 < n && s[k+1] != s[k] {
				if math.IsInf(s[k+1], 1) {
					want = math.Inf(1)
				} else {
					want = s[k] + f*(s[k+1]-s[k])
				}
			}
			if got[i] != want && math.Abs(got[i]-want) > 1e-12*math.Abs(want) {
				t.Fatalf("trial %d n %d p %g: %g, want %g", trial, n, p, got[i], want)
			}
		}
		slices.Sort(a)
		if !slices.Equal(a, s) {
			t.Fatalf("trial %d: the values changed", trial)
		}
	}
	if q := Quantiles(nil, 0.5); !math.IsNaN(q[0]) {
		t.Errorf("empty: %v", q)
	}
}
