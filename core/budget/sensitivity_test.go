package budget

import (
	"context"
	"encoding/json"
	"errors"
	"math"
	"os"
	"strings"
	"testing"
)

func typed(d Dist) Quantity { return Quantity{Dist: &d} }

func normalInputs(dT, dF, dN, f2x [2]float64) Inputs {
	f := Normal(f2x[0], f2x[1])
	return Inputs{
		DT: typed(Normal(dT[0], dT[1])), DF: []Quantity{typed(Normal(dF[0], dF[1]))},
		DN: typed(Normal(dN[0], dN[1])), F2x: &f,
	}
}

// The formulas on published central inputs.
func TestPublishedCentralEstimates(t *testing.T) {
	cases := []struct {
		name            string
		dT, dF, dN, f2x float64
		ecs, tcr, tol   float64
	}{
		// Lewis and Curry 2018 (J. Climate 31, 6051), base 1869-1882, final
		// 2007-2016: dT 0.80 K, dF 2.52 W m-2, dN 0.50 W m-2, F2x 3.80 W m-2
		// (inputs from memory); their ECS median 1.50 K and TCR 1.20 K as
		// ../shared/CHECKS.md gives them. Their numbers are Monte Carlo
		// medians given to 0.01 K; the central formula lands within 0.01 K.
		{"Lewis and Curry 2018", 0.80, 2.52, 0.50, 3.80, 1.50, 1.20, 0.01},
		// Otto et al. 2013 (Nature Geosci. 6, 415), the 2000s against
		// 1860-1879: dT 0.75 K, dF 1.95 W m-2, dN 0.65 W m-2, F2x 3.44 W m-2;
		// ECS 2.0 K, TCR 1.3 K (all from memory).
		// Given to 0.1 K: the central formula lands within 0.05 K.
		{"Otto et al. 2013", 0.75, 1.95, 0.65, 3.44, 2.0, 1.3, 0.05},
	}
	for _, c := range cases {
		in := normalInputs([2]float64{c.dT, 0}, [2]float64{c.dF, 0}, [2]float64{c.dN, 0}, [2]float64{c.f2x, 0})
		r, err := Sensitivity(in, MCOptions{Draws: 1000})
		if err != nil {
			t.Fatal(err)
		}
		if math.Abs(r.ECS.Central-c.ecs) > c.tol || math.Abs(r.TCR.Central-c.tcr) > c.tol {
			t.Errorf("%s: ECS %.4f TCR %.4f, published %g and %g", c.name, r.ECS.Central, r.TCR.Central, c.ecs, c.tcr)
		}
		// with no spread every draw is the central estimate
		if r.ECS.Median != r.ECS.Central || r.TCR.P95 != r.TCR.Central || math.Abs(r.ECS.Mean-r.ECS.Central) > 1e-12 {
			t.Errorf("%s: zero spreads: %+v", c.name, r.ECS)
		}
	}
}

// Monte Carlo: as the spreads shrink, the median tends to the central
// estimate (F2x dT/(dF - dN) at the central inputs) and the 5-95 % range
// closes on it.
func TestMedianTendsToCentral(t *testing.T) {
	prev := math.Inf(1)
	for _, k := range []float64{1, 0.1, 0.01, 0.001} {
		aer, _ := Range90(DistLognormal, -1.6*(1+k), -1.6/(1+k))
		in := Inputs{
			DT:  typed(Normal(1.1, 0.1*k)),
			DF:  []Quantity{typed(Normal(3.2, 0.3*k)), {Name: "aerosol", Dist: &aer}},
			DN:  typed(Uniform(0.6-0.2*k, 0.6+0.2*k)),
			F2x: &Dist{Kind: DistNormal, Mean: 3.93, SD: 0.29 * k},
		}
		r, err := Sensitivity(in, MCOptions{Draws: 20000, Seed: 5})
		if err != nil {
			t.Fatal(err)
		}
		want := 3.93 * 1.1 / (3.2 - 1.6 - 0.6)
		if math.Abs(r.ECS.Central-want) > 1e-12 {
			t.Fatalf("central %g, want %g", r.ECS.Central, want)
		}
		dev := math.Abs(r.ECS.Median - r.ECS.Central)
		width := r.ECS.P95 - r.ECS.P05
		if k <= 0.01 && dev > 0.02*k*want*10 {
			t.Errorf("spread x%g: median %g, central %g", k, r.ECS.Median, r.ECS.Central)
		}
		if width > prev || !(r.ECS.P05 <= r.ECS.Median && r.ECS.Median <= r.ECS.P95) {
			t.Errorf("spread x%g: 5-95 %% width %g (previous %g)", k, width, prev)
		}
		prev = width
	}
	if prev > 0.01*3.93*1.1 {
		t.Errorf("the 5-95 %% range did not close: %g", prev)
	}
}

