package design

import (
	"math"
	"math/cmplx"
	"testing"
)

// est returns the named estimate of r or fails.
func est(t *testing.T, r Result, name string) Est {
	t.Helper()
	e, ok := r.Estimate[name]
	if !ok {
		t.Fatalf("no estimate %q in %v", name, r.Estimate)
	}
	return e
}

func checkRel(t *testing.T, what string, got, want, tol float64) {
	t.Helper()
	if !(math.Abs(got-want) <= tol*math.Abs(want)) {
		t.Errorf("%s = %.9g, want %.9g (rel %.2g, tolerance %.0e)", what, got, want, (got-want)/want, tol)
	}
}

// csCases are invented resistively loaded common-source designs, with and
// without an AC-coupled load resistance.
var csCases = []string{
	"stage=cs&pol=n&load=r&rd=10k&rsig=1k&cl=100f",
	"stage=cs&pol=n&load=r&rd=20k&rsig=50k&cl=0&id=50u&w=20u&rl=40k",
	"stage=cs&pol=p&load=r&rd=5k&rsig=10k&cl=1p&w=30u&id=100u",
	"stage=cs&pol=n&load=r&proc=d65&rd=5k&rsig=2k&cl=50f",
}

// TestCommonSourceEstimatesClosedForm checks the hand estimates of the
// resistively loaded common-source stage against the textbook expressions
// written out here from the same gm, capacitances and resistances (Razavi,
// Design of Analog CMOS Integrated Circuits, 2nd ed., ch. 6; checks.md),
// with R' = rout‖RL (rout includes ro), Cin = Cgs + Cgb (gate to AC
// ground), Cout = Cdb + CL:
//
//	Miller input pole  1/(2π·Rsig·[Cin + (1 + gm·R')·Cgd])
//	output pole        1/(2π·R'·[Cout + Cgd·(1 + 1/(gm·R'))])
//	RHP zero           gm/(2π·Cgd)
//	OCTC bandwidth     1/(2π·b1), b1 = Rsig·(1+gm·R')·Cgd + Rsig·Cin + R'·(Cgd+Cout),
//
// b1 being the s coefficient of the two-pole denominator, which the sum of
// open-circuit time constants equals exactly. Each is the same arithmetic
// on the same numbers: 1e-12. The exact zero of this circuit is gm/Cgd
// itself (the numerator Cgd·s − gm), so the zero estimate's exact value
// must match it to root precision, 1e-9. diff_pct is
// 100·(estimate − exact)/|exact| (README).
func TestCommonSourceEstimatesClosedForm(t *testing.T) {
	for _, frag := range csCases {
		t.Run(frag, func(t *testing.T) {
			d := mustDecode(t, frag)
			r, m := solved(t, d)
			rp := float64(r.Midband.Rout)
			if !math.IsInf(d.RL, 1) {
				rp = 1 / (1/rp + 1/d.RL)
			}
			cin, cgd, cout := m.CGS+m.CGB, m.CGD, m.CDB+d.CL
			gm, rsig := m.GM, d.RSig
			miller := 1 / (2 * math.Pi * rsig * (cin + (1+gm*rp)*cgd))
			pout := 1 / (2 * math.Pi * rp * (cout + cgd*(1+1/(gm*rp))))
			zero := gm / (2 * math.Pi * cgd)
			b1 := rsig*(1+gm*rp)*cgd + rsig*cin + rp*(cgd+cout)
			checkRel(t, "miller_input_pole", float64(est(t, r, "miller_input_pole").Value), miller, 1e-12)
			checkRel(t, "output_pole", float64(est(t, r, "output_pole").Value), pout, 1e-12)
			z := est(t, r, "rhp_zero")
			checkRel(t, "rhp_zero", float64(z.Value), zero, 1e-12)
			checkRel(t, "rhp_zero exact", float64(z.Exact), zero, 1e-9)
			checkRel(t, "octc_f3db", float64(est(t, r, "octc_f3db").Value), 1/(2*math.Pi*b1), 1e-12)
			for name, e := range r.Estimate {
				if want := 100 * (float64(e.Value) - float64(e.Exact)) / math.Abs(float64(e.Exact)); e.Exact.Finite() {
					checkRel(t, name+" diff_pct", float64(e.DiffPct), want, 1e-12)
				}
			}
		})
	}
}

