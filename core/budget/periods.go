package budget

import (
	"errors"
	"fmt"
	"math"
	"strings"

	"heatledger/core/series"
)

// Period is a span of time given as text: YYYY, YYYY-MM or a decimal year
// (series.WindowSpec; YYYY and YYYY-MM ends are inclusive).
type Period struct {
	From string `json:"from"`
	To   string `json:"to"`
}

// String is "FROM to TO".
func (p Period) String() string { return p.From + " to " + p.To }

// bounds returns [lo, hi) in decimal years.
func (p Period) bounds() (lo, hi float64, err error) {
	if strings.TrimSpace(p.From) == "" || strings.TrimSpace(p.To) == "" {
		return 0, 0, fmt.Errorf("period %q to %q: expected both a start and an end (YYYY, YYYY-MM or a decimal year)", p.From, p.To)
	}
	if lo, err = series.ParseTime(p.From, false); err != nil {
		return 0, 0, fmt.Errorf("period start: %v", err)
	}
	if hi, err = series.ParseTime(p.To, true); err != nil {
		return 0, 0, fmt.Errorf("period end: %v", err)
	}
	if !(hi > lo) {
		return 0, 0, fmt.Errorf("period %s ends before it starts", p)
	}
	return lo, hi, nil
}

// PeriodStat is a series' mean over a period with its sampling
// uncertainty.
type PeriodStat struct {
	Series  string  `json:"series"`
	From    string  `json:"from"` // first step used, YYYY-MM or YYYY
	To      string  `json:"to"`   // last step used
	N       int     `json:"n"`
	Missing int     `json:"missing"`
	Mean    float64 `json:"mean"`
	SE      float64 `json:"se"`
	R1      float64 `json:"r1"`    // lag-1 autocorrelation of the detrended values
	NEff    float64 `json:"n_eff"` // AR(1) effective sample size
	Covered bool    `json:"covered"`
}

// Sampling models for the uncertainty of a period mean (the values of
// Quantity.Sampling and PeriodMean's sampling argument).
const (
	SamplingAR1   = "ar1"   // AR(1) effective sample size (the default)
	SamplingWhite = "white" // independent values
	SamplingNone  = "none"  // the mean is taken as exact (e.g. a forcing series, whose wiggles are signal)
)

// PeriodMean is the mean of a series over a period, with the standard
// error of that mean from the variability about the period's own linear
// trend. With sampling "ar1" (the default for "") it allows for AR(1)
// autocorrelation by an effective sample size (the approach of Santer et
// al. 2008, Int. J. Climatol. 28, 1703, applied to a mean rather than a
// slope):
//
//	e_i = residuals of y on (1, t) within the period (a forced drift in the
//	      period is not sampling noise),
//	r1  = lag-1 autocorrelation of e (as R's acf; pairs of present steps),
//	n_e = n (1 - r1)/(1 + r1), capped at n when r1 <= 0,
//	s^2 = sum e^2 / (n_e - 2),   SE(mean) = sqrt(s^2 / n),
//
// so SE^2 is about sigma^2 / n_e for AR(1) noise of variance sigma^2.
// "white" uses n_e = n; "none" gives SE 0 (for a series whose variability
// is not noise, such as a forcing series with a solar cycle: give its
// uncertainty as a typed component instead). NaN values are skipped. It is
// refused when fewer than 3 values are present or, for ar1, n_e <= 3 (as
// the trend engine's ar1). A series with no variability about its trend
// has SE 0. Covered is false when the series does not span the whole
// period.
func PeriodMean(s *series.Series, p Period, sampling string) (PeriodStat, error) {
	if s == nil {
		return PeriodStat{}, errors.New("no series given")
	}
	sampling = strings.ToLower(strings.TrimSpace(sampling))
	switch sampling {
	case "":
		sampling = SamplingAR1
	case SamplingAR1, SamplingWhite, SamplingNone:
	default:
		return PeriodStat{}, fmt.Errorf("series %q: sampling model %q: expected ar1, white or none", s.Name, sampling)
	}
	lo, hi, err := p.bounds()
	if err != nil {
		return PeriodStat{}, fmt.Errorf("series %q: %v", s.Name, err)
	}
	w, err := s.WindowSpec(p.From, p.To)
	if err != nil {
		return PeriodStat{}, err
	}
	st := PeriodStat{
		Series: s.Name,
		From:   series.StepLabel(w.Resolution, w.First),
		To:     series.StepLabel(w.Resolution, w.Last()),
	}
	half := 0.5 / float64(w.Resolution.StepsPerYear())
	st.Covered = s.Start()-half <= lo+1e-9 && s.End()+half >= hi-1e-9
	var n, sumT, sumY float64
	for i, v := range w.Values {
		if math.IsNaN(v) {
			st.Missing++
			continue
		}
		n++
		sumT += w.Times[i]
		sumY += v
	}
	st.N = int(n)
	if st.N == 0 || (st.N < 3 && sampling != SamplingNone) {
		return st, fmt.Errorf("series %q, period %s: %d values present: expected at least 3 for a mean with a sampling uncertainty", s.Name, p, st.N)
	}
	if sampling == SamplingNone {
		st.Mean, st.NEff = sumY/n, n
		return st, nil
	}
	tb, yb := sumT/n, sumY/n
	var sxx, sxy float64
	for i, v := range w.Values {
		if !math.IsNaN(v) {
			sxx += (w.Times[i] - tb) * (w.Times[i] - tb)
			sxy += (w.Times[i] - tb) * (v - yb)
		}
	}
	b := sxy / sxx
	e := make([]float64, len(w.Values))
	var rss float64
	for i, v := range w.Values {
		if math.IsNaN(v) {
			e[i] = math.NaN()
			continue
		}
		e[i] = v - yb - b*(w.Times[i]-tb)
		rss += e[i] * e[i]
	}
	st.Mean = yb
	if !(rss > 1e-24*(yb*yb+1)*n) {
		st.R1, st.NEff = 0, n
		return st, nil
	}
	st.R1, _ = acf12(e)
	ne := n
	if st.R1 > 0 && sampling == SamplingAR1 {
		ne = n * (1 - st.R1) / (1 + st.R1)
	}
	st.NEff = ne
	if !(ne > 3) {
		return st, fmt.Errorf("series %q, period %s: effective sample size n_e = n (1 - r1)/(1 + r1) = %.2f (n = %d, r1 = %.3f) is 3 or less: too few independent values for the sampling uncertainty of the mean; use a longer period, type the change as a distribution, or choose the sampling model white or none (none suits a forcing series, whose variations are signal)", s.Name, p, ne, st.N, st.R1)
	}
	st.SE = math.Sqrt(rss / (ne - 2) / n)
	return st, nil
}
