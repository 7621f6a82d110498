package brief

import (
	"fmt"
	"math"
	"strconv"
	"strings"

	"heatledger/core/analysis"
	"heatledger/core/budget"
	"heatledger/core/trend"
)

// References, cited by the short names the text uses (from memory: the
// journal details were written down without a library at hand).
var references = map[string]string{
	"Santer et al. 2008":        "Santer, B. D., et al. (2008). Consistency of modelled and observed temperature trends in the tropical troposphere. International Journal of Climatology 28, 1703-1722.",
	"Foster and Rahmstorf 2011": "Foster, G. and Rahmstorf, S. (2011). Global temperature evolution 1979-2010. Environmental Research Letters 6, 044022.",
	"Muggeo 2003":               "Muggeo, V. M. R. (2003). Estimating regression models with unknown break-points. Statistics in Medicine 22, 3055-3071.",
	"Bai and Perron 2003":       "Bai, J. and Perron, P. (2003). Computation and analysis of multiple structural change models. Journal of Applied Econometrics 18, 1-22.",
	"Theil 1950":                "Theil, H. (1950). A rank-invariant method of linear and polynomial regression analysis. Proceedings of the Royal Netherlands Academy of Sciences 53.",
	"Sen 1968":                  "Sen, P. K. (1968). Estimates of the regression coefficient based on Kendall's tau. Journal of the American Statistical Association 63, 1379-1389.",
	"Mann 1945":                 "Mann, H. B. (1945). Nonparametric tests against trend. Econometrica 13, 245-259.",
	"Kendall 1975":              "Kendall, M. G. (1975). Rank Correlation Methods, 4th edition. Griffin, London.",
	"Hamed and Rao 1998":        "Hamed, K. H. and Rao, A. R. (1998). A modified Mann-Kendall trend test for autocorrelated data. Journal of Hydrology 204, 182-196.",
	"Yue et al. 2002":           "Yue, S., Pilon, P., Phinney, B. and Cavadias, G. (2002). The influence of autocorrelation on the ability to detect trend in hydrological series. Hydrological Processes 16, 1807-1829.",
	"Myhre et al. 1998":         "Myhre, G., Highwood, E. J., Shine, K. P. and Stordal, F. (1998). New estimates of radiative forcing due to well mixed greenhouse gases. Geophysical Research Letters 25, 2715-2718.",
	"Etminan et al. 2016":       "Etminan, M., Myhre, G., Highwood, E. J. and Shine, K. P. (2016). Radiative forcing of carbon dioxide, methane, and nitrous oxide: a significant revision of the methane radiative forcing. Geophysical Research Letters 43, 12614-12623.",
	"Held et al. 2010":          "Held, I. M., et al. (2010). Probing the fast and slow components of global warming by returning abruptly to preindustrial forcing. Journal of Climate 23, 2418-2427.",
	"Geoffroy et al. 2013a":     "Geoffroy, O., et al. (2013). Transient climate response in a two-layer energy-balance model. Part I. Journal of Climate 26, 1841-1857.",
	"Otto et al. 2013":          "Otto, A., et al. (2013). Energy budget constraints on climate response. Nature Geoscience 6, 415-416.",
	"Gregory et al. 2004":       "Gregory, J. M., et al. (2004). A new method for diagnosing radiative forcing and climate sensitivity. Geophysical Research Letters 31, L03205.",
}

// Caveats, keyed by topic (the wording is ours; the 15-year rule of thumb
// is common practice).
var caveatText = map[string]string{
	"trend":    "A trend describes the record over the chosen window and is no forecast. Over windows shorter than about 15 years (common practice) year-to-year variability dominates it, and its interval is wide.",
	"choice":   "Windows chosen after looking at the data (a start in a warm or cold year) make a trend or a change look surer than it is; the trend grid shows how the answer moves with the window.",
	"adjust":   "Removing short-term factors is a statistical model fitted to this record, not a proof of cause: factors that share a trend with the target, or each other, trade their shares, and the lags are estimated.",
	"ebm":      "An energy balance model is a two-number caricature of the climate system: its fitted parameters depend on the forcing series given, and they do not make it a forecast.",
	"budget":   "Energy-budget sensitivity depends on the forcing series and on the base and final periods chosen; draws where the forcing less the imbalance is near zero or negative make the upper tail unbounded.",
	"forecast": "Heatledger makes no forecast: every number describes the data and periods given.",
}

