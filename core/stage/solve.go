package stage

import (
	"errors"
	"fmt"
	"math"
	"strings"

	"stagewright/core/circuit"
	"stagewright/core/device"
	"stagewright/core/units"
)

// Solution is a biased stage: the circuit, its DC operating point and the
// device reports at that point.
type Solution struct {
	*Built
	OP         circuit.OperatingPoint
	Iterations int     // Newton iterations, all solves included (a gm/ID search runs several)
	W          float64 // M1 width as used (solved in gm/ID mode)
	Warnings   []string

	reports  [2]device.Report // M1's and M2's, once computed
	reported [2]bool
}

// Node returns the DC voltage of a named node, and false if the stage has no such node.
func (s *Solution) Node(name string) (float64, bool) {
	n, ok := s.Nodes[name]
	if !ok {
		return 0, false
	}
	return s.OP.V[n], true
}

// Report is M1's (i = 1) or M2's (i = 2) operating-point report. It is
// computed once and kept.
func (s *Solution) Report(i int) device.Report {
	k := 0
	m := s.C.FETs[s.M1]
	if i == 2 {
		k, m = 1, s.C.FETs[s.M2]
	}
	if !s.reported[k] {
		v := s.OP.V
		s.reports[k] = m.Dev.Report(v[m.D], v[m.G], v[m.S], v[m.B])
		s.reported[k] = true
	}
	return s.reports[k]
}

// SupplyCurrent is the current the VDD source delivers, A.
func (s *Solution) SupplyCurrent() float64 { return -s.OP.Branch[s.Supply] }

func eng(v float64, unit string) string { return units.Engineering(v, 3, unit) }

// Solve biases the stage: it checks that the requested bias can exist at
// all, solves the operating point, and for gm/ID mode searches W.
func Solve(spec Spec) (*Solution, error) {
	if err := spec.check(); err != nil {
		return nil, err
	}
	if err := feasible(&spec); err != nil {
		return nil, err
	}
	if spec.Bias == ByGmID {
		return solveGmID(spec, nil)
	}
	return solveOnce(spec, nil)
}

// SolveFrom is Solve with a warm start: warm holds the node voltages of a
// neighbouring solution of the same stage layout (as the previous slider
// position gives), indexed like Solution.OP.V. A warm start of the wrong
// length is ignored. The answer is the same as Solve's; it usually takes
// fewer Newton iterations.
func SolveFrom(spec Spec, warm []float64) (*Solution, error) {
	if err := spec.check(); err != nil {
		return nil, err
	}
	if err := feasible(&spec); err != nil {
		return nil, err
	}
	if spec.Bias == ByGmID {
		return solveGmID(spec, warm)
	}
	sol, err := solveOnce(spec, warm)
	if err != nil && warm != nil {
		return solveOnce(spec, nil) // a warm start that misleads Newton is dropped
	}
	return sol, err
}

// feasible catches requests that no operating point can meet, with the
// reason in the user's terms.
func feasible(s *Spec) error {
	if s.Bias == ByVin {
		return nil
	}
	if s.Load == Resistor {
		r, key, name := s.RD, "rd", "RD"
		if s.Kind == SF {
			r, key, name = s.RS, "rs", "RS"
		}
		if drop := s.ID * r; drop >= s.VDD {
			return errorf(key, "no operating point: M1 cannot carry %s from a %s supply with %s = %s (the resistor alone would drop %s)",
				eng(s.ID, "A"), eng(s.VDD, "V"), name, eng(r, "Ω"), eng(drop, "V"))
		}
	}
	if s.Kind == CS && s.RS > 0 {
		if drop := s.ID * s.RS; drop >= s.VDD {
			return errorf("rs", "no operating point: M1 cannot carry %s from a %s supply with RS = %s (RS alone would drop %s)",
				eng(s.ID, "A"), eng(s.VDD, "V"), eng(s.RS, "Ω"), eng(drop, "V"))
		}
	}
	if (s.Load == Active) && s.Kind != SF && (s.VOut <= 0 || s.VOut >= s.VDD) {
		return errorf("vout", "the output level vout = %s must lie inside the supply (0 … %s)", eng(s.VOut, "V"), eng(s.VDD, "V"))
	}
	return nil
}

