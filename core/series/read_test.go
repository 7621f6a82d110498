package series

import (
	"bufio"
	"errors"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
)

// want describes one expected series: name, unit, resolution, first step
// label, values (NaN for missing).
type want struct {
	name, unit string
	res        Resolution
	first      string
	values     []float64
}

var nan = math.NaN()

func sameFloats(a, b []float64, tol float64) bool {
	if len(a) != len(b) {
		return false
	}
	for i := range a {
		if math.IsNaN(a[i]) != math.IsNaN(b[i]) {
			return false
		}
		if !math.IsNaN(a[i]) && math.Abs(a[i]-b[i]) > tol {
			return false
		}
	}
	return true
}

func TestReadFormats(t *testing.T) {
	cases := []struct {
		name  string
		text  string
		opt   Options
		want  []want
		warns []string // substrings that must appear among the warnings
	}{
		{"comma ISO month", "date,anomaly (K)\n1980-01,0.1\n1980-02,0.2\n", Options{},
			[]want{{"anomaly", "K", Monthly, "1980-01", []float64{0.1, 0.2}}}, nil},
		{"units in brackets", "date,forcing [W m-2]\n1980-01,1\n", Options{},
			[]want{{"forcing", "W m-2", Monthly, "1980-01", []float64{1}}}, nil},
		{"semicolon decimal comma", "date;a (K);b\n1980-01;0,5;-1,25\n1980-02;1,0;2\n", Options{},
			[]want{{"a", "K", Monthly, "1980-01", []float64{0.5, 1}}, {"b", "", Monthly, "1980-01", []float64{-1.25, 2}}}, nil},
		{"tab decimal comma", "year\tx\n1990\t1,5\n1991\t2,5\n", Options{},
			[]want{{"x", "", Annual, "1990", []float64{1.5, 2.5}}}, nil},
		{"spaces fixed width with unit header", "year   anomaly (K)\n 1990   0.10\n 1991  -0.05\n", Options{},
			[]want{{"anomaly", "K", Annual, "1990", []float64{0.10, -0.05}}}, nil},
		{"forced delimiter", "year|x\n", Options{Delimiter: '|'}, nil, nil}, // error case handled below
		{"BOM CRLF blank and comment lines", "\xef\xbb\xbf# made up\r\n\r\nyear,x\r\n% note\r\n1990,1\r\n\r\n1991,2\r\n", Options{},
			[]want{{"x", "", Annual, "1990", []float64{1, 2}}}, nil},
		{"metadata lines before header", "Tessary surface record\nversion 2, provisional\nyear,x\n1990,1\n1991,2\n", Options{},
			[]want{{"x", "", Annual, "1990", []float64{1, 2}}}, []string{"notes above the table"}},
		{"RFC4180 quoted delimiter", "year,\"name, with comma\"\n1990,1\n", Options{},
			[]want{{"name, with comma", "", Annual, "1990", []float64{1}}}, nil},
		{"RFC4180 doubled quote", "year,\"say \"\"hi\"\"\"\n1990,1\n", Options{},
			[]want{{"say \"hi\"", "", Annual, "1990", []float64{1}}}, nil},
		{"RFC4180 newline inside quotes", "year,\"two\nlines\"\n1990,1\n1991,2\n", Options{},
			[]want{{"two\nlines", "", Annual, "1990", []float64{1, 2}}}, nil},
		{"quoted numbers", "\"year\",\"x\"\n\"1990\",\"1.5\"\n", Options{},
			[]want{{"x", "", Annual, "1990", []float64{1.5}}}, nil},
		{"decimal year mid-month", "time,x\n1979.042,1\n1979.125,2\n1979.208,3\n", Options{},
			[]want{{"x", "", Monthly, "1979-01", []float64{1, 2, 3}}}, []string{"mid-month"}},
		{"decimal year start-of-month", "time,x\n1979.000,1\n1979.083,2\n1979.167,3\n", Options{},
			[]want{{"x", "", Monthly, "1979-01", []float64{1, 2, 3}}}, []string{"start-of-month"}},
		{"decimal year annual mid-year", "time,x\n1990.5,1\n1991.5,2\n", Options{},
			[]want{{"x", "", Annual, "1990", []float64{1, 2}}}, nil},
		{"year month columns", "year,month,x\n1990,11,1\n1990,12,2\n1991,1,3\n", Options{},
			[]want{{"x", "", Monthly, "1990-11", []float64{1, 2, 3}}}, nil},
		{"year month names", "Year,Month,x\n1990,Nov,1\n1990,December,2\n", Options{},
			[]want{{"x", "", Monthly, "1990-11", []float64{1, 2}}}, nil},
		{"YYYY-MM with gap", "date,x\n1990-01,1\n1990-04,4\n", Options{},
			[]want{{"x", "", Monthly, "1990-01", []float64{1, nan, nan, 4}}}, nil},
		{"YYYY/MM", "date,x\n1990/01,1\n1990/02,2\n", Options{},
			[]want{{"x", "", Monthly, "1990-01", []float64{1, 2}}}, nil},
		{"YYYYMM integers", "yyyymm,x\n199011,1\n199012,2\n199101,3\n", Options{},
			[]want{{"x", "", Monthly, "1990-11", []float64{1, 2, 3}}}, nil},
		{"monthly dated by day", "date,x\n1990-01-01,1\n1990-02-01,2\n", Options{},
			[]want{{"x", "", Monthly, "1990-01", []float64{1, 2}}}, nil},
		{"year only", "year,x\n1990,1\n1992,3\n", Options{},
			[]want{{"x", "", Annual, "1990", []float64{1, nan, 3}}}, nil},
		{"season labels with year", "year,season,x\n1990,DJF,1\n1990,JFM,2\n1990,NDJ,3\n", Options{},
			[]want{{"x", "", Monthly, "1990-01", []float64{1, 2, nan, nan, nan, nan, nan, nan, nan, nan, nan, 3}}}, []string{}},
		{"wide table with annual column", "YEAR,JAN,FEB,MAR,APR,MAY,JUN,JUL,AUG,SEP,OCT,NOV,DEC,ANN\n1990,1,2,3,4,5,6,7,8,9,10,11,12,6.5\n1991,13,14,15,16,17,18,19,20,21,22,23,,14\n", Options{},
			[]want{{"wide", "", Monthly, "1990-01", []float64{1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 11, 12, 13, 14, 15, 16, 17, 18, 19, 20, 21, 22, 23}}}, []string{"unpivoted", "not a month"}},
		{"wide season table", "year,DJF,JFM,FMA,MAM,AMJ,MJJ,JJA,JAS,ASO,SON,OND,NDJ\n1990,1,2,3,4,5,6,7,8,9,10,11,12\n", Options{},
			[]want{{"wide", "", Monthly, "1990-01", []float64{1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 11, 12}}}, []string{"central month"}},
		{"missing tokens", "year,x\n1990,NA\n1991,NaN\n1992,-\n1993,***\n1994,\n1995,-999\n1996,-99.99\n1997,1\n1998,-9999\n1999,2\n", Options{},
			[]want{{"x", "", Annual, "1997", []float64{1, nan, 2}}}, []string{"treated as missing"}},
		{"custom sentinels", "year,x\n1990,1\n1991,-1\n1992,-999\n", Options{Sentinels: []float64{-1}},
			[]want{{"x", "", Annual, "1990", []float64{1, nan, -999}}}, nil},
		{"scale", "year,x\n1990,125\n1991,-30\n", Options{Scale: 0.01},
			[]want{{"x", "", Annual, "1990", []float64{1.25, -0.30}}}, []string{"multiplied by 0.01"}},
		{"several value columns and a text column", "date,a,flag,b\n1990-01,1,ok,2\n1990-02,3,bad,\n1990-03,5,ok,6\n", Options{},
			[]want{{"a", "", Monthly, "1990-01", []float64{1, 3, 5}}, {"b", "", Monthly, "1990-01", []float64{2, nan, 6}}}, []string{"holds text"}},
		{"trailing and leading missing trimmed", "year,a,b\n1990,,1\n1991,2,2\n1992,3,\n", Options{},
			[]want{{"a", "", Annual, "1991", []float64{2, 3}}, {"b", "", Annual, "1990", []float64{1, 2}}}, nil},
		{"daily to monthly", dailyText(), Options{},
			[]want{{"x", "", Monthly, "1990-01", []float64{16, nan, 2}}}, []string{"daily values averaged", "too few days"}},
		{"dmy with setting", "date,x\n31/01/1990,1\n28/02/1990,2\n", Options{DateOrder: "dmy"},
			[]want{{"x", "", Monthly, "1990-01", []float64{1, 2}}}, nil},
		{"mdy with setting", "date,x\n01/31/1990,1\n02/28/1990,2\n", Options{DateOrder: "mdy"},
			[]want{{"x", "", Monthly, "1990-01", []float64{1, 2}}}, nil},
		{"no header", "1990,1\n1991,2\n", Options{},
			[]want{{"column 2", "", Annual, "1990", []float64{1, 2}}}, []string{"no header"}},
		{"time column not first", "a,year\n1,1990\n2,1991\n", Options{},
			[]want{{"a", "", Annual, "1990", []float64{1, 2}}}, nil},
		{"unicode minus", "year,x\n1990,\u22121.5\n", Options{},
			[]want{{"x", "", Annual, "1990", []float64{-1.5}}}, nil},
		{"latin-1 text", "year,temp\xb0\n1990,1\n", Options{},
			[]want{{"temp\u00b0", "", Annual, "1990", []float64{1}}}, []string{"Latin-1"}},
		{"duplicate names", "year,x,x\n1990,1,2\n", Options{},
			[]want{{"x", "", Annual, "1990", []float64{1}}, {"x (2)", "", Annual, "1990", []float64{2}}}, nil},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			name := "wide.csv"
			res, err := Read(name, []byte(c.text), c.opt)
			if c.want == nil {
				if err == nil {
					t.Fatalf("expected an error, got %d series", len(res.Series))
				}
				return
			}
			if err != nil {
				t.Fatalf("Read: %v", err)
			}
			if len(res.Series) != len(c.want) {
				t.Fatalf("got %d series, want %d (%v)", len(res.Series), len(c.want), res.Warnings)
			}
			for i, w := range c.want {
				s := res.Series[i]
				if s.Name != w.name || s.Unit != w.unit || s.Resolution != w.res {
					t.Errorf("series %d: got %q %q %v, want %q %q %v", i, s.Name, s.Unit, s.Resolution, w.name, w.unit, w.res)
				}
				if got := StepLabel(s.Resolution, s.First); got != w.first {
					t.Errorf("series %d starts %s, want %s", i, got, w.first)
				}
				if !sameFloats(s.Values, w.values, 1e-12) {
					t.Errorf("series %d values %v, want %v", i, s.Values, w.values)
				}
				for k := range s.Times {
					if k > 0 && !(s.Times[k] > s.Times[k-1]) {
						t.Fatalf("times not increasing at %d", k)
					}
				}
			}
			all := strings.Join(res.Warnings, "\n")
			for _, w := range c.warns {
				if !strings.Contains(all, w) {
					t.Errorf("warnings %q lack %q", all, w)
				}
			}
		})
	}
}

