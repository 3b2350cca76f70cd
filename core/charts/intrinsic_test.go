package charts

import (
	"math"
	"testing"

	"stagewright/core/device"
)

// TestChartsIntrinsicGainFromCLM: with channel-length modulation the only
// output conductance (ID = I0·(1 + λ·VDS), λ = clm/L, the square-law form in
// checks.md; Shichman & Hodges 1968), a saturated device has
// ro = (1 + λ·VDS)/(λ·ID), so its intrinsic gain is
//
//	gm·ro = (gm/ID)·(1 + λ·VDS)/λ,
//
// read from the chart's own gm/ID. Mobility reduction, velocity saturation
// and barrier lowering are switched off so nothing else sets ro. In deep
// saturation (q_r ≤ 10⁻⁷·q_f, the chart's mark) the reverse channel end
// adds at most (q_r/q_f)/(λ·UT) ≈ 2e-4 to gds; 1e-3 allows it.
func TestChartsIntrinsicGainFromCLM(t *testing.T) {
	pr, _ := device.Builtin("d180")
	for _, pol := range []device.Polarity{device.NMOS, device.PMOS} {
		p := &pr.N
		if pol == device.PMOS {
			p = &pr.P
		}
		p.Theta, p.ECrit, p.DIBL = 0, 0, 0
		const l = 1e-6
		c, err := Compute(pr, pol, 10e-6, l, 300, pr.VDD, 100)
		if err != nil {
			t.Fatal(err)
		}
		lambda := p.LambdaL / l
		checked := 0
		for i := range c.VGS {
			if !c.Saturated[i] || c.ID[i] < 1e-12 {
				continue
			}
			checked++
			want := c.GmID[i] * (1 + lambda*c.VDS) / lambda
			if got := c.GmRo[i]; math.Abs(got-want) > 1e-3*want {
				t.Errorf("%v VGS %.3f: gm·ro = %.6g, (gm/ID)·(1+λ·VDS)/λ = %.6g", pol, c.VGS[i], got, want)
			}
		}
		if checked < 20 {
			t.Errorf("%v: only %d saturated points", pol, checked)
		}
	}
}
