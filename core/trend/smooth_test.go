package trend

import (
	"encoding/json"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// smoothRef is testdata/ref/smooth_ref.json, computed with R 4.2 by
// testdata/ref/smooth_ref.R (lowess() and stats::filter() on R's nhtemp,
// cars, LakeHuron and co2 datasets).
type smoothRef struct {
	Lowess []struct {
		Name  string    `json:"name"`
		Call  string    `json:"call"`
		F     float64   `json:"f"`
		Iter  int       `json:"iter"`
		Delta float64   `json:"delta"`
		X     []float64 `json:"x"`
		Y     []float64 `json:"y"`
		Fit   []float64 `json:"fit"`
	} `json:"lowess"`
	RunningMean []struct {
		Name   string     `json:"name"`
		Call   string     `json:"call"`
		Window int        `json:"window"`
		Y      []float64  `json:"y"`
		Fit    []*float64 `json:"fit"` // null where R's filter gives NA
	} `json:"running_mean"`
}

func smoothLoadRef(t *testing.T) *smoothRef {
	t.Helper()
	b, err := os.ReadFile(filepath.Join("..", "..", "testdata", "ref", "smooth_ref.json"))
	if err != nil {
		t.Fatalf("reading reference values: %v", err)
	}
	var r smoothRef
	if err := json.Unmarshal(b, &r); err != nil {
		t.Fatalf("parsing smooth_ref.json: %v", err)
	}
	return &r
}

// LOWESS against R's lowess(), computed with R 4.2 by
// testdata/ref/smooth_ref.R: nhtemp (f = 2/3 and 0.3, with and without
// robustness iterations), cars (ties in x; delta 0 and R's default
// delta = 1 % of the range) and co2 monthly (f = 0.1, default delta). Same
// algorithm, so agreement to rounding: 1e-9 relative.
func TestLowessReference(t *testing.T) {
	ref := smoothLoadRef(t)
	if len(ref.Lowess) < 6 {
		t.Fatalf("only %d lowess cases in the reference", len(ref.Lowess))
	}
	for _, c := range ref.Lowess {
		iter := c.Iter
		if iter == 0 {
			iter = -1 // none
		}
		got, err := Lowess(c.X, c.Y, LowessOptions{Span: c.F, Iter: iter, Delta: c.Delta})
		if err != nil {
			t.Fatal(err)
		}
		worst := 0.0
		for i := range got {
			d := math.Abs(got[i]-c.Fit[i]) / math.Max(math.Abs(c.Fit[i]), 1)
			worst = math.Max(worst, d)
		}
		if worst > 1e-9 {
			t.Errorf("%s (%s): largest relative difference %.3g", c.Name, c.Call, worst)
		}
	}
}

// Running mean against R's stats::filter(..., sides = 2), computed with
// R 4.2 by testdata/ref/smooth_ref.R: odd windows on nhtemp (5) and
// LakeHuron (11), the centred 2 x 12 average on monthly co2. NaN where
// R gives NA.
func TestRunningMeanReference(t *testing.T) {
	ref := smoothLoadRef(t)
	for _, c := range ref.RunningMean {
		got, err := RunningMean(c.Y, c.Window)
		if err != nil {
			t.Fatal(err)
		}
		for i, w := range c.Fit {
			switch {
			case w == nil && !math.IsNaN(got[i]):
				t.Errorf("%s: step %d = %v, R gives NA", c.Name, i, got[i])
			case w != nil && math.Abs(got[i]-*w) > 1e-12*math.Abs(*w):
				t.Errorf("%s: step %d = %.15g, R %.15g", c.Name, i, got[i], *w)
			}
		}
	}
}

// The missing-value rule: the mean of the values present when they carry
// at least half the window's weight, else NaN; edges NaN (hand-worked).
func TestRunningMeanMissing(t *testing.T) {
	nan := math.NaN()
	y := []float64{1, 2, nan, 4, nan, nan, 7, 8, 9}
	got, err := RunningMean(y, 3)
	if err != nil {
		t.Fatal(err)
	}
	// i=1: (1+2)/2 (2 of 3 present) = 1.5; i=2: (2+4)/2 = 3;
	// i=3: 4 alone (1 of 3) -> NaN; i=4: 4 alone -> NaN; i=5: 7 alone -> NaN;
	// i=6: 7.5; i=7: 8.
	want := []float64{nan, 1.5, 3, nan, nan, nan, 7.5, 8, nan}
	for i := range want {
		if math.IsNaN(want[i]) != math.IsNaN(got[i]) || !math.IsNaN(want[i]) && math.Abs(got[i]-want[i]) > 1e-15 {
			t.Errorf("window 3: step %d = %v, expected %v", i, got[i], want[i])
		}
	}
	// Even window 2: weights 1/4, 1/2, 1/4. i=1: (0.25*1 + 0.5*2)/0.75;
	// i=2: y[2] missing, 0.25*2 + 0.25*4 carry 0.5 of 1 -> (0.5+1)/0.5 = 3.
	got, _ = RunningMean(y, 2)
	if math.Abs(got[1]-(0.25+1)/0.75) > 1e-15 || math.Abs(got[2]-3) > 1e-15 || !math.IsNaN(got[0]) || !math.IsNaN(got[8]) {
		t.Errorf("window 2: %v", got)
	}
	if _, err := RunningMean(y, 0); err == nil || !strings.Contains(err.Error(), "at least 1") {
		t.Errorf("window 0: %v", err)
	}
	if got, _ := RunningMean(y, 1); got[0] != 1 || !math.IsNaN(got[2]) {
		t.Errorf("window 1 is the identity: %v", got)
	}
	if got, _ := RunningMean(y[:3], 5); !math.IsNaN(got[1]) {
		t.Errorf("window longer than the series: %v", got)
	}
}

// Properties of LOWESS: a straight line is reproduced exactly; the result
// is aligned with unsorted input and NaN where a value is missing; a single
// wild outlier barely moves the robust smooth.
func TestLowessProperties(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	n := 40
	x := make([]float64, n)
	y := make([]float64, n)
	for i := range x {
		x[i] = 1980 + float64(i)*0.25
		y[i] = 0.02*(x[i]-1980) + 3
	}
	fit, err := Lowess(x, y, LowessOptions{Span: 0.3})
	if err != nil {
		t.Fatal(err)
	}
	for i := range fit {
		if math.Abs(fit[i]-y[i]) > 1e-9 {
			t.Fatalf("line not reproduced at %d: %v vs %v", i, fit[i], y[i])
		}
	}
	// Shuffle and add a missing value.
	for i := range y {
		y[i] += 0.1 * rng.NormFloat64()
	}
	base, _ := Lowess(x, y, LowessOptions{Span: 0.5})
	perm := rng.Perm(n)
	xp := make([]float64, n)
	yp := make([]float64, n)
	for k, i := range perm {
		xp[k], yp[k] = x[i], y[i]
	}
	sh, _ := Lowess(xp, yp, LowessOptions{Span: 0.5})
	for k, i := range perm {
		if math.Abs(sh[k]-base[i]) > 1e-12 {
			t.Fatalf("shuffled input: point %d smooth %v, sorted %v", i, sh[k], base[i])
		}
	}
	yp[0] = math.NaN()
	ms, _ := Lowess(xp, yp, LowessOptions{Span: 0.5})
	if !math.IsNaN(ms[0]) || math.IsNaN(ms[1]) {
		t.Errorf("missing value: %v %v", ms[0], ms[1])
	}
	yo := append([]float64{}, y...)
	yo[20] += 50
	rob, _ := Lowess(x, yo, LowessOptions{Span: 0.5})
	plain, _ := Lowess(x, yo, LowessOptions{Span: 0.5, Iter: -1})
	if d := math.Abs(rob[20] - base[20]); d > 0.1 {
		t.Errorf("robust smooth moved by %v at the outlier", d)
	}
	if d := math.Abs(plain[20] - base[20]); d < 1 {
		t.Errorf("non-robust smooth moved only %v: the outlier test is too weak", d)
	}
	for _, o := range []LowessOptions{{Span: 1.5}, {Span: -0.1}, {Delta: -1}} {
		if _, err := Lowess(x, y, o); err == nil {
			t.Errorf("options %+v accepted", o)
		}
	}
	if _, err := Lowess(x, y[:3], LowessOptions{}); err == nil {
		t.Errorf("length mismatch accepted")
	}
}

func BenchmarkLowessMonthly900(b *testing.B) {
	rng := rand.New(rand.NewPCG(1, 1))
	n := 900
	x := make([]float64, n)
	y := make([]float64, n)
	for i := range x {
		x[i] = 1950 + (float64(i)+0.5)/12
		y[i] = rng.NormFloat64()
	}
	for b.Loop() {
		if _, err := Lowess(x, y, LowessOptions{Span: 0.2}); err != nil {
			b.Fatal(err)
		}
	}
}
