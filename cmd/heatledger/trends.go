package main

import (
	"encoding/json"
	"flag"
	"fmt"
	"io"
	"os"
	"strconv"
	"strings"

	"heatledger/core/analysis"
	"heatledger/core/trend"
)

func init() {
	commands = append(commands,
		command{"trend", "trend of a series over a window, with its uncertainty under a noise model", runTrend},
		command{"compare", "trends in two windows, their difference and the broken-stick test of a rate change", runCompare},
		command{"grid", "trend over every start and end (the trend grid)", runGrid},
		command{"breaks", "change points: piecewise-linear (or step) fits with a Monte Carlo test of each break", runBreaks},
		command{"sen", "Theil-Sen slope and Mann-Kendall test", runSen},
	)
}

// common sets up a command's flags: reading options, --json and --series
// (series is nil for commands that name their series otherwise).
type common struct {
	fs     *flag.FlagSet
	rf     readFlags
	asJSON *bool
	series *string
}

func newCommon(name, synopsis string, stderr io.Writer) *common {
	c := &common{fs: newFlagSet(name, stderr)}
	c.rf.register(c.fs)
	c.asJSON = c.fs.Bool("json", false, "print one JSON object")
	c.series = c.fs.String("series", "", "the series to analyse: NAME, or FILE:NAME when several files hold that name")
	c.fs.Usage = func() {
		fmt.Fprintln(stderr, "usage: heatledger "+name+" "+synopsis)
		c.fs.PrintDefaults()
	}
	return c
}

// workspace parses the arguments and reads the files.
func (c *common) workspace(args []string, stderr io.Writer) (*analysis.Workspace, error) {
	names, err := parse(c.fs, args)
	if err != nil {
		return nil, err
	}
	if len(names) == 0 {
		return nil, usageError{"no input files: give one or more CSV files"}
	}
	if c.series != nil && *c.series == "" {
		return nil, usageError{"--series NAME is required"}
	}
	return loadWorkspace(&c.rf, names, stderr)
}

// loadWorkspace reads the named files with the reading flags. Every file
// that fails is reported on stderr as FILE:LINE:COLUMN: message, and then
// the command fails (exit 1).
func loadWorkspace(rf *readFlags, names []string, stderr io.Writer) (*analysis.Workspace, error) {
	opt, err := rf.options()
	if err != nil {
		return nil, err
	}
	files, err := readFiles(names)
	if err != nil {
		return nil, err
	}
	w := analysis.NewWorkspace(files, opt)
	failed := false
	for _, l := range w.Files {
		if l.Err != nil {
			fmt.Fprintln(stderr, l.Err)
			failed = true
		}
	}
	if failed {
		return nil, errReported
	}
	return w, nil
}

// writeFileWith creates a file and fills it with write, closing it in every
// case and reporting the first error.
func writeFileWith(path string, write func(io.Writer) error) error {
	f, err := os.Create(path)
	if err != nil {
		return err
	}
	if err := write(f); err != nil {
		f.Close()
		return err
	}
	return f.Close()
}

func writeJSON(w io.Writer, v any) error {
	enc := json.NewEncoder(w)
	enc.SetIndent("", "  ")
	return enc.Encode(v)
}

func checkLevel(level float64) error {
	if !(level > 0 && level < 1) {
		return usageError{fmt.Sprintf("--level %v: expected a value between 0 and 1, e.g. 0.95", level)}
	}
	return nil
}

func checkNoise(noise string, allowed ...string) error {
	for _, a := range allowed {
		if noise == a {
			return nil
		}
	}
	return usageError{fmt.Sprintf("--noise %q: expected %s", noise, strings.Join(allowed, ", "))}
}

func num(v float64) string { return strconv.FormatFloat(v, 'g', 4, 64) }

func optNum(p *float64) string {
	if p == nil {
		return "-"
	}
	return num(*p)
}

