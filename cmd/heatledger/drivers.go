package main

import (
	"fmt"
	"io"
	"strconv"
	"strings"
	"text/tabwriter"

	"heatledger/core/analysis"
	"heatledger/core/drivers"
)

func init() {
	commands = append(commands,
		command{"adjust", "remove short-term factors (ocean index, aerosol, solar...) by lagged regression; adjusted series and its trend", runAdjust},
	)
}

// namesFlag collects a repeated flag's values.
type namesFlag []string

func (n *namesFlag) String() string     { return strings.Join(*n, ",") }
func (n *namesFlag) Set(s string) error { *n = append(*n, s); return nil }

// parseDriverSpec reads NAME or NAME:MINLAG:MAXLAG (months). NAME may itself
// be FILE:NAME; the lag form is recognised when either of the last two
// colon-separated parts is a number or empty.
func parseDriverSpec(s string) (analysis.AdjustDriver, error) {
	bad := func(why string) error {
		return usageError{fmt.Sprintf("--driver %q: %s: expected NAME or NAME:MINLAG:MAXLAG in whole months, e.g. aod:0:24", s, why)}
	}
	parts := strings.Split(s, ":")
	n := len(parts)
	numeric := func(p string) bool {
		p = strings.TrimSpace(p)
		if p == "" {
			return true
		}
		_, err := strconv.ParseFloat(p, 64)
		return err == nil
	}
	if n < 2 || (!numeric(parts[n-1]) && !numeric(parts[n-2])) {
		if strings.TrimSpace(s) == "" {
			return analysis.AdjustDriver{}, bad("no name")
		}
		return analysis.AdjustDriver{Name: s}, nil
	}
	if n < 3 {
		return analysis.AdjustDriver{}, bad("a single lag")
	}
	lo, err1 := strconv.Atoi(strings.TrimSpace(parts[n-2]))
	hi, err2 := strconv.Atoi(strings.TrimSpace(parts[n-1]))
	if err1 != nil || err2 != nil {
		return analysis.AdjustDriver{}, bad("the lags are not whole numbers")
	}
	if lo > hi {
		return analysis.AdjustDriver{}, bad(fmt.Sprintf("the lag range %d to %d ends before it starts", lo, hi))
	}
	name := strings.Join(parts[:n-2], ":")
	if strings.TrimSpace(name) == "" {
		return analysis.AdjustDriver{}, bad("no name")
	}
	return analysis.AdjustDriver{Name: name, MinLag: &lo, MaxLag: &hi}, nil
}

