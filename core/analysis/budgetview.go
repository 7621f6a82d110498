package analysis

import (
	"context"
	"errors"
	"fmt"
	"math"
	"strconv"
	"strings"

	"heatledger/core/budget"
	"heatledger/core/chart"
	"heatledger/core/series"
)

// This file builds what the Budget view shows: the form that gathers the
// energy-budget inputs as typed text, its defaults for the loaded series,
// and the figures and tables of the heating rate, the input previews, the
// Monte Carlo result, the period sweep and the Gregory regression. The
// numbers all come from core/budget (through budget.go); nothing here
// computes a sensitivity.

// Input sources of the Budget form (QuantityForm.Source).
const (
	// SourceTyped: a typed distribution of the change between the periods.
	SourceTyped = "typed"
	// SourceSeries: period means of a loaded series, with their sampling
	// uncertainty.
	SourceSeries = "series"
	// SourceHeat: heating rates of a heat-content series over each period
	// (the trend of the content), divided by the ocean's share when given.
	SourceHeat = "heat"
	// SourceForcing: period means of the total forcing that core/forcing
	// builds from the loaded components (see GuessForcing).
	SourceForcing = "forcing"
	// SourceModel: period means of the top-of-atmosphere imbalance N of an
	// energy balance model run (QuantityForm.Model, else the Response
	// view's defaults for the loaded series), taken as exact: the
	// consistency check of the energy budget against the Response view.
	SourceModel = "model"
)

// DistKind describes one kind of typed distribution as the form offers
// it: A and B name its two numbers.
type DistKind struct {
	Value, Label, A, B string
}

// DistKinds are the typed distributions, in the order the form lists them.
var DistKinds = []DistKind{
	{"normal", "normal: mean, SD", "mean", "SD"},
	{"normal90", "normal: 5-95 %", "5 %", "95 %"},
	{"lognormal90", "lognormal (skewed): 5-95 %", "5 %", "95 %"},
	{"uniform", "uniform: low, high", "low", "high"},
}

// DistKindOf returns the kind with the given value (the first, normal,
// for an unknown one).
func DistKindOf(v string) DistKind {
	for _, k := range DistKinds {
		if k.Value == v {
			return k
		}
	}
	return DistKinds[0]
}

// DistForm is a typed distribution as the form holds it: a kind and its
// two numbers as typed.
type DistForm struct {
	Kind string `json:"kind"`
	A    string `json:"a"`
	B    string `json:"b"`
}

// Dist reads the form into a distribution; the error names the field.
func (f DistForm) Dist() (budget.Dist, error) {
	k := strings.TrimSpace(f.Kind)
	known := false
	for _, dk := range DistKinds {
		known = known || dk.Value == k
	}
	if !known {
		return budget.Dist{}, fmt.Errorf("distribution %q: expected one of normal, normal90, lognormal90 or uniform", f.Kind)
	}
	dk := DistKindOf(k)
	num := func(name, s string) (float64, error) {
		v, err := strconv.ParseFloat(strings.TrimSpace(s), 64)
		if err != nil || math.IsNaN(v) || math.IsInf(v, 0) {
			return 0, fmt.Errorf("%s: %q is not a number", name, s)
		}
		return v, nil
	}
	a, err := num(dk.A, f.A)
	if err != nil {
		return budget.Dist{}, err
	}
	b, err := num(dk.B, f.B)
	if err != nil {
		return budget.Dist{}, err
	}
	var d budget.Dist
	switch k {
	case "normal":
		d = budget.Normal(a, b)
	case "normal90":
		d = budget.Dist{Kind: budget.DistNormal, P05: a, P95: b}
	case "lognormal90":
		if !(a*b > 0) {
			return budget.Dist{}, fmt.Errorf("lognormal: the 5 %% value %s and the 95 %% value %s must both be nonzero and of one sign (both negative for a cooling part such as aerosol)", numText(a), numText(b))
		}
		d = budget.Dist{Kind: budget.DistLognormal, P05: a, P95: b}
	case "uniform":
		d = budget.Uniform(a, b)
	}
	return d.Normalize()
}

// Convert returns the form as another kind, keeping the distribution's 5 %
// and 95 % points (or, for normal, its mean and SD) when the current form
// reads; otherwise only the kind changes. It lets the user switch kinds
// without retyping.
func (f DistForm) Convert(kind string) DistForm {
	out := DistForm{Kind: kind, A: f.A, B: f.B}
	d, err := f.Dist()
	if err != nil || kind == f.Kind {
		return out
	}
	lo, hi := d.Quantile(0.05), d.Quantile(0.95)
	switch kind {
	case "normal":
		out.A, out.B = numText(d.MeanValue()), numText(d.StdDev())
	case "uniform", "normal90", "lognormal90":
		out.A, out.B = numText(lo), numText(hi)
	}
	return out
}

// numText is a number as the form shows it: up to 4 significant digits.
func numText(v float64) string {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return ""
	}
	if math.Abs(v) < 1e-12 {
		return "0"
	}
	return strconv.FormatFloat(v, 'g', 4, 64)
}

// QuantityForm is one energy-budget input (dT, a part of dF, dN) as the
// form holds it.
type QuantityForm struct {
	Name   string `json:"name,omitempty"`
	Source string `json:"source"` // SourceTyped, SourceSeries, SourceHeat or SourceForcing
	// Series is a series ref (NAME or FILE:NAME) for SourceSeries and
	// SourceHeat.
	Series string `json:"series,omitempty"`
	// Sampling is the period-mean uncertainty model (ar1, white, none) of
	// SourceSeries and SourceForcing.
	Sampling string `json:"sampling,omitempty"`
	// OceanFraction, for SourceHeat: "" for none, else the ocean's share of
	// the heat uptake as typed (e.g. 0.91).
	OceanFraction string   `json:"ocean_fraction,omitempty"`
	Typed         DistForm `json:"typed"`
	// Model, for SourceModel, is the model run whose imbalance is used (nil:
	// the Response view's defaults for the loaded series).
	Model *RespondSettings `json:"model,omitempty"`
}

// ModelImbalance runs the energy balance model of s (nil: the Response
// view's defaults for the loaded series) and returns its top-of-atmosphere
// imbalance N (W m-2), the step means of the run.
func (w *Workspace) ModelImbalance(s *RespondSettings) (*series.Series, error) {
	if s == nil {
		d := w.ResponseDefaults()
		if len(d.Components) == 0 {
			return nil, fmt.Errorf("no forcing components among the loaded series to run a model with")
		}
		s = &RespondSettings{Forcing: ForcingSettings{Components: d.Components}}
	}
	run := *s
	run.Fit, run.Windows = nil, nil
	r, err := w.Respond(run)
	if err != nil {
		return nil, err
	}
	n := r.Run.N.Clone()
	n.Name = "model imbalance N"
	return n, nil
}

