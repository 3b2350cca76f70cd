package transfer

import (
	"math"
	"slices"

	"stagewright/core/circuit"
	"stagewright/core/design"
)

// DefaultPoints is the number of input levels Curve uses when asked for 0.
const DefaultPoints = 201

// MaxPoints is the most input levels Curve accepts.
const MaxPoints = 10001

// StepFraction is the most, as a fraction of the supply, that the output
// may move between neighbouring levels of a refined curve (1 %). Curve
// bisects every interval of the uniform grid whose output step is larger.
// At 1 % a plot of the output against the full supply (a few hundred pixels
// tall on the page) moves at most two or three pixels per segment, so a
// steep curve is drawn as a curve, not a cliff; and a stage with a gain of
// 100, whose output crosses most of the supply within a few millivolts of
// input, gets several tens of levels inside its usable range.
const StepFraction = 0.01

// RefineFactor bounds the refinement: a refined curve holds at most
// RefineFactor times the uniform grid's levels (plus the operating point);
// when the cap would be passed, the steepest intervals are bisected first.
const RefineFactor = 4

// minRefineStep is the narrowest input interval Curve still bisects, as a
// fraction of the supply (1e-9: 1.8 nV on a 1.8 V supply, the precision to
// which the ends of the range are located). A steeper step is a jump no
// input resolution resolves.
const minRefineStep = 1e-9

// GainTolerance is how far, as a fraction of the operating point's gain,
// the small-signal gain may move before the stage counts as having left
// its operating-point behaviour (10 %).
const GainTolerance = 0.1

// Why the usable range ends at one side (Trace.LimitLo, Trace.LimitHi).
const (
	LimitM1       = "M1 leaves saturation"
	LimitM2       = "M2 leaves saturation"
	LimitGainFall = "gain falls 10 %"
	LimitGainRise = "gain rises 10 %"
	LimitSupply   = "supply"
)

// NoDevice is the region reported for M2 in a stage without a load
// transistor.
const NoDevice = "none"

// Trace is a DC transfer curve. The series are indexed by point, input
// levels rising. Saturation means a margin |VDS| − VDsat ≥ 0, which
// includes saturation in weak inversion (region "subthreshold").
type Trace struct {
	Vin     []float64 // V, input DC level: the gate of a cs/sf, the signal source of a cg
	Vout    []float64 // V, output DC level
	Gain    []float64 // V/V, exact small-signal gain v(out)/v(sig) linearized at each point (rl connected)
	Margin1 []float64 // V, M1's |VDS| − VDsat
	Margin2 []float64 // V, M2's |VDS| − VDsat; nil without a load transistor
	Region1 []string  // M1's region: cutoff, subthreshold, triode, saturation
	Region2 []string  // M2's region, or NoDevice

	OpIndex int // the point that is the design's own operating point

	// The input range around the operating point over which M1 (and M2)
	// stay saturated and the gain stays within GainTolerance of its value
	// at the operating point; the output levels at its ends (OutLo ≤ OutHi)
	// and the swing OutHi − OutLo. The ends are located between the
	// sampled levels to 1 nV by re-solving the circuit.
	InLo, InHi, OutLo, OutHi, Swing float64
	LimitLo, LimitHi                string // why the range ends at InLo and InHi (the Limit constants)

	// The swing around the operating point, in output terms: OutOp is the
	// output's DC level; HeadroomHi is how far the output may rise from it
	// and HeadroomLo how far it may fall before the first transistor of the
	// stage (any of them, M1 or the load) leaves saturation, its margin
	// |VDS| − VDsat crossing 0 (located to 1 nV of input like the range's
	// ends). LimitOutHi and LimitOutLo say which device ends the output's
	// high and low end ("M2 leaves saturation"), or LimitSupply when the
	// input reaches a rail with every device saturated. SwingSym is the
	// symmetric swing, twice the smaller headroom: the peak-to-peak
	// amplitude of a sine centred on the operating point that keeps every
	// device saturated. The gain condition of the usable range plays no part
	// here, so the headrooms may reach beyond OutLo … OutHi.
	OutOp                  float64
	HeadroomHi, HeadroomLo float64
	SwingSym               float64
	LimitOutHi, LimitOutLo string

	Runs []Run // contiguous stretches of the same (M1, M2) regions
}