func runAdjust(args []string, stdout, stderr io.Writer) error {
	fs := newFlagSet("adjust", stderr)
	var rf readFlags
	rf.register(fs)
	asJSON := fs.Bool("json", false, "print one JSON object")
	target := fs.String("target", "", "the series to adjust: NAME, or FILE:NAME when several files hold that name")
	var specs, smooth, detrend, breaks, wins namesFlag
	fs.Var(&specs, "driver", "a driver NAME or NAME:MINLAG:MAXLAG (months searched; default 0:12; equal values fix the lag); repeat for each driver")
	fs.Var(&smooth, "smooth", "use the centred three-month running mean of this driver (repeatable)")
	fs.Var(&detrend, "detrend", "remove this driver's own line over the fit window before the fit (repeatable)")
	harmonics := fs.Int("harmonics", -1, "annual-cycle harmonics 0, 1 or 2 (default: 2 for monthly, 0 for annual targets)")
	trendKind := fs.String("trend", "linear", "trend term: linear, none, broken (with --break) or series (with --trend-series)")
	fs.Var(&breaks, "break", "a break time of the broken trend: YYYY, YYYY-MM or a decimal year (repeatable)")
	trendSeries := fs.String("trend-series", "", "the series used as the trend term (with --trend series), e.g. a forced response")
	from := fs.String("from", "", "fit window start: YYYY, YYYY-MM or a decimal year (default: the target's start)")
	to := fs.String("to", "", "fit window end, inclusive for YYYY and YYYY-MM (default: the target's end)")
	fs.Var(&wins, "window", "also report raw and adjusted trends over FROM:TO (repeatable); with exactly two, the table of each factor's contribution to the trend change B - A")
	noise := fs.String("noise", "ar1", "noise model of the raw and adjusted trends: white, ar1, arma11 or arma11-ml")
	level := fs.Float64("level", 0.95, "confidence level of those trends")
	csvOut := fs.String("csv", "", "write the target, fitted, adjusted series and each contribution to this CSV file")
	fs.Usage = func() {
		fmt.Fprintln(stderr, "usage: heatledger adjust --target NAME --driver NAME[:MINLAG:MAXLAG] ... [--harmonics H] [--trend linear|none|broken|series] [--from T] [--to T] [--window FROM:TO] [--noise ar1] [--csv OUT] [--json] FILE...")
		fs.PrintDefaults()
	}
	names, err := parse(fs, args)
	if err != nil {
		return err
	}
	if len(names) == 0 {
		return usageError{"no input files: give one or more CSV files"}
	}
	if *target == "" {
		return usageError{"--target NAME is required"}
	}
	if len(specs) == 0 {
		return usageError{"give at least one --driver NAME[:MINLAG:MAXLAG]"}
	}
	s := analysis.AdjustSettings{Target: *target, Harmonics: harmonics, Trend: *trendKind, Breaks: breaks,
		TrendSeries: *trendSeries, From: *from, To: *to, Noise: *noise, Level: *level}
	for _, sp := range specs {
		d, err := parseDriverSpec(sp)
		if err != nil {
			return err
		}
		s.Drivers = append(s.Drivers, d)
	}
	mark := func(list namesFlag, flag string, set func(*analysis.AdjustDriver)) error {
		for _, n := range list {
			found := false
			for i := range s.Drivers {
				if s.Drivers[i].Name == n {
					set(&s.Drivers[i])
					found = true
				}
			}
			if !found {
				return usageError{fmt.Sprintf("--%s %q: not one of the --driver names", flag, n)}
			}
		}
		return nil
	}
	if err := mark(smooth, "smooth", func(d *analysis.AdjustDriver) { d.Smooth3 = true }); err != nil {
		return err
	}
	if err := mark(detrend, "detrend", func(d *analysis.AdjustDriver) { d.Detrend = true }); err != nil {
		return err
	}
	if *harmonics < -1 || *harmonics > drivers.MaxHarmonics {
		return usageError{fmt.Sprintf("--harmonics %d: expected 0, 1 or 2", *harmonics)}
	}
	switch *trendKind {
	case drivers.TrendLinear, drivers.TrendNone:
	case drivers.TrendBroken:
		if len(breaks) == 0 {
			return usageError{"--trend broken needs at least one --break T"}
		}
	case drivers.TrendSeries:
		if *trendSeries == "" {
			return usageError{"--trend series needs --trend-series NAME"}
		}
	default:
		return usageError{fmt.Sprintf("--trend %q: expected linear, none, broken or series", *trendKind)}
	}
	if len(breaks) > 0 && *trendKind != drivers.TrendBroken {
		return usageError{"--break needs --trend broken"}
	}
	if *trendSeries != "" && *trendKind != drivers.TrendSeries {
		return usageError{"--trend-series needs --trend series"}
	}
	if err := checkNoise(*noise, "white", "ar1", "arma11", "arma11-ml"); err != nil {
		return err
	}
	if err := checkLevel(*level); err != nil {
		return err
	}
	// The fit window first (adjusted_trend), then the windows asked for.
	s.Windows = [][2]string{{"", ""}}
	var ws [][2]string
	for _, win := range wins {
		p, err := analysis.ParseWindow(win)
		if err != nil {
			return usageError{err.Error()}
		}
		ws = append(ws, p)
	}
	s.Windows = append(s.Windows, ws...)
	if len(ws) == 2 {
		s.Change = &[2][2]string{ws[0], ws[1]}
	}

	w, err := loadWorkspace(&rf, names, stderr)
	if err != nil {
		return err
	}
	r, err := w.Adjust(s)
	if err != nil {
		return err
	}
	if *csvOut != "" {
		if err := writeFileWith(*csvOut, r.WriteCSV); err != nil {
			return err
		}
	}
	if *asJSON {
		return writeJSON(stdout, analysis.AdjustOutput(r))
	}
	printAdjust(stdout, r)
	return nil
}

