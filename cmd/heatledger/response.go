package main

import (
	"fmt"
	"io"
	"os"
	"strconv"
	"strings"
	"text/tabwriter"

	"heatledger/core/analysis"
	"heatledger/core/ebm"
	"heatledger/core/forcing"
)

func init() {
	commands = append(commands,
		command{"forcing", "effective radiative forcing from concentrations, aerosol optical depth, solar irradiance and ERF columns", runForcing},
		command{"respond", "run or fit an energy balance model (one-box or two-layer) on a forcing; ECS, TCR and attribution", runRespond},
	)
}

// optFloat is a float flag that knows whether it was given.
type optFloat struct{ v *float64 }

func (o *optFloat) String() string {
	if o == nil || o.v == nil {
		return ""
	}
	return strconv.FormatFloat(*o.v, 'g', -1, 64)
}

func (o *optFloat) Set(s string) error {
	v, err := strconv.ParseFloat(strings.TrimSpace(s), 64)
	if err != nil {
		return fmt.Errorf("%q is not a number", s)
	}
	o.v = &v
	return nil
}

// parseComponent reads NAME:KIND[:SCALE]; NAME may itself be FILE:NAME.
func parseComponent(flagName, s string) (analysis.ForcingComponent, error) {
	bad := func(why string) error {
		return usageError{fmt.Sprintf("--%s %q: %s: expected NAME:KIND[:SCALE] with KIND one of %s, e.g. aod:aod or aerosol_erf:erf:1.2",
			flagName, s, why, strings.Join(forcing.Kinds, ", "))}
	}
	parts := strings.Split(s, ":")
	isKind := func(p string) bool {
		for _, k := range forcing.Kinds {
			if strings.EqualFold(strings.TrimSpace(p), k) {
				return true
			}
		}
		return false
	}
	n := len(parts)
	var c analysis.ForcingComponent
	switch {
	case n >= 3 && isKind(parts[n-2]):
		v, err := strconv.ParseFloat(strings.TrimSpace(parts[n-1]), 64)
		if err != nil {
			if isKind(parts[n-1]) {
				c.Kind, parts = strings.ToLower(strings.TrimSpace(parts[n-1])), parts[:n-1]
				break
			}
			return c, bad(fmt.Sprintf("scale %q is not a number", parts[n-1]))
		}
		if v == 0 {
			return c, bad("a scale of 0 removes the component: leave it out instead")
		}
		c.Scale = &v
		c.Kind, parts = strings.ToLower(strings.TrimSpace(parts[n-2])), parts[:n-2]
	case n >= 2 && isKind(parts[n-1]):
		c.Kind, parts = strings.ToLower(strings.TrimSpace(parts[n-1])), parts[:n-1]
	case n >= 2:
		return c, bad(fmt.Sprintf("unknown kind %q", parts[n-1]))
	default:
		return c, bad("no kind")
	}
	c.Series = strings.Join(parts, ":")
	if strings.TrimSpace(c.Series) == "" {
		return c, bad("no series name")
	}
	return c, nil
}

// forcingFlags are the forcing options both commands share.
type forcingFlags struct {
	components, references, efficacies namesFlag
	formula                            *string
	volcanic, albedo                   optFloat
	flagName                           string
}

func (ff *forcingFlags) register(c *common, flagName string) {
	ff.flagName = flagName
	c.fs.Var(&ff.components, flagName, "a forcing component NAME:KIND[:SCALE], KIND one of co2 (ppm), ch4 (ppb), n2o (ppb), aod, tsi (W m-2), erf (W m-2); NAME may be FILE:NAME; repeat for each component")
	c.fs.Var(&ff.references, "reference", "NAME=REF: the reference of a component: preindustrial (gases: 278 ppm, 722 ppb, 270 ppb), first (mean of the first year), mean, or a number in the series' unit (defaults: gases preindustrial, aod first, tsi mean, erf 0); repeatable")
	c.fs.Var(&ff.efficacies, "component-efficacy", "NAME=E: a component's forcing efficacy (default 1); repeatable")
	ff.formula = c.fs.String("formula", forcing.FormulaMyhre1998, "greenhouse-gas expressions: myhre1998 (Myhre et al. 1998) or etminan2016 (Etminan et al. 2016, coefficients from memory)")
	c.fs.Var(&ff.volcanic, "volcanic-factor", "ERF per unit stratospheric AOD, W m-2 (default -20, IPCC AR6; -25 as in AR5 / Hansen et al. 2005)")
	c.fs.Var(&ff.albedo, "albedo", "planetary albedo of solar forcing dTSI (1 - albedo)/4 (default 0.29)")
}

