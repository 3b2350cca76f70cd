package stage

import (
	"math"
	"testing"

	"stagewright/core/device"
)

// TestHandEstimateAgainstTextbook holds the hand column (HandEstimate) to
// the exact textbook expressions of the same linear circuit (exact, in
// stage_test.go: Razavi ch. 3, Sedra & Smith, from memory), with the same
// gm, gmb and ro of every stage variant.
//
// Where the hand formula keeps every element it is the exact expression and
// must agree at the engine's own ro: the undegenerated common-source gain
// −gm·(ZL‖ro‖RL) and rout ZL‖ro, and the degenerated rout
// ZL‖[(1+(gm+gmb)·RS)·ro + RS]. Every other hand formula leaves out ro (or
// 1/ro beside gm): it must become exact when M1's ro is made 10¹⁵ Ω,
// where the terms it leaves out are below 10⁻⁹ of the rest. The
// agreement is rounding in either case, and the tolerance 1e-8 covers it
// with room.
func TestHandEstimateAgainstTextbook(t *testing.T) {
	for _, v := range variants() {
		t.Run(v.String(), func(t *testing.T) {
			s := v.spec(t)
			sol, err := Solve(s)
			if err != nil {
				t.Fatal(err)
			}
			m1 := sol.Report(1)
			var m2 *device.Report
			if sol.M2 >= 0 {
				r := sol.Report(2)
				m2 = &r
			}
			type figure struct {
				name      string
				hand, ref float64
			}
			check := func(what string, figs []figure) {
				for _, f := range figs {
					if math.IsInf(f.ref, 1) {
						if !math.IsInf(f.hand, 1) {
							t.Errorf("%s %s: hand %g, textbook open (∞)", what, f.name, f.hand)
						}
						continue
					}
					if math.Abs(f.hand-f.ref) > 1e-8*math.Abs(f.ref) {
						t.Errorf("%s %s: hand %.10g, textbook %.10g (rel %.2g)", what, f.name, f.hand, f.ref, (f.hand-f.ref)/f.ref)
					}
				}
			}
			h := HandEstimate(s, m1, m2)
			g, _, rout := exact(s, m1, m2)
			if s.Kind == CS {
				figs := []figure{{"rout", h.Rout, rout}}
				if s.RS == 0 {
					figs = append(figs, figure{"gain", h.Gain, g})
				}
				check("at the engine's ro", figs)
			}
			ideal := m1
			ideal.GDS = 1e-15
			hi := HandEstimate(s, ideal, m2)
			gi, rini, routi := exact(s, ideal, m2)
			check("with ro = 1e15 Ω", []figure{{"gain", hi.Gain, gi}, {"rin", hi.Rin, rini}, {"rout", hi.Rout, routi}})
		})
	}
}

// TestHandDiffersWhereTheTextbookSaysSo: the common-gate hand rin 1/(gm+gmb)
// leaves out the load seen through ro, and the exact rin is
// (ZL + ro)/(1 + (gm+gmb)·ro) (Razavi ch. 3): their ratio is
// (gm+gmb)·(ZL + ro)/(1 + (gm+gmb)·ro), which the hand value must show at
// the engine's own ro, to rounding (1e-9). With a resistor load of 5 kΩ
// the ratio is well away from 1, so a hand rin of 1/gm would not pass.
func TestHandDiffersWhereTheTextbookSaysSo(t *testing.T) {
	for _, proc := range []string{"d180", "d65"} {
		for _, pol := range []device.Polarity{device.NMOS, device.PMOS} {
			s := baseSpec(t, proc, CG, pol, Resistor)
			sol, err := Solve(s)
			if err != nil {
				t.Fatal(err)
			}
			m1 := sol.Report(1)
			h := HandEstimate(s, m1, nil)
			_, rin, _ := exact(s, m1, nil)
			gt, ro := m1.GM+m1.GMB, 1/m1.GDS
			want := gt * (s.RD + ro) / (1 + gt*ro)
			if got := rin / h.Rin; math.Abs(got-want) > 1e-9*want {
				t.Errorf("%s %v: exact/hand rin = %.9g, textbook ratio %.9g", proc, pol, got, want)
			}
			if m1.GMB < 0.05*m1.GM {
				t.Errorf("%s %v: gmb/gm = %.3g; the test needs a body effect to tell gm from gm+gmb", proc, pol, m1.GMB/m1.GM)
			}
		}
	}
}
