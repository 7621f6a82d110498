package budget

import (
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"heatledger/core/series"
	"heatledger/core/trend"
)

func flatSeries() *series.Series {
	v := make([]float64, 60)
	for i := range v {
		v[i] = 1.5
	}
	return series.New("flat", "K", series.Annual, 1960, v)
}

func TestPeriodMeanBasics(t *testing.T) {
	st, err := PeriodMean(flatSeries(), Period{"1970", "1979"}, "")
	if err != nil || st.Mean != 1.5 || st.SE != 0 || st.N != 10 || st.From != "1970" || st.To != "1979" || !st.Covered {
		t.Fatalf("flat: %+v %v", st, err)
	}
	st, err = PeriodMean(flatSeries(), Period{"2010", "2030"}, "")
	if err != nil || st.Covered || st.N != 10 {
		t.Fatalf("partial cover: %+v %v", st, err)
	}
	// monthly: YYYY periods take whole calendar years
	v := make([]float64, 240)
	r := rand.New(rand.NewPCG(1, 1))
	for i := range v {
		v[i] = r.NormFloat64()
	}
	m := series.New("m", "K", series.Monthly, series.MonthIndex(1990, 1), v)
	st, err = PeriodMean(m, Period{"1991", "1995"}, "")
	if err != nil || st.N != 60 || st.From != "1991-01" || st.To != "1995-12" || !st.Covered {
		t.Fatalf("monthly: %+v %v", st, err)
	}
	var s float64
	for _, x := range v[12:72] {
		s += x
	}
	if math.Abs(st.Mean-s/60) > 1e-12 {
		t.Errorf("mean %g want %g", st.Mean, s/60)
	}
	for _, p := range []Period{{"", "1995"}, {"1995", "1990"}, {"x", "1995"}, {"1991", "1991-02"}, {"1800", "1850"}} {
		if _, err := PeriodMean(m, p, ""); err == nil {
			t.Errorf("%v: no error", p)
		}
	}
	// a smooth 16-year cycle seen for 10 years (like the slow wiggles of an
	// annual forcing series): strongly autocorrelated, refused under ar1,
	// saying why; white noise and no sampling uncertainty are choices
	ar := make([]float64, 10)
	for i := range ar {
		ar[i] = math.Sin(2 * math.Pi * float64(i) / 16)
	}
	arS := series.New("ar", "W m-2", series.Annual, 2000, ar)
	if _, err := PeriodMean(arS, Period{"2000", "2009"}, ""); err == nil || !strings.Contains(err.Error(), "n_e") {
		t.Errorf("short autocorrelated period: %v", err)
	}
	w, err := PeriodMean(arS, Period{"2000", "2009"}, "white")
	if err != nil || !(w.SE > 0) || w.NEff != 10 {
		t.Errorf("white: %+v %v", w, err)
	}
	z, err := PeriodMean(arS, Period{"2000", "2009"}, "none")
	if err != nil || z.SE != 0 || z.Mean != w.Mean {
		t.Errorf("none: %+v %v", z, err)
	}
	if _, err := PeriodMean(arS, Period{"2000", "2009"}, "red"); err == nil {
		t.Error("unknown sampling model: no error")
	}
}

// Coverage (a property of the documented SE): for a linear trend plus
// AR(1) noise (phi 0.5, monthly, 10 years), the interval mean +- 1.96 SE
// covers the true mean of the trend line over the period in about 95 % of
// simulations (Monte Carlo; 1000 runs: a band of 0.91 to 0.98).
func TestPeriodMeanCoverage(t *testing.T) {
	r := rand.New(rand.NewPCG(77, 1))
	const sims, n, phiAR = 1000, 120, 0.5
	hit := 0
	for range sims {
		v := make([]float64, n)
		e := r.NormFloat64() / math.Sqrt(1-phiAR*phiAR)
		for i := range v {
			e = phiAR*e + r.NormFloat64()
			v[i] = 0.3 + 0.002*float64(i) + 0.2*e
		}
		s := series.New("x", "K", series.Monthly, series.MonthIndex(2000, 1), v)
		st, err := PeriodMean(s, Period{"2000", "2009"}, "")
		if err != nil {
			t.Fatal(err)
		}
		truth := 0.3 + 0.002*float64(n-1)/2
		if math.Abs(st.Mean-truth) <= 1.96*st.SE {
			hit++
		}
	}
	if c := float64(hit) / sims; c < 0.91 || c > 0.98 {
		t.Errorf("coverage %.3f, want about 0.95", c)
	}
}

// A consistent synthetic world: N = F - lambda T at every step (noise
// included), so the energy budget gives ECS = F2x / lambda exactly for
// every final period, whatever the noise.
func synthWorld(seed uint64) (T, F, N *series.Series) {
	const lambda = 1.3
	r := rand.New(rand.NewPCG(seed, 2))
	n := 2020 - 1850 + 1
	tv, fv, nv := make([]float64, n), make([]float64, n), make([]float64, n)
	for i := range n {
		x := float64(i)
		fv[i] = 0.00012*x*x + 0.1*math.Sin(x/1.7) + 0.05*r.NormFloat64()
		tv[i] = 0.00006*x*x + 0.08*r.NormFloat64()
		nv[i] = fv[i] - lambda*tv[i]
	}
	return series.New("T", "K", series.Annual, 1850, tv), series.New("F", "W m-2", series.Annual, 1850, fv), series.New("N", "W m-2", series.Annual, 1850, nv)
}

