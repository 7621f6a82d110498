// Package budget holds Heatledger's energy-budget engines: heat content to
// heating rate (heat.go), energy-budget climate sensitivity by Monte Carlo
// (sensitivity.go), its dependence on the chosen final period (sweep.go),
// the Gregory regression of the imbalance on temperature (gregory.go), the
// input distributions (dist.go) and exact percentiles by selection
// (selectq.go).
//
// Time is the decimal year (monthly values at mid-month, annual values at
// mid-year); missing values are NaN. Units live in names: ZJ (1e21 J),
// WPerM2, ZJPerYear.
package budget

import (
	"errors"
	"fmt"
	"math"
	"strconv"
	"strings"

	"heatledger/core/series"
	"heatledger/core/trend"
)

// Physical constants and conventions.
const (
	// SecondsPerYear is a year of 365.25 days (the Julian year), the
	// convention behind "1 ZJ/yr = 0.0621 W m-2 over Earth's surface"
	// (../shared/CHECKS.md).
	SecondsPerYear = 365.25 * 86400
	// EarthAreaM2 is Earth's surface area, 5.10e14 m2 (../shared/CHECKS.md).
	EarthAreaM2 = 5.10e14
	// OceanAreaM2 is the area of the world ocean, about 3.61e14 m2
	// (about 71 % of the surface; from memory).
	OceanAreaM2 = 3.61e14
	// JPerZJ: one zettajoule is 1e21 J.
	JPerZJ = 1e21
	// OceanFractionAR6 is the share of the heat gained by the climate
	// system that went into the ocean, 0.91 over 1971-2018 (IPCC AR6 WG1;
	// from memory). Recent assessments give about 0.89 to 0.91.
	OceanFractionAR6 = 0.91
)

// Heat-content units (the values of HeatOptions.Unit after ParseHeatUnit).
const (
	UnitZJ  = "zj"   // zettajoules, 1e21 J
	UnitJ   = "j"    // joules
	UnitJM2 = "j_m2" // joules per square metre of a stated area
)

// HeatUnit is a parsed heat-content unit: Kind is UnitZJ, UnitJ or UnitJM2;
// Scale multiplies a value into ZJ (UnitZJ, UnitJ) or into J m-2 (UnitJM2).
type HeatUnit struct {
	Kind  string
	Scale float64
	Text  string // the unit as given
}

// ParseHeatUnit reads a heat-content unit: "zj", "ZJ", "1e21 J", "10^21 J"
// (zettajoules); "j", "J", "1e22 J", "10^22 J", "1e18 J" (joules times a
// power of ten); "j_m2", "J m-2", "J/m2", "J m^-2", "J/m^2" (joules per
// square metre, optionally scaled like "1e9 J m-2"). Case and spacing do
// not matter.
func ParseHeatUnit(u string) (HeatUnit, error) {
	orig := u
	s := strings.ToLower(strings.TrimSpace(u))
	s = strings.ReplaceAll(s, "×", "x")
	s = strings.TrimPrefix(s, "x")
	if s == "" {
		return HeatUnit{}, errors.New("no heat-content unit: expected ZJ, J or J m-2")
	}
	scale := 1.0
	// a leading power of ten: 1e22, 10^22, 10**22, 1e+22
	if i := strings.IndexAny(s, " j"); i > 0 {
		p := strings.TrimSpace(s[:i])
		rest := strings.TrimSpace(s[i:])
		if v, ok := powerOfTen(p); ok {
			scale = v
			s = rest
		}
	}
	s = strings.Join(strings.Fields(s), " ")
	switch s {
	case "zj", "zettajoule", "zettajoules":
		return HeatUnit{Kind: UnitZJ, Scale: scale, Text: orig}, nil
	case "j", "joule", "joules":
		return HeatUnit{Kind: UnitJ, Scale: scale / JPerZJ, Text: orig}, nil
	case "j_m2", "j m-2", "j/m2", "j m^-2", "j/m^2", "j m-²", "j/m²", "j m**-2", "j_m-2", "j per m2":
		return HeatUnit{Kind: UnitJM2, Scale: scale, Text: orig}, nil
	}
	return HeatUnit{}, fmt.Errorf("heat-content unit %q: expected ZJ, J (optionally scaled, e.g. 1e22 J) or J m-2", orig)
}

func powerOfTen(p string) (float64, bool) {
	var exp string
	switch {
	case strings.HasPrefix(p, "10^"):
		exp = p[3:]
	case strings.HasPrefix(p, "10**"):
		exp = p[4:]
	case strings.HasPrefix(p, "1e"):
		exp = p[2:]
	default:
		return 0, false
	}
	e, err := strconv.Atoi(strings.TrimPrefix(exp, "+"))
	if err != nil || e < -30 || e > 30 {
		return 0, false
	}
	return math.Pow(10, float64(e)), true
}