func solveOnce(spec Spec, warm []float64) (*Solution, error) {
	b, err := Build(spec)
	if err != nil {
		return nil, err
	}
	guess := b.Guess
	if warm != nil && len(warm) == b.C.NodeCount() {
		guess = circuit.Guess{}
		for i, v := range warm {
			guess[circuit.Node(i)] = v
		}
	}
	// Newton–Raphson and its continuations first; when they fail, the
	// causes that show no operating point can exist (named in the user's
	// terms); only then the bracketed solve, which cannot miss a solution
	// of the circuits it applies to but costs more.
	op, err := b.C.SolveDC(guess, circuit.Options{NoBracket: true})
	if err != nil {
		var nc *circuit.NoConvergenceError
		if !errors.As(err, &nc) {
			return nil, err
		}
		if msg, key, ok := diagnose(spec); ok {
			return nil, &Error{Key: key, Message: msg}
		}
		newton := nc.Iterations
		op, err = b.C.SolveBracketed(circuit.Options{})
		if err != nil {
			if !errors.As(err, &nc) {
				return nil, err
			}
			if msg, key, ok := diagnoseActiveLoad(spec); ok {
				return nil, &Error{Key: key, Message: msg}
			}
			return nil, solverFailure(spec, b, nc, newton)
		}
		op.Iterations = newton
	}
	sol := &Solution{Built: b, OP: op, Iterations: op.Iterations, W: spec.W}
	if err := sol.checkServos(); err != nil {
		return nil, err
	}
	sol.warn()
	return sol, nil
}

// diagnose explains why a bias by current found no solution, in the
// user's terms: it solves the stage with every bias voltage at the rail
// that drives the most current and compares that current with the target.
func diagnose(s Spec) (msg, key string, ok bool) {
	if s.Bias == ByVin {
		return "", "", false
	}
	if s.Kind == SF && s.Load == Active {
		return diagnoseFollowerSink(s)
	}
	p := s
	p.Bias = ByVin
	high := s.Kind != CG // the gate of cs/sf high, the source of a cg low (NMOS)
	if s.Pol == device.PMOS {
		high = !high
	}
	p.Vin = 0
	if high {
		p.Vin = s.VDD
	}
	p.LoadVB = s.VDD
	b, err := Build(p)
	if err != nil {
		return "", "", false
	}
	op, err := b.C.SolveDC(b.Guess, circuit.Options{})
	if err != nil {
		return "", "", false
	}
	v := op.V
	m := b.C.FETs[b.M1]
	most := m.Dev.Report(v[m.D], v[m.G], v[m.S], v[m.B]).ID
	if most < s.ID {
		return fmt.Sprintf("no operating point: M1 can carry at most %s in this %s stage with its bias at the supply rail, less than the %s asked; make W/L larger or the current smaller",
			eng(most, "A"), s.Kind, eng(s.ID, "A")), "id", true
	}
	return "", "", false
}

