package forcing

import (
	"fmt"
	"math"
	"sort"
	"strconv"
	"strings"

	"heatledger/core/series"
)

// Component kinds (the values of Component.Kind).
const (
	KindCO2 = "co2" // CO2 concentration, ppm
	KindCH4 = "ch4" // CH4 concentration, ppb
	KindN2O = "n2o" // N2O concentration, ppb
	KindAOD = "aod" // stratospheric aerosol optical depth, dimensionless
	KindTSI = "tsi" // total solar irradiance, W m-2
	KindERF = "erf" // a forcing already in W m-2, taken as ERF
)

// Kinds lists the component kinds in a fixed order.
var Kinds = []string{KindCO2, KindCH4, KindN2O, KindAOD, KindTSI, KindERF}

// Greenhouse-gas formulas (the values of Settings.Formula).
const (
	FormulaMyhre1998   = "myhre1998"   // Myhre et al. 1998 (default)
	FormulaEtminan2016 = "etminan2016" // Etminan et al. 2016 (coefficients from memory)
)

// Reference modes (the values of Component.Reference). The empty string
// means the kind's default: RefPreindustrial for the gases, RefFirst for
// aod, RefMean for tsi and zero (RefValue with ReferenceValue 0) for erf.
const (
	// RefPreindustrial: the pre-industrial concentration of Settings (gases
	// only).
	RefPreindustrial = "preindustrial"
	// RefFirst: the mean of the first year of the run's axis (the first 12
	// steps of a monthly axis, the first step of an annual one).
	RefFirst = "first"
	// RefMean: the mean over the whole run's axis (for tsi, so that the
	// reference does not sit at one phase of the solar cycle).
	RefMean = "mean"
	// RefValue: Component.ReferenceValue, in the series' own unit.
	RefValue = "value"
)

// Component is one data column and how it becomes forcing.
type Component struct {
	// Name labels the component in outputs (default: the series name).
	Name   string
	Kind   string
	Series *series.Series
	// Reference is one of the Ref* modes; empty means the kind's default.
	Reference string
	// ReferenceValue is the reference of RefValue, in the series' unit.
	ReferenceValue float64
	// Scale multiplies the component's forcing (0 is taken as 1: leave a
	// component out, or use a what-if run, to remove it).
	Scale float64
	// Efficacy weights the component in the forcing that drives a model
	// (Hansen et al. 2005: temperature response per unit forcing relative
	// to CO2); 0 is taken as 1.
	Efficacy float64
}

// Settings are the formula choices. Zero values mean the defaults.
type Settings struct {
	// Formula is FormulaMyhre1998 (default) or FormulaEtminan2016.
	Formula string `json:"formula"`
	// VolcanicWPerM2PerAOD is the aod factor (default -20, IPCC AR6; -25 as
	// in AR5 / Hansen et al. 2005).
	VolcanicWPerM2PerAOD float64 `json:"volcanic_w_m2_per_aod"`
	// Albedo is the planetary albedo of solar forcing (default 0.29).
	Albedo float64 `json:"albedo"`
	// Pre-industrial concentrations (defaults 278 ppm, 722 ppb, 270 ppb):
	// the RefPreindustrial references, and the other gas held fixed in the
	// Myhre et al. 1998 overlap term.
	CO2PreindustrialPPM float64 `json:"co2_preindustrial_ppm"`
	CH4PreindustrialPPB float64 `json:"ch4_preindustrial_ppb"`
	N2OPreindustrialPPB float64 `json:"n2o_preindustrial_ppb"`
}