func printWarnings(w io.Writer, ws []string) {
	for _, m := range ws {
		fmt.Fprintln(w, "note: "+m)
	}
}

func runTrend(args []string, stdout, stderr io.Writer) error {
	c := newCommon("trend", "--series NAME [--from T] [--to T] [--noise white|ar1|arma11|arma11-ml] [--level 0.95] [--per decade|year|century] FILE...", stderr)
	from := c.fs.String("from", "", "window start: YYYY, YYYY-MM or a decimal year (default: the series' start)")
	to := c.fs.String("to", "", "window end, inclusive for YYYY and YYYY-MM (default: the series' end)")
	noise := c.fs.String("noise", "ar1", "noise model: white, ar1 (Santer et al. 2008), arma11 (Foster and Rahmstorf 2011) or arma11-ml")
	level := c.fs.Float64("level", 0.95, "confidence level")
	per := c.fs.String("per", "decade", "text output unit of the slope: decade, year or century")
	anomalies := c.fs.Bool("anomalies", false, "monthly series: remove each calendar month's mean first (the mean seasonal cycle)")
	w, err := c.workspace(args, stderr)
	if err != nil {
		return err
	}
	if err := checkNoise(*noise, "white", "ar1", "arma11", "arma11-ml"); err != nil {
		return err
	}
	if err := checkLevel(*level); err != nil {
		return err
	}
	scale := map[string]float64{"decade": 1, "year": 0.1, "century": 10}[*per]
	if scale == 0 {
		return usageError{fmt.Sprintf("--per %q: expected decade, year or century", *per)}
	}
	rs, err := w.Trends(analysis.TrendSettings{Series: []string{*c.series}, From: *from, To: *to, Noise: *noise, Level: *level, Anomalies: *anomalies})
	if err != nil {
		return err
	}
	r := rs[0]
	if *c.asJSON {
		return writeJSON(stdout, r)
	}
	ser, _ := w.Find(*c.series)
	unit := ser.Unit
	if unit == "" {
		unit = "units"
	}
	fmt.Fprintf(stdout, "%s, %s to %s, %d values, noise %s\n", r.Series, r.From, r.To, r.N, r.Noise)
	fmt.Fprintf(stdout, "trend %s %s per %s (standard error %s; %g%% interval %s to %s); p for no trend: %s\n",
		num(r.SlopePerDecade*scale), unit, *per, num(r.StderrPerDecade*scale), 100*r.Level, num(r.CILowPerDecade*scale), num(r.CIHighPerDecade*scale), analysis.FmtP(r.PValue))
	fmt.Fprintf(stdout, "residual lag-1 and lag-2 autocorrelation %s, %s; phi %s; nu %s; effective n %s; degrees of freedom %s; residual SD %s\n",
		num(r.Rho1), num(r.Rho2), optNum(r.Phi), optNum(r.Nu), optNum(r.NEff), optNum(r.DOF), num(r.ResidualSD))
	printWarnings(stdout, r.Warnings)
	return nil
}

// windowsFlag collects repeated --window FROM:TO.
type windowsFlag []string

func (w *windowsFlag) String() string     { return strings.Join(*w, ",") }
func (w *windowsFlag) Set(s string) error { *w = append(*w, s); return nil }

