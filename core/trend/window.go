// Package trend holds Heatledger's trend engines: the trend over a window
// with its uncertainty under a chosen noise model (window.go), the
// comparison of two windows and the broken-stick test of a change in rate
// (compare.go), the grid of trends over every start and end (grid.go),
// change points (breaks.go), Theil-Sen and Mann-Kendall (sen.go) and
// smoothing for display (smooth.go).
//
// Time is the decimal year (monthly values at mid-month, annual values at
// mid-year); missing values are NaN. Slopes are reported per decade.
package trend

import (
	"errors"
	"fmt"
	"math"
	"strconv"
	"strings"

	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/stat/distuv"

	"heatledger/core/linreg"
	"heatledger/core/series"
)

// Noise models for the trend's uncertainty (the values of Options.Noise).
const (
	NoiseWhite    = "white"     // independent errors: OLS standard error
	NoiseAR1      = "ar1"       // Santer et al. 2008 effective sample size
	NoiseARMA11   = "arma11"    // Foster and Rahmstorf 2011 variance inflation
	NoiseARMA11ML = "arma11-ml" // regression with ARMA(1,1) errors by exact maximum likelihood
)

// DefaultLevel is the confidence level used when Options.Level is zero.
const DefaultLevel = 0.95

// ShortWindowYears: windows shorter than this get a warning that
// year-to-year variability dominates the trend (common practice).
const ShortWindowYears = 15

// Options are the settings of a window trend.
type Options struct {
	// Noise is one of NoiseWhite, NoiseAR1, NoiseARMA11, NoiseARMA11ML;
	// empty means NoiseAR1.
	Noise string
	// Level is the confidence level of the interval, in (0, 1); zero means
	// DefaultLevel (0.95).
	Level float64
}

func (o Options) normalise() (Options, error) {
	o.Noise = strings.ToLower(strings.TrimSpace(o.Noise))
	if o.Noise == "" {
		o.Noise = NoiseAR1
	}
	switch o.Noise {
	case NoiseWhite, NoiseAR1, NoiseARMA11, NoiseARMA11ML:
	default:
		return o, fmt.Errorf("noise model %q: expected white, ar1, arma11 or arma11-ml", o.Noise)
	}
	if o.Level == 0 {
		o.Level = DefaultLevel
	}
	if !(o.Level > 0 && o.Level < 1) {
		return o, fmt.Errorf("confidence level %v: expected a value between 0 and 1, e.g. 0.95", o.Level)
	}
	return o, nil
}

// Result is a trend over one window. The JSON field names are the CLI
// contract of `heatledger trend --json`.
//
// Fields that do not apply to the chosen noise model are nil (JSON null):
//   - DOF: nil for arma11-ml, whose interval and p-value use the normal
//     distribution (asymptotic maximum likelihood).
//   - Phi: the AR coefficient; arma11 (phi = rho2/rho1, or rho1 after the
//     AR(1) fall-back) and arma11-ml only.
//   - Nu: the variance inflation factor; arma11, and arma11-ml where it is
//     the implied (SE_ML / SE_OLS)^2.
//   - NEff: the effective sample size; ar1 (n_e), arma11 (n / nu) and
//     arma11-ml (n / implied nu).
//
// Rho1 and Rho2 (lag-1 and lag-2 autocorrelations of the OLS residuals) are
// reported for every model.
type Result struct {
	Series          string   `json:"series"`
	From            string   `json:"from"`
	To              string   `json:"to"`
	N               int      `json:"n"`
	Noise           string   `json:"noise"`
	Level           float64  `json:"level"`
	SlopePerDecade  float64  `json:"slope_per_decade"`
	StderrPerDecade float64  `json:"stderr_per_decade"`
	CILowPerDecade  float64  `json:"ci_low_per_decade"`
	CIHighPerDecade float64  `json:"ci_high_per_decade"`
	PValue          float64  `json:"p_value"`
	DOF             *float64 `json:"dof"`
	Rho1            float64  `json:"rho1"`
	Rho2            float64  `json:"rho2"`
	Phi             *float64 `json:"phi"`
	Nu              *float64 `json:"nu"`
	NEff            *float64 `json:"n_eff"`
	ResidualSD      float64  `json:"residual_sd"` // OLS residuals: sqrt(sum e^2 / (n - 2)), every model
	Warnings        []string `json:"warnings"`

	// Not part of the JSON contract.
	SlopePerYear float64  `json:"-"` // slope per year
	Theta        *float64 `json:"-"` // MA coefficient (arma11-ml only; R's sign convention)
	Intercept    float64  `json:"-"` // fitted value at decimal year 0: fit(t) = Intercept + SlopePerYear t
	Missing      int      `json:"-"` // NaN values skipped inside the window
	Start, End   float64  `json:"-"` // decimal years of the first and last values used
	Normal       bool     `json:"-"` // interval and p-value from the normal distribution (arma11-ml)
}

