package series

import (
	"fmt"
	"math"
	"strconv"
	"strings"
)

// Window returns the steps whose times lie in [from, to] (decimal years).
// It returns an error naming the series when no step falls inside.
func (s *Series) Window(from, to float64) (*Series, error) {
	if math.IsNaN(from) || math.IsNaN(to) || to < from {
		return nil, fmt.Errorf("series %q: window %s to %s is empty: expected an end after the start", s.Name, fmtYear(from), fmtYear(to))
	}
	a, b := 0, len(s.Times)
	for a < b && s.Times[a] < from {
		a++
	}
	for b > a && s.Times[b-1] > to {
		b--
	}
	if a == b {
		return nil, fmt.Errorf("series %q (%s to %s) has no steps in the window %s: expected a window that overlaps the series", s.Name,
			StepLabel(s.Resolution, s.First), StepLabel(s.Resolution, s.Last()), windowText(from, to))
	}
	w := New(s.Name, s.Unit, s.Resolution, s.First+a, append([]float64(nil), s.Values[a:b]...))
	w.Source = s.Source
	return w, nil
}

func fmtYear(t float64) string { return strconv.FormatFloat(t, 'f', -1, 64) }

// windowText describes a window in words: "from 2100", "up to 1950.5",
// "1980 to 1990.25" (decimal years, rounded to 3 places).
func windowText(from, to float64) string {
	r := func(t float64) string { return strconv.FormatFloat(math.Round(t*1000)/1000, 'f', -1, 64) }
	switch {
	case math.IsInf(from, -1) && math.IsInf(to, 1):
		return "of the whole record"
	case math.IsInf(to, 1):
		return "from " + r(from)
	case math.IsInf(from, -1):
		return "up to " + r(to)
	}
	return r(from) + " to " + r(to)
}

// ParseTime reads a time given as YYYY, YYYY-MM or a decimal year and
// returns the decimal year of its start (isEnd false) or of its end (isEnd
// true): "1980" as a start is 1980.0, as an end 1981.0 (exclusive), so the
// window 1980 to 2019 holds 1980-01 through 2019-12.
func ParseTime(s string, isEnd bool) (float64, error) {
	t := strings.TrimSpace(s)
	if y, m, d, ok := parseISODate(t); ok && d == 0 {
		if isEnd {
			m++
		}
		return float64(y) + float64(m-1)/12, nil
	}
	f, err := strconv.ParseFloat(t, 64)
	if err != nil || math.IsNaN(f) || math.IsInf(f, 0) {
		return 0, fmt.Errorf("time %q: expected YYYY, YYYY-MM or a decimal year", s)
	}
	if isEnd && f == math.Trunc(f) && !strings.Contains(t, ".") {
		return f + 1, nil
	}
	return f, nil
}

// WindowSpec returns the series restricted to the window given as text
// (see ParseTime); empty from or to means the series' own start or end.
// The end is exclusive for YYYY and YYYY-MM.
func (s *Series) WindowSpec(from, to string) (*Series, error) {
	lo, hi := math.Inf(-1), math.Inf(1)
	var err error
	if from != "" {
		if lo, err = ParseTime(from, false); err != nil {
			return nil, err
		}
	}
	if to != "" {
		if hi, err = ParseTime(to, true); err != nil {
			return nil, err
		}
		if !strings.Contains(to, ".") {
			hi = math.Nextafter(hi, math.Inf(-1))
		}
	}
	if hi < lo {
		return nil, fmt.Errorf("series %q: window %s to %s ends before it starts", s.Name, from, to)
	}
	w, err := s.Window(lo, hi)
	if err != nil && len(s.Values) > 0 {
		var text string
		switch {
		case from != "" && to != "":
			text = from + " to " + to
		case from != "":
			text = "from " + from
		default:
			text = "up to " + to
		}
		return nil, fmt.Errorf("series %q (%s to %s) has no steps in the window %s: expected a window that overlaps the series", s.Name,
			StepLabel(s.Resolution, s.First), StepLabel(s.Resolution, s.Last()), text)
	}
	return w, err
}

// AnnualMeans averages a monthly series to calendar years. Months are
// weighted by their length in days. A year with fewer than minMonths months
// present is missing, never a partial mean. minMonths <= 0 means 12.
// An annual series is returned unchanged (a copy).
func (s *Series) AnnualMeans(minMonths int) *Series {
	if s.Resolution == Annual {
		return s.Clone()
	}
	if minMonths <= 0 || minMonths > 12 {
		minMonths = 12
	}
	y0, _ := YearMonth(s.First)
	y1, _ := YearMonth(s.Last())
	out := make([]float64, y1-y0+1)
	for i := range out {
		y := y0 + i
		var sum, w float64
		n := 0
		for m := 1; m <= 12; m++ {
			k := MonthIndex(y, m) - s.First
			if k < 0 || k >= len(s.Values) || math.IsNaN(s.Values[k]) {
				continue
			}
			d := float64(daysIn(y, m))
			sum += d * s.Values[k]
			w += d
			n++
		}
		if n >= minMonths {
			out[i] = sum / w
		} else {
			out[i] = math.NaN()
		}
	}
	a := New(s.Name, s.Unit, Annual, y0, out)
	a.Source = s.Source
	return a
}

