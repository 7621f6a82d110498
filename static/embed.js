// Heatledger embed page: embed.html?analysis=URL&figure=ID[&view=NAME]
// draws one figure of an analysis file (*.heatledger.json) read-only,
// sized to its frame.
//
// This script reads the address, refuses an analysis file from another
// origin, starts fetching the file, sets window.heatledgerEmbed = {analysis,
// figure, view, text} (text: a Promise of the file's text) and starts
// main.wasm, which sees heatledgerEmbed and draws just that figure (see
// wasm/api.go). The page then also offers window.heatledger.run.
"use strict";
(function () {
	function say(msg) {
		var box = document.getElementById("hl-embed") || document.body;
		var p = document.createElement("p");
		p.className = "hl-fatal";
		p.setAttribute("role", "alert");
		p.textContent = msg;
		box.replaceChildren(p);
		document.body.dataset.failed = "1";
	}

	// the page has no stylesheet of its own: set the little it needs here
	// (styles set through the DOM are allowed by the page's policy)
	document.body.style.margin = "0";
	document.body.style.fontFamily = "sans-serif";

	var q = new URLSearchParams(window.location.search);
	var analysis = q.get("analysis");
	var figure = q.get("figure") || "";
	var view = q.get("view") || "";
	if (!analysis) {
		say("Heatledger cannot draw this figure: the address has no analysis=URL (the analysis file to draw from).");
		return;
	}
	var url;
	try {
		url = new URL(analysis, window.location.href);
	} catch (e) {
		say("Heatledger cannot draw this figure: analysis=" + analysis + " is not a valid address.");
		return;
	}
	if (url.origin !== window.location.origin) {
		say("Heatledger refused the analysis file " + url.href + ": it is on another site (" + url.origin +
			"). Embedded figures read analysis files only from this page's own site (" + window.location.origin + ").");
		return;
	}
	if (typeof WebAssembly !== "object" || typeof Go !== "function") {
		say("This browser cannot draw Heatledger figures: it needs WebAssembly.");
		return;
	}
	var text = fetch(url.href, { credentials: "same-origin" }).then(function (r) {
		if (!r.ok) {
			throw new Error("the analysis file " + url.href + " could not be read: the server answered " + r.status + " " + r.statusText);
		}
		return r.text();
	}, function (err) {
		throw new Error("the analysis file " + url.href + " could not be read: " + err);
	});
	// an unread rejection is reported by the wasm, not as an unhandled one
	text.catch(function () {});
	window.heatledgerEmbed = { analysis: url.href, figure: figure, view: view, text: text };

	var go = new Go();
	var started;
	if (typeof WebAssembly.instantiateStreaming === "function") {
		started = WebAssembly.instantiateStreaming(fetch("main.wasm"), go.importObject);
	} else {
		started = fetch("main.wasm")
			.then(function (r) { return r.arrayBuffer(); })
			.then(function (b) { return WebAssembly.instantiate(b, go.importObject); });
	}
	started
		.then(function (r) { return go.run(r.instance); })
		.then(function () {
			if (document.body.dataset.ready !== "1") {
				say("Heatledger stopped before the figure was drawn. Reload the page to try again.");
			}
		}, function (err) {
			say("Heatledger could not start: " + err);
		});
})();
