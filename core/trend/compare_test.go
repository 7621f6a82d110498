package trend

import (
	"encoding/json"
	"math"
	"math/rand/v2"
	"os"
	"sort"
	"strings"
	"testing"

	"gonum.org/v1/gonum/stat/distuv"

	"heatledger/core/series"
)

// twRefSegmented reads the segmented entries of testdata/ref/trend_ref.json
// (computed with R 4.2 by testdata/ref/trend_ref.R).
func twRefSegmented(t *testing.T) map[string]struct {
	T, Y []float64
	Psi  float64
	Coef map[string]float64
	PPsi float64
	PRSS float64
} {
	t.Helper()
	b, err := os.ReadFile("../../testdata/ref/trend_ref.json")
	if err != nil {
		t.Fatal(err)
	}
	var r struct {
		Datasets map[string]struct {
			T         []float64 `json:"t"`
			Y         []float64 `json:"y"`
			Segmented *struct {
				Psi     float64            `json:"psi"`
				Coef    map[string]float64 `json:"coef"`
				Profile struct {
					Psi float64 `json:"psi"`
					RSS float64 `json:"rss"`
				} `json:"profile"`
			} `json:"segmented"`
		} `json:"datasets"`
	}
	if err := json.Unmarshal(b, &r); err != nil {
		t.Fatal(err)
	}
	out := map[string]struct {
		T, Y []float64
		Psi  float64
		Coef map[string]float64
		PPsi float64
		PRSS float64
	}{}
	for name, d := range r.Datasets {
		if d.Segmented == nil {
			continue
		}
		out[name] = struct {
			T, Y []float64
			Psi  float64
			Coef map[string]float64
			PPsi float64
			PRSS float64
		}{d.T, d.Y, d.Segmented.Psi, d.Segmented.Coef, d.Segmented.Profile.Psi, d.Segmented.Profile.RSS}
	}
	return out
}

func TestBrokenStickAgainstR(t *testing.T) {
	ref := twRefSegmented(t)
	if len(ref) == 0 {
		t.Fatal("no segmented entries in the reference file")
	}
	for name, d := range ref {
		// profile.rss = deviance(lm(y ~ t + pmax(t - psi, 0))) at
		// psi = profile.psi: the broken stick with the break fixed,
		// computed with R 4.2 by testdata/ref/trend_ref.R.
		bs, err := BrokenStick(d.T, d.Y, d.PPsi, Options{Noise: NoiseWhite})
		if err != nil {
			t.Fatal(err)
		}
		if twRel(bs.RSS, d.PRSS) > 1e-10 {
			t.Errorf("%s RSS at psi %.6f: %.15g, R %.15g", name, d.PPsi, bs.RSS, d.PRSS)
		}
		// segmented(lm(y ~ t), seg.Z = ~t): slope1 and U1.t at its psi
		// (R 4.2, testdata/ref/trend_ref.R). segmented stops its
		// iterations at a tolerance, so compare to 1e-6 relative.
		bs, err = BrokenStick(d.T, d.Y, d.Psi, Options{Noise: NoiseWhite})
		if err != nil {
			t.Fatal(err)
		}
		if twRel(bs.SlopeBeforePerDecade/10, d.Coef["slope1"]) > 1e-6 || twRel(bs.SlopeChangePerDecade/10, d.Coef["U1_t"]) > 1e-6 {
			t.Errorf("%s slopes %.10g, %.10g; segmented %.10g, %.10g", name, bs.SlopeBeforePerDecade/10, bs.SlopeChangePerDecade/10, d.Coef["slope1"], d.Coef["U1_t"])
		}
		if twRel(bs.Intercept-bs.SlopeBeforePerDecade/10*d.Psi, d.Coef["intercept"]) > 1e-6 {
			t.Errorf("%s intercept %.10g, segmented %.10g", name, bs.Intercept-bs.SlopeBeforePerDecade/10*d.Psi, d.Coef["intercept"])
		}
	}
}