type refCase struct {
	Name, Kind      string
	F2x, DT, DF, DN struct{ Mean, SD float64 }
	Central         float64 `json:"central"`
	Unbounded       float64 `json:"unbounded_fraction"`
	Probs           []float64
	Quantiles       []*float64
	CDFAt           []float64 `json:"cdf_at"`
	CDF             []float64 `json:"cdf"`
}

type budgetRef struct {
	RatioCases []refCase `json:"ratio_cases"`
	Gregory    struct {
		T, N, Tm         []float64
		Times            []float64 `json:"t"`
		Intercept, Slope float64
		SEIntercept      float64 `json:"se_intercept"`
		SESlope          float64 `json:"se_slope"`
		DF, Sigma        float64
		ACF              []float64 `json:"acf_resid"`
	}
}

func loadRef(t *testing.T) budgetRef {
	b, err := os.ReadFile("../../testdata/ref/budget_ref.json")
	if err != nil {
		t.Fatal(err)
	}
	var r budgetRef
	if err := json.Unmarshal(b, &r); err != nil {
		t.Fatal(err)
	}
	if len(r.RatioCases) != 5 || len(r.Gregory.T) != 60 {
		t.Fatalf("budget_ref.json: %d cases, %d Gregory points", len(r.RatioCases), len(r.Gregory.T))
	}
	return r
}

// simpson integrates f over [a, b] with m (even) intervals.
func simpson(f func(float64) float64, a, b float64, m int) float64 {
	h := (b - a) / float64(m)
	s := f(a) + f(b)
	for i := 1; i < m; i++ {
		w := 2.0
		if i%2 == 1 {
			w = 4
		}
		s += w * f(a+float64(i)*h)
	}
	return s * h / 3
}

func phi(x float64) float64 { return 0.5 * math.Erfc(-x/math.Sqrt2) }

// ratioCDF is our own quadrature of P(S <= r) for S = F2x dT / Y with
// independent normals and S = +Inf when Y <= 0:
// int_0^Inf pdf_Y(y) int pdf_F(f) Phi((r y / f - mT)/sT) df dy.
func ratioCDF(c refCase, r float64) float64 {
	mY, sY := c.DF.Mean-c.DN.Mean, math.Hypot(c.DF.SD, c.DN.SD)
	if c.Kind == "tcr" {
		mY, sY = c.DF.Mean, c.DF.SD
	}
	inner := func(f float64) float64 {
		g := func(y float64) float64 {
			z := (y - mY) / sY
			return math.Exp(-z*z/2) / (sY * math.Sqrt(2*math.Pi)) * phi((r*y/f-c.DT.Mean)/c.DT.SD)
		}
		return simpson(g, math.Max(0, mY-12*sY), mY+12*sY, 1200)
	}
	if c.F2x.SD == 0 {
		return inner(c.F2x.Mean)
	}
	outer := func(f float64) float64 {
		z := (f - c.F2x.Mean) / c.F2x.SD
		return math.Exp(-z*z/2) / (c.F2x.SD * math.Sqrt(2*math.Pi)) * inner(f)
	}
	return simpson(outer, c.F2x.Mean-8*c.F2x.SD, c.F2x.Mean+8*c.F2x.SD, 120)
}

