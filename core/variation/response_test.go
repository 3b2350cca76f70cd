package variation

import (
	"math"
	"math/cmplx"
	"math/rand"
	"testing"

	"stagewright/core/circuit"
	"stagewright/core/dense"
	"stagewright/core/design"
	"stagewright/core/stage"
)

// testFragments are demo designs (our own invention) across stages,
// polarities, loads, bias modes and both processes.
var testFragments = []string{
	"v=1&stage=cs&pol=n&bias=vin&vin=0.7&load=r&rd=10k&cl=1p",
	"v=1&stage=cs&pol=n&bias=id&id=100u&load=r&rd=10k",
	"v=1&stage=cs&pol=p&bias=id&id=50u&load=active&vout=0.9",
	"v=1&stage=cg&pol=n&bias=id&id=100u&load=r&rd=5k",
	"v=1&stage=sf&pol=n&bias=id&id=100u&load=active",
	"v=1&stage=cs&pol=n&bias=gmid&gmid=15&id=20u&load=diode",
	"v=1&proc=d65&stage=cs&pol=n&bias=id&id=50u&load=r&rd=8k&cl=200f",
}

func decode(tb testing.TB, frag string) design.Design {
	tb.Helper()
	d, err := design.Decode(frag)
	if err != nil {
		tb.Fatalf("%s: %v", frag, err)
	}
	return d
}

// network solves and linearizes a design the way Evaluate does.
func network(tb testing.TB, d design.Design) *circuit.Network {
	tb.Helper()
	spec, err := d.Spec()
	if err != nil {
		tb.Fatal(err)
	}
	sol, err := stage.Solve(spec)
	if err != nil {
		tb.Fatal(err)
	}
	nw, err := sol.C.Linearize(sol.OP, sol.Ports, spec.TempK)
	if err != nil {
		tb.Fatal(err)
	}
	return nw
}

// TestResponseCramerMatchesLU checks the closed-form 3×3 solve against the
// project's complex LU with partial pivoting on random diagonally dominant
// networks. Tolerance 1e-10 relative: both are exact algebra and the
// matrices are well conditioned (diagonal dominance bounds the condition
// number by about 10), so only rounding of a few dozen operations differs.
func TestResponseCramerMatchesLU(t *testing.T) {
	rng := rand.New(rand.NewSource(3))
	var r response
	var lu dense.CLU
	for trial := 0; trial < 300; trial++ {
		n := 1 + trial%3
		nw := &circuit.Network{N: n, G: make([]float64, n*n), C: make([]float64, n*n),
			GSig: make([]float64, n), CSig: make([]float64, n), Out: trial % n}
		for i := 0; i < n; i++ {
			for j := 0; j < n; j++ {
				nw.G[i*n+j] = rng.NormFloat64() * 1e-4
				nw.C[i*n+j] = rng.NormFloat64() * 1e-14
			}
			nw.G[i*n+i] = 1e-3 * (float64(n) + rng.Float64())
			nw.C[i*n+i] = 1e-13 * (float64(n) + rng.Float64())
			nw.GSig[i] = -rng.Float64() * 1e-3
			nw.CSig[i] = -rng.Float64() * 1e-14
		}
		for _, f := range []float64{0, 1e3, 1e8, 1e10} {
			got, ok := r.at(nw, f)
			if !ok {
				t.Fatalf("trial %d f %g: singular", trial, f)
			}
			w := 2 * math.Pi * f
			y := make([]complex128, n*n)
			b := make([]complex128, n)
			for i := range y {
				y[i] = complex(nw.G[i], w*nw.C[i])
			}
			for i := range b {
				b[i] = complex(-nw.GSig[i], -w*nw.CSig[i])
			}
			if err := lu.Factorize(n, y); err != nil {
				t.Fatal(err)
			}
			lu.Solve(b, b)
			if want := b[nw.Out]; cmplx.Abs(got-want) > 1e-10*cmplx.Abs(want) {
				t.Errorf("trial %d n %d f %g: H = %v, LU gives %v", trial, n, f, got, want)
			}
		}
	}
}

