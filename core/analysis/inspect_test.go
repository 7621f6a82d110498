package analysis

import (
	"strings"
	"testing"

	"heatledger/core/series"
)

func TestInspect(t *testing.T) {
	rep, loaded := Inspect([]File{
		{"a.csv", []byte("date,x (K)\n1980-01,1\n1980-02,\n1980-03,3\n")},
		{"bad.csv", []byte("year,x\n1990,1\n1991,warm\n")},
	}, series.Options{})
	if len(rep.Series) != 1 {
		t.Fatalf("%+v", rep)
	}
	s := rep.Series[0]
	if s.Name != "x" || s.Unit != "K" || s.Resolution != "monthly" || s.Count != 3 || s.Missing != 1 ||
		s.StartLabel != "1980-01" || s.EndLabel != "1980-03" || s.Start != 1980+0.5/12 {
		t.Errorf("summary %+v", s)
	}
	if len(rep.Errors) != 1 || !strings.HasPrefix(rep.Errors[0], "bad.csv:3:2: ") {
		t.Errorf("errors %v", rep.Errors)
	}
	if e, ok := loaded[1].ErrPlace(); !ok || e.Line != 3 {
		t.Errorf("place %v", e)
	}
	if len(rep.Warnings) != 1 || !strings.HasPrefix(rep.Warnings[0], "a.csv: ") {
		t.Errorf("warnings %v", rep.Warnings)
	}
}

func TestWorkspaceFind(t *testing.T) {
	w := NewWorkspace([]File{
		{"dir/a.csv", []byte("year,x,y\n1990,1,2\n")},
		{"b.csv", []byte("year,x\n1990,3\n")},
	}, series.Options{})
	if s, err := w.Find("y"); err != nil || s.Values[0] != 2 {
		t.Errorf("y: %v %v", s, err)
	}
	if _, err := w.Find("x"); err == nil || !strings.Contains(err.Error(), "several files") {
		t.Errorf("ambiguous x: %v", err)
	}
	if s, err := w.Find("b.csv:x"); err != nil || s.Values[0] != 3 {
		t.Errorf("b.csv:x: %v %v", s, err)
	}
	if s, err := w.Find("a.csv:x"); err != nil || s.Values[0] != 1 {
		t.Errorf("a.csv:x by base name: %v %v", s, err)
	}
	if _, err := w.Find("z"); err == nil || !strings.Contains(err.Error(), "x, x, y") {
		t.Errorf("missing z: %v", err)
	}
}