// Percentiles of the Monte Carlo against the exact distribution of the
// ratio for normal inputs: quantiles computed with R 4.2 by
// testdata/ref/budget_ref.R (integrate + uniroot), and our own Simpson
// quadrature of the CDF, which must agree with R first. The Monte Carlo
// percentile q_p is then checked in probability space:
// |CDF(q_p) - p| < 4.5 sqrt(p (1 - p) / n).
func TestPercentilesAgainstRatioDistribution(t *testing.T) {
	ref := loadRef(t)
	const n = 200000
	for _, c := range ref.RatioCases {
		for i, x := range c.CDFAt {
			if got := ratioCDF(c, x); math.Abs(got-c.CDF[i]) > 2e-7 {
				t.Errorf("%s %s: our quadrature CDF(%g) = %.9f, R %.9f", c.Name, c.Kind, x, got, c.CDF[i])
			}
		}
		for i, q := range c.Quantiles {
			if q != nil {
				if got := ratioCDF(c, *q); math.Abs(got-c.Probs[i]) > 2e-7 {
					t.Errorf("%s %s: our CDF at R's q%g = %.9f", c.Name, c.Kind, c.Probs[i], got)
				}
			}
		}
		in := normalInputs([2]float64{c.DT.Mean, c.DT.SD}, [2]float64{c.DF.Mean, c.DF.SD}, [2]float64{c.DN.Mean, c.DN.SD}, [2]float64{c.F2x.Mean, c.F2x.SD})
		r, err := Sensitivity(in, MCOptions{Draws: n, Seed: 2024})
		if err != nil {
			t.Fatal(err)
		}
		s, frac := r.ECS, r.NonpositiveFraction
		if c.Kind == "tcr" {
			s, frac = r.TCR, r.NonpositiveForcingFraction
		}
		if math.Abs(s.Central-c.Central) > 1e-12 {
			t.Errorf("%s %s: central %g, R %g", c.Name, c.Kind, s.Central, c.Central)
		}
		if math.Abs(frac-c.Unbounded) > 4.5*math.Sqrt(c.Unbounded*(1-c.Unbounded)/n)+1e-5 {
			t.Errorf("%s %s: unbounded fraction %g, exact %g", c.Name, c.Kind, frac, c.Unbounded)
		}
		got := []float64{s.P05, s.P17, s.Median, s.P83, s.P95}
		for i, p := range c.Probs {
			if c.Quantiles[i] == nil {
				if !math.IsInf(got[i], 1) {
					t.Errorf("%s %s: q%g = %g, want +Inf (R: beyond the bounded mass)", c.Name, c.Kind, p, got[i])
				}
				continue
			}
			tol := 4.5 * math.Sqrt(p*(1-p)/n)
			if cp := ratioCDF(c, got[i]); math.Abs(cp-p) > tol {
				t.Errorf("%s %s: Monte Carlo q%g = %.4f (R %.4f): CDF there %.5f, want %g +- %.5f", c.Name, c.Kind, p, got[i], *c.Quantiles[i], cp, p, tol)
			}
		}
	}
}

// Draws with dF - dN <= 0 are kept at +Inf: reported, never dropped; the
// JSON writes null for the unbounded numbers.
func TestUnboundedDraws(t *testing.T) {
	in := normalInputs([2]float64{0.9, 0.12}, [2]float64{1.2, 0.5}, [2]float64{0.6, 0.2}, [2]float64{3.9, 0})
	r, err := Sensitivity(in, MCOptions{Draws: 50000, Seed: 1})
	if err != nil {
		t.Fatal(err)
	}
	if !(r.NonpositiveFraction > 0.1) || r.ECS.UnboundedFraction != r.NonpositiveFraction ||
		!math.IsInf(r.ECS.P95, 1) || !math.IsInf(r.ECS.Mean, 1) || math.IsInf(r.ECS.P83, 1) {
		t.Fatalf("unbounded: %+v fraction %g", r.ECS, r.NonpositiveFraction)
	}
	h := r.ECS.Histogram
	sum := h.Below + h.Above + h.Unbounded
	for _, c := range h.Counts {
		sum += c
	}
	if sum != r.Draws || h.Total != r.Draws || float64(h.Unbounded)/float64(r.Draws) != r.NonpositiveFraction {
		t.Errorf("histogram counts %d of %d draws, %d unbounded", sum, r.Draws, h.Unbounded)
	}
	if !hasWarning(r.Warnings, "dF - dN <= 0") {
		t.Errorf("warnings %v", r.Warnings)
	}
	b, err := json.Marshal(r)
	if err != nil {
		t.Fatal(err)
	}
	var m map[string]map[string]any
	_ = json.Unmarshal(b, &m)
	if v, ok := m["ecs"]["p95"]; !ok || v != nil {
		t.Errorf("ecs.p95 in JSON: %v (present %v), want null", v, ok)
	}
	for _, k := range []string{"central", "median", "mean", "p05", "p17", "p83", "p95"} {
		if _, ok := m["tcr"][k]; !ok {
			t.Errorf("tcr.%s missing from the JSON", k)
		}
	}
	var back SensitivityResult
	if err := json.Unmarshal(b, &back); err != nil || !math.IsInf(back.ECS.P95, 1) || back.ECS.Median != r.ECS.Median {
		t.Errorf("round trip: %+v %v", back.ECS, err)
	}
	// central inputs with dF <= dN give an unbounded central estimate
	in = normalInputs([2]float64{0.9, 0.1}, [2]float64{0.5, 0.1}, [2]float64{0.6, 0.1}, [2]float64{3.9, 0})
	r, _ = Sensitivity(in, MCOptions{Draws: 1000})
	if !math.IsInf(r.ECS.Central, 1) || math.IsInf(r.TCR.Central, 1) {
		t.Errorf("central with dF < dN: ECS %g TCR %g", r.ECS.Central, r.TCR.Central)
	}
}

