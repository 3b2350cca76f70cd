package transfer

import (
	"errors"
	"math"

	"stagewright/core/circuit"
	"stagewright/core/design"
	"stagewright/core/device"
	"stagewright/core/stage"
	"stagewright/core/units"
)

// tracer is a stage with every bias voltage frozen at the design's solved
// operating point, so that only the input level moves. It solves the
// circuit at a given input level from a warm start.
type tracer struct {
	b     *stage.Built
	op    circuit.OperatingPoint // the design's own operating point, re-solved in the frozen circuit
	vinOp float64                // input level at the operating point, V
	gain0 float64                // small-signal gain at the operating point, V/V
	vdd   float64
	tempK float64
	guess circuit.Guess // reused between solves
}

func eng(v float64, unit string) string { return units.Engineering(v, 4, unit) }

// newTracer solves the design's operating point (its bias mode decides the
// input level, the load's gate and, in gm/ID mode, W) and rebuilds the
// stage in bias mode vin with those values fixed. With acLoad set, the
// AC-coupled load resistance rl is connected the way it acts at signal
// frequencies: from the output to a source held at the operating point's
// output level (the coupling capacitor keeps that voltage over a period),
// so that it carries no current at the operating point.
func newTracer(d design.Design, acLoad bool) (*tracer, error) {
	if err := d.Validate(); err != nil {
		var fe *design.FragmentError
		if errors.As(err, &fe) && len(fe.Problems) > 0 {
			return nil, &Error{Key: fe.Problems[0].Key, Message: err.Error()}
		}
		return nil, &Error{Message: err.Error()}
	}
	spec, err := d.Spec()
	if err != nil {
		return nil, &Error{Key: "proc", Message: err.Error()}
	}
	sol, err := stage.Solve(spec)
	if err != nil {
		var se *stage.Error
		if errors.As(err, &se) {
			return nil, &Error{Key: se.Key, Message: se.Message}
		}
		return nil, &Error{Message: err.Error()}
	}
	fixed := sol.Spec // W as solved in gm/ID mode
	fixed.Bias = stage.ByVin
	b, err := stage.Build(fixed)
	if err != nil {
		return nil, &Error{Message: "rebuilding the stage at its operating point: " + err.Error()}
	}
	if len(b.C.VSources) != len(sol.OP.Source) || b.C.NodeCount() != len(sol.OP.V) {
		return nil, &Error{Message: "internal: the rebuilt stage does not match the solved one"}
	}
	for k := range b.C.VSources {
		b.C.VSources[k].V = sol.OP.Source[k]
	}
	t := &tracer{b: b, vinOp: sol.OP.Source[sol.Input], vdd: spec.VDD, tempK: spec.TempK, guess: circuit.Guess{}}
	// The gain before rl is connected a second time for the distortion.
	if t.gain0, err = t.gain(sol.OP); err != nil {
		return nil, err
	}
	if acLoad && b.Ports.RL >= 0 {
		out := b.Nodes["out"]
		ref := b.C.AddNode("rlref")
		b.C.AddVSource("VRL", ref, circuit.Ground, sol.OP.V[out])
		b.C.AddResistor("RLAC", out, ref, b.C.Resistors[b.Ports.RL].R)
	}
	warm := sol.OP.V
	if len(warm) != b.C.NodeCount() {
		warm = append(append([]float64(nil), warm...), sol.OP.V[b.Nodes["out"]])
	}
	t.op, err = t.solve(t.vinOp, warm)
	if err != nil {
		return nil, err
	}
	return t, nil
}

// solve finds the DC state with the input source at vin (V), starting
// from the node voltages warm (indexed by node).
func (t *tracer) solve(vin float64, warm []float64) (circuit.OperatingPoint, error) {
	t.b.C.VSources[t.b.Input].V = vin
	clear(t.guess)
	for i, v := range warm {
		t.guess[circuit.Node(i)] = v
	}
	op, err := t.b.C.SolveDC(t.guess, circuit.Options{})
	if err != nil {
		return op, errorf("vin", "no DC solution with the input at %s (continuation from the neighbouring level): %v", eng(vin, "V"), err)
	}
	return op, nil
}

// out is the output node voltage of op, V.
func (t *tracer) out(op *circuit.OperatingPoint) float64 { return op.V[t.b.Nodes["out"]] }

// reports returns M1's report and, when the stage has one, M2's.
func (t *tracer) reports(op *circuit.OperatingPoint) (m1 device.Report, m2 device.Report, hasM2 bool) {
	at := func(i int) device.Report {
		f := t.b.C.FETs[i]
		v := op.V
		return f.Dev.Report(v[f.D], v[f.G], v[f.S], v[f.B])
	}
	m1 = at(t.b.M1)
	if t.b.M2 >= 0 {
		return m1, at(t.b.M2), true
	}
	return m1, m2, false
}

// gain is the exact small-signal gain v(out)/v(sig) of the circuit
// linearized at op (the midband gain, rl connected).
func (t *tracer) gain(op circuit.OperatingPoint) (float64, error) {
	nw, err := t.b.C.Linearize(op, t.b.Ports, t.tempK)
	if err != nil {
		return 0, errorf("vin", "linearizing at the input level %s: %v", eng(op.Source[t.b.Input], "V"), err)
	}
	mb, err := nw.Midband()
	if err != nil || math.IsNaN(mb.Gain) || math.IsInf(mb.Gain, 0) {
		return 0, errorf("vin", "no small-signal gain at the input level %s: %v", eng(op.Source[t.b.Input], "V"), err)
	}
	return mb.Gain, nil
}
