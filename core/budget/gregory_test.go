package budget

import (
	"math"
	"math/rand/v2"
	"testing"

	"heatledger/core/series"
)

// The Gregory regression's least squares and white-noise standard errors
// against R's lm(N ~ T), and the residual autocorrelations against R's acf
// (computed with R 4.2 by testdata/ref/budget_ref.R). The ar1 and arma11
// errors follow the trend engine's formulas with T in place of time.
func TestGregoryAgainstR(t *testing.T) {
	g := loadRef(t).Gregory
	first := int(math.Floor(g.Times[0]))
	nS := series.New("N", "W m-2", series.Annual, first, g.N)
	tS := series.New("T", "K", series.Annual, first, g.T)
	f2x := Normal(3.9, 0)
	r, err := Gregory(nS, tS, GregoryOptions{Noise: "white", F2x: &f2x})
	if err != nil {
		t.Fatal(err)
	}
	near := func(a, b float64) bool { return math.Abs(a-b) <= 1e-10*math.Max(1, math.Abs(b)) }
	if !near(r.ForcingWPerM2, g.Intercept) || !near(r.LambdaWPerM2PerK, -g.Slope) || !near(r.ForcingStderrWPerM2, g.SEIntercept) ||
		!near(r.LambdaStderrWPerM2PerK, g.SESlope) || r.DOF != g.DF || !near(r.Rho1, g.ACF[0]) || !near(r.Rho2, g.ACF[1]) {
		t.Fatalf("Gregory %+v vs R %+v", r, g)
	}
	if !near(float64(r.ECS), 3.9/(-g.Slope)) || !near(float64(r.EquilibriumWarmingK), g.Intercept/(-g.Slope)) ||
		!near(float64(r.ECSCIHigh), 3.9/r.LambdaCILowWPerM2PerK) || r.N != 60 {
		t.Errorf("ECS %v (%v to %v)", r.ECS, r.ECSCILow, r.ECSCIHigh)
	}
	ar, err := Gregory(nS, tS, GregoryOptions{F2x: &f2x}) // ar1 by default
	if err != nil {
		t.Fatal(err)
	}
	ne := 60 * (1 - g.ACF[0]) / (1 + g.ACF[0])
	if !near(ar.NEff, ne) || !near(ar.LambdaStderrWPerM2PerK, g.SESlope*math.Sqrt(58/(ne-2))) || ar.LambdaWPerM2PerK != r.LambdaWPerM2PerK {
		t.Errorf("ar1: n_e %g SE %g", ar.NEff, ar.LambdaStderrWPerM2PerK)
	}
	am, err := Gregory(nS, tS, GregoryOptions{Noise: "arma11", F2x: &f2x})
	if err != nil {
		t.Fatal(err)
	}
	nu := 1 + 2*g.ACF[0]/(1-g.ACF[1]/g.ACF[0])
	if !near(am.Nu, nu) || !near(am.LambdaStderrWPerM2PerK, g.SESlope*math.Sqrt(nu)) {
		t.Errorf("arma11: nu %g SE %g", am.Nu, am.LambdaStderrWPerM2PerK)
	}
}

// Known truth: N = F - lambda T + AR(1) noise; the ar1 intervals cover
// lambda and F in about 95 % of simulations (300 runs: 0.88 to 0.99).
func TestGregoryRecovers(t *testing.T) {
	r := rand.New(rand.NewPCG(21, 3))
	const F, lambda = 3.7, 1.1
	hitL, hitF := 0, 0
	for range 300 {
		n := 150
		tv, nv := make([]float64, n), make([]float64, n)
		e := 0.0
		for i := range n {
			tv[i] = F/lambda*(1-math.Exp(-float64(i)/20)) + 0.1*r.NormFloat64()
			e = 0.4*e + 0.3*r.NormFloat64()
			nv[i] = F - lambda*tv[i] + e
		}
		g, err := Gregory(series.New("N", "W m-2", series.Annual, 1, nv), series.New("T", "K", series.Annual, 1, tv), GregoryOptions{})
		if err != nil {
			t.Fatal(err)
		}
		if g.LambdaCILowWPerM2PerK <= lambda && lambda <= g.LambdaCIHighWPerM2PerK {
			hitL++
		}
		if g.ForcingCILowWPerM2 <= F && F <= g.ForcingCIHighWPerM2 {
			hitF++
		}
	}
	for name, h := range map[string]int{"lambda": hitL, "F": hitF} {
		if c := float64(h) / 300; c < 0.88 || c > 0.99 {
			t.Errorf("%s coverage %.3f", name, c)
		}
	}
}

func TestGregoryRefusals(t *testing.T) {
	T, _, N := synthWorld(1)
	if _, err := Gregory(N, T, GregoryOptions{Noise: "arma11-ml"}); err == nil {
		t.Error("arma11-ml: no error")
	}
	if _, err := Gregory(N, nil, GregoryOptions{}); err == nil {
		t.Error("nil T: no error")
	}
	if _, err := Gregory(N, T, GregoryOptions{From: "1850", To: "1851"}); err == nil {
		t.Error("two points: no error")
	}
	flat := flatSeries()
	if _, err := Gregory(flat, flat, GregoryOptions{}); err == nil {
		t.Error("constant T: no error")
	}
	m := series.New("m", "K", series.Monthly, 1850*12, make([]float64, 24))
	if _, err := Gregory(N, m, GregoryOptions{}); err == nil {
		t.Error("mixed resolutions: no error")
	}
	// N rising with T: lambda <= 0, ECS unbounded (JSON null)
	up := N.Clone()
	for i := range up.Values {
		up.Values[i] = T.Values[i]*0.5 + 0.01*math.Sin(float64(i))
	}
	g, err := Gregory(up, T, GregoryOptions{Noise: "white"})
	if err != nil || !math.IsInf(float64(g.ECS), 1) || len(g.Warnings) == 0 {
		t.Errorf("rising N: %v %v", g, err)
	}
	if b, _ := g.ECS.MarshalJSON(); string(b) != "null" {
		t.Errorf("unbounded ECS JSON %s", b)
	}
}