// Same seed, same numbers; another seed, other draws; appending a forcing
// component leaves every other input's draws alone (own PCG streams).
func TestSeedsAndStreams(t *testing.T) {
	in := normalInputs([2]float64{0.8, 0.1}, [2]float64{2.5, 0.4}, [2]float64{0.5, 0.15}, [2]float64{3.93, 0.29})
	a, _ := Sensitivity(in, MCOptions{Draws: 30000, Seed: 9})
	b, _ := Sensitivity(in, MCOptions{Draws: 30000, Seed: 9})
	c, _ := Sensitivity(in, MCOptions{Draws: 30000, Seed: 10})
	if a.ECS != b.ECS && a.ECS.Median != b.ECS.Median {
		t.Errorf("same seed: %v vs %v", a.ECS.Median, b.ECS.Median)
	}
	if a.ECS.Median == c.ECS.Median {
		t.Errorf("other seed: same median %v", a.ECS.Median)
	}
	zero := Normal(0, 0)
	in2 := in
	in2.DF = append([]Quantity{in.DF[0]}, Quantity{Name: "nothing", Dist: &zero})
	d, _ := Sensitivity(in2, MCOptions{Draws: 30000, Seed: 9})
	if d.ECS.Median != a.ECS.Median || d.TCR.P95 != a.TCR.P95 {
		t.Errorf("a zero component changed the draws: %v vs %v", d.ECS.Median, a.ECS.Median)
	}
}

// Components of the forcing are summed per draw: the dF preview's mean and
// SD are the sums of the components' means and variances, and the
// sampled dF histogram agrees with them.
func TestForcingComponents(t *testing.T) {
	aer, _ := Range90(DistLognormal, -2.0, -0.5)
	in := Inputs{
		DT:  typed(Normal(1.0, 0.1)),
		DF:  []Quantity{{Name: "greenhouse", Dist: &Dist{Kind: DistNormal, Mean: 3.5, SD: 0.3}}, {Name: "aerosol", Dist: &aer}},
		DN:  typed(Normal(0.6, 0.1)),
		F2x: &Dist{Kind: DistNormal, Mean: 3.93, SD: 0},
	}
	r, err := Sensitivity(in, MCOptions{Draws: 100000, Seed: 3})
	if err != nil {
		t.Fatal(err)
	}
	df := r.Inputs[1]
	if df.Role != "dF" || len(df.Parts) != 2 || math.Abs(df.Mean-(3.5+aer.MeanValue())) > 1e-12 ||
		math.Abs(df.SD-math.Hypot(0.3, aer.StdDev())) > 1e-12 || math.Abs(df.Center-(3.5+aer.Median)) > 1e-12 {
		t.Fatalf("dF summary %+v", df)
	}
	h := df.Histogram
	var s, n float64
	for i, c := range h.Counts {
		s += float64(c) * (h.Lo + (float64(i)+0.5)*h.Width)
		n += float64(c)
	}
	// the mean +- 4 SD range cuts a little of the aerosol part's long tail
	if n/float64(h.Total) < 0.995 || math.Abs(s/n-df.Mean) > 0.01 {
		t.Errorf("sampled dF: mean %g of %g draws, want %g", s/n, n, df.Mean)
	}
	// the skewed aerosol part gives ECS a long upper tail
	if !(r.ECS.P95-r.ECS.Median > 1.5*(r.ECS.Median-r.ECS.P05)) {
		t.Errorf("ECS %+v: expected a long upper tail", r.ECS)
	}
}

