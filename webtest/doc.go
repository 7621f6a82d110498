// Package webtest holds Heatledger's browser tests: they serve the built
// static/ directory with internal/devserver and drive headless Chromium with
// chromedp. They need the build tag "browser" and a built page:
//
//	./build.sh build
//	go test -tags browser -count=1 ./webtest/
//
// ./build.sh test does both. HL_CHROMIUM names the browser binary when it
// is not /usr/bin/chromium or chromium on PATH. With HL_BENCH=1,
// TestDemoLoadTime reports the median time to the demo chart over five cold
// loads (./build.sh bench runs it).
package webtest
