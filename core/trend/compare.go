package trend

import (
	"errors"
	"fmt"
	"math"

	"heatledger/core/linreg"
	"heatledger/core/series"
)

// Span is a closed window [From, To] in decimal years.
type Span struct{ From, To float64 }

// Comparison holds the trends of two windows, their difference and the
// broken-stick test of a change in rate. The JSON field names are the CLI
// contract of `heatledger compare --json`, plus "warnings".
type Comparison struct {
	Windows []*Result `json:"windows"` // window A, window B
	// DifferencePerDecade is B's slope minus A's.
	DifferencePerDecade float64 `json:"difference_per_decade"`
	// StderrPerDecade is sqrt(SE_A^2 + SE_B^2); nil (null) when the windows
	// overlap, where it does not apply.
	StderrPerDecade *float64 `json:"stderr_per_decade"`
	// PValue is two-sided for equal rates; nil (null) when the windows overlap.
	PValue      *float64           `json:"p_value"`
	BrokenStick *BrokenStickResult `json:"broken_stick"` // nil when it cannot be fitted (see Warnings)
	Warnings    []string           `json:"warnings"`

	Overlap bool     `json:"-"` // the windows share at least one step
	DOF     *float64 `json:"-"` // degrees of freedom of the difference test (nil: normal)
}

// BrokenStickResult is the continuous broken-stick (hinge) model
// y = a + b (t - tb) + c (t - tb)_+ with the break tb fixed, where
// (x)_+ = max(x, 0): the rate is b before tb and b + c after. The JSON field
// names are the "broken_stick" object of the compare contract.
type BrokenStickResult struct {
	Break                float64 `json:"break"` // tb, decimal year
	SlopeChangePerDecade float64 `json:"slope_change_per_decade"`
	StderrPerDecade      float64 `json:"stderr_per_decade"`
	PValue               float64 `json:"p_value"` // two-sided, c = 0

	SlopeBeforePerDecade float64  `json:"-"` // b
	SlopeAfterPerDecade  float64  `json:"-"` // b + c
	CILowPerDecade       float64  `json:"-"` // interval for c at Level
	CIHighPerDecade      float64  `json:"-"`
	Level                float64  `json:"-"`
	Noise                string   `json:"-"`
	N                    int      `json:"-"`
	DOF                  *float64 `json:"-"` // nil for arma11-ml (normal distribution)
	Rho1, Rho2           float64  `json:"-"` // residual autocorrelations
	Phi, Theta           *float64 `json:"-"` // arma11 / arma11-ml
	Nu, NEff             *float64 `json:"-"`
	Intercept            float64  `json:"-"` // a, the fitted value at tb
	RSS                  float64  `json:"-"` // OLS residual sum of squares
	Warnings             []string `json:"-"`
}

