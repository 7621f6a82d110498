//go:build browser

package webtest

import (
	"strconv"
	"strings"
	"testing"

	"github.com/chromedp/chromedp"
	"github.com/chromedp/chromedp/kb"
)

// The Response view as a user drives it: on the demo it opens on a
// finished run (all six forcing components, the two-layer model from an
// 1850 spin-up). These tests check that the controls reach core/analysis
// and that the charts and tables follow; the numbers themselves are
// checked by core/ebm's and core/analysis's tests.

// rsOpen opens the page, switches to the Response view and waits for the
// model run to be drawn.
func rsOpen(t *testing.T) *tab {
	t.Helper()
	p := openPage(t)
	p.click(`#hl-view-response`)
	p.waitFor("the model run", `!!document.querySelector('#hl-rs-run-chart svg path.hl-line[data-series="model T"]')`)
	return p
}

// rsCells reads a table's body as rows of cell text.
func (p *tab) rsCells(sel string) [][]string {
	p.t.Helper()
	return eval[[][]string](p, `Array.from(document.querySelectorAll(`+js(sel+` tbody tr`)+`), r => Array.from(r.cells, c => c.textContent.trim()))`)
}

// rsType replaces a text field's content with real key events; Tab
// leaves the field, which fires change.
func (p *tab) rsType(sel, text string) {
	p.t.Helper()
	if !eval[bool](p, `(() => { const e = document.querySelector(`+js(sel)+`); if (!e) return false; e.scrollIntoView(); e.focus(); e.select(); return document.activeElement === e; })()`) {
		p.t.Fatalf("cannot focus %s", sel)
	}
	p.do(chromedp.KeyEvent(kb.Backspace + text + kb.Tab))
}

func TestResponseDemoRunAndFit(t *testing.T) {
	p := rsOpen(t)

	// the six demo components are ticked, each with its kind
	comps := eval[[]string](p, `Array.from(document.querySelectorAll("#hl-rs-comps .hl-rs-comp"), d => {
		const on = d.querySelector("input.hl-rs-on").checked;
		return on ? d.dataset.ref.split(":").pop() + ":" + d.querySelector("select.hl-rs-kind").value : "";
	}).filter(s => s)`)
	if strings.Join(comps, " ") != "co2:co2 ch4:ch4 n2o:n2o aod:aod tsi:tsi aerosol_erf:erf" {
		t.Errorf("components ticked %q", comps)
	}

	// the forcing chart stacks the components and draws the total
	bands := eval[[]string](p, `Array.from(document.querySelectorAll("#hl-rs-forcing-chart svg path.hl-band[data-series]"), e => e.getAttribute("data-series")).filter(s => s)`)
	if len(bands) != 6 {
		t.Errorf("forcing chart areas named %q, want one per component", bands)
	}
	if !eval[bool](p, `!!document.querySelector('#hl-rs-forcing-chart svg path.hl-line[data-series="total"]')`) {
		t.Error("forcing chart without the total")
	}
	// the run is drawn over both records, with the heat chart beside it
	for _, name := range []string{"surface_anomaly", "second_record"} {
		if !eval[bool](p, `!!document.querySelector('#hl-rs-run-chart svg path.hl-line[data-series=`+js(name)+`]')`) {
			t.Errorf("run chart lacks %s", name)
		}
	}
	if !eval[bool](p, `!!document.querySelector('#hl-rs-heat-chart svg path.hl-line[data-series="model heat gained"]')`) {
		t.Error("no heat chart")
	}

	// the derived ECS: F2x / lambda = 3.93 / 1.3 with the default parameters
	if ecs := eval[string](p, `document.getElementById("hl-rs-results").dataset.ecs`); ecs != "3.023" {
		t.Errorf("data-ecs %q", ecs)
	}
	var ecsRow []string
	for _, r := range p.rsCells(`#hl-rs-derived`) {
		if strings.HasPrefix(r[0], "ECS") {
			ecsRow = r
		}
	}
	if len(ecsRow) < 3 || ecsRow[1] != "3.023" || ecsRow[2] != "K" {
		t.Errorf("ECS row %q", ecsRow)
	}
	if s := p.trText(`#hl-rs-summary`); !strings.Contains(s, "ECS 3.023 K") {
		t.Errorf("summary %q", s)
	}
	// attribution and trends over the record's whole years
	if n := len(p.rsCells(`#hl-rs-attribution`)); n != 6+1+2 {
		t.Errorf("attribution table has %d rows", n)
	}
	if n := eval[int](p, `document.querySelectorAll("#hl-rs-trends-chart svg .hl-errorbar").length`); n != 2 {
		t.Errorf("trend chart has %d error bars, want one per record", n)
	}

	// the fit with the default free parameters
	p.click(`#hl-rs-fit`)
	p.waitFor("the fitted parameters", `document.querySelectorAll("#hl-rs-estimates tbody tr").length > 0 && !document.getElementById("hl-rs-busy")`)
	t.Logf("fit (lag search, refit, tables and charts): %s ms in the page", eval[string](p, `document.getElementById("hl-rs-fit-panel").dataset.fitMs`))
	var lam []string
	for _, r := range p.rsCells(`#hl-rs-estimates`) {
		if r[0] == "lambda" {
			lam = r
		}
	}
	if len(lam) < 6 {
		t.Fatalf("no lambda row in %q", p.rsCells(`#hl-rs-estimates`))
	}
	v, err1 := strconv.ParseFloat(lam[2], 64)
	se, err2 := strconv.ParseFloat(lam[3], 64)
	if err1 != nil || err2 != nil || !(v > 0) || !(se > 0) {
		t.Errorf("lambda row %q: want an estimate with a standard error", lam)
	}
	if !eval[bool](p, `!!document.querySelector('#hl-rs-fit-chart svg path.hl-line[data-series="forced response"]')`) {
		t.Error("fit chart without the forced response")
	}
	if n := len(p.rsCells(`#hl-rs-drivers-table`)); n != 1 {
		t.Errorf("drivers table has %d rows, want the ocean index", n)
	}
	if p.trText(`#hl-rs-fit-error`) != "" {
		t.Errorf("fit error %q", p.trText(`#hl-rs-fit-error`))
	}
	if b := p.banner(); b != "" {
		t.Errorf("banner %q", b)
	}
}

