package stage

import (
	"math"

	"stagewright/core/circuit"
	"stagewright/core/device"
)

// Built is a stage as a circuit, with the handles the analyses need.
type Built struct {
	Spec    Spec
	C       *circuit.Circuit
	Ports   circuit.Ports
	M1, M2  int // transistor indices; M2 = −1 without a load transistor
	Dev1    *device.Device
	Dev2    *device.Device
	Supply  int // voltage-source index of VDD
	Input   int // voltage-source index of the signal source (its DC value is the input level)
	BiasSrc int // voltage-source index of the load transistor's gate, or −1
	GateSrc int // voltage-source index of a cg gate, or −1
	Nodes   map[string]circuit.Node
	Guess   circuit.Guess
}

// Build lays the stage out as a circuit. Servos for the bias mode are
// added as the README's bias table says.
func Build(s Spec) (*Built, error) {
	if err := s.check(); err != nil {
		return nil, err
	}
	dev1, err := device.New(s.Pol, s.Process.ParamsAt(s.Pol, s.L), s.Process.TNom, s.W, s.L, s.TempK)
	if err != nil {
		return nil, errorf("w", "transistor M1: %v", err)
	}
	b := &Built{Spec: s, M2: -1, BiasSrc: -1, GateSrc: -1, Dev1: &dev1, Nodes: map[string]circuit.Node{}, Guess: circuit.Guess{}}
	c := circuit.New()
	b.C = c
	vdd := c.AddNode("vdd")
	sig := c.AddNode("sig")
	in := c.AddNode("in")
	out := c.AddNode("out")
	b.Nodes["vdd"], b.Nodes["sig"], b.Nodes["in"], b.Nodes["out"] = vdd, sig, in, out
	b.Supply = c.AddVSource("VDD", vdd, circuit.Ground, s.VDD)
	c.VSources[b.Supply].Supply = 1
	b.Input = c.AddVSource("VSIG", sig, circuit.Ground, s.Vin)
	rsig := c.AddResistor("RSIG", sig, in, s.RSig)
	c.Resistors[rsig].Noiseless = true

	// "near" is the rail M1's source side returns to, "far" the rail the
	// load returns to: ground and VDD for NMOS M1, the other way for PMOS.
	near, far := circuit.Ground, vdd
	if s.Pol == device.PMOS {
		near, far = vdd, circuit.Ground
	}
	level := func(absFromNear float64) float64 { // a voltage measured from the near rail, as a node voltage
		if s.Pol == device.PMOS {
			return s.VDD - absFromNear
		}
		return absFromNear
	}

	switch s.Kind {
	case CS:
		src := near
		if s.RS > 0 {
			src = c.AddNode("src")
			b.Nodes["src"] = src
			c.AddResistor("RS", src, near, s.RS)
		}
		b.M1 = c.AddFET("M1", out, in, src, near, &dev1)
	case CG:
		gate := c.AddNode("gate")
		b.Nodes["gate"] = gate
		b.GateSrc = c.AddVSource("VG", gate, circuit.Ground, s.VG)
		b.M1 = c.AddFET("M1", out, gate, in, near, &dev1)
	case SF:
		b.M1 = c.AddFET("M1", far, in, out, near, &dev1)
	}

	// The load.
	loadRail := far
	if s.Kind == SF {
		loadRail = near
	}
	switch s.Load {
	case Resistor:
		r := s.RD
		if s.Kind == SF {
			r = s.RS
		}
		name := "RD"
		if s.Kind == SF {
			name = "RS"
		}
		c.AddResistor(name, out, loadRail, r)
	case Active, Diode:
		pol2 := s.loadPol()
		dev2, err := device.New(pol2, s.Process.ParamsAt(pol2, s.LoadL), s.Process.TNom, s.LoadW, s.LoadL, s.TempK)
		if err != nil {
			return nil, errorf("lw", "load transistor M2: %v", err)
		}
		b.Dev2 = &dev2
		gate := out
		if s.Load == Active {
			gate = c.AddNode("bias")
			b.Nodes["bias"] = gate
			// The gate sits |VGS| = LoadVB away from the load's source rail.
			v := s.LoadVB
			if pol2 == device.PMOS {
				v = s.VDD - s.LoadVB
			}
			b.BiasSrc = c.AddVSource("VB", gate, circuit.Ground, v)
			if pol2 == device.PMOS {
				// vbl is the gate's distance from the load's source rail, VDD
				// here: the gate moves with the supply. Every other level
				// (vin, vg, an NMOS load's vbl) is set from ground.
				c.VSources[b.BiasSrc].Supply = 1
			}
		}
		bulk := loadRail
		b.M2 = c.AddFET("M2", out, gate, loadRail, bulk, &dev2)
	}

	// Small-signal extras: the AC-coupled load resistance and the load capacitance.
	rl := -1
	if !math.IsInf(s.RL, 1) && s.RL > 0 {
		rl = c.AddResistor("RL", out, circuit.Ground, s.RL)
		c.Resistors[rl].ACOnly = true
	}
	if s.CL > 0 {
		c.AddCapacitor("CL", out, circuit.Ground, s.CL)
	}
	b.Ports = circuit.Ports{Signal: b.Input, In: in, Out: out, RSig: rsig, RL: rl}

	// Starting point: output half-way, internal nodes near their rails.
	b.Guess[vdd] = s.VDD
	b.Guess[sig] = s.Vin
	b.Guess[in] = s.Vin
	b.Guess[out] = s.VDD / 2
	if n, ok := b.Nodes["src"]; ok {
		b.Guess[n] = level(0.1)
	}
	if s.Kind == SF {
		b.Guess[out] = level(math.Max(0.1, math.Abs(s.Vin-level(0))-0.6))
	}

	b.addServos()
	return b, nil
}

// Role says in a few words what transistor fet (a FET index of the
// circuit) does in the stage: "input" for M1, which the signal drives (at
// its gate, or at its source in a common-gate stage), "load" for a
// current-source or diode load, "sink" for a follower's current sink.
func (b *Built) Role(fet int) string {
	switch {
	case fet == b.M1:
		return "input"
	case fet == b.M2 && b.Spec.Kind == SF:
		return "sink"
	case fet == b.M2:
		return "load"
	}
	return ""
}

// addServos adds the bias equations of the bias mode.
func (b *Built) addServos() {
	s := &b.Spec
	if s.Bias == ByVin {
		return
	}
	full := func(src int, kind circuit.ServoKind, target int, value float64) {
		b.C.AddServo(circuit.Servo{Source: src, Kind: kind, Target: target, Value: value, Lo: 0, Hi: s.VDD})
	}
	switch {
	case s.Kind == SF && s.Load == Active:
		// The sink sets the current; the input level stays as given.
		full(b.BiasSrc, circuit.ServoCurrent, b.M1, s.ID)
	case s.Load == Active:
		full(b.Input, circuit.ServoCurrent, b.M1, s.ID)
		full(b.BiasSrc, circuit.ServoVoltage, int(b.Nodes["out"]), s.VOut)
		b.Guess[b.Nodes["out"]] = s.VOut
	default:
		full(b.Input, circuit.ServoCurrent, b.M1, s.ID)
	}
}
