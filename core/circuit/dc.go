package circuit

import (
	"fmt"
	"math"
	"sync"

	"stagewright/core/dense"
	"stagewright/core/device"
)

// Solver settings. The zero value of each field means the default shown.
type Options struct {
	MaxIter  int     // Newton iterations per solve (100)
	MaxStep  float64 // largest change of any node voltage or servo value per iteration, V (0.5)
	GMin     float64 // conductance from every node to ground, S (1e-12)
	RelTol   float64 // KCL residual relative to the current magnitudes at a node (1e-9)
	AbsTolI  float64 // absolute KCL residual floor, A (1e-18)
	VoltTol  float64 // voltage change that counts as settled, V (1e-9)
	NoGMin   bool    // skip gmin stepping (tests)
	NoSource bool    // skip source stepping (tests)
	// NoBracket skips the bracketed solve that follows when every Newton
	// method has failed (tests).
	NoBracket bool
}

func (o Options) withDefaults() Options {
	if o.MaxIter <= 0 {
		o.MaxIter = 100
	}
	if o.MaxStep <= 0 {
		o.MaxStep = 0.5
	}
	if o.GMin <= 0 {
		o.GMin = 1e-12
	}
	if o.RelTol <= 0 {
		o.RelTol = 1e-9
	}
	if o.AbsTolI <= 0 {
		o.AbsTolI = 1e-18
	}
	if o.VoltTol <= 0 {
		o.VoltTol = 1e-9
	}
	return o
}

// OperatingPoint is a solved DC state.
type OperatingPoint struct {
	V          []float64 // node voltages by node index; V[0] = 0
	Branch     []float64 // voltage-source branch currents, A, flowing P → source → N
	Source     []float64 // voltage-source values as solved (servo'd sources carry their solved value)
	Iterations int       // Newton iterations, all continuation steps included
	Method     string    // "newton", "gmin stepping", "source stepping" or "bracketed"
}

// NoConvergenceError says that the solver found no DC solution and where
// it was stuck. It is a failure of the solver, not a proof that the
// circuit has no solution.
type NoConvergenceError struct {
	Iterations int
	Node       string  // node (or equation) with the largest residual at the end
	Residual   float64 // that residual, A (V for a source or voltage-servo equation)
	Reason     string
	// Bracketed says whether the bracketed solve applied to the circuit
	// (and failed); when false the circuit is outside its reach (servos, or
	// a structure it cannot order).
	Bracketed bool
}

func (e *NoConvergenceError) Error() string {
	methods := "plain, gmin stepping and source stepping"
	if e.Bracketed {
		methods += ", then the bracketed solve"
	}
	return fmt.Sprintf("the solver found no operating point after %d Newton–Raphson iterations (%s): %s; largest residual %.3g at %s",
		e.Iterations, methods, e.Reason, e.Residual, e.Node)
}

// dcSystem holds the workspace of one DC solve.
type dcSystem struct {
	c       *Circuit
	opt     Options
	nn      int // node unknowns (nodes − 1)
	nb      int // branch unknowns
	ns      int // servo unknowns
	n       int
	x, dx   []float64
	f, fabs []float64
	j       []float64
	lu      dense.LU
	servoOf []int // source index → servo index or −1
	gmin    float64
	scale   float64
	evals   []device.Eval // each transistor's current and derivatives at the present iterate
	start   []float64     // the initial iterate
	kcl     []float64     // kclCheck's workspace: imbalance, largest current and rounding scale per node
	buf     []float64     // storage of x, dx, f, fabs, start, kcl and j
}

// dcSystems keeps the workspaces of finished solves (and the storage their
// LU has grown), so that a solve does not allocate them again. Every field
// a solve reads is set before it is read: nothing carries over from one
// solve to the next but memory.
var dcSystems = sync.Pool{New: func() any { return new(dcSystem) }}