func (ff *forcingFlags) settings() (analysis.ForcingSettings, error) {
	s := analysis.ForcingSettings{Formula: *ff.formula, VolcanicWPerM2PerAOD: ff.volcanic.v, Albedo: ff.albedo.v}
	switch strings.ToLower(*ff.formula) {
	case forcing.FormulaMyhre1998, "myhre", forcing.FormulaEtminan2016, "etminan":
	default:
		return s, usageError{fmt.Sprintf("--formula %q: expected myhre1998 or etminan2016", *ff.formula)}
	}
	if len(ff.components) == 0 {
		return s, usageError{fmt.Sprintf("give at least one --%s NAME:KIND[:SCALE]", ff.flagName)}
	}
	for _, spec := range ff.components {
		c, err := parseComponent(ff.flagName, spec)
		if err != nil {
			return s, err
		}
		s.Components = append(s.Components, c)
	}
	find := func(flag, spec string) (*analysis.ForcingComponent, string, error) {
		i := strings.LastIndex(spec, "=")
		if i <= 0 {
			return nil, "", usageError{fmt.Sprintf("--%s %q: expected NAME=VALUE", flag, spec)}
		}
		name, val := spec[:i], spec[i+1:]
		for k := range s.Components {
			if s.Components[k].Series == name {
				return &s.Components[k], val, nil
			}
		}
		return nil, "", usageError{fmt.Sprintf("--%s %q: %q is not one of the --%s names", flag, spec, name, ff.flagName)}
	}
	for _, spec := range ff.references {
		c, val, err := find("reference", spec)
		if err != nil {
			return s, err
		}
		if _, _, err := forcing.ParseReference(val); err != nil {
			return s, usageError{fmt.Sprintf("--reference %q: %v", spec, err)}
		}
		c.Reference = val
	}
	for _, spec := range ff.efficacies {
		c, val, err := find("component-efficacy", spec)
		if err != nil {
			return s, err
		}
		v, err := strconv.ParseFloat(val, 64)
		if err != nil || !(v > 0) {
			return s, usageError{fmt.Sprintf("--component-efficacy %q: expected a positive number", spec)}
		}
		c.Efficacy = &v
	}
	return s, nil
}

// newResponseCommon is newCommon without --series (these commands name
// their series in the component flags).
func newResponseCommon(name, synopsis string, stderr io.Writer, help func(io.Writer)) *common {
	c := &common{fs: newFlagSet(name, stderr)}
	c.rf.register(c.fs)
	c.asJSON = c.fs.Bool("json", false, "print one JSON object")
	c.fs.Usage = func() {
		fmt.Fprintln(stderr, "usage: heatledger "+name+" "+synopsis)
		if help != nil {
			help(stderr)
		}
		c.fs.PrintDefaults()
	}
	return c
}

func writeTableFile(path string, t analysis.Table) error {
	if err := os.WriteFile(path, []byte(t.CSV()), 0o644); err != nil {
		return fmt.Errorf("%s: %v", path, err)
	}
	return nil
}

func runForcing(args []string, stdout, stderr io.Writer) error {
	c := newResponseCommon("forcing", "--component NAME:KIND[:SCALE] ... [--reference NAME=REF] [--component-efficacy NAME=E] [--formula myhre1998|etminan2016] [--volcanic-factor -20] [--albedo 0.29] [--csv OUT] [--json] FILE...", stderr,
		func(w io.Writer) {
			fmt.Fprintln(w, "Prints the forcing table (time, each component, total; W m-2) as CSV on standard output, or writes it to --csv OUT; --json prints a summary instead.")
		})
	var ff forcingFlags
	ff.register(c, "component")
	csvOut := c.fs.String("csv", "", "write the forcing table to this CSV file instead of standard output")
	w, err := c.workspace(args, stderr)
	if err != nil {
		return err
	}
	s, err := ff.settings()
	if err != nil {
		return err
	}
	f, err := w.Forcing(s)
	if err != nil {
		return err
	}
	tab := analysis.ForcingTable(f)
	if *csvOut != "" {
		if err := writeTableFile(*csvOut, tab); err != nil {
			return err
		}
	}
	if *c.asJSON {
		return writeJSON(stdout, analysis.ForcingOutput(f))
	}
	if *csvOut == "" {
		if _, err := io.WriteString(stdout, tab.CSV()); err != nil {
			return err
		}
	}
	printWarnings(stderr, f.Warnings)
	return nil
}

