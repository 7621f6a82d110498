package drivers

import (
	"bytes"
	"encoding/csv"
	"encoding/json"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"heatledger/core/linreg"
	"heatledger/core/series"
)

// loadDemo reads the invented Tessary demo world (testdata/demo).
func loadDemo(t testing.TB) map[string]*series.Series {
	t.Helper()
	out := map[string]*series.Series{}
	for _, n := range []string{"tessary_surface.csv", "tessary_forcing.csv"} {
		b, err := os.ReadFile(filepath.Join("..", "..", "testdata", "demo", n))
		if err != nil {
			t.Fatal(err)
		}
		r, err := series.Read(n, b, series.Options{})
		if err != nil {
			t.Fatal(err)
		}
		for _, s := range r.Series {
			out[s.Name] = s
		}
	}
	return out
}

func demoTruth(t *testing.T) (lag int, coef float64) {
	t.Helper()
	b, err := os.ReadFile(filepath.Join("..", "..", "testdata", "demo", "truth.json"))
	if err != nil {
		t.Fatal(err)
	}
	var tr struct {
		Surface struct {
			Lag  int     `json:"index_lag_months"`
			Coef float64 `json:"index_coefficient_k"`
		} `json:"surface"`
	}
	if err := json.Unmarshal(b, &tr); err != nil {
		t.Fatal(err)
	}
	if tr.Surface.Lag == 0 || tr.Surface.Coef == 0 {
		t.Fatal("truth.json lacks surface.index_lag_months / index_coefficient_k")
	}
	return tr.Surface.Lag, tr.Surface.Coef
}

// TestDemoRecoversIndex: known truth (CHECKS.md, second way). Both demo
// temperature records contain 0.1 x ocean_index(t - 3 months)
// (testdata/demo/truth.json). In the set-up of Foster and Rahmstorf 2011 -
// linear trend, ocean index (lags 0-12), aod (0-24) and tsi (0-12), two
// annual harmonics - the search recovers lag 3 exactly in second_record for
// every window from 1950, 1960 or 1970 to 2005, 2015 or 2025 (a denser grid,
// every 5 years, also gives 3 throughout), with the coefficient within two standard errors (ARMA(1,1)-
// inflated: the residuals keep the forced response's curvature and the
// AR(1) noise, and the plain OLS errors are too small by a factor of about
// 3), and the adjusted series varies clearly less about its trend than the
// raw one.
//
// surface_anomaly carries the same signal with a different noise draw, and
// there lag 2 fits better in 19 of those 30 windows (lag 3 in the full
// record): the index is so persistent (lag-1 autocorrelation about 0.99)
// that one month of lag changes the RSS by only about
// n b^2 var(x)(1 - r1^2) ~ 0.14, some two standard deviations of the noise
// term. For that record the check is the lag within one month.
func TestDemoRecoversIndex(t *testing.T) {
	d := loadDemo(t)
	lag, coef := demoTruth(t)
	ds := []Driver{{Series: d["ocean_index"], MaxLag: 12}, {Series: d["aod"], MaxLag: 24}, {Series: d["tsi"], MaxLag: 12}}
	check := func(target, from, to string, exact bool) {
		r, err := Fit(d[target], ds, Options{From: from, To: to})
		if err != nil {
			t.Fatal(err)
		}
		ix := r.Drivers[0]
		if exact && ix.LagMonths != lag || ix.LagMonths < lag-1 || ix.LagMonths > lag+1 {
			t.Errorf("%s %s-%s: ocean_index lag %d, truth %d", target, from, to, ix.LagMonths, lag)
		}
		if math.Abs(ix.Estimate-coef) > 2*ix.StdErrARMA11 {
			t.Errorf("%s %s-%s: coefficient %.4f +- %.4f, truth %g", target, from, to, ix.Estimate, ix.StdErrARMA11, coef)
		}
		raw, adj := r.Trends[0].Raw.ResidualSD, r.Trends[0].Adjusted.ResidualSD
		if ratio := adj * adj / (raw * raw); !(ratio < 0.8) {
			t.Errorf("%s %s-%s: adjusted residual variance is %.2f of the raw one: expected clearly smaller", target, from, to, ratio)
		}
		if r.Drivers[1].Estimate >= 0 {
			t.Errorf("%s %s-%s: aerosol optical depth should cool, coefficient %v", target, from, to, r.Drivers[1].Estimate)
		}
	}
	for from := 1950; from <= 1970; from += 10 {
		for to := 2005; to <= 2025; to += 10 {
			check("second_record", strconv.Itoa(from), strconv.Itoa(to), true)
		}
	}
	// The main record over its whole span (the view's default) recovers the
	// built-in lag exactly; shorter windows of it may pick a neighbouring
	// month (see TestDemoLagAmbiguity), so they are held to +-1 month.
	check("surface_anomaly", "", "", true)
	check("surface_anomaly", "1979", "2024", false)
}

