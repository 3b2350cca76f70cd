package circuit

import (
	"fmt"
	"math"

	"stagewright/core/dense"
	"stagewright/core/device"
)

// Ports names the input and output of an amplifier circuit for the
// small-signal analyses.
type Ports struct {
	Signal int  // voltage source carrying the small signal (amplitude 1)
	In     Node // input terminal (the gate of a cs/sf, the source of a cg)
	Out    Node // output terminal
	RSig   int  // resistor index of the signal source's series resistance, or −1
	RL     int  // resistor index of the load resistance, or −1
}

// NoiseSource is a noise current between two nodes of the network, given
// as indices into the free unknowns (−1 for an AC-grounded node). Its power
// spectral density is White + Flicker/f, in A²/Hz.
type NoiseSource struct {
	Name    string
	A, B    int
	White   float64 // A²/Hz
	Flicker float64 // A² (density times frequency)
}

// Network is a circuit linearized at an operating point, reduced to the
// nodes whose voltage is not fixed by a source ("free" nodes). Every node
// held by a DC source is an AC ground except the signal source's node,
// whose unit amplitude drives the network through GSig and CSig.
//
// Y(s) = G + s·C is the node admittance matrix (row-major, N×N), and the
// network equation is Y(s)·v = −(GSig + s·CSig) for a unit signal.
//
// GSup is the same coupling for a unit change of the supply instead: every
// source held node moves by its source's Supply share (the supply node by
// 1, a bias set from the supply by 1, every other by 0), the signal source
// among them, and G·v = −GSup gives the low-frequency response to it.
type Network struct {
	N          int
	G, C       []float64
	GSig, CSig []float64 // coupling of each free node to the signal node
	GSup       []float64 // coupling of each free node to a unit supply change (conductances only)
	In, Out    int       // free indices of the ports (−1 if the port is not free)
	RSigG      float64   // conductance of the signal-source resistance at In (0 if none)
	RLG        float64   // conductance of the load resistance at Out (0 if none)
	Noise      []NoiseSource
	Devices    []device.Report // per FET, at the operating point, in circuit order
	free       []int           // node → free index or −1
	eigenOnly  bool            // poles and zeros by the eigen-solver only (tests)
	gLU        *dense.LU       // LU of G, once factored (see FactorG)
	gErr       error
	names      []string // free index → node name
}

// FactorG returns the LU factorization of the conductance matrix G,
// computed on first use and kept: the midband figures, the flicker corner
// and the open-circuit time constants all solve with it. The LU must not
// be changed by the caller.
func (nw *Network) FactorG() (*dense.LU, error) {
	if nw.gLU == nil && nw.gErr == nil {
		var lu dense.LU
		if err := lu.Factorize(nw.N, nw.G); err != nil {
			nw.gErr = err
		} else {
			nw.gLU = &lu
		}
	}
	return nw.gLU, nw.gErr
}

// FreeIndex is the index of node n among the free unknowns, or −1.
func (nw *Network) FreeIndex(n Node) int {
	if int(n) < 0 || int(n) >= len(nw.free) {
		return -1
	}
	return nw.free[n]
}

// Name is the node name of free unknown i.
func (nw *Network) Name(i int) string { return nw.names[i] }

// smallNodes is the number of free nodes a networkStore has room for.
const smallNodes = 3

// networkStore is a network with room for a stage.
type networkStore struct {
	nw       Network
	free     [8]int
	share    [8]float64 // node → supply share of the source holding it
	names    [smallNodes]string
	matrices [2*smallNodes*smallNodes + 3*smallNodes]float64 // G, C, GSig, CSig, GSup
	noise    [6]NoiseSource
	devices  [2]device.Report
}

