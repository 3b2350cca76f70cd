package stage

import (
	"math"
	"testing"

	"stagewright/core/circuit"
	"stagewright/core/device"
)

// The two patterns of stages biased by their input level that Newton–Raphson
// with gmin and source stepping misses, though each has an operating point:
// one device strongly on against another in deep weak inversion or cut off,
// the branch current femtoamps to picoamps, the output within a hair of a
// rail. Each spec is a draw of TestRandomInputLevelStages, to all its digits:
// Newton misses these at a knife's edge, and the same stage with its widths
// rounded to four digits converges by plain Newton.
//
// Each case is checked four ways: Newton alone fails on it (so the case
// exercises the fallback), Solve finds a point, that point passes the KCL
// check, and its output agrees with a plain bisection written here from the
// device model alone (device.Current, no circuit code) to 1e-9 V. The
// bisection solves the same node equations as the engine, the 1e-12 S gmin
// shunt from every free node to ground included (here it moves the output
// by less than the tolerance, but it is part of the equations solved).
func TestHardInputLevelCases(t *testing.T) {
	d65, _ := device.Builtin("d65")
	const gmin = 1e-12 // circuit.Options' default shunt
	cases := []struct {
		name string
		spec Spec
	}{
		{
			// A 366 µm/94 nm input device on against a 3.1 µm/4.8 µm PMOS
			// current source whose gate is 0.228 V past its rail (deep weak
			// inversion) at −18 °C: the output sits nanovolts above ground.
			name: "wide input device against a current source barely past its rail",
			spec: Spec{Kind: CS, Pol: device.NMOS, Load: Active, Bias: ByVin, Process: d65, VDD: d65.VDD,
				TempK: 273.15 - 18, W: 366.43196700278982e-6, L: 94.328205069549821e-9, Vin: 0.625, VOut: d65.VDD / 2,
				LoadW: 3.1012540587951008e-6, LoadL: 4.8055891260477904e-6, LoadVB: 0.228, RSig: 1.7534884675469955, RL: math.Inf(1)},
		},
		{
			// A common-gate NMOS with its gate 0.48 V below its source (held
			// off) and a 181 µm/89 nm PMOS current source on hard: the load
			// pulls the output into VDD.
			name: "common-gate device held off, the load pulling the output into its rail",
			spec: Spec{Kind: CG, Pol: device.NMOS, Load: Active, Bias: ByVin, Process: d65, VDD: d65.VDD,
				TempK: 273.15 + 5, W: 7.5299829741328124e-6, L: 81.369038002194845e-9, Vin: 1.156, VG: 0.672, VOut: d65.VDD / 2,
				LoadW: 181.26171802561222e-6, LoadL: 88.953037790218349e-9, LoadVB: 1.166, RSig: 15.353072533561773, RL: math.Inf(1)},
		},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			s := tc.spec
			b, err := Build(s)
			if err != nil {
				t.Fatal(err)
			}
			if _, err := b.C.SolveDC(b.Guess, circuit.Options{NoBracket: true}); err == nil {
				t.Errorf("Newton with gmin and source stepping solves this case: it no longer exercises the fallback (pick a harder draw)")
			}
			sol, err := Solve(s)
			if err != nil {
				t.Fatalf("Solve: %v", err)
			}
			if err := sol.C.CheckKCL(sol.OP, circuit.Options{}); err != nil {
				t.Errorf("KCL: %v", err)
			}
			got, _ := sol.Node("out")
			want := bisectChain(t, s, gmin)
			// 1e-9 V: the engine's brackets close to 1e-17 V and the
			// bisection here to 1e-13 V, so any larger gap is a different
			// root or different equations.
			if math.Abs(got-want) > 1e-9 {
				t.Errorf("output %.12g V by %s, %.12g V by bisection of the device equations: off by %.3g V (tolerance 1e-9 V)",
					got, sol.OP.Method, want, got-want)
			}
			t.Logf("output %.9g V (method %s)", got, sol.OP.Method)
		})
	}
}

// bisectChain solves an NMOS common-source or common-gate stage with a PMOS
// current-source load by bisection on its node equations, from the device
// model alone: the current leaving the output,
//
//	gmin·v_out + I_D1 + I_D2 = 0,
//
// rises with v_out (each drain current flows into its drain and grows as the
// drain rises; the PMOS load's I_D2 is negative). For the common gate, the
// source node (M1's source, fed through RSIG) is solved inside each trial
// v_out by a bisection of its own, (v_in − vin)/RSIG + gmin·v_in − I_D1 = 0,
// which rises with v_in; for the common source the gate draws no current, so
// v_in = vin/(1 + gmin·RSIG).
func bisectChain(t *testing.T, s Spec, gmin float64) float64 {
	t.Helper()
	m1, err := device.New(device.NMOS, s.Process.ParamsAt(device.NMOS, s.L), s.Process.TNom, s.W, s.L, s.TempK)
	if err != nil {
		t.Fatal(err)
	}
	m2, err := device.New(device.PMOS, s.Process.ParamsAt(device.PMOS, s.LoadL), s.Process.TNom, s.LoadW, s.LoadL, s.TempK)
	if err != nil {
		t.Fatal(err)
	}
	vdd, bias := s.VDD, s.VDD-s.LoadVB
	bisect := func(f func(float64) float64, lo, hi float64) float64 {
		if f(lo) > 0 || f(hi) < 0 {
			t.Fatalf("bisection: no sign change on [%g, %g]", lo, hi)
		}
		for hi-lo > 1e-13 {
			mid := (lo + hi) / 2
			if f(mid) > 0 {
				hi = mid
			} else {
				lo = mid
			}
		}
		return (lo + hi) / 2
	}
	vin := func(out float64) float64 {
		if s.Kind == CS {
			return s.Vin / (1 + gmin*s.RSig)
		}
		return bisect(func(v float64) float64 {
			return (v-s.Vin)/s.RSig + gmin*v - m1.Current(out, s.VG, v, 0).ID
		}, -0.1, vdd+0.1)
	}
	return bisect(func(out float64) float64 {
		in := vin(out)
		var i1 float64
		if s.Kind == CS {
			i1 = m1.Current(out, in, 0, 0).ID
		} else {
			i1 = m1.Current(out, s.VG, in, 0).ID
		}
		return gmin*out + i1 + m2.Current(out, bias, vdd, vdd).ID
	}, -0.1, vdd+0.1)
}