func newDCSystem(c *Circuit, opt Options) *dcSystem {
	s := dcSystems.Get().(*dcSystem)
	s.c, s.opt = c, opt
	s.nn = len(c.names) - 1
	s.nb = len(c.VSources)
	s.ns = len(c.Servos)
	s.n = s.nn + s.nb + s.ns
	s.gmin, s.scale = 0, 0
	n, nk := s.n, 3*s.nn
	if cap(s.buf) < 5*n+nk+n*n {
		s.buf = make([]float64, 5*n+nk+n*n)
	}
	b := s.buf[:5*n+nk+n*n]
	clear(b)
	s.x, s.dx, s.f, s.fabs, s.start = b[:n:n], b[n:2*n:2*n], b[2*n:3*n:3*n], b[3*n:4*n:4*n], b[4*n:5*n:5*n]
	s.kcl = b[5*n : 5*n+nk : 5*n+nk]
	s.j = b[5*n+nk:]
	if cap(s.evals) < len(c.FETs) {
		s.evals = make([]device.Eval, len(c.FETs))
	}
	s.evals = s.evals[:len(c.FETs)]
	clear(s.evals)
	if cap(s.servoOf) < s.nb {
		s.servoOf = make([]int, s.nb)
	}
	s.servoOf = s.servoOf[:s.nb]
	for i := range s.servoOf {
		s.servoOf[i] = -1
	}
	for i, sv := range c.Servos {
		s.servoOf[sv.Source] = i
	}
	return s
}

// release returns s to the pool; s must not be used afterwards.
func (s *dcSystem) release() {
	s.c = nil
	dcSystems.Put(s)
}

func (s *dcSystem) v(n Node) float64 {
	if n == Ground {
		return 0
	}
	return s.x[int(n)-1]
}

// sourceValue is the value of source k at the present iterate.
func (s *dcSystem) sourceValue(k int) float64 {
	if j := s.servoOf[k]; j >= 0 {
		return s.x[s.nn+s.nb+j]
	}
	return s.c.VSources[k].V * s.scale
}

func (s *dcSystem) addJ(row, col int, g float64) {
	if row >= 0 && col >= 0 {
		s.j[row*s.n+col] += g
	}
}

func idx(n Node) int { return int(n) - 1 } // −1 for ground

// assemble fills f (residuals), fabs (magnitude scale of each row) and j.
func (s *dcSystem) assemble() {
	for i := range s.f {
		s.f[i], s.fabs[i] = 0, 0
	}
	for i := range s.j {
		s.j[i] = 0
	}
	// addFm adds current i to node n's equation; m is the size of the
	// terms that make it up, so the tolerance covers the rounding of a
	// small difference of large terms.
	addFm := func(n Node, i, m float64) {
		if k := idx(n); k >= 0 {
			s.f[k] += i
			s.fabs[k] += m
		}
	}
	addF := func(n Node, i float64) { addFm(n, i, math.Abs(i)) }
	for k := 0; k < s.nn; k++ {
		g := s.gmin
		s.f[k] += g * s.x[k]
		s.fabs[k] += math.Abs(g * s.x[k])
		s.j[k*s.n+k] += g
	}
	for _, r := range s.c.Resistors {
		if math.IsInf(r.R, 1) || r.ACOnly {
			continue
		}
		g := 1 / r.R
		i := g * (s.v(r.A) - s.v(r.B))
		m := math.Abs(i) + 1e-6*g*(math.Abs(s.v(r.A))+math.Abs(s.v(r.B)))
		addFm(r.A, i, m)
		addFm(r.B, -i, m)
		a, b := idx(r.A), idx(r.B)
		s.addJ(a, a, g)
		s.addJ(b, b, g)
		s.addJ(a, b, -g)
		s.addJ(b, a, -g)
	}
	for _, is := range s.c.ISources {
		i := is.I * s.scale
		addF(is.A, i)
		addF(is.B, -i)
	}
	for k, vs := range s.c.VSources {
		row := s.nn + k
		i := s.x[row]
		addF(vs.P, i)
		addF(vs.N, -i)
		p, n := idx(vs.P), idx(vs.N)
		s.addJ(p, row, 1)
		s.addJ(n, row, -1)
		val := s.sourceValue(k)
		s.f[row] = s.v(vs.P) - s.v(vs.N) - val
		s.fabs[row] = math.Abs(val) + math.Abs(s.v(vs.P)) + math.Abs(s.v(vs.N))
		s.addJ(row, p, 1)
		s.addJ(row, n, -1)
		if j := s.servoOf[k]; j >= 0 {
			s.addJ(row, s.nn+s.nb+j, -1)
		}
	}
	for i, m := range s.c.FETs {
		e := m.Dev.Current(s.v(m.D), s.v(m.G), s.v(m.S), s.v(m.B))
		s.evals[i] = e
		addF(m.D, e.ID)
		addF(m.S, -e.ID)
		d, g, src, b := idx(m.D), idx(m.G), idx(m.S), idx(m.B)
		gs := -(e.GM + e.GMB + e.GDS)
		for _, t := range [...]struct {
			col int
			val float64
		}{{d, e.GDS}, {g, e.GM}, {src, gs}, {b, e.GMB}} {
			s.addJ(d, t.col, t.val)
			s.addJ(src, t.col, -t.val)
		}
	}
	for j, sv := range s.c.Servos {
		row := s.nn + s.nb + j
		switch sv.Kind {
		case ServoCurrent:
			m := s.c.FETs[sv.Target]
			e := s.evals[sv.Target]
			sign := float64(m.Dev.Polarity())
			target := sv.Value * s.scale
			s.f[row] = sign*e.ID - target
			s.fabs[row] = math.Abs(target) + math.Abs(e.ID)
			d, g, src, b := idx(m.D), idx(m.G), idx(m.S), idx(m.B)
			s.addJ(row, d, sign*e.GDS)
			s.addJ(row, g, sign*e.GM)
			s.addJ(row, src, -sign*(e.GM+e.GMB+e.GDS))
			s.addJ(row, b, sign*e.GMB)
		case ServoVoltage:
			target := sv.Value * s.scale
			s.f[row] = s.v(Node(sv.Target)) - target
			s.fabs[row] = math.Abs(target)
			s.addJ(row, idx(Node(sv.Target)), 1)
		}
	}
}

