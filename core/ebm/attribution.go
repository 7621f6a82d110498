package ebm

import (
	"fmt"
	"math"

	"heatledger/core/series"
	"heatledger/core/trend"
)

// Contribution is one row of an attribution table: a forcing component's
// share of the modelled change over a window (or the total's, or the
// record's).
type Contribution struct {
	Name string `json:"name"`
	Kind string `json:"kind"`
	// ChangeK is the response's mean over the window's last year less its
	// mean over the window's first year (12 steps of a monthly axis, one
	// step of an annual one).
	ChangeK float64 `json:"change_k"`
	// SlopePerDecade is the least-squares trend of the response over the
	// window (trend.Window; the responses are smooth model output, so only
	// the slope is reported), K per decade.
	SlopePerDecade float64 `json:"slope_per_decade"`
	// ShareOfChange is ChangeK over the total model change (nil when the
	// total change is below 1e-9 K).
	ShareOfChange *float64 `json:"share_of_change"`
	// ForcingChangeWPerM2 and ForcingSlopePerDecade are the same measures of
	// the component's forcing (ERF times efficacy), W m-2 and W m-2 per
	// decade.
	ForcingChangeWPerM2   float64 `json:"forcing_change_w_m2"`
	ForcingSlopePerDecade float64 `json:"forcing_slope_per_decade"`
}

// Attribution splits the model's change and trend over a window into the
// components' responses. The model is linear, so the responses add up to
// the total: the total's row equals the sum of the components' rows.
type Attribution struct {
	From       string         `json:"from"`
	To         string         `json:"to"`
	N          int            `json:"n"`
	Total      Contribution   `json:"total"`
	Components []Contribution `json:"components"`
	// Record is the trend of an observed record over the same window with
	// its uncertainty (the chosen noise model; nil, with a warning, when the
	// trend engine refuses the window); RecordChangeK its change as ChangeK
	// (nil without a record, or when the first or last year has no value).
	Record        *trend.Result `json:"record"`
	RecordChangeK *float64      `json:"record_change_k"`
	Warnings      []string      `json:"warnings"`
}

// Attribute computes the attribution table over the window from..to
// (YYYY, YYYY-MM or a decimal year, as series.WindowSpec; empty = the run's
// start or end). record, if not nil, is trended over the same window with
// opt (trend.SeriesWindow).
func (r *Run) Attribute(from, to string, record *series.Series, opt trend.Options) (*Attribution, error) {
	win, err := r.T.WindowSpec(from, to)
	if err != nil {
		return nil, fmt.Errorf("attribution window: %w", err)
	}
	n := len(win.Values)
	if n < 2 {
		return nil, fmt.Errorf("attribution window %s to %s holds %d step(s) of the run: expected at least 2", from, to, n)
	}
	lo := win.First - r.T.First
	a := &Attribution{From: series.StepLabel(win.Resolution, win.First), To: series.StepLabel(win.Resolution, win.Last()), N: n, Warnings: []string{}}
	yr := min(n/2, win.Resolution.StepsPerYear())
	if yr < win.Resolution.StepsPerYear() {
		a.Warnings = append(a.Warnings, fmt.Sprintf("window %s to %s is shorter than two years: the change compares its first and last %d step(s)", a.From, a.To, yr))
	}
	row := func(name, kind string, resp, frc []float64) (Contribution, error) {
		c := Contribution{Name: name, Kind: kind}
		c.ChangeK = change(resp[lo:lo+n], yr)
		s, err := slope(win.Times, resp[lo:lo+n])
		if err != nil {
			return c, fmt.Errorf("trend of the response to %s: %w", name, err)
		}
		c.SlopePerDecade = 10 * s
		c.ForcingChangeWPerM2 = change(frc[lo:lo+n], yr)
		if s, err = slope(win.Times, frc[lo:lo+n]); err != nil {
			return c, fmt.Errorf("trend of the forcing %s: %w", name, err)
		}
		c.ForcingSlopePerDecade = 10 * s
		return c, nil
	}
	if a.Total, err = row("total", "", r.T.Values, r.Forcing.Values); err != nil {
		return nil, err
	}
	for _, c := range r.Components {
		fe := make([]float64, len(c.ERF.Values))
		for i, v := range c.ERF.Values {
			fe[i] = c.Efficacy * v
		}
		cr, err := row(c.Name, c.Kind, c.T.Values, fe)
		if err != nil {
			return nil, err
		}
		a.Components = append(a.Components, cr)
	}
	if math.Abs(a.Total.ChangeK) > 1e-9 {
		for i := range a.Components {
			s := a.Components[i].ChangeK / a.Total.ChangeK
			a.Components[i].ShareOfChange = &s
		}
		one := 1.0
		a.Total.ShareOfChange = &one
	}
	if record != nil {
		if tr, err := trend.SeriesWindow(record, a.From, a.To, opt); err != nil {
			a.Warnings = append(a.Warnings, fmt.Sprintf("no trend of the record %q over %s to %s: %v", record.Name, a.From, a.To, err))
		} else {
			a.Record = tr
		}
		if rw, err := record.WindowSpec(a.From, a.To); err == nil && len(rw.Values) >= 2 {
			ry := min(len(rw.Values)/2, rw.Resolution.StepsPerYear())
			if c := change(rw.Values, ry); !math.IsNaN(c) {
				a.RecordChangeK = &c
			}
		}
	}
	return a, nil
}

// change is the mean of the last k values less the mean of the first k
// (NaN when either mean has no value).
func change(v []float64, k int) float64 {
	mean := func(w []float64) float64 {
		var s float64
		var m int
		for _, x := range w {
			if !math.IsNaN(x) {
				s += x
				m++
			}
		}
		if m == 0 {
			return math.NaN()
		}
		return s / float64(m)
	}
	return mean(v[len(v)-k:]) - mean(v[:k])
}

// slope is the least-squares slope per year through trend.Window (white
// noise: only the slope is used); a response without variation, on which
// the trend engine refuses to compute an uncertainty, falls back to the
// plain least-squares slope.
func slope(t, v []float64) (float64, error) {
	if r, err := trend.Window(t, v, trend.Options{Noise: trend.NoiseWhite}); err == nil {
		return r.SlopePerYear, nil
	}
	var tm, vm float64
	for i := range t {
		tm += t[i]
		vm += v[i]
	}
	tm /= float64(len(t))
	vm /= float64(len(t))
	var sxy, sxx float64
	for i := range t {
		sxy += (t[i] - tm) * (v[i] - vm)
		sxx += (t[i] - tm) * (t[i] - tm)
	}
	if sxx == 0 || math.IsNaN(sxy) {
		return 0, fmt.Errorf("no spread in time")
	}
	return sxy / sxx, nil
}

// Without is the what-if surface temperature without the named components:
// the total response less theirs, exact because the model is linear (the
// same as a run of the forcing without them, spin-up included).
func (r *Run) Without(names ...string) (*series.Series, error) {
	v := append([]float64(nil), r.T.Values...)
	for _, n := range names {
		found := false
		for _, c := range r.Components {
			if c.Name == n {
				for i, x := range c.T.Values {
					v[i] -= x
				}
				found = true
			}
		}
		if !found {
			return nil, fmt.Errorf("no forcing component named %q in the run", n)
		}
	}
	s := series.New("model T without "+joinNames(names), "K", r.T.Resolution, r.T.First, v)
	return s, nil
}

func joinNames(ns []string) string {
	out := ""
	for i, n := range ns {
		if i > 0 {
			out += ", "
		}
		out += n
	}
	return out
}
