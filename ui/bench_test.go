package ui

import "testing"

// BenchmarkLoadDemo times reading the demo files, the Go work of a first
// visit before the page is drawn.
func BenchmarkLoadDemo(b *testing.B) {
	for b.Loop() {
		ws := NewWorkspace(nil)
		ws.LoadDemo()
	}
}

// BenchmarkChart times drawing the first visit's chart.
func BenchmarkChart(b *testing.B) {
	ws := NewWorkspace(nil)
	ws.LoadDemo()
	for b.Loop() {
		ws.chartValid = false
		ws.ChartSVG()
	}
	b.ReportMetric(float64(len(ws.chartSVG)), "svgbytes")
}