// Normalized returns the settings with every zero value replaced by its
// default, or an error naming the setting that is out of range.
func (s Settings) Normalized() (Settings, error) {
	s.Formula = strings.ToLower(strings.TrimSpace(s.Formula))
	switch s.Formula {
	case "", "myhre", FormulaMyhre1998:
		s.Formula = FormulaMyhre1998
	case "etminan", FormulaEtminan2016:
		s.Formula = FormulaEtminan2016
	default:
		return s, fmt.Errorf("greenhouse-gas formula %q: expected %s or %s", s.Formula, FormulaMyhre1998, FormulaEtminan2016)
	}
	def := func(v *float64, d float64) {
		if *v == 0 {
			*v = d
		}
	}
	def(&s.VolcanicWPerM2PerAOD, DefaultVolcanicWPerM2PerAOD)
	def(&s.Albedo, DefaultAlbedo)
	def(&s.CO2PreindustrialPPM, DefaultCO2PreindustrialPPM)
	def(&s.CH4PreindustrialPPB, DefaultCH4PreindustrialPPB)
	def(&s.N2OPreindustrialPPB, DefaultN2OPreindustrialPPB)
	if !finite(s.VolcanicWPerM2PerAOD) {
		return s, fmt.Errorf("volcanic factor %v W m-2 per unit AOD: expected a finite number such as -20", s.VolcanicWPerM2PerAOD)
	}
	if !(s.Albedo >= 0 && s.Albedo < 1) {
		return s, fmt.Errorf("albedo %v: expected a value in [0, 1), e.g. 0.29", s.Albedo)
	}
	for _, p := range []struct {
		v    float64
		what string
	}{{s.CO2PreindustrialPPM, "pre-industrial CO2 (ppm)"}, {s.CH4PreindustrialPPB, "pre-industrial CH4 (ppb)"}, {s.N2OPreindustrialPPB, "pre-industrial N2O (ppb)"}} {
		if !(p.v > 0) || !finite(p.v) {
			return s, fmt.Errorf("%s %v: expected a positive concentration", p.what, p.v)
		}
	}
	return s, nil
}

// Output is one component's forcing on the run's axis.
type Output struct {
	Name   string `json:"name"`
	Kind   string `json:"kind"`
	Series string `json:"series"` // the input series' name
	Unit   string `json:"unit"`   // the input series' unit
	// Formula is the expression used, in words.
	Formula string `json:"formula"`
	// ReferenceMode is the Ref* mode used; Reference the value (series unit).
	ReferenceMode string  `json:"reference_mode"`
	Reference     float64 `json:"reference"`
	Scale         float64 `json:"scale"`
	Efficacy      float64 `json:"efficacy"`
	// FirstWPerM2 and LastWPerM2 are the scaled forcing at the first and
	// last steps of the axis; MeanWPerM2 its mean.
	FirstWPerM2 float64 `json:"first"`
	LastWPerM2  float64 `json:"last"`
	MeanWPerM2  float64 `json:"mean"`
	// Filled counts the steps inside the axis where the series had no
	// value and the input was interpolated linearly.
	Filled int `json:"filled"`
	// ERF is Scale times the forcing, W m-2, on the run's axis.
	ERF *series.Series `json:"-"`
}

// Result is the assembled forcing: each component and the totals on one
// regular axis (the span every component covers).
type Result struct {
	Resolution series.Resolution `json:"-"`
	First      int               `json:"-"`
	From       string            `json:"from"` // first step, YYYY-MM or YYYY
	To         string            `json:"to"`   // last step
	Settings   Settings          `json:"settings"`
	Components []Output          `json:"components"`
	// TotalLastWPerM2 is the total at the last step.
	TotalLastWPerM2 float64 `json:"total_last"`
	// Total is the sum of the components' ERF (W m-2); Effective the sum
	// of each ERF times its efficacy, the forcing that drives a model.
	Total     *series.Series `json:"-"`
	Effective *series.Series `json:"-"`
	Warnings  []string       `json:"warnings"`
}

// Len is the number of steps on the axis.
func (r *Result) Len() int { return len(r.Total.Values) }

// Times is the decimal-year time of each step.
func (r *Result) Times() []float64 { return r.Total.Times }

// Index returns the component with the given name, or -1.
func (r *Result) Index(name string) int {
	for i, c := range r.Components {
		if c.Name == name {
			return i
		}
	}
	return -1
}

