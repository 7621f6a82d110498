package analysis

import (
	"fmt"
	"math"
	"strconv"
	"strings"

	"heatledger/core/chart"
	"heatledger/core/ebm"
	"heatledger/core/forcing"
	"heatledger/core/series"
	"heatledger/core/trend"
)

// ForcingKindGuess guesses how a series becomes forcing from its name and
// unit: tsi for an irradiance in W m-2 (a name holding tsi, irradiance or
// solar, and not erf or forcing), erf for any other series in W m-2, co2
// for a concentration in ppm, ch4 or n2o for one in ppb whose name says
// which gas, aod for a name holding aod or "optical depth", and co2, ch4 or
// n2o for a name holding the gas when the unit is missing. "" when nothing
// fits (a temperature, a heat content, an index).
func ForcingKindGuess(name, unit string) string {
	n := strings.ToLower(name)
	u := strings.ToLower(strings.Join(strings.Fields(unit), " "))
	has := func(words ...string) bool {
		for _, w := range words {
			if strings.Contains(n, w) {
				return true
			}
		}
		return false
	}
	switch {
	case respFluxUnit(u):
		if has("tsi", "irradiance") || (has("solar") && !has("erf", "forcing")) {
			return forcing.KindTSI
		}
		return forcing.KindERF
	case u == "ppm":
		if has("ch4", "methane", "n2o", "nitrous") {
			return ""
		}
		return forcing.KindCO2
	case u == "ppb":
		switch {
		case has("ch4", "methane"):
			return forcing.KindCH4
		case has("n2o", "nitrous"):
			return forcing.KindN2O
		}
		return ""
	case has("aod", "optical depth", "optical_depth"):
		return forcing.KindAOD
	case u != "" && u != "1":
		return ""
	case has("co2", "carbon dioxide"):
		return forcing.KindCO2
	case has("ch4", "methane"):
		return forcing.KindCH4
	case has("n2o", "nitrous"):
		return forcing.KindN2O
	}
	return ""
}

func respFluxUnit(u string) bool {
	switch strings.ReplaceAll(u, " ", "") {
	case "wm-2", "w/m2", "wm^-2", "w/m^2", "wm**-2", "wm⁻²":
		return true
	}
	return false
}

func respTemperatureUnit(u string) bool {
	switch strings.ToLower(strings.TrimSpace(u)) {
	case "k", "°c", "degc", "deg c", "c", "kelvin", "celsius":
		return true
	}
	return false
}

func respIndexName(n string) bool {
	n = strings.ToLower(n)
	for _, w := range []string{"index", "enso", "nino", "niño", "soi", "oni", "mei"} {
		if strings.Contains(n, w) {
			return true
		}
	}
	return false
}

// ResponseDefaults are the Response view's first settings for a workspace,
// chosen so that the demo world gives a finished run without typing.
type ResponseDefaults struct {
	// Components are every series of the file holding the most series of a
	// known kind (ForcingKindGuess), with the kind's default reference.
	Components []ForcingComponent `json:"components"`
	// Record is the temperature record drawn with the run and fitted:
	// surface_anomaly when present, else the first series in K or °C whose
	// name does not read as an index. Second is the next such series ("" if
	// none). Heat is ocean_heat, else the first series in ZJ ("" if none).
	Record string `json:"record"`
	Second string `json:"second"`
	Heat   string `json:"heat"`
	// Drivers are the short-term factors fitted with the forced response:
	// the series whose names read as an ocean index (index, ENSO ...).
	Drivers []string `json:"drivers"`
	// Free are the free parameters of a first fit: lambda and gamma, and
	// the aerosol scale when one component is an aerosol forcing (a name
	// holding "aer", not of kind aod).
	Free []string `json:"free"`
	// From and To are the attribution window: the record's whole calendar
	// years.
	From string `json:"from"`
	To   string `json:"to"`
}

// ResponseDefaults works out the Response view's first settings.
func (w *Workspace) ResponseDefaults() ResponseDefaults {
	var d ResponseDefaults
	for _, l := range w.Files {
		if l.Result == nil {
			continue
		}
		var cs []ForcingComponent
		for _, s := range l.Result.Series {
			if k := ForcingKindGuess(s.Name, s.Unit); k != "" {
				cs = append(cs, ForcingComponent{Series: ref(s), Name: s.Name, Kind: k})
			}
		}
		if len(cs) > len(d.Components) {
			d.Components = cs
		}
	}
	if given := w.roleForcing(); len(given) > 0 {
		d.Components = given // the series the user marked as forcing
	}
	inComps := map[string]bool{}
	aer := 0
	for _, c := range d.Components {
		inComps[c.Series] = true
		if strings.Contains(strings.ToLower(c.Name), "aer") && c.Kind != forcing.KindAOD {
			aer++
		}
	}
	all := w.All()
	temp := func(s *series.Series) bool {
		return respTemperatureUnit(s.Unit) && !respIndexName(s.Name) && !inComps[ref(s)]
	}
	d.Record = w.firstWithRole(RoleTarget, temp)
	for _, s := range all {
		if d.Record == "" && s.Name == "surface_anomaly" && temp(s) {
			d.Record = ref(s)
			break
		}
	}
	for _, s := range all {
		if !temp(s) || ref(s) == d.Record {
			continue
		}
		if d.Record == "" {
			d.Record = ref(s)
		} else if d.Second == "" {
			d.Second = ref(s)
		}
	}
	d.Heat = w.firstWithRole(RoleHeat, func(s *series.Series) bool { return strings.EqualFold(strings.TrimSpace(s.Unit), "zj") })
	if d.Heat == "" {
		for _, s := range all {
			if strings.EqualFold(strings.TrimSpace(s.Unit), "zj") && (d.Heat == "" || s.Name == "ocean_heat") {
				d.Heat = ref(s)
				if s.Name == "ocean_heat" {
					break
				}
			}
		}
	}
	if given := w.WithRole(RoleDriver); len(given) > 0 {
		d.Drivers = given
	} else {
		for _, s := range all {
			if respIndexName(s.Name) && ref(s) != d.Record && !inComps[ref(s)] {
				d.Drivers = append(d.Drivers, ref(s))
			}
		}
	}
	d.Free = []string{ebm.FreeLambda, ebm.FreeGamma}
	if aer == 1 {
		d.Free = append(d.Free, ebm.FreeAerosol)
	}
	if d.Record != "" {
		if s, err := w.Find(d.Record); err == nil && s.Len() > 0 {
			y0, y1 := s.WholeYears()
			if y1 > y0 {
				d.From, d.To = strconv.Itoa(y0), strconv.Itoa(y1)
			}
		}
	}
	return d
}

