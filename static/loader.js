// Heatledger loader: starts the Go program (main.wasm) with Go's wasm_exec.js.
//
// Served over http(s), it fetches main.wasm and registers the service
// worker (sw.js) that keeps a copy of the app for offline use. Inside the
// single file that ./build.sh dist writes, the wasm is inlined, gzip-
// compressed and base64-encoded, in a data block (a script element of type
// application/octet-stream, id hl-wasm-gz) and is unpacked here with
// DecompressionStream.
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

	// heatledgerStore keeps the autosaved workspace (the analysis file's
	// text) in this browser's IndexedDB: get() resolves to the text or
	// null, put(text) and clear() resolve when done. Nothing leaves the
	// machine.
	function openStore() {
		return new Promise(function (resolve, reject) {
			if (!window.indexedDB) {
				reject(new Error("this browser has no IndexedDB"));
				return;
			}
			var req = indexedDB.open("heatledger", 1);
			req.onupgradeneeded = function () { req.result.createObjectStore("workspace"); };
			req.onsuccess = function () { resolve(req.result); };
			req.onerror = function () { reject(req.error); };
		});
	}
	function storeDo(mode, act) {
		return openStore().then(function (db) {
			return new Promise(function (resolve, reject) {
				var tx = db.transaction("workspace", mode);
				var req = act(tx.objectStore("workspace"));
				tx.oncomplete = function () { db.close(); resolve(req.result === undefined ? null : req.result); };
				tx.onerror = function () { db.close(); reject(tx.error); };
				tx.onabort = function () { db.close(); reject(tx.error); };
			});
		});
	}
	window.heatledgerStore = {
		get: function () { return storeDo("readonly", function (s) { return s.get("current"); }); },
		put: function (text) { return storeDo("readwrite", function (s) { return s.put(text, "current"); }); },
		clear: function () { return storeDo("readwrite", function (s) { return s.delete("current"); }); },
		// aside keeps a copy that could not be read, away from autosave
		aside: function (text) { return storeDo("readwrite", function (s) { return s.put(text, "set-aside"); }); }
	};
	// start reading the saved workspace now, while the wasm loads
	window.heatledgerSaved = window.heatledgerStore.get().catch(function (err) {
		console.log("Heatledger: no saved workspace: " + err);
		return null;
	});

	function fail(msg) {
		var el = document.getElementById("hl-loading");
		if (!el) {
			el = document.createElement("p");
			document.body.appendChild(el);
		}
		el.className = "hl-fatal";
		el.textContent = msg;
	}

	// registerWorker asks the browser to keep an offline copy of the app.
	// Only pages served over http(s) can have a service worker; the single
	// file opened from disk needs none.
	function registerWorker() {
		var proto = window.location.protocol;
		if ((proto !== "http:" && proto !== "https:") || !("serviceWorker" in navigator)) {
			return;
		}
		navigator.serviceWorker.register("sw.js").catch(function (err) {
			console.warn("Heatledger: no offline copy (the service worker did not register): " + err);
		});
	}

	// base64Bytes decodes base64 text into bytes.
	function base64Bytes(text) {
		if (typeof Uint8Array.fromBase64 === "function") {
			return Uint8Array.fromBase64(text);
		}
		var s = atob(text);
		var b = new Uint8Array(s.length);
		for (var i = 0; i < s.length; i++) {
			b[i] = s.charCodeAt(i);
		}
		return b;
	}

	// inlineWasm instantiates the wasm packed into the page.
	function inlineWasm(packed, importObject) {
		if (typeof DecompressionStream !== "function") {
			return Promise.reject(new Error("this browser lacks DecompressionStream, which the single-file Heatledger needs to unpack itself"));
		}
		var text = packed.textContent.trim();
		packed.remove(); // frees the text once read
		var gz = base64Bytes(text);
		var stream = new Blob([gz]).stream().pipeThrough(new DecompressionStream("gzip"));
		if (typeof WebAssembly.instantiateStreaming === "function") {
			// compiles while it unpacks
			return WebAssembly.instantiateStreaming(
				new Response(stream, { headers: { "Content-Type": "application/wasm" } }), importObject);
		}
		return new Response(stream).arrayBuffer().then(function (b) {
			return WebAssembly.instantiate(b, importObject);
		});
	}

	if (typeof WebAssembly !== "object" || typeof Go !== "function") {
		fail("This browser cannot run Heatledger: it needs WebAssembly.");
		return;
	}
	var go = new Go();
	var started;
	var packed = document.getElementById("hl-wasm-gz");
	if (packed) {
		started = inlineWasm(packed, go.importObject);
	} else if (typeof WebAssembly.instantiateStreaming === "function") {
		started = WebAssembly.instantiateStreaming(fetch("main.wasm"), go.importObject);
	} else {
		started = fetch("main.wasm")
			.then(function (r) { return r.arrayBuffer(); })
			.then(function (b) { return WebAssembly.instantiate(b, go.importObject); });
	}
	// register once the wasm is in, so the worker's copy of the app does not
	// compete with the first load for the network
	started.then(registerWorker, registerWorker);
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