// residualOK says whether every equation is satisfied to tolerance, and
// returns the worst row relative to its tolerance.
func (s *dcSystem) residualOK() (bool, int) {
	ok, worst, worstRatio := true, 0, -1.0
	for i := 0; i < s.n; i++ {
		var tol float64
		switch {
		case i < s.nn:
			tol = s.opt.RelTol*s.fabs[i] + s.opt.AbsTolI
		case i < s.nn+s.nb:
			tol = s.opt.VoltTol + s.opt.RelTol*s.fabs[i]
		default:
			sv := s.c.Servos[i-s.nn-s.nb]
			if sv.Kind == ServoCurrent {
				tol = s.opt.RelTol*s.fabs[i] + s.opt.AbsTolI
			} else {
				tol = s.opt.VoltTol + s.opt.RelTol*s.fabs[i]
			}
		}
		r := math.Abs(s.f[i]) / tol
		if math.IsNaN(r) {
			r = math.Inf(1)
		}
		if r > worstRatio {
			worst, worstRatio = i, r
		}
		if r > 1 {
			ok = false
		}
	}
	return ok, worst
}

func (s *dcSystem) rowName(i int) string {
	switch {
	case i < s.nn:
		return "node " + s.c.names[i+1]
	case i < s.nn+s.nb:
		return "source " + s.c.VSources[i-s.nn].Name
	default:
		sv := s.c.Servos[i-s.nn-s.nb]
		return "bias condition on " + s.c.VSources[sv.Source].Name
	}
}

