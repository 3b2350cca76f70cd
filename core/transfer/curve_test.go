package transfer

import (
	"errors"
	"math"
	"testing"

	"stagewright/core/circuit"
	"stagewright/core/design"
)

// testDesigns are invented demo designs covering every stage, load,
// polarity and bias mode.
var testDesigns = []struct {
	name, frag string
	cs         bool // common source: vout falls as vin rises, for both polarities
}{
	{"cs r n", "v=1&stage=cs&pol=n&w=20u&l=0.5u&bias=id&id=100u&load=r&rd=10k", true},
	{"cs r p", "v=1&stage=cs&pol=p&bias=id&id=100u&load=r&rd=8k", true},
	{"cs r degenerated", "v=1&stage=cs&pol=n&bias=id&id=100u&load=r&rd=8k&rs=1k", true},
	{"cs active n", "v=1&stage=cs&load=active", true},
	{"cs active p", "v=1&stage=cs&pol=p&load=active", true},
	{"cs diode", "v=1&stage=cs&load=diode", true},
	{"cs vin bias d65", "v=1&proc=d65&stage=cs&bias=vin&vin=0.45&load=r&rd=5k", true},
	{"cs gmid", "v=1&stage=cs&bias=gmid&gmid=15&load=r&rd=10k", true},
	{"cs rl", "v=1&stage=cs&load=r&rd=10k&rl=20k", true},
	{"cg r", "v=1&stage=cg", false},
	{"cg active p", "v=1&stage=cg&pol=p&load=active", false},
	{"sf r", "v=1&stage=sf", false},
	{"sf active", "v=1&stage=sf&load=active", false},
}

func decode(t testing.TB, frag string) design.Design {
	t.Helper()
	d, err := design.Decode(frag)
	if err != nil {
		t.Fatalf("%s: %v", frag, err)
	}
	return d
}

func finite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }

// TestCurveKCL re-solves every point of the walk and checks Kirchhoff's
// current law with the element equations alone (circuit.KCL), and that the
// curve holds only finite numbers.
func TestCurveKCL(t *testing.T) {
	for _, c := range testDesigns {
		t.Run(c.name, func(t *testing.T) {
			tr0, err := newTracer(decode(t, c.frag), false)
			if err != nil {
				t.Fatal(err)
			}
			vin, at := grid(tr0.vdd, DefaultPoints, tr0.vinOp)
			ops, err := tr0.walk(vin, at, tr0.op.V)
			if err != nil {
				t.Fatal(err)
			}
			for i, op := range ops {
				imb, mag := tr0.b.C.KCL(op)
				for n := 1; n < len(imb); n++ {
					// The solver's own test: 1e-9 of the current magnitudes
					// at the node, plus gmin (1e-12 S) times the node
					// voltage that KCL leaves out, plus a 1e-15 A floor.
					tol := 1e-9*mag[n] + 1e-12*math.Abs(op.V[n]) + 1e-15
					if math.Abs(imb[n]) > tol {
						t.Fatalf("point %d (vin %.4g V), node %s: KCL imbalance %.3g A > %.3g A", i, vin[i], tr0.b.C.NodeName(circuit.Node(n)), imb[n], tol)
					}
				}
			}
			tr, err := Curve(decode(t, c.frag), 0)
			if err != nil {
				t.Fatal(err)
			}
			for i := range tr.Vin {
				if !finite(tr.Vin[i]) || !finite(tr.Vout[i]) || !finite(tr.Gain[i]) || !finite(tr.Margin1[i]) {
					t.Fatalf("point %d not finite: %g %g %g %g", i, tr.Vin[i], tr.Vout[i], tr.Gain[i], tr.Margin1[i])
				}
			}
			for _, v := range []float64{tr.InLo, tr.InHi, tr.OutLo, tr.OutHi, tr.Swing} {
				if !finite(v) {
					t.Fatalf("summary not finite: %+v", tr)
				}
			}
			if !(tr.InLo <= tr.Vin[tr.OpIndex] && tr.Vin[tr.OpIndex] <= tr.InHi && tr.OutLo <= tr.OutHi && tr.Swing >= 0) {
				t.Errorf("range does not hold the operating point: in %g … %g (op %g), out %g … %g", tr.InLo, tr.InHi, tr.Vin[tr.OpIndex], tr.OutLo, tr.OutHi)
			}
		})
	}
}

