// Package drivers removes short-term factors (an ocean index, volcanic
// aerosol, solar irradiance, or any other series) from a temperature record
// by lagged multiple regression, the approach of Foster and Rahmstorf 2011
// (Environ. Res. Lett. 6, 044022): a trend term, each factor at its own lag
// and a two-harmonic annual cycle are fitted together by least squares, the
// lags are chosen to fit best, and the adjusted series is the record less the
// fitted factor and annual-cycle terms.
//
// The model, for the target y at decimal year t on a monthly (or annual) axis:
//
//	y(t) = a + trend(t) + sum_k b_k x_k(t - L_k)
//	         + sum_{h=1..H} [c_h cos(2 pi h t) + d_h sin(2 pi h t)] + e(t)
//
// trend(t) is one of: linear, g (t - tc); none; a broken stick
// g (t - tc) + sum_j g_j (t - tb_j)_+ with given breaks tb_j; or s z(t) for
// a series z the user supplies (e.g. a forced response). tc is the mean time
// of the fit sample, so a is the fitted level there. Lags L_k are whole
// months applied by time (index arithmetic on the month axis), never by rows,
// so a gap stays a gap.
//
// Outputs, on the target's whole axis: each driver's contribution
// c_k(t) = b_k (x_k(t - L_k) - m_k), centred on m_k, the mean of the lagged
// driver over the fit sample (a constant, so trends are unaffected and the
// adjusted series stays at the target's level; add b_k m_k for the raw
// product b_k x_k(t - L_k)); the annual cycle; and the adjusted series
// y(t) - sum_k c_k(t) - cycle(t), which keeps the trend term, the intercept
// and the residual.
//
// Time is the decimal year (monthly values at mid-month, annual at mid-year);
// missing values are NaN. The package imports only the standard library,
// gonum and the core packages series, linreg and trend, so it builds natively
// and as GOOS=js GOARCH=wasm.
package drivers

import (
	"fmt"
	"math"
	"strings"

	"heatledger/core/linreg"
	"heatledger/core/series"
	"heatledger/core/trend"
)

// Trend terms (the values of Options.Trend).
const (
	TrendLinear = "linear" // g (t - tc)
	TrendNone   = "none"   // no trend term (the intercept only)
	TrendBroken = "broken" // g (t - tc) + sum_j g_j (t - tb_j)_+
	TrendSeries = "series" // s z(t) for a supplied series z
)

// Defaults and limits.
const (
	// DefaultMinLag and DefaultMaxLag are the lag range searched when the
	// caller gives none (months).
	DefaultMinLag, DefaultMaxLag = 0, 12
	// ExhaustiveLimit: the lag search tries every combination when the
	// product of the range sizes is at most this, else coordinate descent.
	ExhaustiveLimit = 50000
	// DefaultStarts is the number of coordinate-descent starts.
	DefaultStarts = 5
	// MaxDrivers, MaxLagsPerDriver and MaxAbsLagMonths bound the search
	// (memory grows with the square of the number of candidate columns).
	MaxDrivers       = 8
	MaxLagsPerDriver = 121
	MaxAbsLagMonths  = 600
	// MaxHarmonics is the largest number of annual-cycle harmonics.
	MaxHarmonics = 2
	// VIFWarning: a variance inflation factor above this gets a collinearity
	// warning (common practice: VIF > 10).
	VIFWarning = 10
)

// Driver is one explanatory series and how it enters the model.
type Driver struct {
	Series *series.Series
	// MinLag and MaxLag are the range of lags searched, in months (the
	// driver leads the target by the lag: the term is x(t - L)). Equal
	// values fix the lag. Annual series take multiples of 12 only.
	MinLag, MaxLag int
	// Smooth3 replaces the driver by its centred three-month running mean
	// (x(t-1) + x(t) + x(t+1)) / 3, missing where any of the three is
	// missing (common practice for noisy monthly indices). Monthly only.
	Smooth3 bool
	// Detrend removes the driver's own least-squares line, fitted to its
	// values (after smoothing) whose times lie in the fit window, from the
	// whole driver before the fit: x'(t) = x(t) - (p + q t).
	Detrend bool
}