var caveatOrder = []string{"trend", "choice", "adjust", "ebm", "budget", "forecast"}

// texts collects what the paragraphs cite and use.
type texts struct {
	w       *analysis.Workspace
	refs    map[string]bool
	caveats map[string]bool
	files   map[string]map[string]bool // file -> series names used
}

func (t *texts) cite(names ...string) string {
	for _, n := range names {
		t.refs[n] = true
	}
	return strings.Join(names, "; ")
}

func (t *texts) refList() []string {
	out := []string{}
	for _, k := range sortedKeys(t.refs) {
		if r, ok := references[k]; ok {
			out = append(out, r)
		}
	}
	return out
}

func (t *texts) caveatList() []string {
	out := []string{}
	if len(t.caveats) > 0 {
		t.caveats["forecast"] = true
	}
	for _, k := range caveatOrder {
		if t.caveats[k] {
			out = append(out, caveatText[k])
		}
	}
	return out
}

// use records a series reference as used.
func (t *texts) use(ref string) {
	ref = strings.TrimSpace(ref)
	if ref == "" {
		return
	}
	file, name := "", ref
	if s, err := t.w.Find(ref); err == nil {
		file, name = s.Source, s.Name
	}
	if t.files[file] == nil {
		t.files[file] = map[string]bool{}
	}
	t.files[file][name] = true
}

// uses records the series an analysis reads.
func (t *texts) uses(a analysis.Analysis) {
	switch s := a.Settings.(type) {
	case *analysis.TrendSettings:
		for _, r := range s.Series {
			t.use(r)
		}
	case *analysis.CompareSettings:
		t.use(s.Series)
	case *analysis.GridSettings:
		t.use(s.Series)
	case *analysis.BreaksSettings:
		t.use(s.Series)
	case *analysis.SenSettings:
		t.use(s.Series)
	case *analysis.AdjustSettings:
		t.use(s.Target)
		for _, d := range s.Drivers {
			t.use(d.Name)
		}
		t.use(s.TrendSeries)
	case *analysis.ForcingSettings:
		for _, c := range s.Components {
			t.use(c.Series)
		}
	case *analysis.RespondSettings:
		for _, c := range s.Forcing.Components {
			t.use(c.Series)
		}
		if s.Fit != nil {
			t.use(s.Fit.Target)
			t.use(s.Fit.Heat)
			for _, d := range s.Fit.Drivers {
				t.use(d.Name)
			}
		}
		t.use(s.Record)
	case *analysis.HeatSettings:
		t.use(s.Series)
	case *analysis.SensitivitySettings:
		for _, q := range append([]analysis.BudgetQuantity{s.DT, s.DN}, s.DF...) {
			t.use(q.Series)
			if q.Forcing != nil {
				for _, c := range q.Forcing.Components {
					t.use(c.Series)
				}
			}
			if q.Model != nil {
				for _, c := range q.Model.Forcing.Components {
					t.use(c.Series)
				}
			}
		}
	}
}

func (t *texts) dataLines(f *analysis.AnalysisFile) []string {
	out := []string{}
	for _, file := range sortedKeys(t.files) {
		names := sortedKeys(t.files[file])
		what := "series " + strings.Join(names, ", ")
		if file == "" {
			out = append(out, what)
			continue
		}
		size := ""
		for _, d := range f.Files {
			if d.Name == file {
				size = fmt.Sprintf(" (%d bytes, embedded in the analysis file)", len(d.Text))
			}
		}
		out = append(out, file+size+": "+what)
	}
	return out
}

// num formats v with d decimals ("n/a" when it is not finite).
func num(v float64, d int) string {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		if math.IsInf(v, 1) {
			return "unbounded"
		}
		return "n/a"
	}
	s := strconv.FormatFloat(v, 'f', d, 64)
	if strings.Trim(s, "-0.") == "" {
		s = strings.TrimPrefix(s, "-")
	}
	return s
}

