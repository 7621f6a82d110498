package chart

import (
	"math"
	"math/rand/v2"
	"strconv"
	"strings"
	"testing"
)

// checkTicks verifies the NiceTicks contract for one call.
func checkTicks(t *testing.T, lo, hi float64, n int, ticks []float64) {
	t.Helper()
	if lo > hi {
		lo, hi = hi, lo
	}
	if len(ticks) < 2 {
		t.Fatalf("NiceTicks(%g,%g,%d) = %v: fewer than 2 ticks", lo, hi, n, ticks)
	}
	if ticks[0] > lo || ticks[len(ticks)-1] < hi {
		t.Errorf("NiceTicks(%g,%g,%d) = %v does not cover the range", lo, hi, n, ticks)
	}
	for i := 1; i < len(ticks); i++ {
		if !(ticks[i] > ticks[i-1]) {
			t.Errorf("NiceTicks(%g,%g,%d) = %v not strictly increasing at %d", lo, hi, n, ticks, i)
		}
	}
	// the step, from the whole span (a single difference loses digits when
	// the ticks are large compared with the step)
	step := (ticks[len(ticks)-1] - ticks[0]) / float64(len(ticks)-1)
	k := math.Floor(math.Log10(step) + 1e-9)
	m := step / math.Pow10(int(k))
	mr := math.Round(m)
	if (mr != 1 && mr != 2 && mr != 5) || math.Abs(m-mr) > 1e-6 {
		t.Errorf("NiceTicks(%g,%g,%d): step %g is not 1, 2 or 5 x 10^k", lo, hi, n, step)
	}
	step = mr * math.Pow10(int(k))
	for i, v := range ticks {
		// equal spacing and every tick an integer multiple of the step
		q := v / step
		tol := 1e-9*math.Abs(q) + 1e-6
		if math.Abs(q-math.Round(q)) > tol {
			t.Errorf("NiceTicks(%g,%g,%d): tick %g is not a multiple of %g", lo, hi, n, v, step)
		}
		if i > 0 {
			if d := math.Round(q) - math.Round(ticks[i-1]/step); d != 1 {
				t.Errorf("NiceTicks(%g,%g,%d): uneven spacing at %d: %v", lo, hi, n, i, ticks)
			}
		}
	}
	// first and last tick lie within one step outside the range
	if ticks[0] < lo-step*(1+1e-9) || ticks[len(ticks)-1] > hi+step*(1+1e-9) {
		t.Errorf("NiceTicks(%g,%g,%d) = %v overshoots by more than a step", lo, hi, n, ticks)
	}
	// about n ticks: the 1-2-5 rule keeps the step within a factor sqrt(5/2)
	// of (hi-lo)/(n-1), so the count stays within these bounds
	if n >= 2 && hi > lo {
		maxCount := int(float64(n-1)*math.Sqrt(2.5)) + 3
		if len(ticks) > maxCount {
			t.Errorf("NiceTicks(%g,%g,%d) gave %d ticks, want at most %d", lo, hi, n, len(ticks), maxCount)
		}
	}
}

