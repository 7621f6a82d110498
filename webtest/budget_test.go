//go:build browser

package webtest

import (
	"strconv"
	"strings"
	"testing"

	"github.com/chromedp/chromedp"
)

// The Budget view as a user drives it. The numbers come from core/analysis
// and core/budget, whose tests check them; these tests check that the page
// shows them, that the Monte Carlo runs in the background with a moving
// progress bar and a working Cancel, and that bad input is named beside
// the settings.

// buOpen opens the page, switches to the Budget view and waits for its
// heating-rate table and input previews.
func buOpen(t *testing.T) *tab {
	t.Helper()
	p := openPage(t)
	p.click(`#hl-view-budget`)
	p.waitFor("the heating-rate table", `document.querySelectorAll("#hl-bu-heat-table tbody tr").length > 0`)
	p.waitFor("the input previews", `document.querySelectorAll("#hl-bu-previews figure").length === 4`)
	return p
}

// buSlot is the CSS selector of an energy-budget input's fieldset.
func buSlot(slot string) string { return `fieldset[data-slot=` + js(slot) + `]` }

func TestBudgetOpensWithDemo(t *testing.T) {
	p := buOpen(t)
	rows := p.trTable("#hl-bu-heat-table")
	if len(rows) != 3 {
		t.Fatalf("heating-rate table %v", rows)
	}
	// the rate over Earth's surface in W m-2, and the imbalance estimate
	// with the ocean share 0.91
	if !strings.Contains(rows[1]["quantity"], "W m-2 over Earth's surface") || !strings.Contains(rows[2]["quantity"], "0.91") {
		t.Errorf("rows %q / %q", rows[1]["quantity"], rows[2]["quantity"])
	}
	rate := trNum(t, "heating rate", rows[1]["estimate"])
	imb := trNum(t, "imbalance", rows[2]["estimate"])
	zj := trNum(t, "heat uptake", rows[0]["estimate"])
	// 1 ZJ/yr = 0.0621 W m-2 over Earth's surface (../shared/CHECKS.md)
	if !(rate > 0) || imb <= rate || rate/zj < 0.0619 || rate/zj > 0.0623 {
		t.Errorf("%g ZJ/yr, %g W m-2, imbalance %g W m-2", zj, rate, imb)
	}
	if n := eval[int](p, `document.querySelectorAll("#hl-bu-content-chart svg path.hl-line[data-series]").length`); n != 2 {
		t.Errorf("content chart has %d lines, want the series and its trend", n)
	}
	if n := eval[int](p, `document.querySelectorAll("#hl-bu-rate-chart svg path.hl-band").length`); n != 1 {
		t.Errorf("rate chart has %d bands, want the trend rate's interval", n)
	}
	// the form starts from the demo's records, and the previews draw dT, dN
	// and F2x; dF (the forcing built from the demo's components, taken as
	// exact) is named as fixed
	if v := p.trValue(buSlot("dF:0") + ` select.hl-bu-source`); v != "forcing" {
		t.Errorf("dF source %q", v)
	}
	if got := p.trText(buSlot("dF:0") + ` p.hl-small`); !strings.Contains(got, "co2 as co2") || !strings.Contains(got, "aerosol_erf as erf") {
		t.Errorf("forcing components text %q", got)
	}
	roles := eval[[]string](p, `Array.from(document.querySelectorAll("#hl-bu-previews figure"), f => f.dataset.role + ":" + (f.querySelector("svg rect.hl-bin") ? "chart" : "note"))`)
	if strings.Join(roles, " ") != "dT:chart dF:note dN:chart F2x:chart" {
		t.Errorf("previews %q", roles)
	}
	if p.trValue(`#hl-bu-base1`) != "1950" || p.trValue(`#hl-bu-final2`) != "2025" || p.trValue(`#hl-bu-draws`) != "100000" {
		t.Errorf("periods %s, %s, draws %s", p.trValue(`#hl-bu-base1`), p.trValue(`#hl-bu-final2`), p.trValue(`#hl-bu-draws`))
	}
	// typed fields of series-based inputs are hidden; the Gregory panel
	// says what it needs, since the demo has no imbalance series
	if eval[bool](p, `document.querySelector(`+js(buSlot("dT")+` input.hl-bu-a`)+`).offsetParent !== null`) {
		t.Error("typed fields of dT shown while dT comes from a series")
	}
	if !strings.Contains(p.trText(`#hl-bu-gregory-needs`), "imbalance series N in W m-2") || !eval[bool](p, `document.getElementById("hl-bu-gr-run").disabled`) {
		t.Error("the Gregory panel does not say what it needs")
	}
	if eval[bool](p, `!!document.getElementById("hl-bu-form-error") || !!document.getElementById("hl-bu-heat-error")`) {
		t.Error("an error shown on the first visit")
	}
	p.trNoBanner()
}

