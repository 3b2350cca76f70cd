package variation

import (
	"math"
	"testing"

	"stagewright/core/design"
	"stagewright/core/device"
)

// TestPelgromLoadDevice: the load transistor has a mismatch of its own,
// σ(ΔVT2) = AVT/√(W2·L2) by its own area (Pelgrom, Duinmaijer, Welbers,
// IEEE JSSC 1989). A common-source stage with a diode load and a fixed
// input level has its output level moved by both thresholds; to first
// order (propagation of independent errors, the usual linearization)
//
//	σ(VOUT)² = (∂VOUT/∂VT1·σ1)² + (∂VOUT/∂VT2·σ2)²,
//
// with each slope taken by a central difference of the evaluated design
// (n.vt0 moves M1 only, p.vt0 M2 only). M1 is made 160 times larger in area
// than M2, so M2's term is more than twice M1's, and an M2 drawn with M1's
// area would give less than half the spread. Tolerance: four standard errors of a standard
// deviation from n samples, 4/√(2n) (about 4 % at 5,000), plus 2 % for the
// curvature the linearization leaves out at σ2 ≈ 10 mV.
func TestPelgromLoadDevice(t *testing.T) {
	const n = 5000
	frag := "v=1&stage=cs&pol=n&bias=vin&vin=0.6&w=40u&l=2u&load=diode&lw=1u&ll=0.5u"
	d := decode(t, frag)
	pr, _ := device.Builtin("d180")
	r, err := MonteCarloWith(d, Options{Samples: n, Seed: 21, NoGlobal: true, NoBetaMismatch: true})
	if err != nil {
		t.Fatal(err)
	}
	if r.Failed != 0 {
		t.Fatalf("%d samples failed", r.Failed)
	}
	voutAt := func(key string, v float64) float64 {
		dd := d
		dd.Overrides = []design.Override{{Key: design.CanonicalKey(key), Value: v}}
		res := design.Evaluate(dd)
		if !res.OK {
			t.Fatal(res.Error)
		}
		return float64(res.Nodes["out"])
	}
	const dv = 1e-4 // V: central-difference error ∝ dv², negligible
	s1 := (voutAt("n.thresh", pr.N.VT0+dv) - voutAt("n.thresh", pr.N.VT0-dv)) / (2 * dv)
	s2 := (voutAt("p.thresh", pr.P.VT0+dv) - voutAt("p.thresh", pr.P.VT0-dv)) / (2 * dv)
	sig1 := pr.Spread(device.NMOS).AVT / math.Sqrt(40e-6*2e-6)
	sig2 := pr.Spread(device.PMOS).AVT / math.Sqrt(1e-6*0.5e-6)
	want := math.Hypot(s1*sig1, s2*sig2)
	if math.Abs(s2*sig2) < 2*math.Abs(s1*sig1) {
		t.Fatalf("M2's term %.3g V does not dominate M1's %.3g V; the test cannot tell the areas apart", s2*sig2, s1*sig1)
	}
	tol := relSE4(n) + 0.02
	if got := float64(r.VOut.SD); math.Abs(got-want) > tol*want {
		t.Errorf("σ(VOUT) = %.4g V, Pelgrom with each device's own area %.4g V (rel %.3g > %.3g)", got, want, (got-want)/want, tol)
	}
}
