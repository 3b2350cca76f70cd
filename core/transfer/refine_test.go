package transfer

import (
	"math"
	"testing"

	"stagewright/core/circuit"
)

// highGain is an invented demo stage with a gain near 100: a common-source
// stage with a current-source load, both devices 1 µm long, at 20 µA.
const highGain = "v=2&stage=cs&load=active&l=1u&ll=1u&w=20u&id=20u"

// usableRange locates the usable input range of the levels vin (solutions
// ops, operating point at at) the plain way: every level's conditions (M1's
// and M2's margins, the gain within GainTolerance of the operating point's)
// are evaluated, the walk goes outwards from the operating point to the
// first level where one fails, and the end is put where the failing
// condition's straight line between the two levels crosses 0. It returns
// the input and output levels of both ends.
func usableRange(t *testing.T, tc *tracer, vin []float64, ops []circuit.OperatingPoint, at int) (inLo, inHi, outLo, outHi float64) {
	t.Helper()
	conds := make([][3]float64, len(ops))
	g0, err := tc.gain(ops[at])
	if err != nil {
		t.Fatal(err)
	}
	for i := range ops {
		m1, m2, _ := tc.reports(&ops[i])
		g, err := tc.gain(ops[i])
		if err != nil {
			t.Fatal(err)
		}
		conds[i] = [3]float64{m1.Margin, m2.Margin, GainTolerance*math.Abs(g0) - math.Abs(g-g0)}
	}
	end := func(dir int) (float64, float64) {
		i := at
		for j := at + dir; j >= 0 && j < len(ops); j += dir {
			first := math.Inf(1)
			in, out := vin[j], tc.out(&ops[j])
			for k := range conds[j] {
				if conds[j][k] >= 0 {
					continue
				}
				f := conds[i][k] / (conds[i][k] - conds[j][k]) // where the line crosses 0, from i
				if f < first {
					first = f
					in = vin[i] + f*(vin[j]-vin[i])
					out = tc.out(&ops[i]) + f*(tc.out(&ops[j])-tc.out(&ops[i]))
				}
			}
			if !math.IsInf(first, 1) {
				return in, out
			}
			i = j
		}
		return vin[i], tc.out(&ops[i])
	}
	inLo, oa := end(-1)
	inHi, ob := end(+1)
	return inLo, inHi, math.Min(oa, ob), math.Max(oa, ob)
}

// TestRefinedCurveHighGain: a gain-100 stage's refined curve has at least
// 20 levels inside its usable input range (a uniform 9 mV grid gives it
// one or two), no output step above StepFraction of the supply, and a range
// that agrees within 2 % (the figure) with the one found on a
// uniform grid ten times finer than the default, computed here without the
// refinement or the located ends.
func TestRefinedCurveHighGain(t *testing.T) {
	d := decode(t, highGain)
	tr, err := Curve(d, 0)
	if err != nil {
		t.Fatal(err)
	}
	if g := math.Abs(tr.Gain[tr.OpIndex]); g < 80 || g > 130 {
		t.Fatalf("the test stage's gain is %.4g, not about 100", g)
	}
	inside := 0
	for _, v := range tr.Vin {
		if v >= tr.InLo && v <= tr.InHi {
			inside++
		}
	}
	if inside < 20 {
		t.Errorf("%d levels inside the usable range %.6g … %.6g V, want at least 20", inside, tr.InLo, tr.InHi)
	}
	vdd := tr.Vin[len(tr.Vin)-1]
	if len(tr.Vin) >= RefineFactor*DefaultPoints+1 {
		t.Fatalf("the refinement reached its cap (%d levels)", len(tr.Vin))
	}
	for i := 1; i < len(tr.Vin); i++ {
		if step := math.Abs(tr.Vout[i] - tr.Vout[i-1]); step > StepFraction*vdd {
			t.Errorf("output step %.4g V between %.6g and %.6g V, more than %g of the supply", step, tr.Vin[i-1], tr.Vin[i], StepFraction)
		}
	}

	tc, err := newTracer(d, false)
	if err != nil {
		t.Fatal(err)
	}
	vin, at := grid(tc.vdd, 10*(DefaultPoints-1)+1, tc.vinOp)
	ops, err := tc.walk(vin, at, tc.op.V)
	if err != nil {
		t.Fatal(err)
	}
	inLo, inHi, outLo, outHi := usableRange(t, tc, vin, ops, at)
	want, got := inHi-inLo, tr.InHi-tr.InLo
	if math.Abs(got-want) > 0.02*want {
		t.Errorf("usable input range %.6g V (%.6g … %.6g), fine uniform grid %.6g V (%.6g … %.6g): more than 2 %% apart",
			got, tr.InLo, tr.InHi, want, inLo, inHi)
	}
	if sw := outHi - outLo; math.Abs(tr.Swing-sw) > 0.02*sw {
		t.Errorf("output swing %.6g V, fine uniform grid %.6g V: more than 2 %% apart", tr.Swing, sw)
	}
	t.Logf("gain %.4g: %d levels in all, %d inside the range %.4g mV (fine grid %.4g mV)",
		tr.Gain[tr.OpIndex], len(tr.Vin), inside, 1e3*got, 1e3*want)
}

// TestRefineKeepsUniformCurves: a curve whose uniform steps already move
// the output by less than StepFraction of the supply is left as it is.
func TestRefineKeepsUniformCurves(t *testing.T) {
	d := decode(t, "v=1&stage=sf")
	tc, err := newTracer(d, false)
	if err != nil {
		t.Fatal(err)
	}
	vin, at := grid(tc.vdd, 2001, tc.vinOp)
	ops, err := tc.walk(vin, at, tc.op.V)
	if err != nil {
		t.Fatal(err)
	}
	rv, _, rat, err := tc.refine(vin, ops, at, RefineFactor*2001+1)
	if err != nil {
		t.Fatal(err)
	}
	if len(rv) != len(vin) || rat != at {
		t.Errorf("a follower on a 0.9 mV grid was refined from %d to %d levels", len(vin), len(rv))
	}
}