// BudgetForm is the Budget view's energy-budget form: every field as typed.
type BudgetForm struct {
	Base  [2]string      `json:"base_period"`
	Final [2]string      `json:"final_period"`
	DT    QuantityForm   `json:"dT"`
	DF    []QuantityForm `json:"dF"`
	DN    QuantityForm   `json:"dN"`
	F2x   DistForm       `json:"f2x"`
	Draws string         `json:"draws"`
	Seed  string         `json:"seed"`
	// HeatNoise is the noise model of heating rates from heat content.
	HeatNoise string `json:"heat_noise,omitempty"`
	// Sweep adds the period sweep to a run.
	Sweep bool `json:"sweep"`
}

// Default typed inputs, used when no loaded series fits a role. They are
// placeholders for the user to replace, and say so in their names.
var (
	defaultTypedDT = DistForm{Kind: "normal", A: "1.0", B: "0.1"}
	defaultTypedDF = DistForm{Kind: "normal", A: "2.2", B: "0.3"}
	defaultTypedDN = DistForm{Kind: "normal", A: "0.6", B: "0.15"}
)

// DefaultF2xForm is the forcing of doubled CO2 as the form shows it by
// default: 3.93 W m-2 with 3.46 to 4.40 as its 5-95 % range (IPCC AR6,
// 3.93 +/- 0.47 W m-2, from memory), the engine's default (budget.DefaultF2x).
var DefaultF2xForm = DistForm{Kind: "normal90", A: "3.46", B: "4.40"}

// F2xSource names where the default F2x comes from.
const F2xSource = "IPCC AR6: 3.93 ± 0.47 W m-2, 5-95 % (from memory)"

// OceanFractionSource names where the default ocean share comes from.
const OceanFractionSource = "IPCC AR6: about 91 % of the heat gained by the climate system went into the ocean, 1971-2018 (from memory)"

// PreviewDraws is the number of draws behind the input previews.
const PreviewDraws = 20000

// isHeatUnit reports whether a series' unit reads as a heat content.
func isHeatUnit(s *series.Series) bool {
	_, err := budget.ParseHeatUnit(s.Unit)
	return err == nil
}

func isTemperatureUnit(u string) bool {
	switch strings.ToLower(strings.TrimSpace(u)) {
	case "k", "°c", "degc", "deg c", "c", "kelvin":
		return true
	}
	return false
}

func isFluxUnit(u string) bool {
	u = strings.ToLower(strings.Join(strings.Fields(u), " "))
	switch u {
	case "w m-2", "w/m2", "w m^-2", "w/m^2", "w m**-2", "wm-2":
		return true
	}
	return false
}

// pickSeries returns the ref of the series named name, else of the first
// series for which ok holds, else "".
func (w *Workspace) pickSeries(name string, ok func(*series.Series) bool) string {
	all := w.All()
	for _, s := range all {
		if s.Name == name && ok(s) {
			return ref(s)
		}
	}
	for _, s := range all {
		if ok(s) {
			return ref(s)
		}
	}
	return ""
}

// DefaultHeatSettings are the heating-rate panel's first settings: the
// demo's ocean_heat (else the first series with a heat-content unit) over
// its whole record, AR(1) noise, Earth's surface, and the ocean share of
// OceanFractionSource for the imbalance estimate.
//
// The window is the last 20 whole years of a record longer than 30 years: a
// heat-content record usually curves upward, and one straight line over
// its whole span says little about the present rate.
func (w *Workspace) DefaultHeatSettings() HeatSettings {
	heat := w.firstWithRole(RoleHeat, isHeatUnit)
	if heat == "" {
		heat = w.pickSeries("ocean_heat", isHeatUnit)
	}
	hs := HeatSettings{
		Series:    heat,
		HeatInput: HeatInput{Area: "earth", Noise: "ar1", OceanFraction: budget.OceanFractionAR6},
	}
	if s, err := w.Find(hs.Series); err == nil && s.Len() > 0 {
		first, last := s.WholeYears()
		if last-first+1 > 30 {
			hs.From, hs.To = strconv.Itoa(last-19), strconv.Itoa(last)
		}
	}
	return hs
}

// GuessForcing builds forcing settings from the series given the forcing
// role, else from the loaded series whose names and units say what they are: CO2 in ppm, CH4 and N2O in ppb, an aerosol
// optical depth (a name holding "aod"), the solar irradiance (a name
// holding "tsi" or "irradiance", in W m-2) and forcings already in W m-2
// (a name holding "erf" or "forcing"). It takes the file with the most
// such series and reports false when it finds none. The references are
// forcing's defaults: they cancel in the change between two periods
// except through the small overlap term of CH4 and N2O.
func (w *Workspace) GuessForcing() (ForcingSettings, bool) {
	var best ForcingSettings
	if given := w.roleForcing(); len(given) > 0 {
		// the series the user marked as forcing
		best.Components = given
		return best, true
	}
	for _, l := range w.Files {
		if l.Result == nil {
			continue
		}
		var fs ForcingSettings
		seen := map[string]bool{}
		for _, s := range l.Result.Series {
			k := forcingKind(s)
			if k == "" || (k != "erf" && seen[k]) {
				continue
			}
			seen[k] = true
			fs.Components = append(fs.Components, ForcingComponent{Series: ref(s), Name: s.Name, Kind: k})
		}
		if len(fs.Components) > len(best.Components) {
			best = fs
		}
	}
	return best, len(best.Components) > 0
}

func forcingKind(s *series.Series) string {
	n := strings.ToLower(s.Name)
	u := strings.ToLower(strings.TrimSpace(s.Unit))
	switch {
	case strings.Contains(n, "co2") && u == "ppm":
		return "co2"
	case strings.Contains(n, "ch4") && u == "ppb":
		return "ch4"
	case strings.Contains(n, "n2o") && u == "ppb":
		return "n2o"
	case strings.Contains(n, "aod"):
		return "aod"
	case (strings.Contains(n, "tsi") || strings.Contains(n, "irradiance")) && isFluxUnit(u):
		return "tsi"
	case (strings.Contains(n, "erf") || strings.Contains(n, "forcing")) && isFluxUnit(u):
		return "erf"
	}
	return ""
}

