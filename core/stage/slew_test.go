package stage

import (
	"math"
	"testing"

	"stagewright/core/device"
)

// A source follower with a current sink slews down at the sink's current
// over CL (its input at the bottom rail turns M1 off) and up at M1's
// current with its gate at the supply less the sink's, over CL: each
// checked by hand from the devices themselves (I/CL, common practice).
func TestSlewFollowerWithSink(t *testing.T) {
	pr, _ := device.Builtin("d180")
	spec := Spec{Kind: SF, Pol: device.NMOS, Load: Active, Bias: ByVin, Process: pr, VDD: 1.8, TempK: 300.15,
		W: 40e-6, L: 0.5e-6, Vin: 1.2, LoadW: 20e-6, LoadL: 1e-6, LoadVB: 0.7, RSig: 1e3, RL: math.Inf(1), CL: 5e-12}
	sol, err := Solve(spec)
	if err != nil {
		t.Fatal(err)
	}
	sl, ok := sol.Slew(spec.CL)
	if !ok {
		t.Fatal("no slew")
	}
	vout, _ := sol.Node("out")
	// The sink: its gate at LoadVB, its drain at the output.
	isink := sol.Dev2.Current(vout, spec.LoadVB, 0, 0).ID
	// 5e-3: the follower's M1 still conducts a little with its gate at 0
	// below the output (weak inversion of a device 1.2 V below threshold:
	// far below 1e-3 of the sink's current).
	if down := isink / spec.CL; math.Abs(sl.Down/down-1) > 5e-3 {
		t.Errorf("down slew %.4g V/s, hand I_sink/CL %.4g V/s", sl.Down, down)
	}
	m1 := sol.Dev1.Current(spec.VDD, spec.VDD, vout, 0).ID // gate at the top rail
	if up := (m1 - isink) / spec.CL; math.Abs(sl.Up/up-1) > 5e-3 {
		t.Errorf("up slew %.4g V/s, hand (I_M1 − I_sink)/CL %.4g V/s", sl.Up, up)
	}
	if !(sl.Up > 5*sl.Down) {
		t.Errorf("a follower slews up far faster than down: up %.3g, down %.3g", sl.Up, sl.Down)
	}
}

// A common-source stage with a resistor load slews up with the resistor's
// current at the DC output level, (VDD − Vout)/RD over CL, once M1 is off.
func TestSlewResistorLoad(t *testing.T) {
	pr, _ := device.Builtin("d180")
	spec := Spec{Kind: CS, Pol: device.NMOS, Load: Resistor, Bias: ByVin, Process: pr, VDD: 1.8, TempK: 300.15,
		W: 10e-6, L: 0.5e-6, Vin: 0.7, RD: 10e3, RSig: 1e3, RL: math.Inf(1), CL: 1e-12}
	sol, err := Solve(spec)
	if err != nil {
		t.Fatal(err)
	}
	sl, ok := sol.Slew(spec.CL)
	if !ok {
		t.Fatal("no slew")
	}
	vout, _ := sol.Node("out")
	// 1e-3: M1 with its gate at 0 leaks picoamps against ~100 µA.
	if up := (spec.VDD - vout) / spec.RD / spec.CL; math.Abs(sl.Up/up-1) > 1e-3 {
		t.Errorf("up slew %.4g V/s, hand %.4g", sl.Up, up)
	}
	if _, ok := sol.Slew(0); ok {
		t.Error("no load capacitance must give no slew")
	}
}

func BenchmarkSlew(b *testing.B) {
	pr, _ := device.Builtin("d180")
	spec := Spec{Kind: CS, Pol: device.NMOS, Load: Active, Bias: ByID, Process: pr, VDD: 1.8, TempK: 300.15,
		W: 10e-6, L: 0.5e-6, ID: 100e-6, VOut: 0.9, LoadW: 10e-6, LoadL: 1e-6, RSig: 1e3, RL: math.Inf(1), CL: 1e-12}
	sol, err := Solve(spec)
	if err != nil {
		b.Fatal(err)
	}
	b.ReportAllocs()
	for b.Loop() {
		if _, ok := sol.Slew(spec.CL); !ok {
			b.Fatal("no slew")
		}
	}
}