// TestF3dBAgainstSweepAndRoots compares the per-sample f3db with (1) the
// full sweep of design.Evaluate and (2) the rational function built from
// Evaluate's exact poles and zeros (generalized eigenvalues, an
// independent algorithm), which must give |H|/|H(0)| = 1/√2 there.
func TestF3dBAgainstSweepAndRoots(t *testing.T) {
	const ppd = 20
	// The sweep interpolates dB linearly in ln f between points h = ln10/ppd
	// apart; the error of linear interpolation is at most h²/8·|y''| and
	// near a −3 dB corner |y''|/|y'| ≤ 1, so the relative error in f is at
	// most h²/8 ≈ 1.7e-3. Allow h²/4.
	h := math.Ln10 / ppd
	sweepTol := h * h / 4
	for _, frag := range testFragments {
		d := decode(t, frag+"&ppd=20")
		res := design.Evaluate(d)
		if !res.OK {
			t.Fatalf("%s: %v", frag, res.Error)
		}
		nw := network(t, d)
		var r response
		h0, _ := r.at(nw, 0)
		// Midband gain from the real LU of the conductance matrix: 1e-12
		// relative, rounding only.
		if g := float64(res.Midband.Gain); math.Abs(real(h0)-g) > 1e-12*math.Abs(g) {
			t.Errorf("%s: H(0) = %g, midband gain %g", frag, real(h0), g)
		}
		f3, ok := r.f3dB(nw, real(h0), d.FMin, d.FMax)
		want := float64(res.AC.F3dB)
		if !ok || !res.AC.F3dB.Finite() {
			t.Fatalf("%s: f3db found %v (%g), sweep %v", frag, ok, f3, want)
		}
		if math.Abs(f3-want) > sweepTol*want {
			t.Errorf("%s: f3db = %.6g Hz, sweep gives %.6g Hz (rel %.2g > %.2g)", frag, f3, want, math.Abs(f3-want)/want, sweepTol)
		}
		// Rational function from the roots: H(s)/H(0) = Π(1 − s/z)/Π(1 − s/p).
		// Tolerance 1e-6: the roots carry the pencil solver's relative
		// accuracy of about 1e-9 per root, summed over a handful of them,
		// and f3db is converged to 1e-10.
		s := complex(0, 2*math.Pi*f3)
		ratio := complex(1, 0)
		for _, z := range res.Zeros {
			ratio *= 1 - s/(2*math.Pi*complex(float64(z.Re), float64(z.Im)))
		}
		for _, p := range res.Poles {
			ratio /= 1 - s/(2*math.Pi*complex(float64(p.Re), float64(p.Im)))
		}
		if got := cmplx.Abs(ratio); math.Abs(got-math.Sqrt(0.5)) > 1e-6 {
			t.Errorf("%s: |H/H0| from poles and zeros at f3db = %.9f, want 1/√2", frag, got)
		}
	}
}

func TestF3dBNoCrossing(t *testing.T) {
	d := decode(t, testFragments[0])
	nw := network(t, d)
	var r response
	h0, _ := r.at(nw, 0)
	// A range that ends far below the corner has no crossing.
	if f, ok := r.f3dB(nw, real(h0), 1, 10); ok {
		t.Errorf("crossing found at %g Hz below 10 Hz", f)
	}
	for _, bad := range [][3]float64{{0, 1, 10}, {real(h0), 0, 10}, {real(h0), 10, 1}, {math.NaN(), 1, 10}} {
		if _, ok := r.f3dB(nw, bad[0], bad[1], bad[2]); ok {
			t.Errorf("f3dB(%v) reported a crossing", bad)
		}
	}
}

// BenchmarkF3dB measures one per-sample f3db search; it must not allocate.
func BenchmarkF3dB(b *testing.B) {
	d := decode(b, testFragments[0])
	nw := network(b, d)
	var r response
	h0, _ := r.at(nw, 0)
	b.ReportAllocs()
	for b.Loop() {
		if _, ok := r.f3dB(nw, real(h0), d.FMin, d.FMax); !ok {
			b.Fatal("no f3db")
		}
	}
}
