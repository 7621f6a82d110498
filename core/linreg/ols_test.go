package linreg

import (
	"encoding/csv"
	"encoding/json"
	"math"
	"math/big"
	"math/rand/v2"
	"os"
	"strings"
	"testing"

	"gonum.org/v1/gonum/mat"
)

func relErr(got, want float64) float64 {
	if want == 0 {
		return math.Abs(got)
	}
	return math.Abs(got-want) / math.Abs(want)
}

// longleyNIST reads testdata/ref/longley.csv (written from R's
// datasets::longley by testdata/ref/longley.R) and rescales it to the units
// of the NIST StRD Longley file exactly (decimal strings, no rounding):
// GNP, Population and Employed x 1000, Unemployed and Armed.Forces x 10.
func longleyNIST(t *testing.T) (*mat.Dense, []float64) {
	t.Helper()
	f, err := os.Open("../../testdata/ref/longley.csv")
	if err != nil {
		t.Fatalf("open longley.csv: %v", err)
	}
	defer f.Close()
	recs, err := csv.NewReader(f).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	want := []string{"GNP.deflator", "GNP", "Unemployed", "Armed.Forces", "Population", "Year", "Employed"}
	if strings.Join(recs[0], ",") != strings.Join(want, ",") {
		t.Fatalf("longley.csv header %v, expected %v", recs[0], want)
	}
	scale := []int64{1, 1000, 10, 10, 1000, 1, 1000}
	rows := recs[1:]
	if len(rows) != 16 {
		t.Fatalf("longley.csv has %d rows, expected 16", len(rows))
	}
	X := mat.NewDense(16, 7, nil)
	y := make([]float64, 16)
	for i, r := range rows {
		X.Set(i, 0, 1)
		for j := 0; j < 7; j++ {
			v, ok := new(big.Rat).SetString(r[j])
			if !ok {
				t.Fatalf("longley.csv row %d col %d: %q", i, j, r[j])
			}
			v.Mul(v, new(big.Rat).SetInt64(scale[j]))
			fv, _ := v.Float64()
			if j == 6 {
				y[i] = fv
			} else {
				X.Set(i, j+1, fv)
			}
		}
	}
	return X, y
}

func TestOLSLongleyNIST(t *testing.T) {
	X, y := longleyNIST(t)
	fit, err := OLS(X, y)
	if err != nil {
		t.Fatal(err)
	}
	// NIST StRD, Longley (1967), certified values. Intercept, Year
	// coefficient and residual SD: ../shared/CHECKS.md (NIST StRD).
	// The other coefficients and all standard errors: NIST StRD Longley
	// certified values, from memory.
	coef := []float64{-3482258.63459582, 15.0618722713733, -0.358191792925910e-01,
		-2.02022980381683, -1.03322686717359, -0.511041056535807e-01, 1829.15146461355}
	se := []float64{890420.383607373, 84.9149257747669, 0.334910077722432e-01,
		0.488399681651699, 0.214274163161675, 0.226073200069370, 455.478499142212}
	for j := range coef {
		if e := relErr(fit.Coef[j], coef[j]); e > 1e-8 {
			t.Errorf("Longley b%d = %.15g, NIST %.15g (rel err %.2g)", j, fit.Coef[j], coef[j], e)
		}
		if e := relErr(fit.StdErr[j], se[j]); e > 1e-8 {
			t.Errorf("Longley se(b%d) = %.15g, NIST %.15g (rel err %.2g)", j, fit.StdErr[j], se[j], e)
		}
	}
	if e := relErr(fit.ResidualSD, 304.854073561965); e > 1e-8 { // NIST StRD (CHECKS.md)
		t.Errorf("Longley residual SD %.15g (rel err %.2g)", fit.ResidualSD, e)
	}
	if fit.DOF != 9 {
		t.Errorf("DOF %d, expected 9", fit.DOF)
	}
	if !(fit.Cond > 1e6) {
		t.Errorf("Longley design condition number %g: expected it to be large (ill-conditioned by design)", fit.Cond)
	}
	t.Logf("Longley: worst coefficient rel err %.2g, cond %.3g", worstRel(fit.Coef, coef), fit.Cond)
}

