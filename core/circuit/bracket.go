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
}

// planBracketed says whether the bracketed solve applies to s's circuit
// and in which order it takes the nodes.
func (s *dcSystem) planBracketed() (bracketPlan, bool) {
	var p bracketPlan
	if len(s.c.ISources) > 0 || s.ns > maxServos {
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
	if len(p.nested) > maxNested || len(p.nested)+s.ns > maxLevels {
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
// voltages, the sources' branch currents and the servo values.
func (s *dcSystem) bracketed() (int, bool) {
	s.scale, s.gmin = 1, s.opt.GMin
	for i := range s.x {
		s.x[i] = 0
	}
	p, ok := s.planBracketed()
	if !ok {
		return 0, false
	}
	b := bracketRun{s: s, p: p}
	ok = b.servoLevel(0)
	if b.evals > maxBracketEvals {
		return b.evals, false
	}
	// Each source's branch current is what its node's other elements
	// draw: the source's row of the node equations then holds exactly.
	for k, vs := range s.c.VSources {
		s.x[s.nn+k] = -s.nodeCurrent(idx(vs.P))
	}
	return b.evals, ok
}

// maxServos and maxLevels bound the servos and the nesting depth (servo
// values outermost, then the coupled nodes) the bracketed solve takes on;
// maxBracketEvals bounds its node-current evaluations (about 0.1 s).
const (
	maxServos       = 2
	maxLevels       = 4
	maxBracketEvals = 1 << 20
)

// bracketRun is one bracketed solve in progress.
type bracketRun struct {
	s     *dcSystem
	p     bracketPlan
	evals int
}

// fixSources puts every voltage source's node at its value (a servoed
// source at its present trial value) and returns the lowest and highest of
// them and 0 V: every free node lies between the two.
func (b *bracketRun) fixSources() (lo, hi float64) {
	s := b.s
	for k, vs := range s.c.VSources {
		v := s.sourceValue(k)
		s.x[idx(vs.P)] = v
		lo, hi = math.Min(lo, v), math.Max(hi, v)
	}
	return lo, hi
}

// servoLevel solves servo j and those after it, with the nodes solved for
// each trial value. A servo's equation (a transistor's current, a node's
// voltage) is monotone in its source's value in these circuits, so a
// bracket on the value converges; where the equation has no root in the
// bracket (the bias cannot be met there), the value stays at the end
// nearer the root and the KCL check rejects the result.
func (b *bracketRun) servoLevel(j int) bool {
	s := b.s
	if j == s.ns {
		return b.nodes()
	}
	sv := s.c.Servos[j]
	row := s.nn + s.nb + j
	ok := true
	f := func(u float64) float64 {
		s.x[row] = u
		if !b.servoLevel(j + 1) {
			ok = false
		}
		switch sv.Kind {
		case ServoCurrent:
			m := s.c.FETs[sv.Target]
			e := m.Dev.Current(s.v(m.D), s.v(m.G), s.v(m.S), s.v(m.B))
			return float64(m.Dev.Polarity())*e.ID - sv.Value
		default:
			return s.v(Node(sv.Target)) - sv.Value
		}
	}
	// The box Newton keeps servo values in: the bounds widened by their
	// span on each side, so a solution just outside the supply is found
	// and reported as such by the caller.
	span := math.Max(sv.Hi-sv.Lo, 1)
	a, c := sv.Lo-span, sv.Hi+span
	fa, fc := f(a), f(c)
	if (fa > 0) == (fc > 0) && fa != 0 && fc != 0 {
		end := a
		if math.Abs(fc) < math.Abs(fa) {
			end = c
		}
		f(end)
		return false
	}
	root, rok := b.brent(f, a, c, fa, fc)
	f(root)
	return ok && rok
}

// nodes solves every free node at the present source values: the lone
// nodes one at a time, then the coupled ones by nested brackets.
func (b *bracketRun) nodes() bool {
	ok := true
	for _, k := range b.p.alone {
		if !b.rootOf(k, nil) {
			ok = false
		}
	}
	if len(b.p.nested) > 0 && !b.rootOf(b.p.nested[0], b.p.nested[1:]) {
		ok = false
	}
	return ok
}

// rootOf solves node row k's equation by Brent's method on its bracket,
// solving the inner rows afresh for each trial voltage of k (nested
// brackets). It leaves s.x at the root with the inner rows solved there.
func (b *bracketRun) rootOf(k int, inner []int) bool {
	s := b.s
	innerOK := true
	f := func(v float64) float64 {
		s.x[k] = v
		if len(inner) > 0 && !b.rootOf(inner[0], inner[1:]) {
			innerOK = false
		}
		b.evals++
		return s.nodeCurrent(k)
	}
	// Every node lies between the lowest and highest fixed voltage; a
	// device whose current at zero drain-source voltage is not exactly
	// zero may move the root by a hair, so the bracket widens if needed.
	lo, hi := b.fixSources()
	span := math.Max(hi-lo, 1)
	fa, fb := f(lo), f(hi)
	for w := 0; fa > 0 && w < 4; w++ {
		lo -= span
		fa = f(lo)
	}
	for w := 0; fb < 0 && w < 4; w++ {
		hi += span
		fb = f(hi)
	}
	if !(fa <= 0 && fb >= 0) || !innerOK {
		return false
	}
	root, ok := b.brent(f, lo, hi, fa, fb)
	f(root) // leave the inner rows solved at the root
	return ok && innerOK
}

// brent is brentRoot, stopped once the run has spent its evaluations.
func (b *bracketRun) brent(f func(float64) float64, lo, hi, flo, fhi float64) (float64, bool) {
	if b.evals > maxBracketEvals {
		return lo, false
	}
	return brentRoot(f, lo, hi, flo, fhi)
}

// brentRoot finds a zero of f in [a, b], where f(a) and f(b) differ in sign (or
// one is zero), by Brent's method: inverse quadratic interpolation or the
// secant step when it stays well inside the bracket and shrinks it fast
// enough, bisection otherwise (R. P. Brent, Algorithms for Minimization
// without Derivatives, 1973, ch. 4; from memory). It stops when the
// bracket is narrower than 4·ε·|x| + 2·bracketTolV, or f is exactly 0.
func brentRoot(f func(float64) float64, a, b, fa, fb float64) (float64, bool) {
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