func runCompare(args []string, stdout, stderr io.Writer) error {
	c := newCommon("compare", "--series NAME --window FROM:TO --window FROM:TO [--noise ...] [--level 0.95] FILE...", stderr)
	var wins windowsFlag
	c.fs.Var(&wins, "window", "a window FROM:TO (give two: A then B)")
	noise := c.fs.String("noise", "ar1", "noise model: white, ar1, arma11 or arma11-ml")
	level := c.fs.Float64("level", 0.95, "confidence level")
	w, err := c.workspace(args, stderr)
	if err != nil {
		return err
	}
	if len(wins) != 2 {
		return usageError{fmt.Sprintf("give exactly two --window FROM:TO (got %d)", len(wins))}
	}
	var ab [2][2]string
	for i, s := range wins {
		if ab[i], err = analysis.ParseWindow(s); err != nil {
			return usageError{err.Error()}
		}
	}
	if err := checkNoise(*noise, "white", "ar1", "arma11", "arma11-ml"); err != nil {
		return err
	}
	if err := checkLevel(*level); err != nil {
		return err
	}
	r, err := w.Compare(analysis.CompareSettings{Series: *c.series, WindowA: ab[0], WindowB: ab[1], Noise: *noise, Level: *level})
	if err != nil {
		return err
	}
	if *c.asJSON {
		return writeJSON(stdout, r)
	}
	for i, t := range r.Windows {
		fmt.Fprintf(stdout, "window %c %s to %s: %s per decade (standard error %s, n %d)\n", 'A'+i, t.From, t.To, num(t.SlopePerDecade), num(t.StderrPerDecade), t.N)
	}
	fmt.Fprintf(stdout, "difference B - A: %s per decade, standard error %s, p = %s\n", num(r.DifferencePerDecade), optNum(r.StderrPerDecade), optNum(r.PValue))
	if b := r.BrokenStick; b != nil {
		fmt.Fprintf(stdout, "broken stick with a break at %s: slope change %s per decade (standard error %s), p = %s\n", num(b.Break), num(b.SlopeChangePerDecade), num(b.StderrPerDecade), num(b.PValue))
	}
	printWarnings(stdout, r.Warnings)
	return nil
}

func runGrid(args []string, stdout, stderr io.Writer) error {
	c := newCommon("grid", "--series NAME [--min-years N] [--step year|month] [--noise ar1|arma11] [--csv OUT] FILE...", stderr)
	minYears := c.fs.Float64("min-years", 10, "shortest window in years")
	step := c.fs.String("step", "year", "window starts and ends at every year or every month")
	noise := c.fs.String("noise", "ar1", "noise model: ar1 or arma11")
	level := c.fs.Float64("level", 0.95, "confidence level")
	csvOut := c.fs.String("csv", "", "write one row per window to this CSV file")
	w, err := c.workspace(args, stderr)
	if err != nil {
		return err
	}
	if *step != "year" && *step != "month" {
		return usageError{fmt.Sprintf("--step %q: expected year or month", *step)}
	}
	if err := checkNoise(*noise, "ar1", "arma11"); err != nil {
		return err
	}
	if err := checkLevel(*level); err != nil {
		return err
	}
	if !(*minYears > 0) {
		return usageError{"--min-years: expected a positive number of years"}
	}
	g, err := w.Grid(analysis.GridSettings{Series: *c.series, MinYears: *minYears, Step: *step, Noise: *noise, Level: *level})
	if err != nil {
		return err
	}
	if *csvOut != "" {
		if err := writeFileWith(*csvOut, g.WriteCSV); err != nil {
			return err
		}
	}
	if *c.asJSON {
		return writeJSON(stdout, g)
	}
	fmt.Fprintf(stdout, "%d windows of at least %g years (steps: %s, noise %s)\n", g.Cells, g.MinYears, g.Step, g.Noise)
	fmt.Fprintf(stdout, "%d exclude the full-record trend; about %.0f would by chance alone if the rate never changed\n", g.ExcludingFullTrend, g.ExpectedByChance)
	printWarnings(stdout, g.Warnings)
	return nil
}