// ResponseRequest is what the Response view asks for: a model run (Respond
// without a fit) and what to draw beside it.
type ResponseRequest struct {
	// Respond holds the forcing, the model, the spin-up, the attribution
	// window (at most one is used) and the noise model of the records'
	// trends. Its Fit is ignored and Record is set from Records.
	Respond RespondSettings `json:"respond"`
	// Records are temperature records drawn with the run and trended over
	// the window; the first sets the model's offset in the chart.
	Records []string `json:"records"`
	// Heat is an optional heat-content record (ZJ) drawn with HeatShare
	// (0 means ebm.DefaultHeatShare) times the model's heat gained.
	Heat      string  `json:"heat,omitempty"`
	HeatShare float64 `json:"heat_share,omitempty"`
}

// ResponseView is what the Response view shows for a model run: the
// response, its charts as SVG text and its tables, already formatted.
type ResponseView struct {
	Response *Response `json:"response"`
	// ForcingSVG stacks the components' forcing (annual means): positive
	// parts upward from zero, negative parts downward, and the total.
	ForcingSVG string `json:"-"`
	// RunSVG draws the model's surface temperature, shifted by Offset to
	// the first record's mean over their common steps, with the records.
	RunSVG string  `json:"-"`
	Offset float64 `json:"offset_k"`
	// HeatSVG draws HeatShare times the model's heat gained, shifted to the
	// heat record's mean at its times, with the record ("" without one).
	HeatSVG    string  `json:"-"`
	HeatOffset float64 `json:"heat_offset_zj"`
	// AttributionSVG draws each component's share of the modelled change
	// over the window as bars beside the total and the records; TrendsSVG
	// the trends of the records (with their intervals), the model and each
	// component's response side by side. Both "" when AttributionErr says
	// why the window could not be used.
	AttributionSVG string `json:"-"`
	TrendsSVG      string `json:"-"`

	Forcing        Table  `json:"forcing"`
	Derived        Table  `json:"derived"`
	Attribution    Table  `json:"attribution"`
	Trends         Table  `json:"trends"`
	AttributionErr string `json:"attribution_error,omitempty"`
	// RecordTrends are the records' trends over the window (nil where the
	// trend engine refused; a warning says why).
	RecordTrends []*trend.Result `json:"record_trends"`
	Warnings     []string        `json:"warnings"`
	Notes        []string        `json:"notes"`
}

// ResponseFigure runs the model (Respond, without a fit) and builds the
// charts and tables of the Response view. When the attribution window
// cannot be used, the run is made again without it and the view carries
// the run with AttributionErr saying why; any other error is returned.
func (w *Workspace) ResponseFigure(q ResponseRequest) (*ResponseView, error) {
	s := q.Respond
	s.Fit = nil
	if len(s.Windows) > 1 {
		s.Windows = s.Windows[:1]
	}
	// the records are trended by ResponseViewOf (Respond would trend the
	// first one again)
	s.Record = ""
	var recs []*series.Series
	for _, name := range q.Records {
		r, err := w.Find(name)
		if err != nil {
			return nil, fmt.Errorf("record: %w", err)
		}
		recs = append(recs, r)
	}
	var heat *series.Series
	if q.Heat != "" {
		var err error
		if heat, err = w.Find(q.Heat); err != nil {
			return nil, fmt.Errorf("heat record: %w", err)
		}
	}
	share := q.HeatShare
	if share == 0 {
		share = ebm.DefaultHeatShare
	}
	if !(share > 0) || math.IsInf(share, 0) {
		return nil, fmt.Errorf("heat share %v: expected a positive number (0.91 for an ocean record, 1 for the whole Earth)", q.HeatShare)
	}
	r, err := w.Respond(s)
	attrErr := ""
	if err != nil && len(s.Windows) > 0 {
		s2 := s
		s2.Windows = nil
		r2, err2 := w.Respond(s2)
		if err2 != nil {
			return nil, err2
		}
		r, err, attrErr = r2, nil, err.Error()
	}
	if err != nil {
		return nil, err
	}
	return ResponseViewOf(r, recs, heat, share, s.Noise, s.Level, attrErr), nil
}

