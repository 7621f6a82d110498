package series

import (
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"testing"
)

// TestElninoWide reads the `elnino` file shipped by Debian's
// python3-statsmodels (testdata/elnino/elnino.csv, copied unchanged; see
// testdata/elnino/README.md) as a wide table and checks every value against
// the values statsmodels' own loader read (computed with statsmodels 0.13 by
// testdata/ref/elnino_values.py).
func TestElninoWide(t *testing.T) {
	data, err := os.ReadFile(filepath.Join("..", "..", "testdata", "elnino", "elnino.csv"))
	if err != nil {
		t.Fatal(err)
	}
	res, err := Read("elnino.csv", data, Options{})
	if err != nil {
		t.Fatal(err)
	}
	if len(res.Series) != 1 {
		t.Fatalf("%d series", len(res.Series))
	}
	s := res.Series[0]
	if s.Name != "elnino" || s.Resolution != Monthly || s.Len() != 732 || s.Missing() != 0 {
		t.Fatalf("got %q %v count %d missing %d", s.Name, s.Resolution, s.Len(), s.Missing())
	}
	raw, err := os.ReadFile(filepath.Join("..", "..", "testdata", "ref", "elnino_values.json"))
	if err != nil {
		t.Fatal(err)
	}
	var ref struct {
		N      int `json:"n"`
		Values []struct {
			Year, Month int
			T, Value    float64
		} `json:"values"`
	}
	if err := json.Unmarshal(raw, &ref); err != nil {
		t.Fatal(err)
	}
	if ref.N != 732 || len(ref.Values) != 732 {
		t.Fatalf("reference holds %d values", len(ref.Values))
	}
	for i, v := range ref.Values {
		k := MonthIndex(v.Year, v.Month) - s.First
		if k != i {
			t.Fatalf("reference value %d (%d-%02d) sits at step %d", i, v.Year, v.Month, k)
		}
		if s.Values[k] != v.Value {
			t.Errorf("%d-%02d: read %v, statsmodels %v", v.Year, v.Month, s.Values[k], v.Value)
		}
		if math.Abs(s.Times[k]-v.T) > 1e-9 {
			t.Errorf("%d-%02d: time %v, want %v", v.Year, v.Month, s.Times[k], v.T)
		}
	}
}
