package circuit

import "math"

// The bracketed solve is the fallback for a circuit Newton–Raphson could
// not solve. It applies when the circuit has no servos, every voltage
// source ties its own node to ground, and the node equations left after the
// fixed nodes are taken out form a monotone system:
//
//   - a node whose equation depends on no other free node (a gate node fed
//     through a resistor, like a stage's input) is solved alone first;
//   - at each of the rest (at most maxNested), every element conducts from
//     the higher to the lower of its two ends, and a transistor's gate and
//     bulk sit at a fixed or already solved node, or on its own drain or
//     source (a diode-connected load).
//
// Then the current leaving a node rises with that node's voltage and falls
// with each neighbour's (the Jacobian is an M-matrix, made strictly so by
// the gmin shunt), and every node lies between the lowest and the highest
// fixed voltage (0 V included, for the shunt). With the deeper nodes solved
// for each trial value of an outer one, the outer node's current is still
// monotone in it (a Schur complement of an M-matrix is one). So a bracketed
// one-dimensional root finder on each node, nested, converges for every
// such circuit, however many decades the conductances span: one device
// strongly on against another in deep weak inversion, femtoamp currents, an
// output within microvolts of a rail. Every stage biased by its input level
// is such a circuit (a chain of at most three elements between fixed
// voltages, with at most two free nodes on it).
//
// It solves the same equations as Newton (the gmin shunt included), and
// its result passes the same KCL check (kclCheck).

// maxNested is the deepest nesting of brackets the solve takes on; each
// level multiplies the work by the evaluations of one root search (about
// 10 to 60).
const maxNested = 3

// bracketTolV is the absolute width, V, at which a bracket counts as
// closed (the relative part is two units in the last place of the root):
// at a strong device's conductance of 1 S it leaves 1e-17 A, well below
// the check's femtoamp floor.
const bracketTolV = 1e-17

// maxRootEvals bounds one root search. Bisection alone closes a bracket of
// 100 V to 1e-17 V in 64 halvings; Brent's method takes at most about
// three times the bisection count.
const maxRootEvals = 200

// bracketPlan is the order of the bracketed solve.
type bracketPlan struct {
	alone  []int // free node rows solved one at a time, in order
	nested []int // the coupled free rows, outermost first
	lo, hi float64
}

// planBracketed says whether the bracketed solve applies to s's circuit
// and in which order it takes the nodes. It sets the fixed nodes in s.x.
func (s *dcSystem) planBracketed() (bracketPlan, bool) {
	var p bracketPlan
	if s.ns > 0 || len(s.c.ISources) > 0 {
		return p, false
	}
	const (
		free = iota
		fixed
		solved
	)
	state := make([]int, s.nn)
	for _, vs := range s.c.VSources {
		k := idx(vs.P)
		if vs.N != Ground || k < 0 || state[k] != free {
			return p, false
		}
		state[k] = fixed
		s.x[k] = vs.V
		p.lo, p.hi = math.Min(p.lo, vs.V), math.Max(p.hi, vs.V)
	}
	// deps lists the free nodes other than k that node k's equation
	// depends on.
	deps := func(k int, out []int) []int {
		out = out[:0]
		add := func(n Node) {
			if j := idx(n); j >= 0 && j != k && state[j] == free {
				out = append(out, j)
			}
		}
		node := Node(k + 1)
		for _, r := range s.c.Resistors {
			if math.IsInf(r.R, 1) || r.ACOnly {
				continue
			}
			if r.A == node {
				add(r.B)
			} else if r.B == node {
				add(r.A)
			}
		}
		for _, m := range s.c.FETs {
			if m.D == node || m.S == node {
				add(m.D)
				add(m.G)
				add(m.S)
				add(m.B)
			}
		}
		return out
	}
	var buf []int
	for progress := true; progress; {
		progress = false
		for k := 0; k < s.nn; k++ {
			if state[k] != free {
				continue
			}
			if buf = deps(k, buf); len(buf) == 0 {
				state[k] = solved
				p.alone = append(p.alone, k)
				progress = true
			}
		}
	}
	for k := 0; k < s.nn; k++ {
		if state[k] == free {
			p.nested = append(p.nested, k)
		}
	}
	if len(p.nested) > maxNested {
		return p, false
	}
	// A transistor on a nested node must have its gate and bulk fixed,
	// solved, or on its own drain or source.
	isNested := func(n Node) bool { j := idx(n); return j >= 0 && state[j] == free }
	for _, m := range s.c.FETs {
		if !isNested(m.D) && !isNested(m.S) {
			continue
		}
		for _, t := range [...]Node{m.G, m.B} {
			if isNested(t) && t != m.D && t != m.S {
				return p, false
			}
		}
	}
	return p, true
}