// Linearize builds the small-signal network of c at op, at temperature
// tempK (for resistor noise), with the given ports.
func (c *Circuit) Linearize(op OperatingPoint, ports Ports, tempK float64) (*Network, error) {
	if len(op.V) != len(c.names) {
		return nil, fmt.Errorf("linearize: operating point has %d nodes, circuit %d", len(op.V), len(c.names))
	}
	if ports.Signal < 0 || ports.Signal >= len(c.VSources) {
		return nil, fmt.Errorf("linearize: no signal source %d", ports.Signal)
	}
	nodes := len(c.names)
	driven := make([]bool, nodes)
	driven[Ground] = true
	for _, vs := range c.VSources {
		switch {
		case vs.N == Ground:
			driven[vs.P] = true
		case vs.P == Ground:
			driven[vs.N] = true
		default:
			return nil, fmt.Errorf("linearize: source %s is not tied to ground (not supported)", vs.Name)
		}
	}
	sigSrc := c.VSources[ports.Signal]
	sigNode := sigSrc.P
	if sigNode == Ground {
		sigNode = sigSrc.N
	}
	// One allocation holds the network of a stage (up to smallNodes free
	// nodes); a larger one allocates its slices.
	st := new(networkStore)
	nw := &st.nw
	nw.free = st.free[:0]
	share := st.share[:0]
	for range nodes {
		nw.free = append(nw.free, 0)
		share = append(share, 0)
	}
	for _, vs := range c.VSources {
		// A source from N to ground holds N at −V: its node moves by −Supply.
		if vs.N == Ground {
			share[vs.P] = vs.Supply
		} else {
			share[vs.N] = -vs.Supply
		}
	}
	nw.names = st.names[:0]
	nw.Noise = st.noise[:0]
	nw.Devices = st.devices[:0]
	for i := range nw.free {
		nw.free[i] = -1
		if !driven[i] {
			nw.free[i] = nw.N
			nw.names = append(nw.names, c.names[i])
			nw.N++
		}
	}
	n := nw.N
	m := st.matrices[:0]
	if n > smallNodes {
		m = make([]float64, 0, 2*n*n+3*n)
	}
	m = m[:2*n*n+3*n]
	nw.G, nw.C, nw.GSig, nw.CSig = m[:n*n:n*n], m[n*n:2*n*n:2*n*n], m[2*n*n:2*n*n+n:2*n*n+n], m[2*n*n+n:2*n*n+2*n:2*n*n+2*n]
	nw.GSup = m[2*n*n+2*n:]
	nw.In, nw.Out = nw.FreeIndex(ports.In), nw.FreeIndex(ports.Out)

	// stamp adds a two-terminal admittance y between a and b into m, its
	// coupling to the signal node into sig and, when sup is not nil, its
	// coupling to the supply into sup.
	stamp := func(m, sig, sup []float64, a, b Node, y float64) {
		fa, fb := nw.free[a], nw.free[b]
		if fa >= 0 {
			m[fa*n+fa] += y
			if fb >= 0 {
				m[fa*n+fb] -= y
			} else {
				if b == sigNode {
					sig[fa] -= y
				}
				if sup != nil {
					sup[fa] -= y * share[b]
				}
			}
		}
		if fb >= 0 {
			m[fb*n+fb] += y
			if fa >= 0 {
				m[fb*n+fa] -= y
			} else {
				if a == sigNode {
					sig[fb] -= y
				}
				if sup != nil {
					sup[fb] -= y * share[a]
				}
			}
		}
	}
	// vccs adds a current g·v(ctrl) flowing into node into (and out of
	// node from), i.e. it enters KCL at "into" as +g·v(ctrl).
	vccs := func(into, from, ctrl Node, g float64) {
		fc := nw.free[ctrl]
		for _, t := range [...]struct {
			node Node
			sign float64
		}{{into, 1}, {from, -1}} {
			r := nw.free[t.node]
			if r < 0 {
				continue
			}
			if fc >= 0 {
				nw.G[r*n+fc] += t.sign * g
				continue
			}
			if ctrl == sigNode {
				nw.GSig[r] += t.sign * g
			}
			nw.GSup[r] += t.sign * g * share[ctrl]
		}
	}
	kT4 := 4 * device.Boltzmann * tempK
	for i, r := range c.Resistors {
		if math.IsInf(r.R, 1) {
			continue
		}
		g := 1 / r.R
		stamp(nw.G, nw.GSig, nw.GSup, r.A, r.B, g)
		if i == ports.RSig {
			nw.RSigG = g
		}
		if i == ports.RL {
			nw.RLG = g
		}
		if !r.Noiseless {
			nw.Noise = append(nw.Noise, NoiseSource{Name: r.Name, A: nw.free[r.A], B: nw.free[r.B], White: kT4 * g})
		}
	}
	for _, k := range c.Caps {
		stamp(nw.C, nw.CSig, nil, k.A, k.B, k.C)
	}
	for _, m := range c.FETs {
		v := op.V
		rep := m.Dev.Report(v[m.D], v[m.G], v[m.S], v[m.B])
		nw.Devices = append(nw.Devices, rep)
		// Drain current into D: gm·vg + gmb·vb + gds·vd − (gm+gmb+gds)·vs.
		// In KCL (current leaving the node) it enters D with + and S with −.
		vccs(m.D, m.S, m.G, rep.GM)
		vccs(m.D, m.S, m.B, rep.GMB)
		vccs(m.D, m.S, m.D, rep.GDS)
		vccs(m.D, m.S, m.S, -(rep.GM + rep.GMB + rep.GDS))
		stamp(nw.C, nw.CSig, nil, m.G, m.S, rep.CGS)
		stamp(nw.C, nw.CSig, nil, m.G, m.D, rep.CGD)
		stamp(nw.C, nw.CSig, nil, m.G, m.B, rep.CGB)
		stamp(nw.C, nw.CSig, nil, m.D, m.B, rep.CDB)
		stamp(nw.C, nw.CSig, nil, m.S, m.B, rep.CSB)
		nw.Noise = append(nw.Noise, NoiseSource{
			Name: m.Name, A: nw.free[m.D], B: nw.free[m.S],
			White: rep.SID, Flicker: rep.GM * rep.GM * rep.FlickerGate,
		})
	}
	for _, x := range [][]float64{nw.G, nw.C, nw.GSig, nw.CSig, nw.GSup} {
		for _, v := range x {
			if math.IsNaN(v) || math.IsInf(v, 0) {
				return nil, fmt.Errorf("linearize: a small-signal value is not finite")
			}
		}
	}
	return nw, nil
}