func runBreaks(args []string, stdout, stderr io.Writer) error {
	c := newCommon("breaks", "--series NAME [--max K] [--min-years N] [--sims N] [--seed S] [--model slope|mean] FILE...", stderr)
	from := c.fs.String("from", "", "window start (default: the series' start)")
	to := c.fs.String("to", "", "window end (default: the series' end)")
	maxK := c.fs.Int("max", 3, "largest number of breaks tried (1 to 4)")
	minYears := c.fs.Float64("min-years", 10, "shortest segment in years")
	sims := c.fs.Int("sims", 500, "Monte Carlo simulations per tested break")
	seed := c.fs.Uint64("seed", 1, "random seed (same seed, same result)")
	model := c.fs.String("model", "slope", "slope (continuous piecewise-linear trend) or mean (steps in the mean)")
	noise := c.fs.String("noise", "arma11", "noise of the Monte Carlo null: arma11, ar1 or white")
	w, err := c.workspace(args, stderr)
	if err != nil {
		return err
	}
	if *maxK < 1 || *maxK > 4 {
		return usageError{"--max: expected 1 to 4"}
	}
	if *model != "slope" && *model != "mean" {
		return usageError{fmt.Sprintf("--model %q: expected slope or mean", *model)}
	}
	if err := checkNoise(*noise, "arma11", "ar1", "white"); err != nil {
		return err
	}
	if *sims < 1 {
		return usageError{"--sims: expected at least 1"}
	}
	if !(*minYears > 0) {
		return usageError{"--min-years: expected a positive number of years"}
	}
	r, _, err := w.Breaks(analysis.BreaksSettings{Series: *c.series, From: *from, To: *to, Max: *maxK, MinYears: *minYears, Sims: *sims, Seed: *seed, Model: *model, Noise: *noise}, nil, nil)
	if err != nil {
		return err
	}
	if *c.asJSON {
		return writeJSON(stdout, r)
	}
	fmt.Fprintf(stdout, "%d break(s) selected\n", r.Selected)
	for _, b := range r.Breaks {
		fmt.Fprintf(stdout, "break at %s (interval %s to %s)\n", num(b.Time), num(b.CILow), num(b.CIHigh))
	}
	for _, s := range r.Segments {
		if *model == "mean" {
			fmt.Fprintf(stdout, "segment %s to %s: mean %s\n", num(s.From), num(s.To), optNum(s.Mean))
		} else {
			fmt.Fprintf(stdout, "segment %s to %s: %s per decade\n", num(s.From), num(s.To), num(s.SlopePerDecade))
		}
	}
	printWarnings(stdout, r.Warnings)
	return nil
}

func runSen(args []string, stdout, stderr io.Writer) error {
	c := newCommon("sen", "--series NAME [--from T] [--to T] [--correction none|hamed-rao|prewhiten] FILE...", stderr)
	from := c.fs.String("from", "", "window start (default: the series' start)")
	to := c.fs.String("to", "", "window end (default: the series' end)")
	corr := c.fs.String("correction", "none", "autocorrelation correction: none, hamed-rao (Hamed and Rao 1998) or prewhiten (Yue et al. 2002)")
	level := c.fs.Float64("level", 0.95, "confidence level of the Sen slope interval")
	w, err := c.workspace(args, stderr)
	if err != nil {
		return err
	}
	switch *corr {
	case "none", "hamed-rao", "prewhiten":
	default:
		return usageError{fmt.Sprintf("--correction %q: expected none, hamed-rao or prewhiten", *corr)}
	}
	if err := checkLevel(*level); err != nil {
		return err
	}
	r, err := w.Sen(analysis.SenSettings{Series: *c.series, From: *from, To: *to, Correction: *corr, Level: *level})
	if err != nil {
		return err
	}
	if *c.asJSON {
		return writeJSON(stdout, r)
	}
	fmt.Fprintf(stdout, "Sen slope %s per decade (%g%% interval %s to %s)\n", num(r.SenSlopePerDecade), 100*r.Level, num(r.CILowPerDecade), num(r.CIHighPerDecade))
	fmt.Fprintf(stdout, "Mann-Kendall S %d, variance %s, Z %s, p = %s, Kendall's tau %s\n", r.S, num(r.VarS), num(r.Z), num(r.PValue), num(r.Tau))
	printWarnings(stdout, r.Warnings)
	return nil
}

var _ = trend.NoiseAR1