// ForcingSummary says in words what GuessForcing found: "co2 (co2), ...".
func ForcingSummary(fs ForcingSettings) string {
	var parts []string
	for _, c := range fs.Components {
		parts = append(parts, c.Name+" as "+c.Kind)
	}
	if len(parts) == 0 {
		return "no forcing components found among the loaded series"
	}
	return strings.Join(parts, ", ")
}

// DefaultBudgetForm is the energy-budget form for the loaded series: dT
// from surface_anomaly (else the first series in K), dF from the forcing
// GuessForcing builds (else a typed placeholder), dN from the heating rate
// of the heat-content series of DefaultHeatSettings with the ocean share
// 0.91 (else a typed placeholder), F2x as DefaultF2xForm, 100,000 draws,
// seed 1, and periods from DefaultPeriods.
func (w *Workspace) DefaultBudgetForm() BudgetForm {
	f := BudgetForm{F2x: DefaultF2xForm, Draws: strconv.Itoa(budget.DefaultDraws), Seed: "1", HeatNoise: "ar1"}
	if t := w.DefaultTemperature(); t != "" {
		f.DT = QuantityForm{Source: SourceSeries, Series: t, Sampling: budget.SamplingAR1, Typed: defaultTypedDT}
	} else {
		f.DT = QuantityForm{Name: "warming (typed: replace with yours)", Source: SourceTyped, Typed: defaultTypedDT}
	}
	if _, ok := w.GuessForcing(); ok {
		f.DF = []QuantityForm{{Name: "total forcing", Source: SourceForcing, Sampling: budget.SamplingNone, Typed: defaultTypedDF}}
	} else {
		f.DF = []QuantityForm{{Name: "forcing change (typed: replace with yours)", Source: SourceTyped, Typed: defaultTypedDF}}
	}
	if h := w.DefaultHeatSettings().Series; h != "" {
		f.DN = QuantityForm{Source: SourceHeat, Series: h, OceanFraction: numText(budget.OceanFractionAR6), Typed: defaultTypedDN}
	} else {
		f.DN = QuantityForm{Name: "imbalance change (typed: replace with yours)", Source: SourceTyped, Typed: defaultTypedDN}
	}
	f.Base, f.Final = w.DefaultPeriods(f)
	f.Sweep = f.hasSeries()
	return f
}

func (f BudgetForm) hasSeries() bool {
	for _, q := range append([]QuantityForm{f.DT, f.DN}, f.DF...) {
		if q.Source != SourceTyped {
			return true
		}
	}
	return false
}

// DefaultPeriods suggests the base and final periods for the form's
// series inputs: over the whole years they all cover, the first 20 years
// and the last 15 (a third of the span each when it is shorter than 45
// years). With no series input it gives 1950-1969 and 2011-2025, periods
// that only label typed inputs.
func (w *Workspace) DefaultPeriods(f BudgetForm) (base, final [2]string) {
	lo, hi := math.MinInt, math.MaxInt
	found := false
	use := func(s *series.Series) {
		if s == nil || s.Len() == 0 {
			return
		}
		a, b := s.WholeYears()
		lo, hi, found = max(lo, a), min(hi, b), true
	}
	for _, q := range append([]QuantityForm{f.DT, f.DN}, f.DF...) {
		switch q.Source {
		case SourceSeries, SourceHeat:
			if s, err := w.Find(q.Series); err == nil {
				use(s)
			}
		case SourceForcing:
			if fs, ok := w.GuessForcing(); ok {
				if r, err := w.Forcing(fs); err == nil {
					use(r.Total)
				}
			}
		case SourceModel:
			if n, err := w.ModelImbalance(q.Model); err == nil {
				use(n)
			}
		}
	}
	y := strconv.Itoa
	if !found || hi < lo {
		return [2]string{"1950", "1969"}, [2]string{"2011", "2025"}
	}
	n := hi - lo + 1
	bl, fl := 20, 15
	if n < 45 {
		bl, fl = max(n/3, 1), max(n/3, 1)
	}
	return [2]string{y(lo), y(lo + bl - 1)}, [2]string{y(hi - fl + 1), y(hi)}
}

// label names a quantity in errors: "dF (aerosol)".
func label(role, name string) string {
	if name == "" {
		return role
	}
	return role + " (" + name + ")"
}

// BudgetSettings reads the form into the settings of a sensitivity run
// (Workspace.Sensitivity). The error names the input and field.
func (w *Workspace) BudgetSettings(f BudgetForm) (SensitivitySettings, error) {
	s := SensitivitySettings{
		Base:  [2]string{strings.TrimSpace(f.Base[0]), strings.TrimSpace(f.Base[1])},
		Final: [2]string{strings.TrimSpace(f.Final[0]), strings.TrimSpace(f.Final[1])},
	}
	var err error
	if s.DT, err = w.budgetQuantity("dT", f.DT, f.HeatNoise); err != nil {
		return s, err
	}
	if len(f.DF) == 0 {
		return s, errors.New("dF: no forcing component: add one")
	}
	for _, q := range f.DF {
		bq, err := w.budgetQuantity("dF", q, f.HeatNoise)
		if err != nil {
			return s, err
		}
		s.DF = append(s.DF, bq)
	}
	if s.DN, err = w.budgetQuantity("dN", f.DN, f.HeatNoise); err != nil {
		return s, err
	}
	f2x, err := f.F2x.Dist()
	if err != nil {
		return s, fmt.Errorf("F2x: %w", err)
	}
	if !(f2x.Center() > 0) {
		return s, fmt.Errorf("F2x: central value %s W m-2: expected a positive forcing", numText(f2x.Center()))
	}
	s.F2x = &f2x
	n, err := strconv.Atoi(strings.TrimSpace(f.Draws))
	if err != nil || n < 10 || n > budget.MaxDraws {
		return s, fmt.Errorf("draws %q: expected a whole number from 10 to %d", f.Draws, budget.MaxDraws)
	}
	s.Draws = n
	if s.Seed, err = strconv.ParseUint(strings.TrimSpace(f.Seed), 10, 64); err != nil {
		return s, fmt.Errorf("seed %q: expected a whole number of 0 or more", f.Seed)
	}
	if f.Sweep {
		s.Sweep = &SweepSettings{}
	}
	return s, nil
}