// sig formats v with n significant digits.
func sig(v float64, n int) string {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return num(v, 0)
	}
	return strconv.FormatFloat(v, 'g', n, 64)
}

func pval(p float64) string {
	switch {
	case math.IsNaN(p):
		return "p n/a"
	case p < 0.001:
		return "p < 0.001"
	}
	return "p = " + num(p, 3)
}

func pct(level float64) string {
	if level == 0 {
		level = 0.95
	}
	return sig(level*100, 3) + " %"
}

func ptr(p *float64) float64 {
	if p == nil {
		return math.NaN()
	}
	return *p
}

// name shows a series reference in the text: its name, with its file in
// brackets when another file holds a series of that name.
func (t *texts) name(ref string) string {
	sr, err := t.w.Find(ref)
	if err != nil {
		return ref
	}
	n := 0
	for _, o := range t.w.All() {
		if o.Name == sr.Name {
			n++
		}
	}
	if n > 1 && sr.Source != "" {
		return sr.Name + " (" + sr.Source + ")"
	}
	return sr.Name
}

func (t *texts) names(refs []string) string {
	out := make([]string, len(refs))
	for i, r := range refs {
		out[i] = t.name(r)
	}
	return strings.Join(out, ", ")
}

// unit returns a series' unit ("units" when it has none).
func (t *texts) unit(ref string) string {
	if s, err := t.w.Find(ref); err == nil && s.Unit != "" {
		return s.Unit
	}
	return "units"
}

// noiseText says how a trend's standard error treats the residuals.
func (t *texts) noiseText(noise string) string {
	switch strings.ToLower(strings.TrimSpace(noise)) {
	case "white":
		return "ordinary least squares with independent (white-noise) residuals"
	case "", "ar1":
		return "ordinary least squares with the standard error widened for AR(1) residuals through the effective sample size (" + t.cite("Santer et al. 2008") + ")"
	case "arma11":
		return "ordinary least squares with the standard error widened for ARMA(1,1) residuals (" + t.cite("Foster and Rahmstorf 2011") + ")"
	case "arma11-ml":
		return "generalised least squares with ARMA(1,1) residuals fitted by exact maximum likelihood"
	}
	return noise + " residuals"
}

func window(from, to string) string {
	switch {
	case from == "" && to == "":
		return "the whole record"
	case from == "":
		return "the record's start to " + to
	case to == "":
		return from + " to the record's end"
	}
	return from + " to " + to
}

func slope(r *trend.Result, unit string, level float64) string {
	return fmt.Sprintf("%s ± %s %s per decade (%s interval %s to %s; n = %d, %s)", num(r.SlopePerDecade, 3), num(r.StderrPerDecade, 3), unit,
		pct(level), num(r.CILowPerDecade, 3), num(r.CIHighPerDecade, 3), r.N, pval(r.PValue))
}