// Build computes every component's forcing and the totals.
//
// Axis: every component must have the same resolution; the axis runs from
// the latest first value to the earliest last value of the components (the
// span all of them cover). Missing input values inside that span are filled
// by linear interpolation in time (common practice for short gaps), counted
// in Output.Filled and named in a warning.
//
// Formulas (F in W m-2, s the scale):
//   - co2, ch4, n2o: CO2Myhre1998, CH4Myhre1998, N2OMyhre1998 (the other
//     gas of the overlap term at its pre-industrial value), or
//     CO2Etminan2016, CH4Etminan2016, N2OEtminan2016 with the other gases
//     taken from the components of those kinds at the same step when
//     present, else at their pre-industrial values;
//   - aod: Volcanic(aod, ref, Settings.VolcanicWPerM2PerAOD);
//   - tsi: Solar(tsi, ref, Settings.Albedo);
//   - erf: the value less its reference (0 by default).
//
// Each component's ERF is s F; Total = sum ERF_k; Effective = sum e_k ERF_k
// with e_k the efficacy.
func Build(comps []Component, set Settings) (*Result, error) {
	set, err := set.Normalized()
	if err != nil {
		return nil, err
	}
	if len(comps) == 0 {
		return nil, fmt.Errorf("no forcing components: give at least one series with its kind (%s)", strings.Join(Kinds, ", "))
	}
	comps = append([]Component(nil), comps...) // names and kinds are normalised in the copy
	r := &Result{Settings: set, Warnings: []string{}}
	seen := map[string]bool{}
	lo, hi := math.MinInt, math.MaxInt
	var res series.Resolution
	for i := range comps {
		c := &comps[i]
		if c.Series == nil {
			return nil, fmt.Errorf("forcing component %d (%q): no series", i+1, c.Name)
		}
		if c.Name == "" {
			c.Name = c.Series.Name
		}
		c.Kind = strings.ToLower(strings.TrimSpace(c.Kind))
		if !validKind(c.Kind) {
			return nil, fmt.Errorf("forcing component %q: kind %q: expected one of %s", c.Name, c.Kind, strings.Join(Kinds, ", "))
		}
		if seen[c.Name] {
			return nil, fmt.Errorf("forcing component name %q is used twice: give each component its own name", c.Name)
		}
		seen[c.Name] = true
		if !finite(c.Scale) || !finite(c.Efficacy) || c.Efficacy < 0 {
			return nil, fmt.Errorf("forcing component %q: scale %v and efficacy %v: expected finite numbers, efficacy not negative", c.Name, c.Scale, c.Efficacy)
		}
		if res == 0 {
			res = c.Series.Resolution
		} else if c.Series.Resolution != res {
			return nil, fmt.Errorf("forcing component %q is %s but %q is %s: give every component the same resolution (annual means of the monthly ones)",
				c.Name, c.Series.Resolution, comps[0].Name, res)
		}
		f, l, ok := validSpan(c.Series)
		if !ok {
			return nil, fmt.Errorf("forcing component %q: series %q has no values", c.Name, c.Series.Name)
		}
		lo, hi = max(lo, f), min(hi, l)
	}
	if lo > hi {
		var spans []string
		for _, c := range comps {
			f, l, _ := validSpan(c.Series)
			spans = append(spans, fmt.Sprintf("%s %s to %s", c.Name, series.StepLabel(res, f), series.StepLabel(res, l)))
		}
		return nil, fmt.Errorf("the forcing components share no common span (%s)", strings.Join(spans, "; "))
	}
	n := hi - lo + 1
	r.Resolution, r.First = res, lo
	r.From, r.To = series.StepLabel(res, lo), series.StepLabel(res, hi)

	// Inputs on the common axis, gaps filled.
	raw := make([][]float64, len(comps))
	filled := make([]int, len(comps))
	for k, c := range comps {
		raw[k], filled[k] = onAxis(c.Series, lo, n)
		if filled[k] > 0 {
			r.Warnings = append(r.Warnings, fmt.Sprintf("forcing component %q: %d missing value(s) of %q between %s and %s filled by linear interpolation",
				c.Name, filled[k], c.Series.Name, r.From, r.To))
		}
		if err := checkInput(c, raw[k], &r.Warnings); err != nil {
			return nil, err
		}
	}
	if set.Formula == FormulaEtminan2016 {
		for k, c := range comps {
			if rg, ok := etminanRange[c.Kind]; ok {
				mn, mx := minMax(raw[k])
				if mn < rg[0] || mx > rg[1] {
					r.Warnings = append(r.Warnings, fmt.Sprintf("forcing component %q: values %.4g to %.4g lie outside the range %g to %g where the Etminan et al. 2016 fit holds (from memory)",
						c.Name, mn, mx, rg[0], rg[1]))
				}
			}
		}
	}
	companion := func(kind string) []float64 {
		for k, c := range comps {
			if c.Kind == kind {
				return raw[k]
			}
		}
		return nil
	}
	co2s, ch4s, n2os := companion(KindCO2), companion(KindCH4), companion(KindN2O)
	at := func(v []float64, i int, def float64) float64 {
		if v == nil {
			return def
		}
		return v[i]
	}

	total := make([]float64, n)
	eff := make([]float64, n)
	for k, c := range comps {
		out := Output{Name: c.Name, Kind: c.Kind, Series: c.Series.Name, Unit: c.Series.Unit, Scale: c.Scale, Efficacy: c.Efficacy, Filled: filled[k]}
		if out.Scale == 0 {
			out.Scale = 1
		}
		if out.Efficacy == 0 {
			out.Efficacy = 1
		}
		mode, ref, err := reference(c, raw[k], res, set)
		if err != nil {
			return nil, err
		}
		out.ReferenceMode, out.Reference = mode, ref
		v := raw[k]
		erf := make([]float64, n)
		switch c.Kind {
		case KindCO2:
			if set.Formula == FormulaEtminan2016 {
				out.Formula = "CO2, Etminan et al. 2016 (coefficients from memory)"
				for i := range erf {
					erf[i] = CO2Etminan2016(v[i], ref, at(n2os, i, set.N2OPreindustrialPPB))
				}
			} else {
				out.Formula = "5.35 ln(C/C0), Myhre et al. 1998"
				for i := range erf {
					erf[i] = CO2Myhre1998(v[i], ref)
				}
			}
		case KindCH4:
			if set.Formula == FormulaEtminan2016 {
				out.Formula = "CH4, Etminan et al. 2016 (coefficients from memory)"
				for i := range erf {
					erf[i] = CH4Etminan2016(v[i], ref, at(n2os, i, set.N2OPreindustrialPPB))
				}
			} else {
				out.Formula = "0.036 (sqrt M - sqrt M0) - [f(M,N0) - f(M0,N0)], Myhre et al. 1998"
				for i := range erf {
					erf[i] = CH4Myhre1998(v[i], ref, set.N2OPreindustrialPPB)
				}
			}
		case KindN2O:
			if set.Formula == FormulaEtminan2016 {
				out.Formula = "N2O, Etminan et al. 2016 (coefficients from memory)"
				for i := range erf {
					erf[i] = N2OEtminan2016(v[i], ref, at(co2s, i, set.CO2PreindustrialPPM), at(ch4s, i, set.CH4PreindustrialPPB))
				}
			} else {
				out.Formula = "0.12 (sqrt N - sqrt N0) - [f(M0,N) - f(M0,N0)], Myhre et al. 1998"
				for i := range erf {
					erf[i] = N2OMyhre1998(v[i], ref, set.CH4PreindustrialPPB)
				}
			}
		case KindAOD:
			out.Formula = fmt.Sprintf("%g W m-2 per unit AOD x (AOD - reference)", set.VolcanicWPerM2PerAOD)
			for i := range erf {
				erf[i] = Volcanic(v[i], ref, set.VolcanicWPerM2PerAOD)
			}
		case KindTSI:
			out.Formula = fmt.Sprintf("(TSI - reference) (1 - %g) / 4", set.Albedo)
			for i := range erf {
				erf[i] = Solar(v[i], ref, set.Albedo)
			}
		case KindERF:
			out.Formula = "taken as effective radiative forcing (value - reference)"
			for i := range erf {
				erf[i] = v[i] - ref
			}
		}
		var sum float64
		for i := range erf {
			erf[i] = erf[i]*out.Scale + 0 // + 0 turns -0 into 0
			if !finite(erf[i]) {
				return nil, fmt.Errorf("forcing component %q: the forcing at %s is not a finite number (value %v)", c.Name, series.StepLabel(res, lo+i), v[i])
			}
			total[i] += erf[i]
			eff[i] += out.Efficacy * erf[i]
			sum += erf[i]
		}
		out.FirstWPerM2, out.LastWPerM2, out.MeanWPerM2 = erf[0], erf[n-1], sum/float64(n)
		out.ERF = series.New(c.Name, "W m-2", res, lo, erf)
		r.Components = append(r.Components, out)
	}
	r.Total = series.New("total", "W m-2", res, lo, total)
	r.Effective = series.New("effective total", "W m-2", res, lo, eff)
	r.TotalLastWPerM2 = total[n-1]
	return r, nil
}