// TestDemoLagAmbiguity documents the limit of the demo check above: with a
// trend term shaped like the smooth forcing (5.35 ln(CO2/278) + aerosol
// ERF, Myhre et al. 1998 for CO2) the fit is better, and the index lag moves
// to 2 with lag 3 within 0.1 in RSS: one month of lag is not firmly
// resolved by these data. The coefficient stays within two standard errors.
func TestDemoLagAmbiguity(t *testing.T) {
	d := loadDemo(t)
	lag, coef := demoTruth(t)
	f := d["co2"].Clone()
	for i, v := range f.Values {
		f.Values[i] = 5.35*math.Log(v/278) + d["aerosol_erf"].Values[i]
	}
	ds := []Driver{{Series: d["ocean_index"], MaxLag: 12}, {Series: d["aod"], MaxLag: 24}, {Series: d["tsi"], MaxLag: 24}}
	r, err := Fit(d["surface_anomaly"], ds, Options{Trend: TrendSeries, TrendSeries: f})
	if err != nil {
		t.Fatal(err)
	}
	ix := r.Drivers[0]
	if ix.LagMonths < lag-1 || ix.LagMonths > lag+1 {
		t.Errorf("lag %d, truth %d", ix.LagMonths, lag)
	}
	var at3 float64
	for _, p := range ix.Profile {
		if p.LagMonths == lag {
			at3 = *p.RSS
		}
	}
	if at3-r.Search.RSS > 0.1 {
		t.Errorf("the true lag is %.3f worse in RSS than the chosen one", at3-r.Search.RSS)
	}
	if math.Abs(ix.Estimate-coef) > 2*ix.StdErr {
		t.Errorf("coefficient %.4f +- %.4f, truth %g", ix.Estimate, ix.StdErr, coef)
	}
	if r.ResidualSD > 0.1 {
		t.Errorf("residual SD %.4f: the forcing-shaped trend should leave about the noise (sd 0.08/sqrt(1-0.5^2) = 0.092)", r.ResidualSD)
	}
}

// synthetic builds y(t) = 0.4 + 0.02 (t - 1990) + 0.3 x1(t - 5) - 2 x2(t - 9)
// + 0.1 cos(2 pi t) + white noise (sd 0.03) on 1950-01..2024-12, with x1
// an AR(1) index and x2 a decaying pulse train, both from a fixed seed.
func synthetic(seed uint64) (y, x1, x2 *series.Series) {
	rng := rand.New(rand.NewPCG(seed, 7))
	first := series.MonthIndex(1948, 1)
	n := 77 * 12
	a, b := make([]float64, n), make([]float64, n)
	for i := range a {
		if i > 0 {
			a[i] = 0.8*a[i-1] + rng.NormFloat64()
			b[i] = 0.9 * b[i-1]
		}
		if rng.Float64() < 0.02 {
			b[i] += 0.1
		}
	}
	x1 = series.New("index", "1", series.Monthly, first, a)
	x2 = series.New("aerosol", "1", series.Monthly, first, b)
	first24 := series.MonthIndex(1950, 1)
	v := make([]float64, 75*12)
	for i := range v {
		idx := first24 + i
		t := series.StepTime(series.Monthly, idx)
		v[i] = 0.4 + 0.02*(t-1990) + 0.3*x1.At(idx-5) - 2*x2.At(idx-9) + 0.1*math.Cos(2*math.Pi*t) + 0.03*rng.NormFloat64()
	}
	y = series.New("temp", "K", series.Monthly, first24, v)
	return
}

