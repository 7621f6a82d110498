package drivers

import (
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"sort"
	"strconv"
	"strings"
	"testing"

	"heatledger/core/series"
)

// The reference file testdata/ref/drivers_ref.json was computed with R 4.2
// by testdata/ref/drivers_ref.R: lm on the lagged design built in R by
// matching step indices (by time, never by rows), na.omit for missing
// months, and a brute-force lag search (one lm per combination) over the
// common sample. Inputs: the invented Tessary demo world (with months punched
// out of two drivers) and R's datasets nhtemp and sunspot.year.

type refNums []float64

// UnmarshalJSON reads numbers with null as NaN.
func (r *refNums) UnmarshalJSON(b []byte) error {
	var raw []*float64
	if err := json.Unmarshal(b, &raw); err != nil {
		return err
	}
	*r = make([]float64, len(raw))
	for i, p := range raw {
		if p == nil {
			(*r)[i] = math.NaN()
		} else {
			(*r)[i] = *p
		}
	}
	return nil
}

type refSeries struct {
	Name       string  `json:"name"`
	Resolution string  `json:"resolution"`
	First      int     `json:"first"`
	Values     refNums `json:"values"`
}

type refFit struct {
	Lags    []int    `json:"lags"`
	Columns []string `json:"columns"`
	Coef    refNums  `json:"coef"`
	SE      refNums  `json:"se"`
	Sigma   float64  `json:"sigma"`
	DF      int      `json:"df"`
	RSS     float64  `json:"rss"`
	R2      float64  `json:"r_squared"`
	AdjR2   float64  `json:"adj_r_squared"`
	AIC     float64  `json:"aic"`
	N       int      `json:"n"`
	Window  int      `json:"window_months"`
	TC      float64  `json:"tc"`
	Dropped []struct {
		Cause string `json:"cause"`
		Count int    `json:"count"`
	} `json:"dropped"`
	Drivers []struct {
		Name      string  `json:"name"`
		Mean      float64 `json:"mean"`
		SD        float64 `json:"sd"`
		Effect1SD float64 `json:"effect_1sd"`
		Beta      float64 `json:"beta"`
		VIF       float64 `json:"vif"`
	} `json:"drivers"`
	ACF *struct {
		Rho1     float64  `json:"rho1"`
		Rho2     float64  `json:"rho2"`
		Nu       *float64 `json:"nu"`
		SEARMA11 refNums  `json:"se_arma11"`
	} `json:"acf"`
}

type refSearch struct {
	NCommon      int       `json:"n_common"`
	Combinations int       `json:"combinations"`
	BestLags     []int     `json:"best_lags"`
	BestRSS      float64   `json:"best_rss"`
	BestAIC      float64   `json:"best_aic"`
	Minus1       refNums   `json:"rss_increase_minus_1"`
	Plus1        refNums   `json:"rss_increase_plus_1"`
	Profile      []refNums `json:"profile"`
	Grid         refNums   `json:"grid_rss"`
}

type refCase struct {
	Target      string    `json:"target"`
	From        string    `json:"from"`
	To          string    `json:"to"`
	Harmonics   int       `json:"harmonics"`
	Trend       string    `json:"trend"`
	Breaks      []float64 `json:"breaks"`
	TrendSeries *string   `json:"trend_series"`
	Drivers     []struct {
		Name    string `json:"name"`
		MinLag  int    `json:"min_lag"`
		MaxLag  int    `json:"max_lag"`
		Smooth3 bool   `json:"smooth3"`
		Detrend bool   `json:"detrend"`
	} `json:"drivers"`
	Fit    refFit     `json:"fit"`
	Search *refSearch `json:"search"`
}

type refFile struct {
	Series map[string]refSeries `json:"series"`
	Cases  map[string]refCase   `json:"cases"`
}

func loadRef(t *testing.T) refFile {
	t.Helper()
	b, err := os.ReadFile(filepath.Join("..", "..", "testdata", "ref", "drivers_ref.json"))
	if err != nil {
		t.Fatal(err)
	}
	var r refFile
	if err := json.Unmarshal(b, &r); err != nil {
		t.Fatal(err)
	}
	if len(r.Cases) < 8 {
		t.Fatalf("reference file has %d cases", len(r.Cases))
	}
	return r
}

func (r refFile) series(t *testing.T, name string) *series.Series {
	t.Helper()
	s, ok := r.Series[name]
	if !ok {
		t.Fatalf("no series %q in the reference file", name)
	}
	res := series.Monthly
	if s.Resolution == "annual" {
		res = series.Annual
	}
	return series.New(s.Name, "", res, s.First, append([]float64(nil), s.Values...))
}