func validKind(k string) bool {
	for _, v := range Kinds {
		if v == k {
			return true
		}
	}
	return false
}

func finite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }

func validSpan(s *series.Series) (first, last int, ok bool) {
	i, j := 0, len(s.Values)-1
	for i <= j && math.IsNaN(s.Values[i]) {
		i++
	}
	for j >= i && math.IsNaN(s.Values[j]) {
		j--
	}
	if i > j {
		return 0, 0, false
	}
	return s.First + i, s.First + j, true
}

// onAxis returns the series' values on steps lo..lo+n-1 with interior gaps
// filled linearly (the ends are valid by construction of the axis).
func onAxis(s *series.Series, lo, n int) ([]float64, int) {
	v := make([]float64, n)
	for i := range v {
		v[i] = s.Values[lo+i-s.First]
	}
	filled := 0
	for i := 0; i < n; i++ {
		if !math.IsNaN(v[i]) {
			continue
		}
		j := i
		for math.IsNaN(v[j]) {
			j++
		}
		a, b := v[i-1], v[j]
		for k := i; k < j; k++ {
			w := float64(k-i+1) / float64(j-i+1)
			v[k] = a + w*(b-a)
			filled++
		}
		i = j
	}
	return v, filled
}

func minMax(v []float64) (lo, hi float64) {
	lo, hi = math.Inf(1), math.Inf(-1)
	for _, x := range v {
		lo, hi = math.Min(lo, x), math.Max(hi, x)
	}
	return
}

