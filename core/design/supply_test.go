package design

import (
	"fmt"
	"math"
	"testing"

	"stagewright/core/device"
	"stagewright/core/stage"
)

// supplyCases is every stage × load × polarity, in the default bias (id,
// the bias levels solved by servos) and biased by the input level, with a
// degenerated common source and an AC-coupled rl beside them.
func supplyCases() []string {
	var frags []string
	for _, st := range []string{"cs", "cg", "sf"} {
		for _, load := range []string{"r", "active", "diode"} {
			if st == "sf" && load == "diode" {
				continue
			}
			for _, pol := range []string{"n", "p"} {
				base := fmt.Sprintf("stage=%s&load=%s&pol=%s", st, load, pol)
				if st == "sf" && load == "active" {
					base += "&vin=" + map[string]string{"n": "1.3", "p": "0.5"}[pol]
				}
				frags = append(frags, base, base+"&rl=20k")
				if st == "cs" {
					frags = append(frags, base+"&rs=500")
				}
			}
		}
	}
	return append(frags,
		"stage=cs&load=r&pol=n&bias=vin&vin=0.7",
		"stage=cs&load=r&pol=p&bias=vin&vin=1.1",
		"stage=cs&load=active&pol=p&bias=vin&vin=1.075&vbl=0.65", // both saturated: at vin = 1.1 M2 sits 50 mV into triode and the curve bends within δ
		"stage=cg&load=active&pol=n&bias=vin&vin=0.2&vg=1.1&vbl=0.7",
		"stage=sf&load=active&pol=p&bias=vin&vin=0.5&vbl=0.7",
		"stage=cs&load=active&pol=n&bias=gmid&gmid=15",
	)
}

// frozen is the stage with every servoed level fixed at its solved value
// (the input level, the load's vbl, W), biased by its input level, so that
// a solve at another supply moves nothing but what the design ties to the
// supply: VDD itself and, through vbl, a PMOS load's or sink's gate.
func frozen(sol *stage.Solution) stage.Spec {
	fz := sol.Built.Spec
	fz.Bias = stage.ByVin
	fz.W = sol.W
	fz.Vin = sol.OP.Source[sol.Input]
	if sol.BiasSrc >= 0 {
		vb := sol.OP.Source[sol.BiasSrc]
		fz.LoadVB = vb
		if sol.Dev2.Polarity() == device.PMOS {
			fz.LoadVB = fz.VDD - vb
		}
	}
	return fz
}

func outAt(t *testing.T, s stage.Spec, vdd float64) float64 {
	t.Helper()
	s.VDD = vdd
	sol, err := stage.Solve(s)
	if err != nil {
		t.Fatalf("solve at vdd = %.6g: %v", vdd, err)
	}
	v, _ := sol.Node("out")
	return v
}

// The supply gain is the derivative of the DC operating point with respect
// to the supply: solving the stage again at VDD ± δ (the bias frozen) and
// taking Δv(out)/(2δ) must give the small-signal figure at DC (rl, being
// AC-coupled, out), for every stage, load and polarity. This holds the
// supply coupling of the linearization (every stamp's GSup term, which
// sources move with VDD) to the nonlinear DC solution, which knows nothing
// of it. The midband figure (rl in) is then held to the hand formula, the
// textbook small-signal analysis of each case (stage.supplyFormulas).
func TestSupplyGainMatchesOperatingPoint(t *testing.T) {
	// δ = 1 mV: the central difference's error is δ²·f'''/6 relative to f',
	// small while every transistor stays saturated over ±δ (measured: at
	// most 5e-7 of the gain over these cases); the solver's last Newton
	// step is under 1e-9 V (VoltTol) and the iteration is quadratic there,
	// so the solved levels are far closer than that. 1e-5 relative plus
	// 1e-7 absolute (for the followers' and cg's small gains) leaves a
	// margin of twenty, and a missing gmb term (10–25 % of the supply gain
	// where it acts) or a wrong supply share fails by orders of magnitude.
	const delta, relFD, absFD = 1e-3, 1e-5, 1e-7
	// The hand formulas are exact for the linearized stage (the textbook
	// small-signal analysis with the same gm, gmb, ro): they differ from
	// the LU solve by rounding only, a few ulps times the condition of G.
	const relHand = 1e-9
	for _, frag := range supplyCases() {
		t.Run(frag, func(t *testing.T) {
			d := mustDecode(t, frag)
			r := Evaluate(d)
			if !r.OK {
				t.Fatalf("not evaluated: %v", r.Error)
			}
			spec, err := d.Spec()
			if err != nil {
				t.Fatal(err)
			}
			sol, err := stage.Solve(spec)
			if err != nil {
				t.Fatal(err)
			}
			nw, err := sol.C.Linearize(sol.OP, sol.Ports, spec.TempK)
			if err != nil {
				t.Fatal(err)
			}
			dc, err := nw.SupplyGainDC()
			if err != nil {
				t.Fatal(err)
			}
			fz := frozen(sol)
			vout, _ := sol.Node("out")
			if got := outAt(t, fz, spec.VDD); math.Abs(got-vout) > 1e-8 {
				t.Fatalf("the frozen bias does not reproduce the operating point: out %.9g V, want %.9g V", got, vout)
			}
			fd := (outAt(t, fz, spec.VDD+delta) - outAt(t, fz, spec.VDD-delta)) / (2 * delta)
			if math.Abs(fd-dc) > relFD*math.Abs(fd)+absFD {
				t.Errorf("supply gain at DC %.9g, the operating point at vdd ± %g V moves by %.9g V/V", dc, delta, fd)
			}
			exact := float64(r.Midband.SupplyGain)
			if math.IsInf(d.RL, 1) && exact != dc {
				t.Errorf("without rl the midband supply gain %.17g differs from the DC one %.17g", exact, dc)
			}
			hand := float64(r.Hand.SupplyGain)
			if math.Abs(hand-exact) > relHand*math.Abs(exact) {
				t.Errorf("hand supply gain %.12g (%s), exact %.12g: %.3g %%", hand, r.Hand.Formula["supply_gain"], exact, float64(r.DiffPct.SupplyGain))
			}
			want := 20 * math.Log10(math.Abs(float64(r.Midband.Gain))/math.Abs(exact))
			if got := float64(r.Midband.PSRRdB); math.Abs(got-want) > 1e-9 {
				t.Errorf("psrr_db %.12g, want 20·log10(|gain|/|supply gain|) = %.12g", got, want)
			}
			t.Logf("supply gain %.6g (DC %.6g, operating point %.2g off; hand %.2g off), psrr %.2f dB", exact, dc, math.Abs(fd-dc)/math.Abs(fd), math.Abs(hand-exact)/math.Abs(exact), want)
		})
	}
}