func TestNiceTicksTable(t *testing.T) {
	cases := []struct {
		lo, hi float64
		n      int
		want   []float64 // nil = check properties only
	}{
		// raw step 0.25 -> 2 x 10^-1
		{0, 1, 5, []float64{0, 0.2, 0.4, 0.6, 0.8, 1}},
		// monthly 1950-2025: raw 15.2 -> 20 years
		{1950 + 0.5/12, 2025 + 11.5/12, 6, []float64{1940, 1960, 1980, 2000, 2020, 2040}},
		// raw 10.5 -> 10 years
		{1955.5, 2018.5, 7, []float64{1950, 1960, 1970, 1980, 1990, 2000, 2010, 2020}},
		// one year of months: raw 0.18 -> 0.2
		{2020 + 0.5/12, 2020 + 11.5/12, 6, []float64{2020, 2020.2, 2020.4, 2020.6, 2020.8, 2021}},
		// reversed bounds
		{10, -10, 5, []float64{-10, -5, 0, 5, 10}},
		// 0.1 multiples must be the doubles nearest the decimals
		{0.1, 0.7, 7, []float64{0.1, 0.2, 0.3, 0.4, 0.5, 0.6, 0.7}},
		{-0.43, 1.27, 5, nil},
		{0.001, 0.0013, 4, nil},
		{1e6, 3.3e6, 5, nil},
		{-2.5e-7, 7.5e-7, 6, nil},
		{273.15, 288.4, 8, nil},
		{-1, 1, 2, nil},
		{5, 6, 1, nil},     // n < 2
		{0, 1, 10000, nil}, // n capped
		{-5, -5, 5, nil},   // zero width
		{0, 0, 5, nil},
		{1e300, 1.7e308, 5, nil},
		{-1.7e308, 1.7e308, 5, nil},
	}
	for _, c := range cases {
		got := NiceTicks(c.lo, c.hi, c.n)
		lo, hi := c.lo, c.hi
		if lo == hi {
			lo, hi = widen(lo)
		}
		if c.lo >= 1e300 || c.lo <= -1e300 {
			// edge of float64: covering is all that can be asked
			if len(got) < 2 || got[0] > math.Min(lo, hi) || got[len(got)-1] < math.Max(lo, hi) {
				t.Errorf("NiceTicks(%g,%g) = %v", c.lo, c.hi, got)
			}
			continue
		}
		checkTicks(t, lo, hi, max(c.n, 2), got)
		if c.want != nil {
			if len(got) != len(c.want) {
				t.Errorf("NiceTicks(%g,%g,%d) = %v, want %v", c.lo, c.hi, c.n, got, c.want)
				continue
			}
			for i := range got {
				if got[i] != c.want[i] { // exact: ticks are the nearest doubles
					t.Errorf("NiceTicks(%g,%g,%d)[%d] = %v, want %v", c.lo, c.hi, c.n, i, got[i], c.want[i])
				}
			}
		}
	}
}

func TestNiceTicksBadInput(t *testing.T) {
	for _, c := range [][2]float64{{math.NaN(), 1}, {0, math.NaN()}, {math.Inf(-1), 0}, {0, math.Inf(1)}} {
		if got := NiceTicks(c[0], c[1], 5); got != nil {
			t.Errorf("NiceTicks(%v,%v) = %v, want nil", c[0], c[1], got)
		}
	}
	// a one-ulp range far from zero (regression: once looped forever)
	for _, v := range []float64{math.Float64frombits(0x3b767fee42d13076), 1e17, -3e200} {
		got := NiceTicks(v, math.Nextafter(v, math.Inf(1)), 6)
		if len(got) < 2 || got[0] > v || got[len(got)-1] < math.Nextafter(v, math.Inf(1)) {
			t.Errorf("NiceTicks one ulp at %g = %v", v, got)
		}
	}
	// subnormal width: no round step representable, falls back to the bounds
	got := NiceTicks(0, 5e-324, 5)
	if len(got) < 2 || got[0] > 0 || got[len(got)-1] < 5e-324 {
		t.Errorf("NiceTicks(0,5e-324) = %v", got)
	}
}

func TestNiceTicksRandom(t *testing.T) {
	r := rand.New(rand.NewPCG(1, 2))
	for i := 0; i < 5000; i++ {
		scale := math.Pow10(r.IntN(20) - 10)
		lo := (r.Float64()*2 - 1) * scale * float64(1+r.IntN(1000))
		hi := lo + r.Float64()*scale*float64(1+r.IntN(50))
		n := 2 + r.IntN(12)
		if lo == hi {
			continue
		}
		checkTicks(t, lo, hi, n, NiceTicks(lo, hi, n))
	}
}