// SlopePerCentury is the slope per 100 years.
func (r *Result) SlopePerCentury() float64 { return 10 * r.SlopePerDecade }

// At is the fitted trend line at decimal year t.
func (r *Result) At(t float64) float64 { return r.Intercept + r.SlopePerYear*t }

// Window fits a straight line y = a + b t by ordinary least squares over the
// given times (decimal years) and reports b per decade with its uncertainty
// under the noise model opt.Noise. NaN values of y are skipped (and
// counted, with a warning). t must be finite and strictly increasing; the
// residual autocorrelations treat consecutive entries of t as one step
// apart, so pass a regular axis (a series' own) with NaN for gaps.
//
// With e_i the OLS residuals, n the number of values, S_tt = sum (t - tbar)^2:
//
//   - white: SE = sqrt(s^2 / S_tt), s^2 = sum e^2 / (n - 2); Student t on
//     n - 2 degrees of freedom.
//   - ar1, Santer et al. 2008 (Int. J. Climatol. 28, 1703): r1 =
//     lag-1 autocorrelation of the residuals (as R's acf:
//     sum e_t e_{t+1} / sum e_t^2 after removing their mean);
//     n_e = n (1 - r1) / (1 + r1); s^2 = sum e^2 / (n_e - 2);
//     SE = sqrt(s^2 / S_tt); Student t on n_e - 2 degrees of freedom.
//     Refused when n_e <= 3. When r1 <= 0 the formula would give n_e > n:
//     n_e is capped at n (common practice) and a warning says so.
//   - arma11, Foster and Rahmstorf 2011 (Environ. Res. Lett. 6, 044022;
//     the formula as ../shared/CHECKS.md gives it, from memory of the
//     paper): rho1, rho2 = lag-1 and lag-2 residual autocorrelations;
//     phi = rho2 / rho1; nu = 1 + 2 rho1 / (1 - phi); SE = SE_white sqrt(nu);
//     Student t on n/nu - 2 degrees of freedom (refused when n/nu <= 3).
//     When rho1 <= 0 there is no positive autocorrelation to correct for:
//     nu = 1 (white), with a warning. When phi falls outside [0, 1) the
//     ARMA(1,1) estimate is unusable: AR(1) with phi = rho1, i.e.
//     nu = (1 + rho1) / (1 - rho1), with a warning.
//   - arma11-ml: y = a + b t + u with ARMA(1,1) errors u, by exact Gaussian
//     maximum likelihood (linreg.ARMAFit; the model of R's
//     arima(y, order = c(1,0,1), xreg = t, method = "ML")); SE of b from the
//     inverse Hessian of the log-likelihood; the interval and p-value use the
//     normal distribution (asymptotic ML theory), stated in a warning.
//
// The confidence interval is b +- q SE with q the (1 + Level)/2 quantile;
// the p-value is two-sided for b = 0. Warnings: missing values skipped; a
// window shorter than 15 years (variability dominates: common practice);
// monthly values that still carry a seasonal cycle (F test of two annual
// harmonics added to the trend, p < 0.01: remove the climatology first).
func Window(t, y []float64, opt Options) (*Result, error) {
	opt, err := opt.normalise()
	if err != nil {
		return nil, err
	}
	if err := twCheckAxis(t, y); err != nil {
		return nil, err
	}
	st, code := twFitLine(t, y, opt.Noise, 2)
	if code != 0 {
		return nil, twRefusalError(code, st)
	}
	r := &Result{
		From:       twTimeLabel(t, 0),
		To:         twTimeLabel(t, len(t)-1),
		N:          st.n,
		Noise:      opt.Noise,
		Level:      opt.Level,
		Rho1:       st.r1,
		Rho2:       st.r2,
		ResidualSD: math.Sqrt(st.rss / float64(st.n-2)),
		Missing:    st.missing,
		Start:      st.start,
		End:        st.end,
		Warnings:   []string{},
	}
	if st.missing > 0 {
		r.Warnings = append(r.Warnings, fmt.Sprintf("%d missing values skipped: the trend uses %d of %d steps, and the residual autocorrelations use only pairs of steps that are both present", st.missing, st.n, len(t)))
	}
	slope, se := st.slope, st.nz.se
	if opt.Noise == NoiseARMA11ML {
		fit, err := twMLFit(t, y, st.tc, nil)
		if err != nil {
			return nil, err
		}
		slope = fit.Beta[1]
		se = fit.BetaSE[1]
		if !(se > 0) || math.IsNaN(se) || math.IsInf(se, 0) {
			return nil, errors.New("arma11-ml: the standard error of the slope is not available (the likelihood is flat or the optimum lies on the stationarity boundary); use arma11 or ar1")
		}
		r.Normal = true
		phi, theta := fit.AR[0], fit.MA[0]
		r.Phi, r.Theta = &phi, &theta
		seOLS := math.Sqrt(st.rss / float64(st.n-2) / st.sxx)
		nu := (se / seOLS) * (se / seOLS)
		neff := float64(st.n) / nu
		r.Nu, r.NEff = &nu, &neff
		r.Intercept = fit.Beta[0] - slope*st.tc
		r.Warnings = append(r.Warnings, fit.Warnings...)
		r.Warnings = append(r.Warnings, "arma11-ml: the interval and p-value use the normal distribution (asymptotic maximum-likelihood theory)")
	} else {
		r.Intercept = st.intercept
		dof := st.nz.dof
		r.DOF = &dof
		switch opt.Noise {
		case NoiseAR1:
			ne := st.nz.neff
			r.NEff = &ne
		case NoiseARMA11:
			nu, ne := st.nz.nu, st.nz.neff
			r.Nu, r.NEff = &nu, &ne
			if !math.IsNaN(st.nz.phi) {
				phi := st.nz.phi
				r.Phi = &phi
			}
		}
		r.Warnings = append(r.Warnings, twFlagWarnings(st.nz.flags, st)...)
	}
	dof := math.Inf(1)
	if r.DOF != nil {
		dof = *r.DOF
	}
	q := twQuantile(opt.Level, dof)
	r.SlopePerYear = slope
	r.SlopePerDecade = 10 * slope
	r.StderrPerDecade = 10 * se
	r.CILowPerDecade = 10 * (slope - q*se)
	r.CIHighPerDecade = 10 * (slope + q*se)
	r.PValue = twPValue(slope/se, dof)

	if span := twSpan(t); span < ShortWindowYears-1e-9 {
		r.Warnings = append(r.Warnings, fmt.Sprintf("the window is %s years long: over less than %d years trends are dominated by year-to-year variability (common practice)", strconv.FormatFloat(math.Round(span*100)/100, 'f', -1, 64), ShortWindowYears))
	}
	if p, ok := twSeasonalP(t, st.resid, st.tc); ok && p < 0.01 {
		r.Warnings = append(r.Warnings, fmt.Sprintf("the monthly values still carry a seasonal cycle (F test of two annual harmonics on the residuals, p = %.2g): remove the climatology (use monthly anomalies) before fitting a trend", p))
	}
	return r, nil
}