func TestBudgetRunProgressCancel(t *testing.T) {
	p := buOpen(t)
	d := p.trAllowDownloads()
	// the most draws the engine takes, so that the run lasts long enough to
	// watch; typed with real keys
	p.trType(`#hl-bu-draws`, "2000000")
	if v := p.trValue(`#hl-bu-draws`); v != "2000000" {
		t.Fatalf("draws field %q", v)
	}
	p.do(chromedp.Click(chromedp.CSS(`#hl-bu-run`))) // a real mouse click
	p.waitFor("the progress bar", `(() => { const e = document.getElementById("hl-bu-progress"); return !!e && e.value > 0; })()`)
	if !eval[bool](p, `document.getElementById("hl-bu-run").disabled`) {
		t.Error("Run is not disabled while running")
	}
	v1 := eval[float64](p, `document.getElementById("hl-bu-progress").value`)
	max := eval[float64](p, `document.getElementById("hl-bu-progress").max`)
	if max < 2000000 {
		t.Errorf("progress total %g, want the 2,000,000 draws and the sweep's", max)
	}
	if txt := p.trText(`#hl-bu-busy`); !strings.Contains(txt, " of "+strconv.FormatFloat(max, 'f', -1, 64)+" draws") {
		t.Errorf("busy row says %q, the bar's total is %g", txt, max)
	}
	// the page draws again while the work goes on: the bar moves
	p.waitFor("the progress bar to move", `(() => { const e = document.getElementById("hl-bu-progress"); return !e || e.value > `+strconv.FormatFloat(v1, 'f', -1, 64)+`; })()`)
	p.waitFor("the results", `!!document.getElementById("hl-bu-table") && !document.getElementById("hl-bu-busy")`)
	t.Logf("2,000,000 draws and the period sweep: %s ms in the page", eval[string](p, `document.getElementById("hl-bu-results").dataset.runMs`))

	rows := p.trTable("#hl-bu-table")
	if len(rows) != 2 || rows[0]["quantity"] != "ECS (K)" || rows[1]["quantity"] != "TCR (K)" {
		t.Fatalf("results table %v", rows)
	}
	med := trNum(t, "ECS median", rows[0]["median"])
	p05, p95 := trNum(t, "ECS 5 %", rows[0]["5 %"]), trNum(t, "ECS 95 %", rows[0]["95 %"])
	// the demo world's ECS is F2x/lambda = 3.93/1.2 = 3.275 K
	// (testdata/demo/truth.json, known truth)
	if !(p05 < med && med < p95) || !(p05 <= 3.275 && 3.275 <= p95) {
		t.Errorf("ECS median %g, 5-95 %% %g to %g; the demo world's is 3.275 K", med, p05, p95)
	}
	if !strings.Contains(rows[0]["median"], ".") || !strings.Contains(p.trTable("#hl-bu-table")[1]["central estimate"], ".") {
		t.Errorf("row cells %v", rows)
	}
	if txt := p.trText(`#hl-bu-nonpositive`); !strings.Contains(txt, "dF − dN ≤ 0") || !strings.Contains(txt, "2000000") {
		t.Errorf("statement on dF − dN ≤ 0: %q", txt)
	}
	for _, sel := range []string{"#hl-bu-ecs-chart", "#hl-bu-tcr-chart"} {
		if n := eval[int](p, `document.querySelectorAll(`+js(sel+` svg path.hl-interval`)+`).length`); n != 2 {
			t.Errorf("%s: %d interval bars, want 5-95 %% and 17-83 %%", sel, n)
		}
		if n := eval[int](p, `document.querySelectorAll(`+js(sel+` svg line.hl-mark`)+`).length`); n != 2 {
			t.Errorf("%s: %d marks, want the median and the central estimate", sel, n)
		}
	}
	sweep := p.trTable("#hl-bu-sweep-table")
	if len(sweep) < 30 || sweep[len(sweep)-1]["final period"] != "2011 to 2025" {
		t.Errorf("sweep table: %d rows, last %v", len(sweep), sweep[len(sweep)-1])
	}
	if n := eval[int](p, `document.querySelectorAll("#hl-bu-sweep-chart svg path.hl-line[data-series]").length`); n < 2 {
		t.Errorf("sweep chart has %d lines", n)
	}
	// the table as CSV
	p.click(`#hl-bu-csv`)
	csv := string(p.trWaitDownload(d, "budget-sensitivity.csv"))
	if !strings.HasPrefix(csv, "quantity,central estimate,median,mean,5 %,17 %,83 %,95 %") || !strings.Contains(csv, "\nECS (K),") {
		t.Errorf("CSV %q", csv)
	}

	// again, cancelled while it runs
	p.do(chromedp.Click(chromedp.CSS(`#hl-bu-run`)))
	p.waitFor("the progress bar", `(() => { const e = document.getElementById("hl-bu-progress"); return !!e && e.value > 0; })()`)
	p.do(chromedp.Click(chromedp.CSS(`#hl-bu-cancel`)))
	p.waitFor("the run to stop", `!document.getElementById("hl-bu-busy")`)
	if msg := p.trText(`#hl-bu-run-error`); !strings.Contains(msg, "cancelled") {
		t.Errorf("after Cancel the view says %q", msg)
	}
	if eval[bool](p, `document.getElementById("hl-bu-run").disabled`) {
		t.Error("Run still disabled after Cancel")
	}
	p.trNoBanner()
}