func (w *Workspace) budgetQuantity(role string, q QuantityForm, heatNoise string) (BudgetQuantity, error) {
	lab := label(role, q.Name)
	out := BudgetQuantity{Name: strings.TrimSpace(q.Name)}
	switch q.Source {
	case SourceTyped:
		d, err := q.Typed.Dist()
		if err != nil {
			return out, fmt.Errorf("%s: %w", lab, err)
		}
		out.Typed = &d
	case SourceSeries, SourceHeat:
		if strings.TrimSpace(q.Series) == "" {
			return out, fmt.Errorf("%s: no series chosen", lab)
		}
		if _, err := w.Find(q.Series); err != nil {
			return out, fmt.Errorf("%s: %w", lab, err)
		}
		out.Series = q.Series
		if q.Source == SourceSeries {
			out.Sampling = q.Sampling
			break
		}
		h := &HeatInput{Noise: heatNoise}
		if t := strings.TrimSpace(q.OceanFraction); t != "" {
			v, err := strconv.ParseFloat(t, 64)
			if err != nil || !(v > 0 && v <= 1) {
				return out, fmt.Errorf("%s: ocean share %q: expected a number above 0 and at most 1, e.g. 0.91", lab, q.OceanFraction)
			}
			h.OceanFraction = v
		}
		out.Heat = h
	case SourceForcing:
		fs, ok := w.GuessForcing()
		if !ok {
			return out, fmt.Errorf("%s: no forcing components among the loaded series (CO2 in ppm, CH4 and N2O in ppb, aod, tsi, or a forcing in W m-2): choose a series or type a distribution", lab)
		}
		if _, err := w.Forcing(fs); err != nil {
			return out, fmt.Errorf("%s: building the forcing from %s: %w", lab, ForcingSummary(fs), err)
		}
		out.Forcing = &fs
		if out.Name == "" {
			out.Name = "total forcing"
		}
		out.Sampling = q.Sampling
		if out.Sampling == "" {
			out.Sampling = budget.SamplingNone
		}
	case SourceModel:
		n, err := w.ModelImbalance(q.Model)
		if err != nil {
			return out, fmt.Errorf("%s: the energy balance model: %w", lab, err)
		}
		var m RespondSettings
		if q.Model != nil {
			m = *q.Model
		} else {
			m = RespondSettings{Forcing: ForcingSettings{Components: w.ResponseDefaults().Components}}
		}
		m.Step, m.Fit, m.Windows = nil, nil, nil
		out.Model = &m
		if out.Name == "" {
			out.Name = n.Name
		}
		out.Sampling = budget.SamplingNone
	default:
		return out, fmt.Errorf("%s: source %q: expected typed, series, heat, forcing or model", lab, q.Source)
	}
	return out, nil
}

// --- heating rate ---------------------------------------------------------------

// HeatView is the heating-rate panel for one window: the result, the heat
// content with its trend, the finite-difference rate series and the table.
type HeatView struct {
	Result *budget.HeatResult `json:"result"`
	// ContentSVG draws the heat content in ZJ with its trend over the window.
	ContentSVG string `json:"-"`
	// RateSVG draws the finite-difference heating rate (W m-2) with the
	// trend rate and its interval over the window.
	RateSVG string `json:"-"`
	Table   Table  `json:"table"`
	// Caption says what the table's numbers are: window, n, noise, area.
	Caption  string   `json:"caption"`
	Warnings []string `json:"warnings"`
}

// HeatFigure computes the heating rate (Workspace.Heat) and builds its
// charts and table.
func (w *Workspace) HeatFigure(s HeatSettings) (*HeatView, error) {
	r, err := w.Heat(s)
	if err != nil {
		return nil, err
	}
	ser, err := w.Find(s.Series)
	if err != nil {
		return nil, err
	}
	v := &HeatView{Result: r, Warnings: append([]string{}, r.Warnings...)}
	lv := fmt.Sprintf("%g %%", 100*r.Level)

	// the content in ZJ, as the trend was fitted
	u := s.Unit
	if strings.TrimSpace(u) == "" {
		u = ser.Unit
	}
	hu, err := budget.ParseHeatUnit(u)
	if err != nil {
		return nil, fmt.Errorf("series %q: %w", ser.Name, err)
	}
	f := hu.Scale
	if hu.Kind == budget.UnitJM2 {
		f = hu.Scale * r.Contents / budget.JPerZJ
	}
	zj := make([]float64, ser.Len())
	for i, x := range ser.Values {
		zj[i] = x * f
	}
	tr := r.Trend
	x := []float64{tr.Start, tr.End}
	cc := chart.Lines{XLabel: "Year", YLabel: "Heat content (ZJ)",
		Title: fmt.Sprintf("%s and its trend %s to %s: %s ZJ per year", ser.Name, r.From, r.To, Fmt(r.ZJPerYear))}
	cc.Lines = append(cc.Lines,
		chart.Line{Name: ser.Name, X: ser.Times, Y: zj, Color: chart.Palette[4], Width: 1.25, Markers: ser.Resolution == series.Annual},
		chart.Line{Name: "trend " + r.From + " to " + r.To, X: x, Y: []float64{tr.At(x[0]), tr.At(x[1])}, Color: chart.Palette[5], Width: 2.5})
	v.ContentSVG = cc.SVG()

	// the finite-difference rate series with the trend rate and its interval
	areaText := r.Area.Source
	rc := chart.Lines{XLabel: "Year", YLabel: "Heating rate (W m-2)", YZero: true,
		Title: fmt.Sprintf("Heating rate of %s over %s: centred differences of ±%d steps", ser.Name, areaText, r.DiffHalfWidth)}
	if r.Rates != nil {
		rc.Lines = append(rc.Lines, chart.Line{Name: "centred differences", X: r.Rates.Times, Y: r.Rates.Values, Color: chart.Palette[1], Width: 1.25})
	}
	rc.Bands = append(rc.Bands, chart.Band{Name: "trend rate", X: x, Lo: []float64{r.CILowWPerM2, r.CILowWPerM2}, Hi: []float64{r.CIHighWPerM2, r.CIHighWPerM2}})
	rc.Lines = append(rc.Lines, chart.Line{Name: "trend rate", X: x, Y: []float64{r.RateWPerM2, r.RateWPerM2}, Color: chart.Palette[5], Width: 2.5})
	rc.Desc = fmt.Sprintf("Line chart of the heating rate of %s in W m-2 over %s, from centred differences; the thick line is the trend rate %s W m-2 over %s to %s and its shaded band the %s interval (%s to %s).",
		ser.Name, areaText, Fmt(r.RateWPerM2), r.From, r.To, lv, Fmt(r.CILowWPerM2), Fmt(r.CIHighWPerM2))
	v.RateSVG = rc.SVG()

	t := Table{Title: "Heating rate of " + ser.Name,
		Columns: []string{"quantity", "estimate", "standard error", lv + " low", lv + " high"}}
	t.Rows = append(t.Rows,
		[]string{"heat uptake (ZJ per year)", Fmt(r.ZJPerYear), Fmt(r.StderrZJPerYear), Fmt(r.CILowZJPerYear), Fmt(r.CIHighZJPerYear)},
		[]string{"heating rate (W m-2 over " + areaName(r.Area) + ")", Fmt(r.RateWPerM2), Fmt(r.StderrWPerM2), Fmt(r.CILowWPerM2), Fmt(r.CIHighWPerM2)})
	if r.ImbalanceWPerM2 != nil {
		t.Rows = append(t.Rows, []string{fmt.Sprintf("energy imbalance estimate (W m-2 over Earth's surface; ocean share %g)", r.OceanFraction),
			Fmt(*r.ImbalanceWPerM2), Fmt(*r.ImbalanceStderrWPerM2), Fmt(*r.ImbalanceCILowWPerM2), Fmt(*r.ImbalanceCIHighWPerM2)})
	}
	v.Table = t
	v.Caption = fmt.Sprintf("Trend of %s from %s to %s (%d values), noise %s, %s interval; area %s; 1 ZJ per year is %s W m-2 over it (365.25-day year).",
		ser.Name, r.From, r.To, r.N, noiseTitle(r.Noise), lv, r.Area.Source, Fmt(r.WPerM2PerZJPerYear))
	return v, nil
}