// SeriesWindow is Window over a series restricted to the window from..to
// given as YYYY, YYYY-MM or a decimal year (see series.WindowSpec; empty
// means the series' own start or end). The result carries the series name
// and the window's first and last steps as YYYY-MM (monthly) or YYYY.
func SeriesWindow(s *series.Series, from, to string, opt Options) (*Result, error) {
	if s == nil {
		return nil, errors.New("no series given")
	}
	w, err := s.WindowSpec(from, to)
	if err != nil {
		return nil, err
	}
	r, err := Window(w.Times, w.Values, opt)
	if err != nil {
		return nil, fmt.Errorf("series %q, window %s to %s: %w", s.Name, series.StepLabel(w.Resolution, w.First), series.StepLabel(w.Resolution, w.Last()), err)
	}
	r.Series = s.Name
	r.From = series.StepLabel(w.Resolution, w.First)
	r.To = series.StepLabel(w.Resolution, w.Last())
	return r, nil
}

// twCheckAxis validates the time axis and values.
func twCheckAxis(t, y []float64) error {
	if len(t) != len(y) {
		return fmt.Errorf("%d times but %d values: expected one value per time", len(t), len(y))
	}
	for i, v := range t {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return fmt.Errorf("time %d is %v: expected a finite decimal year", i, v)
		}
		if i > 0 && !(v > t[i-1]) {
			return fmt.Errorf("time %d (%v) does not come after time %d (%v): expected strictly increasing times", i, v, i-1, t[i-1])
		}
	}
	for i, v := range y {
		if math.IsInf(v, 0) {
			return fmt.Errorf("value %d (at %v) is infinite: expected a finite value or NaN for missing", i, t[i])
		}
	}
	return nil
}