// dailyText: January 1990 complete (values 1..31, mean 16), February with
// only 5 days (below the 20-day rule, so missing).
func dailyText() string {
	var b strings.Builder
	b.WriteString("date,x\n")
	for d := 1; d <= 31; d++ {
		b.WriteString("1990-01-" + pad2(d) + "," + strconv.Itoa(d) + "\n")
	}
	for d := 1; d <= 5; d++ {
		b.WriteString("1990-02-" + pad2(d) + ",1\n")
	}
	for d := 1; d <= 31; d++ {
		b.WriteString("1990-03-" + pad2(d) + ",2\n")
	}
	return b.String()
}

func pad2(d int) string {
	if d < 10 {
		return "0" + strconv.Itoa(d)
	}
	return strconv.Itoa(d)
}

func TestTimesConvention(t *testing.T) {
	// Monthly values sit at mid-month, annual values at mid-year (DESIGN.md).
	res, err := Read("m.csv", []byte("date,x\n1979-01,1\n1979-12,2\n"), Options{})
	if err != nil {
		t.Fatal(err)
	}
	s := res.Series[0]
	if math.Abs(s.Times[0]-(1979+0.5/12)) > 1e-12 || math.Abs(s.End()-(1979+11.5/12)) > 1e-12 {
		t.Errorf("monthly times %v", s.Times)
	}
	res, err = Read("a.csv", []byte("year,x\n1979,1\n"), Options{})
	if err != nil {
		t.Fatal(err)
	}
	if res.Series[0].Times[0] != 1979.5 {
		t.Errorf("annual time %v", res.Series[0].Times[0])
	}
}

