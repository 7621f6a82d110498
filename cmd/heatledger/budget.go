package main

import (
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"
	"text/tabwriter"

	"heatledger/core/analysis"
	"heatledger/core/budget"
)

func init() {
	commands = append(commands,
		command{"heat", "heating rate (W m-2) from a heat-content series over a window, with its uncertainty", runHeat},
		command{"sensitivity", "energy-budget ECS and TCR by Monte Carlo from typed changes dT, dF, dN", runSensitivity},
	)
}

// parseFraction reads --ocean-fraction: a share in (0, 1] or "ar6".
func parseFraction(s string) (float64, error) {
	t := strings.ToLower(strings.TrimSpace(s))
	if t == "" {
		return 0, nil
	}
	if t == "ar6" {
		return budget.OceanFractionAR6, nil
	}
	f, err := strconv.ParseFloat(t, 64)
	if err != nil || !(f > 0 && f <= 1) {
		return 0, usageError{fmt.Sprintf("--ocean-fraction %q: expected a share between 0 and 1 (e.g. 0.91) or ar6", s)}
	}
	return f, nil
}

func runHeat(args []string, stdout, stderr io.Writer) error {
	c := newCommon("heat", "--series NAME [--unit zj|j|j_m2] [--area earth|ocean|M2] [--from T] [--to T] [--noise white|ar1|arma11|arma11-ml] [--ocean-fraction F] FILE...", stderr)
	unit := c.fs.String("unit", "", "unit of the heat content: zj, j or j_m2 (default: the series' own unit)")
	area := c.fs.String("area", "earth", "area the rate is spread over: earth (5.10e14 m2), ocean (3.61e14 m2) or square metres")
	contentArea := c.fs.String("content-area", "", "for a series in J m-2: the area its values are per (earth, ocean or square metres; default: --area)")
	from := c.fs.String("from", "", "window start: YYYY, YYYY-MM or a decimal year (default: the series' start)")
	to := c.fs.String("to", "", "window end, inclusive for YYYY and YYYY-MM (default: the series' end)")
	noise := c.fs.String("noise", "ar1", "noise model of the trend: white, ar1, arma11 or arma11-ml")
	level := c.fs.Float64("level", 0.95, "confidence level")
	frac := c.fs.String("ocean-fraction", "", "the series' share of the total heat uptake, for an energy-imbalance estimate (e.g. 0.91, or ar6 for IPCC AR6's 0.91)")
	w, err := c.workspace(args, stderr)
	if err != nil {
		return err
	}
	if *unit != "" {
		if _, err := budget.ParseHeatUnit(*unit); err != nil {
			return usageError{"--unit: " + err.Error()}
		}
	}
	for name, a := range map[string]string{"--area": *area, "--content-area": *contentArea} {
		if a != "" {
			if _, err := budget.ParseArea(a); err != nil {
				return usageError{name + ": " + err.Error()}
			}
		}
	}
	if err := checkNoise(*noise, "white", "ar1", "arma11", "arma11-ml"); err != nil {
		return err
	}
	if err := checkLevel(*level); err != nil {
		return err
	}
	f, err := parseFraction(*frac)
	if err != nil {
		return err
	}
	r, err := w.Heat(analysis.HeatSettings{Series: *c.series, From: *from, To: *to, Level: *level,
		HeatInput: analysis.HeatInput{Unit: *unit, Area: *area, ContentArea: *contentArea, Noise: *noise, OceanFraction: f}})
	if err != nil {
		return err
	}
	if *c.asJSON {
		return writeJSON(stdout, r)
	}
	pct := num(100 * r.Level)
	fmt.Fprintf(stdout, "%s, %s to %s, %d values, noise %s\n", r.Series, r.From, r.To, r.N, r.Noise)
	fmt.Fprintf(stdout, "heat gain %s ZJ/yr (standard error %s; %s%% interval %s to %s)\n",
		num(r.ZJPerYear), num(r.StderrZJPerYear), pct, num(r.CILowZJPerYear), num(r.CIHighZJPerYear))
	fmt.Fprintf(stdout, "heating rate %s W m-2 over %s (standard error %s; %s%% interval %s to %s); 1 ZJ/yr = %s W m-2 here, a year of 365.25 days\n",
		num(r.RateWPerM2), r.Area.Source, num(r.StderrWPerM2), pct, num(r.CILowWPerM2), num(r.CIHighWPerM2), num(r.WPerM2PerZJPerYear))
	if r.ImbalanceWPerM2 != nil {
		fmt.Fprintf(stdout, "energy imbalance estimate (rate / ocean share %s, over Earth's surface): %s W m-2 (standard error %s; %s%% interval %s to %s)\n",
			num(r.OceanFraction), num(*r.ImbalanceWPerM2), num(*r.ImbalanceStderrWPerM2), pct, num(*r.ImbalanceCILowWPerM2), num(*r.ImbalanceCIHighWPerM2))
	}
	printWarnings(stdout, r.Warnings)
	return nil
}

