// Command heatledger is Heatledger's command-line front end: it reads the
// same CSV files as the page and prints the same numbers, as text or JSON,
// through core/analysis.
//
// Exit status: 0 on success, 1 when a file or an analysis fails (the message
// on stderr says where), 2 on a usage error.
package main

import (
	"encoding/json"
	"errors"
	"flag"
	"fmt"
	"io"
	"os"
	"sort"
	"strconv"
	"strings"
	"text/tabwriter"

	"heatledger/core/analysis"
	"heatledger/core/chart"
	"heatledger/core/series"
)

// usageError marks errors in how the command was called (exit 2).
type usageError struct{ msg string }

func (e usageError) Error() string { return e.msg }

// failure marks an error already printed (exit 1).
var errReported = errors.New("reported")

type command struct {
	name    string
	summary string
	run     func(args []string, stdout, stderr io.Writer) error
}

// commands lists the subcommands; other files append theirs in init.
var commands = []command{
	{"inspect", "list the series in CSV files: name, unit, resolution, span, count, missing", runInspect},
}

func main() {
	os.Exit(run(os.Args[1:], os.Stdout, os.Stderr))
}

func run(args []string, stdout, stderr io.Writer) (code int) {
	defer func() {
		if r := recover(); r != nil {
			fmt.Fprintf(stderr, "heatledger: internal error: %v\n", r)
			code = 1
		}
	}()
	if len(args) == 0 || args[0] == "-h" || args[0] == "--help" || args[0] == "help" {
		usage(stderr)
		if len(args) == 0 {
			return 2
		}
		return 0
	}
	for _, c := range commands {
		if c.name == args[0] {
			err := c.run(args[1:], stdout, stderr)
			var ue usageError
			switch {
			case err == nil:
				return 0
			case errors.As(err, &ue):
				fmt.Fprintf(stderr, "heatledger %s: %s\n", c.name, ue.msg)
				return 2
			case errors.Is(err, flag.ErrHelp):
				return 0
			case errors.Is(err, errReported):
				return 1
			default:
				fmt.Fprintln(stderr, err)
				return 1
			}
		}
	}
	fmt.Fprintf(stderr, "heatledger: unknown command %q\n", args[0])
	usage(stderr)
	return 2
}

func usage(w io.Writer) {
	fmt.Fprintln(w, "usage: heatledger COMMAND [options] FILE...")
	fmt.Fprintln(w, "commands:")
	for _, c := range commands {
		fmt.Fprintf(w, "  %-10s %s\n", c.name, c.summary)
	}
	fmt.Fprintln(w, "Run 'heatledger COMMAND -h' for a command's options.")
}

// readFlags are the reading options every command shares.
type readFlags struct {
	delimiter string
	missing   string
	scale     float64
	dateOrder string
	minDays   int
}

func (r *readFlags) register(fs *flag.FlagSet) {
	fs.StringVar(&r.delimiter, "delimiter", "", "field delimiter: comma, semicolon, tab or space (default: detect)")
	fs.StringVar(&r.missing, "missing", "", "comma-separated numeric codes meaning missing (default -999,-999.9,-9999,-99.9,-99.99,-32768; 'none' for none)")
	fs.Float64Var(&r.scale, "scale", 1, "multiply every value by this (e.g. 0.01 for hundredths)")
	fs.StringVar(&r.dateOrder, "date-order", "", "order of D/M/Y style dates: dmy or mdy (default: refuse them as ambiguous)")
	fs.IntVar(&r.minDays, "min-days", series.DefaultMinDays, "daily data: days with values a month needs for its mean")
}

func (r *readFlags) options() (series.Options, error) {
	var o series.Options
	switch strings.ToLower(r.delimiter) {
	case "":
	case "comma", ",":
		o.Delimiter = ','
	case "semicolon", ";":
		o.Delimiter = ';'
	case "tab", "\\t", "\t":
		o.Delimiter = '\t'
	case "space", " ", "spaces":
		o.Delimiter = ' '
	default:
		return o, usageError{fmt.Sprintf("--delimiter %q: expected comma, semicolon, tab or space", r.delimiter)}
	}
	switch strings.ToLower(r.missing) {
	case "":
	case "none":
		o.Sentinels = []float64{}
	default:
		for _, p := range strings.Split(r.missing, ",") {
			v, err := strconv.ParseFloat(strings.TrimSpace(p), 64)
			if err != nil {
				return o, usageError{fmt.Sprintf("--missing: %q is not a number", p)}
			}
			o.Sentinels = append(o.Sentinels, v)
		}
	}
	if r.scale == 0 {
		return o, usageError{"--scale 0 would erase every value"}
	}
	o.Scale = r.scale
	switch r.dateOrder {
	case "", "dmy", "mdy":
		o.DateOrder = r.dateOrder
	default:
		return o, usageError{fmt.Sprintf("--date-order %q: expected dmy or mdy", r.dateOrder)}
	}
	if r.minDays < 1 || r.minDays > 31 {
		return o, usageError{"--min-days: expected 1 to 31"}
	}
	o.MinDaysPerMonth = r.minDays
	return o, nil
}