func median(v []float64) float64 {
	c := append([]float64(nil), v...)
	sort.Float64s(c)
	return c[len(c)/2]
}

// normUnit lower-cases a unit and drops spaces and the marks people put
// in powers, so "W m-2", "W/m2" and "W m^-2" compare.
func normUnit(u string) string {
	u = strings.ToLower(u)
	return strings.NewReplacer(" ", "", "^", "", "*", "", ".", "", "\u00b7", "", "\u207b", "-", "\u00b2", "2").Replace(u)
}

func isWPerM2(u string) bool {
	switch normUnit(u) {
	case "wm-2", "w/m2", "wm2", "w/m-2", "wpermetersquared", "wm**-2":
		return true
	}
	return false
}

// checkInput refuses values a formula cannot take and warns about units
// that do not match the kind.
func checkInput(c Component, v []float64, warns *[]string) error {
	unit := normUnit(c.Series.Unit)
	where := fmt.Sprintf("forcing component %q (series %q)", c.Name, c.Series.Name)
	mn, _ := minMax(v)
	switch c.Kind {
	case KindCO2:
		if unit == "ppb" || unit == "ppbv" {
			return fmt.Errorf("%s: kind co2 expects ppm but the unit is %q: divide by 1000", where, c.Series.Unit)
		}
		if mn <= 0 {
			return fmt.Errorf("%s: a CO2 concentration of %v ppm cannot be used (log of a non-positive ratio): expected positive ppm", where, mn)
		}
		if m := median(v); m < 100 || m > 10000 {
			*warns = append(*warns, fmt.Sprintf("%s: median %.4g is an unusual CO2 concentration in ppm", where, m))
		}
		if unit != "" && unit != "ppm" && unit != "ppmv" {
			*warns = append(*warns, fmt.Sprintf("%s: unit %q taken as ppm", where, c.Series.Unit))
		}
	case KindCH4, KindN2O:
		if unit == "ppm" || unit == "ppmv" {
			return fmt.Errorf("%s: kind %s expects ppb but the unit is %q: multiply by 1000", where, c.Kind, c.Series.Unit)
		}
		if mn <= 0 {
			return fmt.Errorf("%s: a concentration of %v ppb cannot be used (square root): expected positive ppb", where, mn)
		}
		if m := median(v); m < 50 {
			return fmt.Errorf("%s: median %.4g is far below any %s concentration in ppb: is the series in ppm? (multiply by 1000)", where, m, strings.ToUpper(c.Kind))
		}
		if unit != "" && unit != "ppb" && unit != "ppbv" {
			*warns = append(*warns, fmt.Sprintf("%s: unit %q taken as ppb", where, c.Series.Unit))
		}
	case KindAOD:
		if mn < 0 {
			*warns = append(*warns, fmt.Sprintf("%s: negative optical depth %.4g: is the series already an anomaly? it is used as given", where, mn))
		}
		if _, mx := minMax(v); mx > 5 {
			*warns = append(*warns, fmt.Sprintf("%s: optical depth up to %.4g: expected a dimensionless AOD well below 1", where, mx))
		}
	case KindTSI, KindERF:
		if unit != "" && !isWPerM2(c.Series.Unit) {
			*warns = append(*warns, fmt.Sprintf("%s: unit %q taken as W m-2", where, c.Series.Unit))
		}
	}
	return nil
}

