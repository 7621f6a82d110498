//go:build browser

package webtest

import (
	"slices"
	"strconv"
	"strings"
	"testing"

	"github.com/chromedp/chromedp"
	"github.com/chromedp/chromedp/kb"
)

// driverSel is the CSS selector of a candidate driver's row in the
// Drivers view.
func driverSel(name string) string {
	return `#hl-dr-drivers .hl-driver[data-ref$=` + js(":"+name) + `]`
}

// openDrivers opens the page and switches to the Drivers view, which fits
// the demo on its first visit.
func openDrivers(t *testing.T) *tab {
	t.Helper()
	p := openPage(t)
	p.click(`#hl-view-drivers`)
	p.waitFor("the Drivers view", `!!document.getElementById("hl-drivers")`)
	return p
}

// coefRows returns the cells of the coefficient table.
func (p *tab) coefRows() [][]string {
	p.t.Helper()
	return eval[[][]string](p, `Array.from(document.querySelectorAll("#hl-dr-coef tbody tr"), r => Array.from(r.cells, c => c.textContent.trim()))`)
}

func TestDriversFitDemo(t *testing.T) {
	p := openDrivers(t)
	p.waitFor("the first fit", `document.querySelectorAll("#hl-dr-coef tbody tr").length > 0`)

	// target surface_anomaly; drivers ocean_index, aod and tsi ticked, no other
	target := eval[string](p, `(() => { const s = document.getElementById("hl-dr-target"); return s.options[s.selectedIndex].textContent; })()`)
	if !strings.HasPrefix(target, "surface_anomaly") {
		t.Fatalf("target %q, want surface_anomaly", target)
	}
	want := []string{"ocean_index", "aod", "tsi"}
	rows := eval[[]string](p, `Array.from(document.querySelectorAll("#hl-dr-drivers .hl-driver"), d => d.dataset.ref)`)
	for _, ref := range rows {
		name := ref[strings.LastIndex(ref, ":")+1:]
		on := eval[bool](p, `document.querySelector(`+js(driverSel(name)+` input.hl-dr-on`)+`).checked`)
		if on != slices.Contains(want, name) {
			p.click(driverSel(name) + ` input.hl-dr-on`)
		}
	}
	for _, name := range want {
		if !eval[bool](p, `document.querySelector(`+js(driverSel(name)+` input.hl-dr-on`)+`).checked`) {
			t.Fatalf("driver %s not ticked", name)
		}
		// a ticked driver shows its lag range and options
		if eval[bool](p, `document.querySelector(`+js(driverSel(name)+` .hl-driver-opts`)+`).offsetParent === null`) {
			t.Errorf("options of driver %s hidden", name)
		}
	}

	// change the noise model: the fit shown is out of date until Fit
	p.do(chromedp.SetValue(chromedp.CSS(`#hl-dr-noise`), "arma11"))
	p.do(chromedp.Evaluate[chromedp.Void](`document.getElementById("hl-dr-noise").dispatchEvent(new Event("change", {bubbles: true}))`))
	p.waitFor("the out-of-date note", `!!document.getElementById("hl-dr-stale")`)
	p.click(`#hl-dr-fit`)
	p.waitFor("the new fit", `!document.getElementById("hl-dr-stale") && Array.from(document.querySelectorAll("#hl-dr-trends tbody tr"), r => r.cells[4].textContent).every(n => n === "arma11")`)
	t.Logf("fit with lag search, tables and charts: %s ms in the page (the Fit button runs it in its handler)", eval[string](p, `document.getElementById("hl-dr-results").dataset.fitMs`))

	// the coefficient table: ocean_index at a lag of 2 to 4 months (the
	// demo world builds the index in at 3 months, testdata/demo/truth.json)
	coef := p.coefRows()
	if len(coef) < 3 {
		t.Fatalf("coefficient rows %q", coef)
	}
	var names []string
	for _, r := range coef[:3] {
		names = append(names, r[0])
	}
	if !slices.Equal(names, want) {
		t.Errorf("coefficient table lists %q, want %q", names, want)
	}
	lag, err := strconv.Atoi(coef[0][1])
	if err != nil || lag < 2 || lag > 4 {
		t.Errorf("ocean_index row %q: want a lag of 2 to 4 months", coef[0])
	}

	// the charts are drawn
	if n := eval[int](p, `document.querySelectorAll("#hl-dr-fit-chart svg path.hl-line[data-series]").length`); n < 3 {
		t.Errorf("fit chart has %d lines, want target, fitted and trend term", n)
	}
	figs := eval[[]string](p, `Array.from(document.querySelectorAll("#hl-dr-contrib figure[data-driver]"), f => f.dataset.driver + ":" + f.querySelectorAll("svg path.hl-line[data-series]").length)`)
	if len(figs) != 3 {
		t.Errorf("contribution panels %q, want one per driver", figs)
	}
	for i, f := range figs {
		if i < len(want) && f != want[i]+":2" {
			t.Errorf("contribution panel %q: want %s with its zero line and contribution", f, want[i])
		}
	}
	if n := eval[int](p, `document.querySelectorAll("#hl-dr-adj-chart svg path.hl-line[data-series]").length`); n != 4 {
		t.Errorf("raw/adjusted chart has %d lines, want the two series and their trends", n)
	}
	if n := eval[int](p, `document.querySelectorAll("#hl-dr-change-chart svg rect.hl-bar[data-series]").length`); n != 6 {
		t.Errorf("trend-change chart has %d bars, want raw, 3 drivers, annual cycle, adjusted", n)
	}
	// the lag search and fit statistics, and the caution on chosen lags
	if n := eval[int](p, `document.querySelectorAll("#hl-dr-lags tbody tr").length`); n != 3 {
		t.Errorf("lag table has %d rows", n)
	}
	if notes := eval[string](p, `document.getElementById("hl-dr-notes").textContent`); !strings.Contains(notes, "optimistic") {
		t.Errorf("warnings %q lack the caution on chosen lags", notes)
	}
	// the trend-change table adds up (last row: the sum of the terms)
	change := eval[[][]string](p, `Array.from(document.querySelectorAll("#hl-dr-change tbody tr"), r => Array.from(r.cells, c => c.textContent.trim()))`)
	if len(change) < 2 || change[0][3] != change[len(change)-1][3] {
		t.Errorf("trend-change table %q: the terms must add up to the raw change", change)
	}

	// typed text survives other clicks: a lag range, then a driver option
	p.do(chromedp.SendKeys(chromedp.CSS(driverSel("ocean_index")+` input.hl-dr-max`), kb.End+kb.Backspace+kb.Backspace+"6"+kb.Tab))
	p.click(driverSel("aod") + ` input.hl-dr-smooth`)
	p.waitFor("the option ticked", `document.querySelector(`+js(driverSel("aod")+` input.hl-dr-smooth`)+`).checked`)
	if v := eval[string](p, `document.querySelector(`+js(driverSel("ocean_index")+` input.hl-dr-max`)+`).value`); v != "6" {
		t.Errorf("longest lag of ocean_index shows %q after another click, want the typed 6", v)
	}
	p.click(`#hl-dr-fit`)
	p.waitFor("the refit", `!document.getElementById("hl-dr-stale") && Array.from(document.querySelectorAll("#hl-dr-lags tbody tr"), r => r.cells[1].textContent).includes("0 to 6")`)
	if !eval[bool](p, `Array.from(document.querySelectorAll("#hl-dr-contrib figure[data-driver=aod] svg title, #hl-dr-contrib figure[data-driver=aod] svg text"), e => e.textContent).some(s => s.includes("3-month mean"))`) {
		t.Error("the aod panel does not say it uses the 3-month mean")
	}
	if b := p.banner(); b != "" {
		t.Errorf("banner %q", b)
	}
}

