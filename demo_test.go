package heatledger

import (
	"bytes"
	"encoding/csv"
	"encoding/json"
	"fmt"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"runtime"
	"strconv"
	"testing"
)

// readDemoCSV parses an embedded demo file, skipping '#' comment lines, and
// returns its header and rows.
func readDemoCSV(t *testing.T, data []byte) (header []string, rows [][]string) {
	t.Helper()
	r := csv.NewReader(bytes.NewReader(data))
	r.Comment = '#'
	recs, err := r.ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	if len(recs) < 2 {
		t.Fatalf("only %d records", len(recs))
	}
	return recs[0], recs[1:]
}

// demoTruth is the part of truth.json the tests read.
type demoTruth struct {
	Seed  uint64 `json:"seed"`
	Model struct {
		Lambda float64 `json:"lambda_w_m2_per_k"`
		F2x    float64 `json:"f2x_w_m2"`
		ECS    float64 `json:"ecs_k"`
	} `json:"model"`
	Eruptions []struct {
		Name    string  `json:"name"`
		Start   string  `json:"start"`
		PeakAOD float64 `json:"peak_aod"`
	} `json:"eruptions"`
	Forcing struct {
		AODBackground float64 `json:"aod_background"`
	} `json:"forcing"`
	OceanIndex struct {
		SD float64 `json:"sd_k"`
	} `json:"ocean_index"`
	SecondRecord struct {
		Missing int `json:"missing_months"`
	} `json:"second_record"`
}

func loadTruth(t *testing.T) demoTruth {
	t.Helper()
	var tr demoTruth
	if err := json.Unmarshal(DemoTruth(), &tr); err != nil {
		t.Fatalf("truth.json: %v", err)
	}
	return tr
}

