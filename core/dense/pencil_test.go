package dense

import (
	"math"
	"math/cmplx"
	"testing"
)

func TestPencilRootsDiagonal(t *testing.T) {
	// det(G + sC) = Π (g_i + s·c_i): roots −g_i/c_i (direct algebra).
	gs := []float64{1e-3, 2e-4, 5e-3}
	cs := []float64{1e-12, 1e-12, 1e-13}
	n := len(gs)
	g, c := make([]float64, n*n), make([]float64, n*n)
	for i := range gs {
		g[i*n+i], c[i*n+i] = gs[i], cs[i]
	}
	got, err := PencilRoots(n, g, c)
	if err != nil {
		t.Fatal(err)
	}
	want := []float64{-2e8, -1e9, -5e10} // sorted by magnitude
	if len(got) != len(want) {
		t.Fatalf("got %d roots %v, want %v", len(got), got, want)
	}
	for i, w := range want {
		// Eigenvalues of a diagonal M are exact up to the rounding of
		// c_i/g_i and its reciprocal: a few eps.
		if d := cmplx.Abs(got[i] - complex(w, 0)); d > 1e-13*math.Abs(w) {
			t.Errorf("root %d = %v, want %g", i, got[i], w)
		}
	}
}

func TestPencilRootsQuadratic(t *testing.T) {
	// G = [[g1, g12],[g21, g2]], C = diag(c1, c2):
	// det = c1·c2·s² + (g1·c2 + g2·c1)·s + (g1·g2 − g12·g21), solved by the
	// quadratic formula (written by hand here).
	g := []float64{2, -1, 3, 1}
	c := []float64{1, 0, 0, 0.5}
	qa, qb, qc := 1*0.5, 2*0.5+1*1, 2*1-(-1*3.0)
	disc := complex(qb*qb-4*qa*qc, 0)
	r1 := (complex(-qb, 0) - cmplx.Sqrt(disc)) / complex(2*qa, 0)
	r2 := (complex(-qb, 0) + cmplx.Sqrt(disc)) / complex(2*qa, 0)
	got, err := PencilRoots(2, g, c)
	if err != nil {
		t.Fatal(err)
	}
	if len(got) != 2 {
		t.Fatalf("got %v, want 2 roots", got)
	}
	// Complex pair: order −im then +im.
	lo, hi := r1, r2
	if imag(lo) > imag(hi) {
		lo, hi = hi, lo
	}
	for i, w := range []complex128{lo, hi} {
		// Well-conditioned 2×2 problem with O(1) entries: 1e-13 is a few
		// hundred eps.
		if d := cmplx.Abs(got[i] - w); d > 1e-13*cmplx.Abs(w) {
			t.Errorf("root %d = %v, want %v", i, got[i], w)
		}
	}
}