func TestTickLabels(t *testing.T) {
	cases := []struct {
		lo, hi float64
		n      int
		want   string
	}{
		{1950, 2025, 6, "1940 1960 1980 2000 2020 2040"},
		{0, 1, 5, "0 0.2 0.4 0.6 0.8 1"},
		{0.1, 0.7, 7, "0.1 0.2 0.3 0.4 0.5 0.6 0.7"},
		{0.2, 0.3, 3, "0.2 0.25 0.3"},
		{-1, 1, 5, "-1 -0.5 0 0.5 1"},
		{2020, 2021, 5, "2020 2020.2 2020.4 2020.6 2020.8 2021"},
		{1e10, 3e10, 3, "1e10 2e10 3e10"},
		{1.2e20, 1.5e20, 4, "1.2e20 1.3e20 1.4e20 1.5e20"},
		{2e-9, 8e-9, 4, "2e-9 4e-9 6e-9 8e-9"},
	}
	for _, c := range cases {
		ticks, k := niceTicks(c.lo, c.hi, c.n)
		got := strings.Join(tickLabels(ticks, k), " ")
		if got != c.want {
			t.Errorf("labels for [%g,%g] n=%d = %q, want %q", c.lo, c.hi, c.n, got, c.want)
		}
	}
}

// TestTickLabelsNoNoise: over many ranges, every label parses back to its
// tick to within a thousandth of a step, and has no trailing zeros or more
// decimals than the step needs.
func TestTickLabelsNoNoise(t *testing.T) {
	r := rand.New(rand.NewPCG(3, 4))
	for i := 0; i < 2000; i++ {
		scale := math.Pow10(r.IntN(12) - 5)
		lo := (r.Float64()*2 - 1) * scale * 100
		hi := lo + r.Float64()*scale*10 + scale*1e-3
		ticks, k := niceTicks(lo, hi, 2+r.IntN(8))
		labels := tickLabels(ticks, k)
		step := ticks[1] - ticks[0]
		for j, s := range labels {
			v, err := strconv.ParseFloat(s, 64)
			if err != nil {
				t.Fatalf("label %q does not parse", s)
			}
			if math.Abs(v-ticks[j]) > step*1e-3 {
				t.Errorf("label %q for tick %g", s, ticks[j])
			}
			mant := s
			if e := strings.IndexByte(s, 'e'); e >= 0 {
				mant = s[:e]
			}
			if strings.Contains(mant, ".") && strings.HasSuffix(mant, "0") {
				t.Errorf("label %q has trailing zeros", s)
			}
			if dot := strings.IndexByte(mant, '.'); dot >= 0 && !strings.Contains(s, "e") && len(mant)-dot-1 > max(0, -k) {
				t.Errorf("label %q has more decimals than step %g needs", s, step)
			}
		}
	}
}

func TestTrimNum(t *testing.T) {
	cases := map[string]string{
		"1990": "1990", "0.250": "0.25", "2.000": "2", "-0": "0", "-0.0": "0",
		"1.20e+20": "1.2e20", "5.0e-09": "5e-9", "1e+00": "1",
	}
	for in, want := range cases {
		if got := trimNum(in); got != want {
			t.Errorf("trimNum(%q) = %q, want %q", in, got, want)
		}
	}
}

func FuzzNiceTicks(f *testing.F) {
	f.Add(0.0, 1.0, 5)
	f.Add(1950.04, 2025.96, 6)
	f.Add(-1.7e308, 1.7e308, 2)
	f.Add(1e17, 1e17+16, 7)
	f.Add(5e-324, 0.0, 1000000)
	f.Fuzz(func(t *testing.T, lo, hi float64, n int) {
		got := NiceTicks(lo, hi, n)
		if !finite(lo) || !finite(hi) {
			if got != nil {
				t.Fatalf("non-finite bounds gave %v", got)
			}
			return
		}
		if lo > hi {
			lo, hi = hi, lo
		}
		if lo == hi {
			lo, hi = widen(lo)
		}
		if len(got) < 2 || got[0] > lo || got[len(got)-1] < hi {
			t.Fatalf("NiceTicks(%g,%g,%d) = %v does not cover", lo, hi, n, got)
		}
		for i := 1; i < len(got); i++ {
			if !(got[i] > got[i-1]) || !finite(got[i]) {
				t.Fatalf("NiceTicks(%g,%g,%d) = %v not strictly increasing", lo, hi, n, got)
			}
		}
	})
}