// Run is a stretch of points From … To (inclusive indices) with the same
// regions of M1 and M2.
type Run struct {
	From, To         int
	Region1, Region2 string
}

// Curve sweeps the input DC level of d across 0 … VDD in points evenly
// spaced steps (0: DefaultPoints), the design's own input level added as
// one more point unless it falls on the grid, with every bias voltage held
// at the design's operating point. Each level is solved by Newton's method
// starting from the neighbouring solution, walking outwards from the
// operating point in both directions. The curve is then refined where it
// is steep: every interval whose output step exceeds StepFraction of the
// supply is bisected, each new level solved from the interpolation of its
// two neighbours' solutions, until no step is larger or the curve holds
// RefineFactor·points levels.
func Curve(d design.Design, points int) (Trace, error) {
	if points == 0 {
		points = DefaultPoints
	}
	if points < 2 || points > MaxPoints {
		return Trace{}, errorf("points", "the number of input levels must lie in 2 … %d, got %d", MaxPoints, points)
	}
	t, err := newTracer(d, false)
	if err != nil {
		return Trace{}, err
	}
	vin, opIndex := grid(t.vdd, points, t.vinOp)
	ops, err := t.walk(vin, opIndex, t.op.V)
	if err != nil {
		return Trace{}, err
	}
	vin, ops, opIndex, err = t.refine(vin, ops, opIndex, RefineFactor*points+1)
	if err != nil {
		return Trace{}, err
	}
	return t.trace(vin, ops, opIndex)
}

// refine bisects every interval of the solved levels vin (solutions ops,
// the operating point at opIndex) whose output step exceeds StepFraction
// of the supply, pass after pass, until none does or the levels number
// limit; a pass that would pass the limit bisects the steepest intervals
// first. Each new level starts Newton from the linear interpolation of its
// neighbours' node voltages, and from the lower neighbour's when that
// fails. It returns the refined levels, solutions and operating-point index.
func (t *tracer) refine(vin []float64, ops []circuit.OperatingPoint, opIndex, limit int) ([]float64, []circuit.OperatingPoint, int, error) {
	maxStep := StepFraction * t.vdd
	minGap := minRefineStep * t.vdd
	out := t.b.Nodes["out"]
	var wide []int
	var warm []float64
	for len(vin) < limit {
		wide = wide[:0]
		for i := 0; i+1 < len(vin); i++ {
			if math.Abs(ops[i+1].V[out]-ops[i].V[out]) > maxStep && vin[i+1]-vin[i] > 2*minGap {
				wide = append(wide, i)
			}
		}
		if len(wide) == 0 {
			break
		}
		if room := limit - len(vin); len(wide) > room {
			step := func(i int) float64 { return math.Abs(ops[i+1].V[out] - ops[i].V[out]) }
			slices.SortStableFunc(wide, func(a, b int) int { return cmpFloat(step(b), step(a)) })
			wide = wide[:room]
			slices.Sort(wide)
		}
		nv := make([]float64, 0, len(vin)+len(wide))
		nops := make([]circuit.OperatingPoint, 0, len(vin)+len(wide))
		at, k := opIndex, 0
		for i := range vin {
			if i == opIndex {
				at = len(nv)
			}
			nv = append(nv, vin[i])
			nops = append(nops, ops[i])
			if k == len(wide) || wide[k] != i {
				continue
			}
			k++
			m := 0.5 * (vin[i] + vin[i+1])
			warm = warm[:0]
			for n := range ops[i].V {
				warm = append(warm, 0.5*(ops[i].V[n]+ops[i+1].V[n]))
			}
			op, err := t.solve(m, warm)
			if err != nil {
				if op, err = t.solve(m, ops[i].V); err != nil {
					return nil, nil, 0, err
				}
			}
			nv = append(nv, m)
			nops = append(nops, op)
		}
		vin, ops, opIndex = nv, nops, at
	}
	return vin, ops, opIndex, nil
}

func cmpFloat(a, b float64) int {
	switch {
	case a < b:
		return -1
	case a > b:
		return 1
	}
	return 0
}

