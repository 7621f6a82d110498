package analysis

import (
	"math"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"heatledger/core/series"
)

func demoDriversSettings() AdjustSettings {
	return AdjustSettings{Target: "surface_anomaly",
		Drivers: []AdjustDriver{{Name: "ocean_index"}, {Name: "aod"}, {Name: "tsi"}},
		Change:  &[2][2]string{{"1960", "1989"}, {"1990", "2019"}}}
}

// zeroLineRe finds the first and last x pixel of the unnamed zero line of
// a contribution chart; bandRe its shaded band.
var (
	zeroLineRe = regexp.MustCompile(`<path class="hl-line" data-series="" d="M([0-9.]+),[0-9.]+L([0-9.]+),`)
	bandRe     = regexp.MustCompile(`<path class="hl-band"[^>]*d="[^"]*"`)
)

func TestDriversFigureDemo(t *testing.T) {
	w := demoWorkspace(t)
	v, err := w.DriversFigure(demoDriversSettings())
	if err != nil {
		t.Fatal(err)
	}
	r := v.Result
	if v.ChangeErr != "" || v.Change == nil || v.ChangeSVG == "" {
		t.Fatalf("change table missing: %q", v.ChangeErr)
	}

	// the fit chart: target, fitted model, trend term
	for _, name := range []string{"surface_anomaly", "fitted model", "trend term (linear)"} {
		if !strings.Contains(v.FitSVG, `data-series="`+name+`"`) {
			t.Errorf("fit chart lacks the line %q", name)
		}
	}
	// small multiples: one per driver, each naming its lag, on one x range
	if len(v.Contributions) != len(r.Drivers) || len(r.Drivers) != 3 {
		t.Fatalf("%d contribution charts for %d drivers", len(v.Contributions), len(r.Drivers))
	}
	var x0, x1, band string
	for k, f := range v.Contributions {
		d := r.Drivers[k]
		if f.Driver != d.Name || f.LagMonths != d.LagMonths {
			t.Errorf("figure %d is %s lag %d, result %s lag %d", k, f.Driver, f.LagMonths, d.Name, d.LagMonths)
		}
		want := d.Name + `, lag ` + strconv.Itoa(d.LagMonths) + ` months`
		if !strings.Contains(f.SVG, want) {
			t.Errorf("chart of %s lacks %s", d.Name, want)
		}
		if !strings.Contains(f.SVG, "contribution (K)") {
			t.Errorf("chart of %s does not give the target's unit", d.Name)
		}
		m := zeroLineRe.FindStringSubmatch(f.SVG)
		b := bandRe.FindString(f.SVG)
		if m == nil || b == "" {
			t.Fatalf("chart of %s has no zero line or no band", d.Name)
		}
		// the zero line fixes the time axis, the band the value axis: the
		// same pixels in every panel
		if k == 0 {
			x0, x1, band = m[1], m[2], b
		} else if m[1] != x0 || m[2] != x1 || b != band {
			t.Errorf("chart of %s: zero line x %s..%s and band %s; the first chart %s..%s and %s: the small multiples must share their axes", d.Name, m[1], m[2], b, x0, x1, band)
		}
	}
	// raw and adjusted with their trend lines
	for _, name := range []string{"raw", "adjusted"} {
		if !strings.Contains(v.AdjustedSVG, `data-series="`+name+`"`) {
			t.Errorf("adjusted chart lacks %q", name)
		}
	}
	if n := strings.Count(v.AdjustedSVG, ` trend `); n < 2 {
		t.Errorf("adjusted chart has %d trend lines, want raw and adjusted", n)
	}

	// coefficients table: a row per driver in order with the engine's lag,
	// then the trend
	if len(v.Coefficients.Rows) != len(r.Drivers)+1 {
		t.Fatalf("coefficient rows %q", v.Coefficients.Rows)
	}
	for k, d := range r.Drivers {
		row := v.Coefficients.Rows[k]
		if row[0] != d.Name || row[1] != strconv.Itoa(d.LagMonths) || row[2] != Fmt(d.Estimate) || row[5] != Fmt(d.StdErrARMA11) || row[8] != Fmt(d.VIF) {
			t.Errorf("row %q for driver %+v", row, d)
		}
		if len(row) != len(v.Coefficients.Columns) {
			t.Errorf("row %d has %d cells for %d columns", k, len(row), len(v.Coefficients.Columns))
		}
	}
	if last := v.Coefficients.Rows[len(r.Drivers)]; last[0] != "trend (linear)" || last[2] != Fmt(*r.Trend.SlopePerDecade) {
		t.Errorf("trend row %q", last)
	}
	if len(v.Lags.Rows) != 3 || !strings.Contains(v.SearchNote, "Every combination tried") {
		t.Errorf("lag table %q, note %q", v.Lags.Rows, v.SearchNote)
	}
	if got := v.Lags.Rows[0][3]; got != fmtOpt(r.Drivers[0].RSSIncreaseMinus1) || got == "-" {
		t.Errorf("RSS increase at lag - 1 shown as %q", got)
	}

	// fit statistics name n, drops with reasons, R2, AIC, rho1, nu
	stats := map[string]string{}
	for _, row := range v.Stats.Rows {
		stats[row[0]] = row[1]
	}
	if !strings.HasPrefix(stats["months used (n)"], strconv.Itoa(r.N)+" ") || stats["months dropped"] != strconv.Itoa(r.Dropped) ||
		stats["R²"] != Fmt(r.R2) || stats["AIC"] != Fmt(r.AIC) || stats["residual lag-1 autocorrelation (rho1)"] != Fmt(r.Rho1) {
		t.Errorf("stats %q", stats)
	}
	reasons := 0
	for k := range stats {
		if strings.HasPrefix(k, "dropped: ") {
			reasons++
		}
	}
	if reasons != len(r.DroppedReasons) {
		t.Errorf("%d drop reasons shown, engine gave %d", reasons, len(r.DroppedReasons))
	}

	// the change table adds up: the engine's identity and the sum row
	c := r.Change
	sum := c.Cycle.ChangePerDecade + c.Adjusted.ChangePerDecade
	for _, d := range c.Drivers {
		sum += d.ChangePerDecade
	}
	if math.Abs(sum-c.Raw.ChangePerDecade) > 1e-9 {
		t.Errorf("terms add to %v, raw change %v", sum, c.Raw.ChangePerDecade)
	}
	rows := v.Change.Rows
	if len(rows) != 3+len(c.Drivers)+1 {
		t.Fatalf("change rows %q", rows)
	}
	first, last := rows[0], rows[len(rows)-1]
	for j := 1; j < 4; j++ {
		a, err1 := strconv.ParseFloat(first[j], 64)
		b, err2 := strconv.ParseFloat(last[j], 64)
		if err1 != nil || err2 != nil || math.Abs(a-b) > 1e-3*math.Max(math.Abs(a), 1e-3) {
			t.Errorf("column %s: raw %q, sum of the terms %q", v.Change.Columns[j], first[j], last[j])
		}
	}
	for _, d := range r.Drivers {
		if !strings.Contains(v.ChangeSVG, `data-category="`+d.Name+`"`) {
			t.Errorf("change bars lack %s", d.Name)
		}
	}
	// the caution about choosing lags reaches the page
	found := false
	for _, w := range v.Warnings {
		if strings.Contains(w, "optimistic") {
			found = true
		}
	}
	if !found {
		t.Errorf("warnings %q lack the caution about chosen lags", v.Warnings)
	}
	// trends table: raw and adjusted over the fit window
	if len(v.Trends.Rows) != 2 || v.Trends.Rows[0][0] != "raw" || v.Trends.Rows[1][5] != Fmt(r.Trends[0].Adjusted.SlopePerDecade) {
		t.Errorf("trends table %q", v.Trends.Rows)
	}
}

