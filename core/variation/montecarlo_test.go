package variation

import (
	"encoding/json"
	"math"
	"reflect"
	"strings"
	"testing"

	"stagewright/core/design"
	"stagewright/core/device"
)

// relSE4 is four standard errors of a sample standard deviation, relative,
// for n normal samples: 4/√(2n) (common practice).
func relSE4(n int) float64 { return 4 / math.Sqrt(2*float64(n)) }

// TestMonteCarloNominal turns every spread off: each sample is the nominal
// design, so the statistics must equal design.Evaluate's figures.
func TestMonteCarloNominal(t *testing.T) {
	for _, frag := range testFragments {
		d := decode(t, frag+"&ppd=20&hold=ideal")
		res := design.Evaluate(d)
		r, err := MonteCarloWith(d, Options{Samples: 5, Seed: 1, NoGlobal: true, NoMismatch: true})
		if err != nil {
			t.Fatalf("%s: %v", frag, err)
		}
		if r.Failed != 0 || r.Gain.N != 5 {
			t.Fatalf("%s: %d failed", frag, r.Failed)
		}
		// Warm-started Newton stops within VoltTol = 1 nV of the same
		// solution, so the figures agree to about 1e-7 relative; allow 1e-6.
		near := func(what string, got design.Num, want design.Num, tol float64) {
			if math.Abs(float64(got-want)) > tol*math.Abs(float64(want)) {
				t.Errorf("%s: %s = %.9g, evaluation %.9g", frag, what, float64(got), float64(want))
			}
		}
		near("gain", r.Gain.Mean, res.Midband.Gain, 1e-6)
		near("id", r.ID.Mean, res.OP.ID, 1e-6)
		near("vout", r.VOut.Mean, res.Nodes["out"], 1e-6)
		// f3db: the sweep's interpolation error at 20 points per decade, as
		// in TestF3dBAgainstSweepAndRoots.
		h := math.Ln10 / 20
		near("f3db", r.F3dB.Mean, res.AC.F3dB, h*h/4)
		if r.Gain.SD > 1e-9*design.Num(math.Abs(float64(r.Gain.Mean))) {
			t.Errorf("%s: gain spread %g with every spread off", frag, float64(r.Gain.SD))
		}
	}
}

// TestMonteCarloGlobalVT checks the drawn threshold shift against its
// known normal law: with mismatch off, ΔVT of M1 is N(0, SigmaVT); mean
// within 4σ/√n and σ within 4/√(2n) relative (common practice).
func TestMonteCarloGlobalVT(t *testing.T) {
	d := decode(t, testFragments[1]+"&hold=ideal")
	const n = 4000
	r, err := MonteCarloWith(d, Options{Samples: n, Seed: 7, NoMismatch: true})
	if err != nil {
		t.Fatal(err)
	}
	pr, _ := device.Builtin("d180")
	sigma := pr.Spread(device.NMOS).SigmaVT
	if m := math.Abs(float64(r.DVT1.Mean)); m > 4*sigma/math.Sqrt(n) {
		t.Errorf("mean ΔVT %g beyond 4σ/√n = %g", m, 4*sigma/math.Sqrt(n))
	}
	if e := math.Abs(float64(r.DVT1.SD)-sigma) / sigma; e > relSE4(n) {
		t.Errorf("σ(ΔVT) = %g, want %g (rel %g > %g)", float64(r.DVT1.SD), sigma, e, relSE4(n))
	}
	// Bias id holds the drain current: a global shift moves the input
	// level, not ID (the servo's tolerance is 1e-9 relative).
	if float64(r.ID.SD) > 1e-6*float64(r.ID.Mean) {
		t.Errorf("bias id: σ(ID) = %g of %g", float64(r.ID.SD), float64(r.ID.Mean))
	}
}

