package design

import (
	"math/cmplx"
	"testing"
)

// TestPolesWithATinyDegeneration: a source resistor of 1 nΩ puts a node
// conductance of 10⁹ S beside ones of 10⁻³ S, and a natural frequency near
// 10²² Hz beside the two of the stage; the closed-form cubic and the
// eigen-solver both lost the slowest pole there (the fuzz target found a
// pole reported at 0 Hz). As RS → 0 the stage is the plain common-source
// stage, whose two poles are the roots of Razavi's two-pole denominator
// (as in TestCommonSourceTwoPoleTextbook); RS = 1 nΩ moves them by about
// gm·RS ≈ 10⁻¹² relative, so they must agree to 1e-6, and nothing may sit
// at 0 Hz.
func TestPolesWithATinyDegeneration(t *testing.T) {
	for _, frag := range []string{"rs=1n", "stage=cs&rs=1n&rsig=50k&cl=1p", "stage=cs&pol=p&rs=1n&w=30u"} {
		d := mustDecode(t, frag)
		r, m := solved(t, d)
		rd := 1 / (1/d.RD + m.GDS)
		if d.RL > 0 && d.RL < 1e300 {
			rd = 1 / (1/rd + 1/d.RL)
		}
		rs := d.RSig
		cgs, cgd, cdb := m.CGS+m.CGB, m.CGD, m.CDB+d.CL
		xi := cgs*cgd + cgs*cdb + cgd*cdb
		p1, p2 := quadRoots(rs*rd*xi, rs*(1+m.GM*rd)*cgd+rs*cgs+rd*(cgd+cdb), 1)
		want := sortedByMag([]complex128{p1, p2})
		got := rootsRad(r.Poles)
		if len(got) < 2 {
			t.Fatalf("%s: poles %v", frag, got)
		}
		for i := range want {
			if cmplx.Abs(got[i]-want[i]) > 1e-6*cmplx.Abs(want[i]) {
				t.Errorf("%s: pole %d = %v rad/s, the RS = 0 textbook pole %v", frag, i, got[i], want[i])
			}
		}
	}
}