// TestSyntheticRecovery: known truth with a strong signal: the search finds
// the built-in lags exactly, exhaustively and by coordinate descent, and the
// coefficients lie within 3 standard errors (several seeds).
func TestSyntheticRecovery(t *testing.T) {
	for seed := uint64(1); seed <= 5; seed++ {
		y, x1, x2 := synthetic(seed)
		ds := []Driver{{Series: x1, MaxLag: 12}, {Series: x2, MaxLag: 12}}
		for _, limit := range []int{0, 1} {
			r, err := Fit(y, ds, Options{Exhaustive: limit})
			if err != nil {
				t.Fatal(err)
			}
			wantMethod := map[int]string{0: "exhaustive", 1: "coordinate"}[limit]
			if r.Search.Method != wantMethod {
				t.Errorf("method %s, want %s", r.Search.Method, wantMethod)
			}
			if r.Drivers[0].LagMonths != 5 || r.Drivers[1].LagMonths != 9 {
				t.Errorf("seed %d %s: lags %d, %d; truth 5, 9", seed, wantMethod, r.Drivers[0].LagMonths, r.Drivers[1].LagMonths)
			}
			for k, want := range []float64{0.3, -2} {
				if d := r.Drivers[k]; math.Abs(d.Estimate-want) > 3*d.StdErr {
					t.Errorf("seed %d: driver %d coefficient %v +- %v, truth %v", seed, k, d.Estimate, d.StdErr, want)
				}
			}
			if tr := *r.Trend.SlopePerDecade; math.Abs(tr-0.2) > 3**r.Trend.StderrOLSPerDecade {
				t.Errorf("seed %d: trend %v per decade, truth 0.2", seed, tr)
			}
			if c := r.Cycle[0].Cos; math.Abs(c.Estimate-0.1) > 3*c.StdErr {
				t.Errorf("seed %d: cos coefficient %v, truth 0.1", seed, c.Estimate)
			}
		}
	}
}

// TestCoordinateMatchesExhaustive: on the demo's three drivers over 0-24
// months (15,625 combinations) coordinate descent from its starts reaches
// the exhaustive optimum.
func TestCoordinateMatchesExhaustive(t *testing.T) {
	d := loadDemo(t)
	ds := []Driver{{Series: d["ocean_index"], MaxLag: 24}, {Series: d["aod"], MaxLag: 24}, {Series: d["tsi"], MaxLag: 24}}
	ex, err := Fit(d["surface_anomaly"], ds, Options{})
	if err != nil {
		t.Fatal(err)
	}
	cd, err := Fit(d["surface_anomaly"], ds, Options{Exhaustive: 100})
	if err != nil {
		t.Fatal(err)
	}
	if ex.Search.Method != "exhaustive" || cd.Search.Method != "coordinate" || ex.Search.Combinations != 15625 {
		t.Fatalf("methods %s %s, combinations %v", ex.Search.Method, cd.Search.Method, ex.Search.Combinations)
	}
	for k := range ds {
		if ex.Drivers[k].LagMonths != cd.Drivers[k].LagMonths {
			t.Errorf("driver %d: exhaustive lag %d, coordinate %d", k, ex.Drivers[k].LagMonths, cd.Drivers[k].LagMonths)
		}
	}
	if ex.Search.Evaluated < 15625 || cd.Search.Evaluated >= 15625 {
		t.Errorf("evaluated %d (exhaustive), %d (coordinate)", ex.Search.Evaluated, cd.Search.Evaluated)
	}
}