// diagnoseFollowerSink covers the source follower with a current sink,
// whose input level stays as given while the sink's gate is solved: M1's
// current falls as the output rises, so it is largest with the output at
// M1's source-side rail; if that is short of the target, no output level
// serves. Otherwise M1 carries the target at one output level, and the
// sink, whose current rises with its gate drive, must carry it there with
// its gate at the rail.
func diagnoseFollowerSink(s Spec) (msg, key string, ok bool) {
	dev1, err := device.New(s.Pol, s.Process.Params(s.Pol), s.Process.TNom, s.W, s.L, s.TempK)
	if err != nil {
		return "", "", false
	}
	dev2, err := device.New(s.Pol, s.Process.Params(s.Pol), s.Process.TNom, s.LoadW, s.LoadL, s.TempK)
	if err != nil {
		return "", "", false
	}
	near, far, gateOn := 0.0, s.VDD, s.VDD // rails for an NMOS follower
	if s.Pol == device.PMOS {
		near, far, gateOn = s.VDD, 0, 0
	}
	m1 := func(out float64) float64 { return math.Abs(dev1.Current(far, s.Vin, out, near).ID) }
	if most := m1(near); most < s.ID {
		move := "raise vin"
		if s.Pol == device.PMOS {
			move = "lower vin"
		}
		return fmt.Sprintf("no operating point: M1, with its gate at vin = %s, can carry at most %s in this sf stage even with the output at the rail, less than the %s asked; %s, make W/L larger or the current smaller",
			eng(s.Vin, "V"), eng(most, "A"), eng(s.ID, "A"), move), "vin", true
	}
	// The output level at which M1 carries the target, by bisection:
	// near carries at least the target, far nothing.
	a, b := near, far
	for i := 0; i < 200 && a != b; i++ {
		mid := (a + b) / 2
		if mid == a || mid == b {
			break
		}
		if m1(mid) >= s.ID {
			a = mid
		} else {
			b = mid
		}
	}
	out := a
	if sink := math.Abs(dev2.Current(out, gateOn, near, near).ID); sink < s.ID {
		return fmt.Sprintf("no operating point: the current sink M2 can carry at most %s with its gate at the supply rail at the output level %s where M1 carries the %s asked; make the sink wider (lw) or shorter (ll), or the current smaller",
			eng(sink, "A"), eng(out, "V"), eng(s.ID, "A")), "lw", true
	}
	return "", "", false
}

// diagnoseActiveLoad is the named cause for a cs or cg stage with a
// current-source load biased by current, once every solver has failed.
func diagnoseActiveLoad(s Spec) (msg, key string, ok bool) {
	if s.Bias == ByVin || s.Load != Active || s.Kind == SF {
		return "", "", false
	}
	return fmt.Sprintf("no operating point: M1 and its current-source load cannot both carry %s with the output held at %s; move vout or resize the load (lw, ll)",
		eng(s.ID, "A"), eng(s.VOut, "V")), "vout", true
}

func biasKey(s Spec) string {
	if s.Bias == ByVin {
		return "vin"
	}
	return "id"
}

// solverFailure is the error of a stage whose operating point no method
// found, though nothing shows that none exists: it says that the solver
// failed and what about the design makes it hard.
func solverFailure(s Spec, b *Built, nc *circuit.NoConvergenceError, newton int) *Error {
	what := "the bias voltages"
	if s.Bias == ByVin {
		what = "the operating point"
	}
	msg := fmt.Sprintf("the DC solver failed: it found %s of this %s stage neither by Newton–Raphson (%d iterations with gmin and source stepping) nor by its bracketed fallback; this is a limit of the solver, not a finding about the design",
		what, s.Kind, newton)
	if hard := hardness(s, b); hard != "" {
		msg += ". What makes it hard: " + hard
	}
	return &Error{Key: biasKey(s), Message: msg + " (" + nc.Error() + ")", SolverFailed: true}
}