// setup turns a reference case into the engine's inputs.
func (r refFile) setup(t *testing.T, c refCase) (*series.Series, []Driver, Options) {
	h := c.Harmonics
	opt := Options{From: c.From, To: c.To, Harmonics: &h, Trend: c.Trend, Breaks: c.Breaks}
	if c.TrendSeries != nil {
		opt.TrendSeries = r.series(t, *c.TrendSeries)
	}
	var ds []Driver
	for _, d := range c.Drivers {
		ds = append(ds, Driver{Series: r.series(t, d.Name), MinLag: d.MinLag, MaxLag: d.MaxLag, Smooth3: d.Smooth3, Detrend: d.Detrend})
	}
	return r.series(t, c.Target), ds, opt
}

func near(got, want, tol float64) bool {
	if math.IsNaN(want) {
		return math.IsNaN(got)
	}
	return math.Abs(got-want) <= tol*math.Max(1, math.Abs(want))
}

// TestAgainstR compares every fit with R 4.2's lm on the same lagged design
// (computed with R 4.2 by testdata/ref/drivers_ref.R).
func TestAgainstR(t *testing.T) {
	ref := loadRef(t)
	names := make([]string, 0, len(ref.Cases))
	for n := range ref.Cases {
		names = append(names, n)
	}
	sort.Strings(names)
	for _, name := range names {
		c := ref.Cases[name]
		t.Run(name, func(t *testing.T) {
			target, ds, opt := ref.setup(t, c)
			r, err := Fit(target, ds, opt)
			if err != nil {
				t.Fatal(err)
			}
			f := c.Fit
			for k, d := range r.Drivers {
				if d.LagMonths != f.Lags[k] {
					t.Errorf("driver %s: lag %d, R %d", d.Name, d.LagMonths, f.Lags[k])
				}
			}
			if r.N != f.N || r.Dropped != f.Window-f.N || r.DOF != f.DF {
				t.Errorf("n %d dropped %d dof %d; R n %d dropped %d df %d", r.N, r.Dropped, r.DOF, f.N, f.Window-f.N, f.DF)
			}
			if len(r.Fit.Coef) != len(f.Coef) {
				t.Fatalf("%d coefficients, R %d (%v vs %v)", len(r.Fit.Coef), len(f.Coef), r.Columns, f.Columns)
			}
			// Coefficients and standard errors: lm's QR and ours agree to
			// rounding (relative to the coefficient's standard error).
			for j := range f.Coef {
				if d := math.Abs(r.Fit.Coef[j] - f.Coef[j]); d > 1e-9*math.Max(math.Abs(f.Coef[j]), f.SE[j]) {
					t.Errorf("coef %d (%s): %.15g, R %.15g", j, f.Columns[j], r.Fit.Coef[j], f.Coef[j])
				}
				if !near(r.Fit.StdErr[j], f.SE[j], 1e-9) {
					t.Errorf("se %d (%s): %.15g, R %.15g", j, f.Columns[j], r.Fit.StdErr[j], f.SE[j])
				}
			}
			if !near(r.ResidualSD, f.Sigma, 1e-10) || !near(r.RSS, f.RSS, 1e-10) || !near(r.R2, f.R2, 1e-10) ||
				!near(r.AdjR2, f.AdjR2, 1e-10) || !near(r.AIC, f.AIC, 1e-10) || !near(r.RefTime, f.TC, 1e-14) {
				t.Errorf("sigma %v rss %v r2 %v adjr2 %v aic %v tc %v; R %v %v %v %v %v %v", r.ResidualSD, r.RSS, r.R2, r.AdjR2, r.AIC, r.RefTime,
					f.Sigma, f.RSS, f.R2, f.AdjR2, f.AIC, f.TC)
			}
			// Drop reasons: R's first-cause table.
			want := map[string]int{}
			for _, d := range f.Dropped {
				want[d.Cause] = d.Count
			}
			got := map[string]int{}
			for _, d := range r.DroppedReasons {
				key := d.Cause
				if strings.HasPrefix(d.Cause, "driver") {
					for k := range r.Drivers {
						if r.Drivers[k].Name == d.Series {
							key += ":" + strconv.Itoa(k+1)
						}
					}
				}
				got[key] = d.Count
			}
			if len(got) != len(want) {
				t.Errorf("drop reasons %v, R %v", got, want)
			}
			for k, v := range want {
				if got[k] != v {
					t.Errorf("drop reason %q: %d, R %d", k, got[k], v)
				}
			}
			for k, d := range f.Drivers {
				g := r.Drivers[k]
				if !near(g.Mean, d.Mean, 1e-10) || !near(g.SD, d.SD, 1e-10) || !near(g.Effect1SD, d.Effect1SD, 1e-8) ||
					!near(g.Beta, d.Beta, 1e-8) || !near(g.VIF, d.VIF, 1e-8) {
					t.Errorf("driver %s: mean %v sd %v effect %v beta %v vif %v; R %v %v %v %v %v", g.Name, g.Mean, g.SD, g.Effect1SD, g.Beta, g.VIF,
						d.Mean, d.SD, d.Effect1SD, d.Beta, d.VIF)
				}
			}
			// R's acf of the residuals (consecutive months only) and the
			// Foster and Rahmstorf 2011 inflation from it.
			if a := f.ACF; a != nil {
				if !near(r.Rho1, a.Rho1, 1e-10) || !near(r.Rho2, a.Rho2, 1e-10) {
					t.Errorf("rho1 %v rho2 %v; R %v %v", r.Rho1, r.Rho2, a.Rho1, a.Rho2)
				}
				if a.Nu != nil {
					if !near(r.Nu, *a.Nu, 1e-10) {
						t.Errorf("nu %v, R %v", r.Nu, *a.Nu)
					}
					for j, se := range a.SEARMA11 {
						if !near(r.Fit.StdErr[j]*math.Sqrt(r.Nu), se, 1e-9) {
							t.Errorf("se_arma11 %d: %v, R %v", j, r.Fit.StdErr[j]*math.Sqrt(r.Nu), se)
						}
					}
					for k, d := range r.Drivers {
						if !near(d.StdErrARMA11, a.SEARMA11[1+len(r.Columns)-1-len(r.Drivers)-2*r.Harmonics+k], 1e-9) {
							t.Errorf("driver %s: stderr_arma11 %v", d.Name, d.StdErrARMA11)
						}
					}
				}
			}
			if s := c.Search; s != nil {
				checkSearch(t, ref, c, r, s)
			} else if r.Search != nil {
				t.Errorf("a search was made for fixed lags")
			}
		})
	}
}