// BrokenStick fits the continuous broken-stick model
//
//	y = a + b (t - tb) + c (t - tb)_+
//
// with the break tb fixed, by OLS (one fit; the segmented-regression model
// of Muggeo 2003, Stat. Med. 22, 3055, with the break held at tb), and
// reports the change in rate c per decade with its uncertainty under
// opt.Noise applied to the broken-stick residuals e (3 coefficients, so
// the trend formulas of Window with 2 replaced by 3):
//
//   - white: SE_c = sqrt(s^2 [(X'X)^-1]_cc), s^2 = sum e^2 / (n - 3), t on n - 3 dof.
//   - ar1 (Santer et al. 2008): n_e = n (1 - r1)/(1 + r1) (capped at n when
//     r1 <= 0), s^2 = sum e^2 / (n_e - 3), t on n_e - 3 dof; refused when n_e <= 4.
//   - arma11 (Foster and Rahmstorf 2011): SE_c = SE_white sqrt(nu),
//     nu = 1 + 2 rho1/(1 - phi), phi = rho2/rho1 with Window's fall-backs;
//     t on n/nu - 3 dof; refused when n/nu <= 4.
//   - arma11-ml: the same regression with ARMA(1,1) errors by exact maximum
//     likelihood (linreg.ARMAFit with columns 1, t - tb, (t - tb)_+);
//     SE from the Hessian; normal distribution.
//
// It answers "did the rate change at tb": c and its p-value for c = 0.
// Needs at least two values present on each side of tb.
func BrokenStick(t, y []float64, tb float64, opt Options) (*BrokenStickResult, error) {
	opt, err := opt.normalise()
	if err != nil {
		return nil, err
	}
	if err := twCheckAxis(t, y); err != nil {
		return nil, err
	}
	if math.IsNaN(tb) || math.IsInf(tb, 0) {
		return nil, fmt.Errorf("break %v: expected a finite decimal year", tb)
	}
	var rows [][]float64
	var yy []float64
	before, after := 0, 0
	for i, v := range y {
		if math.IsNaN(v) {
			continue
		}
		d := t[i] - tb
		rows = append(rows, []float64{1, d, math.Max(d, 0)})
		yy = append(yy, v)
		if d > 0 {
			after++
		} else {
			before++
		}
	}
	if before < 2 || after < 2 {
		return nil, fmt.Errorf("a break at %s leaves %d values before and %d after it: expected at least 2 on each side", strconvYear(tb), before, after)
	}
	fit, err := linreg.OLSRows(rows, yy)
	if err != nil {
		return nil, fmt.Errorf("broken stick at %s: %w", strconvYear(tb), err)
	}
	n := len(yy)
	var ym, syy float64
	for _, v := range yy {
		ym += v
	}
	ym /= float64(n)
	for _, v := range yy {
		syy += (v - ym) * (v - ym)
	}
	if !(fit.RSS > 1e-26*syy) || fit.RSS == 0 {
		return nil, fmt.Errorf("the %d values lie exactly on the broken stick: there is no residual variability to estimate the uncertainty from", n)
	}
	resid := make([]float64, len(y))
	k := 0
	for i, v := range y {
		if math.IsNaN(v) {
			resid[i] = math.NaN()
			continue
		}
		resid[i] = fit.Residuals[k]
		k++
	}
	r1, r2 := twACF12(resid)
	res := &BrokenStickResult{
		Break: tb, Level: opt.Level, Noise: opt.Noise, N: n,
		Rho1: r1, Rho2: r2, RSS: fit.RSS, Warnings: []string{},
	}
	b, c := fit.Coef[1], fit.Coef[2]
	a := fit.Coef[0]
	var se, dof float64
	if opt.Noise == NoiseARMA11ML {
		hinge := make([]float64, len(t))
		for i := range t {
			hinge[i] = math.Max(t[i]-tb, 0)
		}
		ml, err := twMLFit(t, y, tb, [][]float64{hinge})
		if err != nil {
			return nil, fmt.Errorf("broken stick at %s: %w", strconvYear(tb), err)
		}
		a, b, c = ml.Beta[0], ml.Beta[1], ml.Beta[2]
		se = ml.BetaSE[2]
		if !(se > 0) || math.IsInf(se, 0) {
			return nil, fmt.Errorf("broken stick at %s, arma11-ml: the standard error of the slope change is not available (flat likelihood or boundary optimum); use arma11 or ar1", strconvYear(tb))
		}
		dof = math.Inf(1)
		phi, theta := ml.AR[0], ml.MA[0]
		res.Phi, res.Theta = &phi, &theta
		seW := math.Sqrt(fit.Cov.At(2, 2))
		nu := (se / seW) * (se / seW)
		ne := float64(n) / nu
		res.Nu, res.NEff = &nu, &ne
		res.Warnings = append(res.Warnings, ml.Warnings...)
		res.Warnings = append(res.Warnings, "arma11-ml: the interval and p-value use the normal distribution (asymptotic maximum-likelihood theory)")
	} else {
		nz, code := twNoise(opt.Noise, n, 3, fit.RSS, fit.XtXInv.At(2, 2), r1, r2)
		if code != twOK {
			st := twLine{n: n, r1: r1, r2: r2, nz: nz}
			return nil, fmt.Errorf("broken stick at %s: %w", strconvYear(tb), twRefusalError(code, st))
		}
		se, dof = nz.se, nz.dof
		d := dof
		res.DOF = &d
		switch opt.Noise {
		case NoiseAR1:
			ne := nz.neff
			res.NEff = &ne
		case NoiseARMA11:
			nu, ne := nz.nu, nz.neff
			res.Nu, res.NEff = &nu, &ne
			if !math.IsNaN(nz.phi) {
				phi := nz.phi
				res.Phi = &phi
			}
		}
		res.Warnings = append(res.Warnings, twFlagWarnings(nz.flags, twLine{n: n, r1: r1, r2: r2})...)
	}
	q := twQuantile(opt.Level, dof)
	res.Intercept = a
	res.SlopeBeforePerDecade = 10 * b
	res.SlopeAfterPerDecade = 10 * (b + c)
	res.SlopeChangePerDecade = 10 * c
	res.StderrPerDecade = 10 * se
	res.CILowPerDecade = 10 * (c - q*se)
	res.CIHighPerDecade = 10 * (c + q*se)
	res.PValue = twPValue(c/se, dof)
	return res, nil
}

