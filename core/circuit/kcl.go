package circuit

import (
	"fmt"
	"math"

	"stagewright/core/device"
)

// The KCL check every operating point passes before it is returned,
// whichever method found it. At each node the element currents (the gmin
// shunt left out) must cancel to within
//
//	kclRelTol · (the largest branch current at the node)
//	+ gmin · (|V| + kclFloorV)
//	+ kclRound · Σ |∂I/∂V|·|V| over the node's elements and their terminals.
//
// The first term is the relative accuracy, against the largest branch
// current rather than their sum, so a femtoamp branch beside it is still
// held to its own size when the largest is femtoamps too. The second is the
// absolute floor tied to the gmin shunt: the shunt itself carries gmin·|V|
// out of every node (the solution includes it, as Newton's does), and
// gmin·1 mV (1 fA at the default 1e-12 S) is the least current the check
// resolves, the femtoamp scale of a chain whose one device is cut off.
// The third is floating-point resolution: what rounding every terminal
// voltage by a few units in the last place changes the branch currents by,
// which for a strong device (1 S) at 1.8 V is 3e-15 A, above the floor; no
// solution in double precision can do better. Newton's own stopping rule
// (relative residual 1e-9 of the summed magnitudes, which for resistors
// include 1e-15·G·|V|, plus 1e-18 A) lies inside this bound, so every
// Newton result passes it; the bracketed solve's results are checked
// against it, not assumed to pass.
const (
	kclRelTol = 1e-8
	kclFloorV = 1e-3
	kclRound  = 8 * 0x1p-52
)

// KCLError is an operating point that fails the KCL check: the node, its
// current imbalance and the tolerance it exceeds.
type KCLError struct {
	Node      string
	Imbalance float64 // A (V for a source equation)
	Tolerance float64
}

func (e *KCLError) Error() string {
	return fmt.Sprintf("KCL does not hold at %s: off by %.3g (tolerance %.3g)", e.Node, e.Imbalance, e.Tolerance)
}

// kclCheck applies the KCL check to s.x (node voltages, branch currents,
// servo values). With fresh set, s.evals holds every transistor's
// evaluation at s.x (as after assemble) and is reused. It returns the
// worst row, its imbalance and tolerance, and whether every row passes.
func (s *dcSystem) kclCheck(fresh bool) (ok bool, worst int, imb, tol float64) {
	nn := s.nn
	im, big, res := s.kcl[:nn], s.kcl[nn:2*nn], s.kcl[2*nn:3*nn]
	clear(s.kcl)
	add := func(n Node, i, r float64) {
		if k := idx(n); k >= 0 {
			im[k] += i
			big[k] = math.Max(big[k], math.Abs(i))
			res[k] += r
		}
	}
	for _, r := range s.c.Resistors {
		if math.IsInf(r.R, 1) || r.ACOnly {
			continue
		}
		g := 1 / r.R
		va, vb := s.v(r.A), s.v(r.B)
		i := g * (va - vb)
		rr := g * (math.Abs(va) + math.Abs(vb))
		add(r.A, i, rr)
		add(r.B, -i, rr)
	}
	for _, is := range s.c.ISources {
		add(is.A, is.I, 0)
		add(is.B, -is.I, 0)
	}
	for k, vs := range s.c.VSources {
		i := s.x[nn+k]
		add(vs.P, i, 0)
		add(vs.N, -i, 0)
	}
	for j, m := range s.c.FETs {
		vd, vg, vsrc, vb := s.v(m.D), s.v(m.G), s.v(m.S), s.v(m.B)
		var e device.Eval
		if fresh {
			e = s.evals[j]
		} else {
			e = m.Dev.Current(vd, vg, vsrc, vb)
		}
		r := math.Abs(e.GDS*vd) + math.Abs(e.GM*vg) + math.Abs(e.GMB*vb) + math.Abs((e.GM+e.GMB+e.GDS)*vsrc)
		add(m.D, e.ID, r)
		add(m.S, -e.ID, r)
	}
	gmin := s.opt.GMin
	ok, worstRatio := true, -1.0
	check := func(row int, imbalance, tolerance float64) {
		r := math.Abs(imbalance) / tolerance
		if math.IsNaN(r) {
			r = math.Inf(1)
		}
		if r > worstRatio {
			worst, worstRatio, imb, tol = row, r, imbalance, tolerance
		}
		if r > 1 {
			ok = false
		}
	}
	for k := 0; k < nn; k++ {
		check(k, im[k], kclRelTol*big[k]+gmin*(math.Abs(s.x[k])+kclFloorV)+kclRound*res[k])
	}
	// Each source's equation, to Newton's voltage tolerance.
	for k, vs := range s.c.VSources {
		val := s.sourceValue(k)
		d := s.v(vs.P) - s.v(vs.N) - val
		check(nn+k, d, s.opt.VoltTol+s.opt.RelTol*(math.Abs(val)+math.Abs(s.v(vs.P))+math.Abs(s.v(vs.N))))
	}
	// Each servo's equation: a current to the relative tolerance with the
	// same femtoamp floor, a voltage to Newton's voltage tolerance.
	for j, sv := range s.c.Servos {
		row := nn + s.nb + j
		switch sv.Kind {
		case ServoCurrent:
			m := s.c.FETs[sv.Target]
			id := s.evals[sv.Target].ID
			if !fresh {
				id = m.Dev.Current(s.v(m.D), s.v(m.G), s.v(m.S), s.v(m.B)).ID
			}
			d := float64(m.Dev.Polarity())*id - sv.Value
			check(row, d, kclRelTol*math.Max(math.Abs(sv.Value), math.Abs(id))+gmin*kclFloorV)
		case ServoVoltage:
			d := s.v(Node(sv.Target)) - sv.Value
			check(row, d, s.opt.VoltTol+s.opt.RelTol*math.Abs(sv.Value))
		}
	}
	return ok, worst, imb, tol
}

// CheckKCL applies the solver's KCL check (see kclCheck) to op: the one
// every result of SolveDC has passed. It returns a *KCLError naming the
// worst node when the check fails.
func (c *Circuit) CheckKCL(op OperatingPoint, opt Options) error {
	if err := c.Check(); err != nil {
		return err
	}
	opt = opt.withDefaults()
	s := newDCSystem(c, opt)
	defer s.release()
	if len(op.V) != s.nn+1 || len(op.Branch) != s.nb || len(op.Source) != s.nb {
		return fmt.Errorf("operating point has %d node voltages and %d branch currents for a circuit of %d nodes and %d sources", len(op.V), len(op.Branch), s.nn+1, s.nb)
	}
	copy(s.x, op.V[1:])
	copy(s.x[s.nn:], op.Branch)
	for j, sv := range c.Servos {
		s.x[s.nn+s.nb+j] = op.Source[sv.Source]
	}
	s.scale, s.gmin = 1, opt.GMin
	if ok, worst, imb, tol := s.kclCheck(false); !ok {
		return &KCLError{Node: s.rowName(worst), Imbalance: imb, Tolerance: tol}
	}
	return nil
}
