package dense

import (
	"errors"
	"math"
	"math/cmplx"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/mat"
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

func TestCLUReconstruction(t *testing.T) {
	rng := rand.New(rand.NewPCG(11, 12))
	var f CLU
	for n := 1; n <= 12; n++ {
		a := randomCMatrix(rng, n)
		if err := f.Factorize(n, a); err != nil {
			t.Fatalf("n=%d: %v", n, err)
		}
		lu := make([]complex128, n*n)
		for i := 0; i < n; i++ {
			for j := 0; j < n; j++ {
				var s complex128
				for k := 0; k <= min(i, j); k++ {
					l := complex128(1)
					if k < i {
						l = f.a[i*n+k]
					}
					s += l * f.a[k*n+j]
				}
				lu[i*n+j] = s
			}
		}
		for k := n - 1; k >= 0; k-- {
			if p := f.piv[k]; p != k {
				for j := 0; j < n; j++ {
					lu[k*n+j], lu[p*n+j] = lu[p*n+j], lu[k*n+j]
				}
			}
		}
		// As for the real case (backward error ~ n·eps·ρ·max|a|), with a
		// factor 2 more for complex multiply-adds and |Re|+|Im| pivoting
		// (multipliers up to √2 in modulus).
		var d float64
		for i := range lu {
			d = math.Max(d, cmplx.Abs(lu[i]-a[i]))
		}
		if tol := 16 * float64(n) * eps; d > tol {
			t.Errorf("n=%d: max |P⁻¹·L·U − A| = %.3g, want ≤ %.3g", n, d, tol)
		}
	}
}

func TestCLURCond(t *testing.T) {
	rng := rand.New(rand.NewPCG(13, 14))
	var f CLU
	for n := 1; n <= 12; n++ {
		for trial := 0; trial < 10; trial++ {
			a := randomCMatrix(rng, n)
			if err := f.Factorize(n, a); err != nil {
				t.Fatal(err)
			}
			// Reference: A⁻¹ read off gonum's inverse of the real form,
			// which is the real form of A⁻¹.
			m := 2 * n
			rf := mat.NewDense(m, m, realForm(n, a))
			var inv mat.Dense
			if err := inv.Inverse(rf); err != nil {
				t.Fatal(err)
			}
			var na, ni float64
			for j := 0; j < n; j++ {
				var sa, si float64
				for i := 0; i < n; i++ {
					sa += cmplx.Abs(a[i*n+j])
					si += cmplx.Abs(complex(inv.At(i, j), inv.At(n+i, j)))
				}
				na, ni = math.Max(na, sa), math.Max(ni, si)
			}
			checkRCond(t, "complex random", f.RCond(), 1/(na*ni))
		}
	}
}

func TestCLUErrors(t *testing.T) {
	tests := []struct {
		name   string
		n      int
		a      []complex128
		target error
	}{
		{"rank 1 (row 2 = (1+2i)·row 1)", 2, []complex128{1, 1i, 1 + 2i, (1 + 2i) * 1i}, ErrSingular},
		{"zero", 1, []complex128{0}, ErrSingular},
		{"NaN imaginary part", 2, []complex128{1, 0, 0, complex(1, math.NaN())}, ErrNotFinite},
		{"Inf real part", 1, []complex128{complex(math.Inf(-1), 0)}, ErrNotFinite},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			var f CLU
			if err := f.Factorize(tt.n, tt.a); !errors.Is(err, tt.target) {
				t.Errorf("Factorize = %v, want %v", err, tt.target)
			}
		})
	}
}

func TestCLUAllocs(t *testing.T) {
	rng := rand.New(rand.NewPCG(15, 16))
	var f CLU
	if err := f.Factorize(12, randomCMatrix(rng, 12)); err != nil {
		t.Fatal(err)
	}
	for n := 1; n <= 12; n++ {
		a := randomCMatrix(rng, n)
		b, x := randomCMatrix(rng, n)[:n], make([]complex128, n)
		allocs := testing.AllocsPerRun(50, func() {
			if err := f.Factorize(n, a); err != nil {
				t.Fatal(err)
			}
			f.Solve(x, b)
			f.SolveTrans(x, b)
			_ = f.RCond()
		})
		if allocs != 0 {
			t.Errorf("n=%d: %g allocations per Factorize+Solve+SolveTrans+RCond, want 0", n, allocs)
		}
	}
}
