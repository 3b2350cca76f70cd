package device

import "testing"

// sinkEval and sinkReport keep the compiler from discarding benchmark work.
var (
	sinkEval   Eval
	sinkReport Report
)

// benchBiases are a few operating points a Newton solve passes through:
// weak, moderate and strong inversion, triode and saturation.
var benchBiases = [...][4]float64{
	{0.9, 0.3, 0, 0}, {0.9, 0.5, 0, 0}, {0.9, 0.8, 0, 0}, {0.1, 1.2, 0, 0}, {1.2, 1.0, 0.2, 0},
}

func BenchmarkCurrent(b *testing.B) {
	d, _ := builtinDevice(b, "d180", NMOS, 10e-6, 0.5e-6, 300.15)
	b.ReportAllocs()
	for i := 0; b.Loop(); i++ {
		v := &benchBiases[i%len(benchBiases)]
		sinkEval = d.Current(v[0], v[1], v[2], v[3])
	}
}

func BenchmarkReport(b *testing.B) {
	d, _ := builtinDevice(b, "d180", NMOS, 10e-6, 0.5e-6, 300.15)
	b.ReportAllocs()
	for i := 0; b.Loop(); i++ {
		v := &benchBiases[i%len(benchBiases)]
		sinkReport = d.Report(v[0], v[1], v[2], v[3])
	}
}

func BenchmarkNew(b *testing.B) {
	pr, _ := Builtin("d65")
	b.ReportAllocs()
	for b.Loop() {
		d, err := New(PMOS, pr.P, pr.TNom, 4e-6, 0.2e-6, 330)
		if err != nil {
			b.Fatal(err)
		}
		sinkEval.ID = d.w
	}
}