// The white-noise SE of the slope change by independent arithmetic:
// normal equations for (1, t - tb, (t - tb)_+), the 3 x 3 inverse by
// cofactors, SE_c = sqrt(s^2 [inv]_33), s^2 = RSS / (n - 3).
func TestBrokenStickWhiteSEByHand(t *testing.T) {
	tt := []float64{1.5, 2.5, 3.5, 4.5, 5.5, 6.5, 7.5, 8.5}
	y := []float64{1.0, 1.3, 1.1, 1.6, 2.4, 3.1, 3.3, 4.2}
	tb := 4.8
	var A [3][3]float64
	var r [3]float64
	for i := range tt {
		x := [3]float64{1, tt[i] - tb, math.Max(tt[i]-tb, 0)}
		for a := 0; a < 3; a++ {
			r[a] += x[a] * y[i]
			for b := 0; b < 3; b++ {
				A[a][b] += x[a] * x[b]
			}
		}
	}
	det := A[0][0]*(A[1][1]*A[2][2]-A[1][2]*A[2][1]) - A[0][1]*(A[1][0]*A[2][2]-A[1][2]*A[2][0]) + A[0][2]*(A[1][0]*A[2][1]-A[1][1]*A[2][0])
	cof := func(i, j int) float64 { // cofactor C_ij
		var m [4]float64
		k := 0
		for a := 0; a < 3; a++ {
			for b := 0; b < 3; b++ {
				if a != i && b != j {
					m[k] = A[a][b]
					k++
				}
			}
		}
		s := 1.0
		if (i+j)%2 == 1 {
			s = -1
		}
		return s * (m[0]*m[3] - m[1]*m[2])
	}
	var inv [3][3]float64
	for i := 0; i < 3; i++ {
		for j := 0; j < 3; j++ {
			inv[i][j] = cof(j, i) / det
		}
	}
	var coef [3]float64
	for a := 0; a < 3; a++ {
		for b := 0; b < 3; b++ {
			coef[a] += inv[a][b] * r[b]
		}
	}
	var rss float64
	for i := range tt {
		e := y[i] - coef[0] - coef[1]*(tt[i]-tb) - coef[2]*math.Max(tt[i]-tb, 0)
		rss += e * e
	}
	se := math.Sqrt(rss / 5 * inv[2][2])
	bs, err := BrokenStick(tt, y, tb, Options{Noise: NoiseWhite})
	if err != nil {
		t.Fatal(err)
	}
	if twRel(bs.SlopeChangePerDecade, 10*coef[2]) > 1e-10 || twRel(bs.StderrPerDecade, 10*se) > 1e-10 {
		t.Errorf("change %.12g SE %.12g; by hand %.12g, %.12g", bs.SlopeChangePerDecade, bs.StderrPerDecade, 10*coef[2], 10*se)
	}
	p := 2 * distuv.StudentsT{Mu: 0, Sigma: 1, Nu: 5}.Survival(math.Abs(coef[2]/se))
	if math.Abs(bs.PValue-p) > 1e-12 || *bs.DOF != 5 {
		t.Errorf("p %.12g (dof %v), by hand %.12g (dof 5)", bs.PValue, *bs.DOF, p)
	}
	if _, err := BrokenStick(tt, y, 2, Options{}); err == nil || !strings.Contains(err.Error(), "at least 2 on each side") {
		t.Errorf("break with one value before it: %v", err)
	}
}

// twHinge is a monthly series 1950-2009 whose slope changes at 1980 from
// before to after (per year), plus AR(1) noise.
func twHinge(seed uint64, before, after, phi, sigma float64) ([]float64, []float64) {
	rng := rand.New(rand.NewPCG(seed, 3))
	n := 720
	tt := make([]float64, n)
	y := make([]float64, n)
	u := 0.0
	for i := range tt {
		tt[i] = 1950 + (float64(i)+0.5)/12
		u = phi*u + sigma*rng.NormFloat64()
		y[i] = before*(tt[i]-1980) + (after-before)*math.Max(tt[i]-1980, 0) + u
	}
	return tt, y
}

func TestCompareSeparateWindows(t *testing.T) {
	tt, y := twHinge(1, 0.01, 0.03, 0.6, 0.1)
	for _, noise := range []string{NoiseWhite, NoiseAR1, NoiseARMA11} {
		c, err := Compare(tt, y, Span{1950, 1979.99}, Span{1980, 2009.99}, Options{Noise: noise})
		if err != nil {
			t.Fatal(err)
		}
		a, _ := Window(tt[:360], y[:360], Options{Noise: noise})
		b, _ := Window(tt[360:], y[360:], Options{Noise: noise})
		if c.Windows[0].SlopePerDecade != a.SlopePerDecade || c.Windows[1].SlopePerDecade != b.SlopePerDecade {
			t.Errorf("%s: window trends differ from Window", noise)
		}
		if c.Windows[0].From != "1950-01" || c.Windows[1].To != "2009-12" {
			t.Errorf("%s: windows labelled %s..%s, %s..%s", noise, c.Windows[0].From, c.Windows[0].To, c.Windows[1].From, c.Windows[1].To)
		}
		d := b.SlopePerDecade - a.SlopePerDecade
		se := math.Sqrt(a.StderrPerDecade*a.StderrPerDecade + b.StderrPerDecade*b.StderrPerDecade)
		dof := math.Min(*a.DOF, *b.DOF)
		p := 2 * distuv.StudentsT{Mu: 0, Sigma: 1, Nu: dof}.Survival(math.Abs(d/se))
		if c.Overlap || c.PValue == nil || c.StderrPerDecade == nil ||
			math.Abs(c.DifferencePerDecade-d) > 1e-12 || math.Abs(*c.StderrPerDecade-se) > 1e-12 || math.Abs(*c.PValue-p) > 1e-12 {
			t.Errorf("%s: difference %g SE %v p %v; expected %g, %g, %g", noise, c.DifferencePerDecade, c.StderrPerDecade, c.PValue, d, se, p)
		}
		bs := c.BrokenStick
		if bs == nil {
			t.Fatalf("%s: no broken stick (%q)", noise, c.Warnings)
		}
		if math.Abs(bs.Break-1980) > 1e-9 {
			t.Errorf("%s: break at %v, expected 1980.0 (midway between 1979-12 and 1980-01)", noise, bs.Break)
		}
		// Known truth: the rate rises by 0.2 per decade at 1980. Within 4
		// SE under the noise models that account for the AR(1) noise (the
		// white SE is too small for it by design: about half).
		if noise != NoiseWhite && math.Abs(bs.SlopeChangePerDecade-0.2) > 4*bs.StderrPerDecade || bs.PValue > 0.01 {
			t.Errorf("%s: slope change %.3f +- %.3f (p %.2g), truth 0.2", noise, bs.SlopeChangePerDecade, bs.StderrPerDecade, bs.PValue)
		}
	}
}