// TestCurveGain: the gain at the operating point equals Evaluate's midband
// gain (the same linearization, at an operating point re-solved in the
// frozen circuit: the solver's 1e-9 tolerance moves it far less than
// 1e-6), and it is the slope of the solved DC transfer (the definition of
// the derivative, central difference at ±0.1 mV).
func TestCurveGain(t *testing.T) {
	for _, c := range testDesigns {
		t.Run(c.name, func(t *testing.T) {
			d := decode(t, c.frag)
			tr, err := Curve(d, 0)
			if err != nil {
				t.Fatal(err)
			}
			res := design.Evaluate(d)
			if !res.OK {
				t.Fatalf("Evaluate: %+v", res.Error)
			}
			want := float64(res.Midband.Gain)
			if got := tr.Gain[tr.OpIndex]; math.Abs(got-want) > 1e-6*math.Abs(want) {
				t.Errorf("gain at the operating point %.10g, Evaluate %.10g", got, want)
			}
			if !math.IsInf(d.RL, 1) {
				return // rl is AC-coupled: the DC slope is the gain without it
			}
			tc, err := newTracer(d, false)
			if err != nil {
				t.Fatal(err)
			}
			const h = 1e-4
			up, err := tc.solve(tc.vinOp+h, tc.op.V)
			if err != nil {
				t.Fatal(err)
			}
			down, err := tc.solve(tc.vinOp-h, tc.op.V)
			if err != nil {
				t.Fatal(err)
			}
			slope := (tc.out(&up) - tc.out(&down)) / (2 * h)
			// Truncation |a3/a1|·h² ≤ 1e-5 for these stages; rounding
			// 1e-12 V / 1e-4 V = 1e-8. 1e-4 relative covers both.
			if math.Abs(slope-want) > 1e-4*math.Abs(want) {
				t.Errorf("slope of the DC transfer %.8g, linearized gain %.8g", slope, want)
			}
		})
	}
}

// TestCurveCSMonotonic: the output of a common-source stage falls as its
// input rises (either polarity; common practice).
func TestCurveCSMonotonic(t *testing.T) {
	for _, c := range testDesigns {
		if !c.cs {
			continue
		}
		tr, err := Curve(decode(t, c.frag), 0)
		if err != nil {
			t.Fatal(c.name, err)
		}
		for i := 1; i < len(tr.Vout); i++ {
			// 1e-9 V: the solver's settling tolerance.
			if tr.Vout[i] > tr.Vout[i-1]+1e-9 {
				t.Errorf("%s: vout rises from %.9g to %.9g V between vin %.4g and %.4g V", c.name, tr.Vout[i-1], tr.Vout[i], tr.Vin[i-1], tr.Vin[i])
				break
			}
		}
	}
}