// grid is points levels evenly spaced over 0 … vdd with vop put in: it
// replaces a level closer than a millionth of the spacing, and is inserted
// in order otherwise. It returns the levels and the index of vop.
func grid(vdd float64, points int, vop float64) ([]float64, int) {
	step := vdd / float64(points-1)
	vin := make([]float64, 0, points+1)
	at := -1
	for k := 0; k < points; k++ {
		v := vdd * float64(k) / float64(points-1)
		if at < 0 && math.Abs(v-vop) <= 1e-6*step {
			vin = append(vin, vop)
			at = len(vin) - 1
			continue
		}
		if at < 0 && vop < v {
			vin = append(vin, vop)
			at = len(vin) - 1
		}
		vin = append(vin, v)
	}
	if at < 0 {
		vin = append(vin, vop)
		at = len(vin) - 1
	}
	return vin, at
}

// walk solves every level of vin, starting at index start from the node
// voltages warm and stepping outwards; each solve starts from a linear
// extrapolation of the two previous solutions.
func (t *tracer) walk(vin []float64, start int, warm []float64) ([]circuit.OperatingPoint, error) {
	ops := make([]circuit.OperatingPoint, len(vin))
	var err error
	if ops[start], err = t.solve(vin[start], warm); err != nil {
		return nil, err
	}
	pred := make([]float64, len(warm))
	// predict extrapolates linearly in the input level from the solutions
	// at prev and prev2 (−1 or not yet solved: none) to the level at target, kept within half
	// a supply beyond the rails so that a kink cannot throw the start far.
	predict := func(target, prev, prev2 int) []float64 {
		a := ops[prev].V
		if prev2 < 0 || prev2 >= len(ops) || len(ops[prev2].V) != len(a) || vin[prev] == vin[prev2] {
			return a
		}
		b := ops[prev2].V
		r := (vin[target] - vin[prev]) / (vin[prev] - vin[prev2])
		for i := range pred {
			p := a[i] + r*(a[i]-b[i])
			pred[i] = math.Min(math.Max(p, -0.5*t.vdd), 1.5*t.vdd)
		}
		return pred
	}
	for i := start + 1; i < len(vin); i++ {
		if ops[i], err = t.solve(vin[i], predict(i, i-1, i-2)); err != nil {
			return nil, err
		}
	}
	for i := start - 1; i >= 0; i-- {
		if ops[i], err = t.solve(vin[i], predict(i, i+1, i+2)); err != nil {
			return nil, err
		}
	}
	return ops, nil
}

// conditions are what keeps a point inside the usable range, each ≥ 0
// when it holds: M1's margin, M2's margin, and the room left for the gain.
type conditions [3]float64

const (
	condM1 = iota
	condM2
	condGain
)

// check evaluates the conditions at op; gain0 is the operating point's gain.
func (t *tracer) check(op circuit.OperatingPoint, gain0 float64) (conditions, float64, error) {
	m1, m2, hasM2 := t.reports(&op)
	g, err := t.gain(op)
	if err != nil {
		return conditions{}, 0, err
	}
	c := conditions{m1.Margin, math.Inf(1), GainTolerance*math.Abs(gain0) - math.Abs(g-gain0)}
	if hasM2 {
		c[condM2] = m2.Margin
	}
	return c, g, nil
}

func (c conditions) ok() bool { return c[condM1] >= 0 && c[condM2] >= 0 && c[condGain] >= 0 }

