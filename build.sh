#!/usr/bin/env bash
# Heatledger build script.
#
#   ./build.sh build   generate the vugu code, build static/main.wasm, copy wasm_exec.js,
#                      stamp the service worker static/sw.js
#   ./build.sh dist    build, then write dist/heatledger.html: the whole app in one file
#   ./build.sh serve   build, then serve static/ at http://localhost:8080 (PORT overrides)
#   ./build.sh test    go vet; native tests; core tests as js/wasm under Node; browser tests
#   ./build.sh bench   sizes, demo load time, CSV read throughput, core benchmarks
set -euo pipefail

cd "$(dirname "${BASH_SOURCE[0]}")"

GOROOT_DIR="$(go env GOROOT)"
# vugugen formats its output with gofmt, which lives beside go
export PATH="$GOROOT_DIR/bin:$PATH"

usage() {
	cat >&2 <<'EOF'
usage: ./build.sh COMMAND

commands:
  build   generate the vugu code (go tool vugugen ui), build static/main.wasm,
          copy wasm_exec.js and vugu's helper script, write the service
          worker static/sw.js from static/sw.template.js, print the sizes
  dist    build, then write dist/heatledger.html: one self-contained file
          (wasm inlined, gzip + base64) that runs from file://; print its size
  serve   build, then serve static/ at http://localhost:8080 (PORT overrides)
  test    go vet; native go test; core tests as js/wasm under Node;
          browser tests in headless Chromium (Debian package: chromium)
  bench   main.wasm size, demo chart load time, single-file size and load
          time, CSV read throughput, core benchmarks
EOF
	exit 2
}

# human size: 1234567 -> "1.18 MiB"
human() {
	awk -v n="$1" 'BEGIN { if (n >= 1048576) printf "%.2f MiB", n/1048576; else if (n >= 1024) printf "%.1f KiB", n/1024; else printf "%d B", n }'
}

wasm_sizes() {
	WASM_RAW=$(wc -c <static/main.wasm | tr -d ' ')
	WASM_GZ=$(gzip -9 -c static/main.wasm | wc -c | tr -d ' ')
}