// Area is an explicit area the heating rate is spread over.
type Area struct {
	Name   string  `json:"name"`   // earth, ocean or custom
	M2     float64 `json:"m2"`     // square metres
	Source string  `json:"source"` // where the number comes from
}

// ParseArea reads "earth" (EarthAreaM2, the default for ""), "ocean"
// (OceanAreaM2) or a number of square metres (e.g. 3.61e14).
func ParseArea(s string) (Area, error) {
	t := strings.ToLower(strings.TrimSpace(s))
	switch t {
	case "", "earth", "globe", "global":
		return Area{Name: "earth", M2: EarthAreaM2, Source: "Earth's surface, 5.10e14 m2"}, nil
	case "ocean":
		return Area{Name: "ocean", M2: OceanAreaM2, Source: "the world ocean, 3.61e14 m2 (from memory)"}, nil
	}
	v, err := strconv.ParseFloat(t, 64)
	if err != nil || !(v > 0) || math.IsInf(v, 0) {
		return Area{}, fmt.Errorf("area %q: expected earth, ocean or a positive number of square metres (e.g. 3.61e14)", s)
	}
	return Area{Name: "custom", M2: v, Source: "given as " + strconv.FormatFloat(v, 'g', -1, 64) + " m2"}, nil
}

// ZJPerYearToWPerM2 converts a heating rate in ZJ per year into W m-2 over
// an area: W m-2 = rate 1e21 / (SecondsPerYear areaM2). Over Earth's
// surface (5.10e14 m2, 365.25-day year) 1 ZJ/yr is 0.0621 W m-2
// (../shared/CHECKS.md).
func ZJPerYearToWPerM2(zjPerYear, areaM2 float64) float64 {
	return zjPerYear * JPerZJ / (SecondsPerYear * areaM2)
}

// ChangeToWPerM2 is the mean heating rate of a heat gain of changeZJ over
// years years, in W m-2 over areaM2: changeZJ / years converted by
// ZJPerYearToWPerM2. The interval length is the difference of the
// endpoints' dates: "2006 to 2018" is 12 years, which is how IPCC AR6
// turns 152 ZJ over 2006-2018 into 0.79 W m-2 (13 years would give 0.73).
func ChangeToWPerM2(changeZJ, years, areaM2 float64) float64 {
	return ZJPerYearToWPerM2(changeZJ/years, areaM2)
}

// HeatOptions are the settings of a heating rate.
type HeatOptions struct {
	// Unit of the heat content: "zj", "j", "j_m2" or any text
	// ParseHeatUnit reads; empty means the series' own unit.
	Unit string
	// Area the rate is spread over; the zero value means Earth's surface.
	Area Area
	// ContentAreaM2 is, for a series in J m-2, the area the values are per
	// square metre of (e.g. the ocean's); zero means Area.M2.
	ContentAreaM2 float64
	// From and To bound the trend window (YYYY, YYYY-MM or a decimal
	// year, as series.WindowSpec; empty = the series' start or end).
	From, To string
	// Noise and Level are the trend engine's (trend.Options).
	Noise string
	Level float64
	// OceanFraction, when positive, is the share of the total heat uptake
	// the series holds (e.g. OceanFractionAR6 for an ocean heat content):
	// the rate divided by it estimates Earth's energy imbalance.
	OceanFraction float64
	// DiffHalfWidth is the half-width in steps k of the centred difference
	// behind the rate series; zero means 1.
	DiffHalfWidth int
}

// HeatResult is a heating rate over one window. The rate fields are the
// series' own heat gain spread over Area; the Imbalance fields (present
// when an ocean fraction was given) are the whole climate system's heat
// gain, rate / fraction, always per square metre of Earth's surface.
type HeatResult struct {
	Series   string  `json:"series"`
	Unit     string  `json:"unit"` // zj, j or j_m2 as interpreted
	From     string  `json:"from"`
	To       string  `json:"to"`
	N        int     `json:"n"`
	Noise    string  `json:"noise"`
	Level    float64 `json:"level"`
	Area     Area    `json:"area"`
	AreaM2   float64 `json:"area_m2"`
	Contents float64 `json:"content_area_m2,omitempty"` // j_m2 only

	ZJPerYear       float64 `json:"zj_per_year"`
	StderrZJPerYear float64 `json:"stderr_zj_per_year"`
	CILowZJPerYear  float64 `json:"ci_low_zj_per_year"`
	CIHighZJPerYear float64 `json:"ci_high_zj_per_year"`
	RateWPerM2      float64 `json:"rate_w_m2"`
	StderrWPerM2    float64 `json:"stderr_w_m2"`
	CILowWPerM2     float64 `json:"ci_low_w_m2"`
	CIHighWPerM2    float64 `json:"ci_high_w_m2"`

	OceanFraction         float64       `json:"ocean_fraction,omitempty"`
	ImbalanceWPerM2       *float64      `json:"imbalance_w_m2,omitempty"`
	ImbalanceStderrWPerM2 *float64      `json:"imbalance_stderr_w_m2,omitempty"`
	ImbalanceCILowWPerM2  *float64      `json:"imbalance_ci_low_w_m2,omitempty"`
	ImbalanceCIHighWPerM2 *float64      `json:"imbalance_ci_high_w_m2,omitempty"`
	DiffHalfWidth         int           `json:"diff_half_width"`
	Warnings              []string      `json:"warnings"`
	Trend                 *trend.Result `json:"trend"`

	// Rates is the finite-difference heating rate on the series' full
	// axis, W m-2 over Area (see RateSeries). Not in the JSON.
	Rates *series.Series `json:"-"`
	// WPerM2PerZJPerYear is the conversion used (1 ZJ/yr in W m-2 over Area).
	WPerM2PerZJPerYear float64 `json:"w_m2_per_zj_per_year"`
}