// distsFlag collects repeated distribution flags (--dF components).
type distsFlag []string

func (d *distsFlag) String() string     { return strings.Join(*d, ",") }
func (d *distsFlag) Set(s string) error { *d = append(*d, s); return nil }

// sensitivityJSON is the CLI's JSON: the contract keys ecs, tcr,
// nonpositive_fraction and draws, plus a few extras (histograms only with
// --full).
type sensitivityJSON struct {
	ECS                        budget.Summary `json:"ecs"`
	TCR                        budget.Summary `json:"tcr"`
	NonpositiveFraction        float64        `json:"nonpositive_fraction"`
	NonpositiveForcingFraction float64        `json:"nonpositive_forcing_fraction"`
	NegativeWarmingFraction    float64        `json:"negative_warming_fraction"`
	Draws                      int            `json:"draws"`
	Seed                       uint64         `json:"seed"`
	Inputs                     []inputJSON    `json:"inputs"`
	Convention                 string         `json:"convention"`
	Warnings                   []string       `json:"warnings"`
}

type inputJSON struct {
	Role   string  `json:"role"`
	Center float64 `json:"center"`
	SD     float64 `json:"sd"`
}

func runSensitivity(args []string, stdout, stderr io.Writer) error {
	fs := newFlagSet("sensitivity", stderr)
	dT := fs.String("dT", "", "change in surface temperature, K, as MEAN:SD (normal)")
	var dF distsFlag
	fs.Var(&dF, "dF", "change in effective radiative forcing, W m-2, as MEAN:SD; repeat for components summed per draw")
	dN := fs.String("dN", "", "change in the top-of-atmosphere imbalance, W m-2, as MEAN:SD")
	f2x := fs.String("f2x", "", "forcing of doubled CO2, W m-2, as MEAN:SD (default 3.93:0.286, IPCC AR6 3.93 +/- 0.47 read as a 5-95 % range, from memory)")
	draws := fs.Int("draws", budget.DefaultDraws, "number of Monte Carlo draws")
	seed := fs.Uint64("seed", 0, "random seed")
	asJSON := fs.Bool("json", false, "print one JSON object")
	full := fs.Bool("full", false, "with --json: the full result, with histograms and input details")
	fs.Usage = func() {
		fmt.Fprintln(stderr, "usage: heatledger sensitivity --dT MEAN:SD --dF MEAN:SD --dN MEAN:SD [--f2x MEAN:SD] [--draws N] [--seed S] [--json]")
		fmt.Fprintln(stderr, "Each change is typed as a normal MEAN:SD (normal:, lognormal:MEDIAN:LOG_SD, uniform:LOW:HIGH, normal90:P05:P95 and lognormal90:P05:P95 are also read).")
		fs.PrintDefaults()
	}
	rest, err := parse(fs, args)
	if err != nil {
		return err
	}
	if len(rest) > 0 {
		return usageError{fmt.Sprintf("unexpected argument %q: sensitivity reads no files; type the changes with --dT, --dF and --dN", rest[0])}
	}
	if *dT == "" || len(dF) == 0 || *dN == "" {
		return usageError{"--dT, --dF and --dN are required, each as MEAN:SD (e.g. --dT 0.8:0.1 --dF 2.5:0.4 --dN 0.5:0.15)"}
	}
	if *draws < 10 || *draws > budget.MaxDraws {
		return usageError{fmt.Sprintf("--draws %d: expected 10 to %d", *draws, budget.MaxDraws)}
	}
	dist := func(name, s string) (*budget.Dist, error) {
		d, err := budget.ParseDist(s)
		if err != nil {
			return nil, usageError{name + " " + err.Error()}
		}
		return &d, nil
	}
	s := analysis.SensitivitySettings{Draws: *draws, Seed: *seed}
	if s.DT.Typed, err = dist("--dT", *dT); err != nil {
		return err
	}
	for _, v := range dF {
		d, err := dist("--dF", v)
		if err != nil {
			return err
		}
		s.DF = append(s.DF, analysis.BudgetQuantity{Typed: d})
	}
	if s.DN.Typed, err = dist("--dN", *dN); err != nil {
		return err
	}
	if *f2x != "" {
		if s.F2x, err = dist("--f2x", *f2x); err != nil {
			return err
		}
	}
	w := &analysis.Workspace{}
	rep, err := w.Sensitivity(s, nil, nil)
	if err != nil {
		return err
	}
	r := rep.Result
	if *asJSON {
		if *full {
			return writeJSON(stdout, r)
		}
		out := sensitivityJSON{ECS: r.ECS, TCR: r.TCR, NonpositiveFraction: r.NonpositiveFraction,
			NonpositiveForcingFraction: r.NonpositiveForcingFraction, NegativeWarmingFraction: r.NegativeWarmingFraction,
			Draws: r.Draws, Seed: r.Seed, Convention: r.Convention, Warnings: r.Warnings}
		out.ECS.Histogram, out.TCR.Histogram = nil, nil
		for _, in := range r.Inputs {
			out.Inputs = append(out.Inputs, inputJSON{in.Role, in.Center, in.SD})
		}
		return writeJSON(stdout, out)
	}
	fmt.Fprintf(stdout, "energy-budget sensitivity (ECS = F2x dT/(dF - dN), TCR = F2x dT/dF), %d draws, seed %d\n", r.Draws, r.Seed)
	for _, in := range r.Inputs {
		fmt.Fprintf(stdout, "  %-3s central %s, SD %s\n", in.Role, num(in.Center), num(in.SD))
	}
	tw := tabwriter.NewWriter(stdout, 0, 0, 2, ' ', tabwriter.AlignRight)
	fmt.Fprintln(tw, "\tcentral\tmedian\tmean\t5%\t17%\t83%\t95%\t")
	for _, row := range []struct {
		name string
		s    budget.Summary
	}{{"ECS (K)", r.ECS}, {"TCR (K)", r.TCR}} {
		fmt.Fprintf(tw, "%s\t%s\t%s\t%s\t%s\t%s\t%s\t%s\t\n", row.name, numInf(row.s.Central), numInf(row.s.Median), numInf(row.s.Mean),
			numInf(row.s.P05), numInf(row.s.P17), numInf(row.s.P83), numInf(row.s.P95))
	}
	tw.Flush()
	fmt.Fprintf(stdout, "draws with dF - dN <= 0 (ECS unbounded, kept at +Inf): %s %%\n", num(100*r.NonpositiveFraction))
	printWarnings(stdout, r.Warnings)
	return nil
}

// numInf is num, with "unbounded" for +Inf.
func numInf(v float64) string {
	if math.IsInf(v, 1) {
		return "unbounded"
	}
	return num(v)
}