func printAdjust(w io.Writer, r *drivers.Result) {
	unit := r.Unit
	if unit == "" {
		unit = "units"
	}
	fmt.Fprintf(w, "%s, fit window %s to %s: %d months used (%s to %s), %d dropped\n", r.Target, r.From, r.To, r.N, r.Start, r.End, r.Dropped)
	fmt.Fprintf(w, "model: %s trend, %d driver(s), %d annual harmonic(s); R2 %s, AIC %s, residual SD %s %s\n",
		r.TrendKind, len(r.Drivers), r.Harmonics, num(r.R2), num(r.AIC), num(r.ResidualSD), unit)
	if tt := r.Trend; tt.SlopePerDecade != nil {
		fmt.Fprintf(w, "trend term: %s %s per decade (standard error %s with the ARMA(1,1) inflation, %s OLS)\n",
			num(*tt.SlopePerDecade), unit, num(*tt.StderrARMA11PerDecade), num(*tt.StderrOLSPerDecade))
		for _, s := range tt.Segments {
			fmt.Fprintf(w, "  segment %s to %s: %s per decade (standard error %s)\n", num(s.From), num(s.To), num(s.SlopePerDecade), num(s.StderrARMA11PerDecade))
		}
	} else if tt.SeriesCoef != nil {
		fmt.Fprintf(w, "trend term: %s x %s (standard error %s)\n", num(tt.SeriesCoef.Estimate), tt.Series, num(tt.SeriesCoef.StdErrARMA11))
	}
	fmt.Fprintf(w, "residual autocorrelation %s, %s; ARMA(1,1) inflation nu %s; condition number %s\n", num(r.Rho1), num(r.Rho2), num(r.Nu), num(r.Cond))
	if len(r.Drivers) > 0 {
		tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
		fmt.Fprintln(tw, "driver\tlag (months)\tcoefficient\tstderr\tstderr arma11\teffect of 1 sd\tVIF\tRSS at lag -1\tRSS at lag +1")
		for _, d := range r.Drivers {
			fmt.Fprintf(tw, "%s\t%d\t%s\t%s\t%s\t%s\t%s\t%s\t%s\n", d.Name, d.LagMonths, num(d.Estimate), num(d.StdErr), num(d.StdErrARMA11),
				num(d.Effect1SD), num(d.VIF), plusNum(d.RSSIncreaseMinus1), plusNum(d.RSSIncreasePlus1))
		}
		tw.Flush()
	}
	for i, t := range r.Trends {
		label := "window"
		if i == 0 {
			label = "fit window"
		}
		fmt.Fprintf(w, "%s %s to %s (%s): raw %s +- %s, adjusted %s +- %s %s per decade\n", label, t.From, t.To, t.Raw.Noise,
			num(t.Raw.SlopePerDecade), num(t.Raw.StderrPerDecade), num(t.Adjusted.SlopePerDecade), num(t.Adjusted.StderrPerDecade), unit)
	}
	if c := r.Change; c != nil {
		fmt.Fprintf(w, "trend change from %s..%s (A) to %s..%s (B), per decade:\n", c.A.From, c.A.To, c.B.From, c.B.To)
		tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
		fmt.Fprintln(tw, "term\tA\tB\tB - A")
		rows := append(append([]drivers.ChangeRow{c.Raw}, c.Drivers...), c.Cycle, c.Adjusted)
		for _, row := range rows {
			fmt.Fprintf(tw, "%s\t%s\t%s\t%s\n", row.Term, num(row.APerDecade), num(row.BPerDecade), num(row.ChangePerDecade))
		}
		tw.Flush()
	}
	printWarnings(w, r.Warnings)
}

func plusNum(p *float64) string {
	if p == nil {
		return "-"
	}
	return "+" + num(*p)
}