// newton runs Newton–Raphson from the present x. It returns the iterations
// used and whether it converged.
func (s *dcSystem) newton(maxIter int) (int, bool) {
	settled := false
	for it := 0; it < maxIter; it++ {
		s.assemble()
		if ok, _ := s.residualOK(); ok && settled {
			return it, true
		}
		for i := range s.f {
			s.dx[i] = -s.f[i]
		}
		if err := s.lu.Factorize(s.n, s.j); err != nil {
			return it + 1, false
		}
		s.lu.Solve(s.dx, s.dx)
		// Limit the step: no voltage (node or servo value) moves more
		// than MaxStep in one iteration.
		big := 0.0
		for i := 0; i < s.n; i++ {
			if i >= s.nn && i < s.nn+s.nb {
				continue // branch currents
			}
			big = math.Max(big, math.Abs(s.dx[i]))
		}
		if math.IsNaN(big) || math.IsInf(big, 0) {
			return it + 1, false
		}
		k := 1.0
		if big > s.opt.MaxStep {
			k = s.opt.MaxStep / big
		}
		settled = true
		for i := 0; i < s.n; i++ {
			step := k * s.dx[i]
			s.x[i] += step
			if (i < s.nn || i >= s.nn+s.nb) && math.Abs(step) > s.opt.VoltTol+1e-6*math.Abs(s.x[i]) {
				settled = false
			}
		}
		for j, sv := range s.c.Servos {
			i := s.nn + s.nb + j
			span := sv.Hi - sv.Lo
			lo, hi := sv.Lo-span, sv.Hi+span
			if span > 0 {
				s.x[i] = math.Min(math.Max(s.x[i], lo), hi)
			}
		}
		if k < 1 {
			settled = false
		}
	}
	return maxIter, false
}

// Guess sets initial node voltages for the solve; nodes not listed start
// at 0 V. A nil map is allowed.
type Guess map[Node]float64

// SolveDC finds the DC operating point. It tries plain Newton–Raphson from
// the guess, then gmin stepping, then source stepping, and when all three
// fail, the bracketed solve (bracket.go) where the circuit allows it. A
// result from any of them has passed the KCL check (kcl.go).
func (c *Circuit) SolveDC(guess Guess, opt Options) (OperatingPoint, error) {
	if err := c.Check(); err != nil {
		return OperatingPoint{}, err
	}
	opt = opt.withDefaults()
	s := newDCSystem(c, opt)
	defer s.release()
	start := s.start
	for n, v := range guess {
		if k := idx(n); k >= 0 && k < s.nn {
			start[k] = v
		}
	}
	for j, sv := range c.Servos {
		// A servo'd source starts at its given value, or where the guess
		// puts its node (a warm start from a neighbouring solution).
		vs := c.VSources[sv.Source]
		start[s.nn+s.nb+j] = vs.V
		if g, ok := guess[vs.P]; ok && vs.N == Ground {
			start[s.nn+s.nb+j] = g
		}
	}
	// Voltage sources tied to ground fix their node: start there.
	for _, vs := range c.VSources {
		if vs.N == Ground && idx(vs.P) >= 0 {
			if _, given := guess[vs.P]; !given {
				start[idx(vs.P)] = vs.V
			}
		}
	}
	total := 0
	done := func(method string) (OperatingPoint, error) {
		return s.result(total, method), nil
	}

	// 1. Plain Newton.
	copy(s.x, start)
	s.gmin, s.scale = opt.GMin, 1
	it, ok := s.newton(opt.MaxIter)
	total += it
	if ok && s.checked() {
		return done("newton")
	}

	// 2. gmin stepping: a large conductance from every node to ground
	// makes the problem nearly linear; reduce it a decade at a time.
	if !opt.NoGMin {
		copy(s.x, start)
		ok = true
		for g := 1e-2; g >= opt.GMin*0.999; g /= 10 {
			s.gmin = g
			it, ok = s.newton(opt.MaxIter)
			total += it
			if !ok {
				break
			}
		}
		if ok {
			s.gmin = opt.GMin
			it, ok = s.newton(opt.MaxIter)
			total += it
			if ok && s.checked() {
				return done("gmin stepping")
			}
		}
	}

	// 3. Source stepping: ramp every source (and servo target) from zero.
	if !opt.NoSource {
		for i := range s.x {
			s.x[i] = 0
		}
		s.gmin = opt.GMin
		scale, step := 0.0, 0.1
		prev := make([]float64, s.n)
		for scale < 1 && step > 1e-4 {
			next := math.Min(1, scale+step)
			copy(prev, s.x)
			s.scale = next
			it, ok = s.newton(opt.MaxIter / 2)
			total += it
			if ok {
				scale = next
				step = math.Min(step*1.5, 0.25)
			} else {
				copy(s.x, prev)
				step /= 2
			}
		}
		if scale >= 1 && s.checked() {
			return done("source stepping")
		}
	}

	// 4. The bracketed solve, for the circuits where it cannot miss.
	tried := false
	if !opt.NoBracket {
		var ok bool
		if tried, ok = s.bracketedChecked(); ok {
			return done("bracketed")
		}
	}
	return OperatingPoint{}, s.failure(total, tried)
}

