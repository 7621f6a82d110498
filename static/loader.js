// Heatledger loader: starts the Go program (main.wasm) with Go's wasm_exec.js.
"use strict";
(function () {
	// vugu's renderer hands its helper script to window.eval. The page loads
	// the same script from vugu-render.js, and its Content-Security-Policy
	// forbids eval, so eval here only confirms that the helper is in place.
	window.eval = function () {
		if (typeof window.vuguRender === "function") {
			return undefined;
		}
		throw new EvalError("eval is not available on this page");
	};

	function fail(msg) {
		var el = document.getElementById("hl-loading");
		if (!el) {
			el = document.createElement("p");
			document.body.appendChild(el);
		}
		el.className = "hl-fatal";
		el.textContent = msg;
	}

	if (typeof WebAssembly !== "object" || typeof Go !== "function") {
		fail("This browser cannot run Heatledger: it needs WebAssembly.");
		return;
	}
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
		.then(function (r) {
			performance.mark("hl-wasm-ready");
			return go.run(r.instance);
		})
		.then(function () {
			fail("Heatledger stopped. Reload the page to start it again.");
		}, function (err) {
			fail("Heatledger could not start: " + err);
		});
})();