// twLine holds a straight-line fit and its noise-model uncertainty.
type twLine struct {
	n, missing int
	start, end float64
	tc         float64 // mean time of the values used
	slope      float64
	intercept  float64 // at t = 0
	sxx        float64 // sum (t - tbar)^2
	rss        float64
	r1, r2     float64
	resid      []float64 // NaN where y is missing (nil from the grid)
	nz         twNoiseOut
}

// Refusal codes.
const (
	twOK = iota
	twTooFew
	twFlat
	twARFew   // ar1: n_e <= p + 1
	twARMAFew // arma11: n/nu <= p + 1
	twNoTime  // all times equal among the values present
)

func twRefusalError(code int, st twLine) error {
	switch code {
	case twTooFew:
		return fmt.Errorf("%d values present (%d missing): expected at least 3 to fit a trend", st.n, st.missing)
	case twFlat:
		return fmt.Errorf("the %d values lie exactly on a straight line: there is no residual variability to estimate the uncertainty from", st.n)
	case twARFew:
		return fmt.Errorf("ar1: effective sample size n_e = n (1 - r1)/(1 + r1) = %.2f (n = %d, r1 = %.3f) is 3 or less: too few independent values for a trend with an uncertainty; use a longer window", st.nz.neff, st.n, st.r1)
	case twARMAFew:
		return fmt.Errorf("arma11: effective sample size n/nu = %.2f (n = %d, nu = %.2f) is 3 or less: too few independent values for a trend with an uncertainty; use a longer window", st.nz.neff, st.n, st.nz.nu)
	case twNoTime:
		return errors.New("all values present share one time: expected at least two distinct times")
	}
	return fmt.Errorf("trend refused (code %d)", code)
}