// nodeCurrent is the current leaving free node row k through its elements
// and the gmin shunt, at the present s.x: the node's row of assemble, term
// for term.
func (s *dcSystem) nodeCurrent(k int) float64 {
	node := Node(k + 1)
	i := s.gmin * s.x[k]
	for _, r := range s.c.Resistors {
		if math.IsInf(r.R, 1) || r.ACOnly || (r.A != node && r.B != node) {
			continue
		}
		g := 1 / r.R
		ir := g * (s.v(r.A) - s.v(r.B))
		if r.A == node {
			i += ir
		}
		if r.B == node {
			i -= ir
		}
	}
	for _, m := range s.c.FETs {
		if m.D != node && m.S != node {
			continue
		}
		e := m.Dev.Current(s.v(m.D), s.v(m.G), s.v(m.S), s.v(m.B))
		if m.D == node {
			i += e.ID
		}
		if m.S == node {
			i -= e.ID
		}
	}
	return i
}

// bracketed runs the bracketed solve. It returns the current evaluations
// it used and whether it found the point; on success s.x holds the node
// voltages and the sources' branch currents.
func (s *dcSystem) bracketed() (int, bool) {
	s.scale, s.gmin = 1, s.opt.GMin
	for i := range s.x {
		s.x[i] = 0
	}
	p, ok := s.planBracketed()
	if !ok {
		return 0, false
	}
	evals := 0
	ok = true
	for _, k := range p.alone {
		if !s.rootOf(k, p, nil, &evals) {
			ok = false
		}
	}
	if ok && len(p.nested) > 0 && !s.rootOf(p.nested[0], p, p.nested[1:], &evals) {
		ok = false
	}
	if !ok {
		return evals, false
	}
	// Each source's branch current is what its node's other elements
	// draw: the source's row of the node equations then holds exactly.
	for b, vs := range s.c.VSources {
		s.x[s.nn+b] = -s.nodeCurrent(idx(vs.P))
	}
	return evals, true
}

// rootOf solves node row k's equation by Brent's method on its bracket,
// solving the inner rows afresh for each trial voltage of k (nested
// brackets). It leaves s.x at the root with the inner rows solved there.
func (s *dcSystem) rootOf(k int, p bracketPlan, inner []int, evals *int) bool {
	innerOK := true
	f := func(v float64) float64 {
		s.x[k] = v
		if len(inner) > 0 && !s.rootOf(inner[0], p, inner[1:], evals) {
			innerOK = false
		}
		*evals++
		return s.nodeCurrent(k)
	}
	// Every node lies between the lowest and highest fixed voltage; a
	// device whose current at zero drain-source voltage is not exactly
	// zero may move the root by a hair, so the bracket widens if needed.
	a, b := p.lo, p.hi
	span := math.Max(b-a, 1)
	fa, fb := f(a), f(b)
	for w := 0; fa > 0 && w < 4; w++ {
		a -= span
		fa = f(a)
	}
	for w := 0; fb < 0 && w < 4; w++ {
		b += span
		fb = f(b)
	}
	if !(fa <= 0 && fb >= 0) || !innerOK {
		return false
	}
	root, ok := brent(f, a, b, fa, fb)
	f(root) // leave the inner rows solved at the root
	return ok && innerOK
}

// brent finds a zero of f in [a, b], where f(a) and f(b) differ in sign (or
// one is zero), by Brent's method: inverse quadratic interpolation or the
// secant step when it stays well inside the bracket and shrinks it fast
// enough, bisection otherwise (R. P. Brent, Algorithms for Minimization
// without Derivatives, 1973, ch. 4; from memory). It stops when the
// bracket is narrower than 4·ε·|x| + 2·bracketTolV, or f is exactly 0.
func brent(f func(float64) float64, a, b, fa, fb float64) (float64, bool) {
	if fa == 0 {
		return a, true
	}
	if fb == 0 {
		return b, true
	}
	c, fc := a, fa
	d := b - a
	e := d
	for it := 0; it < maxRootEvals; it++ {
		if (fb > 0) == (fc > 0) {
			c, fc = a, fa
			d = b - a
			e = d
		}
		if math.Abs(fc) < math.Abs(fb) {
			a, b, c = b, c, b
			fa, fb, fc = fb, fc, fb
		}
		tol := 2*0x1p-52*math.Abs(b) + bracketTolV
		m := (c - b) / 2
		if math.Abs(m) <= tol || fb == 0 {
			return b, true
		}
		if math.Abs(e) >= tol && math.Abs(fa) > math.Abs(fb) {
			var pn, q float64
			sr := fb / fa
			if a == c { // secant
				pn = 2 * m * sr
				q = 1 - sr
			} else { // inverse quadratic interpolation
				qa, r := fa/fc, fb/fc
				pn = sr * (2*m*qa*(qa-r) - (b-a)*(r-1))
				q = (qa - 1) * (r - 1) * (sr - 1)
			}
			if pn > 0 {
				q = -q
			} else {
				pn = -pn
			}
			if 2*pn < math.Min(3*m*q-math.Abs(tol*q), math.Abs(e*q)) {
				e, d = d, pn/q
			} else {
				d, e = m, m
			}
		} else {
			d, e = m, m
		}
		a, fa = b, fb
		if math.Abs(d) > tol {
			b += d
		} else if m > 0 {
			b += tol
		} else {
			b -= tol
		}
		fb = f(b)
	}
	return b, false
}