// TestResponseBadSetting: a negative heat capacity shows an error beside
// the settings that names it, the run goes away, nothing reaches the
// banner or the console (checkClean); a good value brings the run back.
func TestResponseBadSetting(t *testing.T) {
	p := rsOpen(t)
	p.rsType(`#hl-rs-c`, "-5")
	p.waitFor("the error", `!!document.getElementById("hl-rs-error")`)
	if msg := p.trText(`#hl-rs-error`); !strings.Contains(msg, "C -5") || !strings.Contains(msg, "positive") {
		t.Errorf("error %q does not name C and what is expected", msg)
	}
	if eval[bool](p, `!!document.getElementById("hl-rs-run-chart")`) {
		t.Error("the run is still drawn beside the error")
	}
	if b := p.banner(); b != "" {
		t.Errorf("banner %q: a bad setting is not a crash", b)
	}
	if v := p.trValue(`#hl-rs-c`); v != "-5" {
		t.Errorf("C box shows %q", v)
	}
	// the fit refuses with the same message, beside the Fit button
	p.click(`#hl-rs-fit`)
	p.waitFor("the fit's error", `!!document.getElementById("hl-rs-fit-error")`)
	if msg := p.trText(`#hl-rs-fit-error`); !strings.Contains(msg, "C -5") {
		t.Errorf("fit error %q", msg)
	}
	p.rsType(`#hl-rs-c`, "8")
	p.waitFor("the run again", `!document.getElementById("hl-rs-error") && !!document.getElementById("hl-rs-run-chart")`)

	// the one-box model hides the two-layer fields and has no slow mode
	p.trSet(`#hl-rs-model`, "onebox")
	p.waitFor("the one-box run", `document.getElementById("hl-rs-summary").textContent.startsWith("One-box")`)
	if eval[bool](p, `document.getElementById("hl-rs-gamma").offsetParent !== null`) {
		t.Error("gamma shown for the one-box model")
	}
	if b := p.banner(); b != "" {
		t.Errorf("banner %q", b)
	}
}