// TestPelgromScaling checks Pelgrom's law (Pelgrom, Duinmaijer, Welbers,
// IEEE JSSC 1989): with globals and β mismatch off, σ(ΔVT) = AVT/√(W·L)
// and it halves when W·L is quadrupled (W and L both doubled, so W/L and
// the current stay about the same). Measured on the drawn ΔVT and on ID of
// a bias-vin common-source stage, where σ(ID) = |∂ID/∂VT0|·σ(ΔVT) to first
// order; ∂ID/∂VT0 comes from a central difference of two full evaluations
// with an n.vt0 override. Bounds: four standard errors of a standard
// deviation, 4/√(2n) = 2.8 % at n = 10,000 (√2 times that for a ratio of
// two independent runs), plus 1 % for the first-order ID expansion, whose
// relative error is about σ(ΔVT)·|∂²ID/∂VT²|/|∂ID/∂VT| ≈ σ/(n·UT) < 1 %.
func TestPelgromScaling(t *testing.T) {
	const n = 10000
	base := "v=1&stage=cs&pol=n&bias=vin&vin=0.75&load=r&rd=5k"
	pr, _ := device.Builtin("d180")
	avt := pr.Spread(device.NMOS).AVT
	type run struct{ sdVT, sdID, slope float64 }
	var runs [2]run
	for i, geo := range []struct {
		w, l string
		wl   float64
		seed int64
	}{{"4u", "0.5u", 4e-6 * 0.5e-6, 11}, {"8u", "1u", 8e-6 * 1e-6, 12}} {
		d := decode(t, base+"&w="+geo.w+"&l="+geo.l)
		r, err := MonteCarloWith(d, Options{Samples: n, Seed: geo.seed, NoGlobal: true, NoBetaMismatch: true})
		if err != nil {
			t.Fatal(err)
		}
		if r.Failed != 0 {
			t.Fatalf("%d samples failed", r.Failed)
		}
		want := avt / math.Sqrt(geo.wl)
		if e := math.Abs(float64(r.DVT1.SD)-want) / want; e > relSE4(n) {
			t.Errorf("W·L = %g: σ(ΔVT) = %g, Pelgrom %g (rel %g > %g)", geo.wl, float64(r.DVT1.SD), want, e, relSE4(n))
		}
		idAt := func(dv float64) float64 {
			dd := d
			dd.Overrides = []design.Override{{Key: "n.thresh", Value: pr.N.VT0 + dv}}
			res := design.Evaluate(dd)
			if !res.OK {
				t.Fatal(res.Error)
			}
			return float64(res.OP.ID)
		}
		const dv = 1e-4 // V: central difference error ∝ dv², far below the bounds
		slope := (idAt(dv) - idAt(-dv)) / (2 * dv)
		if e := math.Abs(float64(r.ID.SD)-math.Abs(slope)*want) / (math.Abs(slope) * want); e > relSE4(n)+0.01 {
			t.Errorf("W·L = %g: σ(ID) = %g, |∂ID/∂VT|·σVT = %g (rel %g)", geo.wl, float64(r.ID.SD), math.Abs(slope)*want, e)
		}
		runs[i] = run{float64(r.DVT1.SD), float64(r.ID.SD), math.Abs(slope)}
	}
	ratioTol := math.Sqrt2 * relSE4(n)
	if q := runs[1].sdVT / runs[0].sdVT; math.Abs(q-0.5) > 0.5*ratioTol {
		t.Errorf("σ(ΔVT) ratio at 4× area = %.4f, want 0.5 ± %.3f", q, 0.5*ratioTol)
	}
	want := 0.5 * runs[1].slope / runs[0].slope
	if q := runs[1].sdID / runs[0].sdID; math.Abs(q-want) > want*(ratioTol+0.01) {
		t.Errorf("σ(ID) ratio at 4× area = %.4f, want %.4f (0.5 times the slope ratio)", q, want)
	}
}

// TestMonteCarloReproducible: the same seed gives the same result, another
// seed another one.
func TestMonteCarloReproducible(t *testing.T) {
	d := decode(t, testFragments[2])
	a, err := MonteCarlo(d, 300, 5, nil)
	if err != nil {
		t.Fatal(err)
	}
	b, _ := MonteCarlo(d, 300, 5, nil)
	c, _ := MonteCarlo(d, 300, 6, nil)
	// Compared as JSON (every number at full precision), since a NaN
	// field, such as the yield without targets, is never DeepEqual.
	ja, _ := json.Marshal(a)
	jb, _ := json.Marshal(b)
	if string(ja) != string(jb) || !reflect.DeepEqual(a.Gain, b.Gain) {
		t.Error("the same seed gave different results")
	}
	if a.Gain.Mean == c.Gain.Mean || reflect.DeepEqual(a.Gain.Hist, c.Gain.Hist) {
		t.Error("different seeds gave the same gain statistics")
	}
}

