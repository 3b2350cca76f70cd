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

// fittedDesign is a design on a fitted process: every fitted parameter as
// an override and four length bins, as a link from the fit carries them
// (values of the same order as the demo fit's).
const fittedDesign = "stage=cs&load=active&l=350n&ll=1u&fmin=10&fmax=100G&ppd=40" +
	"&n.body=1.08&n.dibl=6.2n&n.lenmod=1n&n.mobility=43m&n.mobred=450m&n.surface=1.5&n.thresh=498m&n.velsat=10.2M" +
	"&n.thresh@180n=490m&n.dibl@180n=5.6n&n.mobility@180n=42.7m&n.thresh@350n=498m&n.dibl@350n=5.5n" +
	"&n.thresh@1u=501m&n.dibl@1u=5.9n&n.thresh@4u=499m&n.dibl@4u=1p" +
	"&p.thresh@180n=462m&p.thresh@1u=469m&p.lenmod@180n=50n"

// BenchmarkEvaluateFitted is BenchmarkEvaluate's cs stage with an active
// load on a fitted process with length bins beside the same design on the
// demo process: the bins are interpolated once per device when the stage
// is built, so the two should cost the same.
func BenchmarkEvaluateFitted(b *testing.B) {
	for _, c := range []struct{ name, frag string }{
		{"demo", "stage=cs&load=active&l=350n&ll=1u&fmin=10&fmax=100G&ppd=40"},
		{"fitted", fittedDesign},
	} {
		d := mustDecode(b, c.frag)
		b.Run(c.name, func(b *testing.B) {
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