// parse parses flags that may be given before or after the file names.
func parse(fs *flag.FlagSet, args []string) ([]string, error) {
	var files []string
	rest := args
	for {
		if err := fs.Parse(rest); err != nil {
			if errors.Is(err, flag.ErrHelp) {
				return nil, err
			}
			return nil, usageError{err.Error()}
		}
		rest = fs.Args()
		if len(rest) == 0 {
			break
		}
		files = append(files, rest[0])
		rest = rest[1:]
	}
	return files, nil
}

func newFlagSet(name string, stderr io.Writer) *flag.FlagSet {
	fs := flag.NewFlagSet("heatledger "+name, flag.ContinueOnError)
	fs.SetOutput(stderr)
	return fs
}

// readFiles loads the named files ("-" is standard input).
func readFiles(names []string) ([]analysis.File, error) {
	var out []analysis.File
	for _, n := range names {
		var data []byte
		var err error
		if n == "-" {
			data, err = io.ReadAll(io.LimitReader(os.Stdin, series.DefaultMaxBytes+1))
		} else {
			var st os.FileInfo
			if st, err = os.Stat(n); err == nil && st.Size() > series.DefaultMaxBytes {
				return nil, fmt.Errorf("%s:1:1: file is %.1f MiB, over the size limit of %d MiB", n, float64(st.Size())/(1<<20), series.DefaultMaxBytes>>20)
			}
			if err == nil {
				data, err = os.ReadFile(n)
			}
		}
		if err != nil {
			return nil, fmt.Errorf("%s: %v", n, err)
		}
		out = append(out, analysis.File{Name: n, Data: data})
	}
	return out, nil
}

func runInspect(args []string, stdout, stderr io.Writer) error {
	fs := newFlagSet("inspect", stderr)
	var rf readFlags
	rf.register(fs)
	asJSON := fs.Bool("json", false, "print one JSON object")
	svg := fs.String("svg", "", "also draw every series read into this SVG file")
	fs.Usage = func() {
		fmt.Fprintln(stderr, "usage: heatledger inspect [--json] [--svg FILE] [reading options] FILE...")
		fs.PrintDefaults()
	}
	names, err := parse(fs, args)
	if err != nil {
		return err
	}
	if len(names) == 0 {
		return usageError{"no input files: give one or more CSV files (or - for standard input)"}
	}
	opt, err := rf.options()
	if err != nil {
		return err
	}
	files, err := readFiles(names)
	if err != nil {
		return err
	}
	rep, loaded := analysis.Inspect(files, opt)
	if *asJSON {
		out := struct {
			Series   []analysis.SeriesSummary `json:"series"`
			Warnings []string                 `json:"warnings"`
		}{rep.Series, rep.Warnings}
		enc := json.NewEncoder(stdout)
		enc.SetIndent("", "  ")
		if err := enc.Encode(out); err != nil {
			return err
		}
	} else {
		printInspect(stdout, rep)
	}
	if *svg != "" {
		var ss []*series.Series
		for _, l := range loaded {
			if l.Result != nil {
				ss = append(ss, l.Result.Series...)
			}
		}
		if err := os.WriteFile(*svg, []byte(seriesChart(ss)), 0o644); err != nil {
			return err
		}
	}
	for _, e := range rep.Errors {
		fmt.Fprintln(stderr, e)
	}
	if len(rep.Errors) > 0 {
		return errReported
	}
	return nil
}

func printInspect(w io.Writer, rep analysis.InspectReport) {
	if len(rep.Series) == 0 && len(rep.Warnings) == 0 {
		return
	}
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
	fmt.Fprintln(tw, "file\tseries\tunit\tresolution\tfrom\tto\tsteps\tmissing")
	for _, s := range rep.Series {
		unit := s.Unit
		if unit == "" {
			unit = "-"
		}
		fmt.Fprintf(tw, "%s\t%s\t%s\t%s\t%s\t%s\t%d\t%d\n", s.File, s.Name, unit, s.Resolution, s.StartLabel, s.EndLabel, s.Count, s.Missing)
	}
	tw.Flush()
	if len(rep.Warnings) > 0 {
		fmt.Fprintln(w, "\nnotes:")
		for _, m := range rep.Warnings {
			fmt.Fprintln(w, "  "+m)
		}
	}
}

// seriesChart draws the series on one chart; the y label names the units.
func seriesChart(ss []*series.Series) string {
	c := chart.Lines{Title: "Series read", XLabel: "Year"}
	units := map[string]bool{}
	for _, s := range ss {
		c.Lines = append(c.Lines, chart.Line{Name: s.Label(), X: s.Times, Y: s.Values})
		units[s.Unit] = true
	}
	var us []string
	for u := range units {
		if u != "" {
			us = append(us, u)
		}
	}
	sort.Strings(us)
	c.YLabel = "Value"
	if len(us) > 0 {
		c.YLabel = "Value (" + strings.Join(us, ", ") + ")"
	}
	return c.SVG()
}