// TestHeadroomAgainstBisection holds the swing around the operating point
// to a check written here: from the operating point's input level the
// input is stepped by 1 mV each way (each level solved from the previous)
// until any transistor's margin is negative, then bisected 60 times on the
// sign of the smallest margin; the output there, or at the rail the input
// reaches with every device saturated, gives each headroom. Both locate
// the same crossing, the engine's to 1 nV of input: times a gain of at most
// a few hundred that is under 1 µV of output, so 1e-5 V is ample.
func TestHeadroomAgainstBisection(t *testing.T) {
	for _, c := range testDesigns {
		t.Run(c.name, func(t *testing.T) {
			d := decode(t, c.frag)
			tr, err := Curve(d, 0)
			if err != nil {
				t.Fatal(err)
			}
			tc, err := newTracer(d, false)
			if err != nil {
				t.Fatal(err)
			}
			smallest := func(op *circuit.OperatingPoint) (float64, string) {
				worst, name := math.Inf(1), ""
				for _, f := range tc.b.C.FETs {
					v := op.V
					if m := f.Dev.Report(v[f.D], v[f.G], v[f.S], v[f.B]).Margin; m < worst {
						worst, name = m, f.Name
					}
				}
				return worst, name
			}
			if m, _ := smallest(&tc.op); m < 0 {
				t.Skip("the operating point itself is not saturated")
			}
			type end struct {
				out   float64
				limit string
			}
			walk := func(dir float64) end {
				a, opA := tc.vinOp, tc.op
				for {
					b := a + dir*1e-3
					if b < 0 || b > tc.vdd {
						b = math.Max(0, math.Min(tc.vdd, b))
						op, err := tc.solve(b, opA.V)
						if err != nil {
							t.Fatal(err)
						}
						if m, _ := smallest(&op); m >= 0 {
							return end{tc.out(&op), LimitSupply}
						}
					}
					op, err := tc.solve(b, opA.V)
					if err != nil {
						t.Fatal(err)
					}
					if m, _ := smallest(&op); m >= 0 {
						a, opA = b, op
						continue
					}
					_, name := smallest(&op)
					for it := 0; it < 60; it++ {
						mid := 0.5 * (a + b)
						opM, err := tc.solve(mid, opA.V)
						if err != nil {
							t.Fatal(err)
						}
						if m, _ := smallest(&opM); m >= 0 {
							a, opA = mid, opM
						} else {
							b = mid
							_, name = smallest(&opM)
						}
					}
					return end{tc.out(&opA), name + " leaves saturation"}
				}
			}
			down, up := walk(-1), walk(+1)
			hi, lo := down, up
			if up.out > down.out {
				hi, lo = up, down
			}
			out0 := tc.out(&tc.op)
			const tol = 1e-5
			if math.Abs(tr.HeadroomHi-(hi.out-out0)) > tol || math.Abs(tr.HeadroomLo-(out0-lo.out)) > tol {
				t.Errorf("headroom up %.7g, down %.7g V; bisection %.7g, %.7g V", tr.HeadroomHi, tr.HeadroomLo, hi.out-out0, out0-lo.out)
			}
			if tr.LimitOutHi != hi.limit || tr.LimitOutLo != lo.limit {
				t.Errorf("limits high %q, low %q; bisection %q, %q", tr.LimitOutHi, tr.LimitOutLo, hi.limit, lo.limit)
			}
			if want := 2 * math.Min(tr.HeadroomHi, tr.HeadroomLo); tr.SwingSym != want {
				t.Errorf("symmetric swing %g, want twice the smaller headroom %g", tr.SwingSym, want)
			}
		})
	}
}

// TestHeadroomEndsInOutputTerms: in a common-source stage with a
// current-source load the output's high end is set by the load leaving
// saturation and its low end by the driver, whichever polarity M1 is
// (common practice: the output may swing from VDsat of the device on one
// rail to VDD less VDsat of the one on the other). For the n-channel stage
// M1 sits at ground, so the load (M2) limits the high end; the p-channel
// stage is the mirror image. The input's low end is the output's high end
// for these inverting stages.
func TestHeadroomEndsInOutputTerms(t *testing.T) {
	for _, c := range []struct{ frag, hi, lo string }{
		{"v=1&stage=cs&load=active", "M2 leaves saturation", "M1 leaves saturation"},
		{"v=1&stage=cs&pol=p&load=active", "M1 leaves saturation", "M2 leaves saturation"},
		{highGain, "M2 leaves saturation", "M1 leaves saturation"},
	} {
		tr, err := Curve(decode(t, c.frag), 0)
		if err != nil {
			t.Fatal(err)
		}
		if tr.LimitOutHi != c.hi || tr.LimitOutLo != c.lo {
			t.Errorf("%s: output high end %q, low end %q; want %q, %q", c.frag, tr.LimitOutHi, tr.LimitOutLo, c.hi, c.lo)
		}
		if !(tr.HeadroomHi > 0 && tr.HeadroomLo > 0 && tr.OutOp+tr.HeadroomHi <= tr.Vin[len(tr.Vin)-1] && tr.OutOp-tr.HeadroomLo >= 0) {
			t.Errorf("%s: headrooms %.4g up, %.4g down from %.4g V leave the supply", c.frag, tr.HeadroomHi, tr.HeadroomLo, tr.OutOp)
		}
	}
}
