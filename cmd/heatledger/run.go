package main

import (
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strings"
	"text/tabwriter"

	"heatledger/core/analysis"
	"heatledger/core/brief"
	"heatledger/core/budget"
	"heatledger/core/trend"
)

func init() {
	commands = append(commands,
		command{"run", "run every analysis of an analysis file (" + analysis.AnalysisExt + ") and print or write the report", runRun},
		command{"pack", "make an analysis file from CSV files (their text embedded, no analyses yet)", runPack},
	)
}

// readAnalysisFile reads and parses an analysis file; a damaged one is
// refused with FILE:LINE:COLUMN.
func readAnalysisFile(name string) (*analysis.AnalysisFile, error) {
	st, err := os.Stat(name)
	if err == nil && st.Size() > analysis.MaxAnalysisFileBytes {
		return nil, fmt.Errorf("%s:1:1: file is %.1f MiB, over the limit of %d MiB", name, float64(st.Size())/(1<<20), analysis.MaxAnalysisFileBytes>>20)
	}
	data, err := os.ReadFile(name)
	if err != nil {
		return nil, fmt.Errorf("%s: %v", name, err)
	}
	f, err := analysis.ParseAnalysisFile(data)
	if err != nil {
		var fe *analysis.FileError
		if errors.As(err, &fe) {
			fe.Name = name
			return nil, fe
		}
		return nil, fmt.Errorf("%s: %v", name, err)
	}
	return f, nil
}

func runRun(args []string, stdout, stderr io.Writer) error {
	fs := newFlagSet("run", stderr)
	out := fs.String("out", "", "also write report.json and one ID.json per analysis into this directory (created if needed), and the briefing (brief.md with its SVG figures, brief.html) when the file has one")
	asJSON := fs.Bool("json", false, "print the report as JSON instead of a summary")
	fs.Usage = func() {
		fmt.Fprintln(stderr, "usage: heatledger run [--json] [--out DIR] FILE"+analysis.AnalysisExt)
		fmt.Fprintln(stderr, "Runs every analysis of the file on its embedded data. Exit 1 when the file is damaged or an analysis fails.")
		fs.PrintDefaults()
	}
	names, err := parse(fs, args)
	if err != nil {
		return err
	}
	if len(names) != 1 {
		return usageError{fmt.Sprintf("expected one analysis file, got %d", len(names))}
	}
	f, err := readAnalysisFile(names[0])
	if err != nil {
		return err
	}
	rep, err := analysis.Run(f)
	if err != nil {
		return fmt.Errorf("%s: embedded data file: %v", names[0], err)
	}
	text, err := rep.Marshal()
	if err != nil {
		return err
	}
	if *out != "" {
		if err := writeReportDir(*out, rep, text); err != nil {
			return err
		}
		if err := writeBrief(*out, f); err != nil {
			return err
		}
		if f.Brief != nil && len(f.Brief.Items) > 0 && !*asJSON {
			defer fmt.Fprintf(stdout, "\nbrief: %s and %s (%d items)\n", filepath.Join(*out, "brief.md"), filepath.Join(*out, "brief.html"), len(f.Brief.Items))
		}
	}
	if *asJSON {
		if _, err := stdout.Write(text); err != nil {
			return err
		}
	} else {
		printReport(stdout, rep)
	}
	if n := rep.Failed(); n > 0 {
		for _, r := range rep.Results {
			if r.Error != "" {
				fmt.Fprintf(stderr, "%s: analysis %s (%s): %s\n", names[0], r.ID, r.Kind, r.Error)
			}
		}
		return errReported
	}
	return nil
}

// writeReportDir writes report.json and ID.json per analysis (the result,
// or {"error": ...}).
func writeReportDir(dir string, rep *analysis.Report, text []byte) error {
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return err
	}
	if err := os.WriteFile(filepath.Join(dir, "report.json"), text, 0o644); err != nil {
		return err
	}
	for _, r := range rep.Results {
		one := struct {
			ID     string `json:"id"`
			Kind   string `json:"kind"`
			Result any    `json:"result,omitempty"`
			Error  string `json:"error,omitempty"`
		}{r.ID, r.Kind, r.Result, r.Error}
		if r.Result == nil {
			one.Result = nil
		}
		if err := writeFileWith(filepath.Join(dir, r.ID+".json"), func(w io.Writer) error { return writeJSON(w, one) }); err != nil {
			return err
		}
	}
	return nil
}

// writeBrief writes the file's briefing into dir: brief.md with its SVG
// figures beside it, and brief.html (self-contained). The page exports the
// same bytes from the same file. A file without a briefing writes nothing.
func writeBrief(dir string, f *analysis.AnalysisFile) error {
	if f.Brief == nil || len(f.Brief.Items) == 0 {
		return nil
	}
	w, err := f.Workspace()
	if err != nil {
		return err
	}
	b := brief.Build(f, w, brief.Options{})
	md, figs := b.Markdown()
	files := map[string]string{"brief.md": md, "brief.html": b.HTML()}
	for name, svg := range figs {
		files[name] = svg
	}
	for name, text := range files {
		if err := os.WriteFile(filepath.Join(dir, name), []byte(text), 0o644); err != nil {
			return err
		}
	}
	return nil
}