// methods writes the methods paragraph of an analysis; v is its view
// (nil when it failed).
func (t *texts) methods(a analysis.Analysis, v any) string {
	head := label(a) + ". "
	switch s := a.Settings.(type) {
	case *analysis.TrendSettings:
		t.caveats["trend"] = true
		an := ""
		if s.Anomalies {
			an = " Monthly values were first made anomalies from each series' own mean seasonal cycle."
		}
		return head + fmt.Sprintf("The linear trend of %s over %s was fitted by %s; intervals at %s.%s",
			t.names(s.Series), window(s.From, s.To), t.noiseText(s.Noise), pct(s.Level), an)
	case *analysis.CompareSettings:
		t.caveats["trend"], t.caveats["choice"] = true, true
		return head + fmt.Sprintf("The trends of %s over %s and over %s were fitted by %s, their difference tested against its combined standard error, and a continuous broken-stick regression (%s) tested for a change of slope at the break between the windows; intervals at %s.",
			t.name(s.Series), window(s.WindowA[0], s.WindowA[1]), window(s.WindowB[0], s.WindowB[1]), t.noiseText(s.Noise), t.cite("Muggeo 2003"), pct(s.Level))
	case *analysis.GridSettings:
		t.caveats["trend"], t.caveats["choice"] = true, true
		step, min := s.Step, s.MinYears
		if step == "" {
			step = "year"
		}
		if min == 0 {
			min = 10
		}
		return head + fmt.Sprintf("The trend of %s was computed over every window of at least %s years, starts and ends stepping by one %s, each by %s; intervals at %s.",
			t.name(s.Series), sig(min, 4), step, t.noiseText(s.Noise), pct(s.Level))
	case *analysis.BreaksSettings:
		t.caveats["trend"], t.caveats["choice"] = true, true
		model := "slope (a continuous broken line)"
		if s.Model == "mean" {
			model = "mean (shifts in level)"
		}
		extra := ""
		if r, ok := v.(*analysis.BreaksView); ok && r.Result != nil {
			search := "an exhaustive search over break times for the continuous broken line (" + t.cite("Muggeo 2003") + ")"
			if r.Result.Model == "mean" {
				search = "dynamic programming over segment ends (" + t.cite("Bai and Perron 2003") + ")"
			}
			extra = fmt.Sprintf(" Up to %d breaks at least %s years apart were searched by %s; the number of breaks was chosen by BIC and confirmed by a Monte Carlo test with %d simulations under %s at alpha %s (seed %d); break intervals come from %d %s bootstrap replicates.",
				r.Result.MaxBreaks, sig(r.Result.MinYears, 4), search, r.Result.Sims, noiseName(r.Result.Noise), sig(r.Result.Alpha, 3), r.Result.Seed, r.Result.Boot, r.Result.BootMethod)
		}
		return head + fmt.Sprintf("Changes in the %s of %s over %s were searched for.%s", model, t.name(s.Series), window(s.From, s.To), extra)
	case *analysis.SenSettings:
		t.caveats["trend"] = true
		corr := "no correction for autocorrelation"
		switch s.Correction {
		case "hamed-rao":
			corr = "the variance corrected for autocorrelation (" + t.cite("Hamed and Rao 1998") + ")"
		case "prewhiten":
			corr = "the series prewhitened for lag-1 autocorrelation (" + t.cite("Yue et al. 2002") + ")"
		}
		return head + fmt.Sprintf("The Theil-Sen slope (%s) of %s over %s and the Mann-Kendall test (%s), with %s; intervals at %s.",
			t.cite("Theil 1950", "Sen 1968"), t.name(s.Series), window(s.From, s.To), t.cite("Mann 1945", "Kendall 1975"), corr, pct(s.Level))
	case *analysis.AdjustSettings:
		t.caveats["adjust"], t.caveats["trend"] = true, true
		var ds []string
		for _, d := range s.Drivers {
			lo, hi := 0, 12
			if d.MinLag != nil {
				lo = *d.MinLag
			}
			if d.MaxLag != nil {
				hi = *d.MaxLag
			} else if lo > hi {
				hi = lo
			}
			x := t.name(d.Name)
			if lo == hi {
				x += fmt.Sprintf(" (lag fixed at %d months", lo)
			} else {
				x += fmt.Sprintf(" (lag searched from %d to %d months", lo, hi)
			}
			if d.Smooth3 {
				x += ", three-month running mean"
			}
			if d.Detrend {
				x += ", detrended"
			}
			ds = append(ds, x+")")
		}
		tk := "a linear trend"
		switch s.Trend {
		case "none":
			tk = "no trend term"
		case "broken":
			tk = "a broken linear trend (breaks " + strings.Join(s.Breaks, ", ") + ")"
		case "series":
			tk = "the series " + t.name(s.TrendSeries) + " as the trend term"
		}
		found, cycle := "", "the annual cycle"
		if r, ok := v.(*analysis.DriversView); ok && r.Result != nil {
			out := analysis.AdjustOutput(r.Result)
			switch out.Harmonics {
			case 0:
				cycle = "no annual cycle"
			case 1:
				cycle = "the annual cycle (one harmonic)"
			default:
				cycle = fmt.Sprintf("the annual cycle (%d harmonics)", out.Harmonics)
			}
			var lags []string
			for _, d := range out.Drivers {
				lags = append(lags, fmt.Sprintf("%s %d months", d.Name, d.LagMonths))
			}
			found = fmt.Sprintf(" The lags found were: %s; %d months entered the fit (%d dropped for missing values).", strings.Join(lags, ", "), out.N, out.Dropped)
		}
		return head + fmt.Sprintf("%s over %s was regressed on %s, %s and the short-term factors %s, each lag chosen to minimise the residual sum of squares (%s); the adjusted series is the record less the factors' contributions. Standard errors allow for ARMA(1,1) residuals (%s); trends of the raw and adjusted series use %s at %s.%s",
			t.name(s.Target), window(s.From, s.To), tk, cycle, strings.Join(ds, ", "), t.cite("Foster and Rahmstorf 2011"), t.cite("Foster and Rahmstorf 2011"), noiseName(s.Noise), pct(s.Level), found)
	case *analysis.ForcingSettings:
		t.caveats["ebm"] = true
		return head + t.forcingText(*s)
	case *analysis.RespondSettings:
		t.caveats["ebm"] = true
		m := "a two-layer energy balance model (" + t.cite("Held et al. 2010", "Geoffroy et al. 2013a") + ")"
		if strings.EqualFold(strings.TrimSpace(s.Model.Model), "onebox") {
			m = "a one-box energy balance model"
		}
		if s.Model.Preset != "" {
			m += " starting from the parameter set " + s.Model.Preset
		}
		p := head + t.forcingText(s.Forcing) + " This forcing drove " + m + ", stepped with its exact exponential solution."
		if rv, ok := v.(*analysis.ResponseView); ok {
			p += modelText(rv.Response)
		}
		if s.Fit != nil {
			free := "the default free parameters"
			if len(s.Fit.Free) > 0 {
				free = strings.Join(s.Fit.Free, ", ")
			}
			p += fmt.Sprintf(" The model was fitted by least squares to %s over %s with %s free", t.name(s.Fit.Target), window(s.Fit.From, s.Fit.To), free)
			if s.Fit.Heat != "" {
				p += ", jointly with the heat record " + t.name(s.Fit.Heat)
			}
			if len(s.Fit.Drivers) > 0 {
				var ds []string
				for _, d := range s.Fit.Drivers {
					ds = append(ds, t.name(d.Name))
				}
				p += " and the short-term factors " + strings.Join(ds, ", ")
			}
			p += fmt.Sprintf("; standard errors are widened for ARMA(1,1) residuals (%s), intervals at %s.", t.cite("Foster and Rahmstorf 2011"), pct(s.Fit.Level))
		}
		return p
	case *analysis.HeatSettings:
		t.caveats["budget"] = true
		area := s.Area
		if hv, ok := v.(*analysis.HeatView); ok && hv.Result != nil {
			area = areaText(hv.Result)
		} else if area == "" {
			area = "the Earth's surface"
		}
		return head + fmt.Sprintf("The heating rate is the least-squares trend of %s over %s, fitted by %s, converted to W m-2 over %s; intervals at %s.",
			t.name(s.Series), window(s.From, s.To), t.noiseText(s.Noise), area, pct(s.Level))
	case *analysis.SensitivitySettings:
		t.caveats["budget"] = true
		periods := "the changes given directly as distributions"
		if s.Base[0] != "" || s.Base[1] != "" || s.Final[0] != "" || s.Final[1] != "" {
			periods = "the changes taken between the base period " + window(s.Base[0], s.Base[1]) + " and the final period " + window(s.Final[0], s.Final[1])
		}
		p := head + fmt.Sprintf("Energy-budget sensitivity (%s): ECS = F2x dT / (dF - dN) and TCR = F2x dT / dF, %s. ", t.cite("Otto et al. 2013"), periods)
		if r, ok := v.(*analysis.SensitivityView); ok && r.Report != nil && r.Report.Result != nil {
			res := r.Report.Result
			p += fmt.Sprintf("Their uncertainty comes from %d Monte Carlo draws (seed %d) of the inputs:", res.Draws, res.Seed)
			for _, in := range res.Inputs {
				u := "W m-2"
				if in.Role == "dT" {
					u = "K"
				}
				p += fmt.Sprintf(" %s %s ± %s %s;", in.Role, sig(in.Center, 3), sig(in.SD, 2), u)
			}
			p = strings.TrimSuffix(p, ";") + "."
			if s.Gregory != nil {
				p += " A Gregory regression (" + t.cite("Gregory et al. 2004") + ") of N on T was added."
			}
			if s.Sweep != nil {
				p += " A sweep moved the final period to show how the answer depends on it."
			}
		} else {
			p += fmt.Sprintf("Monte Carlo draws: %d (seed %d).", s.Draws, s.Seed)
		}
		return p
	}
	return head
}