func TestSeriesInputsAndSweep(t *testing.T) {
	T, F, N := synthWorld(4)
	f2x := Normal(3.9, 0.2)
	in := Inputs{Base: Period{"1850", "1900"}, Final: Period{"2011", "2020"},
		DT: Quantity{Series: T}, DF: []Quantity{{Series: F, Sampling: "none"}}, DN: Quantity{Series: N, Sampling: "none"}, F2x: &f2x}
	rs, err := in.Resolve()
	if err != nil {
		t.Fatal(err)
	}
	bT, _ := PeriodMean(T, in.Base, "")
	fT, _ := PeriodMean(T, in.Final, "")
	if rs[0].Dists[0].Dist.Mean != fT.Mean-bT.Mean || math.Abs(rs[0].SD-math.Hypot(fT.SE, bT.SE)) > 1e-15 || rs[0].Base == nil || rs[0].Final == nil {
		t.Fatalf("dT resolved %+v", rs[0])
	}
	if rs[1].SD != 0 || rs[2].SD != 0 {
		t.Fatalf("sampling none: dF SD %g, dN SD %g", rs[1].SD, rs[2].SD)
	}
	r, err := Sensitivity(in, MCOptions{Draws: 20000, Seed: 8})
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(r.ECS.Central-3.9/1.3) > 1e-9 {
		t.Errorf("central ECS %g, want %g", r.ECS.Central, 3.9/1.3)
	}
	var calls, total int
	sw, err := Sweep(in, SweepOptions{Draws: 20000, Seed: 8, Progress: func(d, tot int) { calls, total = d, tot }})
	if err != nil {
		t.Fatal(err)
	}
	// auto range: final periods of 10 years from 1901-1910 to 2011-2020
	if sw.FinalYears != 10 || len(sw.Points) != 111 || sw.Points[0].EndYear != 1910 || sw.Points[110].EndYear != 2020 || calls != 111 || total != 111 {
		t.Fatalf("sweep: %d points, first %d, progress %d/%d", len(sw.Points), sw.Points[0].EndYear, calls, total)
	}
	for _, p := range sw.Points {
		if p.Error != "" {
			t.Errorf("%d: %s", p.EndYear, p.Error)
			continue
		}
		if math.Abs(p.ECS.Central-3.0) > 1e-9 || p.ECS.Histogram != nil {
			t.Errorf("%d: central ECS %g", p.EndYear, p.ECS.Central)
		}
	}
	// the sweep's last point is the full Monte Carlo of the same final
	// period with the same seed and draws: the same standard variates
	last := sw.Points[110]
	if last.ECS.Median != r.ECS.Median || last.TCR.P95 != r.TCR.P95 || last.NonpositiveFraction != r.NonpositiveFraction {
		t.Errorf("sweep point %+v vs Monte Carlo %+v", last.ECS, r.ECS)
	}
	// explicit range and length
	sw, err = Sweep(in, SweepOptions{FinalYears: 15, FirstEnd: 1990, LastEnd: 1999, Draws: 500})
	if err != nil || len(sw.Points) != 10 || sw.Points[0].Final != (Period{"1976", "1990"}) {
		t.Fatalf("explicit sweep: %v %+v", err, sw)
	}
	// typed inputs only: nothing to sweep
	d := Normal(1, 0.1)
	if _, err := Sweep(Inputs{Base: in.Base, Final: in.Final, DT: typed(d), DF: []Quantity{typed(d)}, DN: typed(d)}, SweepOptions{}); err == nil {
		t.Error("typed-only sweep: no error")
	}
	if _, err := Sweep(in, SweepOptions{FirstEnd: 2000, LastEnd: 1990}); err == nil {
		t.Error("empty range: no error")
	}
	// a final period that cannot be evaluated is marked, not fatal
	sw, err = Sweep(in, SweepOptions{FinalYears: 10, FirstEnd: 2019, LastEnd: 2030, Draws: 200})
	if err != nil || sw.Points[0].Error != "" || sw.Points[len(sw.Points)-1].Error == "" || len(sw.Warnings) == 0 {
		t.Errorf("sweep past the data: %v %+v", err, sw)
	}
}

// dN from a heat-content series: the final-period heating rate (the
// energy-imbalance estimate) minus a typed base-period value.
func TestHeatRateInput(t *testing.T) {
	v := noisyLine(50, 1971, 10, 3, 9)
	h := series.New("ohc", "ZJ", series.Annual, 1971, v)
	T, F, _ := synthWorld(5)
	base := Normal(0.15, 0.08)
	in := Inputs{Base: Period{"1850", "1900"}, Final: Period{"2006", "2020"},
		DT: Quantity{Series: T}, DF: []Quantity{{Series: F}},
		DN: Quantity{Series: h, Heat: &HeatOptions{OceanFraction: 0.9, Noise: trend.NoiseAR1}, Base: &base}}
	rs, err := in.Resolve()
	if err != nil {
		t.Fatal(err)
	}
	dn := rs[2]
	hr, _ := Heat(h, HeatOptions{From: "2006", To: "2020", OceanFraction: 0.9})
	if dn.FinalRate == nil || math.Abs(dn.Center-(*hr.ImbalanceWPerM2-0.15)) > 1e-12 ||
		math.Abs(dn.SD-math.Hypot(*hr.ImbalanceStderrWPerM2, 0.08)) > 1e-12 || len(dn.Dists) != 2 {
		t.Fatalf("dN %+v", dn)
	}
	// without a typed base value the series must reach the base period
	in.DN.Base = nil
	if _, err := in.Resolve(); err == nil || !strings.Contains(err.Error(), "base period") {
		t.Errorf("heat series without a base value: %v", err)
	}
}
