package circuit

import (
	"fmt"
	"math"

	"stagewright/core/device"
)

// Node is the index of a circuit node; Ground is node 0.
type Node int

// Ground is the reference node.
const Ground Node = 0

// Resistor is a linear resistance R (Ω) between A and B. R = +Inf is an open
// circuit and stamps nothing.
type Resistor struct {
	Name string
	A, B Node
	R    float64
	// Noiseless excludes the resistor from noise analysis (a signal
	// source's own resistance, whose noise is not the stage's).
	Noiseless bool
	// ACOnly marks a resistor that is AC-coupled: it loads the small-signal
	// network but carries no DC current.
	ACOnly bool
}

// VSource is an ideal voltage source: V(P) − V(N) = V. Its branch current
// flows from P through the source to N.
type VSource struct {
	Name string
	P, N Node
	V    float64
	// Supply is how far the source's value moves per volt of the supply,
	// dV/dVDD, in the supply-rejection analysis (Network.SupplyGain): 1 for
	// the supply itself and for a bias set relative to it, 0 (the zero
	// value) for a level set from ground.
	Supply float64
}

// ISource is an ideal current source of I amperes flowing from A through the
// source to B (it leaves node A and enters node B).
type ISource struct {
	Name string
	A, B Node
	I    float64
}

// Capacitor is a linear capacitance C (F) between A and B; it matters only in
// the small-signal analyses.
type Capacitor struct {
	Name string
	A, B Node
	C    float64
}

// FET is a four-terminal MOSFET.
type FET struct {
	Name       string
	D, G, S, B Node
	Dev        *device.Device
}

// ServoKind says what equation a servo enforces.
type ServoKind int

const (
	// ServoCurrent: the drain current of FET Target, in the device's own
	// sense (positive when conducting normally), equals Value amperes.
	ServoCurrent ServoKind = iota
	// ServoVoltage: the voltage of node Target equals Value volts.
	ServoVoltage
)

// Servo turns the value of voltage source Source into an unknown, fixed by
// one extra equation. Lo and Hi bound the solved value (V); a solution outside
// them is reported as an error by the caller, and Newton steps are kept
// inside a margin around them.
type Servo struct {
	Source int
	Kind   ServoKind
	Target int
	Value  float64
	Lo, Hi float64
}

// Circuit is an element list over named nodes.
type Circuit struct {
	names     []string
	Resistors []Resistor
	VSources  []VSource
	ISources  []ISource
	Caps      []Capacitor
	FETs      []FET
	Servos    []Servo
}

// New returns an empty circuit with only the ground node.
func New() *Circuit {
	// One allocation holds a stage-sized circuit: every element list
	// starts in an array of the store and grows beyond it as usual.
	s := new(circuitStore)
	c := &s.c
	c.names = append(s.names[:0], "0")
	c.Resistors, c.VSources, c.ISources = s.resistors[:0], s.vsources[:0], s.isources[:0]
	c.Caps, c.FETs, c.Servos = s.caps[:0], s.fets[:0], s.servos[:0]
	return c
}

// circuitStore is a circuit with room for the elements of a stage.
type circuitStore struct {
	c         Circuit
	names     [8]string
	resistors [6]Resistor
	vsources  [5]VSource
	isources  [2]ISource
	caps      [4]Capacitor
	fets      [3]FET
	servos    [3]Servo
}

// AddNode adds a named node and returns it.
//
//go:noinline
func (c *Circuit) AddNode(name string) Node {
	c.names = append(c.names, name)
	return Node(len(c.names) - 1)
}

// NodeCount is the number of nodes including ground.
func (c *Circuit) NodeCount() int { return len(c.names) }

// NodeName is the name given to node n.
func (c *Circuit) NodeName(n Node) string {
	if int(n) < 0 || int(n) >= len(c.names) {
		return fmt.Sprintf("node %d", n)
	}
	return c.names[n]
}

// NodeByName finds a node by name.
func (c *Circuit) NodeByName(name string) (Node, bool) {
	for i, s := range c.names {
		if s == name {
			return Node(i), true
		}
	}
	return 0, false
}