// TestCurveEdges: each end of the usable range sits where its limit says:
// M1's (M2's) Report margin crosses 0 there, or the gain is 10 % off its
// operating-point value; the sampled margins change sign across it.
func TestCurveEdges(t *testing.T) {
	seen := map[string]bool{}
	for _, c := range testDesigns {
		d := decode(t, c.frag)
		tr, err := Curve(d, 0)
		if err != nil {
			t.Fatal(c.name, err)
		}
		tc, err := newTracer(d, false)
		if err != nil {
			t.Fatal(err)
		}
		g0 := tr.Gain[tr.OpIndex]
		for _, e := range []struct {
			in    float64
			limit string
			dir   int
		}{{tr.InLo, tr.LimitLo, -1}, {tr.InHi, tr.LimitHi, +1}} {
			seen[e.limit] = true
			op, err := tc.solve(e.in, tc.op.V)
			if err != nil {
				t.Fatal(err)
			}
			m1, m2, _ := tc.reports(&op)
			g, err := tc.gain(op)
			if err != nil {
				t.Fatal(err)
			}
			// Located to 1 nV of input; the margins move at most a few
			// hundred times faster (the gain), so 1e-6 V is ample.
			switch e.limit {
			case LimitM1:
				if math.Abs(m1.Margin) > 1e-6 {
					t.Errorf("%s: M1 margin at the edge %.4g V is %.3g V, want 0", c.name, e.in, m1.Margin)
				}
				margins := tr.Margin1
				checkSignChange(t, c.name, tr, margins, e.in, e.dir)
			case LimitM2:
				if math.Abs(m2.Margin) > 1e-6 {
					t.Errorf("%s: M2 margin at the edge %.4g V is %.3g V, want 0", c.name, e.in, m2.Margin)
				}
				checkSignChange(t, c.name, tr, tr.Margin2, e.in, e.dir)
			case LimitGainFall, LimitGainRise:
				if r := math.Abs(g-g0) / math.Abs(g0); math.Abs(r-GainTolerance) > 1e-4 {
					t.Errorf("%s: gain at the edge %.4g V is %.4g, %.4g off the operating point's %.4g, want %g", c.name, e.in, g, r, g0, GainTolerance)
				}
				if (e.limit == LimitGainFall) != (math.Abs(g) < math.Abs(g0)) {
					t.Errorf("%s: limit %q but gain %.4g vs %.4g", c.name, e.limit, g, g0)
				}
			case LimitSupply:
				if e.in != 0 && e.in != tc.vdd {
					t.Errorf("%s: limit supply at %.4g V, not a rail", c.name, e.in)
				}
			default:
				t.Errorf("%s: unknown limit %q", c.name, e.limit)
			}
			// Inside the range every condition holds.
			if m1.Margin < -1e-6 || (tr.Margin2 != nil && m2.Margin < -1e-6) || math.Abs(g-g0) > (GainTolerance+1e-4)*math.Abs(g0) {
				t.Errorf("%s: a condition fails at the edge %.4g V: margins %.3g %.3g, gain %.4g (op %.4g)", c.name, e.in, m1.Margin, m2.Margin, g, g0)
			}
		}
	}
	for _, l := range []string{LimitM1, LimitM2, LimitGainFall, LimitGainRise, LimitSupply} {
		if !seen[l] {
			t.Errorf("no test design ends at %q", l)
		}
	}
}

// checkSignChange: the sampled margin is ≥ 0 at the last point inside the
// range and < 0 at the first one beyond the edge.
func checkSignChange(t *testing.T, name string, tr Trace, m []float64, edge float64, dir int) {
	t.Helper()
	inside, beyond := -1, -1
	for i, v := range tr.Vin {
		if dir > 0 && v <= edge || dir < 0 && v >= edge {
			if inside < 0 || dir > 0 {
				inside = i
			}
		}
		if dir > 0 && v > edge && beyond < 0 {
			beyond = i
		}
		if dir < 0 && v < edge {
			beyond = i
		}
	}
	if dir < 0 {
		inside = -1
		for i, v := range tr.Vin {
			if v >= edge {
				inside = i
				break
			}
		}
	}
	if inside < 0 || beyond < 0 {
		t.Errorf("%s: edge %.4g V has no samples on both sides", name, edge)
		return
	}
	if m[inside] < 0 || m[beyond] >= 0 {
		t.Errorf("%s: margins %.3g (vin %.4g) and %.3g (vin %.4g) do not change sign across the edge %.4g V", name, m[inside], tr.Vin[inside], m[beyond], tr.Vin[beyond], edge)
	}
}

// TestCurveDirection: the same levels solved walking only upwards from 0 V
// and only downwards from VDD agree to the solver's tolerance. Newton
// stops after a step below 1e-9 V + 1e-6 of the node voltage, and converges
// quadratically, so 1e-7 V is a safe bound for what remains.
func TestCurveDirection(t *testing.T) {
	for _, c := range testDesigns {
		t.Run(c.name, func(t *testing.T) {
			tc, err := newTracer(decode(t, c.frag), false)
			if err != nil {
				t.Fatal(err)
			}
			vin, at := grid(tc.vdd, DefaultPoints, tc.vinOp)
			up, err := tc.walk(vin, 0, tc.op.V)
			if err != nil {
				t.Fatal(err)
			}
			down, err := tc.walk(vin, len(vin)-1, tc.op.V)
			if err != nil {
				t.Fatal(err)
			}
			out := tc.b.Nodes["out"]
			worst := 0.0
			for i := range vin {
				for n := range up[i].V {
					worst = math.Max(worst, math.Abs(up[i].V[n]-down[i].V[n]))
				}
			}
			if worst > 1e-7 {
				t.Errorf("upward and downward walks differ by %.3g V", worst)
			}
			if d := math.Abs(up[at].V[out] - tc.op.V[out]); d > 1e-7 {
				t.Errorf("the walk misses the operating point's output by %.3g V", d)
			}
		})
	}
}