// hardness names what makes a stage hard to solve: the two elements of the
// chain compared by the current each would carry with the output at
// mid-supply (gates at their given or starting levels), how little the
// weaker one carries, and an extreme temperature.
func hardness(s Spec, b *Built) string {
	c := b.C
	v := make([]float64, c.NodeCount())
	for _, vs := range c.VSources {
		v[vs.P] = vs.V
	}
	near := 0.0
	if s.Pol == device.PMOS {
		near = s.VDD
	}
	out := b.Nodes["out"]
	v[out] = s.VDD / 2
	if n, ok := b.Nodes["src"]; ok {
		v[n] = near
	}
	in := b.Nodes["in"]
	v[in] = s.Vin
	fetCurrent := func(i int) float64 {
		m := c.FETs[i]
		return math.Abs(m.Dev.Current(v[m.D], v[m.G], v[m.S], v[m.B]).ID)
	}
	i1, name2 := fetCurrent(b.M1), "M2"
	var i2 float64
	if b.M2 >= 0 {
		i2 = fetCurrent(b.M2)
	} else {
		for _, r := range c.Resistors {
			if r.Name == "RD" || (r.Name == "RS" && s.Kind == SF) {
				i2, name2 = math.Abs(v[r.A]-v[r.B])/r.R, r.Name
			}
		}
	}
	var parts []string
	lo, hi := math.Min(i1, i2), math.Max(i1, i2)
	if lo > 0 && hi/lo >= 1e3 {
		strong, weak := "M1", name2
		if i2 > i1 {
			strong, weak = name2, "M1"
		}
		parts = append(parts, fmt.Sprintf("%s is %.0f decades stronger than %s (%s against %s with the output at mid-supply), so the output sits within millivolts of a rail",
			strong, math.Log10(hi/lo), weak, eng(hi, "A"), eng(lo, "A")))
	} else if lo == 0 && hi > 0 {
		parts = append(parts, fmt.Sprintf("the weaker of M1 and %s carries no current at all with the output at mid-supply", name2))
	}
	if lo > 0 && lo < 1e-12 {
		parts = append(parts, fmt.Sprintf("the weaker carries only %s, femtoamps to picoamps", eng(lo, "A")))
	}
	if t := s.TempK - 273.15; t < -20 || t > 100 {
		parts = append(parts, fmt.Sprintf("the temperature is %.0f °C", t))
	}
	return strings.Join(parts, "; ")
}

// checkServos rejects solutions whose solved bias voltages fall outside
// the supply: the request is met only by a bias no circuit could supply.
func (s *Solution) checkServos() error {
	const slack = 1e-6 // V: solved values this close to a rail count as inside
	for _, sv := range s.C.Servos {
		v := s.OP.Source[sv.Source]
		if v >= sv.Lo-slack && v <= sv.Hi+slack {
			continue
		}
		what, key := "the input level", "id"
		switch sv.Source {
		case s.BiasSrc:
			what = "the load transistor's gate"
			if s.Spec.Kind != SF {
				key = "vout"
			}
		case s.Input:
			if s.Spec.Kind == CG {
				what = "the source-side input level"
			} else {
				what = "M1's gate"
			}
		}
		goal := "to carry " + eng(s.Spec.ID, "A")
		if sv.Kind == circuit.ServoVoltage {
			goal = "to hold the output at " + eng(sv.Value, "V")
		}
		return &Error{Key: key, Message: fmt.Sprintf("no operating point: %s would have to sit at %s, outside the 0 … %s supply, %s; change W/L, the current or the load",
			what, eng(v, "V"), eng(s.Spec.VDD, "V"), goal)}
	}
	return nil
}

// warn lists conditions a designer should see: a device out of saturation,
// a nearly-off device.
func (s *Solution) warn() {
	check := func(name string, r device.Report) {
		switch r.Region {
		case device.Triode:
			s.Warnings = append(s.Warnings, fmt.Sprintf("%s is in triode: |VDS| − VDsat = %s", name, eng(r.Margin, "V")))
		case device.Cutoff:
			s.Warnings = append(s.Warnings, fmt.Sprintf("%s is practically off (inversion coefficient %.2g)", name, r.IC))
		}
	}
	check("M1", s.Report(1))
	if s.M2 >= 0 {
		check("M2", s.Report(2))
	}
}