// TestCommonSourceF3dBFromTransfer: the −3 dB frequency is where the
// two-pole transfer (Razavi ch. 6, as in TestCommonSourceTwoPoleTextbook)
// falls to 1/√2 of its low-frequency magnitude:
//
//	|H(jω)|² = R'²·(gm² + ω²·Cgd²) / ((1 − ω²·a2)² + ω²·b1²),
//	a2 = Rsig·R'·(Cin·Cgd + Cin·Cout + Cgd·Cout),
//
// solved here by bisection. The engine interpolates the sweep's dB values
// linearly in log f between points 10^(1/40) apart; near a pole that errs by
// h²/8·|d²y/du²| ≈ 0.0018 dB (u = ln f, h = ln 10/40, |d²y/du²| ≤ 4.34 dB), or
// 4e-4 in frequency at the 4.3 dB-per-neper slope there: 1e-3 allows it.
func TestCommonSourceF3dBFromTransfer(t *testing.T) {
	for _, frag := range csCases {
		t.Run(frag, func(t *testing.T) {
			d := mustDecode(t, frag)
			r, m := solved(t, d)
			rp := float64(r.Midband.Rout)
			if !math.IsInf(d.RL, 1) {
				rp = 1 / (1/rp + 1/d.RL)
			}
			cin, cgd, cout := m.CGS+m.CGB, m.CGD, m.CDB+d.CL
			gm, rsig := m.GM, d.RSig
			b1 := rsig*(1+gm*rp)*cgd + rsig*cin + rp*(cgd+cout)
			a2 := rsig * rp * (cin*cgd + cin*cout + cgd*cout)
			mag2 := func(w float64) float64 {
				den := (1-w*w*a2)*(1-w*w*a2) + w*w*b1*b1
				return rp * rp * (gm*gm + w*w*cgd*cgd) / den
			}
			half := mag2(0) / 2
			lo, hi := 1.0, 1e14 // rad/s
			for range 200 {
				mid := math.Sqrt(lo * hi)
				if mag2(mid) > half {
					lo = mid
				} else {
					hi = mid
				}
			}
			want := math.Sqrt(lo*hi) / (2 * math.Pi)
			checkRel(t, "f3db", float64(r.AC.F3dB), want, 1e-3)
			checkRel(t, "gbw", float64(r.AC.GBW), math.Abs(float64(r.Midband.Gain))*want, 1e-3)
		})
	}
}

