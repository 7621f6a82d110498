// Heatledger service worker: keeps a copy of the app so that the page opens
// with the network off after the first visit.
//
// This is the template. `./build.sh build` writes static/sw.js from it (the
// build tool internal/distbuild/hlbuild fills in the build id, a hash of the
// app files, and the list of those files), so every build gets a cache of
// its own and the browser installs the new worker when the app changes.
"use strict";

const BUILD = "__HL_BUILD__";
const SHELL = __HL_SHELL__;

const PREFIX = "heatledger-";
// the app itself, fetched on install and served cache-first
const SHELL_CACHE = PREFIX + "shell-" + BUILD;
// other same-origin files the page fetched (network first, this copy offline)
const EXTRA_CACHE = PREFIX + "extra-" + BUILD;

self.addEventListener("install", (event) => {
	event.waitUntil((async () => {
		const cache = await caches.open(SHELL_CACHE);
		// "no-cache" revalidates with the server, so the copy is this build's
		await cache.addAll(["./", ...SHELL].map((u) => new Request(u, { cache: "no-cache" })));
		await self.skipWaiting();
	})());
});

self.addEventListener("activate", (event) => {
	event.waitUntil((async () => {
		for (const name of await caches.keys()) {
			if (name.startsWith(PREFIX) && name !== SHELL_CACHE && name !== EXTRA_CACHE) {
				await caches.delete(name);
			}
		}
		await self.clients.claim();
	})());
});

self.addEventListener("fetch", (event) => {
	const req = event.request;
	if (req.method !== "GET" || new URL(req.url).origin !== self.location.origin) {
		return; // the browser handles it (the page's policy allows no other origin anyway)
	}
	event.respondWith(respond(req));
});

async function respond(req) {
	const shell = await caches.open(SHELL_CACHE);
	// a page opened with a query (view=..., analysis=...) is still the same page
	const hit = await shell.match(req, { ignoreSearch: req.mode === "navigate", ignoreVary: true });
	if (hit) {
		return hit;
	}
	const extra = await caches.open(EXTRA_CACHE);
	try {
		const res = await fetch(req);
		if (res.status === 200 && res.type === "basic") {
			await extra.put(req, res.clone());
		}
		return res;
	} catch (err) {
		const old = await extra.match(req, { ignoreVary: true });
		if (old) {
			return old;
		}
		throw err;
	}
}
