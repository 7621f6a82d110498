package ui

import (
	"strings"
	"testing"

	"heatledger/core/analysis"
)

// TestSessionRoundTrip saves a workspace with changed settings in three
// views and a brief, opens the file in a new workspace and finds the
// same forms, the brief and the data; the saved analyses run.
func TestSessionRoundTrip(t *testing.T) {
	ws := NewWorkspace(nil)
	ws.LoadDemo()
	ws.Add("station.csv", []byte("year,station_mean (K)\n2000,0.1\n2001,0.2\n2002,0.15\n2003,0.3\n2004,0.28\n"))
	_, _, _ = buildPage(t, ws) // the Data view

	ws.SetRole("station.csv:station_mean", analysis.RoleTarget)
	tv := &TrendsView{WS: ws}
	ws.RegisterView("trends", tv)
	tv.setup()
	tv.noise, tv.from, tv.to = "arma11", "1970", "2020"
	tv.refresh()
	tv.runSen()
	tv.brief("main")
	tv.brief("sen")

	bv := &BudgetView{WS: ws}
	ws.RegisterView("budget", bv)
	bv.Refs()
	bv.heat.From, bv.heat.To = "", "" // the whole record: saved empty, must stay empty
	bv.refreshHeat()
	bv.brief("heat")
	ws.Brief.Title = "Round trip"

	data, err := ws.SaveBytes()
	if err != nil {
		t.Fatal(err)
	}
	f, err := analysis.ParseAnalysisFile(data)
	if err != nil {
		t.Fatalf("the saved file does not parse: %v", err)
	}
	if f.Roles["station.csv:station_mean"] != analysis.RoleTarget || len(f.Roles) != 1 {
		t.Errorf("saved roles %v", f.Roles)
	}
	if !tv.picked["station.csv:station_mean"] {
		t.Errorf("the trends view did not start from the series given the target role: %v", tv.picked)
	}
	if len(f.Files) != 4 || f.Brief == nil || len(f.Brief.Items) != 4 || f.Brief.Title != "Round trip" {
		t.Fatalf("saved %d files, brief %+v", len(f.Files), f.Brief)
	}
	rep, err := analysis.Run(f)
	if err != nil || rep.Failed() > 0 {
		t.Fatalf("running the saved file: %v, %d failed: %+v", err, rep.Failed(), rep.Results)
	}

	w2 := NewWorkspace(nil)
	if err := w2.OpenAnalysis("saved"+analysis.AnalysisExt, data); err != nil {
		t.Fatal(err)
	}
	if w2.Roles["station.csv:station_mean"] != analysis.RoleTarget {
		t.Errorf("opened roles %v", w2.Roles)
	}
	if len(w2.Files) != 4 || len(w2.Brief.Items) != 4 || w2.Brief.Title != "Round trip" {
		t.Fatalf("opened: %d files, %d items, title %q", len(w2.Files), len(w2.Brief.Items), w2.Brief.Title)
	}
	t2 := &TrendsView{WS: w2}
	t2.setup()
	if t2.noise != "arma11" || t2.from != "1970" || t2.to != "2020" || t2.senSet == nil || t2.main == nil {
		t.Errorf("trends view after opening: noise %q window %s-%s sen %v main %v", t2.noise, t2.from, t2.to, t2.senSet != nil, t2.main != nil)
	}
	b2 := &BudgetView{WS: w2}
	b2.Refs()
	if b2.heat.From != "" || b2.heat.To != "" {
		t.Errorf("budget heat window came back as %q-%q, want the whole record (empty)", b2.heat.From, b2.heat.To)
	}
	// saving again gives the same file
	w2.RegisterView("trends", t2)
	w2.RegisterView("budget", b2)
	again, err := w2.SaveBytes()
	if err != nil {
		t.Fatal(err)
	}
	if string(again) != string(data) {
		t.Errorf("save(open(save)) differs from save (%d vs %d bytes)", len(again), len(data))
	}

	// the brief view builds the same text from both
	bw := &BriefView{WS: ws}
	bw2 := &BriefView{WS: w2}
	m1, m2 := bw.current(), bw2.current()
	if m1 == nil || m2 == nil || strings.Join(m1.Results, "\n") != strings.Join(m2.Results, "\n") {
		t.Errorf("brief results differ after the round trip")
	}
	// undo goes back to the work the opened file replaced
	w2.Add("extra.csv", []byte("year,x\n2000,1\n2001,2\n"))
	if err := w2.OpenAnalysis("again"+analysis.AnalysisExt, data); err != nil {
		t.Fatal(err)
	}
	if w2.Undo == nil {
		t.Fatal("no undo after opening over work")
	}
	if err := w2.UndoOpen(); err != nil {
		t.Fatal(err)
	}
	found := false
	for _, f := range w2.Files {
		found = found || f.Name == "extra.csv"
	}
	if !found {
		t.Error("undo did not bring extra.csv back")
	}
}

// TestOpenDamagedAnalysisFile lists a damaged analysis file with where it
// is damaged and keeps the workspace.
func TestOpenDamagedAnalysisFile(t *testing.T) {
	ws := NewWorkspace(nil)
	ws.LoadDemo()
	n := len(ws.Files)
	ws.AddOrOpen("x"+analysis.AnalysisExt, []byte("{\"format\": \"heatledger-analysis\", \"version\": 9}"))
	if len(ws.Files) != n+1 {
		t.Fatalf("%d files, want the demo and the refused file", len(ws.Files))
	}
	last := ws.Files[len(ws.Files)-1]
	if last.Err == nil || !strings.Contains(last.Err.Error(), "x.heatledger.json:1:") || !strings.Contains(last.Err.Error(), "newer") {
		t.Errorf("error %v", last.Err)
	}
}

// TestFormStateMaps: a saved form whose maps are null, missing or hold
// null entries loads as empty or cleaned maps (a hand-edited file must
// not leave a view with a nil map or a nil pick).
func TestFormStateMaps(t *testing.T) {
	var picks map[string]*driverPick
	var free map[string]bool
	fs := formState{objs: map[string]any{"picks": &picks, "free": &free}}
	fs.load(map[string]string{"picks": `{"a": null, "b": {"On": true}}`, "free": "null"})
	if picks == nil || free == nil || len(picks) != 1 || picks["b"] == nil || !picks["b"].On {
		t.Errorf("picks %v, free %v", picks, free)
	}
	var missing map[string]bool
	formState{objs: map[string]any{"x": &missing}}.load(nil)
	if missing == nil {
		t.Error("a map absent from the saved form stays nil")
	}
}
