package sizing

import (
	"math"
	"testing"

	"stagewright/core/design"
)

// TestBandwidthBelowTheSweep: a stage whose output pole lies below the
// sweep's first point (RD = 100 MΩ into CL = 10 nF: 1/(2π·RD·CL) ≈ 0.16 Hz,
// below fmin = 1 Hz) has no −3 dB crossing in the sweep; the search must
// score its bandwidth as that slow pole, not as the top of the sweep. A
// single dominant pole is its own −3 dB frequency (common practice), and
// the other poles are decades away, so within 1 %; and it must stay below
// fmin.
func TestBandwidthBelowTheSweep(t *testing.T) {
	d := decode(t, "stage=cs&load=r&rd=100M&id=10n&w=20u&l=1u&cl=10n&rsig=1")
	var e design.Evaluator
	r := e.Evaluate(d)
	if !r.OK {
		t.Fatal(r.Error)
	}
	if r.AC.F3dB.Finite() {
		t.Fatalf("the sweep found f3db = %g Hz; the test needs a pole below fmin", float64(r.AC.F3dB))
	}
	rout := float64(r.Midband.Rout)
	want := 1 / (2 * math.Pi * rout * d.CL)
	got := f3dbOf(&d, &r)
	if !(got <= d.FMin) || math.Abs(got-want) > 0.01*want {
		t.Errorf("bandwidth scored %g Hz; the output pole 1/(2π·Rout·CL) is %g Hz (fmin %g Hz)", got, want, d.FMin)
	}
}