// AddResistor appends a resistor and returns its index.
//
//go:noinline
func (c *Circuit) AddResistor(name string, a, b Node, r float64) int {
	c.Resistors = append(c.Resistors, Resistor{Name: name, A: a, B: b, R: r})
	return len(c.Resistors) - 1
}

// AddVSource appends a voltage source and returns its index.
//
//go:noinline
func (c *Circuit) AddVSource(name string, p, n Node, v float64) int {
	c.VSources = append(c.VSources, VSource{Name: name, P: p, N: n, V: v})
	return len(c.VSources) - 1
}

// AddISource appends a current source and returns its index.
//
//go:noinline
func (c *Circuit) AddISource(name string, a, b Node, i float64) int {
	c.ISources = append(c.ISources, ISource{Name: name, A: a, B: b, I: i})
	return len(c.ISources) - 1
}

// AddCapacitor appends a capacitor and returns its index.
//
//go:noinline
func (c *Circuit) AddCapacitor(name string, a, b Node, f float64) int {
	c.Caps = append(c.Caps, Capacitor{Name: name, A: a, B: b, C: f})
	return len(c.Caps) - 1
}

// AddFET appends a MOSFET and returns its index.
//
//go:noinline
func (c *Circuit) AddFET(name string, d, g, s, b Node, dev *device.Device) int {
	c.FETs = append(c.FETs, FET{Name: name, D: d, G: g, S: s, B: b, Dev: dev})
	return len(c.FETs) - 1
}

// AddServo appends a servo and returns its index.
//
//go:noinline
func (c *Circuit) AddServo(s Servo) int {
	c.Servos = append(c.Servos, s)
	return len(c.Servos) - 1
}

// Check reports a malformed circuit: a node index out of range, a
// non-positive or non-finite element value, a servo that names nothing.
func (c *Circuit) Check() error {
	n := Node(len(c.names))
	bad := func(nodes ...Node) bool {
		for _, x := range nodes {
			if x < 0 || x >= n {
				return true
			}
		}
		return false
	}
	for _, r := range c.Resistors {
		if bad(r.A, r.B) {
			return fmt.Errorf("resistor %s: node out of range", r.Name)
		}
		if !(r.R > 0) || math.IsNaN(r.R) {
			return fmt.Errorf("resistor %s: resistance %g Ω must be positive", r.Name, r.R)
		}
	}
	for _, v := range c.VSources {
		if bad(v.P, v.N) || v.P == v.N {
			return fmt.Errorf("voltage source %s: bad nodes", v.Name)
		}
		if math.IsNaN(v.V) || math.IsInf(v.V, 0) {
			return fmt.Errorf("voltage source %s: value %g V is not finite", v.Name, v.V)
		}
	}
	for _, s := range c.ISources {
		if bad(s.A, s.B) || math.IsNaN(s.I) || math.IsInf(s.I, 0) {
			return fmt.Errorf("current source %s: bad nodes or value", s.Name)
		}
	}
	for _, k := range c.Caps {
		if bad(k.A, k.B) || k.C < 0 || math.IsNaN(k.C) || math.IsInf(k.C, 0) {
			return fmt.Errorf("capacitor %s: bad nodes or value %g F", k.Name, k.C)
		}
	}
	for _, f := range c.FETs {
		if bad(f.D, f.G, f.S, f.B) || f.Dev == nil {
			return fmt.Errorf("transistor %s: bad nodes or no device", f.Name)
		}
	}
	for i, s := range c.Servos {
		if s.Source < 0 || s.Source >= len(c.VSources) {
			return fmt.Errorf("servo %d: no voltage source %d", i, s.Source)
		}
		switch s.Kind {
		case ServoCurrent:
			if s.Target < 0 || s.Target >= len(c.FETs) {
				return fmt.Errorf("servo %d: no transistor %d", i, s.Target)
			}
		case ServoVoltage:
			if s.Target <= 0 || s.Target >= int(n) {
				return fmt.Errorf("servo %d: no node %d", i, s.Target)
			}
		default:
			return fmt.Errorf("servo %d: unknown kind", i)
		}
		for j := 0; j < i; j++ {
			if c.Servos[j].Source == s.Source {
				return fmt.Errorf("servo %d: source %s already has a servo", i, c.VSources[s.Source].Name)
			}
		}
	}
	return nil
}