// Rebaseline subtracts the mean over the reference years [fromYear, toYear]
// (whole calendar years). Monthly series are rebaselined per calendar month
// (each month minus its own reference mean), which also removes the mean
// seasonal cycle; annual series by the single mean. Every calendar month
// needs at least one value in the reference period.
func (s *Series) Rebaseline(fromYear, toYear int) (*Series, error) {
	if toYear < fromYear {
		return nil, fmt.Errorf("series %q: reference period %d-%d ends before it starts", s.Name, fromYear, toYear)
	}
	out := s.Clone()
	if s.Resolution == Annual {
		var sum float64
		n := 0
		for i, v := range s.Values {
			y := s.First + i
			if y >= fromYear && y <= toYear && !math.IsNaN(v) {
				sum += v
				n++
			}
		}
		if n == 0 {
			return nil, fmt.Errorf("series %q has no values in the reference period %d-%d", s.Name, fromYear, toYear)
		}
		mean := sum / float64(n)
		for i := range out.Values {
			out.Values[i] -= mean
		}
		return out, nil
	}
	var sum [12]float64
	var cnt [12]int
	for i, v := range s.Values {
		y, m := YearMonth(s.First + i)
		if y >= fromYear && y <= toYear && !math.IsNaN(v) {
			sum[m-1] += v
			cnt[m-1]++
		}
	}
	for m := 0; m < 12; m++ {
		if cnt[m] == 0 {
			return nil, fmt.Errorf("series %q has no %s value in the reference period %d-%d: expected at least one for each calendar month", s.Name, strings.ToUpper(monthNames[m][:1])+monthNames[m][1:], fromYear, toYear)
		}
	}
	for i := range out.Values {
		_, m := YearMonth(s.First + i)
		out.Values[i] -= sum[m-1] / float64(cnt[m-1])
	}
	return out, nil
}

// Align restricts several series of one resolution to their common span.
func Align(ss ...*Series) ([]*Series, error) {
	if len(ss) == 0 {
		return nil, nil
	}
	lo, hi := ss[0].First, ss[0].Last()
	for _, s := range ss[1:] {
		if s.Resolution != ss[0].Resolution {
			return nil, fmt.Errorf("cannot align %q (%s) with %q (%s): expected one resolution (make annual means first)", ss[0].Name, ss[0].Resolution, s.Name, s.Resolution)
		}
		lo = max(lo, s.First)
		hi = min(hi, s.Last())
	}
	if hi < lo {
		return nil, fmt.Errorf("series %q and the others share no common span", ss[0].Name)
	}
	out := make([]*Series, len(ss))
	for i, s := range ss {
		a := New(s.Name, s.Unit, s.Resolution, lo, append([]float64(nil), s.Values[lo-s.First:hi-s.First+1]...))
		a.Source = s.Source
		out[i] = a
	}
	return out, nil
}

// Lag shifts a series later in time by the given number of months: the
// lagged series at time t holds the original value at t - lag. The shift is
// by time, not by rows, so a gap stays a gap. Annual series take only
// multiples of 12 months.
func (s *Series) Lag(months int) (*Series, error) {
	shift := months
	if s.Resolution == Annual {
		if months%12 != 0 {
			return nil, fmt.Errorf("series %q is annual: a lag of %d months is not a whole number of years", s.Name, months)
		}
		shift = months / 12
	}
	l := New(s.Name, s.Unit, s.Resolution, s.First+shift, append([]float64(nil), s.Values...))
	l.Source = s.Source
	return l, nil
}

// At returns the value at step index idx (NaN outside the series).
func (s *Series) At(idx int) float64 {
	k := idx - s.First
	if k < 0 || k >= len(s.Values) {
		return math.NaN()
	}
	return s.Values[k]
}

// WholeYears is the first and last calendar year the series' axis covers
// from January to December (an annual series: its first and last years).
// Gaps inside the axis do not count against a year. last < first when the
// axis holds no whole year.
func (s *Series) WholeYears() (first, last int) {
	if s.Resolution == Annual {
		return s.First, s.Last()
	}
	fy, fm := YearMonth(s.First)
	ly, lm := YearMonth(s.Last())
	if fm != 1 {
		fy++
	}
	if lm != 12 {
		ly--
	}
	return fy, ly
}