// TestBudgetBadInput: bad typing is named beside the settings; nothing in
// the banner and no console error (checkClean).
func TestBudgetBadInput(t *testing.T) {
	p := buOpen(t)
	p.trType(`#hl-bu-f2x-b`, "wide")
	p.waitFor("the F2x error", `!!document.getElementById("hl-bu-form-error")`)
	if msg := p.trText(`#hl-bu-form-error`); !strings.Contains(msg, "F2x") || !strings.Contains(msg, `"wide"`) {
		t.Errorf("error %q does not name F2x and the text typed", msg)
	}
	p.click(`#hl-bu-run`)
	if eval[bool](p, `!!document.getElementById("hl-bu-busy") || !!document.getElementById("hl-bu-table")`) {
		t.Error("a run started with a bad F2x")
	}
	p.trType(`#hl-bu-f2x-b`, "4.40")
	p.waitFor("the error to go", `!document.getElementById("hl-bu-form-error")`)

	// a final period after the data
	p.trType(`#hl-bu-final1`, "2090")
	p.trType(`#hl-bu-final2`, "2099")
	p.waitFor("the period error", `!!document.getElementById("hl-bu-form-error")`)
	if msg := p.trText(`#hl-bu-form-error`); !strings.Contains(msg, "final period") {
		t.Errorf("error %q does not name the final period", msg)
	}
	p.click(`#hl-bu-periods`)
	p.waitFor("the periods from the data", `!document.getElementById("hl-bu-form-error") && document.getElementById("hl-bu-final2").value === "2025"`)

	// dN typed as a skewed distribution with mixed signs
	p.trSet(buSlot("dN")+` select.hl-bu-source`, "typed")
	p.waitFor("the typed fields of dN", `document.querySelector(`+js(buSlot("dN")+` input.hl-bu-a`)+`).offsetParent !== null`)
	if eval[bool](p, `document.querySelector(`+js(buSlot("dN")+` select.hl-bu-series`)+`).offsetParent !== null`) {
		t.Error("the series choice of dN still shown for a typed dN")
	}
	p.trSet(buSlot("dN")+` select.hl-bu-kind`, "lognormal90")
	p.trType(buSlot("dN")+` input.hl-bu-a`, "-0.2")
	p.waitFor("the sign error", `!!document.getElementById("hl-bu-form-error")`)
	if msg := p.trText(`#hl-bu-form-error`); !strings.HasPrefix(msg, "dN") || !strings.Contains(msg, "one sign") {
		t.Errorf("error %q", msg)
	}
	// a heating-rate window without data
	p.trType(`#hl-bu-heat-from`, "2100")
	p.waitFor("the heating-rate error", `!!document.getElementById("hl-bu-heat-error")`)
	if msg := p.trText(`#hl-bu-heat-error`); !strings.Contains(msg, "2100") {
		t.Errorf("heating-rate error %q", msg)
	}
	if eval[bool](p, `!!document.getElementById("hl-bu-heat-table")`) {
		t.Error("the heating-rate table of another window shown beside the error")
	}
	p.trNoBanner()
}
