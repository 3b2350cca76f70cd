package design

import (
	"fmt"
	"testing"

	"stagewright/core/circuit"
	"stagewright/core/stage"
)

// benchDesigns covers every stage and load, 401 sweep points (10 Hz to
// 100 GHz at 40 points per decade).
var benchDesigns = []string{
	"stage=cs&load=r", "stage=cs&load=active", "stage=cs&load=diode",
	"stage=cg&load=r&vg=0.9", "stage=cg&load=active&vg=0.9", "stage=cg&load=diode&vg=0.9",
	"stage=sf&load=r&rs=5k", "stage=sf&load=active&vin=1.3",
}

// BenchmarkEvaluate is one full evaluation: operating point, midband,
// 401-point sweep with impedances and noise, poles and zeros.
func BenchmarkEvaluate(b *testing.B) {
	for _, frag := range benchDesigns {
		d := mustDecode(b, frag+"&fmin=10&fmax=100G&ppd=40")
		b.Run(frag, func(b *testing.B) {
			var e Evaluator
			e.Evaluate(d)
			b.ReportAllocs()
			for i := 0; i < b.N; i++ {
				if r := e.Evaluate(d); !r.OK {
					b.Fatal(r.Error)
				}
			}
		})
	}
}

// BenchmarkEvaluatePoints shows how the cost grows with the sweep: the
// allocations stay the same whatever the number of points.
func BenchmarkEvaluatePoints(b *testing.B) {
	// 101, 401, 1,601 and 2,801 points: the last is the longest sweep the
	// keys allow in practice (ppd at most 200, from 1 mHz to 100 GHz).
	for _, sweep := range []string{"fmin=10&ppd=10", "fmin=10&ppd=40", "fmin=10&ppd=160", "fmin=1m&ppd=200"} {
		d := mustDecode(b, "stage=cs&load=r&fmax=100G&"+sweep)
		b.Run(fmt.Sprintf("points=%d", d.SweepPoints()), func(b *testing.B) {
			var e Evaluator
			e.Evaluate(d)
			b.ReportAllocs()
			for i := 0; i < b.N; i++ {
				e.Evaluate(d)
			}
		})
	}
}

// BenchmarkEvaluatePhases splits one evaluation (cs, resistor load) into
// its parts, to show where the time goes. Under js/wasm give it -benchtime
// of a second or more: the engine's steady state is the optimised tier,
// which a few hundred iterations do not reach.
func BenchmarkEvaluatePhases(b *testing.B) {
	d := mustDecode(b, "stage=cs&load=r&fmin=10&fmax=100G&ppd=40")
	spec, _ := d.Spec()
	sol, err := stage.Solve(spec)
	if err != nil {
		b.Fatal(err)
	}
	nw, _ := sol.C.Linearize(sol.OP, sol.Ports, spec.TempK)
	var an circuit.Analyzer
	var r circuit.Response
	r.F = circuit.LogSweep(nil, d.FMin, d.FMax, d.PPD)
	r.Resize(len(r.F))
	phases := []struct {
		name string
		run  func()
	}{
		{"decode", func() { Decode("v=1&stage=cs&load=r&fmin=10&fmax=100G&ppd=40") }},
		{"encode", func() { _ = d.Encode() }},
		{"solve", func() { stage.Solve(spec) }},
		{"linearize", func() { sol.C.Linearize(sol.OP, sol.Ports, spec.TempK) }},
		{"midband", func() { nw.Midband() }},
		{"poles+zeros", func() { nw.Poles(); nw.Zeros() }},
		{"sweep", func() { an.Sweep(nw, &r) }},
	}
	for _, p := range phases {
		b.Run(p.name, func(b *testing.B) {
			b.ReportAllocs()
			for i := 0; i < b.N; i++ {
				p.run()
			}
		})
	}
}