// Window is a span given as text: YYYY, YYYY-MM or a decimal year (see
// series.ParseTime; the end is inclusive for YYYY and YYYY-MM; empty means
// the fit window's own start or end).
type Window struct {
	From string `json:"from"`
	To   string `json:"to"`
}

// Options are the model and report settings. The zero value fits a linear
// trend, the default annual cycle and no extra windows.
type Options struct {
	// Harmonics is H, the number of annual-cycle harmonics (0 to
	// MaxHarmonics). nil or negative means the default: 2 for a monthly
	// target, 0 for an annual one.
	Harmonics *int
	// Trend is TrendLinear (default when empty), TrendNone, TrendBroken or
	// TrendSeries.
	Trend string
	// Breaks are the break times of TrendBroken (decimal years, strictly
	// inside the fit window, increasing).
	Breaks []float64
	// TrendSeries is z of TrendSeries (same resolution as the target;
	// applied at lag 0).
	TrendSeries *series.Series
	// From and To bound the fit window (see Window); empty means the
	// target's own start or end.
	From, To string
	// Windows are the windows over which the trends of the raw and adjusted
	// series are reported; empty means the fit window.
	Windows []Window
	// Change, when set, asks for the table of each term's contribution to
	// the change in trend from window Change[0] (A) to Change[1] (B).
	Change *[2]Window
	// Noise and Level are the trend engine's settings for the window trends
	// (see trend.Options; empty noise means ar1).
	Noise string
	Level float64
	// Exhaustive overrides ExhaustiveLimit when positive; Starts overrides
	// DefaultStarts when positive.
	Exhaustive int
	Starts     int
}

// Result is a fitted model with its outputs. Fields that can be undefined
// are pointers (nil, JSON null).
type Result struct {
	Target     string `json:"target"`
	Unit       string `json:"unit"`
	Resolution string `json:"resolution"`
	// From and To label the fit window (YYYY-MM or YYYY); Start and End are
	// the first and last months actually used.
	From  string `json:"from"`
	To    string `json:"to"`
	Start string `json:"start"`
	End   string `json:"end"`
	// N is the number of months in the fit; Dropped the months of the fit
	// window that were not used, by cause in DroppedReasons (each month
	// counted once, under the first cause in the order target, trend
	// series, drivers in their order). OutsideWindow counts the target's
	// values outside the fit window (not part of Dropped).
	N              int          `json:"n"`
	Dropped        int          `json:"dropped"`
	DroppedReasons []DropReason `json:"dropped_reasons"`
	OutsideWindow  int          `json:"outside_window"`

	Harmonics int     `json:"harmonics"`
	TrendKind string  `json:"trend"`
	RefTime   float64 `json:"ref_time"` // tc: mean time of the fit sample
	// Intercept is a, the fitted level at RefTime (for TrendNone and
	// TrendSeries the constant term).
	Intercept Coef           `json:"intercept"`
	Trend     *TrendTerm     `json:"trend_term"`
	Drivers   []DriverResult `json:"drivers"`
	Cycle     []Harmonic     `json:"annual_cycle"`

	RSS        float64 `json:"rss"`
	DOF        int     `json:"dof"`
	ResidualSD float64 `json:"residual_sd"` // sqrt(RSS / (n - p))
	R2         float64 `json:"r2"`          // 1 - RSS / sum (y - ybar)^2
	AdjR2      float64 `json:"adj_r2"`      // 1 - (1 - R2)(n - 1)/(n - p)
	// AIC as R's AIC() for lm: n log(2 pi RSS/n) + n + 2 (p + 1).
	AIC float64 `json:"aic"`
	// Residual autocorrelations and the ARMA(1,1) inflation (see Inflation).
	Rho1 float64  `json:"rho1"`
	Rho2 float64  `json:"rho2"`
	Phi  *float64 `json:"phi"`
	Nu   float64  `json:"nu"`
	// Cond is the condition number of the design's non-constant columns
	// centred and scaled to unit length (1 = orthogonal); CondRaw that of the
	// design as fitted (linreg.Fit.Cond), which also reflects the units.
	Cond    float64 `json:"cond"`
	CondRaw float64 `json:"cond_raw"`

	Search *LagSearch `json:"lag_search"`
	// Trends are the raw and adjusted trends over Options.Windows.
	Trends []WindowTrends `json:"trends"`
	// Change is the trend-change table (Options.Change), else nil.
	Change   *TrendChange `json:"trend_change"`
	Warnings []string     `json:"warnings"`

	// Output series on the target's full axis (not part of the JSON).
	// Fitted = a + trend + sum_k b_k x_k(t - L_k) + cycle, NaN where a term
	// is missing; Residuals = target - Fitted on the fit sample only (NaN
	// elsewhere); Baseline = a + trend term; CycleSeries = the annual-cycle
	// terms; Contributions[k] = b_k (x_k(t - L_k) - mean_k) (see
	// DriverResult.Mean); Adjusted = target - sum_k Contributions[k] -
	// CycleSeries.
	TargetSeries  *series.Series   `json:"-"`
	Fitted        *series.Series   `json:"-"`
	Residuals     *series.Series   `json:"-"`
	Baseline      *series.Series   `json:"-"`
	CycleSeries   *series.Series   `json:"-"`
	Contributions []*series.Series `json:"-"`
	Adjusted      *series.Series   `json:"-"`
	// Fit is the final least-squares fit; Columns name its design columns.
	Fit     *linreg.Fit `json:"-"`
	Columns []string    `json:"columns"`
}

