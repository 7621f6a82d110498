package drivers

import (
	"encoding/csv"
	"fmt"
	"io"
	"math"
	"strconv"

	"heatledger/core/series"
)

// TrendChange is the table of each term's contribution to the change in
// trend from window A to window B.
//
// Every slope in the table is the ordinary least-squares slope over the
// same months: those of the window where the adjusted series is present
// (target, every lagged driver and the annual cycle present). Because the
// OLS slope over a fixed set of times is linear in the values and, month by
// month, raw = sum_k contribution_k + cycle + adjusted, the table adds up:
//
//	raw = sum_k driver_k + cycle + adjusted      (in A, in B, and for B - A).
//
// So "driver_k change" is how much of the change in the raw trend the factor
// explains, and "adjusted change" what remains. (Contributions are centred
// on their fit-sample mean, a constant that does not affect slopes.) The
// raw slope here can differ from a trend over the raw series alone where the
// target has months the drivers lack.
type TrendChange struct {
	A        ChangeWindow `json:"window_a"`
	B        ChangeWindow `json:"window_b"`
	Raw      ChangeRow    `json:"raw"`
	Drivers  []ChangeRow  `json:"drivers"`
	Cycle    ChangeRow    `json:"annual_cycle"`
	Adjusted ChangeRow    `json:"adjusted"`
}

// ChangeWindow is a window of the table: its first and last steps and the
// number of months used.
type ChangeWindow struct {
	From string `json:"from"`
	To   string `json:"to"`
	N    int    `json:"n"`
}

// ChangeRow is one term's slope in A and B and their difference B - A,
// per decade, in target units.
type ChangeRow struct {
	Term            string  `json:"term"`
	APerDecade      float64 `json:"a_per_decade"`
	BPerDecade      float64 `json:"b_per_decade"`
	ChangePerDecade float64 `json:"change_per_decade"`
}

// change builds the trend-change table.
func (m *model) change(r *Result, ws [2]Window) (*TrendChange, error) {
	var tcw TrendChange
	slopes := make([][]float64, 2) // per window: raw, drivers..., cycle, adjusted
	for w := 0; w < 2; w++ {
		from, to := m.windowBounds(ws[w])
		win, err := r.Adjusted.WindowSpec(from, to)
		if err != nil {
			return nil, fmt.Errorf("trend change, window %c: %w", 'A'+w, err)
		}
		a := win.First - r.Adjusted.First
		var rows []int
		for i := a; i < a+win.Len(); i++ {
			if !math.IsNaN(r.Adjusted.Values[i]) {
				rows = append(rows, i)
			}
		}
		cw := ChangeWindow{From: series.StepLabel(win.Resolution, win.First), To: series.StepLabel(win.Resolution, win.Last()), N: len(rows)}
		if len(rows) < 3 {
			return nil, fmt.Errorf("trend change, window %c (%s to %s): %d months with the adjusted series present: expected at least 3", 'A'+w, cw.From, cw.To, len(rows))
		}
		t := r.Adjusted.Times
		var s []float64
		for _, ser := range append(append([]*series.Series{r.TargetSeries}, r.Contributions...), r.CycleSeries, r.Adjusted) {
			b, ok := slopeAt(t, ser.Values, rows)
			if !ok {
				return nil, fmt.Errorf("trend change, window %c (%s to %s): the months used share one time", 'A'+w, cw.From, cw.To)
			}
			s = append(s, 10*b)
		}
		slopes[w] = s
		if w == 0 {
			tcw.A = cw
		} else {
			tcw.B = cw
		}
	}
	row := func(name string, j int) ChangeRow {
		return ChangeRow{Term: name, APerDecade: slopes[0][j], BPerDecade: slopes[1][j], ChangePerDecade: slopes[1][j] - slopes[0][j]}
	}
	tcw.Raw = row(m.target.Name, 0)
	for k, d := range m.drv {
		tcw.Drivers = append(tcw.Drivers, row(d.name, 1+k))
	}
	K := len(m.drv)
	tcw.Cycle = row("annual cycle", 1+K)
	tcw.Adjusted = row("adjusted", 2+K)
	return &tcw, nil
}

// slopeAt is the OLS slope of v on t over the rows (centred two-pass sums):
// b = sum (t - tbar)(v - vbar) / sum (t - tbar)^2.
func slopeAt(t, v []float64, rows []int) (float64, bool) {
	var tb, vb float64
	for _, i := range rows {
		tb += t[i]
		vb += v[i]
	}
	n := float64(len(rows))
	tb /= n
	vb /= n
	var sxx, sxy float64
	for _, i := range rows {
		sxx += (t[i] - tb) * (t[i] - tb)
		sxy += (t[i] - tb) * (v[i] - vb)
	}
	if !(sxx > 0) {
		return 0, false
	}
	return sxy / sxx, true
}

// WriteCSV writes the output series, one row per step of the target's axis:
// time (YYYY-MM or YYYY), target, fitted, residual, trend term, annual
// cycle, adjusted, then each driver's contribution. Missing values are empty
// cells.
func (r *Result) WriteCSV(w io.Writer) error {
	if r.TargetSeries == nil {
		return fmt.Errorf("no fitted series to write")
	}
	cw := csv.NewWriter(w)
	head := []string{"time", r.Target, "fitted", "residual", "trend_term", "annual_cycle", "adjusted"}
	for _, d := range r.Drivers {
		head = append(head, fmt.Sprintf("contribution %s (lag %d)", d.Name, d.LagMonths))
	}
	if err := cw.Write(head); err != nil {
		return err
	}
	cell := func(v float64) string {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return ""
		}
		return strconv.FormatFloat(v, 'g', 10, 64)
	}
	tg := r.TargetSeries
	for i := range tg.Values {
		rec := []string{series.StepLabel(tg.Resolution, tg.First+i), cell(tg.Values[i]), cell(r.Fitted.Values[i]),
			cell(r.Residuals.Values[i]), cell(r.Baseline.Values[i]), cell(r.CycleSeries.Values[i]), cell(r.Adjusted.Values[i])}
		for _, c := range r.Contributions {
			rec = append(rec, cell(c.Values[i]))
		}
		if err := cw.Write(rec); err != nil {
			return err
		}
	}
	cw.Flush()
	return cw.Error()
}
