//go:build browser

package webtest

import (
	"strings"
	"testing"
)

// unlabelled lists the controls of the current view without an accessible
// name: no label element, aria-label, aria-labelledby, title or (for a
// button) text.
const unlabelled = `Array.from(document.querySelectorAll("input:not([type=hidden]), select, textarea, button")).filter(e => {
	const byLabel = e.labels && Array.from(e.labels).map(l => l.textContent).join("").trim();
	const byRef = (e.getAttribute("aria-labelledby") || "").split(/\s+/).filter(Boolean)
		.map(id => (document.getElementById(id) || {textContent: ""}).textContent).join("").trim();
	const own = (e.getAttribute("aria-label") || e.title || (e.tagName === "BUTTON" ? e.textContent : "")).trim();
	return !(byLabel || byRef || own);
}).map(e => e.id || e.outerHTML.slice(0, 100))`

// TestEveryControlLabelled opens every view on the demo and checks that
// each control has an accessible name, and that each chart carries its
// title as a text alternative (role="img" with an aria-label).
func TestEveryControlLabelled(t *testing.T) {
	p := openPage(t)
	for _, v := range []string{"data", "trends", "drivers", "response", "budget", "brief"} {
		p.click("#hl-view-" + v)
		p.waitFor("the "+v+" view", `document.querySelector("#hl-view-`+v+`").getAttribute("aria-current") === "page" && !!document.querySelector("main button")`)
		if bad := eval[[]string](p, unlabelled); len(bad) > 0 {
			t.Errorf("%s view: controls without a label: %s", v, strings.Join(bad, "; "))
		}
		if bad := eval[[]string](p, `Array.from(document.querySelectorAll("main svg.hl-chart")).filter(s => s.getAttribute("role") !== "img" || !(s.getAttribute("aria-label") || "").trim()).map(s => s.outerHTML.slice(0, 80))`); len(bad) > 0 {
			t.Errorf("%s view: charts without a text alternative: %v", v, bad)
		}
	}
	p.trNoBanner()
}

// TestGridFromKeyboard walks the trend grid with the arrow keys and uses a
// window with Enter: the window fields and the trend follow.
func TestGridFromKeyboard(t *testing.T) {
	p := trOpen(t)
	p.click("#hl-grid-run")
	p.waitFor("the grid", `!!document.getElementById("hl-grid-chart")`)
	key := func(k string) {
		p.t.Helper()
		eval[bool](p, `(() => { const g = document.getElementById("hl-grid-chart"); g.focus();
			g.dispatchEvent(new KeyboardEvent("keydown", {key: `+js(k)+`, bubbles: true, cancelable: true})); return true; })()`)
	}
	key("ArrowUp")
	p.waitFor("the first cell", `document.getElementById("hl-grid-cell").textContent.includes(" to ")`)
	first := eval[string](p, `document.getElementById("hl-grid-cell").textContent`)
	key("ArrowRight")
	p.waitFor("the next cell", `document.getElementById("hl-grid-cell").textContent !== `+js(first))
	cell := eval[string](p, `document.getElementById("hl-grid-cell").textContent`)
	from, _, _ := strings.Cut(cell, " to ")
	key("Enter")
	p.waitFor("the window from the grid", `document.getElementById("hl-tr-from").value === `+js(from))
	p.trNoBanner()
}