func (t *tracer) trace(vin []float64, ops []circuit.OperatingPoint, opIndex int) (Trace, error) {
	n := len(vin)
	tr := Trace{
		Vin: vin, Vout: make([]float64, n), Gain: make([]float64, n), Margin1: make([]float64, n),
		Region1: make([]string, n), Region2: make([]string, n), OpIndex: opIndex,
	}
	if t.b.M2 >= 0 {
		tr.Margin2 = make([]float64, n)
	}
	conds := make([]conditions, n)
	for i := range ops {
		m1, m2, hasM2 := t.reports(&ops[i])
		tr.Vout[i] = t.out(&ops[i])
		tr.Margin1[i] = m1.Margin
		tr.Region1[i] = m1.Region.String()
		tr.Region2[i] = NoDevice
		if hasM2 {
			tr.Margin2[i] = m2.Margin
			tr.Region2[i] = m2.Region.String()
		}
		g, err := t.gain(ops[i])
		if err != nil {
			return Trace{}, err
		}
		tr.Gain[i] = g
	}
	gain0 := tr.Gain[opIndex]
	for i := range ops {
		conds[i] = conditions{tr.Margin1[i], math.Inf(1), GainTolerance*math.Abs(gain0) - math.Abs(tr.Gain[i]-gain0)}
		if tr.Margin2 != nil {
			conds[i][condM2] = tr.Margin2[i]
		}
	}
	lo, err := t.edge(&tr, ops, conds, gain0, -1)
	if err != nil {
		return Trace{}, err
	}
	hi, err := t.edge(&tr, ops, conds, gain0, +1)
	if err != nil {
		return Trace{}, err
	}
	tr.InLo, tr.LimitLo = lo.in, lo.limit
	tr.InHi, tr.LimitHi = hi.in, hi.limit
	tr.OutLo, tr.OutHi = math.Min(lo.out, hi.out), math.Max(lo.out, hi.out)
	for i := lo.last; i <= hi.last; i++ {
		tr.OutLo = math.Min(tr.OutLo, tr.Vout[i])
		tr.OutHi = math.Max(tr.OutHi, tr.Vout[i])
	}
	tr.Swing = tr.OutHi - tr.OutLo
	if err := t.headroom(&tr, ops); err != nil {
		return Trace{}, err
	}
	tr.Runs = runs(tr.Region1, tr.Region2)
	return tr, nil
}

// worstMargin is the smallest saturation margin |VDS| − VDsat of any
// transistor of the stage at op (V) and that transistor's index.
func (t *tracer) worstMargin(op *circuit.OperatingPoint) (float64, int) {
	worst, at := math.Inf(1), -1
	v := op.V
	for i := range t.b.C.FETs {
		f := &t.b.C.FETs[i]
		if m := f.Dev.Report(v[f.D], v[f.G], v[f.S], v[f.B]).Margin; m < worst {
			worst, at = m, i
		}
	}
	return worst, at
}

// headroom fills the swing around the operating point: in each direction
// of the input it walks the solved levels until a transistor's margin is
// negative, locates where the first one crosses 0 between the last
// saturated level and that one, and takes the output's extremes over the
// saturated stretch.
func (t *tracer) headroom(tr *Trace, ops []circuit.OperatingPoint) error {
	i0 := tr.OpIndex
	tr.OutOp = tr.Vout[i0]
	lo, hi := tr.OutOp, tr.OutOp
	limits := [2]string{}
	outs := [2]float64{}
	if m, k := t.worstMargin(&ops[i0]); m < 0 {
		name := t.b.C.FETs[k].Name + " leaves saturation"
		tr.LimitOutHi, tr.LimitOutLo = name, name
		return nil
	}
	for side, dir := range [2]int{-1, +1} {
		i := i0
		limits[side], outs[side] = LimitSupply, tr.Vout[i0]
		for j := i0 + dir; j >= 0 && j < len(ops); j += dir {
			m, _ := t.worstMargin(&ops[j])
			if m >= 0 {
				i = j
				lo, hi = math.Min(lo, tr.Vout[j]), math.Max(hi, tr.Vout[j])
				continue
			}
			// The first device to leave saturation between levels i and j:
			// of those with a negative margin at j, the one whose crossing
			// lies nearest to i.
			best := math.Inf(1)
			for k := range t.b.C.FETs {
				f := &t.b.C.FETs[k]
				margin := func(op circuit.OperatingPoint) (float64, error) {
					v := op.V
					return f.Dev.Report(v[f.D], v[f.G], v[f.S], v[f.B]).Margin, nil
				}
				fa, _ := margin(ops[i])
				fb, _ := margin(ops[j])
				if fb >= 0 {
					continue
				}
				v, op, err := t.crossing(margin, tr.Vin[i], fa, tr.Vin[j], fb, ops[i].V)
				if err != nil {
					return err
				}
				if d := math.Abs(v - tr.Vin[i]); d < best {
					best = d
					limits[side] = f.Name + " leaves saturation"
					outs[side] = t.out(&op)
				}
			}
			break
		}
		if limits[side] == LimitSupply {
			outs[side] = tr.Vout[i]
		}
	}
	// Which input direction ends the output's high end: the one whose end
	// lies higher (the input's low end for an inverting stage).
	hiSide := 1
	if outs[0] > outs[1] {
		hiSide = 0
	}
	lo, hi = math.Min(lo, math.Min(outs[0], outs[1])), math.Max(hi, math.Max(outs[0], outs[1]))
	tr.HeadroomHi, tr.HeadroomLo = hi-tr.OutOp, tr.OutOp-lo
	tr.LimitOutHi, tr.LimitOutLo = limits[hiSide], limits[1-hiSide]
	tr.SwingSym = 2 * math.Min(tr.HeadroomHi, tr.HeadroomLo)
	return nil
}