func noiseName(n string) string {
	switch strings.ToLower(strings.TrimSpace(n)) {
	case "", "ar1":
		return "AR(1) noise"
	case "white":
		return "white noise"
	case "arma11":
		return "ARMA(1,1) noise"
	case "arma11-ml":
		return "ARMA(1,1) noise by maximum likelihood"
	}
	return n
}

func (t *texts) forcingText(s analysis.ForcingSettings) string {
	var cs []string
	ghg, volc, solar := false, false, false
	for _, c := range s.Components {
		x := t.name(c.Series) + " (" + kindText(c.Kind) + ")"
		if c.Scale != nil && *c.Scale != 1 {
			x += " scaled by " + sig(*c.Scale, 4)
		}
		if c.Efficacy != nil && *c.Efficacy != 1 {
			x += " with efficacy " + sig(*c.Efficacy, 3)
		}
		cs = append(cs, x)
		switch strings.ToLower(c.Kind) {
		case "co2", "ch4", "n2o":
			ghg = true
		case "aod":
			volc = true
		case "tsi":
			solar = true
		}
	}
	p := "Effective radiative forcing was assembled from " + strings.Join(cs, ", ") + "."
	if ghg {
		if f := strings.ToLower(strings.TrimSpace(s.Formula)); f == "etminan2016" || f == "etminan" {
			p += " Greenhouse gases use the formulas of " + t.cite("Etminan et al. 2016") + "."
		} else {
			p += " Greenhouse gases use the formulas of " + t.cite("Myhre et al. 1998") + " with the overlap term."
		}
	}
	if volc {
		f := -20.0
		if s.VolcanicWPerM2PerAOD != nil {
			f = *s.VolcanicWPerM2PerAOD
		}
		p += " Aerosol optical depth is converted at " + sig(f, 4) + " W m-2 per unit."
	}
	if solar {
		a := 0.29
		if s.Albedo != nil {
			a = *s.Albedo
		}
		p += " Solar forcing is the irradiance change times (1 - albedo)/4 with albedo " + sig(a, 3) + "."
	}
	return p
}

