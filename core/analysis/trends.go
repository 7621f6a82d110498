package analysis

import (
	"context"
	"fmt"
	"strings"

	"heatledger/core/series"
	"heatledger/core/trend"
)

// TrendSettings ask for the trend of one or more series over one window.
type TrendSettings struct {
	Series []string `json:"series"`
	From   string   `json:"from,omitempty"` // YYYY, YYYY-MM or decimal year; empty = the series' start
	To     string   `json:"to,omitempty"`   // inclusive for YYYY and YYYY-MM; empty = the series' end
	Noise  string   `json:"noise,omitempty"`
	Level  float64  `json:"level,omitempty"`
	// Anomalies removes each calendar month's mean (over the series' whole
	// span) from monthly series before fitting: the answer to the trend
	// engine's warning that monthly values still carry a seasonal cycle.
	// Annual series are left as they are.
	Anomalies bool `json:"anomalies,omitempty"`
}

// trendSeries finds a series and, when asked, turns monthly values into
// anomalies from their own mean seasonal cycle.
func (w *Workspace) trendSeries(name string, anomalies bool) (*series.Series, error) {
	ser, err := w.Find(name)
	if err != nil || !anomalies || ser.Resolution != series.Monthly {
		return ser, err
	}
	y0, _ := series.YearMonth(ser.First)
	y1, _ := series.YearMonth(ser.Last())
	a, err := ser.Rebaseline(y0, y1)
	if err != nil {
		return nil, fmt.Errorf("monthly anomalies of %q: %w", ser.Name, err)
	}
	return a, nil
}

// Trends fits the window trend of each named series.
func (w *Workspace) Trends(s TrendSettings) ([]*trend.Result, error) {
	if len(s.Series) == 0 {
		return nil, fmt.Errorf("no series chosen for the trend")
	}
	var out []*trend.Result
	for _, name := range s.Series {
		ser, err := w.trendSeries(name, s.Anomalies)
		if err != nil {
			return nil, err
		}
		r, err := trend.SeriesWindow(ser, s.From, s.To, trend.Options{Noise: s.Noise, Level: s.Level})
		if err != nil {
			return nil, err
		}
		out = append(out, r)
	}
	return out, nil
}

// CompareSettings ask for the trends of one series in two windows.
type CompareSettings struct {
	Series  string    `json:"series"`
	WindowA [2]string `json:"window_a"`
	WindowB [2]string `json:"window_b"`
	Noise   string    `json:"noise,omitempty"`
	Level   float64   `json:"level,omitempty"`
}

// Compare runs the two-window comparison and the broken-stick test.
func (w *Workspace) Compare(s CompareSettings) (*trend.Comparison, error) {
	ser, err := w.Find(s.Series)
	if err != nil {
		return nil, err
	}
	c, err := trend.SeriesCompare(ser, s.WindowA, s.WindowB, trend.Options{Noise: s.Noise, Level: s.Level})
	if err != nil {
		return nil, fmt.Errorf("series %q: %w", ser.Name, err)
	}
	return c, nil
}

// ParseWindow reads "FROM:TO" (each YYYY, YYYY-MM or a decimal year).
func ParseWindow(s string) ([2]string, error) {
	parts := strings.Split(s, ":")
	if len(parts) != 2 || strings.TrimSpace(parts[0]) == "" || strings.TrimSpace(parts[1]) == "" {
		return [2]string{}, fmt.Errorf("window %q: expected FROM:TO, e.g. 1961:1990 or 1991-01:2020-12", s)
	}
	for _, p := range parts {
		if _, err := series.ParseTime(p, false); err != nil {
			return [2]string{}, fmt.Errorf("window %q: %v", s, err)
		}
	}
	return [2]string{strings.TrimSpace(parts[0]), strings.TrimSpace(parts[1])}, nil
}

// GridSettings ask for the trend grid of one series.
type GridSettings struct {
	Series   string  `json:"series"`
	MinYears float64 `json:"min_years,omitempty"`
	Step     string  `json:"step,omitempty"` // year or month
	Noise    string  `json:"noise,omitempty"`
	Level    float64 `json:"level,omitempty"`
}

// Grid computes the trend over every window of the series.
func (w *Workspace) Grid(s GridSettings) (*trend.GridResult, error) {
	ser, err := w.Find(s.Series)
	if err != nil {
		return nil, err
	}
	return trend.SeriesGrid(ser, trend.GridOptions{MinYears: s.MinYears, Step: s.Step, Noise: s.Noise, Level: s.Level})
}

// BreaksSettings ask for change points in one series.
type BreaksSettings struct {
	Series   string  `json:"series"`
	From     string  `json:"from,omitempty"`
	To       string  `json:"to,omitempty"`
	Max      int     `json:"max,omitempty"`
	MinYears float64 `json:"min_years,omitempty"`
	Sims     int     `json:"sims,omitempty"`
	Seed     uint64  `json:"seed"`
	Model    string  `json:"model,omitempty"` // slope or mean
	Noise    string  `json:"noise,omitempty"`
}

// Breaks searches for change points. progress and ctx may be nil.
func (w *Workspace) Breaks(s BreaksSettings, ctx context.Context, progress func(done, total int)) (*trend.BreaksResult, *series.Series, error) {
	ser, err := w.Find(s.Series)
	if err != nil {
		return nil, nil, err
	}
	win, err := ser.WindowSpec(s.From, s.To)
	if err != nil {
		return nil, nil, err
	}
	r, err := trend.Breaks(win.Times, win.Values, trend.BreaksOptions{
		MaxBreaks: s.Max, MinYears: s.MinYears, Sims: s.Sims, Seed: s.Seed,
		Model: s.Model, Noise: s.Noise, Progress: progress, Context: ctx,
	})
	if err != nil {
		return nil, nil, fmt.Errorf("series %q: %w", ser.Name, err)
	}
	return r, win, nil
}

// SenSettings ask for the Theil-Sen slope and Mann-Kendall test.
type SenSettings struct {
	Series     string  `json:"series"`
	From       string  `json:"from,omitempty"`
	To         string  `json:"to,omitempty"`
	Correction string  `json:"correction,omitempty"` // none, hamed-rao or prewhiten
	Level      float64 `json:"level,omitempty"`
}

// Sen computes the Theil-Sen slope and the Mann-Kendall test.
func (w *Workspace) Sen(s SenSettings) (*trend.SenResult, error) {
	ser, err := w.Find(s.Series)
	if err != nil {
		return nil, err
	}
	win, err := ser.WindowSpec(s.From, s.To)
	if err != nil {
		return nil, err
	}
	r, err := trend.SenMannKendall(win.Times, win.Values, trend.SenOptions{Correction: s.Correction, Level: s.Level})
	if err != nil {
		return nil, fmt.Errorf("series %q: %w", ser.Name, err)
	}
	return r, nil
}
