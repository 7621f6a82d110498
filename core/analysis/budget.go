package analysis

import (
	"context"
	"fmt"
	"strings"

	"heatledger/core/budget"
	"heatledger/core/series"
)

// HeatSettings ask for the heating rate of a heat-content series.
type HeatSettings struct {
	Series string `json:"series"`
	HeatInput
	From  string  `json:"from,omitempty"` // YYYY, YYYY-MM or decimal year; empty = the series' start
	To    string  `json:"to,omitempty"`   // inclusive for YYYY and YYYY-MM; empty = the series' end
	Level float64 `json:"level,omitempty"`
	// DiffHalfWidth is the half-width in steps of the centred differences
	// behind the rate series for charts; zero means 1.
	DiffHalfWidth int `json:"diff_half_width,omitempty"`
}

// HeatInput are the settings that turn a heat content into a rate.
type HeatInput struct {
	// Unit: zj, j or j_m2 (or text such as "1e22 J"); empty = the series' unit.
	Unit string `json:"unit,omitempty"`
	// Area: earth (default), ocean, or a number of square metres.
	Area string `json:"area,omitempty"`
	// ContentArea, for a series in J m-2: the area its values are per
	// (earth, ocean or square metres); empty = Area.
	ContentArea string `json:"content_area,omitempty"`
	// Noise: the trend engine's noise model (white, ar1, arma11, arma11-ml).
	Noise string `json:"noise,omitempty"`
	// OceanFraction, when positive: the ocean's share of the total heat
	// uptake (e.g. 0.91, IPCC AR6, from memory), for an imbalance estimate.
	OceanFraction float64 `json:"ocean_fraction,omitempty"`
}

func (h HeatInput) options() (budget.HeatOptions, error) {
	area, err := budget.ParseArea(h.Area)
	if err != nil {
		return budget.HeatOptions{}, err
	}
	opt := budget.HeatOptions{Unit: h.Unit, Area: area, Noise: h.Noise, OceanFraction: h.OceanFraction}
	if strings.TrimSpace(h.ContentArea) != "" {
		ca, err := budget.ParseArea(h.ContentArea)
		if err != nil {
			return opt, fmt.Errorf("content area: %w", err)
		}
		opt.ContentAreaM2 = ca.M2
	}
	return opt, nil
}

// Heat computes the heating rate of a heat-content series over a window
// (budget.Heat).
func (w *Workspace) Heat(s HeatSettings) (*budget.HeatResult, error) {
	if strings.TrimSpace(s.Series) == "" {
		return nil, fmt.Errorf("no heat-content series chosen")
	}
	ser, err := w.Find(s.Series)
	if err != nil {
		return nil, err
	}
	opt, err := s.HeatInput.options()
	if err != nil {
		return nil, err
	}
	opt.From, opt.To, opt.Level, opt.DiffHalfWidth = s.From, s.To, s.Level, s.DiffHalfWidth
	r, err := budget.Heat(ser, opt)
	if err != nil {
		return nil, fmt.Errorf("series %q: %w", ser.Name, err)
	}
	return r, nil
}

// BudgetQuantity is one energy-budget input: typed, or from a series.
type BudgetQuantity struct {
	Name string `json:"name,omitempty"`
	// Typed is a distribution of the change between the periods.
	Typed *budget.Dist `json:"typed,omitempty"`
	// Series names a series: the change is its final-period value minus
	// its base-period value (period means, or heating rates with Heat).
	Series string `json:"series,omitempty"`
	// Data is a series handed in directly instead of by name (for example
	// N from an energy balance model run). Not saved in the analysis file.
	Data *series.Series `json:"-"`
	// Forcing is the total of a forcing assembly (the page's "forcing"
	// source); Model the top-of-atmosphere imbalance N of an energy
	// balance model run (the "model" source). Either takes the place of
	// Series, so the analysis file can run them again.
	Forcing *ForcingSettings `json:"forcing,omitempty"`
	Model   *RespondSettings `json:"model,omitempty"`
	// Heat marks the series as a heat content whose heating rate is used.
	Heat *HeatInput `json:"heat,omitempty"`
	// Base is a typed base-period value used instead of the series' own.
	Base *budget.Dist `json:"base,omitempty"`
	// Sampling: the period-mean uncertainty model, ar1 (default), white or none.
	Sampling string `json:"sampling,omitempty"`
}

// SweepSettings ask for the period sweep (budget.Sweep).
type SweepSettings struct {
	FinalYears int `json:"final_years,omitempty"` // 0 = the final period's length
	FirstEnd   int `json:"first_end,omitempty"`   // 0 = automatic
	LastEnd    int `json:"last_end,omitempty"`    // 0 = automatic
	Draws      int `json:"draws,omitempty"`       // 0 = 20,000
}

// GregorySettings ask for the regression of N on T (budget.Gregory).
type GregorySettings struct {
	N     string  `json:"n"`
	T     string  `json:"t"`
	From  string  `json:"from,omitempty"`
	To    string  `json:"to,omitempty"`
	Noise string  `json:"noise,omitempty"` // white, ar1 (default) or arma11
	Level float64 `json:"level,omitempty"`
	// NData is an N series handed in directly (e.g. from an energy balance
	// model run) instead of by name.
	NData *series.Series `json:"-"`
}

