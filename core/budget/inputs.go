package budget

import (
	"errors"
	"fmt"
	"math"

	"heatledger/core/series"
)

// Quantity is one input of the energy budget: a typed distribution of the
// change between the base and the final period, or a series whose change
// is computed.
type Quantity struct {
	// Name labels the quantity (e.g. a forcing component); may be empty.
	Name string
	// Dist is a typed distribution of the change (dT in K, dF and dN in
	// W m-2). Give Dist or Series, not both.
	Dist *Dist
	// Series: the change is the series' value over the final period minus
	// its value over the base period, each a PeriodMean (with its sampling
	// uncertainty), drawn as a normal with mean m_final - m_base and SD
	// sqrt(SE_final^2 + SE_base^2) (the two periods are independent samples
	// of the variability). This is also the hook for an N series from an
	// energy balance model run.
	Series *series.Series
	// Heat, with Series: the series is a heat content and its value over a
	// period is its heating rate there (Heat over the period, W m-2; the
	// energy-imbalance estimate when Heat.OceanFraction > 0), with the
	// trend's standard error. Meant for dN.
	Heat *HeatOptions
	// Base, with Series: a typed base-period value used instead of the
	// series' own (for a series that does not reach back to the base
	// period, e.g. N in 1850-1900 taken from models). The change is then
	// the final-period value (normal, its SE) minus a draw of Base.
	Base *Dist
	// Sampling is the model of a series' period-mean uncertainty:
	// SamplingAR1 (default), SamplingWhite or SamplingNone (see PeriodMean).
	Sampling string
}

// Inputs are the energy-budget inputs between a base and a final period.
type Inputs struct {
	// Base and Final are the periods; needed when a quantity is a series.
	Base, Final Period
	// DT is the change in surface temperature (K).
	DT Quantity
	// DF is the change in effective radiative forcing (W m-2), the sum of
	// its components drawn independently (e.g. a greenhouse part and a
	// skewed aerosol part).
	DF []Quantity
	// DN is the change in the top-of-atmosphere imbalance (W m-2).
	DN Quantity
	// F2x is the forcing of doubled CO2 (W m-2); nil means DefaultF2x.
	F2x *Dist
}

// part is one independently drawn term of a quantity: sign * draw of d.
type part struct {
	sign float64
	d    Dist
}

// Resolved is an input resolved to its distribution for given periods.
type Resolved struct {
	Role   string       `json:"role"` // dT, dF, dN or F2x
	Name   string       `json:"name"`
	Source string       `json:"source"` // how the value was obtained, in words
	Dists  []SignedDist `json:"parts"`  // drawn independently and summed
	Center float64      `json:"center"` // sum of the parts' centres
	Mean   float64      `json:"mean"`
	SD     float64      `json:"sd"` // sqrt of the sum of the parts' variances
	Base   *PeriodStat  `json:"base,omitempty"`
	Final  *PeriodStat  `json:"final,omitempty"`
	// BaseRate and FinalRate are heating rates (Quantity.Heat).
	BaseRate  *HeatResult `json:"base_rate,omitempty"`
	FinalRate *HeatResult `json:"final_rate,omitempty"`
	Warnings  []string    `json:"warnings"`
}

// SignedDist is a term of a resolved input: Sign (+1 or -1) times a draw.
type SignedDist struct {
	Sign float64 `json:"sign"`
	Dist Dist    `json:"dist"`
}

func (r *Resolved) parts() []part {
	out := make([]part, len(r.Dists))
	for i, s := range r.Dists {
		out[i] = part{s.Sign, s.Dist}
	}
	return out
}

func (r *Resolved) finish() {
	var c, m, v float64
	for _, s := range r.Dists {
		c += s.Sign * s.Dist.Center()
		m += s.Sign * s.Dist.MeanValue()
		sd := s.Dist.StdDev()
		v += sd * sd
	}
	r.Center, r.Mean, r.SD = c, m, math.Sqrt(v)
	if r.Warnings == nil {
		r.Warnings = []string{}
	}
}

// Resolve turns every input into its distribution for the periods in.Base
// and in.Final: [dT, dF components..., dN, F2x], in that order.
func (in Inputs) Resolve() ([]*Resolved, error) {
	var out []*Resolved
	add := func(role string, q Quantity) error {
		r, err := in.resolveOne(role, q)
		if err != nil {
			if q.Name != "" {
				return fmt.Errorf("%s (%s): %w", role, q.Name, err)
			}
			return fmt.Errorf("%s: %w", role, err)
		}
		out = append(out, r)
		return nil
	}
	if err := add("dT", in.DT); err != nil {
		return nil, err
	}
	if len(in.DF) == 0 {
		return nil, errors.New("dF: no forcing change given: expected a distribution, a series or components")
	}
	for _, q := range in.DF {
		if err := add("dF", q); err != nil {
			return nil, err
		}
	}
	if err := add("dN", in.DN); err != nil {
		return nil, err
	}
	f2x := DefaultF2x()
	src := "default: IPCC AR6 3.93 +/- 0.47 W m-2 read as a 5-95 % range (from memory)"
	if in.F2x != nil {
		var err error
		if f2x, err = in.F2x.Normalize(); err != nil {
			return nil, fmt.Errorf("F2x: %w", err)
		}
		src = "typed"
	}
	r := &Resolved{Role: "F2x", Name: "F2x", Source: src, Dists: []SignedDist{{1, f2x}}}
	r.finish()
	if !(f2x.Center() > 0) {
		return nil, fmt.Errorf("F2x: central value %g W m-2: expected a positive forcing", f2x.Center())
	}
	out = append(out, r)
	return out, nil
}