// Heat computes the heating rate of a heat-content series over a window:
// the least-squares trend of the heat content H (in ZJ) against time,
// dH/dt in ZJ/yr with its standard error and interval under the trend
// engine's noise model (trend.Window: white, ar1 after Santer et al. 2008,
// arma11 after Foster and Rahmstorf 2011, or arma11-ml), converted to
// W m-2 over the chosen area:
//
//	rate [W m-2] = (dH/dt [ZJ/yr]) 1e21 / (SecondsPerYear A),
//
// SecondsPerYear = 365.25 days, A = Earth's surface 5.10e14 m2 by default
// (../shared/CHECKS.md), the ocean's 3.61e14 m2 (from memory) or a number.
// A series in J m-2 is first multiplied by the area its values are per
// (ContentAreaM2, default A). With an ocean fraction f (e.g. 0.91, IPCC AR6,
// from memory) the imbalance estimate is rate_ZJ / f over Earth's surface,
// with the standard error and interval scaled by the same 1/f (f is taken
// as exact: its own uncertainty is not included, and a warning says so).
//
// The trend's slope is the rate at the window's centre for a steady rise;
// it is not the endpoint difference divided by the length (use
// ChangeToWPerM2 for that, as assessments quoting "X ZJ over Y1-Y2" do).
func Heat(s *series.Series, opt HeatOptions) (*HeatResult, error) {
	if s == nil {
		return nil, errors.New("no heat-content series given")
	}
	zj, hu, warn, err := heatInZJ(s, opt)
	if err != nil {
		return nil, err
	}
	area := opt.Area
	if area.M2 == 0 {
		area, _ = ParseArea("earth")
	}
	if !(area.M2 > 0) || math.IsInf(area.M2, 0) {
		return nil, fmt.Errorf("area %v m2: expected a positive number of square metres", area.M2)
	}
	if opt.OceanFraction != 0 && !(opt.OceanFraction > 0 && opt.OceanFraction <= 1) {
		return nil, fmt.Errorf("ocean fraction %v: expected a share of the total heat uptake between 0 and 1, e.g. 0.91", opt.OceanFraction)
	}
	if opt.DiffHalfWidth < 0 {
		return nil, fmt.Errorf("difference half-width %d: expected 1 or more steps", opt.DiffHalfWidth)
	}
	k := opt.DiffHalfWidth
	if k == 0 {
		k = 1
	}
	tr, err := trend.SeriesWindow(zj, opt.From, opt.To, trend.Options{Noise: opt.Noise, Level: opt.Level})
	if err != nil {
		return nil, err
	}
	conv := ZJPerYearToWPerM2(1, area.M2)
	slope := tr.SlopePerYear
	se := tr.StderrPerDecade / 10
	lo, hi := tr.CILowPerDecade/10, tr.CIHighPerDecade/10
	r := &HeatResult{
		Series: s.Name, Unit: hu.Kind, From: tr.From, To: tr.To, N: tr.N, Noise: tr.Noise, Level: tr.Level,
		Area: area, AreaM2: area.M2,
		ZJPerYear: slope, StderrZJPerYear: se, CILowZJPerYear: lo, CIHighZJPerYear: hi,
		RateWPerM2: slope * conv, StderrWPerM2: se * conv, CILowWPerM2: lo * conv, CIHighWPerM2: hi * conv,
		DiffHalfWidth: k, Trend: tr, WPerM2PerZJPerYear: conv,
		Warnings: append([]string{}, warn...),
	}
	if hu.Kind == UnitJM2 {
		r.Contents = contentArea(opt, area)
	}
	r.Warnings = append(r.Warnings, tr.Warnings...)
	if area.Name == "ocean" {
		r.Warnings = append(r.Warnings, "the rate is spread over the ocean's area (3.61e14 m2, from memory), not Earth's surface: it is not comparable with a global energy imbalance")
	}
	if f := opt.OceanFraction; f > 0 {
		ce := ZJPerYearToWPerM2(1, EarthAreaM2) / f
		v, sv, l, h := slope*ce, se*ce, lo*ce, hi*ce
		r.OceanFraction = f
		r.ImbalanceWPerM2, r.ImbalanceStderrWPerM2, r.ImbalanceCILowWPerM2, r.ImbalanceCIHighWPerM2 = &v, &sv, &l, &h
		r.Warnings = append(r.Warnings, fmt.Sprintf("the energy imbalance estimate divides the rate by the ocean's share of the heat uptake, %g, taken as exact (its own uncertainty is not included); it is per square metre of Earth's surface", f))
	}
	r.Rates = RateSeries(zj, k, area.M2)
	return r, nil
}