func areaName(a budget.Area) string {
	switch a.Name {
	case "earth":
		return "Earth's surface"
	case "ocean":
		return "the ocean"
	}
	return strconv.FormatFloat(a.M2, 'g', 4, 64) + " m2"
}

// --- histograms -----------------------------------------------------------------

// HistogramCap is the most values histValues rebuilds: a histogram of
// more draws is drawn from its bin counts divided by a whole factor, so
// that drawing stays quick in the page (the shape and the density are the
// same; the counts in the bars' labels are the divided ones).
const HistogramCap = 250000

// histValues turns an engine histogram back into values that the chart
// bins as the engine did: each bin's count at its centre, in ascending
// order. Up to HistogramCap draws it is exact, with the draws below and
// above the range just outside it and the unbounded ones as +Inf (so the
// chart's note counts them); above, every count is divided by the factor
// it returns and the draws outside the range are left out (histNote
// states them).
func histValues(h *budget.Histogram) ([]float64, int) {
	if h == nil {
		return nil, 1
	}
	k := 1
	if h.Total > HistogramCap {
		k = (h.Total + HistogramCap - 1) / HistogramCap
	}
	out := make([]float64, 0, min(h.Total, HistogramCap)+len(h.Counts))
	rep := func(v float64, n int) {
		if k > 1 {
			n = int(math.Round(float64(n) / float64(k)))
		}
		for range n {
			out = append(out, v)
		}
	}
	if k == 1 {
		rep(h.Lo-h.Width/2, h.Below)
	}
	for i, c := range h.Counts {
		rep(h.Lo+(float64(i)+0.5)*h.Width, c)
	}
	if k == 1 {
		rep(h.Hi()+h.Width/2, h.Above)
		rep(math.Inf(1), h.Unbounded)
	}
	return out, k
}

// histNote says what a histogram leaves out beyond the chart's own note:
// which of the draws it counts as not finite are unbounded, and, for more
// than HistogramCap draws, that the bars are thinned and which draws lie
// outside the drawn range. "" when there is nothing to add.
func histNote(name string, h *budget.Histogram) string {
	if h == nil {
		return ""
	}
	if _, k := histValues(&budget.Histogram{Total: h.Total}); k > 1 {
		var parts []string
		if h.Below > 0 {
			parts = append(parts, fmt.Sprintf("%d below %s", h.Below, Fmt(h.Lo)))
		}
		if h.Above > 0 {
			parts = append(parts, fmt.Sprintf("%d above %s", h.Above, Fmt(h.Hi())))
		}
		if h.Unbounded > 0 {
			parts = append(parts, fmt.Sprintf("%d unbounded", h.Unbounded))
		}
		out := fmt.Sprintf("The bars show the counts of the %d draws divided by %d.", h.Total, k)
		if len(parts) > 0 {
			out += fmt.Sprintf(" %s draws not drawn: %s.", name, strings.Join(parts, ", "))
		}
		return out
	}
	if h.Unbounded > 0 {
		return fmt.Sprintf("The %d %s draws the chart counts as not finite are unbounded (+∞).", h.Unbounded, name)
	}
	return ""
}

// histogramChart draws an engine histogram as a density.
func histogramChart(h *budget.Histogram, title, xlabel string, width, height int) chart.Histogram {
	vals, _ := histValues(h)
	c := chart.Histogram{Title: title, XLabel: xlabel, Width: width, Height: height, Density: true, Values: vals}
	if h != nil && len(h.Counts) > 0 {
		c.Bins = len(h.Counts)
		c.Range = &[2]float64{h.Lo, h.Hi()}
	}
	return c
}

// InputFigure is one input's preview: its distribution as drawn.
type InputFigure struct {
	Role   string  `json:"role"` // dT, dF, dN or F2x
	Unit   string  `json:"unit"`
	Center float64 `json:"center"`
	SD     float64 `json:"sd"`
	// SVG is the histogram; "" for an input without spread, whose Note
	// then gives its fixed value.
	SVG  string `json:"-"`
	Note string `json:"note,omitempty"`
}

func roleUnit(role string) string {
	if role == "dT" {
		return "K"
	}
	return "W m-2"
}

func roleTitle(role string) string {
	switch role {
	case "dT":
		return "dT, warming between the periods"
	case "dF":
		return "dF, forcing change"
	case "dN":
		return "dN, change in the imbalance"
	}
	return "F2x, forcing of doubled CO2"
}

func inputFigures(res *budget.SensitivityResult) []InputFigure {
	var out []InputFigure
	for _, in := range res.Inputs {
		u := roleUnit(in.Role)
		f := InputFigure{Role: in.Role, Unit: u, Center: in.Center, SD: in.SD}
		if !(in.SD > 0) {
			f.Note = fmt.Sprintf("%s is fixed at %s %s: no spread.", in.Role, Fmt(in.Center), u)
		} else {
			c := histogramChart(in.Histogram, roleTitle(in.Role), in.Role+" ("+u+")", 320, 200)
			c.Marks = []chart.Mark{{Name: "central", X: in.Center, Color: "#000000"}}
			c.Desc = fmt.Sprintf("Histogram of %d draws of %s in %s: central value %s, mean %s, SD %s.", res.Draws, in.Role, u, Fmt(in.Center), Fmt(in.Mean), Fmt(in.SD))
			f.SVG = c.SVG()
		}
		out = append(out, f)
	}
	return out
}

