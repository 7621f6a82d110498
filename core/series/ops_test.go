package series

import (
	"math"
	"strings"
	"testing"
)

func monthly(first int, vals ...float64) *Series { return New("m", "K", Monthly, first, vals) }

func TestWindowSpec(t *testing.T) {
	// a window 1980 to 2019 holds 1980-01 to 2019-12 for monthly data (issue 3's convention)
	n := 50 * 12
	v := make([]float64, n)
	s := monthly(MonthIndex(1975, 1), v...)
	w, err := s.WindowSpec("1980", "2019")
	if err != nil {
		t.Fatal(err)
	}
	if StepLabel(Monthly, w.First) != "1980-01" || StepLabel(Monthly, w.Last()) != "2019-12" || w.Len() != 480 {
		t.Errorf("window %s..%s (%d)", StepLabel(Monthly, w.First), StepLabel(Monthly, w.Last()), w.Len())
	}
	w, err = s.WindowSpec("1980-03", "1980-05")
	if err != nil || w.Len() != 3 {
		t.Fatalf("YYYY-MM window: %v %v", w, err)
	}
	if _, err := s.WindowSpec("2030", "2040"); err == nil || !strings.Contains(err.Error(), "no steps") {
		t.Errorf("empty window: %v", err)
	}
	if _, err := s.WindowSpec("soon", ""); err == nil {
		t.Error("bad time accepted")
	}
}

func TestAnnualMeans(t *testing.T) {
	// 2000 is a leap year: weights 31,29,31,30,31,30,31,31,30,31,30,31 (366 days).
	vals := make([]float64, 24)
	for i := range vals {
		vals[i] = float64(i % 12)
	}
	s := monthly(MonthIndex(2000, 1), vals...)
	a := s.AnnualMeans(12)
	days := []float64{31, 29, 31, 30, 31, 30, 31, 31, 30, 31, 30, 31}
	var sum float64
	for m, d := range days {
		sum += d * float64(m)
	}
	if a.Resolution != Annual || a.First != 2000 || a.Len() != 2 {
		t.Fatalf("annual %+v", a)
	}
	if math.Abs(a.Values[0]-sum/366) > 1e-12 {
		t.Errorf("2000 mean %v, want %v", a.Values[0], sum/366)
	}
	// a year short of the rule is missing, never a partial mean
	s.Values[13] = math.NaN()
	a = s.AnnualMeans(12)
	if !math.IsNaN(a.Values[1]) {
		t.Errorf("incomplete year gave %v", a.Values[1])
	}
	a = s.AnnualMeans(11)
	if math.IsNaN(a.Values[1]) {
		t.Error("11-month rule dropped a year with 11 months")
	}
	// a partial first year (starts in July) is missing under 12-of-12
	p := monthly(MonthIndex(2001, 7), 1, 2, 3, 4, 5, 6)
	if a := p.AnnualMeans(0); !math.IsNaN(a.Values[0]) || a.Times[0] != 2001.5 {
		t.Errorf("partial year %v at %v", a.Values, a.Times)
	}
}

func TestRebaseline(t *testing.T) {
	// per calendar month: the seasonal cycle vanishes from the reference period
	vals := make([]float64, 36)
	for i := range vals {
		vals[i] = 10*float64(i%12) + float64(i/12)
	}
	s := monthly(MonthIndex(1990, 1), vals...)
	r, err := s.Rebaseline(1990, 1991)
	if err != nil {
		t.Fatal(err)
	}
	for i, v := range r.Values {
		want := float64(i/12) - 0.5
		if math.Abs(v-want) > 1e-12 {
			t.Fatalf("step %d: %v want %v", i, v, want)
		}
	}
	if _, err := s.Rebaseline(1980, 1985); err == nil {
		t.Error("reference period without data accepted")
	}
	a := New("a", "", Annual, 1990, []float64{1, 2, 3, 4})
	r, _ = a.Rebaseline(1990, 1991)
	if r.Values[0] != -0.5 || r.Values[3] != 2.5 {
		t.Errorf("annual rebaseline %v", r.Values)
	}
}

func TestLagByTime(t *testing.T) {
	// a gap stays a gap: the lagged value at t is the original at t - lag
	s := monthly(MonthIndex(2000, 1), 1, 2, math.NaN(), 4, 5)
	l, err := s.Lag(2)
	if err != nil {
		t.Fatal(err)
	}
	for k := s.First; k <= s.Last(); k++ {
		a, b := l.At(k+2), s.At(k)
		if !(a == b || math.IsNaN(a) && math.IsNaN(b)) {
			t.Fatalf("lagged at %d = %v, original at %d = %v", k+2, a, k, b)
		}
	}
	if !math.IsNaN(l.At(MonthIndex(2000, 5))) {
		t.Error("the gap moved or vanished")
	}
	an := New("a", "", Annual, 1990, []float64{1, 2})
	if _, err := an.Lag(5); err == nil {
		t.Error("annual lag of 5 months accepted")
	}
}

func TestAlign(t *testing.T) {
	a := monthly(MonthIndex(2000, 1), 1, 2, 3, 4)
	b := monthly(MonthIndex(2000, 3), 5, 6, 7)
	out, err := Align(a, b)
	if err != nil {
		t.Fatal(err)
	}
	if out[0].First != b.First || out[0].Len() != 2 || out[1].Len() != 2 || out[0].Values[0] != 3 || out[1].Values[1] != 6 {
		t.Errorf("aligned %v %v", out[0].Values, out[1].Values)
	}
	if _, err := Align(a, New("y", "", Annual, 2000, []float64{1})); err == nil {
		t.Error("mixed resolutions aligned")
	}
}

func TestWholeYears(t *testing.T) {
	cases := []struct {
		s           *Series
		first, last int
	}{
		{monthly(MonthIndex(1950, 1), make([]float64, 24)...), 1950, 1951},
		{monthly(MonthIndex(1950, 2), make([]float64, 23)...), 1951, 1951},
		{monthly(MonthIndex(1950, 1), make([]float64, 23)...), 1950, 1950},
		{monthly(MonthIndex(1950, 3), make([]float64, 6)...), 1951, 1949},
		{New("a", "", Annual, 1990, make([]float64, 5)), 1990, 1994},
	}
	for _, c := range cases {
		if f, l := c.s.WholeYears(); f != c.first || l != c.last {
			t.Errorf("%s..%s: %d-%d, want %d-%d", StepLabel(c.s.Resolution, c.s.First), StepLabel(c.s.Resolution, c.s.Last()), f, l, c.first, c.last)
		}
	}
}