func TestMonteCarloYield(t *testing.T) {
	d := decode(t, testFragments[0])
	const n = 400
	r0, _ := MonteCarlo(d, n, 1, nil)
	g := math.Abs(float64(r0.Gain.Mean))
	for _, c := range []struct {
		name       string
		t          Targets
		lo, hi     float64 // accepted yield range
		covered    string
		notCovered string
	}{
		{"impossible gain", Targets{MinGain: 1e6}, 0, 0, "gain", ""},
		{"trivial gain", Targets{MinGain: 1e-9}, 1, 1, "gain", ""},
		// The median gain: about half pass, 4 standard errors of a binomial
		// proportion (√(0.25/n) = 2.5 %) either side.
		{"mean gain", Targets{MinGain: g}, 0.4, 0.6, "gain", ""},
		{"power and noise", Targets{MaxPower: 1, MaxNoise: 1e-3, MinSwing: 0.1}, 1, 1, "power", "swing,noise"},
		{"tiny idd", Targets{MaxIDD: 1e-12}, 0, 0, "idd", ""},
		{"f3db above range", Targets{MinF3dB: 1e15}, 0, 0, "f3db", ""},
		{"margin", Targets{MinMargin: -10, MinGBW: 1}, 1, 1, "gbw,margin", ""},
	} {
		r, err := MonteCarlo(d, n, 1, &c.t)
		if err != nil {
			t.Fatal(err)
		}
		y := float64(r.Yield)
		if !(y >= c.lo && y <= c.hi) {
			t.Errorf("%s: yield %g outside [%g, %g]", c.name, y, c.lo, c.hi)
		}
		if got := strings.Join(r.Covered, ","); got != c.covered {
			t.Errorf("%s: covered %q, want %q", c.name, got, c.covered)
		}
		if got := strings.Join(r.NotCovered, ","); got != c.notCovered {
			t.Errorf("%s: not covered %q, want %q", c.name, got, c.notCovered)
		}
	}
	if r0.Yield.Finite() {
		t.Error("yield without targets should be null")
	}
}

func TestMonteCarloProgressAndCancel(t *testing.T) {
	d := decode(t, testFragments[1])
	var calls []int
	r, err := MonteCarloWith(d, Options{Samples: 1000, Seed: 1, Progress: func(done, total int) bool {
		calls = append(calls, done)
		if total != 1000 {
			t.Errorf("total %d", total)
		}
		return done < 30
	}})
	if err != nil {
		t.Fatal(err)
	}
	if !r.Canceled || r.Samples != 30 || len(calls) != 3 || r.ID.N+r.Failed != 30 {
		t.Errorf("canceled %v after %d samples, calls %v", r.Canceled, r.Samples, calls)
	}
	calls = calls[:0]
	r, _ = MonteCarloWith(d, Options{Samples: 250, Seed: 1, Progress: func(done, total int) bool { calls = append(calls, done); return true }})
	if r.Canceled || r.Samples != 250 || calls[len(calls)-1] != 250 {
		t.Errorf("full run: canceled %v, %d samples, last call %v", r.Canceled, r.Samples, calls[len(calls)-1])
	}
	for i := 1; i < len(calls); i++ {
		if calls[i] <= calls[i-1] {
			t.Fatalf("progress not increasing: %v", calls)
		}
	}
}

func TestMonteCarloErrors(t *testing.T) {
	good := decode(t, testFragments[0])
	bad := good
	bad.W = -1
	noOP := decode(t, "v=1&stage=cs&pol=n&bias=id&id=10m&load=r&rd=100k")
	for _, c := range []struct {
		name string
		d    design.Design
		n    int
		want string
	}{
		{"negative n", good, -1, "samples = -1"},
		{"too many", good, MaxSamples + 1, "[0, 10000]"},
		{"invalid design", bad, 10, "w"},
		{"no operating point", noOP, 10, "nominal design has no operating point"},
	} {
		_, err := MonteCarlo(c.d, c.n, 1, nil)
		if err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%s: error %v, want it to mention %q", c.name, err, c.want)
		}
	}
	r, err := MonteCarlo(good, 0, 1, &Targets{MinGain: 1})
	if err != nil || r.Samples != 0 || r.Yield.Finite() {
		t.Errorf("zero samples: %v, %+v", err, r)
	}
}

// TestMonteCarloEveryKindIsFinite runs every stage, polarity, load and bias
// mode: no panic, and the JSON carries no NaN or Inf (it would not encode).
func TestMonteCarloEveryKindIsFinite(t *testing.T) {
	for _, st := range []string{"cs", "cg", "sf"} {
		for _, pol := range []string{"n", "p"} {
			for _, load := range []string{"r", "active", "diode"} {
				if st == "sf" && load == "diode" {
					continue
				}
				for _, bias := range []string{"id", "gmid", "vin"} {
					frag := "v=1&stage=" + st + "&pol=" + pol + "&load=" + load + "&bias=" + bias
					d := decode(t, frag)
					r, err := MonteCarlo(d, 50, 2, &Targets{MinGain: 0.5, MinF3dB: 1e6, MinMargin: 0.05})
					if err != nil {
						if bias == "vin" || !strings.Contains(err.Error(), "operating point") {
							t.Errorf("%s: %v", frag, err)
						}
						continue
					}
					if _, err := json.Marshal(r); err != nil {
						t.Errorf("%s: %v", frag, err)
					}
					if r.Samples != 50 || r.Failed > 25 {
						t.Errorf("%s: %d samples, %d failed", frag, r.Samples, r.Failed)
					}
				}
			}
		}
	}
}