// reference resolves a component's reference mode to a value.
func reference(c Component, v []float64, res series.Resolution, set Settings) (string, float64, error) {
	mode := strings.ToLower(strings.TrimSpace(c.Reference))
	if mode == "" {
		switch c.Kind {
		case KindCO2, KindCH4, KindN2O:
			mode = RefPreindustrial
		case KindAOD:
			mode = RefFirst
		case KindTSI:
			mode = RefMean
		default:
			return RefValue, 0, nil
		}
	}
	switch mode {
	case RefPreindustrial:
		switch c.Kind {
		case KindCO2:
			return mode, set.CO2PreindustrialPPM, nil
		case KindCH4:
			return mode, set.CH4PreindustrialPPB, nil
		case KindN2O:
			return mode, set.N2OPreindustrialPPB, nil
		}
		return "", 0, fmt.Errorf("forcing component %q: kind %s has no pre-industrial reference: use first, mean or a number", c.Name, c.Kind)
	case RefFirst:
		k := min(len(v), res.StepsPerYear())
		return mode, meanOf(v[:k]), nil
	case RefMean:
		return mode, meanOf(v), nil
	case RefValue:
		if !finite(c.ReferenceValue) {
			return "", 0, fmt.Errorf("forcing component %q: reference %v: expected a finite number", c.Name, c.ReferenceValue)
		}
		if (c.Kind == KindCO2 || c.Kind == KindCH4 || c.Kind == KindN2O) && !(c.ReferenceValue > 0) {
			return "", 0, fmt.Errorf("forcing component %q: reference concentration %v: expected a positive number", c.Name, c.ReferenceValue)
		}
		return mode, c.ReferenceValue, nil
	}
	return "", 0, fmt.Errorf("forcing component %q: reference %q: expected %s, %s, %s or a number", c.Name, c.Reference, RefPreindustrial, RefFirst, RefMean)
}

