package drivers

import (
	"bufio"
	"bytes"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"heatledger/core/linreg"
	"heatledger/core/series"
)

// NIST StRD nonlinear regression data set "ENSO" (NIST/ITL Statistical
// Reference Datasets; Kahaner, Moler and Nash 1989), copied unchanged to
// testdata/ref/nist-strd-ENSO.dat: 168 monthly values y at x = 1..168 and
// the model
//
//	y = b1 + b2 cos(2 pi x/12) + b3 sin(2 pi x/12)
//	       + b5 cos(2 pi x/b4) + b6 sin(2 pi x/b4) + b8 cos(2 pi x/b7) + b9 sin(2 pi x/b7).
//
// With the two long periods held at their certified values b4 and b7 the
// model is linear in the other seven parameters, whose least-squares values
// are then the certified ones (the certified point is the joint optimum).
// Certified values from the file (NIST StRD, ENSO.dat):
const (
	nistB1, nistB2, nistB3 = 1.0510749193e+01, 3.0762128085e+00, 5.3280138227e-01
	nistB4                 = 4.4311088700e+01
	nistB5, nistB6         = -1.6231428586e+00, 5.2554493756e-01
	nistB7                 = 2.6887614440e+01
	nistB8, nistB9         = 2.1232288488e-01, 1.4966870418e+00
	nistRSS                = 7.8853978668e+02
	nistResidualSD         = 2.2269642403e+00 // on 159 degrees of freedom (9 parameters)
)

func loadENSO(t *testing.T) (x, y []float64) {
	t.Helper()
	b, err := os.ReadFile(filepath.Join("..", "..", "testdata", "ref", "nist-strd-ENSO.dat"))
	if err != nil {
		t.Fatal(err)
	}
	sc := bufio.NewScanner(bytes.NewReader(b))
	line := 0
	for sc.Scan() {
		line++
		if line < 61 { // data on lines 61 to 228 (as the file's header says)
			continue
		}
		f := strings.Fields(sc.Text())
		if len(f) != 2 {
			t.Fatalf("line %d: %q", line, sc.Text())
		}
		yv, err1 := strconv.ParseFloat(f[0], 64)
		xv, err2 := strconv.ParseFloat(f[1], 64)
		if err1 != nil || err2 != nil {
			t.Fatalf("line %d: %q", line, sc.Text())
		}
		x, y = append(x, xv), append(y, yv)
	}
	if len(y) != 168 || x[0] != 1 || x[167] != 168 {
		t.Fatalf("read %d values", len(y))
	}
	return x, y
}

// longPeriod returns cos and sin of 2 pi x / period.
func longPeriod(x []float64, period float64) (c, s []float64) {
	c, s = make([]float64, len(x)), make([]float64, len(x))
	for i, v := range x {
		s[i], c[i] = math.Sincos(2 * math.Pi * v / period)
	}
	return
}

func relNear(got, want, rel float64) bool { return math.Abs(got-want) <= rel*math.Abs(want) }

// TestNISTENSOHarmonics checks the annual-cycle columns built by
// AnnualHarmonics (t = x/12 years, so cos(2 pi t) = cos(2 pi x/12)) in a
// linear least-squares fit against the NIST StRD ENSO certified values
// (b4, b7 held at the certified periods).
func TestNISTENSOHarmonics(t *testing.T) {
	x, y := loadENSO(t)
	tYears := make([]float64, len(x))
	for i, v := range x {
		tYears[i] = v / 12
	}
	h := AnnualHarmonics(tYears, 1)
	c4, s4 := longPeriod(x, nistB4)
	c7, s7 := longPeriod(x, nistB7)
	X, err := linreg.Design(true, h[0], h[1], c4, s4, c7, s7)
	if err != nil {
		t.Fatal(err)
	}
	fit, err := linreg.OLS(X, y)
	if err != nil {
		t.Fatal(err)
	}
	want := []float64{nistB1, nistB2, nistB3, nistB5, nistB6, nistB8, nistB9}
	for j, w := range want {
		// Certified to 11 significant digits; the linear sub-problem
		// reproduces them to ~1e-9 relative.
		if !relNear(fit.Coef[j], w, 1e-7) {
			t.Errorf("coefficient %d: %.12g, certified %.12g", j, fit.Coef[j], w)
		}
	}
	if !relNear(fit.RSS, nistRSS, 1e-9) {
		t.Errorf("RSS %.12g, certified %.12g", fit.RSS, nistRSS)
	}
	// The certified residual SD counts 9 parameters (159 degrees of freedom).
	if sd := math.Sqrt(fit.RSS / 159); !relNear(sd, nistResidualSD, 1e-9) {
		t.Errorf("residual SD on 159 dof %.12g, certified %.12g", sd, nistResidualSD)
	}
}

// TestNISTENSOEngine runs the whole engine on the same problem: the target
// on a monthly axis whose times are x/12 (the annual cycle follows the
// target's times), the two long-period pairs as drivers at lag 0, no trend
// term and one annual harmonic. Certified values: NIST StRD ENSO.dat.
func TestNISTENSOEngine(t *testing.T) {
	x, y := loadENSO(t)
	first := series.MonthIndex(2001, 1)
	target := series.New("enso", "", series.Monthly, first, y)
	for i, v := range x {
		target.Times[i] = v / 12
	}
	c4, s4 := longPeriod(x, nistB4)
	c7, s7 := longPeriod(x, nistB7)
	var ds []Driver
	for i, v := range [][]float64{c4, s4, c7, s7} {
		ds = append(ds, Driver{Series: series.New([]string{"cos44", "sin44", "cos27", "sin27"}[i], "", series.Monthly, first, v)})
	}
	h := 1
	r, err := Fit(target, ds, Options{Harmonics: &h, Trend: TrendNone, Windows: []Window{{From: "0", To: "14.1"}}})
	if err != nil {
		t.Fatal(err)
	}
	if r.N != 168 || r.Dropped != 0 || r.Search != nil {
		t.Fatalf("n %d dropped %d search %v", r.N, r.Dropped, r.Search)
	}
	got := []float64{r.Intercept.Estimate, r.Cycle[0].Cos.Estimate, r.Cycle[0].Sin.Estimate,
		r.Drivers[0].Estimate, r.Drivers[1].Estimate, r.Drivers[2].Estimate, r.Drivers[3].Estimate}
	want := []float64{nistB1, nistB2, nistB3, nistB5, nistB6, nistB8, nistB9}
	for j := range want {
		if !relNear(got[j], want[j], 1e-7) {
			t.Errorf("parameter %d: %.12g, certified %.12g", j, got[j], want[j])
		}
	}
	if !relNear(r.RSS, nistRSS, 1e-9) {
		t.Errorf("RSS %.12g, certified %.12g", r.RSS, nistRSS)
	}
	// The adjusted series is the target less the fitted cycle and the
	// (centred) long-period terms: intercept + sum_k b_k mean_k + residual.
	level := r.Fit.Coef[0]
	for _, d := range r.Drivers {
		level += d.Estimate * d.Mean
	}
	for i := range y {
		if a := r.Adjusted.Values[i]; math.Abs(a-(level+r.Residuals.Values[i])) > 1e-9 {
			t.Fatalf("adjusted[%d] = %v, level + residual = %v", i, a, level+r.Residuals.Values[i])
		}
	}
}