// TestCommonGatePolesAndEstimates: the common-gate stage with a resistor
// load has two nodes, the source (input) and the drain (output), and no
// capacitance between them (Cgs and Cgd go to the gate, an AC ground).
// Written out by hand from the hybrid-π model (Razavi ch. 3 and 6):
//
//	G = [ 1/Rsig + gm+gmb+gds   −gds          ]   C = [ Cgs+Csb   0            ]
//	    [ −(gm+gmb+gds)          gds + 1/R_L' ]       [ 0         Cgd+Cdb+CL   ]
//
// with R_L' = RD‖RL, so the poles are the roots of det(G + s·C), a
// quadratic, and the transfer has no finite zero (the signal reaches the
// output only through the frequency-independent gm+gmb+gds). The
// estimates are 1/(2π·(Rsig‖1/(gm+gmb))·Cin) and 1/(2π·R'·Cout) with
// R' = rout‖RL. Poles: the same circuit by another route, 1e-7; estimates:
// the same arithmetic, 1e-12.
func TestCommonGatePolesAndEstimates(t *testing.T) {
	for _, frag := range []string{
		"stage=cg&pol=n&load=r&rd=10k&rsig=1k&cl=200f",
		"stage=cg&pol=n&load=r&rd=5k&rsig=200&cl=1p&l=1u&rl=20k",
		"stage=cg&pol=p&load=r&rd=8k&rsig=2k&cl=100f&w=30u",
		"stage=cg&pol=n&load=r&proc=d65&rd=3k&rsig=500&cl=50f",
	} {
		t.Run(frag, func(t *testing.T) {
			d := mustDecode(t, frag)
			r, m := solved(t, d)
			rl := d.RD
			if !math.IsInf(d.RL, 1) {
				rl = 1 / (1/d.RD + 1/d.RL)
			}
			gs := m.GM + m.GMB + m.GDS
			g11, g12, g21, g22 := 1/d.RSig+gs, -m.GDS, -gs, m.GDS+1/rl
			cin, cout := m.CGS+m.CSB, m.CGD+m.CDB+d.CL
			// det(G + sC) = cin·cout·s² + (g11·cout + g22·cin)·s + (g11·g22 − g12·g21)
			p1, p2 := quadRoots(cin*cout, g11*cout+g22*cin, g11*g22-g12*g21)
			want := sortedByMag([]complex128{p1, p2})
			got := rootsRad(r.Poles)
			if len(got) != 2 {
				t.Fatalf("poles %v, want two", got)
			}
			for i := range want {
				if cmplx.Abs(got[i]-want[i]) > 1e-7*cmplx.Abs(want[i]) {
					t.Errorf("pole %d: engine %v, hand-built network %v", i, got[i], want[i])
				}
			}
			if len(r.Zeros) != 0 {
				t.Errorf("zeros %v, want none", r.Zeros)
			}
			rp := float64(r.Midband.Rout)
			if !math.IsInf(d.RL, 1) {
				rp = 1 / (1/rp + 1/d.RL)
			}
			gt := m.GM + m.GMB
			checkRel(t, "input_pole", float64(est(t, r, "input_pole").Value), 1/(2*math.Pi*cin/(1/d.RSig+gt)), 1e-12)
			checkRel(t, "output_pole", float64(est(t, r, "output_pole").Value), 1/(2*math.Pi*rp*cout), 1e-12)
			// Open-circuit time constants of the two nodes: tr(G⁻¹C) of the
			// 2×2 network = (g22·cin + g11·cout)/det G.
			tau := (g22*cin + g11*cout) / (g11*g22 - g12*g21)
			checkRel(t, "octc_f3db", float64(est(t, r, "octc_f3db").Value), 1/(2*math.Pi*tau), 1e-9)
		})
	}
}

// TestMidbandDiffPct: diff_pct = 100·(hand − exact)/|exact| (README) for
// each midband figure, on a stage where every figure is finite.
func TestMidbandDiffPct(t *testing.T) {
	for _, frag := range []string{"stage=cg&load=r&rd=10k&rsig=1k", "stage=cs&load=r&rs=500", "stage=sf&load=r&rs=5k"} {
		r := Evaluate(mustDecode(t, frag))
		if !r.OK {
			t.Fatal(r.Error)
		}
		for _, f := range []struct {
			name              string
			hand, exact, diff Num
		}{
			{"gain", r.Hand.Gain, r.Midband.Gain, r.DiffPct.Gain},
			{"rin", r.Hand.Rin, r.Midband.Rin, r.DiffPct.Rin},
			{"rout", r.Hand.Rout, r.Midband.Rout, r.DiffPct.Rout},
		} {
			if !f.exact.Finite() || !f.hand.Finite() {
				continue
			}
			want := 100 * (float64(f.hand) - float64(f.exact)) / math.Abs(float64(f.exact))
			if want == 0 {
				continue
			}
			checkRel(t, frag+" "+f.name+" diff_pct", float64(f.diff), want, 1e-12)
		}
	}
}