// TestSearchCriterionIsOLS: the fast criterion equals the RSS of a
// QR least-squares fit of the full design over the common sample, for
// arbitrary lag combinations (property: Frisch-Waugh-Lovell).
func TestSearchCriterionIsOLS(t *testing.T) {
	d := loadDemo(t)
	ds := []Driver{{Series: d["ocean_index"], MaxLag: 6}, {Series: d["aod"], MinLag: 2, MaxLag: 20}, {Series: d["tsi"], MaxLag: 3}}
	m, err := newModel(d["second_record"], ds, Options{Trend: TrendBroken, Breaks: []float64{1985}})
	if err != nil {
		t.Fatal(err)
	}
	rows := m.searchSample()
	sd, err := m.buildSearch(rows)
	if err != nil {
		t.Fatal(err)
	}
	for _, js := range [][]int{{0, 0, 0}, {3, 5, 1}, {6, 18, 3}, {2, 9, 0}} {
		cols := []column{{"intercept", ones(len(rows))}}
		cols = append(cols, m.trendColumns(rows, 1990)...)
		for k := range ds {
			cols = append(cols, m.driverColumn(k, m.drv[k].lags[js[k]], rows))
		}
		cols = append(cols, m.cycleColumns(rows)...)
		var vs [][]float64
		for _, c := range cols[1:] {
			vs = append(vs, c.v)
		}
		X, _ := linreg.Design(true, vs...)
		y := make([]float64, len(rows))
		for r, i := range rows {
			y[r] = m.y[i]
		}
		fit, err := linreg.OLS(X, y)
		if err != nil {
			t.Fatal(err)
		}
		if got := sd.eval(js); math.Abs(got-fit.RSS) > 1e-10*fit.RSS {
			t.Errorf("lags %v: criterion %.15g, QR RSS %.15g", js, got, fit.RSS)
		}
	}
}

// TestGapStaysGap: a missing driver month removes exactly the target month
// it reaches at the chosen lag, and moves with the lag (lag by time).
func TestGapStaysGap(t *testing.T) {
	y, x1, _ := synthetic(3)
	x := x1.Clone()
	gap := series.MonthIndex(1980, 6)
	x.Values[gap-x.First] = math.NaN()
	for _, lag := range []int{0, 4, 11} {
		r, err := Fit(y, []Driver{{Series: x, MinLag: lag, MaxLag: lag}}, Options{})
		if err != nil {
			t.Fatal(err)
		}
		if r.Dropped != 1 || len(r.DroppedReasons) != 1 {
			t.Fatalf("lag %d: dropped %d %v", lag, r.Dropped, r.DroppedReasons)
		}
		dr := r.DroppedReasons[0]
		if dr.Cause != "driver missing" || dr.Series != "index" || *dr.LagMonths != lag || dr.Count != 1 {
			t.Errorf("lag %d: reason %+v", lag, dr)
		}
		hit := gap + lag - y.First
		if !math.IsNaN(r.Residuals.Values[hit]) || !math.IsNaN(r.Contributions[0].Values[hit]) || !math.IsNaN(r.Adjusted.Values[hit]) {
			t.Errorf("lag %d: month %s should have no residual, contribution or adjusted value", lag, series.StepLabel(series.Monthly, gap+lag))
		}
		if math.IsNaN(r.Residuals.Values[hit-1]) || math.IsNaN(r.Residuals.Values[hit+1]) {
			t.Errorf("lag %d: neighbours of the gap were dropped", lag)
		}
		if !strings.Contains(strings.Join(r.Warnings, "\n"), `driver "index" missing at lag`) {
			t.Errorf("warnings %q", r.Warnings)
		}
	}
}