// twACF12 returns the lag-1 and lag-2 autocorrelations of residuals (NaN
// for missing steps) as R's acf computes them, using only pairs of steps
// that are both present.
func twACF12(resid []float64) (float64, float64) {
	r, _ := linreg.ACFGaps(resid, 2)
	if r == nil {
		return math.NaN(), math.NaN()
	}
	return r[1], r[2]
}

func strconvYear(t float64) string {
	return fmt.Sprintf("%.4g", t)
}

// twSpanIndex returns the first and last positions of t inside [s.From, s.To].
func twSpanIndex(t []float64, s Span) (int, int, bool) {
	a, b := -1, -1
	for i, v := range t {
		if v >= s.From && v <= s.To {
			if a < 0 {
				a = i
			}
			b = i
		}
	}
	return a, b, a >= 0
}

// Compare fits the trends of windows a and b (Window with opt) and
// compares them.
//
// Difference: d = slope_B - slope_A with SE_d = sqrt(SE_A^2 + SE_B^2), the
// variance of a difference of independent estimates. Separate or adjacent
// windows (no shared step) are treated as independent, which ignores the
// small correlation the noise carries across the boundary. The p-value for
// d = 0 is two-sided from Student's t with the smaller of the two windows'
// degrees of freedom (the conservative choice; the Welch-Satterthwaite
// value lies between the smaller dof and their sum), or from the normal
// distribution under arma11-ml. Overlapping windows share data, so the two
// estimates are correlated and the simple test does not apply: d is
// reported without an SE or p-value, with a warning.
//
// Broken stick: BrokenStick over the data from the earlier window's start
// to the later window's end, with the break at the boundary: midway between
// the earlier window's last step and the later window's first step for
// separate or adjacent windows (for adjacent monthly windows 1970-1999 and
// 2000-2019 that is 2000.0), and midway between the later window's first
// step and the step before it for overlapping windows. Its slope change c
// answers "did the rate change at the boundary" with one fit that uses all
// the data and keeps the line continuous. When it cannot be fitted,
// BrokenStick is nil and a warning says why.
func Compare(t, y []float64, a, b Span, opt Options) (*Comparison, error) {
	opt, err := opt.normalise()
	if err != nil {
		return nil, err
	}
	if err := twCheckAxis(t, y); err != nil {
		return nil, err
	}
	if len(t) == 0 {
		return nil, errors.New("no data: expected a series with values in both windows")
	}
	idx := [2][2]int{}
	for w, s := range []Span{a, b} {
		name := "A"
		if w == 1 {
			name = "B"
		}
		if math.IsNaN(s.From) || math.IsNaN(s.To) || s.To < s.From {
			return nil, fmt.Errorf("window %s (%v to %v): expected an end after the start", name, s.From, s.To)
		}
		i0, i1, ok := twSpanIndex(t, s)
		if !ok {
			return nil, fmt.Errorf("window %s (%s to %s) holds no time steps of the data (%s to %s)", name, strconvYear(s.From), strconvYear(s.To), strconvYear(t[0]), strconvYear(t[len(t)-1]))
		}
		idx[w] = [2]int{i0, i1}
	}
	cmp := &Comparison{Warnings: []string{}}
	for w := 0; w < 2; w++ {
		i0, i1 := idx[w][0], idx[w][1]
		r, err := Window(t[i0:i1+1], y[i0:i1+1], opt)
		if err != nil {
			return nil, fmt.Errorf("window %s (%s to %s): %w", []string{"A", "B"}[w], twTimeLabel(t, i0), twTimeLabel(t, i1), err)
		}
		r.From, r.To = twTimeLabel(t, i0), twTimeLabel(t, i1)
		cmp.Windows = append(cmp.Windows, r)
	}
	ra, rb := cmp.Windows[0], cmp.Windows[1]
	cmp.DifferencePerDecade = rb.SlopePerDecade - ra.SlopePerDecade
	lo, hi := max(idx[0][0], idx[1][0]), min(idx[0][1], idx[1][1])
	cmp.Overlap = lo <= hi
	if cmp.Overlap {
		cmp.Warnings = append(cmp.Warnings, fmt.Sprintf("the windows overlap (%d shared steps, %s to %s): their trends share data and are correlated, so the difference has no simple standard error or p-value; see the broken-stick test of a change in rate", hi-lo+1, twTimeLabel(t, lo), twTimeLabel(t, hi)))
	} else {
		se := math.Hypot(ra.StderrPerDecade, rb.StderrPerDecade)
		cmp.StderrPerDecade = &se
		dof := math.Inf(1)
		if ra.DOF != nil && rb.DOF != nil {
			dof = math.Min(*ra.DOF, *rb.DOF)
			d := dof
			cmp.DOF = &d
		}
		p := twPValue(cmp.DifferencePerDecade/se, dof)
		cmp.PValue = &p
	}

	// Broken stick.
	first, second := 0, 1
	if idx[1][0] < idx[0][0] {
		first, second = 1, 0
	}
	s0 := idx[first][0]
	s1 := max(idx[0][1], idx[1][1])
	var tb float64
	if !cmp.Overlap {
		tb = (t[idx[first][1]] + t[idx[second][0]]) / 2
	} else if j := idx[second][0]; j > 0 {
		tb = (t[j-1] + t[j]) / 2
	} else {
		tb = math.NaN()
	}
	if math.IsNaN(tb) {
		cmp.Warnings = append(cmp.Warnings, "broken stick: both windows start at the first step, so there is no boundary between them to test a change in rate at")
	} else {
		bs, err := BrokenStick(t[s0:s1+1], y[s0:s1+1], tb, opt)
		if err != nil {
			cmp.Warnings = append(cmp.Warnings, "broken stick not fitted: "+err.Error())
		} else {
			cmp.BrokenStick = bs
			for _, w := range bs.Warnings {
				cmp.Warnings = append(cmp.Warnings, "broken stick: "+w)
			}
		}
	}
	return cmp, nil
}

// SeriesCompare is Compare over a series with the windows given as text
// pairs {from, to} (YYYY, YYYY-MM or decimal years, as series.WindowSpec
// reads them: "1980" to "1999" holds 1980-01 to 1999-12 for monthly data).
func SeriesCompare(s *series.Series, a, b [2]string, opt Options) (*Comparison, error) {
	if s == nil {
		return nil, errors.New("no series given")
	}
	var spans [2]Span
	for w, pr := range [][2]string{a, b} {
		ws, err := s.WindowSpec(pr[0], pr[1])
		if err != nil {
			return nil, fmt.Errorf("window %s: %w", []string{"A", "B"}[w], err)
		}
		spans[w] = Span{ws.Times[0], ws.Times[len(ws.Times)-1]}
	}
	c, err := Compare(s.Times, s.Values, spans[0], spans[1], opt)
	if err != nil {
		return nil, fmt.Errorf("series %q: %w", s.Name, err)
	}
	for _, r := range c.Windows {
		r.Series = s.Name
	}
	return c, nil
}
