package device

import (
	"math"
	"strings"
	"testing"
)

func binnedProcess(t *testing.T) Process {
	t.Helper()
	pr, _ := Builtin("d180")
	short, long := pr.N, pr.N
	short.VT0, long.VT0 = 0.40, 0.50
	short.LambdaL, long.LambdaL = 0.04e-6, 0.02e-6
	pr.NBins = []Bin{{L: 180e-9, Params: short}, {L: 1e-6, Params: long}}
	if err := pr.Validate(); err != nil {
		t.Fatal(err)
	}
	return pr
}

// TestParamsAtInterpolatesInInverseLength checks the interpolation against
// the closed form of a straight line in 1/L through the two bins.
func TestParamsAtInterpolatesInInverseLength(t *testing.T) {
	pr := binnedProcess(t)
	a, b := pr.NBins[0], pr.NBins[1]
	line := func(l, ya, yb float64) float64 {
		return ya + (yb-ya)*(1/a.L-1/l)/(1/a.L-1/b.L)
	}
	for _, tc := range []struct {
		l, vt0 float64
	}{
		{100e-9, 0.40}, // below the first bin: held
		{180e-9, 0.40},
		{300e-9, line(300e-9, 0.40, 0.50)},
		{500e-9, line(500e-9, 0.40, 0.50)},
		{1e-6, 0.50},
		{5e-6, 0.50}, // above the last bin: held
	} {
		got := pr.ParamsAt(NMOS, tc.l)
		// 1e-15: a few roundings of numbers near 1.
		if math.Abs(got.VT0-tc.vt0) > 1e-15 {
			t.Errorf("L = %g: VT0 = %.17g, want %.17g", tc.l, got.VT0, tc.vt0)
		}
		if got.U0 != pr.N.U0 || got.Tox != pr.N.Tox {
			t.Errorf("L = %g: a field both bins share changed", tc.l)
		}
	}
	// λ = lenmod/L: lenmod linear in 1/L makes λ = c0/L + c1/L², which
	// matches each bin's own λ at its length.
	for _, bin := range pr.NBins {
		if got := pr.ParamsAt(NMOS, bin.L).LambdaL; got != bin.Params.LambdaL {
			t.Errorf("at the bin length %g: lenmod %g, want the bin's %g", bin.L, got, bin.Params.LambdaL)
		}
	}
	if got := pr.ParamsAt(PMOS, 300e-9); got != pr.P {
		t.Error("a polarity without bins must get its one set")
	}
}

func TestParamsAtWithoutBins(t *testing.T) {
	pr, _ := Builtin("d65")
	if got := pr.ParamsAt(NMOS, 1e-6); got != pr.N {
		t.Errorf("got %+v, want N", got)
	}
}

func TestBinsValidate(t *testing.T) {
	for _, tc := range []struct {
		name string
		edit func(*Process)
		want string
	}{
		{"unsorted", func(pr *Process) { pr.NBins[0].L, pr.NBins[1].L = 1e-6, 180e-9 }, "must rise in length"},
		{"outside", func(pr *Process) { pr.NBins[1].L = 1 }, "outside the process's lengths"},
		{"bad set", func(pr *Process) { pr.NBins[1].Params.U0 = math.NaN() }, "U0"},
	} {
		pr := binnedProcess(t)
		pr.NBins = append([]Bin(nil), pr.NBins...)
		tc.edit(&pr)
		err := pr.Validate()
		if err == nil || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("%s: error %v, want one containing %q", tc.name, err, tc.want)
		}
	}
}

func TestCornerMovesBins(t *testing.T) {
	pr := binnedProcess(t)
	ss, err := Corner(pr, "ss")
	if err != nil {
		t.Fatal(err)
	}
	s := pr.Spread(NMOS)
	for i, b := range ss.NBins {
		want := pr.NBins[i].Params.VT0 + CornerSigmas*s.SigmaVT
		if math.Abs(b.Params.VT0-want) > 1e-15 {
			t.Errorf("bin %d: VT0 %g, want %g", i, b.Params.VT0, want)
		}
	}
	if pr.NBins[0].Params.VT0 != 0.40 {
		t.Error("Corner changed the bins of the process it was given")
	}
}

// TestVersionOneKeepsItsParameters pins the parameters version-1 links
// were made with (the values of the first release of the demo processes)
// and checks that version 2 has the short-channel terms that bring gm·ro at
// the minimum length to a few tens (common practice for such nodes, from
// memory).
func TestVersionOneKeepsItsParameters(t *testing.T) {
	want := map[string][2]float64{"d180": {0.02e-6, 0.025e-6}, "d65": {0.012e-6, 0.015e-6}}
	for name, lam := range want {
		v1, ok := BuiltinVersion(name, 1)
		if !ok {
			t.Fatalf("%s version 1 missing", name)
		}
		if v1.N.LambdaL != lam[0] || v1.P.LambdaL != lam[1] || v1.N.DIBL != 0 || v1.P.DIBL != 0 {
			t.Errorf("%s v1: lenmod %g/%g dibl %g/%g", name, v1.N.LambdaL, v1.P.LambdaL, v1.N.DIBL, v1.P.DIBL)
		}
		v2, _ := Builtin(name)
		if v2.N.DIBL == 0 || v2.P.DIBL == 0 {
			t.Errorf("%s v2 has no DIBL", name)
		}
		for _, pol := range []Polarity{NMOS, PMOS} {
			vds := 0.72 * v2.VDD
			g1 := gainAtMinLength(t, v1, pol, vds)
			g2 := gainAtMinLength(t, v2, pol, vds)
			if g1 < 2*g2 {
				t.Errorf("%s %v: gm·ro %.1f in v1, %.1f in v2: v2 should be well below", name, pol, g1, g2)
			}
			if g2 < 15 || g2 > 50 {
				t.Errorf("%s %v v2: gm·ro %.1f, want a few tens (15 … 50)", name, pol, g2)
			}
		}
	}
	if _, ok := BuiltinVersion("d180", 3); ok {
		t.Error("version 3 found")
	}
	if _, ok := BuiltinVersion("d180", 0); ok {
		t.Error("version 0 found")
	}
}

// gainAtMinLength returns gm·ro at the process's minimum length, gm/ID
// 11 S/A and the given |VDS|, found by bisection on VGS.
func gainAtMinLength(t *testing.T, pr Process, pol Polarity, vds float64) float64 {
	t.Helper()
	d, err := New(pol, pr.Params(pol), pr.TNom, 20*pr.LMin, pr.LMin, pr.TNom)
	if err != nil {
		t.Fatal(err)
	}
	s := float64(pol)
	lo, hi := 0.0, pr.VDD
	var r Report
	for range 60 {
		m := (lo + hi) / 2
		r = d.Report(s*vds, s*m, 0, 0)
		if r.GmID > 11 {
			lo = m
		} else {
			hi = m
		}
	}
	return r.GM / r.GDS
}