func worstRel(a, b []float64) float64 {
	w := 0.0
	for i := range a {
		w = math.Max(w, relErr(a[i], b[i]))
	}
	return w
}

// refData is the part of testdata/ref/trend_ref.json (computed with R 4.2
// by testdata/ref/trend_ref.R) these tests use.
type refArima struct {
	Coef   map[string]float64 `json:"coef"`
	SE     map[string]float64 `json:"se"`
	LogLik float64            `json:"loglik"`
	Sigma2 float64            `json:"sigma2"`
	AIC    float64            `json:"aic"`
	NObs   int                `json:"nobs"`
}

type refSet struct {
	T    []float64 `json:"t"`
	Y    []float64 `json:"y"`
	Year []float64 `json:"year"`
	LM   struct {
		Coef  map[string]float64 `json:"coef"`
		SE    map[string]float64 `json:"se"`
		Sigma float64            `json:"sigma"`
		DF    int                `json:"df"`
		RSS   float64            `json:"rss"`
	} `json:"lm"`
	ACF struct {
		ACF []float64 `json:"acf"`
	} `json:"acf_resid"`
	Arima101 refArima `json:"arima_101"`
	Arima100 refArima `json:"arima_100"`
}

type refFile struct {
	Datasets map[string]refSet `json:"datasets"`
	Doc      refArima          `json:"arima_lakehuron_doc_example"`
}

func loadRef(t *testing.T) *refFile {
	t.Helper()
	b, err := os.ReadFile("../../testdata/ref/trend_ref.json")
	if err != nil {
		t.Fatalf("reference file: %v", err)
	}
	var r refFile
	if err := json.Unmarshal(b, &r); err != nil {
		t.Fatal(err)
	}
	return &r
}

var refNames = []string{"LakeHuron", "Nile", "nhtemp", "elnino"}

func TestOLSAgainstR(t *testing.T) {
	ref := loadRef(t)
	for _, name := range refNames {
		d := ref.Datasets[name]
		X, err := Design(true, d.T)
		if err != nil {
			t.Fatal(err)
		}
		fit, err := OLS(X, d.Y)
		if err != nil {
			t.Fatal(err)
		}
		// lm(y ~ t), computed with R 4.2 by testdata/ref/trend_ref.R.
		check := func(what string, got, want, tol float64) {
			if e := relErr(got, want); e > tol {
				t.Errorf("%s %s = %.15g, R %.15g (rel err %.2g)", name, what, got, want, e)
			}
		}
		check("intercept", fit.Coef[0], d.LM.Coef["intercept"], 1e-9)
		check("slope", fit.Coef[1], d.LM.Coef["slope"], 1e-9)
		check("se(intercept)", fit.StdErr[0], d.LM.SE["intercept"], 1e-9)
		check("se(slope)", fit.StdErr[1], d.LM.SE["slope"], 1e-9)
		check("sigma", fit.ResidualSD, d.LM.Sigma, 1e-9)
		check("rss", fit.RSS, d.LM.RSS, 1e-9)
		if fit.DOF != d.LM.DF {
			t.Errorf("%s df %d, R %d", name, fit.DOF, d.LM.DF)
		}
		// acf(residuals, lag.max = 3), R 4.2 by testdata/ref/trend_ref.R.
		r := ACF(fit.Residuals, 3)
		for k := 1; k <= 3; k++ {
			if math.Abs(r[k]-d.ACF.ACF[k-1]) > 1e-10 {
				t.Errorf("%s acf lag %d = %.15g, R %.15g", name, k, r[k], d.ACF.ACF[k-1])
			}
		}
	}
}

func TestACFHandWorked(t *testing.T) {
	// Hand arithmetic: e = 1,2,3,4 -> mean 2.5, d = -1.5,-0.5,0.5,1.5,
	// sum d^2 = 5; lag 1: 0.75 - 0.25 + 0.75 = 1.25 -> 0.25;
	// lag 2: -0.75 - 0.75 = -1.5 -> -0.3; lag 3: -2.25 -> -0.45.
	r := ACF([]float64{1, 2, 3, 4}, 5)
	want := []float64{1, 0.25, -0.3, -0.45}
	if len(r) != 4 {
		t.Fatalf("ACF returned %d lags, expected 4 (cut to n-1)", len(r))
	}
	for k := range want {
		if math.Abs(r[k]-want[k]) > 1e-15 {
			t.Errorf("lag %d: %g, expected %g", k, r[k], want[k])
		}
	}
	if r := ACF([]float64{2, 2, 2}, 1); !math.IsNaN(r[1]) {
		t.Errorf("constant series: lag 1 = %g, expected NaN", r[1])
	}
}