// meanOf is the mean by compensated (Neumaier) summation; a constant
// stretch has exactly its value as mean (so a forcing relative to it is
// exactly zero there).
func meanOf(v []float64) float64 {
	if lo, hi := minMax(v); lo == hi {
		return lo
	}
	var s, c float64
	for _, x := range v {
		t := s + x
		if math.Abs(s) >= math.Abs(x) {
			c += (s - t) + x
		} else {
			c += (x - t) + s
		}
		s = t
	}
	return (s + c) / float64(len(v))
}

// ParseReference reads a reference given as text: preindustrial, first,
// mean, or a number (mode RefValue).
func ParseReference(s string) (mode string, value float64, err error) {
	t := strings.ToLower(strings.TrimSpace(s))
	switch t {
	case "", RefPreindustrial, "pi", RefFirst, RefMean:
		if t == "pi" {
			t = RefPreindustrial
		}
		return t, 0, nil
	}
	v, perr := strconv.ParseFloat(t, 64)
	if perr != nil || !finite(v) {
		return "", 0, fmt.Errorf("reference %q: expected %s, %s, %s or a number", s, RefPreindustrial, RefFirst, RefMean)
	}
	return RefValue, v, nil
}

// Rescaled returns a copy of r in which the named components' forcing (and
// Scale) are multiplied by the given factors, with the totals rebuilt.
// Names not in r are an error.
func (r *Result) Rescaled(factors map[string]float64) (*Result, error) {
	for name, f := range factors {
		if r.Index(name) < 0 {
			return nil, fmt.Errorf("no forcing component named %q", name)
		}
		if !finite(f) {
			return nil, fmt.Errorf("forcing component %q: scale factor %v is not a finite number", name, f)
		}
	}
	c := *r
	c.Components = make([]Output, len(r.Components))
	c.Warnings = append([]string(nil), r.Warnings...)
	n := r.Len()
	total, eff := make([]float64, n), make([]float64, n)
	for k, o := range r.Components {
		if f, ok := factors[o.Name]; ok {
			v := make([]float64, n)
			var sum float64
			for i, x := range o.ERF.Values {
				v[i] = f * x
				sum += v[i]
			}
			o.ERF = series.New(o.Name, "W m-2", r.Resolution, r.First, v)
			o.Scale *= f
			o.FirstWPerM2, o.LastWPerM2, o.MeanWPerM2 = v[0], v[n-1], sum/float64(n)
		}
		for i, x := range o.ERF.Values {
			total[i] += x
			eff[i] += o.Efficacy * x
		}
		c.Components[k] = o
	}
	c.Total = series.New("total", "W m-2", r.Resolution, r.First, total)
	c.Effective = series.New("effective total", "W m-2", r.Resolution, r.First, eff)
	c.TotalLastWPerM2 = total[n-1]
	return &c, nil
}

// Without returns a copy of r without the named components (what-if
// forcing); at least one component must remain.
func (r *Result) Without(names ...string) (*Result, error) {
	drop := map[string]bool{}
	for _, n := range names {
		if r.Index(n) < 0 {
			return nil, fmt.Errorf("no forcing component named %q", n)
		}
		drop[n] = true
	}
	c := *r
	c.Components = nil
	n := r.Len()
	total, eff := make([]float64, n), make([]float64, n)
	for _, o := range r.Components {
		if drop[o.Name] {
			continue
		}
		for i, x := range o.ERF.Values {
			total[i] += x
			eff[i] += o.Efficacy * x
		}
		c.Components = append(c.Components, o)
	}
	if len(c.Components) == 0 {
		return nil, fmt.Errorf("removing %s leaves no forcing", strings.Join(names, ", "))
	}
	c.Total = series.New("total", "W m-2", r.Resolution, r.First, total)
	c.Effective = series.New("effective total", "W m-2", r.Resolution, r.First, eff)
	c.TotalLastWPerM2 = total[n-1]
	return &c, nil
}