// twFitLine fits the line by centred two-pass sums and applies the noise
// model (p = 2 parameters). For arma11-ml the noise fields are the white
// ones; the caller replaces them with the likelihood fit.
func twFitLine(t, y []float64, noise string, p int) (twLine, int) {
	var st twLine
	var sumT, sumY float64
	first := -1
	for i, v := range y {
		if math.IsNaN(v) {
			st.missing++
			continue
		}
		if first < 0 {
			first = i
		}
		st.end = t[i]
		st.n++
		sumT += t[i]
		sumY += v
	}
	if st.n < 3 {
		return st, twTooFew
	}
	st.start = t[first]
	n := float64(st.n)
	tbar, ybar := sumT/n, sumY/n
	var sxx, sxy, syy float64
	for i, v := range y {
		if math.IsNaN(v) {
			continue
		}
		dt, dy := t[i]-tbar, v-ybar
		sxx += dt * dt
		sxy += dt * dy
		syy += dy * dy
	}
	if !(sxx > 0) {
		return st, twNoTime
	}
	b := sxy / sxx
	st.tc = tbar
	st.slope = b
	st.intercept = ybar - b*tbar
	st.sxx = sxx
	st.resid = make([]float64, len(y))
	var rss float64
	for i, v := range y {
		if math.IsNaN(v) {
			st.resid[i] = math.NaN()
			continue
		}
		e := (v - ybar) - b*(t[i]-tbar)
		st.resid[i] = e
		rss += e * e
	}
	st.rss = rss
	if !(rss > 1e-26*syy) || rss == 0 {
		return st, twFlat
	}
	// Autocorrelations as R's acf: mean removed, pairs of present steps.
	st.r1, st.r2 = twACF12(st.resid)
	kind := noise
	if kind == NoiseARMA11ML {
		kind = NoiseWhite
	}
	var code int
	st.nz, code = twNoise(kind, st.n, p, rss, 1/sxx, st.r1, st.r2)
	return st, code
}

// twNoiseOut is the uncertainty of one coefficient under a noise model.
type twNoiseOut struct {
	se, dof  float64
	neff, nu float64 // NaN when not applicable
	phi      float64 // NaN when not applicable
	flags    uint8
}

const (
	twFlagAR1Capped uint8 = 1 << iota // ar1: r1 <= 0, n_e capped at n
	twFlagARMAWhite                   // arma11: rho1 <= 0, white fall-back
	twFlagARMAAR1                     // arma11: phi outside [0, 1), AR(1) fall-back
)

// Fallback names the fall-back NoiseInflation took; FallbackNone when the
// formula applied as written.
type Fallback uint8

// The fall-backs of NoiseInflation.
const (
	FallbackNone   Fallback = iota
	FallbackCapped          // ar1: r1 <= 0, n_e capped at n
	FallbackWhite           // arma11: rho1 <= 0, white noise (nu = 1)
	FallbackAR1             // arma11: phi outside [0, 1), AR(1) with phi = rho1
)

// Inflation is how a residual noise model widens ordinary least-squares
// uncertainties (the result of NoiseInflation).
type Inflation struct {
	NEff     float64  // effective sample size: n (white), n_e (ar1), n/nu (arma11)
	Nu       float64  // variance inflation factor: nu for arma11, 1 otherwise
	Phi      float64  // arma11's AR coefficient; NaN otherwise and after FallbackWhite
	Fallback Fallback // the fall-back taken, if any
}