// ResponseViewOf builds the view of a run: recs are the temperature
// records (the first sets the chart's offset), heat an optional heat
// record compared with share times the model's heat gained; noise and
// level are the records' trend settings; attrErr, when not empty, is shown
// in place of the attribution.
func ResponseViewOf(r *Response, recs []*series.Series, heat *series.Series, share float64, noise string, level float64, attrErr string) *ResponseView {
	v := &ResponseView{Response: r, AttributionErr: attrErr, Warnings: []string{}, Notes: []string{}}
	v.Warnings = append(v.Warnings, r.Warnings...)
	v.Notes = append(v.Notes, r.Notes...)
	v.ForcingSVG = forcingStackSVG(r.Forcing)
	v.Forcing = ForcingSummaryTable(r.Forcing)
	v.Derived = DerivedTable(r)
	v.RunSVG, v.Offset = respRunSVG(r, recs, &v.Notes)
	if heat != nil {
		v.HeatSVG, v.HeatOffset = respHeatSVG(r.Run, heat, share, &v.Notes)
	}
	if len(r.Attribution) > 0 {
		a := r.Attribution[0]
		topt := trend.Options{Noise: noise, Level: level}
		for _, rec := range recs {
			tr, err := trend.SeriesWindow(rec, a.From, a.To, topt)
			if err != nil {
				v.Warnings = append(v.Warnings, fmt.Sprintf("no trend of %q over %s to %s: %v", rec.Name, a.From, a.To, err))
			} else {
				for _, m := range tr.Warnings {
					v.Warnings = append(v.Warnings, fmt.Sprintf("trend of %q: %s", rec.Name, m))
				}
			}
			v.RecordTrends = append(v.RecordTrends, tr)
		}
		v.Attribution = AttributionTable(a, recs, v.RecordTrends)
		v.AttributionSVG = attributionBars(a, recs)
		v.Trends = WindowTrendsTable(a, recs, v.RecordTrends)
		v.TrendsSVG = windowTrendBars(a, recs, v.RecordTrends)
	}
	return v
}

// --- forcing ------------------------------------------------------------------

// ForcingSummaryTable lists each component: kind, input series, formula,
// reference, scale, efficacy and its forcing at the first and last steps
// and on average (W m-2, scaled, without the efficacy).
func ForcingSummaryTable(f *forcing.Result) Table {
	t := Table{Title: fmt.Sprintf("Forcing components, %s to %s", f.From, f.To),
		Columns: []string{"component", "kind", "series", "formula", "reference", "scale", "efficacy",
			"first (W m-2)", "last (W m-2)", "mean (W m-2)", "values filled"}}
	for _, c := range f.Components {
		ref := c.ReferenceMode
		switch {
		case c.ReferenceMode == forcing.RefValue:
			ref = Fmt(c.Reference) + " " + c.Unit
		case c.Kind != forcing.KindERF:
			ref = fmt.Sprintf("%s (%s %s)", c.ReferenceMode, Fmt(c.Reference), c.Unit)
		}
		t.Rows = append(t.Rows, []string{c.Name, c.Kind, c.Series, c.Formula, strings.TrimSpace(ref), Fmt(c.Scale), Fmt(c.Efficacy),
			Fmt(c.FirstWPerM2), Fmt(c.LastWPerM2), Fmt(c.MeanWPerM2), strconv.Itoa(c.Filled)})
	}
	last := f.Len() - 1
	t.Rows = append(t.Rows, []string{"total", "", "", "", "", "", "", Fmt(f.Total.Values[0]), Fmt(f.Total.Values[last]), Fmt(respMean(f.Total.Values)), ""})
	return t
}

func respMean(v []float64) float64 {
	var s float64
	n := 0
	for _, x := range v {
		if !math.IsNaN(x) {
			s += x
			n++
		}
	}
	if n == 0 {
		return math.NaN()
	}
	return s / float64(n)
}

// respAnnual is a series' annual means when it is monthly (whole years only).
func respAnnual(s *series.Series) *series.Series {
	if s.Resolution == series.Monthly {
		return s.AnnualMeans(12)
	}
	return s
}

