package analysis

// The JSON shapes of the adjust, forcing and respond results, as the
// command-line tool prints them with --json and as reports hold them. The
// field names are a contract; the CLI's own copies in cmd/heatledger
// must print the same bytes (cmd/heatledger/run_test.go checks it).

import (
	"heatledger/core/drivers"
	"heatledger/core/ebm"
	"heatledger/core/forcing"
	"heatledger/core/trend"
)

// AdjustDriverJSON is one driver in the JSON output (the first six keys are
// the CLI contract).
type AdjustDriverJSON struct {
	Name              string           `json:"name"`
	LagMonths         int              `json:"lag_months"`
	Coefficient       float64          `json:"coefficient"`
	Stderr            float64          `json:"stderr"`
	StderrARMA11      float64          `json:"stderr_arma11"`
	Standardized      float64          `json:"standardized"` // b * sd(driver): target units per one standard deviation
	Beta              float64          `json:"beta"`         // standardized / sd(target)
	Unit              string           `json:"unit"`
	MinLag            int              `json:"min_lag"`
	MaxLag            int              `json:"max_lag"`
	Smooth3           bool             `json:"smooth3"`
	Detrend           bool             `json:"detrend"`
	VIF               float64          `json:"vif"`
	RSSIncreaseMinus1 *float64         `json:"rss_increase_minus_1"`
	RSSIncreasePlus1  *float64         `json:"rss_increase_plus_1"`
	Profile           []drivers.LagRSS `json:"profile,omitempty"`
}

// AdjustJSON is the output of `heatledger adjust --json`. The keys target,
// n, dropped, drivers, trend_per_decade, trend_stderr_per_decade, r2, aic,
// adjusted_trend and warnings are the CLI contract; the rest are extras.
type AdjustJSON struct {
	Target         string               `json:"target"`
	N              int                  `json:"n"`
	Dropped        int                  `json:"dropped"`
	DroppedReasons []drivers.DropReason `json:"dropped_reasons"`
	OutsideWindow  int                  `json:"outside_window"`
	From           string               `json:"from"`
	To             string               `json:"to"`
	Drivers        []AdjustDriverJSON   `json:"drivers"`
	// TrendPerDecade is the fitted model's trend coefficient (linear trend;
	// broken: the first segment), per decade; null for none or series.
	// TrendStderrPerDecade is its standard error with the ARMA(1,1)
	// inflation of Foster and Rahmstorf 2011 (OLS SE times sqrt(nu));
	// TrendStderrOLSPerDecade the plain OLS one.
	TrendPerDecade          *float64               `json:"trend_per_decade"`
	TrendStderrPerDecade    *float64               `json:"trend_stderr_per_decade"`
	TrendStderrOLSPerDecade *float64               `json:"trend_stderr_ols_per_decade"`
	R2                      float64                `json:"r2"`
	AIC                     float64                `json:"aic"`
	AdjustedTrend           *trend.Result          `json:"adjusted_trend"`
	RawTrend                *trend.Result          `json:"raw_trend"`
	Warnings                []string               `json:"warnings"`
	TrendKind               string                 `json:"trend"`
	Harmonics               int                    `json:"harmonics"`
	Intercept               drivers.Coef           `json:"intercept"`
	RefTime                 float64                `json:"ref_time"`
	TrendTerm               *drivers.TrendTerm     `json:"trend_term"`
	AnnualCycle             []drivers.Harmonic     `json:"annual_cycle"`
	AdjR2                   float64                `json:"adj_r2"`
	ResidualSD              float64                `json:"residual_sd"`
	Rho1                    float64                `json:"rho1"`
	Rho2                    float64                `json:"rho2"`
	Phi                     *float64               `json:"phi"`
	Nu                      float64                `json:"nu"`
	Cond                    float64                `json:"cond"`
	LagSearch               *drivers.LagSearch     `json:"lag_search"`
	Trends                  []drivers.WindowTrends `json:"trends"`
	TrendChange             *drivers.TrendChange   `json:"trend_change"`
}