// NoiseInflation is the effective sample size and variance inflation of a
// noise model for regression residuals on n values with lag-1 and lag-2
// autocorrelations rho1 and rho2 (r1 = rho1). It is the one implementation
// of the moment formulas used by Window, BrokenStick, the trend grid and
// the other packages' regressions:
//
//   - ar1, Santer et al. 2008 (Int. J. Climatol. 28, 1703):
//     n_e = n (1 - r1) / (1 + r1), nu = 1; the residual variance is then
//     s^2 = sum e^2 / (n_e - p) on n_e - p degrees of freedom (p
//     coefficients). When r1 <= 0 (or NaN) the formula would give n_e > n:
//     n_e is capped at n (common practice), FallbackCapped.
//   - arma11, Foster and Rahmstorf 2011 (Environ. Res. Lett. 6, 044022;
//     the formula as ../shared/CHECKS.md gives it, from memory of the
//     paper): phi = rho2 / rho1, nu = 1 + 2 rho1 / (1 - phi),
//     SE = SE_white sqrt(nu), n_eff = n / nu (n/nu - p degrees of
//     freedom). When rho1 <= 0 (or NaN) there is no positive
//     autocorrelation to correct for: nu = 1, phi NaN, FallbackWhite. When
//     phi falls outside [0, 1) the ARMA(1,1) estimate is unusable: AR(1)
//     with phi = rho1, nu = (1 + rho1) / (1 - rho1), FallbackAR1 (+Inf at
//     rho1 = 1).
//   - white, and any other name (arma11-ml takes its uncertainty from the
//     likelihood fit): n_eff = n, nu = 1, phi NaN.
//
// The caller applies the result, decides when n_eff is too small and words
// the warnings; n only enters NEff.
func NoiseInflation(noise string, n int, rho1, rho2 float64) Inflation {
	fn := float64(n)
	out := Inflation{NEff: fn, Nu: 1, Phi: math.NaN()}
	switch noise {
	case NoiseAR1:
		if !(rho1 > 0) {
			out.Fallback = FallbackCapped
		} else {
			out.NEff = fn * (1 - rho1) / (1 + rho1)
		}
	case NoiseARMA11:
		if !(rho1 > 0) {
			out.Fallback = FallbackWhite
			break
		}
		phi := rho2 / rho1
		if phi >= 0 && phi < 1 {
			out.Nu = 1 + 2*rho1/(1-phi)
		} else {
			out.Fallback = FallbackAR1
			phi = rho1
			out.Nu = (1 + rho1) / (1 - rho1)
		}
		out.Phi = phi
		out.NEff = fn / out.Nu
	}
	return out
}

// twNoise applies a noise model to a coefficient whose (X'X)^-1 diagonal
// entry is xtxinv, in a regression with p coefficients on n values with
// residual sum of squares rss and residual autocorrelations r1, r2. The
// formulas are Window's (NoiseInflation), with 2 replaced by p:
// white s^2 = rss/(n-p), dof n-p; ar1 s^2 = rss/(n_e-p), dof n_e-p,
// refused when n_e <= p+1; arma11 SE = SE_white sqrt(nu), dof n/nu-p,
// refused when n/nu <= p+1. An undefined r1 (NaN) is refused under ar1
// and arma11 (NoiseInflation would read it as no autocorrelation).
func twNoise(kind string, n, p int, rss, xtxinv, r1, r2 float64) (twNoiseOut, int) {
	out := twNoiseOut{neff: math.NaN(), nu: math.NaN(), phi: math.NaN()}
	fn, fp := float64(n), float64(p)
	inf := NoiseInflation(kind, n, r1, r2)
	switch kind {
	case NoiseAR1:
		if math.IsNaN(r1) {
			return out, twARFew
		}
		if inf.Fallback == FallbackCapped {
			out.flags |= twFlagAR1Capped
		}
		ne := inf.NEff
		out.neff = ne
		if !(ne > fp+1) {
			return out, twARFew
		}
		out.se = math.Sqrt(rss / (ne - fp) * xtxinv)
		out.dof = ne - fp
	case NoiseARMA11:
		if math.IsNaN(r1) {
			return out, twARMAFew
		}
		switch inf.Fallback {
		case FallbackWhite:
			out.flags |= twFlagARMAWhite
		case FallbackAR1:
			out.flags |= twFlagARMAAR1
		}
		nu := inf.Nu
		out.phi = inf.Phi
		out.nu = nu
		out.neff = inf.NEff
		if !(out.neff > fp+1) {
			return out, twARMAFew
		}
		out.se = math.Sqrt(rss / (fn - fp) * xtxinv * nu)
		out.dof = out.neff - fp
	default: // white
		out.se = math.Sqrt(rss / (fn - fp) * xtxinv)
		out.dof = fn - fp
	}
	return out, twOK
}

