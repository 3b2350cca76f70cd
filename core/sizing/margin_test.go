package sizing

import (
	"math"
	"testing"

	"stagewright/core/design"
)

// TestTargetMarginsAsDocumented: each reported target's margin is the one
// Target documents, (value − target)/target for an at-least target and
// (target − value)/target for an at-most one, and the value is the figure
// of the found design evaluated afresh from its fragment: |gain|, f3db,
// |gain|·f3db, the supply current |power|/VDD. Recomputed here from the
// evaluation; the same arithmetic, so 1e-12 (the found design's fragment
// rounds nothing: it is the design the sizer evaluated).
func TestTargetMarginsAsDocumented(t *testing.T) {
	s, err := Size(decode(t, "cl=500f&t.gain=8&t.f3db=20M&t.gbw=100M&t.idd=300u"), nil)
	if err != nil {
		t.Fatal(err)
	}
	var e design.Evaluator
	d := decode(t, s.Fragment)
	r := e.Evaluate(d)
	if !r.OK {
		t.Fatal(r.Error)
	}
	gain := math.Abs(float64(r.Midband.Gain))
	values := map[string]float64{
		"t.gain": gain,
		"t.f3db": float64(r.AC.F3dB),
		"t.gbw":  gain * float64(r.AC.F3dB),
		"t.idd":  math.Abs(float64(*r.OP.Power)) / d.VDD,
	}
	if len(s.Targets) != len(values) {
		t.Fatalf("%d targets reported, want %d", len(s.Targets), len(values))
	}
	for _, tg := range s.Targets {
		v, ok := values[tg.Key]
		if !ok {
			t.Fatalf("unexpected target %s", tg.Key)
		}
		want := v/float64(tg.Target) - 1
		if tg.Kind == "max" {
			want = 1 - v/float64(tg.Target)
		}
		if math.Abs(float64(tg.Value)-v) > 1e-12*v || math.Abs(float64(tg.Margin)-want) > 1e-12 {
			t.Errorf("%s: value %g margin %g; evaluated %g, margin %g", tg.Key, float64(tg.Value), float64(tg.Margin), v, want)
		}
		if tg.Met != (want >= -1e-6) {
			t.Errorf("%s: met %v with margin %g", tg.Key, tg.Met, want)
		}
	}
	if !s.Feasible {
		t.Errorf("targets far inside the 1/(n·UT) limit (1 S/A of 31) were not met: %s", s.Message)
	}
}