func AdjustOutput(r *drivers.Result) AdjustJSON {
	out := AdjustJSON{
		Target: r.Target, N: r.N, Dropped: r.Dropped, DroppedReasons: r.DroppedReasons, OutsideWindow: r.OutsideWindow,
		From: r.From, To: r.To, Drivers: []AdjustDriverJSON{},
		TrendPerDecade: r.Trend.SlopePerDecade, TrendStderrPerDecade: r.Trend.StderrARMA11PerDecade, TrendStderrOLSPerDecade: r.Trend.StderrOLSPerDecade,
		R2: r.R2, AIC: r.AIC, AdjustedTrend: r.Trends[0].Adjusted, RawTrend: r.Trends[0].Raw, Warnings: r.Warnings,
		TrendKind: r.TrendKind, Harmonics: r.Harmonics, Intercept: r.Intercept, RefTime: r.RefTime, TrendTerm: r.Trend,
		AnnualCycle: r.Cycle, AdjR2: r.AdjR2, ResidualSD: r.ResidualSD, Rho1: r.Rho1, Rho2: r.Rho2, Phi: r.Phi, Nu: r.Nu,
		Cond: r.Cond, LagSearch: r.Search, Trends: r.Trends, TrendChange: r.Change,
	}
	if out.AnnualCycle == nil {
		out.AnnualCycle = []drivers.Harmonic{}
	}
	for _, d := range r.Drivers {
		out.Drivers = append(out.Drivers, AdjustDriverJSON{
			Name: d.Name, LagMonths: d.LagMonths, Coefficient: d.Estimate, Stderr: d.StdErr, StderrARMA11: d.StdErrARMA11,
			Standardized: d.Effect1SD, Beta: d.Beta, Unit: d.Unit, MinLag: d.MinLag, MaxLag: d.MaxLag, Smooth3: d.Smooth3,
			Detrend: d.Detrend, VIF: d.VIF, RSSIncreaseMinus1: d.RSSIncreaseMinus1, RSSIncreasePlus1: d.RSSIncreasePlus1, Profile: d.Profile,
		})
	}
	return out
}

// ForcingComponentJSON is one component in `heatledger forcing --json`
// (name, kind, first and last are the contract; first and last are the
// forcing at the first and last steps, W m-2).
type ForcingComponentJSON struct {
	Name          string  `json:"name"`
	Kind          string  `json:"kind"`
	First         float64 `json:"first"`
	Last          float64 `json:"last"`
	Mean          float64 `json:"mean"`
	Series        string  `json:"series"`
	Unit          string  `json:"unit"`
	Formula       string  `json:"formula"`
	ReferenceMode string  `json:"reference_mode"`
	Reference     float64 `json:"reference"`
	Scale         float64 `json:"scale"`
	Efficacy      float64 `json:"efficacy"`
	Filled        int     `json:"filled"`
}

// ForcingJSON is the output of `heatledger forcing --json` (components and
// total_last are the contract).
type ForcingJSON struct {
	Components []ForcingComponentJSON `json:"components"`
	TotalLast  float64                `json:"total_last"`
	From       string                 `json:"from"`
	To         string                 `json:"to"`
	Settings   forcing.Settings       `json:"settings"`
	Warnings   []string               `json:"warnings"`
}

func ForcingOutput(f *forcing.Result) ForcingJSON {
	out := ForcingJSON{TotalLast: f.TotalLastWPerM2, From: f.From, To: f.To, Settings: f.Settings, Warnings: f.Warnings, Components: []ForcingComponentJSON{}}
	if out.Warnings == nil {
		out.Warnings = []string{}
	}
	for _, c := range f.Components {
		out.Components = append(out.Components, ForcingComponentJSON{Name: c.Name, Kind: c.Kind, First: c.FirstWPerM2, Last: c.LastWPerM2, Mean: c.MeanWPerM2,
			Series: c.Series, Unit: c.Unit, Formula: c.Formula, ReferenceMode: c.ReferenceMode, Reference: c.Reference, Scale: c.Scale,
			Efficacy: c.Efficacy, Filled: c.Filled})
	}
	return out
}

// EstimateJSON is one fitted parameter (value and stderr are the contract).
type EstimateJSON struct {
	Value     float64 `json:"value"`
	Stderr    float64 `json:"stderr"`
	Low       float64 `json:"low"`
	High      float64 `json:"high"`
	Component string  `json:"component,omitempty"`
}