// kindText says what a forcing component's series holds.
func kindText(kind string) string {
	switch strings.ToLower(strings.TrimSpace(kind)) {
	case "co2":
		return "CO2 concentration"
	case "ch4":
		return "CH4 concentration"
	case "n2o":
		return "N2O concentration"
	case "aod":
		return "stratospheric aerosol optical depth"
	case "tsi":
		return "total solar irradiance"
	case "erf":
		return "a forcing in W m-2"
	}
	return kind
}

// modelText states a model run's parameters and spin-up.
func modelText(r *analysis.Response) string {
	if r == nil {
		return ""
	}
	p := r.Params
	out := fmt.Sprintf(" Its parameters: feedback parameter %s W m-2 K-1, upper-layer heat capacity %s W yr m-2 K-1", sig(p.LambdaWPerM2K, 3), sig(p.CWYrPerM2K, 3))
	if !strings.EqualFold(r.Model, "onebox") {
		out += fmt.Sprintf(", deep-ocean heat exchange %s W m-2 K-1, deep-ocean heat capacity %s W yr m-2 K-1, efficacy of ocean heat uptake %s", sig(p.GammaWPerM2K, 3), sig(p.C0WYrPerM2K, 3), sig(p.Efficacy, 3))
	}
	out += fmt.Sprintf(", forcing of doubled CO2 %s W m-2.", sig(p.F2xWPerM2, 3))
	if r.Run != nil && r.Run.SpinupYears > 0 {
		out += fmt.Sprintf(" It was spun up over %s years from %s.", sig(r.Run.SpinupYears, 4), sig(r.Run.SpinupFromYear, 5))
	}
	return out
}