// TestDriversImpossibleWindow: a fit window with no data gives an error
// beside the settings that names the window, and no console error
// (checkClean).
func TestDriversImpossibleWindow(t *testing.T) {
	p := openDrivers(t)
	p.waitFor("the first fit", `document.querySelectorAll("#hl-dr-coef tbody tr").length > 0`)
	p.do(chromedp.SendKeys(chromedp.CSS(`#hl-dr-from`), "2100"+kb.Tab))
	p.waitFor("the out-of-date note", `!!document.getElementById("hl-dr-stale")`)
	p.click(`#hl-dr-fit`)
	p.waitFor("the error", `!!document.getElementById("hl-dr-error")`)
	msg := eval[string](p, `document.getElementById("hl-dr-error").textContent`)
	if !strings.Contains(msg, "2100") || !strings.Contains(msg, "fit window") {
		t.Errorf("error %q does not name the fit window from 2100", msg)
	}
	if eval[bool](p, `!!document.getElementById("hl-dr-coef")`) {
		t.Error("coefficients of the earlier fit still shown beside the error")
	}
	if b := p.banner(); b != "" {
		t.Errorf("banner %q: a bad setting is not a crash", b)
	}
	// the typed window stays in its box, and a good window fits again
	if v := eval[string](p, `document.getElementById("hl-dr-from").value`); v != "2100" {
		t.Errorf("from box shows %q", v)
	}
	p.do(chromedp.SendKeys(chromedp.CSS(`#hl-dr-from`), kb.End+strings.Repeat(kb.Backspace, 4)+"1979"+kb.Tab))
	p.click(`#hl-dr-fit`)
	p.waitFor("the fit from 1979", `!document.getElementById("hl-dr-error") && Array.from(document.querySelectorAll("#hl-dr-trends tbody tr"), r => r.cells[1].textContent).every(s => s === "1979-01")`)
}