func twFlagWarnings(flags uint8, st twLine) []string {
	var w []string
	if flags&twFlagAR1Capped != 0 {
		w = append(w, fmt.Sprintf("ar1: the residuals' lag-1 autocorrelation r1 = %.3f is not positive, so n_e = n (1 - r1)/(1 + r1) would exceed n: n_e is capped at n = %d (common practice)", st.r1, st.n))
	}
	if flags&twFlagARMAWhite != 0 {
		w = append(w, fmt.Sprintf("arma11: the residuals' lag-1 autocorrelation rho1 = %.3f is not positive: no autocorrelation to correct for, the white-noise uncertainty is used (nu = 1)", st.r1))
	}
	if flags&twFlagARMAAR1 != 0 {
		w = append(w, fmt.Sprintf("arma11: phi = rho2/rho1 = %.3f lies outside [0, 1), so the ARMA(1,1) estimate is unusable: AR(1) with phi = rho1 = %.3f is used, nu = (1 + rho1)/(1 - rho1)", st.r2/st.r1, st.r1))
	}
	return w
}

// twMLFit fits y = a + b (t - tc) [+ extra columns] with ARMA(1,1) errors.
func twMLFit(t, y []float64, tc float64, extra [][]float64) (*linreg.ARMAResult, error) {
	X := mat.NewDense(len(t), 2+len(extra), nil)
	for i := range t {
		X.Set(i, 0, 1)
		X.Set(i, 1, t[i]-tc)
		for j, c := range extra {
			X.Set(i, 2+j, c[i])
		}
	}
	fit, err := linreg.ARMAFit(X, y, 1, 1)
	if err != nil {
		return nil, fmt.Errorf("arma11-ml: %w", err)
	}
	return fit, nil
}

// twQuantile is the (1 + level)/2 quantile of Student's t with dof degrees
// of freedom (the normal when dof is +Inf).
func twQuantile(level, dof float64) float64 {
	p := 1 - (1-level)/2
	if math.IsInf(dof, 1) {
		return distuv.UnitNormal.Quantile(p)
	}
	return distuv.StudentsT{Mu: 0, Sigma: 1, Nu: dof}.Quantile(p)
}

// twPValue is the two-sided p-value of a t statistic (normal when dof is +Inf).
func twPValue(ts, dof float64) float64 {
	a := math.Abs(ts)
	if math.IsInf(dof, 1) {
		return 2 * distuv.UnitNormal.Survival(a)
	}
	return 2 * distuv.StudentsT{Mu: 0, Sigma: 1, Nu: dof}.Survival(a)
}

// twStep returns the spacing of a regular axis (0 when irregular).
func twStep(t []float64) float64 {
	if len(t) < 2 {
		return 0
	}
	dt := (t[len(t)-1] - t[0]) / float64(len(t)-1)
	for i := 1; i < len(t); i++ {
		if math.Abs(t[i]-t[i-1]-dt) > 1e-6 {
			return 0
		}
	}
	return dt
}

// twMonthly reports whether the axis is regular with a step of one month.
func twMonthly(t []float64) bool {
	dt := twStep(t)
	return dt > 0 && math.Abs(dt*12-1) < 1e-5
}

// twSpan is the length of the window in years: the number of steps times
// the step on a regular axis, else last minus first time.
func twSpan(t []float64) float64 {
	if len(t) == 0 {
		return 0
	}
	if dt := twStep(t); dt > 0 {
		return dt * float64(len(t))
	}
	return t[len(t)-1] - t[0]
}