func TestProgressAndCancel(t *testing.T) {
	in := normalInputs([2]float64{0.8, 0.1}, [2]float64{2.5, 0.4}, [2]float64{0.5, 0.15}, [2]float64{3.93, 0.29})
	var calls []int
	r, err := Sensitivity(in, MCOptions{Draws: 100000, Progress: func(done, total int) {
		if total != 100000 {
			t.Errorf("total %d", total)
		}
		calls = append(calls, done)
	}})
	if err != nil || r.Draws != 100000 {
		t.Fatal(err)
	}
	if len(calls) < 5 || calls[len(calls)-1] != 100000 {
		t.Errorf("progress calls %v", calls)
	}
	for i := 1; i < len(calls); i++ {
		if calls[i] <= calls[i-1] {
			t.Errorf("progress not increasing: %v", calls)
		}
	}
	ctx, cancel := context.WithCancel(context.Background())
	n := 0
	_, err = Sensitivity(in, MCOptions{Draws: 1000000, Context: ctx, Progress: func(int, int) {
		n++
		if n == 2 {
			cancel()
		}
	}})
	if !errors.Is(err, context.Canceled) || n != 2 {
		t.Errorf("cancel: %v after %d chunks", err, n)
	}
}

func TestSensitivityRefusals(t *testing.T) {
	d := Normal(1, 0.1)
	bad := Dist{Kind: "cauchy"}
	neg := Normal(-3.9, 0.1)
	for name, in := range map[string]Inputs{
		"no dF":      {DT: typed(d), DN: typed(d)},
		"no dT":      {DF: []Quantity{typed(d)}, DN: typed(d)},
		"bad dist":   {DT: typed(bad), DF: []Quantity{typed(d)}, DN: typed(d)},
		"both":       {DT: Quantity{Dist: &d, Series: flatSeries()}, DF: []Quantity{typed(d)}, DN: typed(d)},
		"base typed": {DT: Quantity{Dist: &d, Base: &d}, DF: []Quantity{typed(d)}, DN: typed(d)},
		"F2x < 0":    {DT: typed(d), DF: []Quantity{typed(d)}, DN: typed(d), F2x: &neg},
		"no periods": {DT: Quantity{Series: flatSeries()}, DF: []Quantity{typed(d)}, DN: typed(d)},
	} {
		if _, err := Sensitivity(in, MCOptions{Draws: 100}); err == nil {
			t.Errorf("%s: no error", name)
		}
	}
	in := normalInputs([2]float64{1, 0.1}, [2]float64{2, 0.1}, [2]float64{0.5, 0.1}, [2]float64{3.9, 0.1})
	for _, o := range []MCOptions{{Draws: 5}, {Draws: MaxDraws + 1}, {Draws: -3}, {Bins: -1}} {
		if _, err := Sensitivity(in, o); err == nil {
			t.Errorf("%+v: no error", o)
		}
	}
	if r, err := Sensitivity(in, MCOptions{Draws: 100}); err != nil || !strings.Contains(r.Convention, "+Inf") {
		t.Errorf("convention %v", err)
	}
}

// Extreme or degenerate typed inputs never panic: each run returns an
// error or summaries free of NaN.
func TestExtremeInputsNoPanic(t *testing.T) {
	vals := []Dist{
		Normal(1e6, 1e6), Normal(-1e6, 0), Normal(0, 0), Lognormal(-1e6, 5), Lognormal(1e-300, 5),
		Uniform(-1e6, 1e6), Uniform(3, 3), Lognormal(2, 6), Normal(1, 2e6),
	}
	ran := 0
	for i, a := range vals {
		for j, b := range vals {
			c := vals[(i+j)%len(vals)]
			f := vals[(i*7+j)%len(vals)]
			if f.Center() <= 0 {
				f = Lognormal(3.9, 5)
			}
			in := Inputs{DT: typed(a), DF: []Quantity{typed(b)}, DN: typed(c), F2x: &f}
			r, err := Sensitivity(in, MCOptions{Draws: 500, Seed: uint64(i*31 + j)})
			if err != nil {
				continue
			}
			ran++
			for _, s := range []Summary{r.ECS, r.TCR} {
				for _, v := range []float64{s.Central, s.Median, s.Mean, s.P05, s.P17, s.P83, s.P95} {
					if math.IsNaN(v) {
						t.Fatalf("inputs %v %v %v: NaN in %+v", a, b, c, s)
					}
				}
				if h := s.Histogram; h == nil || h.Total != 500 || !(h.Width > 0) {
					t.Fatalf("inputs %v %v %v: histogram %+v", a, b, c, h)
				}
			}
		}
	}
	if ran < 30 {
		t.Errorf("only %d of %d combinations ran", ran, len(vals)*len(vals))
	}
}