func TestSizeLimit(t *testing.T) {
	data := []byte("year,x\n1990,1\n1991,2\n")
	_, err := Read("big.csv", data, Options{MaxBytes: 10})
	var e *Error
	if !errors.As(err, &e) || !strings.Contains(e.Msg, "size limit of 10 bytes") {
		t.Fatalf("want a size-limit error naming the limit, got %v", err)
	}
}

func TestUnsupportedDelimiter(t *testing.T) {
	_, err := Read("x.csv", []byte("year|x\n1990|1\n"), Options{Delimiter: '|'})
	if err == nil || !strings.Contains(err.Error(), "not supported") {
		t.Fatalf("got %v", err)
	}
}

// TestBadFiles reads every file in testdata/bad and checks the error's line,
// column and words against testdata/bad/cases.tsv; every file must be listed.
func TestBadFiles(t *testing.T) {
	dir := filepath.Join("..", "..", "testdata", "bad")
	f, err := os.Open(filepath.Join(dir, "cases.tsv"))
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	listed := map[string]bool{"cases.tsv": true}
	sc := bufio.NewScanner(f)
	n := 0
	for sc.Scan() {
		ln := sc.Text()
		if strings.HasPrefix(ln, "#") || strings.TrimSpace(ln) == "" {
			continue
		}
		parts := strings.Split(ln, "\t")
		if len(parts) != 4 {
			t.Fatalf("cases.tsv line %q: want 4 tab-separated fields", ln)
		}
		file := parts[0]
		line, _ := strconv.Atoi(parts[1])
		col, _ := strconv.Atoi(parts[2])
		listed[file] = true
		n++
		t.Run(file, func(t *testing.T) {
			data, err := os.ReadFile(filepath.Join(dir, file))
			if err != nil {
				t.Fatal(err)
			}
			res, err := Read(file, data, Options{})
			if err == nil {
				t.Fatalf("no error; read %d series", len(res.Series))
			}
			var e *Error
			if !errors.As(err, &e) {
				t.Fatalf("error %v is not a *series.Error", err)
			}
			if e.File != file || e.Line != line || e.Column != col {
				t.Errorf("error at %s:%d:%d, want %s:%d:%d (%s)", e.File, e.Line, e.Column, file, line, col, e.Msg)
			}
			if !strings.HasPrefix(err.Error(), file+":"+parts[1]+":"+parts[2]+": ") {
				t.Errorf("message %q lacks the FILE:LINE:COLUMN prefix", err.Error())
			}
			for _, w := range strings.Split(parts[3], "|") {
				if !strings.Contains(e.Msg, w) {
					t.Errorf("message %q lacks %q", e.Msg, w)
				}
			}
		})
	}
	if n < 25 {
		t.Errorf("only %d bad files listed; the issue asks for at least 25", n)
	}
	entries, _ := os.ReadDir(dir)
	for _, en := range entries {
		if !listed[en.Name()] {
			t.Errorf("testdata/bad/%s is not listed in cases.tsv", en.Name())
		}
	}
}

