package sweep

import (
	"math"
	"strings"
	"testing"

	"stagewright/core/design"
)

func decode(t testing.TB, frag string) design.Design {
	t.Helper()
	d, err := design.Decode(frag)
	if err != nil {
		t.Fatal(err)
	}
	return d
}

// TestSweepRD: for a resistor-loaded common-source stage at fixed drain
// current, gm and ro do not depend on rd, so the textbook gain
// −gm·(rd ∥ ro) (Sedra & Smith, from memory) must follow the sweep: the
// ratio gain(rd)/(rd∥ro) is the same gm at every point, to 1e-6 (only the
// operating point's solve tolerance moves gm, the output level shifts ro
// through λ·VDS, which a tiny clm keeps below that).
func TestSweepRD(t *testing.T) {
	d := decode(t, "rd=5k&n.clm=1e-12")
	res, err := Sweep(d, "rd", 1e3, 8e3, 8)
	if err != nil {
		t.Fatal(err)
	}
	if !res.Log || len(res.Values) != 8 || res.Values[0] != 1e3 || res.Values[7] != 8e3 {
		t.Fatalf("values %v log %v", res.Values, res.Log)
	}
	// Log spacing: equal ratios (1e-12: rounding of exp/log).
	for i := 2; i < 8; i++ {
		if r1, r0 := res.Values[i]/res.Values[i-1], res.Values[1]/res.Values[0]; math.Abs(r1-r0) > 1e-12 {
			t.Errorf("ratio %g vs %g", r1, r0)
		}
	}
	gain := res.Series[0].Values
	var e design.Evaluator
	r := e.Evaluate(d)
	ro := float64(r.OP.RO)
	gm0 := -gain[0] / par(res.Values[0], ro)
	for i := range gain {
		gm := -gain[i] / par(res.Values[i], ro)
		if math.Abs(gm-gm0) > 1e-6*gm0 {
			t.Errorf("rd %g: gain %g gives gm %g, first point %g", res.Values[i], gain[i], gm, gm0)
		}
	}
	if float64(res.Present.Value) != 5e3 || !res.Present.Figures["gain"].Finite() {
		t.Errorf("present %+v", res.Present)
	}
}

func par(a, b float64) float64 { return a * b / (a + b) }

func TestSweepErrors(t *testing.T) {
	d := decode(t, "")
	for _, tc := range []struct {
		key    string
		lo, hi float64
		n      int
		says   string
	}{
		{"stage", 0, 1, 5, "not a number key"},
		{"w", 1e-6, 1e-5, 1, "points"},
		{"w", 1e-9, 1e-5, 5, "within"},
		{"w", 1e-5, 1e-6, 5, "rise"},
	} {
		if _, err := Sweep(d, tc.key, tc.lo, tc.hi, tc.n); err == nil || !strings.Contains(err.Error(), tc.says) {
			t.Errorf("Sweep(%s %g %g %d) = %v, want %q", tc.key, tc.lo, tc.hi, tc.n, err, tc.says)
		}
	}
	// A point without an operating point is null, with the reason.
	res, err := Sweep(decode(t, "rd=10k"), "id", 1e-6, 10e-3, 4)
	if err != nil {
		t.Fatal(err)
	}
	if len(res.Failures) == 0 || !math.IsNaN(res.Series[0].Values[3]) {
		t.Errorf("10 mA through 10 kΩ from 1.8 V should fail: %v", res.Failures)
	}
}

// TestCompare: the pinned design is B; differences are B − A, and the
// relative ones 100·(B − A)/|A|. Doubling the drain current of a
// common-source stage doubles its supply power (P = VDD·ID, common
// practice), to 1e-4 relative: the supply also carries a few nA besides ID
// (the solver's minimum conductances), which is 1e-5 of 90 µA.
func TestCompare(t *testing.T) {
	d := decode(t, "id=50u&pin="+strings.NewReplacer("=", "%3D", "&", "%26").Replace("id=100u"))
	c, err := ComparePinned(d)
	if err != nil {
		t.Fatal(err)
	}
	for _, row := range c.Rows {
		if row.Name == "power" {
			if math.Abs(float64(row.DiffPct)-100) > 1e-2 || math.Abs(float64(row.B)-2*float64(row.A)) > 1e-4*float64(row.B) {
				t.Errorf("power row %+v", row)
			}
		}
		if row.A.Finite() && row.B.Finite() && float64(row.Diff) != float64(row.B)-float64(row.A) {
			t.Errorf("%s: diff %g", row.Name, row.Diff)
		}
	}
	if _, err := ComparePinned(decode(t, "")); err == nil {
		t.Error("no pin accepted")
	}
}

func BenchmarkSweep(b *testing.B) {
	d := decode(b, "")
	b.ReportAllocs()
	for b.Loop() {
		if _, err := Sweep(d, "w", 1e-6, 100e-6, 50); err != nil {
			b.Fatal(err)
		}
	}
}