func respondHelp(w io.Writer) {
	fmt.Fprintf(w, `Runs the model on the forcing of the --forcing components and prints JSON
(model, params, derived, fit, final, warnings, plus extras); --text prints a summary.
Model: the two-layer model (Held et al. 2010; Geoffroy et al. 2013)
  C dT/dt = F - lambda T - eps gamma (T - T0),  C0 dT0/dt = gamma (T - T0),
or the one-box model C dT/dt = F - lambda T. Defaults: lambda %g W m-2 K-1
(ECS = F2x/lambda = 3.0 K), gamma %g W m-2 K-1, C %g and C0 %g W yr m-2 K-1,
efficacy %g, F2x %g W m-2 (IPCC AR6). --ecs and --tcr set lambda and solve
gamma (one-box: C) so the simulated 70-year ramp gives that TCR; with
--tau-fast also C. Presets: %s.
Spin-up: at rest in --spinup-from (default 1850), each forcing rising linearly
to its mean over the first year; --spinup-from rest starts at rest at the first step.
Fit (--fit SERIES): least squares on the record (and --heat), the offset always
free; --free from lambda, gamma, efficacy, c, c0, aerosol, volcanic, solar,
scale:COMPONENT. Standard errors inflated for ARMA(1,1) residuals.
`, ebm.DefaultLambdaWPerM2K, ebm.DefaultGammaWPerM2K, ebm.DefaultCWYrPerM2K, ebm.DefaultC0WYrPerM2K, ebm.DefaultEfficacy,
		forcing.DefaultF2xWPerM2, presetNames())
}

func presetNames() string {
	var n []string
	for _, p := range ebm.Presets {
		n = append(n, p.Name)
	}
	return strings.Join(n, ", ")
}