func FuzzRead(f *testing.F) {
	seeds := []string{
		"date,x\n1990-01,1\n1990-02,2\n",
		"year;jan;feb;mar;apr;may;jun;jul;aug;sep;oct;nov;dec\n1990;1;2;3;4;5;6;7;8;9;10;11;12\n",
		"time x\n1979.042 1\n1979.125 2\n",
		"year,season,x\n1990,DJF,1\n",
		"\"a\",\"b\nc\"\n1,2\n",
		"year,month,x\n1990,1,NA\n1990,2,-999\n",
		"date,x\n1990-01-01,1\n1990-01-02,2\n",
		"199001,1\n199002,2\n",
		"# c\n%c\n\n",
		"1,2,3\n4,5\n",
	}
	for _, s := range seeds {
		f.Add([]byte(s))
	}
	entries, _ := os.ReadDir(filepath.Join("..", "..", "testdata", "bad"))
	for _, en := range entries {
		if b, err := os.ReadFile(filepath.Join("..", "..", "testdata", "bad", en.Name())); err == nil {
			f.Add(b)
		}
	}
	f.Fuzz(func(t *testing.T, data []byte) {
		res, err := Read("fuzz.csv", data, Options{MaxBytes: 1 << 20})
		if err != nil {
			var e *Error
			if !errors.As(err, &e) || e.Line < 1 || e.Column < 1 {
				t.Fatalf("error without a place: %v", err)
			}
			return
		}
		for _, s := range res.Series {
			if len(s.Times) != len(s.Values) || len(s.Values) == 0 {
				t.Fatalf("series %q: %d times, %d values", s.Name, len(s.Times), len(s.Values))
			}
			for i := 1; i < len(s.Times); i++ {
				if !(s.Times[i] > s.Times[i-1]) {
					t.Fatalf("series %q: times not strictly increasing at %d", s.Name, i)
				}
			}
			if math.IsNaN(s.Values[0]) || math.IsNaN(s.Values[len(s.Values)-1]) {
				t.Fatalf("series %q starts or ends with a missing value", s.Name)
			}
		}
	})
}

func BenchmarkRead(b *testing.B) {
	var sb strings.Builder
	sb.WriteString("# benchmark table\ndate,surface (K),second (K),index (K)\n")
	for i := 0; i < 60000; i++ {
		y, m := YearMonth(MonthIndex(1000, 1) + i)
		sb.WriteString(strconv.Itoa(y) + "-" + pad2(m) + "," +
			strconv.FormatFloat(math.Sin(float64(i)*0.1), 'f', 4, 64) + "," +
			strconv.FormatFloat(math.Cos(float64(i)*0.07), 'f', 4, 64) + ",-999\n")
	}
	data := []byte(sb.String())
	b.SetBytes(int64(len(data)))
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		if _, err := Read("bench.csv", data, Options{}); err != nil {
			b.Fatal(err)
		}
	}
}