cmd_build() {
	echo "== vugugen ui"
	go tool vugugen ui
	gofmt -w ui/*_gen.go
	echo "== static/vugu-render.js (vugu's DOM helper, loaded by <script src> because the CSP forbids eval)"
	go run ./internal/devserver/vuguhelper -o static/vugu-render.js
	echo "== static/main.wasm"
	# Inlining is switched off everywhere except in the numerical engines
	# (core/linreg, trend, ebm, budget, drivers), the runtime, math, the
	# random numbers, sorting and gonum's BLAS kernels, statistics and
	# distributions: the page's
	# glue (views, vugu, JSON, fmt, figure and table builders, the reader)
	# gets about 5 % smaller after gzip that way, and none of it is on a
	# numerical hot path of the page's budgets.
	GOOS=js GOARCH=wasm go build -trimpath -ldflags="-s -w" -gcflags=all=-l \
		-gcflags=heatledger/core/linreg= -gcflags=heatledger/core/trend= -gcflags=heatledger/core/ebm= \
		-gcflags=heatledger/core/budget= -gcflags=heatledger/core/drivers= \
		-gcflags=runtime= -gcflags=math= -gcflags=math/rand/v2= \
		-gcflags=gonum.org/v1/gonum/blas/gonum= -gcflags=gonum.org/v1/gonum/internal/asm/f64= \
		-gcflags=gonum.org/v1/gonum/stat/distuv= -gcflags=gonum.org/v1/gonum/stat= -gcflags=gonum.org/v1/gonum/floats= \
		-gcflags=slices= -gcflags=sort= -gcflags=cmp= -gcflags=math/bits= \
		-o static/main.wasm ./wasm
	cp "$GOROOT_DIR/lib/wasm/wasm_exec.js" static/wasm_exec.js
	echo "== static/sw.js (service worker, stamped with this build's id)"
	go run ./internal/distbuild/hlbuild -static static worker
	wasm_sizes
	echo "static/main.wasm: $(human "$WASM_RAW") raw ($WASM_RAW bytes), $(human "$WASM_GZ") gzip -9 ($WASM_GZ bytes)"
}

# dist_only writes dist/heatledger.html from the built static/ directory.
dist_only() {
	echo "== dist/heatledger.html (single file: inline CSS and scripts, main.wasm gzip + base64)"
	go run ./internal/distbuild/hlbuild -static static -o dist/heatledger.html dist
	DIST_BYTES=$(wc -c <dist/heatledger.html | tr -d ' ')
}

cmd_dist() {
	cmd_build
	dist_only
}

cmd_serve() {
	cmd_build
	echo "== serving (Ctrl-C stops)"
	exec go run ./cmd/hlserve -dir static
}

# find_chromium prints the path of a Chromium binary, or fails.
find_chromium() {
	local c
	for c in "${HL_CHROMIUM:-}" /usr/bin/chromium "$(command -v chromium 2>/dev/null || true)"; do
		if [[ -n "$c" && -x "$c" ]]; then
			echo "$c"
			return 0
		fi
	done
	return 1
}

ensure_chromium() {
	if ! find_chromium >/dev/null; then
		if [[ "$(id -u)" == 0 ]] && command -v apt-get >/dev/null; then
			echo "== installing chromium (apt-get)"
			apt-get update
			DEBIAN_FRONTEND=noninteractive apt-get install -y chromium
		else
			echo "build.sh: the browser tests need headless Chromium: install the Debian package 'chromium' (apt-get install chromium) and run again" >&2
			exit 1
		fi
	fi
	HL_CHROMIUM="$(find_chromium)"
	export HL_CHROMIUM
}

wasm_test_env() {
	# go test runs js/wasm test binaries with go_js_wasm_exec, which uses Node
	if ! command -v node >/dev/null; then
		if [[ "$(id -u)" == 0 ]] && command -v apt-get >/dev/null; then
			echo "== installing nodejs (apt-get)"
			apt-get update
			DEBIAN_FRONTEND=noninteractive apt-get install -y nodejs
		else
			echo "build.sh: the js/wasm tests need Node.js: install the Debian package 'nodejs' and run again" >&2
			exit 1
		fi
	fi
	export PATH="$PATH:$GOROOT_DIR/lib/wasm"
}

cmd_test() {
	echo "== go vet ./..."
	go vet ./...
	echo "== go vet (js/wasm): ./ui ./wasm"
	GOOS=js GOARCH=wasm go vet ./ui ./wasm
	echo "== go test ./... (native)"
	go test ./...
	echo "== go test ./core/... (js/wasm under Node)"
	(wasm_test_env && GOOS=js GOARCH=wasm go test ./core/...)
	ensure_chromium
	cmd_build
	dist_only
	echo "== browser tests (headless Chromium: $HL_CHROMIUM)"
	go test -tags browser -count=1 ./webtest/
	echo "== all tests passed"
}

# mbps runs BenchmarkRead of core/series and prints its MB/s figure (or n/a).
mbps() {
	local out
	if ! out=$("$@" 2>&1); then
		echo "$out" >&2
		echo "n/a"
		return
	fi
	echo "$out" | awk '/^BenchmarkRead/ { for (i = 1; i < NF; i++) if ($(i+1) == "MB/s") { print $i; found = 1; exit } } END { if (!found) print "n/a" }'
}

cmd_bench() {
	cmd_build
	ensure_chromium

	echo "== demo chart load time (5 cold loads in headless Chromium)"
	local load_out load_ms
	load_out=$(HL_BENCH=1 go test -tags browser -count=1 -run '^TestDemoLoadTime$' -v ./webtest/ 2>&1) || {
		echo "$load_out" >&2
		exit 1
	}
	echo "$load_out" | grep -E 'demo chart drawn|median ms after' | sed 's/^ *[a-z_]*\.go:[0-9]*: //' || true
	load_ms=$(echo "$load_out" | sed -n 's/.*demo chart drawn: median \([0-9.]*\) ms.*/\1/p' | head -n 1)

	dist_only
	echo "== single file dist/heatledger.html from file:// (5 cold loads in headless Chromium)"
	local dist_out dist_ms
	dist_out=$(HL_BENCH=1 go test -tags browser -count=1 -run '^TestDistLoadTime$' -v ./webtest/ 2>&1) || {
		echo "$dist_out" >&2
		exit 1
	}
	echo "$dist_out" | grep -E 'dist single file' | sed 's/^ *[a-z_]*\.go:[0-9]*: //' || true
	dist_ms=$(echo "$dist_out" | sed -n 's/.*dist single file.*demo chart drawn: median \([0-9.]*\) ms.*/\1/p' | head -n 1)

	echo "== CSV read throughput (BenchmarkRead in core/series)"
	local native wasm
	native=$(mbps go test -run '^$' -bench '^BenchmarkRead$' -benchtime 2s ./core/series/)
	wasm=$(wasm_test_env && mbps env GOOS=js GOARCH=wasm go test -run '^$' -bench '^BenchmarkRead$' -benchtime 2s ./core/series/)

	echo "== core benchmarks: go test -bench . -run '^\$' ./core/..."
	go test -bench . -run '^$' ./core/...

	wasm_sizes
	echo
	echo "| measure | value | budget |"
	echo "|---|---|---|"
	echo "| main.wasm raw | $(human "$WASM_RAW") | |"
	echo "| main.wasm gzip -9 | $(human "$WASM_GZ") ($WASM_GZ bytes) | <= 2.5 MB (2500000 bytes) |"
	echo "| demo chart drawn after navigation (median of 5 cold loads) | ${load_ms:-n/a} ms | <= 1500 ms |"
	echo "| dist/heatledger.html single file | $(human "$DIST_BYTES") ($DIST_BYTES bytes) | <= 3.5 MB (3500000 bytes) |"
	echo "| single file from file://, demo chart drawn (median of 5 cold loads) | ${dist_ms:-n/a} ms | <= 2000 ms |"
	echo "| CSV read, native | ${native} MB/s | >= 20 MB/s |"
	echo "| CSV read, js/wasm under Node | ${wasm} MB/s | |"
}

[[ $# -eq 1 ]] || usage
case "$1" in
build) cmd_build ;;
dist) cmd_dist ;;
serve) cmd_serve ;;
test) cmd_test ;;
bench) cmd_bench ;;
*) usage ;;
esac