// TestTrendChangeIdentity: the change table adds up (raw = sum of driver
// contributions + annual cycle + adjusted) in each window and for the
// change, because OLS slopes over one set of months are linear in the data.
func TestTrendChangeIdentity(t *testing.T) {
	d := loadDemo(t)
	ds := []Driver{{Series: d["ocean_index"], MaxLag: 12}, {Series: d["aod"], MaxLag: 24}, {Series: d["tsi"], MaxLag: 12}}
	for _, target := range []string{"surface_anomaly", "second_record"} {
		r, err := Fit(d[target], ds, Options{Change: &[2]Window{{"1970", "1997"}, {"1998", "2012"}}, Windows: []Window{{"1970", "1997"}, {"1998", "2012"}}})
		if err != nil {
			t.Fatal(err)
		}
		c := r.Change
		if c == nil || len(c.Drivers) != 3 || c.A.From != "1970-01" || c.B.To != "2012-12" {
			t.Fatalf("change table %+v", c)
		}
		sum := func(get func(ChangeRow) float64) float64 {
			s := get(c.Cycle) + get(c.Adjusted)
			for _, row := range c.Drivers {
				s += get(row)
			}
			return s
		}
		for name, get := range map[string]func(ChangeRow) float64{
			"A":   func(r ChangeRow) float64 { return r.APerDecade },
			"B":   func(r ChangeRow) float64 { return r.BPerDecade },
			"B-A": func(r ChangeRow) float64 { return r.ChangePerDecade },
		} {
			if s, raw := sum(get), get(c.Raw); math.Abs(s-raw) > 1e-12 {
				t.Errorf("%s %s: terms add to %.15g, raw %.15g", target, name, s, raw)
			}
		}
		// Where the target has no gaps, the table's raw and adjusted slopes
		// are the trend engine's.
		if target == "surface_anomaly" {
			if math.Abs(c.Raw.BPerDecade-r.Trends[1].Raw.SlopePerDecade) > 1e-12 || math.Abs(c.Adjusted.APerDecade-r.Trends[0].Adjusted.SlopePerDecade) > 1e-12 {
				t.Errorf("table raw B %v vs trend %v; adjusted A %v vs trend %v", c.Raw.BPerDecade, r.Trends[1].Raw.SlopePerDecade, c.Adjusted.APerDecade, r.Trends[0].Adjusted.SlopePerDecade)
			}
		}
	}
}

// TestInvariances: properties. Scaling a driver by s divides its
// coefficient by s and leaves the standardised effect, the fit and the
// adjusted series unchanged; adding a constant to a driver changes only the
// intercept (contributions are centred); moving every series one year later
// leaves every coefficient but the intercept unchanged.
func TestInvariances(t *testing.T) {
	y, x1, x2 := synthetic(2)
	base, err := Fit(y, []Driver{{Series: x1, MaxLag: 12}, {Series: x2, MaxLag: 12}}, Options{})
	if err != nil {
		t.Fatal(err)
	}
	sx := x1.Clone()
	for i := range sx.Values {
		sx.Values[i] = 1000*sx.Values[i] + 1361
	}
	r, err := Fit(y, []Driver{{Series: sx, MaxLag: 12}, {Series: x2, MaxLag: 12}}, Options{})
	if err != nil {
		t.Fatal(err)
	}
	if r.Drivers[0].LagMonths != base.Drivers[0].LagMonths ||
		!near(r.Drivers[0].Estimate*1000, base.Drivers[0].Estimate, 1e-9) ||
		!near(r.Drivers[0].Effect1SD, base.Drivers[0].Effect1SD, 1e-9) ||
		!near(r.Drivers[0].Beta, base.Drivers[0].Beta, 1e-9) ||
		!near(r.Drivers[1].Estimate, base.Drivers[1].Estimate, 1e-9) ||
		!near(r.RSS, base.RSS, 1e-9) || !near(r.Cond, base.Cond, 1e-8) {
		t.Errorf("scaled driver: %+v vs %+v", r.Drivers[0], base.Drivers[0])
	}
	for i, v := range base.Adjusted.Values {
		if !near(r.Adjusted.Values[i], v, 1e-9) && !(math.IsNaN(v) && math.IsNaN(r.Adjusted.Values[i])) {
			t.Fatalf("adjusted[%d] %v vs %v", i, r.Adjusted.Values[i], v)
		}
	}
	// One year later, everything.
	shift := func(s *series.Series) *series.Series {
		return series.New(s.Name, s.Unit, s.Resolution, s.First+12, append([]float64(nil), s.Values...))
	}
	r2, err := Fit(shift(y), []Driver{{Series: shift(x1), MaxLag: 12}, {Series: shift(x2), MaxLag: 12}}, Options{})
	if err != nil {
		t.Fatal(err)
	}
	for j := 1; j < len(base.Fit.Coef); j++ {
		if !near(r2.Fit.Coef[j], base.Fit.Coef[j], 1e-8) || !near(r2.Fit.StdErr[j], base.Fit.StdErr[j], 1e-8) {
			t.Errorf("shifted, coefficient %d (%s): %v vs %v", j, base.Columns[j], r2.Fit.Coef[j], base.Fit.Coef[j])
		}
	}
	if !near(r2.RefTime, base.RefTime+1, 1e-12) {
		t.Errorf("reference time %v vs %v", r2.RefTime, base.RefTime)
	}
}