// twTimeLabel formats time i as YYYY-MM on a monthly axis, YYYY on an
// annual mid-year axis, else as a decimal year.
func twTimeLabel(t []float64, i int) string {
	if i < 0 || i >= len(t) {
		return ""
	}
	v := t[i]
	yr := math.Floor(v)
	frac := v - yr
	dt := twStep(t)
	switch {
	case len(t) == 1 || dt == 0:
	case twMonthly(t):
		m := int(math.Floor(frac*12)) + 1
		if math.Abs(frac*12-float64(m)+0.5) < 1e-4 {
			return fmt.Sprintf("%04d-%02d", int(yr), m)
		}
	case math.Abs(dt-1) < 1e-6 && math.Abs(frac-0.5) < 1e-6:
		return fmt.Sprintf("%04d", int(yr))
	}
	return strconv.FormatFloat(math.Round(v*1e4)/1e4, 'f', -1, 64)
}

// twSeasonalP tests monthly residuals for a seasonal cycle: the F test of
// adding cos/sin(2 pi t) and cos/sin(4 pi t) (two annual harmonics) to the
// straight line, F = ((RSS0 - RSS1)/4) / (RSS1/(n - 6)) on (4, n - 6)
// degrees of freedom (the standard nested-model F test). The residuals are
// already orthogonal to 1 and t, so RSS1 comes from regressing them on
// (1, t, harmonics); the 6 x 6 normal equations are well conditioned here
// (centred, scaled time; near-orthogonal harmonics) and solved by Cholesky.
// ok is false when the axis is not regular monthly or there are fewer than
// 24 values.
func twSeasonalP(t, resid []float64, tc float64) (float64, bool) {
	if resid == nil || !twMonthly(t) {
		return 0, false
	}
	// On a regular monthly axis the harmonics depend only on the step's
	// position within the year, so the cross products reduce to per-month
	// sums: count, sum u and sum e for each of the 12 positions, plus
	// sum u^2, sum u e and sum e^2 (u = scaled centred time).
	span := t[len(t)-1] - t[0]
	var h [12][4]float64
	for m := 0; m < 12 && m < len(t); m++ {
		s1, c1 := math.Sincos(2 * math.Pi * t[m])
		h[m] = [4]float64{c1, s1, c1*c1 - s1*s1, 2 * s1 * c1}
	}
	var cnt, su, se [12]float64
	var n, suu, sue, see, sumU, sumE float64
	for i, v := range resid {
		if math.IsNaN(v) {
			continue
		}
		m := i % 12
		u := (t[i] - tc) / span
		cnt[m]++
		su[m] += u
		se[m] += v
		suu += u * u
		sue += u * v
		see += v * v
		sumU += u
		sumE += v
		n++
	}
	if n < 24 {
		return 0, false
	}
	// Columns: 1, u, h0..h3.
	var xtx [6][6]float64
	var xte [6]float64
	xtx[0][0], xtx[1][0], xtx[1][1] = n, sumU, suu
	xte[0], xte[1] = sumE, sue
	for m := 0; m < 12; m++ {
		for a := 0; a < 4; a++ {
			xtx[2+a][0] += cnt[m] * h[m][a]
			xtx[2+a][1] += su[m] * h[m][a]
			xte[2+a] += se[m] * h[m][a]
			for b := 0; b <= a; b++ {
				xtx[2+a][2+b] += cnt[m] * h[m][a] * h[m][b]
			}
		}
	}
	A := mat.NewSymDense(6, nil)
	for a := 0; a < 6; a++ {
		for b := 0; b <= a; b++ {
			A.SetSym(a, b, xtx[a][b])
		}
	}
	var ch mat.Cholesky
	if !ch.Factorize(A) {
		return 0, false
	}
	var beta mat.VecDense
	if err := ch.SolveVecTo(&beta, mat.NewVecDense(6, xte[:])); err != nil {
		return 0, false
	}
	// RSS1 = RSS0 - b'X'e (least squares).
	var expl float64
	for a := 0; a < 6; a++ {
		expl += beta.AtVec(a) * xte[a]
	}
	rss1 := see - expl
	if !(rss1 > 0) {
		return 0, false
	}
	f := (expl / 4) / (rss1 / (n - 6))
	if !(f > 0) {
		return 1, true
	}
	return distuv.F{D1: 4, D2: n - 6}.Survival(f), true
}