func TestOLSErrors(t *testing.T) {
	x := []float64{1, 2, 3, 4, 5}
	X, _ := Design(true, x, x)
	if _, err := OLS(X, []float64{1, 2, 3, 4, 6}); err == nil || !strings.Contains(err.Error(), "column 2") {
		t.Errorf("collinear design: err = %v, expected one naming column 2", err)
	}
	X, _ = Design(true, x)
	if _, err := OLS(X, []float64{1, 2, math.NaN(), 4, 6}); err == nil || !strings.Contains(err.Error(), "y[2]") {
		t.Errorf("NaN in y: err = %v", err)
	}
	if _, err := OLS(X, []float64{1, 2}); err == nil {
		t.Error("length mismatch: no error")
	}
	if _, err := OLSRows([][]float64{{1, 2}, {1}}, []float64{1, 2}); err == nil {
		t.Error("ragged rows: no error")
	}
	X2, _ := Design(true, []float64{1, 2})
	if _, err := OLS(X2, []float64{1, 2}); err == nil {
		t.Error("n == p: no error")
	}
}

func TestOLSRowsMatchesDesign(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	n := 40
	rows := make([][]float64, n)
	y := make([]float64, n)
	for i := range rows {
		a, b := rng.NormFloat64(), rng.NormFloat64()
		rows[i] = []float64{1, a, b}
		y[i] = 2 + 3*a - b + 0.1*rng.NormFloat64()
	}
	f, err := OLSRows(rows, y)
	if err != nil {
		t.Fatal(err)
	}
	// Property: residuals are orthogonal to every column.
	for j := 0; j < 3; j++ {
		var s float64
		for i := range rows {
			s += rows[i][j] * f.Residuals[i]
		}
		if math.Abs(s) > 1e-12 {
			t.Errorf("X'e[%d] = %g, expected 0", j, s)
		}
	}
	if math.Abs(f.Coef[1]-3) > 0.1 || math.Abs(f.Coef[2]+1) > 0.1 {
		t.Errorf("coefficients %v far from the truth (2, 3, -1)", f.Coef)
	}
}

// TestACFGaps: without gaps ACFGaps equals ACF (R's acf); with a gap, the
// lag-k sums skip pairs that include the missing step, checked against a
// sum written out by hand.
func TestACFGaps(t *testing.T) {
	e := []float64{0.3, -1.2, 0.8, 2.1, -0.4, -0.9, 1.5, 0.2}
	want := ACF(e, 3)
	got, n := ACFGaps(e, 3)
	if n != len(e) {
		t.Fatalf("present %d", n)
	}
	for k := range want {
		if math.Abs(got[k]-want[k]) > 1e-14 {
			t.Errorf("lag %d: %v vs ACF %v", k, got[k], want[k])
		}
	}
	g := []float64{1, 2, math.NaN(), 4, 3}
	r, n := ACFGaps(g, 1)
	// mean of 1, 2, 4, 3 is 2.5; deviations -1.5, -0.5, _, 1.5, 0.5
	c0 := 2.25 + 0.25 + 2.25 + 0.25
	c1 := (-1.5)*(-0.5) + 1.5*0.5 // pairs (1,2) and (4,3); pairs with the gap skipped
	if n != 4 || math.Abs(r[1]-c1/c0) > 1e-15 {
		t.Errorf("gappy lag 1: %v (n %d), want %v", r[1], n, c1/c0)
	}
	if r, _ := ACFGaps([]float64{math.NaN()}, 2); r != nil {
		t.Errorf("no values: %v", r)
	}
	if r, _ := ACFGaps([]float64{2, 2, 2}, 1); !math.IsNaN(r[1]) {
		t.Errorf("constant: %v", r)
	}
}