// forcingStackSVG stacks the components' forcing as areas: each
// component's positive part upward from zero, its negative part downward,
// in component order, so the areas above zero add up to the positive
// forcing and those below to the negative; the total is a line. A monthly
// forcing is drawn as annual means.
func forcingStackSVG(f *forcing.Result) string {
	unitNote := ""
	if f.Resolution == series.Monthly {
		unitNote = ", annual means"
	}
	c := chart.Lines{XLabel: "Year", YLabel: "ERF (W m-2)", YZero: true, Height: 400,
		Title: fmt.Sprintf("Forcing by component, stacked%s (W m-2)", unitNote)}
	tot := respAnnual(f.Total)
	n := tot.Len()
	pos, neg := make([]float64, n), make([]float64, n)
	var descParts []string
	for k, comp := range f.Components {
		a := respAnnual(comp.ERF)
		pLo, pHi, nLo, nHi := make([]float64, n), make([]float64, n), make([]float64, n), make([]float64, n)
		bigP, bigN := 0.0, 0.0
		for i := range n {
			x := a.At(tot.First + i)
			if math.IsNaN(x) {
				pLo[i], pHi[i], nLo[i], nHi[i] = math.NaN(), math.NaN(), math.NaN(), math.NaN()
				continue
			}
			pLo[i], nHi[i] = pos[i], neg[i]
			if x > 0 {
				pos[i] += x
				bigP = math.Max(bigP, x)
			} else {
				neg[i] += x
				bigN = math.Max(bigN, -x)
			}
			pHi[i], nLo[i] = pos[i], neg[i]
		}
		col := chart.Palette[k%7]
		pName, nName := comp.Name, ""
		if bigN > bigP {
			pName, nName = "", comp.Name
		}
		if bigP > 0 {
			c.Bands = append(c.Bands, chart.Band{Name: pName, X: tot.Times, Lo: pLo, Hi: pHi, Color: col, Opacity: 0.55})
		}
		if bigN > 0 {
			c.Bands = append(c.Bands, chart.Band{Name: nName, X: tot.Times, Lo: nLo, Hi: nHi, Color: col, Opacity: 0.55})
		}
		descParts = append(descParts, fmt.Sprintf("%s from %s to %s W m-2", comp.Name, Fmt(comp.FirstWPerM2), Fmt(comp.LastWPerM2)))
	}
	c.Lines = append(c.Lines, chart.Line{Name: "total", X: tot.Times, Y: tot.Values, Color: "#000000", Width: 2})
	eff := respAnnual(f.Effective)
	differs := false
	for i, v := range eff.Values {
		if i < len(tot.Values) && math.Abs(v-tot.Values[i]) > 1e-12 {
			differs = true
			break
		}
	}
	if differs {
		c.Lines = append(c.Lines, chart.Line{Name: "total, efficacy-weighted", X: eff.Times, Y: eff.Values, Color: "#000000", Width: 1.5, Dashed: true})
	}
	c.Desc = fmt.Sprintf("Stacked area chart of effective radiative forcing by component, %s to %s: %s; total at the last step %s W m-2.",
		f.From, f.To, strings.Join(descParts, "; "), Fmt(f.TotalLastWPerM2))
	return c.SVG()
}

// --- model run -------------------------------------------------------------------

// modelName is the model in words.
func modelName(m string) string {
	if m == ebm.ModelOneBox {
		return "one-box"
	}
	return "two-layer"
}

// DerivedTable lists the model's parameters, the derived numbers (ECS,
// TCR, time scales and amplitudes), the spin-up and the final state.
func DerivedTable(r *Response) Table {
	p, d := r.Params, r.Derived
	t := Table{Title: "Model: parameters and derived numbers", Columns: []string{"quantity", "value", "unit"}}
	add := func(k, v, u string) { t.Rows = append(t.Rows, []string{k, v, u}) }
	add("model", modelName(r.Model), "")
	add("ECS, equilibrium warming for doubled CO2 (F2x / lambda)", Fmt(d.ECSK), "K")
	add("TCR, warming at the end of a 70-year ramp to F2x", Fmt(d.TCRK), "K")
	add("lambda, climate feedback parameter", Fmt(p.LambdaWPerM2K), "W m-2 K-1")
	if r.Model == ebm.ModelTwoLayer {
		add("gamma, heat exchange with the deep ocean", Fmt(p.GammaWPerM2K), "W m-2 K-1")
	}
	add("C, upper-layer heat capacity", Fmt(p.CWYrPerM2K), "W yr m-2 K-1")
	if r.Model == ebm.ModelTwoLayer {
		add("C0, deep-ocean heat capacity", Fmt(p.C0WYrPerM2K), "W yr m-2 K-1")
		add("efficacy of ocean heat uptake", Fmt(p.Efficacy), "")
	}
	add("F2x, forcing of doubled CO2", Fmt(p.F2xWPerM2), "W m-2")
	add("fast time scale", Fmt(d.TauFastYears), "years")
	add("fast amplitude (share of the step response)", Fmt(d.AFast), "")
	if d.TauSlowYears != nil {
		add("slow time scale", Fmt(*d.TauSlowYears), "years")
		add("slow amplitude", Fmt(d.ASlow), "")
	}
	if run := r.Run; run != nil {
		if run.SpinupYears > 0 {
			add("spin-up", fmt.Sprintf("at rest in %s, each forcing ramped linearly to its first-year mean over %s years", FmtYear(run.SpinupFromYear), Fmt(run.SpinupYears)), "")
		} else {
			add("spin-up", "none: at rest at the first step ("+FmtYear(run.SpinupFromYear)+")", "")
		}
		f := run.Final
		at := " at " + FmtYear(f.TimeYear)
		add("surface temperature T"+at, Fmt(f.TK), "K")
		if r.Model == ebm.ModelTwoLayer {
			add("deep-ocean temperature T0"+at, Fmt(f.T0K), "K")
		}
		add("top-of-atmosphere imbalance N"+at, Fmt(f.NWPerM2), "W m-2")
		add("heat gained since rest"+at, Fmt(f.HeatZJ), "ZJ")
	}
	return t
}

// respOnAxis returns the model's mean surface temperature at the record's
// step idx: the same step when the resolutions agree, the calendar year's
// mean of a monthly run for an annual record (NaN outside the run).
func respOnAxis(modelT, modelAnnual, rec *series.Series, idx int) float64 {
	if rec.Resolution == modelT.Resolution {
		return modelT.At(idx)
	}
	if rec.Resolution == series.Annual && modelAnnual != nil {
		return modelAnnual.At(idx)
	}
	return math.NaN()
}

