package circuit

import (
	"math/cmplx"
	"math/rand"
	"testing"
)

// The polynomial pole/zero solver for small networks agrees with the
// general eigen-solver (dense.PencilRoots, Hessenberg QR) on random
// networks with real and complex natural frequencies spread over several
// decades. Both are accurate to rounding times the conditioning of each
// root; 1e-7 relative covers roots six decades apart.
func TestSmallRootsMatchEigen(t *testing.T) {
	rng := rand.New(rand.NewSource(11))
	for trial := 0; trial < 500; trial++ {
		n := 1 + rng.Intn(3)
		nw := randomNetwork(rng, n, 0.5, 2e-3) // strong feedback gives complex pairs
		nw.Out = rng.Intn(n)
		nw.GSig[rng.Intn(n)] = -1e-3
		fast := *nw
		slow := *nw
		slow.eigenOnly = true
		for _, what := range []string{"poles", "zeros"} {
			var a, b []complex128
			var ea, eb error
			if what == "poles" {
				a, ea = fast.Poles()
				b, eb = slow.Poles()
			} else {
				a, ea = fast.Zeros()
				b, eb = slow.Zeros()
			}
			if (ea == nil) != (eb == nil) {
				t.Fatalf("trial %d %s: errors %v / %v", trial, what, ea, eb)
			}
			if len(a) != len(b) {
				t.Fatalf("trial %d n=%d %s: polynomial %v, eigen %v", trial, n, what, a, b)
			}
			for i := range a {
				if cmplx.Abs(a[i]-b[i]) > 1e-7*cmplx.Abs(b[i]) {
					t.Fatalf("trial %d n=%d %s %d: polynomial %v, eigen %v", trial, n, what, i, a[i], b[i])
				}
			}
		}
	}
}

// Roots of polynomials written by hand: (s+1)(s+1e5)(s+1e9), and a complex
// pair s² + 2s + 5 = 0 → −1 ± 2j times (s + 3).
func TestSmallRootsKnown(t *testing.T) {
	p := poly{1e14, 1e5 + 1e9 + 1e14, 1 + 1e5 + 1e9, 1}
	r, ok := smallRoots(p, 1e16)
	want := []complex128{-1, -1e5, -1e9}
	if !ok || len(r) != 3 {
		t.Fatalf("%v %v", r, ok)
	}
	for i := range want {
		if cmplx.Abs(r[i]-want[i]) > 1e-12*cmplx.Abs(want[i]) {
			t.Errorf("root %d = %v, want %v", i, r[i], want[i])
		}
	}
	// (s² + 2s + 5)(s + 3) = s³ + 5s² + 11s + 15
	r, ok = smallRoots(poly{15, 11, 5, 1}, 1e3)
	want = []complex128{complex(-1, -2), complex(-1, 2), -3}
	if !ok || len(r) != 3 {
		t.Fatalf("%v %v", r, ok)
	}
	for i := range want {
		if cmplx.Abs(r[i]-want[i]) > 1e-13 {
			t.Errorf("root %d = %v, want %v", i, r[i], want[i])
		}
	}
}