func modelName(m string) string {
	if strings.EqualFold(m, "onebox") {
		return "one-box"
	}
	return "two-layer"
}

// results writes the results paragraph of an analysis.
func (t *texts) results(a analysis.Analysis, v any) string {
	head := label(a) + ": "
	switch x := v.(type) {
	case *analysis.TrendView:
		var parts []string
		for _, r := range x.Results {
			parts = append(parts, fmt.Sprintf("%s %s to %s: %s", r.Series, r.From, r.To, slope(r, t.unit(r.Series), r.Level)))
		}
		return head + strings.Join(parts, "; ") + "."
	case *analysis.CompareView:
		c := x.Result
		s := a.Settings.(*analysis.CompareSettings)
		u := t.unit(s.Series)
		p := head
		for i, r := range c.Windows {
			p += fmt.Sprintf("window %c (%s to %s) %s; ", 'A'+i, r.From, r.To, slope(r, u, r.Level))
		}
		p += fmt.Sprintf("difference B - A %s ± %s %s per decade (%s)", num(c.DifferencePerDecade, 3), num(ptr(c.StderrPerDecade), 3), u, pval(ptr(c.PValue)))
		if b := c.BrokenStick; b != nil {
			p += fmt.Sprintf("; broken stick at %s: slope change %s ± %s %s per decade (%s)", num(b.Break, 2), num(b.SlopeChangePerDecade, 3), num(b.StderrPerDecade, 3), u, pval(b.PValue))
		}
		return p + "."
	case *analysis.GridView:
		return head + x.Summary
	case *analysis.BreaksView:
		r := x.Result
		if r.Selected == 0 {
			return head + fmt.Sprintf("no change point was selected (n = %d).", r.N)
		}
		var bs, segs []string
		u := t.unit(a.Settings.(*analysis.BreaksSettings).Series)
		for _, b := range r.Breaks {
			bs = append(bs, fmt.Sprintf("%s (%s interval %s to %s)", num(b.Time, 2), pct(r.Level), num(b.CILow, 2), num(b.CIHigh, 2)))
		}
		for _, s := range r.Segments {
			if s.Mean != nil {
				segs = append(segs, fmt.Sprintf("%s to %s: mean %s %s", num(s.From, 2), num(s.To, 2), num(*s.Mean, 3), u))
			} else {
				segs = append(segs, fmt.Sprintf("%s to %s: %s %s per decade", num(s.From, 2), num(s.To, 2), num(s.SlopePerDecade, 3), u))
			}
		}
		return head + fmt.Sprintf("%d change point(s) selected, at %s; segments %s.", r.Selected, strings.Join(bs, ", "), strings.Join(segs, "; "))
	case *analysis.SenView:
		r, _ := x.Result.(*trend.SenResult)
		if r == nil {
			return head + "no result."
		}
		s := a.Settings.(*analysis.SenSettings)
		return head + fmt.Sprintf("Theil-Sen slope %s %s per decade (%s interval %s to %s); Mann-Kendall tau %s, %s (n = %d).",
			num(r.SenSlopePerDecade, 3), t.unit(s.Series), pct(r.Level), num(r.CILowPerDecade, 3), num(r.CIHighPerDecade, 3), num(r.Tau, 3), pval(r.PValue), r.N)
	case *analysis.DriversView:
		out := analysis.AdjustOutput(x.Result)
		u := t.unit(out.Target)
		var ds []string
		for _, d := range out.Drivers {
			ds = append(ds, fmt.Sprintf("%s %s ± %s at lag %d", d.Name, sig(d.Coefficient, 3), sig(d.StderrARMA11, 2), d.LagMonths))
		}
		p := head + fmt.Sprintf("coefficients %s (ARMA(1,1) standard errors); R² %s.", strings.Join(ds, ", "), num(out.R2, 3))
		if out.RawTrend != nil && out.AdjustedTrend != nil {
			p += fmt.Sprintf(" The raw trend %s; adjusted %s.", slope(out.RawTrend, u, out.RawTrend.Level), slope(out.AdjustedTrend, u, out.AdjustedTrend.Level))
		}
		return p
	case *analysis.ForcingView:
		return head + fmt.Sprintf("total forcing %s W m-2 at the end of %s to %s.", num(x.Result.TotalLast, 2), x.Result.From, x.Result.To)
	case *analysis.ResponseFitView:
		r := x.Response
		p := head
		if r.Fit != nil {
			var es []string
			for _, e := range r.Fit.Estimates {
				n := e.Name
				if e.Component != "" {
					n += " " + e.Component
				}
				es = append(es, fmt.Sprintf("%s %s ± %s", n, sig(e.Value, 3), sig(e.StdErr, 2)))
			}
			out := analysis.RespondOutput(r)
			p += "fitted " + strings.Join(es, ", ") + fmt.Sprintf("; implied ECS %s K and TCR %s K", num(out.Fit.ECS.Value, 2), num(out.Fit.TCR.Value, 2))
			if out.Fit.ECS.Low != nil && out.Fit.ECS.High != nil {
				p += fmt.Sprintf(" (ECS %s interval %s to %s K)", pct(out.Fit.Level), num(*out.Fit.ECS.Low, 2), num(*out.Fit.ECS.High, 2))
			}
			p += fmt.Sprintf("; R² %s, RMSE %s K.", num(out.Fit.R2, 3), sig(out.Fit.RMSE, 3))
			p += strings.Replace(modelText(r), " Its parameters:", " The fitted run's parameters (fitted and fixed):", 1)
		}
		return p
	case *analysis.ResponseView:
		r := x.Response
		p := head + fmt.Sprintf("the %s model has ECS %s K and TCR %s K (from its parameters).", modelName(r.Model), num(r.Derived.ECSK, 2), num(r.Derived.TCRK, 2))
		for _, at := range r.Attribution {
			var cs []string
			for _, c := range at.Components {
				cs = append(cs, fmt.Sprintf("%s %s K", c.Name, num(c.ChangeK, 2)))
			}
			p += fmt.Sprintf(" From %s to %s the model warms by %s K: %s.", at.From, at.To, num(at.Total.ChangeK, 2), strings.Join(cs, ", "))
		}
		return p
	case *analysis.HeatView:
		r := x.Result
		return head + fmt.Sprintf("the heat content of %s changed at %s ± %s ZJ per year over %s to %s, i.e. %s W m-2 (%s interval %s to %s) over %s.",
			r.Series, num(r.ZJPerYear, 2), num(r.StderrZJPerYear, 2), r.From, r.To, num(r.RateWPerM2, 3), pct(r.Level), num(r.CILowWPerM2, 3), num(r.CIHighWPerM2, 3), areaText(r))
	case *analysis.SensitivityView:
		r := x.Report.Result
		p := head + fmt.Sprintf("ECS median %s K (5-95 %%: %s to %s K; 17-83 %%: %s to %s K), central estimate %s K; TCR median %s K (5-95 %%: %s to %s K). %s",
			num(r.ECS.Median, 2), num(r.ECS.P05, 2), num(r.ECS.P95, 2), num(r.ECS.P17, 2), num(r.ECS.P83, 2), num(r.ECS.Central, 2),
			num(r.TCR.Median, 2), num(r.TCR.P05, 2), num(r.TCR.P95, 2), x.Nonpositive)
		if g := x.Report.Gregory; g != nil {
			p += " " + gregoryText(g)
		}
		return strings.TrimSpace(p)
	}
	return head + "done."
}

func areaText(r *budget.HeatResult) string {
	m2 := strconv.FormatFloat(r.AreaM2, 'e', 2, 64)
	switch r.Area.Name {
	case "earth":
		return "the Earth's surface (" + m2 + " m2)"
	case "ocean":
		return "the world ocean (" + m2 + " m2)"
	}
	return "an area of " + m2 + " m2"
}

func gregoryText(g *budget.GregoryResult) string {
	return fmt.Sprintf("The Gregory regression over %s to %s gives a feedback parameter of %s ± %s W m-2 K-1 (n = %d).", g.From, g.To, num(g.LambdaWPerM2PerK, 2), num(g.LambdaStderrWPerM2PerK, 2), g.N)
}