// Coef is one coefficient: the estimate, its plain OLS standard error and
// the standard error inflated for ARMA(1,1) residuals (see Inflation).
type Coef struct {
	Estimate     float64 `json:"estimate"`
	StdErr       float64 `json:"stderr"`
	StdErrARMA11 float64 `json:"stderr_arma11"`
}

// DropReason counts the months of the fit window lost to one cause.
type DropReason struct {
	// Cause is "target missing", "trend series missing", "driver missing"
	// (a gap in the driver at that lag) or "driver out of range" (the
	// lagged month lies before the driver's first or after its last step).
	Cause     string `json:"cause"`
	Series    string `json:"series"`
	LagMonths *int   `json:"lag_months,omitempty"`
	Count     int    `json:"count"`
	Text      string `json:"text"`
}

// TrendTerm is the fitted trend term.
type TrendTerm struct {
	Kind string `json:"kind"`
	// SlopePerDecade (linear; broken: the first segment) with its OLS and
	// ARMA(1,1)-inflated standard errors, per decade; nil for none/series.
	SlopePerDecade        *float64  `json:"slope_per_decade"`
	StderrOLSPerDecade    *float64  `json:"stderr_ols_per_decade"`
	StderrARMA11PerDecade *float64  `json:"stderr_arma11_per_decade"`
	Breaks                []float64 `json:"breaks,omitempty"`
	// Segments (broken): the slope of each segment, the running sum of the
	// slope and hinge coefficients, with standard errors from the
	// covariance matrix: var(sum_j g_j) = 1' Cov 1 over those columns.
	Segments []Segment `json:"segments,omitempty"`
	// Series (TrendSeries): the coefficient s on the supplied series.
	Series     string `json:"series,omitempty"`
	SeriesCoef *Coef  `json:"series_coef,omitempty"`
}

// Segment is one piece of a broken-stick trend.
type Segment struct {
	From                  float64 `json:"from"`
	To                    float64 `json:"to"`
	SlopePerDecade        float64 `json:"slope_per_decade"`
	StderrOLSPerDecade    float64 `json:"stderr_ols_per_decade"`
	StderrARMA11PerDecade float64 `json:"stderr_arma11_per_decade"`
}