func contentArea(opt HeatOptions, area Area) float64 {
	if opt.ContentAreaM2 > 0 {
		return opt.ContentAreaM2
	}
	return area.M2
}

// heatInZJ converts the series' values into ZJ.
func heatInZJ(s *series.Series, opt HeatOptions) (*series.Series, HeatUnit, []string, error) {
	var warn []string
	var hu HeatUnit
	var err error
	if strings.TrimSpace(opt.Unit) != "" {
		hu, err = ParseHeatUnit(opt.Unit)
		if err != nil {
			return nil, hu, nil, err
		}
		if own, e2 := ParseHeatUnit(s.Unit); e2 == nil && (own.Kind != hu.Kind || own.Scale != hu.Scale) {
			warn = append(warn, fmt.Sprintf("series %q is labelled %q but is read as %q as the unit setting says", s.Name, s.Unit, opt.Unit))
		}
	} else {
		hu, err = ParseHeatUnit(s.Unit)
		if err != nil {
			if strings.TrimSpace(s.Unit) == "" {
				return nil, hu, nil, fmt.Errorf("series %q has no unit: say whether its values are ZJ, J or J m-2 (unit setting zj, j or j_m2)", s.Name)
			}
			return nil, hu, nil, fmt.Errorf("series %q: %v; set the unit (zj, j or j_m2)", s.Name, err)
		}
	}
	if opt.ContentAreaM2 < 0 || math.IsNaN(opt.ContentAreaM2) || math.IsInf(opt.ContentAreaM2, 0) {
		return nil, hu, nil, fmt.Errorf("content area %v m2: expected a positive number of square metres", opt.ContentAreaM2)
	}
	scale := hu.Scale
	if hu.Kind == UnitJM2 {
		area := opt.Area
		if area.M2 == 0 {
			area.M2 = EarthAreaM2
		}
		scale = hu.Scale * contentArea(opt, area) / JPerZJ
	} else if opt.ContentAreaM2 > 0 {
		warn = append(warn, "the content area applies only to a series in J m-2 and was ignored")
	}
	out := s.Clone()
	out.Unit = "ZJ"
	for i, v := range out.Values {
		out.Values[i] = v * scale
		if math.IsInf(out.Values[i], 0) {
			return nil, hu, nil, fmt.Errorf("series %q at %s: value %g overflows when converted to ZJ", s.Name, series.StepLabel(s.Resolution, s.First+i), v)
		}
	}
	return out, hu, warn, nil
}

// RateSeries is the finite-difference heating rate of a heat-content
// series h (in ZJ) for charts: the centred difference
//
//	rate_i = (H_{i+k} - H_{i-k}) / (t_{i+k} - t_{i-k}),
//
// in ZJ/yr, converted to W m-2 over areaM2 by ZJPerYearToWPerM2, on h's own
// axis. It is NaN within k steps of either end and where either neighbour
// is missing. With k = 1 on annual data this is the mean rate over the two
// years around step i; it is far noisier than the trend.
func RateSeries(h *series.Series, k int, areaM2 float64) *series.Series {
	if k < 1 {
		k = 1
	}
	conv := ZJPerYearToWPerM2(1, areaM2)
	v := make([]float64, len(h.Values))
	for i := range v {
		v[i] = math.NaN()
		if i-k < 0 || i+k >= len(v) {
			continue
		}
		a, b := h.Values[i-k], h.Values[i+k]
		if math.IsNaN(a) || math.IsNaN(b) {
			continue
		}
		v[i] = (b - a) / (h.Times[i+k] - h.Times[i-k]) * conv
	}
	out := series.New(h.Name+" heating rate", "W m-2", h.Resolution, h.First, v)
	out.Source = h.Source
	return out
}
