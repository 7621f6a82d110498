// Package series holds Heatledger's data model: a named, unit-carrying series
// on a regular monthly or annual time axis, with NaN for missing values, plus
// the reader for the CSV family of text tables (read.go) and the time-axis
// operations every engine relies on (ops.go).
//
// Time is a decimal year. A monthly value sits at mid-month,
// year + (month - 0.5)/12; an annual value sits at mid-year, year + 0.5.
package series

import (
	"fmt"
	"math"
)

// Resolution is the spacing of a series' time axis.
type Resolution int

const (
	// Monthly: one step per calendar month.
	Monthly Resolution = iota + 1
	// Annual: one step per calendar year.
	Annual
)

// String returns "monthly" or "annual".
func (r Resolution) String() string {
	switch r {
	case Monthly:
		return "monthly"
	case Annual:
		return "annual"
	}
	return "unknown"
}

// StepsPerYear is 12 for monthly and 1 for annual series.
func (r Resolution) StepsPerYear() int {
	if r == Monthly {
		return 12
	}
	return 1
}

// Series is one named quantity on a regular time axis. Step i sits at
// Times[i]; Values[i] is NaN where the value is missing. First is the integer
// index of step 0: for monthly series year*12 + (month-1), for annual series
// the year. Build a Series with New so Times and First agree.
type Series struct {
	Name       string
	Unit       string // may be empty
	Source     string // file the series came from, if any
	Resolution Resolution
	First      int
	Times      []float64
	Values     []float64
}

// New builds a series whose step 0 has index first (see Series.First).
// The values slice is used as is.
func New(name, unit string, res Resolution, first int, values []float64) *Series {
	s := &Series{Name: name, Unit: unit, Resolution: res, First: first, Values: values}
	s.Times = make([]float64, len(values))
	for i := range values {
		s.Times[i] = StepTime(res, first+i)
	}
	return s
}

// StepTime is the decimal-year time of the step with the given index.
func StepTime(res Resolution, index int) float64 {
	if res == Monthly {
		y, m := floorDiv(index, 12)
		return float64(y) + (float64(m)+0.5)/12
	}
	return float64(index) + 0.5
}

// MonthIndex returns year*12 + month - 1 for a month given as 1..12.
func MonthIndex(year, month int) int { return year*12 + month - 1 }

// YearMonth splits a month index into year and month 1..12.
func YearMonth(index int) (year, month int) {
	y, m := floorDiv(index, 12)
	return y, m + 1
}

func floorDiv(a, b int) (q, r int) {
	q = a / b
	r = a % b
	if r < 0 {
		q--
		r += b
	}
	return
}

// Len is the number of steps on the axis (count).
func (s *Series) Len() int { return len(s.Values) }

// Last is the index of the final step.
func (s *Series) Last() int { return s.First + len(s.Values) - 1 }

// Missing counts the steps with no value.
func (s *Series) Missing() int {
	n := 0
	for _, v := range s.Values {
		if math.IsNaN(v) {
			n++
		}
	}
	return n
}

// Start and End are the decimal-year times of the first and last steps
// (NaN for an empty series).
func (s *Series) Start() float64 {
	if len(s.Times) == 0 {
		return math.NaN()
	}
	return s.Times[0]
}

// End is the time of the last step.
func (s *Series) End() float64 {
	if len(s.Times) == 0 {
		return math.NaN()
	}
	return s.Times[len(s.Times)-1]
}

// Label is "name (unit)", or the name alone when the unit is empty.
func (s *Series) Label() string {
	if s.Unit == "" {
		return s.Name
	}
	return s.Name + " (" + s.Unit + ")"
}

// StepLabel formats a step index as YYYY-MM (monthly) or YYYY (annual).
func StepLabel(res Resolution, index int) string {
	if res == Monthly {
		y, m := YearMonth(index)
		return fmt.Sprintf("%04d-%02d", y, m)
	}
	return fmt.Sprintf("%04d", index)
}

// Clone returns a deep copy.
func (s *Series) Clone() *Series {
	c := *s
	c.Times = append([]float64(nil), s.Times...)
	c.Values = append([]float64(nil), s.Values...)
	return &c
}

// Valid returns the times and values of the steps that have a value.
func (s *Series) Valid() (t, y []float64) {
	for i, v := range s.Values {
		if !math.IsNaN(v) {
			t = append(t, s.Times[i])
			y = append(y, v)
		}
	}
	return
}