// respRunSVG draws the model's surface temperature with the records. The
// model, an anomaly from the state of rest, is shifted to the first
// record's mean over their common steps; the offset is returned.
func respRunSVG(r *Response, recs []*series.Series, notes *[]string) (string, float64) {
	run := r.Run
	var annual *series.Series
	if run.T.Resolution == series.Monthly {
		annual = run.T.AnnualMeans(12)
	}
	offset := 0.0
	if len(recs) > 0 {
		rec := recs[0]
		var sum float64
		n := 0
		for i, y := range rec.Values {
			m := respOnAxis(run.T, annual, rec, rec.First+i)
			if !math.IsNaN(y) && !math.IsNaN(m) {
				sum += y - m
				n++
			}
		}
		if n > 0 {
			offset = sum / float64(n)
			*notes = append(*notes, fmt.Sprintf("The model's temperature (an anomaly from the state of rest) is drawn %s K to match the mean of %s over their %d common steps.",
				signedK(offset), rec.Name, n))
		} else {
			*notes = append(*notes, fmt.Sprintf("%s has no step inside the run: the model is drawn as an anomaly from the state of rest.", rec.Name))
		}
	}
	yl := "temperature anomaly (K)"
	c := chart.Lines{XLabel: "Year", YLabel: yl, YZero: true,
		Title: fmt.Sprintf("%s model run (ECS %s K, TCR %s K) and the record", modelName(r.Model), Fmt(r.Derived.ECSK), Fmt(r.Derived.TCRK))}
	cols := []string{chart.Palette[4], chart.Palette[1], chart.Palette[2], chart.Palette[6]}
	for i, rec := range recs {
		c.Lines = append(c.Lines, chart.Line{Name: rec.Name, X: rec.Times, Y: rec.Values, Color: cols[i%len(cols)], Width: 1})
	}
	mv := make([]float64, len(run.T.Values))
	for i, x := range run.T.Values {
		mv[i] = x + offset
	}
	c.Lines = append(c.Lines, chart.Line{Name: "model T", X: run.T.Times, Y: mv, Color: chart.Palette[5], Width: 2.25})
	return c.SVG(), offset
}

// respHeatAt is the model's heat gained (ZJ) at decimal year t, linear
// between the states at the steps' ends (and the initial state at the
// first step's start); NaN outside the run.
func respHeatAt(run *ebm.Run, t float64) float64 {
	n := len(run.HeatZJ)
	if n == 0 {
		return math.NaN()
	}
	dt := 1 / float64(run.T.Resolution.StepsPerYear())
	t0 := run.StepStart(0)
	x := (t - t0) / dt // 0 at the first start, k at the end of step k-1
	if x < 0 || x > float64(n) || math.IsNaN(x) {
		return math.NaN()
	}
	at := func(k int) float64 {
		if k == 0 {
			return run.Initial.HeatZJ
		}
		return run.HeatZJ[k-1]
	}
	k := int(math.Floor(x))
	if k >= n {
		return at(n)
	}
	w := x - float64(k)
	return (1-w)*at(k) + w*at(k+1)
}

// respHeatSVG draws share times the model's heat gained, shifted to the
// heat record's mean at its times, with the record.
func respHeatSVG(run *ebm.Run, heat *series.Series, share float64, notes *[]string) (string, float64) {
	var sum float64
	n := 0
	for i, y := range heat.Values {
		m := respHeatAt(run, heat.Times[i])
		if !math.IsNaN(y) && !math.IsNaN(m) {
			sum += y - share*m
			n++
		}
	}
	offset := 0.0
	if n > 0 {
		offset = sum / float64(n)
		*notes = append(*notes, fmt.Sprintf("The model's heat gained (times %s) is drawn %s ZJ to match the mean of %s at its %d times inside the run.",
			Fmt(share), signedK(offset), heat.Name, n))
	} else {
		*notes = append(*notes, fmt.Sprintf("%s has no value inside the run: no offset applied to the model's heat.", heat.Name))
	}
	k := len(run.HeatZJ)
	xs, ys := make([]float64, k+1), make([]float64, k+1)
	dt := 1 / float64(run.T.Resolution.StepsPerYear())
	xs[0], ys[0] = run.StepStart(0), share*run.Initial.HeatZJ+offset
	for i, h := range run.HeatZJ {
		xs[i+1], ys[i+1] = run.StepStart(i)+dt, share*h+offset
	}
	unit := heat.Unit
	if unit == "" {
		unit = "ZJ"
	}
	c := chart.Lines{XLabel: "Year", YLabel: "heat content (" + unit + ")", YZero: true,
		Title: fmt.Sprintf("Heat gained: %s times the model's C T + C0 T0, and %s", Fmt(share), heat.Name)}
	c.Lines = append(c.Lines,
		chart.Line{Name: heat.Name, X: heat.Times, Y: heat.Values, Color: chart.Palette[4], Width: 1, Markers: heat.Resolution == series.Annual},
		chart.Line{Name: "model heat gained", X: xs, Y: ys, Color: chart.Palette[5], Width: 2.25})
	return c.SVG(), offset
}

func signedK(v float64) string {
	if v >= 0 {
		return "up by " + Fmt(v)
	}
	return "down by " + Fmt(-v)
}

// --- attribution and window trends ----------------------------------------------------