// TestOutputs: the output series satisfy their definitions.
func TestOutputs(t *testing.T) {
	d := loadDemo(t)
	ds := []Driver{{Series: d["ocean_index"], MinLag: 3, MaxLag: 3, Smooth3: true}, {Series: d["aod"], MinLag: 7, MaxLag: 7}, {Series: d["tsi"], MinLag: 1, MaxLag: 1, Detrend: true}}
	r, err := Fit(d["second_record"], ds, Options{From: "1960", To: "2019"})
	if err != nil {
		t.Fatal(err)
	}
	tg := d["second_record"]
	if r.Fitted.First != tg.First || r.Fitted.Len() != tg.Len() {
		t.Fatalf("outputs are not on the target's axis")
	}
	used := 0
	for i, y := range tg.Values {
		sumC := 0.0
		for _, c := range r.Contributions {
			sumC += c.Values[i]
		}
		if a := r.Adjusted.Values[i]; !math.IsNaN(a) && math.Abs(a-(y-sumC-r.CycleSeries.Values[i])) > 1e-12 {
			t.Fatalf("adjusted[%d]", i)
		}
		if e := r.Residuals.Values[i]; !math.IsNaN(e) {
			used++
			if math.Abs(y-r.Fitted.Values[i]-e) > 1e-9 {
				t.Fatalf("residual[%d] %v, target - fitted %v", i, e, y-r.Fitted.Values[i])
			}
			if math.Abs(r.Fitted.Values[i]-(r.Baseline.Values[i]+r.CycleSeries.Values[i]+sumC+sumMeans(r))) > 1e-9 {
				t.Fatalf("fitted[%d] is not trend + cycle + contributions + means", i)
			}
		}
	}
	if used != r.N {
		t.Errorf("%d residuals for n %d", used, r.N)
	}
	// Residuals outside the window are missing; the adjusted series extends
	// over the target's axis where the drivers reach.
	if !math.IsNaN(r.Residuals.Values[series.MonthIndex(2020, 6)-tg.First]) || math.IsNaN(r.Adjusted.Values[series.MonthIndex(2020, 6)-tg.First]) {
		t.Errorf("outside the window: residual %v adjusted %v", r.Residuals.Values[series.MonthIndex(2020, 6)-tg.First], r.Adjusted.Values[series.MonthIndex(2020, 6)-tg.First])
	}
	// The detrended driver has no trend over the fit window; the smoothed
	// one is the running mean.
	m, err := newModel(tg, ds, Options{From: "1960", To: "2019"})
	if err != nil {
		t.Fatal(err)
	}
	_, q, _ := lineOver(m.drv[2].x.Times, m.drv[2].x.Values, m.t[0], m.t[len(m.t)-1])
	if math.Abs(q) > 1e-9 {
		t.Errorf("detrended tsi keeps a slope %v", q)
	}
	ix := d["ocean_index"]
	i := series.MonthIndex(1990, 5) - ix.First
	if want := (ix.Values[i-1] + ix.Values[i] + ix.Values[i+1]) / 3; math.Abs(m.drv[0].x.Values[i]-want) > 1e-15 {
		t.Errorf("smoothed %v, want %v", m.drv[0].x.Values[i], want)
	}
	// The result marshals to JSON (no NaN or Inf in its fields).
	if _, err := json.Marshal(r); err != nil {
		t.Errorf("json: %v", err)
	}
	// CSV: one row per step of the target's axis plus the header.
	var buf bytes.Buffer
	if err := r.WriteCSV(&buf); err != nil {
		t.Fatal(err)
	}
	recs, err := csv.NewReader(&buf).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	if len(recs) != tg.Len()+1 || len(recs[0]) != 7+3 || recs[0][1] != "second_record" || recs[1][0] != series.StepLabel(series.Monthly, tg.First) {
		t.Errorf("csv: %d rows, header %v, first %v", len(recs), recs[0], recs[1])
	}
}

func sumMeans(r *Result) float64 {
	var s float64
	for _, d := range r.Drivers {
		s += d.Estimate * d.Mean
	}
	return s
}

