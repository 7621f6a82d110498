package analysis

import (
	"fmt"

	"heatledger/core/drivers"
	"heatledger/core/series"
)

// AdjustDriver is one driver of an adjustment: a series name (or FILE:NAME)
// and how it enters the model (see drivers.Driver).
type AdjustDriver struct {
	Name string `json:"name"`
	// MinLag and MaxLag bound the lag search in months; nil means
	// drivers.DefaultMinLag (0) and max(min, drivers.DefaultMaxLag (12)).
	// Equal values fix the lag.
	MinLag  *int `json:"min_lag,omitempty"`
	MaxLag  *int `json:"max_lag,omitempty"`
	Smooth3 bool `json:"smooth3,omitempty"` // centred three-month running mean
	Detrend bool `json:"detrend,omitempty"` // remove the driver's line over the fit window
}

// AdjustSettings ask for the removal of short-term factors from a target by
// lagged regression (core/drivers).
type AdjustSettings struct {
	Target  string         `json:"target"`
	Drivers []AdjustDriver `json:"drivers"`
	// Harmonics is the number of annual-cycle harmonics (0 to 2); nil or
	// -1 means the default, 2 for a monthly target and 0 for an annual one.
	Harmonics *int `json:"harmonics,omitempty"`
	// Trend is linear (default), none, broken (with Breaks) or series (with
	// TrendSeries).
	Trend       string   `json:"trend,omitempty"`
	Breaks      []string `json:"breaks,omitempty"` // YYYY, YYYY-MM (start of that month) or a decimal year
	TrendSeries string   `json:"trend_series,omitempty"`
	// From and To bound the fit window (YYYY, YYYY-MM or decimal year; To
	// inclusive for YYYY and YYYY-MM; empty = the target's start or end).
	From string `json:"from,omitempty"`
	To   string `json:"to,omitempty"`
	// Windows are FROM, TO pairs over which the raw and adjusted trends are
	// reported (default: the fit window); Change, when set, asks for the
	// table of each term's contribution to the trend change from window
	// Change[0] to Change[1].
	Windows [][2]string   `json:"windows,omitempty"`
	Change  *[2][2]string `json:"change,omitempty"`
	// Noise and Level are the trend engine's settings for those trends
	// (default ar1, 0.95).
	Noise string  `json:"noise,omitempty"`
	Level float64 `json:"level,omitempty"`
}

// Adjust fits the lagged regression of the target on its drivers and
// returns the fit, the adjusted series and the trends (drivers.Fit).
func (w *Workspace) Adjust(s AdjustSettings) (*drivers.Result, error) {
	if s.Target == "" {
		return nil, fmt.Errorf("no target series chosen for the adjustment")
	}
	target, err := w.Find(s.Target)
	if err != nil {
		return nil, err
	}
	var ds []drivers.Driver
	for _, d := range s.Drivers {
		dr, err := w.driver(d)
		if err != nil {
			return nil, err
		}
		ds = append(ds, dr)
	}
	opt := drivers.Options{Harmonics: s.Harmonics, Trend: s.Trend, From: s.From, To: s.To, Noise: s.Noise, Level: s.Level}
	for _, b := range s.Breaks {
		t, err := series.ParseTime(b, false)
		if err != nil {
			return nil, fmt.Errorf("break: %w", err)
		}
		opt.Breaks = append(opt.Breaks, t)
	}
	if s.TrendSeries != "" {
		if opt.TrendSeries, err = w.Find(s.TrendSeries); err != nil {
			return nil, fmt.Errorf("trend series: %w", err)
		}
	}
	for _, win := range s.Windows {
		opt.Windows = append(opt.Windows, drivers.Window{From: win[0], To: win[1]})
	}
	if s.Change != nil {
		opt.Change = &[2]drivers.Window{{From: s.Change[0][0], To: s.Change[0][1]}, {From: s.Change[1][0], To: s.Change[1][1]}}
	}
	return drivers.Fit(target, ds, opt)
}

// driver resolves one driver setting: its series and its lag range (the
// engine's defaults where the setting leaves them out).
func (w *Workspace) driver(d AdjustDriver) (drivers.Driver, error) {
	ser, err := w.Find(d.Name)
	if err != nil {
		return drivers.Driver{}, fmt.Errorf("driver: %w", err)
	}
	lo := drivers.DefaultMinLag
	if d.MinLag != nil {
		lo = *d.MinLag
	}
	hi := max(lo, drivers.DefaultMaxLag)
	if d.MaxLag != nil {
		hi = *d.MaxLag
	}
	return drivers.Driver{Series: ser, MinLag: lo, MaxLag: hi, Smooth3: d.Smooth3, Detrend: d.Detrend}, nil
}