// respRecordChange is a record's change over the window as ebm's
// attribution measures the model's: the mean of its last year in the
// window less that of its first (NaN when either has no value).
func respRecordChange(rec *series.Series, from, to string) float64 {
	w, err := rec.WindowSpec(from, to)
	if err != nil || len(w.Values) < 2 {
		return math.NaN()
	}
	k := min(len(w.Values)/2, w.Resolution.StepsPerYear())
	return respMean(w.Values[len(w.Values)-k:]) - respMean(w.Values[:k])
}

func fmtShare(p *float64) string {
	if p == nil {
		return "-"
	}
	return strconv.FormatFloat(100**p, 'f', 0, 64) + " %"
}

// AttributionTable lists, over the attribution window, each component's
// forcing change, the model's response to it (change and trend), its share
// of the modelled change and what the model gives without it (by
// linearity the total less the component: the same as a run without it,
// spin-up included), then the model's total and the records' change and
// trend (rts: their trends over the window, one per record, nil where the
// trend engine refused).
func AttributionTable(a *ebm.Attribution, recs []*series.Series, rts []*trend.Result) Table {
	t := Table{Title: fmt.Sprintf("Attribution, %s to %s (%d steps)", a.From, a.To, a.N),
		Columns: []string{"forcing", "kind", "forcing change (W m-2)", "warming (K)", "share of the modelled warming", "trend (K per decade)",
			"without it: warming (K)", "without it: trend (K per decade)"}}
	tot := a.Total
	for _, c := range a.Components {
		t.Rows = append(t.Rows, []string{c.Name, c.Kind, Fmt(c.ForcingChangeWPerM2), Fmt(c.ChangeK), fmtShare(c.ShareOfChange), Fmt(c.SlopePerDecade),
			Fmt(tot.ChangeK - c.ChangeK), Fmt(tot.SlopePerDecade - c.SlopePerDecade)})
	}
	t.Rows = append(t.Rows, []string{"model, all forcings", "", Fmt(tot.ForcingChangeWPerM2), Fmt(tot.ChangeK), fmtShare(tot.ShareOfChange), Fmt(tot.SlopePerDecade), "-", "-"})
	for i, rec := range recs {
		slope := "-"
		if i < len(rts) && rts[i] != nil {
			slope = Fmt(rts[i].SlopePerDecade)
		}
		t.Rows = append(t.Rows, []string{"record " + rec.Name, "", "", Fmt(respRecordChange(rec, a.From, a.To)), "", slope, "", ""})
	}
	return t
}

// attributionBars draws the modelled warming over the window by component
// beside the total and the records' change.
func attributionBars(a *ebm.Attribution, recs []*series.Series) string {
	var cats []string
	var vals []float64
	for _, c := range a.Components {
		cats = append(cats, c.Name)
		vals = append(vals, c.ChangeK)
	}
	cats = append(cats, "model, all forcings")
	vals = append(vals, a.Total.ChangeK)
	for _, rec := range recs {
		cats = append(cats, "record "+rec.Name)
		vals = append(vals, respRecordChange(rec, a.From, a.To))
	}
	b := chart.Bars{Horizontal: true, Height: 70 + 34*len(cats),
		Title:      fmt.Sprintf("Warming from the first to the last year of %s to %s", a.From, a.To),
		XLabel:     "change (K)",
		Categories: cats,
		Series:     []chart.BarSeries{{Name: "change", Values: vals, Color: chart.Palette[5]}}}
	return b.SVG()
}

// WindowTrendsTable lists the trends over the attribution window side by
// side: each record's (with its noise model and interval), the model's and
// each component's response (least squares; the model output has no noise).
func WindowTrendsTable(a *ebm.Attribution, recs []*series.Series, rts []*trend.Result) Table {
	level := 0.95
	for _, tr := range rts {
		if tr != nil {
			level = tr.Level
			break
		}
	}
	t := Table{Title: fmt.Sprintf("Trends, %s to %s", a.From, a.To),
		Columns: []string{"series", "trend (K per decade)", "standard error", fmt.Sprintf("%g%% low", 100*level), fmt.Sprintf("%g%% high", 100*level), "noise", "n"}}
	for i, rec := range recs {
		if i >= len(rts) || rts[i] == nil {
			t.Rows = append(t.Rows, []string{"record " + rec.Name, "-", "-", "-", "-", "-", "0"})
			continue
		}
		tr := rts[i]
		t.Rows = append(t.Rows, []string{"record " + rec.Name, Fmt(tr.SlopePerDecade), Fmt(tr.StderrPerDecade), Fmt(tr.CILowPerDecade), Fmt(tr.CIHighPerDecade),
			tr.Noise, strconv.Itoa(tr.N)})
	}
	n := strconv.Itoa(a.N)
	t.Rows = append(t.Rows, []string{"model, all forcings", Fmt(a.Total.SlopePerDecade), "-", "-", "-", "model output", n})
	for _, c := range a.Components {
		t.Rows = append(t.Rows, []string{"response to " + c.Name, Fmt(c.SlopePerDecade), "-", "-", "-", "model output", n})
	}
	return t
}