func TestSmooth3(t *testing.T) {
	nan := math.NaN()
	got := Smooth3([]float64{1, 2, 3, nan, 5, 6, 7, 8})
	want := []float64{nan, 2, nan, nan, nan, 6, 7, nan}
	for i := range want {
		if !(got[i] == want[i] || math.IsNaN(got[i]) && math.IsNaN(want[i])) {
			t.Errorf("Smooth3[%d] = %v, want %v", i, got[i], want[i])
		}
	}
}

// TestInflation: Foster and Rahmstorf 2011's nu and the fall-backs of
// core/trend's arma11 (phi = rho1 reduces nu to (1 + rho1)/(1 - rho1)).
func TestInflation(t *testing.T) {
	nu, phi, note := Inflation(0.5, 0.25)
	if math.Abs(nu-3) > 1e-15 || phi != 0.5 || note != "" {
		t.Errorf("AR(1)-like: nu %v phi %v", nu, phi)
	}
	nu, phi, _ = Inflation(0.4, 0.3)
	if want := 1 + 2*0.4/(1-0.75); math.Abs(nu-want) > 1e-15 || math.Abs(phi-0.75) > 1e-15 {
		t.Errorf("nu %v want %v", nu, want)
	}
	if nu, _, note := Inflation(-0.1, 0.2); nu != 1 || note == "" {
		t.Errorf("negative rho1: nu %v", nu)
	}
	if nu, phi, note := Inflation(0.3, -0.1); math.Abs(nu-1.3/0.7) > 1e-15 || phi != 0.3 || note == "" {
		t.Errorf("phi < 0: nu %v phi %v", nu, phi)
	}
	if nu, _, _ := Inflation(0.3, 0.35); math.Abs(nu-1.3/0.7) > 1e-15 {
		t.Errorf("phi > 1: nu %v", nu)
	}
}

// TestResidualACF12: without gaps it is R's acf as linreg.ACF computes it.
func TestResidualACF12(t *testing.T) {
	rng := rand.New(rand.NewPCG(4, 4))
	e := make([]float64, 200)
	for i := range e {
		e[i] = rng.NormFloat64()
		if i > 0 {
			e[i] += 0.6 * e[i-1]
		}
	}
	r1, r2 := ResidualACF12(e)
	a := linreg.ACF(e, 2)
	if math.Abs(r1-a[1]) > 1e-14 || math.Abs(r2-a[2]) > 1e-14 {
		t.Errorf("%v %v vs %v", r1, r2, a)
	}
}

// TestCollinearity: a near copy of a driver gets a VIF warning; an exact
// copy at the same lag is refused with the column named.
func TestCollinearity(t *testing.T) {
	y, x1, _ := synthetic(5)
	rng := rand.New(rand.NewPCG(9, 9))
	near := x1.Clone()
	near.Name = "index_copy"
	for i := range near.Values {
		near.Values[i] += 0.05 * rng.NormFloat64()
	}
	r, err := Fit(y, []Driver{{Series: x1, MinLag: 5, MaxLag: 5}, {Series: near, MinLag: 5, MaxLag: 5}}, Options{})
	if err != nil {
		t.Fatal(err)
	}
	if r.Drivers[0].VIF < VIFWarning || !strings.Contains(strings.Join(r.Warnings, "\n"), "variance inflation factor") {
		t.Errorf("VIF %v, warnings %q", r.Drivers[0].VIF, r.Warnings)
	}
	exact := x1.Clone()
	exact.Name = "twin"
	_, err = Fit(y, []Driver{{Series: x1, MinLag: 5, MaxLag: 5}, {Series: exact, MinLag: 5, MaxLag: 5}}, Options{})
	if err == nil || !strings.Contains(err.Error(), `"twin at lag 5"`) {
		t.Errorf("exact copy: %v", err)
	}
}