// failure is the error of a solve that found nothing, with the worst
// residual at the last iterate.
func (s *dcSystem) failure(iters int, bracketed bool) error {
	s.scale, s.gmin = 1, s.opt.GMin
	s.assemble()
	_, worst := s.residualOK()
	return &NoConvergenceError{
		Iterations: iters,
		Node:       s.rowName(worst),
		Residual:   math.Abs(s.f[worst]),
		Reason:     "every method failed",
		Bracketed:  bracketed,
	}
}

// bracketedChecked runs the bracketed solve where it applies and the KCL
// check on its result.
func (s *dcSystem) bracketedChecked() (applies, ok bool) {
	if _, applies = s.planBracketed(); !applies {
		return false, false
	}
	if _, ok = s.bracketed(); !ok {
		return true, false
	}
	s.assemble()
	ok, _, _, _ = s.kclCheck(true)
	return true, ok
}

// SolveBracketed runs only the bracketed solve (bracket.go), the last
// fallback of SolveDC, for a caller that ran SolveDC with NoBracket and
// has checked in between whether the circuit can have a solution at all.
// It fails with a *NoConvergenceError (Bracketed false when the circuit is
// outside the method's reach).
func (c *Circuit) SolveBracketed(opt Options) (OperatingPoint, error) {
	if err := c.Check(); err != nil {
		return OperatingPoint{}, err
	}
	opt = opt.withDefaults()
	s := newDCSystem(c, opt)
	defer s.release()
	applies, ok := s.bracketedChecked()
	if ok {
		return s.result(0, "bracketed"), nil
	}
	return OperatingPoint{}, s.failure(0, applies)
}

// checked applies the KCL check to a Newton result (s.evals is fresh: the
// last iteration assembled at s.x and stopped).
func (s *dcSystem) checked() bool {
	ok, _, _, _ := s.kclCheck(true)
	return ok
}

func (s *dcSystem) result(iters int, method string) OperatingPoint {
	op := OperatingPoint{
		V:          make([]float64, s.nn+1),
		Branch:     make([]float64, s.nb),
		Source:     make([]float64, s.nb),
		Iterations: iters,
		Method:     method,
	}
	copy(op.V[1:], s.x[:s.nn])
	copy(op.Branch, s.x[s.nn:s.nn+s.nb])
	for k := range op.Source {
		op.Source[k] = s.sourceValue(k)
	}
	return op
}

// KCL returns the current imbalance at every node (index = node, entry 0
// unused) at op, and the sum of current magnitudes there, from the element
// equations alone (no gmin). Tests use it to check a solution.
func (c *Circuit) KCL(op OperatingPoint) (imbalance, magnitude []float64) {
	n := len(c.names)
	imbalance = make([]float64, n)
	magnitude = make([]float64, n)
	add := func(node Node, i float64) {
		imbalance[node] += i
		magnitude[node] += math.Abs(i)
	}
	v := func(node Node) float64 { return op.V[node] }
	for _, r := range c.Resistors {
		if math.IsInf(r.R, 1) || r.ACOnly {
			continue
		}
		i := (v(r.A) - v(r.B)) / r.R
		add(r.A, i)
		add(r.B, -i)
	}
	for _, is := range c.ISources {
		add(is.A, is.I)
		add(is.B, -is.I)
	}
	for k, vs := range c.VSources {
		add(vs.P, op.Branch[k])
		add(vs.N, -op.Branch[k])
	}
	for _, m := range c.FETs {
		e := m.Dev.Current(v(m.D), v(m.G), v(m.S), v(m.B))
		add(m.D, e.ID)
		add(m.S, -e.ID)
	}
	return imbalance, magnitude
}