func runRespond(args []string, stdout, stderr io.Writer) error {
	c := newResponseCommon("respond", "--forcing NAME:KIND[:SCALE] ... [--model onebox|twolayer] [--preset NAME] [--ecs X --tcr Y [--tau-fast T] | --lambda L --gamma G --c C --c0 C0 --efficacy E] [--f2x F] [--spinup-from YEAR|rest] [--fit SERIES --free p1,p2,... [--from T --to T] [--heat SERIES] [--driver NAME[:MIN:MAX]]] [--window FROM:TO] [--csv OUT] [--text] FILE...", stderr, respondHelp)
	var ff forcingFlags
	ff.register(c, "forcing")
	model := c.fs.String("model", ebm.ModelTwoLayer, "onebox or twolayer")
	preset := c.fs.String("preset", "", "start from a published calibration: "+presetNames())
	var ecs, tcr, tau, lambda, gamma, cap, cap0, eff, f2x, heatShare, heatWeight optFloat
	c.fs.Var(&ecs, "ecs", "equilibrium climate sensitivity, K (sets lambda = F2x/ECS)")
	c.fs.Var(&tcr, "tcr", "transient climate response, K (with --ecs: gamma, or C for the one-box model, solved from the simulated 70-year ramp)")
	c.fs.Var(&tau, "tau-fast", "fast time scale, years (with --ecs and --tcr: C solved as well)")
	c.fs.Var(&lambda, "lambda", fmt.Sprintf("feedback parameter lambda, W m-2 K-1 (default %g)", ebm.DefaultLambdaWPerM2K))
	c.fs.Var(&gamma, "gamma", fmt.Sprintf("heat exchange coefficient gamma, W m-2 K-1 (default %g)", ebm.DefaultGammaWPerM2K))
	c.fs.Var(&cap, "c", fmt.Sprintf("upper-layer heat capacity C, W yr m-2 K-1 (default %g)", ebm.DefaultCWYrPerM2K))
	c.fs.Var(&cap0, "c0", fmt.Sprintf("deep-ocean heat capacity C0, W yr m-2 K-1 (default %g)", ebm.DefaultC0WYrPerM2K))
	c.fs.Var(&eff, "efficacy", fmt.Sprintf("ocean heat uptake efficacy eps (default %g)", ebm.DefaultEfficacy))
	c.fs.Var(&f2x, "f2x", fmt.Sprintf("forcing of doubled CO2, W m-2 (default %g, IPCC AR6)", forcing.DefaultF2xWPerM2))
	spin := c.fs.String("spinup-from", "", "year in which the model is at rest before a linear ramp of each forcing (default 1850), or 'rest' to start at rest at the first step")
	fit := c.fs.String("fit", "", "fit the model to this temperature record (NAME or FILE:NAME)")
	free := c.fs.String("free", "", "comma-separated free parameters: lambda, gamma, efficacy, c, c0, aerosol, volcanic, solar, scale:COMPONENT (the offset is always fitted)")
	from := c.fs.String("from", "", "fit window start: YYYY, YYYY-MM or a decimal year")
	to := c.fs.String("to", "", "fit window end, inclusive for YYYY and YYYY-MM")
	heat := c.fs.String("heat", "", "also fit this heat-content record (ZJ), with its own offset")
	c.fs.Var(&heatShare, "heat-share", fmt.Sprintf("share of the model's heat uptake the heat record holds (default %g, the ocean's share)", ebm.DefaultHeatShare))
	c.fs.Var(&heatWeight, "heat-weight", "weight of squared heat residuals, K2 per ZJ2 (default: automatic, inverse residual variances)")
	var drv, wins namesFlag
	c.fs.Var(&drv, "driver", "with --fit: a short-term driver fitted with the model's response, NAME or NAME:MINLAG:MAXLAG (months; default 0:12); repeatable")
	c.fs.Var(&wins, "window", "attribute the change and trend over FROM:TO to each forcing (repeatable)")
	record := c.fs.String("record", "", "record trended beside the attribution (default: the --fit record)")
	noise := c.fs.String("noise", "ar1", "noise model of the record's trends: white, ar1, arma11 or arma11-ml")
	level := c.fs.Float64("level", 0.95, "confidence level of the intervals")
	csvOut := c.fs.String("csv", "", "write the run (time, forcing, T, T0, N, heat, each response; with --fit the record, fitted values and residuals) to this CSV file")
	text := c.fs.Bool("text", false, "print a readable summary instead of JSON")
	w, err := c.workspace(args, stderr)
	if err != nil {
		return err
	}
	fs, err := ff.settings()
	if err != nil {
		return err
	}
	if err := checkLevel(*level); err != nil {
		return err
	}
	if err := checkNoise(*noise, "white", "ar1", "arma11", "arma11-ml"); err != nil {
		return err
	}
	switch *model {
	case ebm.ModelOneBox, ebm.ModelTwoLayer:
	default:
		return usageError{fmt.Sprintf("--model %q: expected onebox or twolayer", *model)}
	}
	s := analysis.RespondSettings{Forcing: fs, Model: analysis.ModelSettings{Model: *model, Preset: *preset, ECS: ecs.v, TCR: tcr.v, TauFast: tau.v,
		Lambda: lambda.v, Gamma: gamma.v, C: cap.v, C0: cap0.v, Efficacy: eff.v, F2x: f2x.v}, Record: *record, Noise: *noise, Level: *level}
	switch strings.ToLower(strings.TrimSpace(*spin)) {
	case "":
	case "rest":
		s.Spinup = ebm.SpinupRest
	default:
		y, err := strconv.ParseFloat(*spin, 64)
		if err != nil {
			return usageError{fmt.Sprintf("--spinup-from %q: expected a year or 'rest'", *spin)}
		}
		s.SpinupFrom = &y
	}
	if *fit == "" && (*free != "" || *heat != "" || len(drv) > 0 || *from != "" || *to != "" || heatShare.v != nil || heatWeight.v != nil) {
		return usageError{"--free, --heat, --driver, --from, --to, --heat-share and --heat-weight need --fit SERIES"}
	}
	if *fit != "" {
		fs := &analysis.ResponseFitSettings{Target: *fit, From: *from, To: *to, Heat: *heat, HeatShare: heatShare.v, HeatWeight: heatWeight.v, Level: *level}
		for _, p := range strings.Split(*free, ",") {
			if p = strings.TrimSpace(p); p != "" {
				fs.Free = append(fs.Free, p)
			}
		}
		for _, d := range drv {
			ad, err := parseDriverSpec(d)
			if err != nil {
				return err
			}
			fs.Drivers = append(fs.Drivers, ad)
		}
		s.Fit = fs
	}
	for _, win := range wins {
		p, err := analysis.ParseWindow(win)
		if err != nil {
			return usageError{err.Error()}
		}
		s.Windows = append(s.Windows, p)
	}
	r, err := w.Respond(s)
	if err != nil {
		return err
	}
	if *csvOut != "" {
		if err := writeTableFile(*csvOut, analysis.ResponseTable(r)); err != nil {
			return err
		}
	}
	if *text {
		printRespond(stdout, r)
		return nil
	}
	return writeJSON(stdout, analysis.RespondOutput(r))
}