// windowTrendBars draws the trends of WindowTrendsTable as bars, the
// records with their intervals as error bars.
func windowTrendBars(a *ebm.Attribution, recs []*series.Series, rts []*trend.Result) string {
	var cats []string
	var vals, lo, hi []float64
	for i, rec := range recs {
		cats = append(cats, "record "+rec.Name)
		if i < len(rts) && rts[i] != nil {
			vals, lo, hi = append(vals, rts[i].SlopePerDecade), append(lo, rts[i].CILowPerDecade), append(hi, rts[i].CIHighPerDecade)
		} else {
			vals, lo, hi = append(vals, math.NaN()), append(lo, math.NaN()), append(hi, math.NaN())
		}
	}
	cats = append(cats, "model, all forcings")
	vals, lo, hi = append(vals, a.Total.SlopePerDecade), append(lo, math.NaN()), append(hi, math.NaN())
	for _, c := range a.Components {
		cats = append(cats, "response to "+c.Name)
		vals, lo, hi = append(vals, c.SlopePerDecade), append(lo, math.NaN()), append(hi, math.NaN())
	}
	b := chart.Bars{Horizontal: true, Height: 70 + 34*len(cats),
		Title:      fmt.Sprintf("Trends over %s to %s (records with their intervals)", a.From, a.To),
		XLabel:     "trend (K per decade)",
		Categories: cats,
		Series:     []chart.BarSeries{{Name: "trend", Values: vals, Lo: lo, Hi: hi, Color: chart.Palette[4]}}}
	return b.SVG()
}

// --- fit ----------------------------------------------------------------------------

// ResponseFitView is what the Response view shows for a fit: the response
// (with the fitted run), the chart of the record with the fitted model, and
// the tables.
type ResponseFitView struct {
	Response *Response `json:"response"`
	// FitSVG draws the record, the fitted values (model + offset + drivers)
	// and the forced part (model + offset); HeatSVG the heat record with its
	// fitted values ("" without a heat record).
	FitSVG  string `json:"-"`
	HeatSVG string `json:"-"`
	// Estimates lists the free parameters with their standard errors and
	// intervals; Implied the ECS and TCR they imply; Stats the fit's
	// statistics; Drivers the short-term factors (nil without); Residual the
	// trends of what the fit leaves over the window(s).
	Estimates Table    `json:"estimates"`
	Implied   Table    `json:"implied"`
	Stats     Table    `json:"stats"`
	Drivers   *Table   `json:"drivers,omitempty"`
	Residual  *Table   `json:"residual_trends,omitempty"`
	Warnings  []string `json:"warnings"`
}

// ResponseFitFigure fits the model (Respond with s.Fit) and builds the fit
// panel.
func (w *Workspace) ResponseFitFigure(s RespondSettings) (*ResponseFitView, error) {
	if s.Fit == nil {
		return nil, fmt.Errorf("no fit asked for: choose a temperature record to fit")
	}
	r, err := w.Respond(s)
	if err != nil {
		return nil, err
	}
	return ResponseFitViewOf(r)
}

// respFreeMeaning says what a fitted parameter is and in which unit.
func respFreeMeaning(e ebm.Estimate) (string, string) {
	switch e.Name {
	case ebm.FreeLambda:
		return "climate feedback parameter", "W m-2 K-1"
	case ebm.FreeGamma:
		return "heat exchange with the deep ocean", "W m-2 K-1"
	case ebm.FreeEfficacy:
		return "efficacy of ocean heat uptake", ""
	case ebm.FreeC:
		return "upper-layer heat capacity", "W yr m-2 K-1"
	case ebm.FreeC0:
		return "deep-ocean heat capacity", "W yr m-2 K-1"
	case ebm.FreeOffset:
		return "offset of the temperature record", "K"
	case ebm.HeatOffset:
		return "offset of the heat record", "ZJ"
	}
	if e.Component != "" {
		return "scale of the forcing " + e.Component, "×"
	}
	return "short-term driver, per unit of " + e.Name, "K per unit"
}