// TestTrendTermAtLevel: the trend term is drawn through the data. Over the
// fit sample, fitted - cycle - trend term averages to zero (the
// contributions are centred there); the engine's bare Baseline sits far
// off because the irradiance driver enters uncentred (about 1361 W m-2).
func TestTrendTermAtLevel(t *testing.T) {
	w := demoWorkspace(t)
	v, err := w.DriversFigure(demoDriversSettings())
	if err != nil {
		t.Fatal(err)
	}
	r := v.Result
	drawn := TrendTermAtLevel(r)
	var gapDrawn, gapBare float64
	n := 0
	for i, e := range r.Residuals.Values {
		if math.IsNaN(e) {
			continue
		}
		f := r.Fitted.Values[i] - r.CycleSeries.Values[i]
		gapDrawn += f - drawn[i]
		gapBare += f - r.Baseline.Values[i]
		n++
	}
	gapDrawn /= float64(n)
	gapBare /= float64(n)
	if math.Abs(gapDrawn) > 1e-9 {
		t.Errorf("drawn trend term is %.3g off the fitted level", gapDrawn)
	}
	if math.Abs(gapBare) < 1 {
		t.Errorf("bare baseline only %.3g off: the check above would not catch a missing level", gapBare)
	}
}

// TestDriversFigureChangeWindowsUnusable: comparison windows outside the
// data do not cost the fit; the view says what is wrong with them.
func TestDriversFigureChangeWindowsUnusable(t *testing.T) {
	w := demoWorkspace(t)
	s := demoDriversSettings()
	s.Change = &[2][2]string{{"2100", "2110"}, {"1990", "2019"}}
	v, err := w.DriversFigure(s)
	if err != nil {
		t.Fatal(err)
	}
	if v.Change != nil || v.ChangeSVG != "" || !strings.Contains(v.ChangeErr, "window A") {
		t.Errorf("change %v, error %q", v.Change, v.ChangeErr)
	}
	if len(v.Coefficients.Rows) == 0 || v.FitSVG == "" {
		t.Error("no fit shown")
	}
}