func (in Inputs) resolveOne(role string, q Quantity) (*Resolved, error) {
	r := &Resolved{Role: role, Name: q.Name}
	switch {
	case q.Dist != nil && q.Series != nil:
		return nil, errors.New("give a distribution or a series, not both")
	case q.Dist != nil:
		if q.Heat != nil || q.Base != nil || q.Sampling != "" {
			return nil, errors.New("heat, base and sampling settings apply only to a quantity from a series")
		}
		d, err := q.Dist.Normalize()
		if err != nil {
			return nil, err
		}
		r.Source = "typed: " + d.String()
		r.Dists = []SignedDist{{1, d}}
	case q.Series != nil:
		if r.Name == "" {
			r.Name = q.Series.Name
		}
		fin, fSE, err := in.periodValue(r, q, in.Final, true)
		if err != nil {
			return nil, err
		}
		if q.Base != nil {
			b, err := q.Base.Normalize()
			if err != nil {
				return nil, fmt.Errorf("base-period value: %w", err)
			}
			r.Dists = []SignedDist{{1, Normal(fin, fSE)}, {-1, b}}
			r.Source = fmt.Sprintf("series %q over %s minus a typed base-period value, %s", q.Series.Name, in.Final, b)
		} else {
			base, bSE, err := in.periodValue(r, q, in.Base, false)
			if err != nil {
				return nil, err
			}
			r.Dists = []SignedDist{{1, Normal(fin-base, math.Hypot(fSE, bSE))}}
			r.Source = fmt.Sprintf("series %q: %s minus %s", q.Series.Name, in.Final, in.Base)
		}
		if q.Heat != nil {
			r.Source += " (heating rates)"
		} else {
			r.Source += " (period means)"
		}
	default:
		return nil, errors.New("no value: expected a typed distribution or a series")
	}
	for _, d := range r.Dists {
		if _, err := d.Dist.Normalize(); err != nil {
			return nil, fmt.Errorf("%s: %w", r.Source, err)
		}
	}
	r.finish()
	return r, nil
}

// periodValue is the series' mean (or heating rate) over a period with its
// standard error.
func (in Inputs) periodValue(r *Resolved, q Quantity, p Period, final bool) (float64, float64, error) {
	which := "base"
	if final {
		which = "final"
	}
	if q.Heat != nil {
		opt := *q.Heat
		opt.From, opt.To = p.From, p.To
		if _, _, err := p.bounds(); err != nil {
			return 0, 0, fmt.Errorf("%s period: %v", which, err)
		}
		h, err := Heat(q.Series, opt)
		if err != nil {
			return 0, 0, fmt.Errorf("%s period: %w", which, err)
		}
		if final {
			r.FinalRate = h
		} else {
			r.BaseRate = h
		}
		if h.Area.Name != "earth" && h.ImbalanceWPerM2 == nil {
			r.Warnings = append(r.Warnings, fmt.Sprintf("the heating rate of %q is spread over %s, not Earth's surface: the energy budget needs W m-2 of Earth's surface", q.Series.Name, h.Area.Source))
		}
		if h.ImbalanceWPerM2 != nil {
			return *h.ImbalanceWPerM2, *h.ImbalanceStderrWPerM2, nil
		}
		return h.RateWPerM2, h.StderrWPerM2, nil
	}
	st, err := PeriodMean(q.Series, p, q.Sampling)
	if err != nil {
		return 0, 0, fmt.Errorf("%s period: %w", which, err)
	}
	if !st.Covered {
		r.Warnings = append(r.Warnings, fmt.Sprintf("series %q (%s to %s) does not cover the whole %s period %s: its mean uses %s to %s only", q.Series.Name, series.StepLabel(q.Series.Resolution, q.Series.First), series.StepLabel(q.Series.Resolution, q.Series.Last()), which, p, st.From, st.To))
	}
	if st.Missing > 0 {
		r.Warnings = append(r.Warnings, fmt.Sprintf("series %q: %d missing values skipped in the %s period", q.Series.Name, st.Missing, which))
	}
	if final {
		r.Final = &st
	} else {
		r.Base = &st
	}
	return st.Mean, st.SE, nil
}

// layout is the flattened list of parts with the role of each.
type layout struct {
	parts  []part
	role   []int    // 0 dT, 1 dF, 2 dN, 3 F2x
	stream []uint64 // PCG stream: 4096 role + position within the role + 1
	names  []string
}

func layoutOf(rs []*Resolved) layout {
	var l layout
	var pos [4]uint64
	for _, r := range rs {
		role := map[string]int{"dT": 0, "dF": 1, "dN": 2, "F2x": 3}[r.Role]
		for _, p := range r.parts() {
			l.parts = append(l.parts, p)
			l.role = append(l.role, role)
			pos[role]++
			l.stream = append(l.stream, 4096*uint64(role)+pos[role])
			l.names = append(l.names, r.Name)
		}
	}
	return l
}

// centralOf returns the central dT, dF, dN, F2x.
func centralOf(rs []*Resolved) (c [4]float64) {
	for _, r := range rs {
		c[map[string]int{"dT": 0, "dF": 1, "dN": 2, "F2x": 3}[r.Role]] += r.Center
	}
	return c
}