// checkSearch compares the lag search with R's brute force over the common
// sample (computed with R 4.2 by testdata/ref/drivers_ref.R).
func checkSearch(t *testing.T, ref refFile, c refCase, r *Result, s *refSearch) {
	if r.Search == nil {
		t.Fatal("no search made")
	}
	if r.Search.N != s.NCommon || int(r.Search.Combinations) != s.Combinations || r.Search.Method != "exhaustive" {
		t.Errorf("search n %d combinations %v method %s; R n %d combinations %d", r.Search.N, r.Search.Combinations, r.Search.Method, s.NCommon, s.Combinations)
	}
	for k, d := range r.Drivers {
		if d.LagMonths != s.BestLags[k] {
			t.Errorf("driver %s: chosen lag %d, R %d", d.Name, d.LagMonths, s.BestLags[k])
		}
	}
	if !near(r.Search.RSS, s.BestRSS, 1e-9) || !near(r.Search.AIC, s.BestAIC, 1e-9) {
		t.Errorf("search rss %v aic %v; R %v %v", r.Search.RSS, r.Search.AIC, s.BestRSS, s.BestAIC)
	}
	opt := func(p *float64) float64 {
		if p == nil {
			return math.NaN()
		}
		return *p
	}
	for k, d := range r.Drivers {
		if !near(opt(d.RSSIncreaseMinus1), s.Minus1[k], 1e-8) || !near(opt(d.RSSIncreasePlus1), s.Plus1[k], 1e-8) {
			t.Errorf("driver %s: rss increase -1 %v +1 %v; R %v %v", d.Name, opt(d.RSSIncreaseMinus1), opt(d.RSSIncreasePlus1), s.Minus1[k], s.Plus1[k])
		}
		if len(d.Profile) != len(s.Profile[k]) {
			t.Fatalf("driver %s: profile of %d lags, R %d", d.Name, len(d.Profile), len(s.Profile[k]))
		}
		for j, p := range d.Profile {
			if !near(opt(p.RSS), s.Profile[k][j], 1e-9) {
				t.Errorf("driver %s: profile at lag %d: %v, R %v", d.Name, p.LagMonths, opt(p.RSS), s.Profile[k][j])
			}
		}
	}
	// Every cell of the grid, from the search machinery itself.
	target, ds, o := ref.setup(t, c)
	m, err := newModel(target, ds, o)
	if err != nil {
		t.Fatal(err)
	}
	sd, err := m.buildSearch(m.searchSample())
	if err != nil {
		t.Fatal(err)
	}
	js := make([]int, len(ds))
	for i, want := range s.Grid {
		rem := i
		for k := len(js) - 1; k >= 0; k-- {
			js[k] = rem % sd.nl[k]
			rem /= sd.nl[k]
		}
		if got := sd.eval(js); !near(got, want, 1e-9) {
			t.Errorf("grid %v: rss %v, R %v", js, got, want)
		}
	}
}