func TestDriversFigureErrors(t *testing.T) {
	w := demoWorkspace(t)
	for _, c := range []struct {
		name  string
		edit  func(*AdjustSettings)
		words []string
	}{
		{"window without data", func(s *AdjustSettings) { s.From = "2100" }, []string{"fit window", "2100"}},
		{"unknown driver", func(s *AdjustSettings) { s.Drivers = append(s.Drivers, AdjustDriver{Name: "nothing_here"}) }, []string{"nothing_here"}},
		{"annual driver", func(s *AdjustSettings) { s.Drivers = append(s.Drivers, AdjustDriver{Name: "ocean_heat"}) }, []string{"ocean_heat", "annual"}},
		{"no target", func(s *AdjustSettings) { s.Target = "" }, []string{"target"}},
	} {
		s := demoDriversSettings()
		c.edit(&s)
		v, err := w.DriversFigure(s)
		if err == nil {
			t.Errorf("%s: no error (view %v)", c.name, v != nil)
			continue
		}
		for _, word := range c.words {
			if !strings.Contains(err.Error(), word) {
				t.Errorf("%s: error %q does not say %q", c.name, err, word)
			}
		}
	}
}

func TestDriversFigureOtherTerms(t *testing.T) {
	w := demoWorkspace(t)
	// fixed lags, a broken trend and one harmonic
	zero, three := 0, 3
	one := 1
	s := AdjustSettings{Target: "surface_anomaly", Drivers: []AdjustDriver{{Name: "ocean_index", MinLag: &three, MaxLag: &three, Smooth3: true}, {Name: "tsi", MinLag: &zero, MaxLag: &zero, Detrend: true}},
		Trend: "broken", Breaks: []string{"1980"}, Harmonics: &one}
	v, err := w.DriversFigure(s)
	if err != nil {
		t.Fatal(err)
	}
	if v.SearchNote != "No lag search: every lag was fixed." || v.Lags.Rows[0][1] != "fixed" {
		t.Errorf("lags %q note %q", v.Lags.Rows, v.SearchNote)
	}
	var segs int
	for _, row := range v.Coefficients.Rows {
		if strings.HasPrefix(row[0], "trend, segment") {
			segs++
		}
	}
	if segs != 2 {
		t.Errorf("%d trend segments in %q", segs, v.Coefficients.Rows)
	}
	if !strings.Contains(v.Contributions[0].SVG, "3-month mean") || !strings.Contains(v.Contributions[1].SVG, "detrended") {
		t.Error("driver options not named in the charts")
	}
	if !strings.Contains(v.FitSVG, "broken at 1980.00") {
		t.Error("fit chart does not name the break")
	}
	if v.Change != nil || v.ChangeErr != "" {
		t.Error("change table without windows")
	}
}

// TestDriversFigureEscapes: names from a file stay text in every chart.
func TestDriversFigureEscapes(t *testing.T) {
	evil := `<img src=x onerror=alert(1)>`
	var b strings.Builder
	b.WriteString("date,y (K),x" + evil + "\n")
	for i := 0; i < 240; i++ {
		y, m := 1990+i/12, i%12+1
		x := math.Sin(float64(i) / 7)
		b.WriteString(series.StepLabel(series.Monthly, y*12+m-1) + "," + strconv.FormatFloat(0.01*float64(i)/12+0.3*x+0.05*math.Cos(float64(i)*1.3), 'f', 4, 64) + "," + strconv.FormatFloat(x, 'f', 4, 64) + "\n")
	}
	w := NewWorkspace([]File{{"evil.csv", []byte(b.String())}}, series.Options{})
	if w.Files[0].Err != nil {
		t.Fatal(w.Files[0].Err)
	}
	v, err := w.DriversFigure(AdjustSettings{Target: "y", Drivers: []AdjustDriver{{Name: "x" + evil}}})
	if err != nil {
		t.Fatal(err)
	}
	for _, svg := range []string{v.FitSVG, v.Contributions[0].SVG, v.AdjustedSVG} {
		if strings.Contains(svg, "<img") {
			t.Error("markup from a series name reached an SVG")
		}
	}
	if v.Coefficients.Rows[0][0] != "x"+evil {
		t.Errorf("table cell %q", v.Coefficients.Rows[0][0])
	}
}