func printRespond(w io.Writer, r *analysis.Response) {
	p, d := r.Params, r.Derived
	fmt.Fprintf(w, "%s model: lambda %s W m-2 K-1, C %s W yr m-2 K-1", r.Model, num(p.LambdaWPerM2K), num(p.CWYrPerM2K))
	if r.Model == ebm.ModelTwoLayer {
		fmt.Fprintf(w, ", gamma %s W m-2 K-1, C0 %s W yr m-2 K-1, efficacy %s", num(p.GammaWPerM2K), num(p.C0WYrPerM2K), num(p.Efficacy))
	}
	fmt.Fprintf(w, "; F2x %s W m-2\n", num(p.F2xWPerM2))
	fmt.Fprintf(w, "ECS %s K, TCR %s K; fast time scale %s years (amplitude %s)", num(d.ECSK), num(d.TCRK), num(d.TauFastYears), num(d.AFast))
	if d.TauSlowYears != nil {
		fmt.Fprintf(w, ", slow %s years (amplitude %s)", num(*d.TauSlowYears), num(d.ASlow))
	}
	fmt.Fprintln(w)
	f := r.Run.Final
	fmt.Fprintf(w, "at %s: T %s K, T0 %s K, N %s W m-2, heat gained since rest %s ZJ\n", num(f.TimeYear), num(f.TK), num(f.T0K), num(f.NWPerM2), num(f.HeatZJ))
	if ft := r.Fit; ft != nil {
		fmt.Fprintf(w, "fit to %d values: RMSE %s K, R2 %s, ARMA(1,1) inflation nu %s\n", ft.N, num(ft.RMSE), num(ft.R2), num(ft.Nu))
		tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
		fmt.Fprintf(tw, "parameter\testimate\tstderr\t%g%% interval\n", 100*ft.Level)
		for _, e := range ft.Estimates {
			fmt.Fprintf(tw, "%s\t%s\t%s\t%s to %s\n", e.Name, num(e.Value), num(e.StdErr), num(e.Low), num(e.High))
		}
		tw.Flush()
		fmt.Fprintf(w, "implied ECS %s K (%s to %s), TCR %s K (%s to %s)\n", num(ft.ECS.Value), optNum(ft.ECS.Low), optNum(ft.ECS.High),
			num(ft.TCR.Value), optNum(ft.TCR.Low), optNum(ft.TCR.High))
	}
	if r.Adjust != nil {
		for _, d := range r.Adjust.Drivers {
			fmt.Fprintf(w, "driver %s at lag %d months: %s per unit (standard error %s)\n", d.Name, d.LagMonths, num(d.Estimate), num(d.StdErrARMA11))
		}
	}
	for _, t := range r.ResidualTrends {
		fmt.Fprintf(w, "residual trend %s to %s (%s): %s +- %s K per decade\n", t.From, t.To, t.Noise, num(t.SlopePerDecade), num(t.StderrPerDecade))
	}
	for _, a := range r.Attribution {
		fmt.Fprintf(w, "attribution %s to %s:\n", a.From, a.To)
		tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
		fmt.Fprintln(tw, "forcing\tchange (K)\ttrend (K/decade)\tforcing change (W m-2)")
		for _, c := range append(a.Components, a.Total) {
			fmt.Fprintf(tw, "%s\t%s\t%s\t%s\n", c.Name, num(c.ChangeK), num(c.SlopePerDecade), num(c.ForcingChangeWPerM2))
		}
		if a.Record != nil {
			fmt.Fprintf(tw, "record %s\t%s\t%s +- %s\t\n", a.Record.Series, optNum(a.RecordChangeK), num(a.Record.SlopePerDecade), num(a.Record.StderrPerDecade))
		}
		tw.Flush()
	}
	for _, n := range r.Notes {
		fmt.Fprintln(w, "note: "+n)
	}
	printWarnings(w, r.Warnings)
}
