package ui

import (
	"strings"
	"testing"

	"heatledger/core/analysis"
)

// TestReread: a loaded file can be read again with other options (the
// reader's settings made reachable from the page), keeping its place; a bad
// option is an error and leaves the file as it was.
func TestReread(t *testing.T) {
	w := NewWorkspace(nil)
	f := w.Add("codes.csv", []byte("year,x\n1990,-1\n1991,250\n1992,300\n"))
	if f.Result == nil || f.Result.Series[0].Len() != 3 || f.Result.Series[0].Missing() != 0 {
		t.Fatalf("first reading %+v", f.Result)
	}
	if err := w.Reread(f.ID, analysis.ReadingForm{Missing: "-1", Scale: "0.01"}); err != nil {
		t.Fatal(err)
	}
	g := w.Files[0]
	s := g.Result.Series[0]
	if len(w.Files) != 1 || g.ID != f.ID || s.First != 1991 || s.Values[0] != 2.5 || g.Reading.Missing != "-1" {
		t.Errorf("after reading again: %d files, id %d, series %v from %d, form %+v", len(w.Files), g.ID, s.Values, s.First, g.Reading)
	}
	if err := w.Reread(f.ID, analysis.ReadingForm{Scale: "zero"}); err == nil || !strings.Contains(err.Error(), "scale") {
		t.Errorf("bad scale: %v", err)
	}
	if w.Files[0].Result.Series[0].Values[0] != 2.5 {
		t.Error("a refused form changed the file")
	}
	// the data view's handlers: open the form, change a field, read again
	dv := &DataView{WS: w}
	dv.onReadOptions(f.ID)
	if !dv.readOpen(w.Files[0]) || dv.readForm.Missing != "-1" {
		t.Fatalf("form not open with the file's options: %+v", dv.readForm)
	}
	dv.readForm.Scale = "1"
	dv.onReread()
	if w.Files[0].Result.Series[0].Values[0] != 250 || !strings.Contains(dv.readNote, "Read again") {
		t.Errorf("reread from the view: %v, note %q", w.Files[0].Result.Series[0].Values, dv.readNote)
	}
}