// FitJSON is the fit in `heatledger respond` (free, rmse and r2 are the
// contract).
type FitJSON struct {
	Free        map[string]EstimateJSON `json:"free"`
	RMSE        float64                 `json:"rmse"`
	R2          float64                 `json:"r2"`
	ECS         ebm.Interval            `json:"ecs"`
	TCR         ebm.Interval            `json:"tcr"`
	Level       float64                 `json:"level"`
	N           int                     `json:"n"`
	HeatN       int                     `json:"heat_n"`
	HeatRMSEZJ  *float64                `json:"heat_rmse_zj"`
	HeatWeight  float64                 `json:"heat_weight"`
	HeatShare   float64                 `json:"heat_share"`
	Rho1        float64                 `json:"rho1"`
	Rho2        float64                 `json:"rho2"`
	Nu          float64                 `json:"nu"`
	Order       []string                `json:"order"`
	Correlation [][]float64             `json:"correlation"`
	Evaluations int                     `json:"evaluations"`
}

// RespondJSON is the output of `heatledger respond`: model, params,
// derived, fit, final and warnings are the contract; the rest are extras.
type RespondJSON struct {
	Model          string              `json:"model"`
	Params         ebm.Params          `json:"params"`
	Derived        ebm.Derived         `json:"derived"`
	Fit            *FitJSON            `json:"fit"`
	Final          ebm.State           `json:"final"`
	Warnings       []string            `json:"warnings"`
	Initial        ebm.State           `json:"initial"`
	SpinupFrom     float64             `json:"spinup_from"`
	SpinupYears    float64             `json:"spinup_years"`
	Forcing        ForcingJSON         `json:"forcing"`
	Attribution    []*ebm.Attribution  `json:"attribution"`
	Drivers        []DriverOnResponse  `json:"drivers,omitempty"`
	ResidualTrends []ResidualTrendJSON `json:"residual_trends,omitempty"`
	Notes          []string            `json:"notes"`
}

// DriverOnResponse is a short-term driver fitted with the model.
type DriverOnResponse struct {
	Name        string  `json:"name"`
	LagMonths   int     `json:"lag_months"`
	Coefficient float64 `json:"coefficient"`
	Stderr      float64 `json:"stderr"`
}

type ResidualTrendJSON struct {
	From            string  `json:"from"`
	To              string  `json:"to"`
	SlopePerDecade  float64 `json:"slope_per_decade"`
	StderrPerDecade float64 `json:"stderr_per_decade"`
	CILowPerDecade  float64 `json:"ci_low_per_decade"`
	CIHighPerDecade float64 `json:"ci_high_per_decade"`
	Noise           string  `json:"noise"`
}

func RespondOutput(r *Response) RespondJSON {
	out := RespondJSON{Model: r.Model, Params: r.Params, Derived: r.Derived, Final: r.Run.Final, Initial: r.Run.Initial,
		SpinupFrom: r.Run.SpinupFromYear, SpinupYears: r.Run.SpinupYears, Forcing: ForcingOutput(r.Forcing),
		Attribution: r.Attribution, Warnings: r.Warnings, Notes: r.Notes}
	if out.Attribution == nil {
		out.Attribution = []*ebm.Attribution{}
	}
	if out.Warnings == nil {
		out.Warnings = []string{}
	}
	if f := r.Fit; f != nil {
		fj := &FitJSON{Free: map[string]EstimateJSON{}, RMSE: f.RMSE, R2: f.R2, ECS: f.ECS, TCR: f.TCR, Level: f.Level, N: f.N, HeatN: f.HeatN,
			HeatRMSEZJ: f.HeatRMSEZJ, HeatWeight: f.HeatWeight, HeatShare: f.HeatShare, Rho1: f.Rho1, Rho2: f.Rho2, Nu: f.Nu,
			Order: f.Names, Correlation: f.Correlation, Evaluations: f.Evaluations}
		for _, e := range f.Estimates {
			fj.Free[e.Name] = EstimateJSON{Value: e.Value, Stderr: e.StdErr, Low: e.Low, High: e.High, Component: e.Component}
		}
		out.Fit = fj
	}
	if a := r.Adjust; a != nil {
		for _, d := range a.Drivers {
			out.Drivers = append(out.Drivers, DriverOnResponse{Name: d.Name, LagMonths: d.LagMonths, Coefficient: d.Estimate, Stderr: d.StdErrARMA11})
		}
	}
	for _, t := range r.ResidualTrends {
		out.ResidualTrends = append(out.ResidualTrends, ResidualTrendJSON{From: t.From, To: t.To, SlopePerDecade: t.SlopePerDecade,
			StderrPerDecade: t.StderrPerDecade, CILowPerDecade: t.CILowPerDecade, CIHighPerDecade: t.CIHighPerDecade, Noise: t.Noise})
	}
	return out
}