// printReport prints one line per analysis with its headline number.
func printReport(w io.Writer, rep *analysis.Report) {
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
	fmt.Fprintln(tw, "analysis\tkind\tresult")
	for _, r := range rep.Results {
		line := "failed: " + r.Error
		if r.Error == "" {
			line = headline(r.Value)
		}
		fmt.Fprintf(tw, "%s\t%s\t%s\n", r.ID, r.Kind, line)
	}
	tw.Flush()
	if len(rep.Warnings) > 0 {
		fmt.Fprintln(w, "\nnotes on the data:")
		for _, m := range rep.Warnings {
			fmt.Fprintln(w, "  "+m)
		}
	}
}

func trendLine(r *trend.Result) string {
	return fmt.Sprintf("%s %s to %s: %s +- %s per decade (%s)", r.Series, r.From, r.To, num(r.SlopePerDecade), num(r.StderrPerDecade), r.Noise)
}

func summaryLine(s budget.Summary) string {
	return fmt.Sprintf("median %s (5-95%% %s to %s)", numInf(s.Median), numInf(s.P05), numInf(s.P95))
}

func headline(v any) string {
	switch r := v.(type) {
	case []*trend.Result:
		var parts []string
		for _, t := range r {
			parts = append(parts, trendLine(t))
		}
		return strings.Join(parts, "; ")
	case *trend.Comparison:
		return fmt.Sprintf("difference B - A %s per decade (p = %s)", num(r.DifferencePerDecade), optNum(r.PValue))
	case *trend.GridResult:
		return fmt.Sprintf("%d windows; %d exclude the full-record trend", r.Cells, r.ExcludingFullTrend)
	case *trend.BreaksResult:
		return fmt.Sprintf("%d break(s) selected", r.Selected)
	case *trend.SenResult:
		return fmt.Sprintf("Sen slope %s per decade (Mann-Kendall p = %s)", num(r.SenSlopePerDecade), num(r.PValue))
	case analysis.AdjustJSON:
		if r.AdjustedTrend != nil {
			return "adjusted " + trendLine(r.AdjustedTrend)
		}
		return fmt.Sprintf("R2 %s", num(r.R2))
	case analysis.ForcingJSON:
		return fmt.Sprintf("total forcing %s W m-2 at %s", num(r.TotalLast), r.To)
	case analysis.RespondJSON:
		return fmt.Sprintf("%s model: ECS %s K, TCR %s K", r.Model, num(r.Derived.ECSK), num(r.Derived.TCRK))
	case *budget.HeatResult:
		return fmt.Sprintf("%s %s to %s: heating rate %s +- %s W m-2", r.Series, r.From, r.To, num(r.RateWPerM2), num(r.StderrWPerM2))
	case *analysis.SensitivityReport:
		return fmt.Sprintf("ECS %s K; TCR %s K", summaryLine(r.Result.ECS), summaryLine(r.Result.TCR))
	}
	return "done"
}

func runPack(args []string, stdout, stderr io.Writer) error {
	fs := newFlagSet("pack", stderr)
	var rf readFlags
	rf.register(fs)
	out := fs.String("out", "", "the analysis file to write (name ending in "+analysis.AnalysisExt+"); - for standard output")
	force := fs.Bool("force", false, "overwrite --out if it exists")
	fs.Usage = func() {
		fmt.Fprintln(stderr, "usage: heatledger pack --out FILE"+analysis.AnalysisExt+" [reading options] FILE.csv...")
		fmt.Fprintln(stderr, "Embeds the CSV files, read with the given options, in a new analysis file with no analyses.")
		fs.PrintDefaults()
	}
	names, err := parse(fs, args)
	if err != nil {
		return err
	}
	if *out == "" {
		return usageError{"--out FILE" + analysis.AnalysisExt + " is required"}
	}
	if *out != "-" && !strings.HasSuffix(*out, analysis.AnalysisExt) {
		return usageError{fmt.Sprintf("--out %q: the name should end in %s", *out, analysis.AnalysisExt)}
	}
	if len(names) == 0 {
		return usageError{"no input files: give one or more CSV files"}
	}
	opt, err := rf.options()
	if err != nil {
		return err
	}
	files, err := readFiles(names)
	if err != nil {
		return err
	}
	af := analysis.NewAnalysisFile()
	seen := map[string]bool{}
	for _, f := range files {
		base := filepath.Base(f.Name)
		if seen[base] {
			return usageError{fmt.Sprintf("two files are named %s: the analysis file keeps base names, rename one", base)}
		}
		seen[base] = true
		af.Files = append(af.Files, analysis.DataFile{Name: base, Text: string(f.Data), Reading: analysis.ReadingOf(opt)})
	}
	// refuse files that do not read, with where
	if _, err := af.Workspace(); err != nil {
		return err
	}
	data, err := af.Marshal()
	if err != nil {
		return err
	}
	if *out == "-" {
		_, err = stdout.Write(data)
		return err
	}
	if !*force {
		if _, err := os.Stat(*out); err == nil {
			return fmt.Errorf("%s exists: give --force to overwrite it", *out)
		}
	}
	return os.WriteFile(*out, data, 0o644)
}