// DriverResult is one driver's fitted term.
type DriverResult struct {
	Name    string `json:"name"`
	Unit    string `json:"unit"`
	Smooth3 bool   `json:"smooth3"`
	Detrend bool   `json:"detrend"`
	MinLag  int    `json:"min_lag"`
	MaxLag  int    `json:"max_lag"`
	// LagMonths is the lag used (chosen by the search or fixed).
	LagMonths int `json:"lag_months"`
	// Coef is b_k in target units per driver unit.
	Coef
	// SD and Mean are the standard deviation (n - 1 denominator) and mean of
	// the lagged driver over the fit sample.
	SD   float64 `json:"sd"`
	Mean float64 `json:"mean"`
	// Effect1SD = b_k SD: the change of the target, in its units, for a
	// one-standard-deviation change of the driver. Beta = Effect1SD / sd(y),
	// sd(y) of the target over the fit sample: the dimensionless
	// standardised coefficient.
	Effect1SD float64 `json:"effect_1sd"`
	Beta      float64 `json:"beta"`
	// VIF = 1 / (1 - R_k^2), R_k^2 from regressing the driver's column on
	// the other columns of the design (the variance inflation factor,
	// Marquardt 1970, Technometrics, citation from memory), computed as
	// [(X'X)^-1]_kk sum (x_k - mean)^2 from the QR fit; checked against the
	// diagonal of R's solve(cor(X)) in ref_test.go. Above VIFWarning (10,
	// common practice) Fit warns.
	VIF float64 `json:"vif"`
	// RSSIncreaseMinus1 and RSSIncreasePlus1: how much the search
	// criterion (RSS over the common sample) grows when this driver's lag
	// is one step (a month; a year for annual series) shorter or longer,
	// the other lags held; nil outside the searched range or when no search
	// was made.
	RSSIncreaseMinus1 *float64 `json:"rss_increase_minus_1"`
	RSSIncreasePlus1  *float64 `json:"rss_increase_plus_1"`
	// Profile is the search criterion at each lag of the range, the other
	// lags held at their chosen values (nil without a search).
	Profile []LagRSS `json:"profile,omitempty"`
}

// LagRSS is the search criterion at one lag; RSS is nil where the lagged
// driver is collinear with the other terms.
type LagRSS struct {
	LagMonths int      `json:"lag_months"`
	RSS       *float64 `json:"rss"`
}

// Harmonic is the h-th annual-cycle pair c_h cos(2 pi h t) + d_h sin(2 pi h t).
type Harmonic struct {
	H         int     `json:"h"`
	Cos       Coef    `json:"cos"`
	Sin       Coef    `json:"sin"`
	Amplitude float64 `json:"amplitude"` // sqrt(c_h^2 + d_h^2)
}

// LagSearch describes how the lags were chosen.
type LagSearch struct {
	// Method is "exhaustive" or "coordinate" (coordinate descent).
	Method string `json:"method"`
	// Combinations is the product of the range sizes; Evaluated the number
	// of candidate fits computed.
	Combinations float64 `json:"combinations"`
	Evaluated    int     `json:"evaluated"`
	Starts       int     `json:"starts,omitempty"`
	// N is the size of the common sample: the months of the fit window with
	// every term present at every candidate lag of every driver.
	N int `json:"n"`
	// RSS and AIC of the chosen lags over the common sample.
	RSS float64 `json:"rss"`
	AIC float64 `json:"aic"`
}

// WindowTrends are the trends of the raw and adjusted series over a window
// (through trend.SeriesWindow).
type WindowTrends struct {
	From     string        `json:"from"`
	To       string        `json:"to"`
	Raw      *trend.Result `json:"raw"`
	Adjusted *trend.Result `json:"adjusted"`
}

// Fit fits the model of the package comment to the target with the given
// drivers, searching the lags where a driver has a range, and builds the
// outputs. Errors name the series and window at fault.
//
// Method:
//  1. The fit window is target.WindowSpec(From, To). Drivers are smoothed
//     and detrended as asked (Driver), then enter at lag L as x(t - L) by
//     index arithmetic on the month axis.
//  2. Lag search (searchLags) when any driver has a range: the criterion is
//     the residual sum of squares over a fixed common sample, the months
//     where the target, the trend term and every driver at every candidate
//     lag are present, so that all candidates are judged on the same data.
//  3. The final fit at the chosen lags uses every month of the window where
//     all terms are present, by linreg.OLS (Householder QR).
//  4. Standard errors: OLS, and OLS times sqrt(nu) with nu the ARMA(1,1)
//     inflation of Foster and Rahmstorf 2011 (Inflation).
//  5. Outputs on the target's full axis; trends of the raw and adjusted
//     series through trend.SeriesWindow; the trend-change table (Change).
func Fit(target *series.Series, drivers []Driver, opt Options) (*Result, error) {
	m, err := newModel(target, drivers, opt)
	if err != nil {
		return nil, err
	}
	return m.run()
}

// fmtYear formats a decimal year for messages.
func fmtYear(t float64) string {
	return strings.TrimRight(strings.TrimRight(fmt.Sprintf("%.4f", t), "0"), ".")
}

func finite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }

func ptr(v float64) *float64 { return &v }
