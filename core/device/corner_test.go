package device

import (
	"errors"
	"math"
	"reflect"
	"testing"
)

// TestCorner checks the corner shifts against their definition (common
// practice: a slow device has a higher |VT| and a lower mobility, shifted
// by 3 global σ) and that tt returns the process unchanged.
func TestCorner(t *testing.T) {
	for _, name := range BuiltinNames() {
		pr, _ := Builtin(name)
		sn, sp := pr.Spread(NMOS), pr.Spread(PMOS)
		for _, c := range []struct {
			corner string
			kn, kp float64 // σ of slowing per polarity
		}{
			{"tt", 0, 0}, {"ss", 3, 3}, {"ff", -3, -3}, {"sf", 3, -3}, {"fs", -3, 3},
		} {
			got, err := Corner(pr, c.corner)
			if err != nil {
				t.Fatalf("%s %s: %v", name, c.corner, err)
			}
			// Tolerance 1e-12 relative: one multiply and one add in float64.
			near := func(what string, g, w float64) {
				if math.Abs(g-w) > 1e-12*math.Abs(w) {
					t.Errorf("%s %s %s = %g, want %g", name, c.corner, what, g, w)
				}
			}
			near("n VT0", got.N.VT0, pr.N.VT0+c.kn*sn.SigmaVT)
			near("p VT0", got.P.VT0, pr.P.VT0+c.kp*sp.SigmaVT)
			near("n U0", got.N.U0, pr.N.U0*(1-c.kn*sn.SigmaMu))
			near("p U0", got.P.U0, pr.P.U0*(1-c.kp*sp.SigmaMu))
			if c.corner == "tt" && !reflect.DeepEqual(got, pr) {
				t.Errorf("%s tt changed the process", name)
			}
			if got.Name != pr.Name || got.N.Tox != pr.N.Tox {
				t.Errorf("%s %s changed more than VT0 and U0", name, c.corner)
			}
		}
	}
}

func TestCornerErrors(t *testing.T) {
	pr, _ := Builtin("d180")
	for _, bad := range []string{"", "t", "st", "ts", "xx", "TT", "sss"} {
		_, err := Corner(pr, bad)
		var ce *CornerError
		if !errors.As(err, &ce) || ce.Name != bad {
			t.Errorf("Corner(%q) error = %v, want *CornerError", bad, err)
		}
	}
}

// TestSpread checks the demo spreads lie in the magnitudes common practice
// (from memory) gives: global σVT 5–30 mV, σµ 1–10 %, AVT 1–10 mV·µm,
// ABeta 0.3–3 %·µm; and the generic fallback follows 1 mV·µm per nm Tox.
func TestSpread(t *testing.T) {
	for _, name := range BuiltinNames() {
		pr, _ := Builtin(name)
		for _, pol := range []Polarity{NMOS, PMOS} {
			s := pr.Spread(pol)
			in := func(what string, v, lo, hi float64) {
				if !(v >= lo && v <= hi) {
					t.Errorf("%s %v %s = %g outside [%g, %g]", name, pol, what, v, lo, hi)
				}
			}
			in("SigmaVT", s.SigmaVT, 5e-3, 30e-3)
			in("SigmaMu", s.SigmaMu, 0.01, 0.10)
			in("AVT", s.AVT, 1e-9, 10e-9)
			in("ABeta", s.ABeta, 0.3e-8, 3e-8)
		}
	}
	pr, _ := Builtin("d180")
	pr.Name = "custom"
	if got, want := pr.Spread(NMOS).AVT, 4.1e-9; math.Abs(got-want) > 1e-15 {
		t.Errorf("fallback AVT = %g, want %g (1 mV·µm per nm of 4.1 nm)", got, want)
	}
	if (pr.Spread(Polarity(0)) != Spread{}) {
		t.Error("Spread of an invalid polarity is not zero")
	}
}
