package sizing

import (
	"strings"
	"testing"

	"stagewright/core/design"
)

// The gain–bandwidth bound (common practice: GBW ≤ gm/(2π·CL), gm/ID ≤
// 1/(n·UT)): gain ≥ 20 with f3db ≥ 50 MHz into 1 pF needs gm ≥ 6.28 mS,
// which at 200 µA is 31.4 S/A, above the d180 NMOS limit 1/(1.244·25.85 mV)
// ≈ 31.1 S/A, so it is reported; at 400 µA (15.7 S/A) it is not, and the
// search then meets the targets.
func TestGainBandwidthBound(t *testing.T) {
	d, err := design.Decode("cl=1p&t.gain=20&t.f3db=50M&t.idd=200u")
	if err != nil {
		t.Fatal(err)
	}
	b := gainBandwidthBound(&d)
	if !strings.Contains(b, "gm/ID ≥ 31.4 S/A") || !strings.Contains(b, "1/(n·UT)") {
		t.Errorf("bound = %q", b)
	}
	d2, _ := design.Decode("cl=1p&t.gain=20&t.f3db=50M&t.idd=400u")
	if b := gainBandwidthBound(&d2); b != "" {
		t.Errorf("400 µA: bound %q, want none", b)
	}
	d3, _ := design.Decode("cl=1p&t.gain=10&t.f3db=50M&t.idd=400u&vary=w.l.id.rd")
	s, err := Size(d3, nil)
	if err != nil {
		t.Fatal(err)
	}
	if !s.Feasible || s.Bound != "" {
		t.Errorf("gain 10, 50 MHz, 400 µA: feasible %v, %s", s.Feasible, s.Message)
	}
}