// end is one end of the usable range: the input and output levels there,
// why it ends, and the last sampled point inside it.
type end struct {
	in, out float64
	limit   string
	last    int
}

// edge walks from the operating point in direction dir until a condition
// fails, then locates the crossing between the last good and the first
// failing level.
func (t *tracer) edge(tr *Trace, ops []circuit.OperatingPoint, conds []conditions, gain0 float64, dir int) (end, error) {
	i := tr.OpIndex
	if !conds[i].ok() {
		return end{in: tr.Vin[i], out: tr.Vout[i], limit: limitOf(conds[i], tr.Gain[i], gain0), last: i}, nil
	}
	for j := i + dir; j >= 0 && j < len(ops); j += dir {
		if conds[j].ok() {
			i = j
			continue
		}
		best := end{in: tr.Vin[j], last: i}
		for k := range conds[j] {
			if conds[j][k] >= 0 {
				continue
			}
			cond := func(op circuit.OperatingPoint) (float64, error) {
				c, _, err := t.check(op, gain0)
				return c[k], err
			}
			v, op, err := t.crossing(cond, tr.Vin[i], conds[i][k], tr.Vin[j], conds[j][k], ops[i].V)
			if err != nil {
				return end{}, err
			}
			if math.Abs(v-tr.Vin[i]) <= math.Abs(best.in-tr.Vin[i]) {
				g, err := t.gain(op)
				if err != nil {
					return end{}, err
				}
				best.in, best.out = v, t.out(&op)
				best.limit = limitName(k, g, gain0)
			}
		}
		return best, nil
	}
	return end{in: tr.Vin[i], out: tr.Vout[i], limit: LimitSupply, last: i}, nil
}

// crossing finds where the condition cond changes sign between the input
// level a (where it holds, value fa ≥ 0) and b (fb < 0), by the Illinois
// variant of regula falsi, each level solved from warm. It returns the
// level on the holding side within 1 nV of the crossing and the solution
// there.
func (t *tracer) crossing(cond func(circuit.OperatingPoint) (float64, error), a, fa, b, fb float64, warm []float64) (float64, circuit.OperatingPoint, error) {
	opA, err := t.solve(a, warm)
	if err != nil {
		return 0, opA, err
	}
	side := 0
	for it := 0; it < 100 && math.Abs(b-a) > 1e-9; it++ {
		m := (a*fb - b*fa) / (fb - fa)
		if !(m > math.Min(a, b) && m < math.Max(a, b)) {
			m = (a + b) / 2
		}
		op, err := t.solve(m, opA.V)
		if err != nil {
			return 0, op, err
		}
		fm, err := cond(op)
		if err != nil {
			return 0, op, err
		}
		if fm >= 0 {
			a, fa, opA = m, fm, op
			if side == +1 {
				fb /= 2
			}
			side = +1
		} else {
			b, fb = m, fm
			if side == -1 {
				fa /= 2
			}
			side = -1
		}
	}
	return a, opA, nil
}

func limitOf(c conditions, g, gain0 float64) string {
	for k := range c {
		if c[k] < 0 {
			return limitName(k, g, gain0)
		}
	}
	return LimitSupply
}

func limitName(k int, g, gain0 float64) string {
	switch k {
	case condM1:
		return LimitM1
	case condM2:
		return LimitM2
	}
	if math.Abs(g) < math.Abs(gain0) {
		return LimitGainFall
	}
	return LimitGainRise
}

// runs groups consecutive points with the same pair of regions.
func runs(r1, r2 []string) []Run {
	var out []Run
	for i := range r1 {
		if len(out) > 0 {
			last := &out[len(out)-1]
			if last.Region1 == r1[i] && last.Region2 == r2[i] {
				last.To = i
				continue
			}
		}
		out = append(out, Run{From: i, To: i, Region1: r1[i], Region2: r2[i]})
	}
	return out
}