// SensitivitySettings ask for the energy-budget sensitivity.
type SensitivitySettings struct {
	Base  [2]string        `json:"base_period,omitempty"`  // FROM, TO (needed for series inputs)
	Final [2]string        `json:"final_period,omitempty"` // FROM, TO
	DT    BudgetQuantity   `json:"dT"`
	DF    []BudgetQuantity `json:"dF"`
	DN    BudgetQuantity   `json:"dN"`
	F2x   *budget.Dist     `json:"f2x,omitempty"` // nil = IPCC AR6 3.93 +/- 0.47 (5-95 %, from memory)
	Draws int              `json:"draws,omitempty"`
	Seed  uint64           `json:"seed"`
	Bins  int              `json:"bins,omitempty"`
	// Sweep and Gregory, when set, add the period sweep and the Gregory
	// regression to the report.
	Sweep   *SweepSettings   `json:"sweep,omitempty"`
	Gregory *GregorySettings `json:"gregory,omitempty"`
}

// SensitivityReport holds the Monte Carlo result and the optional sweep
// and Gregory regression.
type SensitivityReport struct {
	Result  *budget.SensitivityResult `json:"result"`
	Sweep   *budget.SweepResult       `json:"sweep,omitempty"`
	Gregory *budget.GregoryResult     `json:"gregory,omitempty"`
}

func (w *Workspace) quantity(role string, q BudgetQuantity) (budget.Quantity, error) {
	out := budget.Quantity{Name: q.Name, Dist: q.Typed, Base: q.Base, Sampling: q.Sampling}
	switch {
	case q.Data != nil:
		out.Series = q.Data
	case q.Forcing != nil:
		r, err := w.Forcing(*q.Forcing)
		if err != nil {
			return out, fmt.Errorf("%s: building the forcing from %s: %w", role, ForcingSummary(*q.Forcing), err)
		}
		tot := r.Total.Clone()
		tot.Name = "total forcing"
		out.Series = tot
	case q.Model != nil:
		n, err := w.ModelImbalance(q.Model)
		if err != nil {
			return out, fmt.Errorf("%s: the energy balance model: %w", role, err)
		}
		out.Series = n
	case strings.TrimSpace(q.Series) != "":
		s, err := w.Find(q.Series)
		if err != nil {
			return out, fmt.Errorf("%s: %w", role, err)
		}
		out.Series = s
	}
	if q.Heat != nil {
		opt, err := q.Heat.options()
		if err != nil {
			return out, fmt.Errorf("%s: %w", role, err)
		}
		out.Heat = &opt
	}
	return out, nil
}

// BudgetInputs builds the engine's inputs from the settings.
func (w *Workspace) BudgetInputs(s SensitivitySettings) (budget.Inputs, error) {
	in := budget.Inputs{
		Base:  budget.Period{From: s.Base[0], To: s.Base[1]},
		Final: budget.Period{From: s.Final[0], To: s.Final[1]},
		F2x:   s.F2x,
	}
	var err error
	if in.DT, err = w.quantity("dT", s.DT); err != nil {
		return in, err
	}
	for _, q := range s.DF {
		bq, err := w.quantity("dF", q)
		if err != nil {
			return in, err
		}
		in.DF = append(in.DF, bq)
	}
	if in.DN, err = w.quantity("dN", s.DN); err != nil {
		return in, err
	}
	return in, nil
}

// Sensitivity runs the energy-budget Monte Carlo (budget.Sensitivity) and,
// when asked, the period sweep and the Gregory regression. progress is
// called with done and total work (draws) over all parts; ctx cancels
// between chunks. Both may be nil.
func (w *Workspace) Sensitivity(s SensitivitySettings, ctx context.Context, progress func(done, total int)) (*SensitivityReport, error) {
	in, err := w.BudgetInputs(s)
	if err != nil {
		return nil, err
	}
	draws := s.Draws
	if draws == 0 {
		draws = budget.DefaultDraws
	}
	var sw budget.SweepOptions
	sweepWork := 0
	if s.Sweep != nil {
		sw = budget.SweepOptions{FinalYears: s.Sweep.FinalYears, FirstEnd: s.Sweep.FirstEnd, LastEnd: s.Sweep.LastEnd,
			Draws: s.Sweep.Draws, Seed: s.Seed, Context: ctx}
		first, last, _, err := budget.SweepEnds(in, sw)
		if err != nil {
			return nil, err
		}
		sd := sw.Draws
		if sd == 0 {
			sd = budget.DefaultSweepDraws
		}
		sweepWork = (last - first + 1) * sd
	}
	total := draws + sweepWork
	opt := budget.MCOptions{Draws: s.Draws, Seed: s.Seed, Bins: s.Bins, Context: ctx}
	if progress != nil {
		opt.Progress = func(done, _ int) { progress(done, total) }
	}
	res, err := budget.Sensitivity(in, opt)
	if err != nil {
		return nil, err
	}
	rep := &SensitivityReport{Result: res}
	if s.Sweep != nil {
		if progress != nil {
			sw.Progress = func(done, n int) { progress(draws+sweepWork*done/n, total) }
		}
		if rep.Sweep, err = budget.Sweep(in, sw); err != nil {
			return nil, err
		}
	}
	if g := s.Gregory; g != nil {
		nS := g.NData
		if nS == nil {
			if nS, err = w.Find(g.N); err != nil {
				return nil, fmt.Errorf("Gregory regression, N: %w", err)
			}
		}
		tS, err := w.Find(g.T)
		if err != nil {
			return nil, fmt.Errorf("Gregory regression, T: %w", err)
		}
		rep.Gregory, err = budget.Gregory(nS, tS, budget.GregoryOptions{From: g.From, To: g.To, Noise: g.Noise, Level: g.Level, F2x: s.F2x})
		if err != nil {
			return nil, err
		}
	}
	return rep, nil
}