func TestDemoFiles(t *testing.T) {
	files := DemoFiles()
	want := []struct {
		name   string
		header []string
	}{
		{"tessary_forcing.csv", []string{"date", "co2 (ppm)", "ch4 (ppb)", "n2o (ppb)", "aod (1)", "tsi (W m-2)", "aerosol_erf (W m-2)"}},
		{"tessary_ocean_heat.csv", []string{"year", "ocean_heat (ZJ)"}},
		{"tessary_surface.csv", []string{"date", "surface_anomaly (K)", "second_record (K)", "ocean_index (K)"}},
	}
	if len(files) != len(want) {
		t.Fatalf("DemoFiles: %d files, want %d", len(files), len(want))
	}
	tr := loadTruth(t)
	cols := map[string][][]float64{} // file -> column -> values (NaN = empty)
	for k, w := range want {
		f := files[k]
		if f.Name != w.name {
			t.Fatalf("file %d is %q, want %q", k, f.Name, w.name)
		}
		header, rows := readDemoCSV(t, f.Data)
		if fmt.Sprint(header) != fmt.Sprint(w.header) {
			t.Errorf("%s header %q, want %q", f.Name, header, w.header)
		}
		monthly := header[0] == "date"
		wantRows := 76
		if monthly {
			wantRows = 912
		}
		if len(rows) != wantRows {
			t.Fatalf("%s: %d rows, want %d", f.Name, len(rows), wantRows)
		}
		vals := make([][]float64, len(header))
		for i, row := range rows {
			wantTime := strconv.Itoa(1950 + i)
			if monthly {
				wantTime = fmt.Sprintf("%d-%02d", 1950+i/12, i%12+1)
			}
			if row[0] != wantTime {
				t.Fatalf("%s row %d: time %q, want %q", f.Name, i+1, row[0], wantTime)
			}
			for c := 1; c < len(row); c++ {
				v := math.NaN()
				if row[c] != "" || header[c] != "second_record (K)" {
					var err error
					if v, err = strconv.ParseFloat(row[c], 64); err != nil || math.IsNaN(v) || math.IsInf(v, 0) {
						t.Fatalf("%s %s column %q: %q is not a finite number", f.Name, row[0], header[c], row[c])
					}
				}
				vals[c] = append(vals[c], v)
			}
		}
		cols[f.Name] = vals
	}

	// Second record: 1950-1954 empty, complete from 1980, count as in truth.json.
	sec := cols["tessary_surface.csv"][2]
	missing := 0
	for i, v := range sec {
		if math.IsNaN(v) {
			missing++
			if i >= 30*12 {
				t.Errorf("second record missing at month %d (from 1980 it should be complete)", i)
			}
		} else if i < 5*12 {
			t.Errorf("second record has a value at month %d of 1950-1954", i)
		}
	}
	if missing != tr.SecondRecord.Missing {
		t.Errorf("second record: %d missing months, truth.json says %d", missing, tr.SecondRecord.Missing)
	}

	// Anomalies average zero over 1961-1990 (up to the 4-decimal rounding).
	for c, name := range map[int]string{1: "surface_anomaly", 2: "second_record"} {
		var s, n float64
		for _, v := range cols["tessary_surface.csv"][c][11*12 : 41*12] {
			if !math.IsNaN(v) {
				s, n = s+v, n+1
			}
		}
		if m := s / n; math.Abs(m) > 1e-4 {
			t.Errorf("%s 1961-1990 mean %g, want 0", name, m)
		}
	}

	// The ocean index is scaled to the SD stated in truth.json.
	var s, ss float64
	idx := cols["tessary_surface.csv"][3]
	for _, v := range idx {
		s, ss = s+v, ss+v*v
	}
	n := float64(len(idx))
	if sd := math.Sqrt(ss/n - (s/n)*(s/n)); math.Abs(sd-tr.OceanIndex.SD) > 1e-3 {
		t.Errorf("ocean index SD %g, truth.json says %g", sd, tr.OceanIndex.SD)
	}

	// Each eruption's AOD reaches its stated peak above background within a year of its start.
	aod := cols["tessary_forcing.csv"][4]
	for _, e := range tr.Eruptions {
		var y, m int
		if _, err := fmt.Sscanf(e.Start, "%d-%d", &y, &m); err != nil {
			t.Fatalf("eruption %s start %q: %v", e.Name, e.Start, err)
		}
		i0 := (y-1950)*12 + m - 1
		peak := 0.0
		for _, v := range aod[i0 : i0+12] {
			peak = math.Max(peak, v)
		}
		if got := peak - tr.Forcing.AODBackground; math.Abs(got-e.PeakAOD) > 1e-4 {
			t.Errorf("%s: AOD peak %g above background in the first year, truth.json says %g", e.Name, got, e.PeakAOD)
		}
	}

	if math.Abs(tr.Model.ECS-tr.Model.F2x/tr.Model.Lambda) > 1e-6 {
		t.Errorf("truth.json: ecs %g is not f2x/lambda = %g", tr.Model.ECS, tr.Model.F2x/tr.Model.Lambda)
	}
}

// TestDemoRegenerates runs the generator into a temporary directory and
// requires byte-identical output to the embedded files.
func TestDemoRegenerates(t *testing.T) {
	if runtime.GOOS == "js" || runtime.GOOS == "wasip1" || testing.Short() {
		t.Skip("needs the go command")
	}
	goCmd, err := exec.LookPath("go")
	if err != nil {
		t.Skip("go command not found")
	}
	dir := t.TempDir()
	cmd := exec.Command(goCmd, "run", "./testdata/demo", "-out", dir)
	if out, err := cmd.CombinedOutput(); err != nil {
		t.Fatalf("go run ./testdata/demo: %v\n%s", err, out)
	}
	names := []string{"truth.json"}
	for _, f := range DemoFiles() {
		names = append(names, f.Name)
	}
	for _, name := range names {
		got, err := os.ReadFile(filepath.Join(dir, name))
		if err != nil {
			t.Fatal(err)
		}
		want, err := DemoFS.ReadFile("testdata/demo/" + name)
		if err != nil {
			t.Fatal(err)
		}
		if !bytes.Equal(got, want) {
			t.Errorf("%s: regenerated bytes differ from the embedded file (run go generate .)", name)
		}
	}
}