// TestAnnual: annual series take lags in whole years.
func TestAnnual(t *testing.T) {
	ref := loadRef(t)
	y, x := ref.series(t, "nhtemp"), ref.series(t, "sunspot_year")
	r, err := Fit(y, []Driver{{Series: x, MinLag: 0, MaxLag: 24}}, Options{})
	if err != nil {
		t.Fatal(err)
	}
	if r.Harmonics != 0 || len(r.Drivers[0].Profile) != 3 || r.From != "1912" || r.To != "1971" {
		t.Errorf("harmonics %d profile %v window %s-%s", r.Harmonics, r.Drivers[0].Profile, r.From, r.To)
	}
	if _, err := Fit(y, []Driver{{Series: x, MinLag: 0, MaxLag: 6}}, Options{}); err == nil || !strings.Contains(err.Error(), "multiples of 12") {
		t.Errorf("lag 6 months on annual data: %v", err)
	}
	h := 1
	if _, err := Fit(y, nil, Options{Harmonics: &h}); err == nil || !strings.Contains(err.Error(), "annual-cycle terms need a monthly target") {
		t.Errorf("harmonics on annual data: %v", err)
	}
}

// TestErrors: bad input gets an error naming the series and window.
func TestErrors(t *testing.T) {
	d := loadDemo(t)
	tgt := d["surface_anomaly"]
	late := d["aod"].Clone()
	w, _ := late.WindowSpec("1990", "")
	late = w
	three := 3
	h3 := &three
	cases := []struct {
		drivers []Driver
		opt     Options
		want    string
	}{
		{[]Driver{{Series: late, MinLag: 7, MaxLag: 7}}, Options{From: "1950", To: "1955"}, `driver "aod": no values between 1950-01 and 1955-12 at lag 7`},
		{[]Driver{{Series: d["aod"], MinLag: 5, MaxLag: 2}}, Options{}, `driver "aod": lag range 5 to 2 months ends before it starts`},
		{[]Driver{{Series: d["aod"], MaxLag: 200}}, Options{}, `expected at most 121`},
		{[]Driver{{Series: d["aod"]}}, Options{Trend: "cubic"}, `trend term "cubic"`},
		{[]Driver{{Series: d["aod"]}}, Options{Trend: TrendBroken, Breaks: []float64{2030}}, `break 2030 lies outside the fit window 1950-01 to 2025-12`},
		{[]Driver{{Series: d["aod"]}}, Options{Trend: TrendBroken}, `no break times`},
		{[]Driver{{Series: d["aod"]}}, Options{Trend: TrendSeries}, `no trend series`},
		{[]Driver{{Series: d["aod"]}}, Options{Harmonics: h3}, `expected 0, 1 or 2`},
		{[]Driver{{Series: d["aod"]}}, Options{From: "2030"}, `fit window`},
		{[]Driver{{Series: d["aod"].AnnualMeans(12)}}, Options{}, `driver "aod" is annual but target "surface_anomaly" is monthly`},
		{[]Driver{{Series: d["aod"], MaxLag: 12}}, Options{From: "2025-06", To: "2025-12"}, `lag search: only 7 months between 2025-06 and 2025-12`},
		{[]Driver{{Series: d["aod"], MinLag: 0, MaxLag: 0}}, Options{From: "2025-06", To: "2025-12"}, `only 7 months between 2025-06 and 2025-12`},
		{[]Driver{{}}, Options{}, `driver 1: no series`},
	}
	for _, c := range cases {
		_, err := Fit(tgt, c.drivers, c.opt)
		if err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("want error containing %q, got %v", c.want, err)
		}
	}
	if _, err := Fit(nil, nil, Options{}); err == nil {
		t.Error("nil target accepted")
	}
	// A constant driver cannot be searched.
	flat := d["aod"].Clone()
	for i := range flat.Values {
		flat.Values[i] = 0.003
	}
	if _, err := Fit(tgt, []Driver{{Series: flat, MaxLag: 3}}, Options{}); err == nil || !strings.Contains(err.Error(), "constant") {
		t.Errorf("constant driver: %v", err)
	}
}

// TestNoDrivers: with no drivers the model removes the annual cycle only.
func TestNoDrivers(t *testing.T) {
	d := loadDemo(t)
	r, err := Fit(d["surface_anomaly"], nil, Options{})
	if err != nil {
		t.Fatal(err)
	}
	if r.Search != nil || len(r.Drivers) != 0 || len(r.Cycle) != 2 {
		t.Errorf("search %v drivers %d cycle %d", r.Search, len(r.Drivers), len(r.Cycle))
	}
}