// solveGmID finds W at the given L such that M1 runs at the target gm/ID
// with the target current. gm/ID rises monotonically as W grows (the
// inversion coefficient falls), so a bracketed secant search on log W
// converges in a few solves; the EKV saturation relation gives the start.
func solveGmID(spec Spec, warmStart []float64) (*Solution, error) {
	pr := spec.Process
	wmin, wmax := pr.WMin, pr.WMax
	target := spec.GmID
	// Start: the EKV relation gm·n·UT/ID = 2/(1+√(1+4·IC)) at n ≈ 1.3.
	probe, err := device.New(spec.Pol, pr.ParamsAt(spec.Pol, spec.L), pr.TNom, spec.W, spec.L, spec.TempK)
	if err != nil {
		return nil, errorf("w", "transistor M1: %v", err)
	}
	ut := device.ThermalVoltage(spec.TempK)
	rep0 := probe.Report(0, 0, 0, 0)
	n0 := 1.3
	if limit := 1 / (n0 * ut); target >= 0.98*limit {
		return nil, errorf("gmid", "gm/ID = %.3g S/A is at or above the weak-inversion limit 1/(n·UT) ≈ %.3g S/A of this device", target, limit)
	}
	x := 2/(target*n0*ut) - 1
	ic := (x*x - 1) / 4
	if !(ic > 0) {
		ic = 1
	}
	// Ispec scales with W: Ispec(W) = Ispec0·W/W0, so W = ID/(IC·Ispec0/W0).
	w0 := spec.W
	ispecPerW := rep0.Ispec / w0
	w := spec.ID / (ic * ispecPerW)
	w = math.Min(math.Max(w, wmin), wmax)

	type point struct{ lw, g float64 }
	var lo, hi *point
	var best *Solution
	warm := warmStart
	total := 0
	eval := func(w float64) (float64, *Solution, error) {
		s := spec
		s.W = w
		s.Bias = ByID
		sol, err := solveOnce(s, warm)
		if err != nil {
			return 0, nil, err
		}
		total += sol.Iterations
		warm = sol.OP.V
		return sol.Report(1).GmID, sol, nil
	}
	var firstErr error
	for it := 0; it < 40; it++ {
		g, sol, err := eval(w)
		if err != nil && best == nil && w < wmax {
			// No width has worked yet: the start may be too narrow to carry
			// the current at all. Widen it; if no width up to the largest
			// works, the first failure is the one to report.
			if firstErr == nil {
				firstErr = err
			}
			w = math.Min(wmax, 4*w)
			continue
		}
		if err != nil && best != nil && w < best.Spec.W {
			// Narrower than a width that works and unable to carry the
			// current: far too narrow, so its gm/ID counts as below target.
			lo = &point{math.Log(w), 0}
			next := (lo.lw + math.Log(best.Spec.W)) / 2
			if hi != nil {
				next = (lo.lw + hi.lw) / 2
			}
			w = math.Exp(next)
			continue
		}
		if err != nil {
			if firstErr != nil {
				return nil, firstErr
			}
			return nil, err
		}
		best = sol
		if math.Abs(g-target) <= 1e-6*target {
			break
		}
		p := &point{math.Log(w), g}
		if g < target {
			lo = p
		} else {
			hi = p
		}
		var next float64
		switch {
		case lo != nil && hi != nil:
			// Secant inside the bracket, bisection if it leaves it.
			next = lo.lw + (target-lo.g)*(hi.lw-lo.lw)/(hi.g-lo.g)
			if !(next > math.Min(lo.lw, hi.lw) && next < math.Max(lo.lw, hi.lw)) || it%4 == 3 {
				next = (lo.lw + hi.lw) / 2
			}
		case lo != nil:
			if w >= wmax {
				return nil, errorf("gmid", "gm/ID = %.3g S/A needs M1 wider than the process allows (%s at %s gives only %.3g S/A)", target, eng(wmax, "m"), eng(spec.ID, "A"), g)
			}
			next = math.Min(math.Log(wmax), lo.lw+math.Log(4))
		default:
			if w <= wmin {
				return nil, errorf("gmid", "gm/ID = %.3g S/A needs M1 narrower than the process allows (%s at %s gives %.3g S/A)", target, eng(wmin, "m"), eng(spec.ID, "A"), g)
			}
			next = math.Max(math.Log(wmin), hi.lw-math.Log(4))
		}
		w = math.Exp(next)
	}
	best.Iterations = total
	best.W = best.Spec.W
	if g := best.Report(1).GmID; math.Abs(g-target) > 1e-3*target {
		best.Warnings = append(best.Warnings, fmt.Sprintf("gm/ID search stopped at %.4g S/A for a target of %.4g S/A", g, target))
	}
	return best, nil
}