// ResponseFitViewOf builds the fit panel of a fitted response.
func ResponseFitViewOf(r *Response) (*ResponseFitView, error) {
	ft := r.Fit
	if ft == nil || ft.Fitted == nil || ft.Target == nil || ft.Run == nil {
		return nil, fmt.Errorf("the response has no fit to show")
	}
	v := &ResponseFitView{Response: r, Warnings: append([]string{}, r.Warnings...)}
	lv := fmt.Sprintf("%g%%", 100*ft.Level)
	v.Estimates = Table{Title: "Fitted parameters", Columns: []string{"parameter", "meaning", "estimate", "standard error", lv + " low", lv + " high", "unit"}}
	for _, e := range ft.Estimates {
		what, unit := respFreeMeaning(e)
		v.Estimates.Rows = append(v.Estimates.Rows, []string{e.Name, what, Fmt(e.Value), Fmt(e.StdErr), Fmt(e.Low), Fmt(e.High), unit})
	}
	bound := func(p *float64) string {
		if p == nil {
			return "unbounded"
		}
		return Fmt(*p)
	}
	v.Implied = Table{Title: "Implied sensitivity", Columns: []string{"quantity", "estimate", "standard error", lv + " low", lv + " high", "unit"}}
	v.Implied.Rows = [][]string{
		{"ECS", Fmt(ft.ECS.Value), Fmt(ft.ECS.StdErr), bound(ft.ECS.Low), bound(ft.ECS.High), "K"},
		{"TCR", Fmt(ft.TCR.Value), Fmt(ft.TCR.StdErr), bound(ft.TCR.Low), bound(ft.TCR.High), "K"},
	}
	st := Table{Title: "Fit statistics", Columns: []string{"statistic", "value"}}
	add := func(k, val string) { st.Rows = append(st.Rows, []string{k, val}) }
	add("temperature record", ft.Target.Name)
	add("values fitted (n)", strconv.Itoa(ft.N))
	add("RMSE (K)", Fmt(ft.RMSE))
	add("R²", Fmt(ft.R2))
	add("residual lag-1 autocorrelation (rho1)", Fmt(ft.Rho1))
	add("residual lag-2 autocorrelation (rho2)", Fmt(ft.Rho2))
	add("nu (ARMA(1,1) variance inflation, Foster and Rahmstorf 2011)", Fmt(ft.Nu))
	if ft.Heat != nil {
		add("heat record", ft.Heat.Name)
		add("heat values fitted", strconv.Itoa(ft.HeatN))
		add("heat RMSE (ZJ)", fmtOpt(ft.HeatRMSEZJ))
		add("heat share of the model's heat gained", Fmt(ft.HeatShare))
		add("heat weight (K² per ZJ²)", Fmt(ft.HeatWeight))
		add("nu of the heat residuals", Fmt(ft.HeatNu))
	}
	add("model runs", strconv.Itoa(ft.Evaluations))
	v.Stats = st
	if a := r.Adjust; a != nil {
		t := Table{Title: "Short-term drivers fitted with the forced response", Columns: []string{"driver", "lag (months)", "coefficient", "standard error (ARMA(1,1))", "coefficient unit"}}
		for _, d := range a.Drivers {
			t.Rows = append(t.Rows, []string{d.Name, strconv.Itoa(d.LagMonths), Fmt(d.Estimate), Fmt(d.StdErrARMA11), coefUnit(a.Unit, d.Unit)})
		}
		v.Drivers = &t
	}
	if len(r.ResidualTrends) > 0 {
		t := Table{Title: "Trend of what the fit leaves (record less the fitted values)",
			Columns: []string{"from", "to", "n", "noise", "trend (K per decade)", "standard error", lv + " low", lv + " high"}}
		for _, tr := range r.ResidualTrends {
			t.Rows = append(t.Rows, []string{tr.From, tr.To, strconv.Itoa(tr.N), tr.Noise, Fmt(tr.SlopePerDecade), Fmt(tr.StderrPerDecade),
				Fmt(tr.CILowPerDecade), Fmt(tr.CIHighPerDecade)})
		}
		v.Residual = &t
	}
	v.FitSVG = respFitSVG(r)
	if ft.Heat != nil && ft.HeatFitted != nil {
		hc := chart.Lines{XLabel: "Year", YLabel: "heat content (ZJ)", YZero: true, Title: "Heat record and the fitted model's heat gained"}
		hc.Lines = append(hc.Lines,
			chart.Line{Name: ft.Heat.Name, X: ft.Heat.Times, Y: ft.Heat.Values, Color: chart.Palette[4], Width: 1, Markers: ft.Heat.Resolution == series.Annual},
			chart.Line{Name: "fitted", X: ft.HeatFitted.Times, Y: ft.HeatFitted.Values, Color: chart.Palette[5], Width: 2})
		v.HeatSVG = hc.SVG()
	}
	return v, nil
}

// respFitSVG draws the record over the fitted steps, the fitted values and
// the forced part (the model plus the offset, without the drivers).
func respFitSVG(r *Response) string {
	ft := r.Fit
	tg := ft.Target
	off := 0.0
	if e, ok := ft.Estimate(ebm.FreeOffset); ok {
		off = e.Value
	}
	var annual *series.Series
	if ft.Run.T.Resolution == series.Monthly {
		annual = ft.Run.T.AnnualMeans(12)
	}
	forced := make([]float64, len(ft.Fitted.Values))
	rec := make([]float64, len(ft.Fitted.Values))
	for i, f := range ft.Fitted.Values {
		idx := ft.Fitted.First + i
		forced[i], rec[i] = math.NaN(), math.NaN()
		if math.IsNaN(f) {
			continue
		}
		if m := respOnAxis(ft.Run.T, annual, ft.Fitted, idx); !math.IsNaN(m) {
			forced[i] = m + off
		}
		rec[i] = tg.At(idx)
	}
	title := fmt.Sprintf("%s and the fitted model (R² %s, RMSE %s K)", tg.Name, strconv.FormatFloat(ft.R2, 'f', 3, 64), Fmt(ft.RMSE))
	c := chart.Lines{XLabel: "Year", YLabel: axisLabel(tg), YZero: true, Title: title}
	c.Lines = append(c.Lines, chart.Line{Name: tg.Name, X: ft.Fitted.Times, Y: rec, Color: chart.Palette[4], Width: 1})
	if r.Adjust != nil {
		c.Lines = append(c.Lines, chart.Line{Name: "fitted, with drivers", X: ft.Fitted.Times, Y: ft.Fitted.Values, Color: chart.Palette[5], Width: 1.25})
		c.Lines = append(c.Lines, chart.Line{Name: "forced response", X: ft.Fitted.Times, Y: forced, Color: chart.Palette[2], Width: 2.25, Dashed: true})
	} else {
		c.Lines = append(c.Lines, chart.Line{Name: "fitted forced response", X: ft.Fitted.Times, Y: forced, Color: chart.Palette[5], Width: 2.25})
	}
	return c.SVG()
}
