package dense

import (
	"math"
	"math/cmplx"
	"math/rand/v2"
	"testing"
)

func randomCMatrix(rng *rand.Rand, n int) []complex128 {
	a := make([]complex128, n*n)
	for i := range a {
		a[i] = complex(rng.Float64()*2-1, rng.Float64()*2-1)
	}
	return a
}

// realForm returns the 2n×2n real matrix [[Re A, −Im A], [Im A, Re A]],
// which acts on [Re x; Im x] as A acts on x.
func realForm(n int, a []complex128) []float64 {
	m := 2 * n
	r := make([]float64, m*m)
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			v := a[i*n+j]
			r[i*m+j] = real(v)
			r[i*m+n+j] = -imag(v)
			r[(n+i)*m+j] = imag(v)
			r[(n+i)*m+n+j] = real(v)
		}
	}
	return r
}

func transposeC(n int, a []complex128) []complex128 {
	t := make([]complex128, n*n)
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			t[j*n+i] = a[i*n+j]
		}
	}
	return t
}

func TestCLUSolveAgainstRealForm(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 6))
	var f CLU
	for n := 1; n <= 12; n++ {
		for trial := 0; trial < 20; trial++ {
			a := randomCMatrix(rng, n)
			b := randomCMatrix(rng, n)[:n]
			if err := f.Factorize(n, a); err != nil {
				t.Fatalf("n=%d trial %d: %v", n, trial, err)
			}
			for _, trans := range []bool{false, true} {
				// Reference: gonum's real LU on the 2n×2n real form of A
				// (or of the plain transpose Aᵀ).
				op := a
				if trans {
					op = transposeC(n, a)
				}
				rb := make([]float64, 2*n)
				for i, v := range b {
					rb[i], rb[n+i] = real(v), imag(v)
				}
				rx, cond := gonumSolve(t, 2*n, realForm(n, op), rb, false)
				got := make([]complex128, n)
				if trans {
					f.SolveTrans(got, b)
				} else {
					f.Solve(got, b)
				}
				var d, scale float64
				for i := range got {
					w := complex(rx[i], rx[n+i])
					d = math.Max(d, cmplx.Abs(got[i]-w))
					scale = math.Max(scale, cmplx.Abs(w))
				}
				// The real form has the same singular values as A, so its
				// condition number bounds both errors; complex arithmetic adds
				// a few eps per operation, covered by using order 2n.
				if tol := solveTol(2*n, cond) * scale; d > tol {
					t.Errorf("n=%d trial %d trans=%v: max |x − x_ref| = %.3g, want ≤ %.3g (cond %.3g)", n, trial, trans, d, tol, cond)
				}
			}
		}
	}
}

func TestCLUSingular(t *testing.T) {
	var f CLU
	// Second row is (1+2i)·first row.
	a := []complex128{1, 1i, (1 + 2i), (1 + 2i) * 1i}
	if err := f.Factorize(2, a); err == nil {
		t.Fatalf("Factorize of a rank-1 matrix succeeded, want an error")
	}
}