func TestCompareOverlapAndML(t *testing.T) {
	tt, y := twHinge(2, 0.02, 0.02, 0.5, 0.1)
	c, err := Compare(tt, y, Span{1950, 1999.99}, Span{1980, 2009.99}, Options{Noise: NoiseARMA11})
	if err != nil {
		t.Fatal(err)
	}
	if !c.Overlap || c.PValue != nil || c.StderrPerDecade != nil {
		t.Errorf("overlapping windows: overlap %v, p %v, SE %v; expected no p-value or SE", c.Overlap, c.PValue, c.StderrPerDecade)
	}
	if !strings.Contains(strings.Join(c.Warnings, " "), "overlap (240 shared steps") {
		t.Errorf("expected the overlap warning, got %q", c.Warnings)
	}
	if c.BrokenStick == nil || math.Abs(c.BrokenStick.Break-1980) > 1e-9 {
		t.Errorf("overlap: broken stick %+v, expected a break at the later window's start (1980.0)", c.BrokenStick)
	}
	// arma11-ml: the difference test and the broken stick use the normal distribution.
	c, err = Compare(tt, y, Span{1950, 1979.99}, Span{1980, 2009.99}, Options{Noise: NoiseARMA11ML})
	if err != nil {
		t.Fatal(err)
	}
	d := c.DifferencePerDecade / *c.StderrPerDecade
	if c.DOF != nil || math.Abs(*c.PValue-2*distuv.UnitNormal.Survival(math.Abs(d))) > 1e-12 {
		t.Errorf("arma11-ml difference: dof %v p %v", c.DOF, *c.PValue)
	}
	bs := c.BrokenStick
	if bs == nil || bs.Phi == nil || bs.Theta == nil || bs.DOF != nil {
		t.Fatalf("arma11-ml broken stick %+v", bs)
	}
	// Truth: no change in rate; AR(1) phi 0.5 noise.
	if math.Abs(bs.SlopeChangePerDecade) > 4*bs.StderrPerDecade || math.Abs(*bs.Phi-0.5) > 0.2 {
		t.Errorf("arma11-ml broken stick: change %.3f +- %.3f, phi %.3f (truth 0, 0.5)", bs.SlopeChangePerDecade, bs.StderrPerDecade, *bs.Phi)
	}
}

func TestCompareJSONAndSeries(t *testing.T) {
	_, y := twHinge(3, 0.01, 0.02, 0.5, 0.1)
	s := series.New("tessary surface", "K", series.Monthly, series.MonthIndex(1950, 1), y)
	c, err := SeriesCompare(s, [2]string{"1950", "1979"}, [2]string{"1980", "2009"}, Options{Noise: NoiseAR1})
	if err != nil {
		t.Fatal(err)
	}
	if c.Windows[0].Series != "tessary surface" || c.Windows[1].From != "1980-01" || c.Windows[1].To != "2009-12" {
		t.Errorf("series windows %q %s..%s", c.Windows[0].Series, c.Windows[1].From, c.Windows[1].To)
	}
	b, err := json.Marshal(c)
	if err != nil {
		t.Fatal(err)
	}
	var m map[string]json.RawMessage
	_ = json.Unmarshal(b, &m)
	var keys []string
	for k := range m {
		keys = append(keys, k)
	}
	sort.Strings(keys)
	if strings.Join(keys, ",") != "broken_stick,difference_per_decade,p_value,stderr_per_decade,warnings,windows" {
		t.Errorf("compare JSON keys %v", keys)
	}
	var bsm map[string]any
	_ = json.Unmarshal(m["broken_stick"], &bsm)
	var bk []string
	for k := range bsm {
		bk = append(bk, k)
	}
	sort.Strings(bk)
	if strings.Join(bk, ",") != "break,p_value,slope_change_per_decade,stderr_per_decade" {
		t.Errorf("broken_stick JSON keys %v", bk)
	}
	var ws []map[string]any
	_ = json.Unmarshal(m["windows"], &ws)
	if len(ws) != 2 || ws[0]["series"] != "tessary surface" {
		t.Errorf("windows JSON %s", m["windows"])
	}
	if _, err := SeriesCompare(s, [2]string{"1930", "1940"}, [2]string{"1980", "2009"}, Options{}); err == nil {
		t.Error("window outside the series: no error")
	}
	if _, err := Compare(s.Times, s.Values, Span{1990, 1980}, Span{1980, 2009}, Options{}); err == nil || !strings.Contains(err.Error(), "window A") {
		t.Errorf("reversed window: %v", err)
	}
}