// inputsTable lists every part of every input as resolved: where it came
// from and its central value and SD, with each role's total when it has
// several parts.
func inputsTable(res *budget.SensitivityResult) Table {
	t := Table{Title: "Energy-budget inputs", Columns: []string{"input", "name", "source", "central", "SD", "unit"}}
	for _, in := range res.Inputs {
		u := roleUnit(in.Role)
		for _, p := range in.Parts {
			t.Rows = append(t.Rows, []string{in.Role, p.Name, p.Source, Fmt(p.Center), Fmt(p.SD), u})
		}
		if len(in.Parts) > 1 {
			t.Rows = append(t.Rows, []string{in.Role, "total", "sum of the parts, drawn independently", Fmt(in.Center), Fmt(in.SD), u})
		}
	}
	return t
}

// BudgetPreview is the preview of the energy-budget inputs: how each was
// resolved and its distribution from PreviewDraws draws.
type BudgetPreview struct {
	Inputs   Table         `json:"inputs"`
	Figures  []InputFigure `json:"figures"`
	Warnings []string      `json:"warnings"`
}

// BudgetPreviewFigure resolves the inputs and draws their distributions
// from a short Monte Carlo run (PreviewDraws draws, no sweep).
func (w *Workspace) BudgetPreviewFigure(s SensitivitySettings) (*BudgetPreview, error) {
	s.Draws, s.Sweep, s.Gregory = PreviewDraws, nil, nil
	rep, err := w.Sensitivity(s, context.Background(), nil)
	if err != nil {
		return nil, err
	}
	res := rep.Result
	p := &BudgetPreview{Inputs: inputsTable(res), Figures: inputFigures(res), Warnings: []string{}}
	for _, in := range res.Inputs {
		for _, part := range in.Parts {
			for _, wn := range part.Warnings {
				p.Warnings = append(p.Warnings, in.Role+": "+wn)
			}
		}
	}
	return p, nil
}

// --- the Monte Carlo result --------------------------------------------------------

// SensitivityView is the energy-budget result as the page shows it.
type SensitivityView struct {
	Report *SensitivityReport `json:"report"`
	// ECSSVG and TCRSVG are the histograms of the draws with the 5-95 %
	// and 17-83 % ranges as bars and the median and central estimate as
	// marks.
	ECSSVG string `json:"-"`
	TCRSVG string `json:"-"`
	// ECSNote and TCRNote say which draws the histograms leave out.
	ECSNote string `json:"ecs_note,omitempty"`
	TCRNote string `json:"tcr_note,omitempty"`
	// Table has ECS and TCR in rows: central, median, mean, percentiles.
	Table Table `json:"table"`
	// Nonpositive states the share of draws with dF - dN <= 0.
	Nonpositive string        `json:"nonpositive"`
	Inputs      Table         `json:"inputs"`
	Figures     []InputFigure `json:"input_figures"`
	// SweepSVG and Sweep are the period sweep (empty and nil without it).
	SweepSVG string `json:"-"`
	// SweepNote says where the sweep chart's axis was cut ("" if nowhere).
	SweepNote string   `json:"sweep_note,omitempty"`
	Sweep     *Table   `json:"sweep,omitempty"`
	Warnings  []string `json:"warnings"`
}

// SensitivityFigure runs the energy-budget Monte Carlo (and the sweep when
// asked) and builds the view. progress and ctx are as for Sensitivity.
func (w *Workspace) SensitivityFigure(s SensitivitySettings, ctx context.Context, progress func(done, total int)) (*SensitivityView, error) {
	rep, err := w.Sensitivity(s, ctx, progress)
	if err != nil {
		return nil, err
	}
	return SensitivityViewOf(rep, s.Base, s.Final), nil
}

// NonpositiveText is the sentence on the draws whose dF - dN <= 0.
func NonpositiveText(r *budget.SensitivityResult) string {
	if r.NonpositiveFraction == 0 {
		return fmt.Sprintf("None of the %d draws has dF − dN ≤ 0: every draw has a finite ECS.", r.Draws)
	}
	n := int(math.Round(r.NonpositiveFraction * float64(r.Draws)))
	return fmt.Sprintf("%s %% of the draws (%d of %d) have dF − dN ≤ 0: no finite equilibrium warming. They are kept as unbounded ECS, so every ECS percentile above the %s th is unbounded.",
		pct(r.NonpositiveFraction), n, r.Draws, pct(1-r.NonpositiveFraction))
}

func pct(f float64) string {
	v := 100 * f
	switch {
	case v == 0:
		return "0"
	case v < 0.01:
		return "< 0.01"
	}
	return strconv.FormatFloat(v, 'g', 3, 64)
}

// fmtK formats a sensitivity: "unbounded" for +Inf.
func fmtK(v float64) string {
	if math.IsInf(v, 1) {
		return "unbounded"
	}
	return Fmt(v)
}

// SensitivityTable is ECS and TCR in rows with their summaries.
func SensitivityTable(r *budget.SensitivityResult) Table {
	t := Table{Title: fmt.Sprintf("Energy-budget sensitivity, %d draws (seed %d)", r.Draws, r.Seed),
		Columns: []string{"quantity", "central estimate", "median", "mean", "5 %", "17 %", "83 %", "95 %", "unbounded draws (%)"}}
	for _, q := range []struct {
		name string
		s    budget.Summary
	}{{"ECS (K)", r.ECS}, {"TCR (K)", r.TCR}} {
		t.Rows = append(t.Rows, []string{q.name, fmtK(q.s.Central), fmtK(q.s.Median), fmtK(q.s.Mean),
			fmtK(q.s.P05), fmtK(q.s.P17), fmtK(q.s.P83), fmtK(q.s.P95), pct(q.s.UnboundedFraction)})
	}
	return t
}

