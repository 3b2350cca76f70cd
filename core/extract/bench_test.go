package extract

import (
	"testing"

	"stagewright/core/device"
)

// benchTable is about 10,000 points of our own model with 1 % noise:
// 71 VGS × 12 VDS × 3 VBS × 4 lengths = 10,224.
func benchTable(b testing.TB) (tab Options, g grid) {
	g = defaultGrid()
	g.vgs = span(0.025, 1.775, 0.025)
	g.vds = []float64{0.05, 0.1, 0.2, 0.3, 0.45, 0.6, 0.8, 1.0, 1.2, 1.4, 1.6, 1.8}
	g.ls = []float64{180e-9, 350e-9, 1e-6, 3e-6}
	return Options{Pol: device.NMOS, Base: d180n(), TNom: 300.15, GDSWeight: DefaultGDSWeight}, g
}

// BenchmarkFit10k is one whole fit (steps a and b, the report and plots) of
// 10,224 points; the budget is 2 s natively.
func BenchmarkFit10k(b *testing.B) {
	o, g := benchTable(b)
	truth := d180n()
	truth.VT0, truth.Theta, truth.DIBL = 0.47, 0.3, 10e-9
	tab := g.table(ourModel(b, truth, g.w, g.tempC), 0.01, 11)
	b.ReportAllocs()
	iters := 0
	for b.Loop() {
		res, err := Fit(tab, o, nil)
		if err != nil {
			b.Fatal(err)
		}
		iters = res.Iterations
	}
	b.ReportMetric(float64(iters), "iterations")
	b.ReportMetric(float64(len(tab.Points)), "points")
}