func TestCurveRunsAndGrid(t *testing.T) {
	known := map[string]bool{"cutoff": true, "subthreshold": true, "triode": true, "saturation": true}
	for _, points := range []int{2, 3, 50, 201} {
		for _, c := range testDesigns {
			tr, err := Curve(decode(t, c.frag), points)
			if err != nil {
				t.Fatal(c.name, err)
			}
			// The uniform grid (and the operating point) is kept; the
			// refinement adds at most RefineFactor·points levels in all.
			if n := len(tr.Vin); n < points || n > RefineFactor*points+1 {
				t.Fatalf("%s: %d points for %d asked", c.name, n, points)
			}
			vdd := tr.Vin[len(tr.Vin)-1]
			for k, j := 0, 0; k < points; k++ {
				v := vdd * float64(k) / float64(points-1) // the grid level k, as grid computes it
				for j < len(tr.Vin) && tr.Vin[j] < v-1e-6*vdd/float64(points-1) {
					j++
				}
				// The operating point replaces a level within a millionth of the spacing.
				if j == len(tr.Vin) || math.Abs(tr.Vin[j]-v) > 1e-6*vdd/float64(points-1) {
					t.Fatalf("%s: the grid level %g V (%d of %d) is missing from the refined curve", c.name, v, k, points)
				}
			}
			if tr.Vin[0] != 0 && tr.OpIndex != 0 || tr.Vin[len(tr.Vin)-1] < tr.Vin[tr.OpIndex] {
				t.Errorf("%s: grid does not span 0 … VDD: %g … %g", c.name, tr.Vin[0], tr.Vin[len(tr.Vin)-1])
			}
			for i := 1; i < len(tr.Vin); i++ {
				if !(tr.Vin[i] > tr.Vin[i-1]) {
					t.Fatalf("%s: levels not rising at %d: %g, %g", c.name, i, tr.Vin[i-1], tr.Vin[i])
				}
			}
			next := 0
			for _, r := range tr.Runs {
				if r.From != next || r.To < r.From {
					t.Fatalf("%s: runs not contiguous: %+v", c.name, tr.Runs)
				}
				for i := r.From; i <= r.To; i++ {
					if tr.Region1[i] != r.Region1 || tr.Region2[i] != r.Region2 {
						t.Fatalf("%s: point %d (%s, %s) in run %+v", c.name, i, tr.Region1[i], tr.Region2[i], r)
					}
				}
				next = r.To + 1
				if !known[r.Region1] || !(known[r.Region2] || r.Region2 == NoDevice) {
					t.Errorf("%s: unknown region in %+v", c.name, r)
				}
			}
			if next != len(tr.Vin) {
				t.Errorf("%s: runs end at %d of %d points", c.name, next, len(tr.Vin))
			}
		}
	}
}

func TestCurveErrors(t *testing.T) {
	good := decode(t, testDesigns[0].frag)
	infeasible := decode(t, "v=1&stage=cs&bias=id&id=10m&load=r&rd=10k")
	broken := good
	broken.W = -1
	for _, c := range []struct {
		name   string
		d      design.Design
		points int
		key    string
	}{
		{"one point", good, 1, "points"},
		{"negative points", good, -5, "points"},
		{"too many points", good, MaxPoints + 1, "points"},
		{"no operating point", infeasible, 0, "rd"},
		{"invalid design", broken, 0, "w"},
	} {
		_, err := Curve(c.d, c.points)
		var e *Error
		if !errors.As(err, &e) || e.Key != c.key || e.Message == "" {
			t.Errorf("%s: error %v, want one naming %q", c.name, err, c.key)
		}
	}
}