// sensitivityHistogram draws ECS or TCR with its ranges and marks.
func sensitivityHistogram(name, long string, s budget.Summary, draws int) string {
	c := histogramChart(s.Histogram, fmt.Sprintf("%s: %d draws", long, draws), name+" (K)", 560, 300)
	hi := func(v float64) float64 {
		if math.IsInf(v, 1) && c.Range != nil {
			return c.Range[1] * 10 // drawn to the edge without an end cap
		}
		return v
	}
	c.Intervals = []chart.Interval{
		{Name: "5-95 %", Lo: s.P05, Hi: hi(s.P95), Color: "#0072B2"},
		{Name: "17-83 %", Lo: s.P17, Hi: hi(s.P83), Color: "#D55E00"},
	}
	c.Marks = []chart.Mark{{Name: "median", X: s.Median, Color: "#000000"}}
	if !math.IsInf(s.Central, 0) {
		c.Marks = append(c.Marks, chart.Mark{Name: "central estimate", X: s.Central, Dashed: true, Color: "#009E73"})
	}
	c.Desc = fmt.Sprintf("Histogram of %d draws of %s in K: median %s, central estimate %s, 17-83 %% range %s to %s, 5-95 %% range %s to %s; %s %% of draws unbounded.",
		draws, name, fmtK(s.Median), fmtK(s.Central), fmtK(s.P17), fmtK(s.P83), fmtK(s.P05), fmtK(s.P95), pct(s.UnboundedFraction))
	return c.SVG()
}

// SensitivityViewOf builds the view of a finished run; base and final are
// the periods it used (for the sweep chart's title).
func SensitivityViewOf(rep *SensitivityReport, base, final [2]string) *SensitivityView {
	r := rep.Result
	v := &SensitivityView{Report: rep, Table: SensitivityTable(r), Nonpositive: NonpositiveText(r),
		Inputs: inputsTable(r), Figures: inputFigures(r), Warnings: append([]string{}, r.Warnings...)}
	v.ECSSVG = sensitivityHistogram("ECS", "Equilibrium climate sensitivity", r.ECS, r.Draws)
	v.TCRSVG = sensitivityHistogram("TCR", "Transient climate response", r.TCR, r.Draws)
	v.ECSNote, v.TCRNote = histNote("ECS", r.ECS.Histogram), histNote("TCR", r.TCR.Histogram)
	if sw := rep.Sweep; sw != nil {
		v.SweepSVG, v.SweepNote = sweepChart(sw, final)
		t := SweepTable(sw)
		v.Sweep = &t
		for _, wn := range sw.Warnings {
			v.Warnings = append(v.Warnings, "period sweep: "+wn)
		}
	}
	return v
}

// SweepAxisMinK is the least top of the sweep chart's axis (K).
const SweepAxisMinK = 10

// sweepCap is where the sweep chart's axis stops: three times the median
// of the finite ECS medians, at least SweepAxisMinK. Early final periods,
// whose warming and forcing changes are small, give ECS ranges up to
// unbounded that would flatten everything else.
func sweepCap(sw *budget.SweepResult) float64 {
	var meds []float64
	for _, p := range sw.Points {
		if p.Error == "" && !math.IsInf(p.ECS.Median, 0) && !math.IsNaN(p.ECS.Median) {
			meds = append(meds, p.ECS.Median)
		}
	}
	c := float64(SweepAxisMinK)
	if len(meds) > 0 {
		c = math.Max(c, 3*budget.Quantiles(meds, 0.5)[0])
	}
	return c
}

// sweepChart draws ECS and TCR (median, 17-83 % and 5-95 % ranges)
// against the end year of the final period, with the chosen end marked.
// The axis stops at sweepCap: ranges beyond it (unbounded ones included)
// are cut at the top, medians beyond it leave a gap; note says so.
func sweepChart(sw *budget.SweepResult, final [2]string) (svg, note string) {
	n := len(sw.Points)
	x := make([]float64, n)
	var ecs, tcr [5][]float64 // p05, p17, median, p83, p95
	for k := range ecs {
		ecs[k], tcr[k] = make([]float64, n), make([]float64, n)
	}
	top := sweepCap(sw)
	cut := 0
	clip := func(v float64, median bool) float64 {
		switch {
		case math.IsNaN(v):
			return v
		case v > top || v < -top:
			cut++
			if median {
				return math.NaN()
			}
			return math.Max(-top, math.Min(top, v))
		}
		return v
	}
	for i, p := range sw.Points {
		x[i] = float64(p.EndYear)
		for k, pair := range [][2]float64{{p.ECS.P05, p.TCR.P05}, {p.ECS.P17, p.TCR.P17}, {p.ECS.Median, p.TCR.Median}, {p.ECS.P83, p.TCR.P83}, {p.ECS.P95, p.TCR.P95}} {
			if p.Error != "" {
				ecs[k][i], tcr[k][i] = math.NaN(), math.NaN()
				continue
			}
			ecs[k][i], tcr[k][i] = clip(pair[0], k == 2), clip(pair[1], k == 2)
		}
	}
	c := chart.Lines{XLabel: "End year of the final period", YLabel: "Sensitivity (K)", YZero: true,
		Title: fmt.Sprintf("ECS and TCR as the %d-year final period slides; base period %s", sw.FinalYears, sw.Base)}
	ecsC, tcrC := chart.Palette[5], chart.Palette[4]
	c.Bands = append(c.Bands,
		chart.Band{X: x, Lo: ecs[0], Hi: ecs[4], Color: ecsC, Opacity: 0.1},
		chart.Band{Name: "ECS 17-83 %", X: x, Lo: ecs[1], Hi: ecs[3], Color: ecsC, Opacity: 0.25},
		chart.Band{X: x, Lo: tcr[0], Hi: tcr[4], Color: tcrC, Opacity: 0.1},
		chart.Band{Name: "TCR 17-83 %", X: x, Lo: tcr[1], Hi: tcr[3], Color: tcrC, Opacity: 0.25})
	c.Lines = append(c.Lines,
		chart.Line{Name: "ECS median", X: x, Y: ecs[2], Color: ecsC, Width: 2, Markers: n < 40},
		chart.Line{Name: "TCR median", X: x, Y: tcr[2], Color: tcrC, Width: 2, Markers: n < 40})
	if end, err := strconv.Atoi(strings.TrimSpace(final[1])); err == nil && n > 0 && float64(end) >= x[0] && float64(end) <= x[n-1] {
		lo, hi := math.Inf(1), math.Inf(-1)
		for _, s := range [][]float64{ecs[0], ecs[4], tcr[0], tcr[4]} {
			for _, v := range s {
				if !math.IsNaN(v) {
					lo, hi = math.Min(lo, v), math.Max(hi, v)
				}
			}
		}
		if lo <= hi {
			c.Lines = append(c.Lines, chart.Line{Name: "chosen final period", X: []float64{float64(end), float64(end)}, Y: []float64{math.Min(lo, 0), hi}, Color: "#000000", Width: 1, Dashed: true})
		}
	}
	c.Desc = fmt.Sprintf("Line chart of the median ECS and TCR in K, with shaded 17-83 %% (darker) and 5-95 %% (lighter) ranges, for final periods of %d years ending %g to %g, base period %s, %d draws each.",
		sw.FinalYears, x[0], x[max(n-1, 0)], sw.Base, sw.Draws)
	if cut > 0 {
		note = fmt.Sprintf("The axis stops at ±%s K: ranges reaching beyond it (unbounded ones too) are cut at the edge, and medians beyond it leave a gap. The table has every value.", Fmt(top))
		c.Desc += " " + note
	}
	return c.SVG(), note
}

// SweepTable lists the sweep: one row per final period.
func SweepTable(sw *budget.SweepResult) Table {
	t := Table{Title: fmt.Sprintf("Period sweep: %d-year final periods, base period %s, %d draws each", sw.FinalYears, sw.Base, sw.Draws),
		Columns: []string{"end year", "final period", "ECS median (K)", "ECS 5 %", "ECS 95 %", "TCR median (K)", "TCR 5 %", "TCR 95 %",
			"dF − dN ≤ 0 (% of draws)", "dT central (K)", "dF central (W m-2)", "dN central (W m-2)", "error"}}
	for _, p := range sw.Points {
		if p.Error != "" {
			t.Rows = append(t.Rows, []string{strconv.Itoa(p.EndYear), p.Final.String(), "", "", "", "", "", "", "", "", "", "", p.Error})
			continue
		}
		t.Rows = append(t.Rows, []string{strconv.Itoa(p.EndYear), p.Final.String(), fmtK(p.ECS.Median), fmtK(p.ECS.P05), fmtK(p.ECS.P95),
			fmtK(p.TCR.Median), fmtK(p.TCR.P05), fmtK(p.TCR.P95), pct(p.NonpositiveFraction),
			Fmt(p.Central[0]), Fmt(p.Central[1]), Fmt(p.Central[2]), ""})
	}
	return t
}

// --- Gregory regression ----------------------------------------------------------

// GregoryView is the Gregory regression as the page shows it.
type GregoryView struct {
	Result  *budget.GregoryResult `json:"result"`
	Table   Table                 `json:"table"`
	Caption string                `json:"caption"`
}

// GregoryFigure regresses the imbalance N on temperature T (budget.Gregory)
// with F2x's central value from f2x (nil = the engine's default).
func (w *Workspace) GregoryFigure(g GregorySettings, f2x *budget.Dist) (*GregoryView, error) {
	if strings.TrimSpace(g.N) == "" && g.NData == nil {
		return nil, errors.New("Gregory regression: choose an imbalance series N in W m-2")
	}
	if strings.TrimSpace(g.T) == "" {
		return nil, errors.New("Gregory regression: choose a temperature series T")
	}
	nS := g.NData
	var err error
	if nS == nil {
		if nS, err = w.Find(g.N); err != nil {
			return nil, fmt.Errorf("Gregory regression, N: %w", err)
		}
	}
	tS, err := w.Find(g.T)
	if err != nil {
		return nil, fmt.Errorf("Gregory regression, T: %w", err)
	}
	r, err := budget.Gregory(nS, tS, budget.GregoryOptions{From: g.From, To: g.To, Noise: g.Noise, Level: g.Level, F2x: f2x})
	if err != nil {
		return nil, err
	}
	lv := fmt.Sprintf("%g %%", 100*r.Level)
	t := Table{Title: "Gregory regression of " + nS.Name + " on " + tS.Name,
		Columns: []string{"quantity", "estimate", "standard error", lv + " low", lv + " high"}}
	t.Rows = append(t.Rows,
		[]string{"forcing F, the intercept (W m-2)", Fmt(r.ForcingWPerM2), Fmt(r.ForcingStderrWPerM2), Fmt(r.ForcingCILowWPerM2), Fmt(r.ForcingCIHighWPerM2)},
		[]string{"feedback parameter λ, minus the slope (W m-2 K-1)", Fmt(r.LambdaWPerM2PerK), Fmt(r.LambdaStderrWPerM2PerK), Fmt(r.LambdaCILowWPerM2PerK), Fmt(r.LambdaCIHighWPerM2PerK)},
		[]string{fmt.Sprintf("ECS = F2x / λ with F2x %s W m-2 (K)", Fmt(r.F2xWPerM2)), fmtK(float64(r.ECS)), "", fmtK(float64(r.ECSCILow)), fmtK(float64(r.ECSCIHigh))},
		[]string{"equilibrium warming F / λ (K)", fmtK(float64(r.EquilibriumWarmingK)), "", "", ""})
	return &GregoryView{Result: r, Table: t,
		Caption: fmt.Sprintf("%d points from %s to %s; noise %s.", r.N, r.From, r.To, noiseTitle(r.Noise))}, nil
}

// ImbalanceCandidates lists the refs of loaded series that may be an
// imbalance N for the Gregory regression: series in W m-2 that are not
// forcing components by GuessForcing's reading (a solar irradiance or an
// aerosol forcing is not an imbalance).
func (w *Workspace) ImbalanceCandidates() []string {
	fs, _ := w.GuessForcing()
	used := map[string]bool{}
	for _, c := range fs.Components {
		used[c.Series] = true
	}
	var out []string
	for _, s := range w.All() {
		if isFluxUnit(s.Unit) && !used[ref(s)] && forcingKind(s) == "" {
			out = append(out, ref(s))
		}
	}
	return out
}

// DefaultTemperature is the ref of the temperature series the view starts
// from: the first series given the target role, else surface_anomaly,
// else the first series in K or °C ("" if none).
func (w *Workspace) DefaultTemperature() string {
	temp := func(s *series.Series) bool { return isTemperatureUnit(s.Unit) }
	if t := w.firstWithRole(RoleTarget, temp); t != "" {
		return t
	}
	return w.pickSeries("surface_anomaly", temp)
}

// BudgetSeriesDefault is the series a quantity switched to a series source
// starts from: for heat, the heat-content series of DefaultHeatSettings;
// for dT, DefaultTemperature; otherwise a series in W m-2 (an imbalance
// candidate for dN, any for dF); "" when none fits.
func (w *Workspace) BudgetSeriesDefault(role, source string) string {
	switch {
	case source == SourceHeat:
		return w.DefaultHeatSettings().Series
	case role == "dT":
		return w.DefaultTemperature()
	case role == "dN":
		if c := w.ImbalanceCandidates(); len(c) > 0 {
			return c[0]
		}
		return ""
	}
	return w.pickSeries("", func(s *series.Series) bool { return isFluxUnit(s.Unit) })
}
