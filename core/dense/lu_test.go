package dense

import (
	"errors"
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/mat"
)

const eps = 0x1p-52 // float64 machine epsilon

func randomMatrix(rng *rand.Rand, n int) []float64 {
	a := make([]float64, n*n)
	for i := range a {
		a[i] = rng.Float64()*2 - 1
	}
	return a
}

// gonumSolve solves op(A)·x = b with gonum's LU (the independent reference)
// and returns x and gonum's 1-norm condition number of A.
func gonumSolve(t *testing.T, n int, a, b []float64, trans bool) ([]float64, float64) {
	t.Helper()
	var lu mat.LU
	lu.Factorize(mat.NewDense(n, n, append([]float64(nil), a...)))
	var x mat.VecDense
	if err := lu.SolveVecTo(&x, trans, mat.NewVecDense(n, append([]float64(nil), b...))); err != nil {
		t.Fatalf("gonum LU.SolveVecTo: %v", err)
	}
	return mat.Col(nil, 0, &x), lu.Cond()
}

// solveTol is the tolerance, relative to max|x|, for comparing two backward
// stable solvers: each solution is within about n·eps·κ(A) of the exact one
// (forward error bound for LU with partial pivoting, Higham, Accuracy and
// Stability of Numerical Algorithms, ch. 9, from memory), so they differ by
// at most twice that. The factor 16 covers growth and norm constants.
func solveTol(n int, cond float64) float64 { return 16 * float64(n) * eps * cond }

func maxAbsDiff(x, y []float64) (d, scale float64) {
	for i := range x {
		d = math.Max(d, math.Abs(x[i]-y[i]))
		scale = math.Max(scale, math.Abs(y[i]))
	}
	return d, scale
}

func TestLUReconstruction(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	var f LU
	for n := 1; n <= 12; n++ {
		a := randomMatrix(rng, n)
		if err := f.Factorize(n, a); err != nil {
			t.Fatalf("n=%d: %v", n, err)
		}
		// Rebuild P·A = L·U and undo P: rows of L·U swapped back.
		lu := make([]float64, n*n)
		for i := 0; i < n; i++ {
			for j := 0; j < n; j++ {
				s := 0.0
				for k := 0; k <= min(i, j); k++ {
					l := 1.0
					if k < i {
						l = f.a[i*n+k]
					}
					s += l * f.a[k*n+j] // U is the upper triangle, diagonal included
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
		// Backward error of LU with partial pivoting is bounded by about
		// n·eps·ρ·max|a| with growth ρ ≤ 2^(n−1) in theory and ρ ≈ 1–4 for
		// random matrices (Higham, ch. 9, from memory); 8·n·eps·max|a| is
		// a few times that for these entries in [−1, 1].
		d, _ := maxAbsDiff(lu, a)
		if tol := 8 * float64(n) * eps; d > tol {
			t.Errorf("n=%d: max |P⁻¹·L·U − A| = %.3g, want ≤ %.3g", n, d, tol)
		}
	}
}

func TestLUSolveAgainstGonum(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	var f LU
	for n := 1; n <= 12; n++ {
		for trial := 0; trial < 20; trial++ {
			a := randomMatrix(rng, n)
			b := randomMatrix(rng, 1)
			b = append(b, randomMatrix(rng, n)[:n-1]...)
			if err := f.Factorize(n, a); err != nil {
				t.Fatalf("n=%d trial %d: %v", n, trial, err)
			}
			for _, trans := range []bool{false, true} {
				want, cond := gonumSolve(t, n, a, b, trans)
				got := make([]float64, n)
				if trans {
					f.SolveTrans(got, b)
				} else {
					f.Solve(got, b)
				}
				d, scale := maxAbsDiff(got, want)
				if tol := solveTol(n, cond) * scale; d > tol {
					t.Errorf("n=%d trial %d trans=%v: max |x − x_gonum| = %.3g, want ≤ %.3g (cond %.3g)", n, trial, trans, d, tol, cond)
				}
				// dst aliasing b gives the same result.
				alias := append([]float64(nil), b...)
				if trans {
					f.SolveTrans(alias, alias)
				} else {
					f.Solve(alias, alias)
				}
				for i := range alias {
					if alias[i] != got[i] {
						t.Fatalf("n=%d trans=%v: aliased solve differs at %d: %g vs %g", n, trans, i, alias[i], got[i])
					}
				}
			}
		}
	}
}

func TestLUSingular(t *testing.T) {
	tests := []struct {
		name string
		n    int
		a    []float64
		col  int
	}{
		{"zero 1×1", 1, []float64{0}, 0},
		{"zero column", 2, []float64{1, 0, 2, 0}, 1},
		{"equal rows", 3, []float64{1, 2, 3, 1, 2, 3, 0, 1, 4}, 2},
		{"floating node (rows sum to zero, exact in binary)", 2, []float64{0.5, -0.5, -0.5, 0.5}, 1},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			var f LU
			err := f.Factorize(tt.n, tt.a)
			var se *SingularError
			if !errors.As(err, &se) || !errors.Is(err, ErrSingular) {
				t.Fatalf("Factorize = %v, want a *SingularError", err)
			}
			if se.Col != tt.col {
				t.Errorf("Col = %d, want %d (%v)", se.Col, tt.col, err)
			}
		})
	}
}

func TestLUNotFinite(t *testing.T) {
	for _, v := range []float64{math.NaN(), math.Inf(1), math.Inf(-1)} {
		var f LU
		err := f.Factorize(2, []float64{1, 2, 3, v})
		var ne *NotFiniteError
		if !errors.As(err, &ne) || ne.Row != 1 || ne.Col != 1 {
			t.Errorf("entry %g: Factorize = %v, want *NotFiniteError at (1, 1)", v, err)
		}
	}
}

// exactRCond returns 1/(‖A‖₁·‖A⁻¹‖₁) with A⁻¹ from gonum's Inverse (the
// independent reference).
func exactRCond(t *testing.T, n int, a []float64) float64 {
	t.Helper()
	am := mat.NewDense(n, n, append([]float64(nil), a...))
	var inv mat.Dense
	if err := inv.Inverse(am); err != nil {
		t.Fatalf("gonum Inverse: %v", err)
	}
	return 1 / (mat.Norm(am, 1) * mat.Norm(&inv, 1))
}

func hilbert(n int) []float64 {
	a := make([]float64, n*n)
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			a[i*n+j] = 1 / float64(i+j+1)
		}
	}
	return a
}

// checkRCond holds an estimate to the two properties of Hager–Higham
// estimation (Higham, ACM TOMS 14, 1988, from memory): ‖A⁻¹‖₁ is estimated
// from below, so est ≥ exact; and the estimate is rarely more than a factor
// 3 off, so est ≤ 10·exact. The slack 1e-3 on the lower side covers the
// rounding error of the reference inverse, about n·eps·κ relative, for κ up
// to 1e11.
func checkRCond(t *testing.T, what string, est, exact float64) {
	t.Helper()
	if est < exact*(1-1e-3) || est > 10*exact {
		t.Errorf("%s: RCond = %.4g, exact %.4g: want within [exact, 10·exact]", what, est, exact)
	}
}

func TestLURCond(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 8))
	var f LU
	for n := 1; n <= 12; n++ {
		for trial := 0; trial < 10; trial++ {
			a := randomMatrix(rng, n)
			if err := f.Factorize(n, a); err != nil {
				t.Fatal(err)
			}
			checkRCond(t, "random", f.RCond(), exactRCond(t, n, a))
		}
	}
	// Hilbert matrices: κ₁ grows like e^(3.5n), about 3e10 at n = 8 (common
	// practice); the factorization must still succeed.
	for n := 2; n <= 8; n++ {
		a := hilbert(n)
		if err := f.Factorize(n, a); err != nil {
			t.Fatalf("Hilbert %d: %v", n, err)
		}
		checkRCond(t, "Hilbert", f.RCond(), exactRCond(t, n, a))
	}
	// Scaling A leaves the condition number unchanged (a property of any
	// norm-wise condition number); the estimator must not see the scale.
	a := randomMatrix(rng, 5)
	f.Factorize(5, a)
	r1 := f.RCond()
	for i := range a {
		a[i] *= 1e-15 // a capacitance-sized matrix
	}
	f.Factorize(5, a)
	// Multiplying by 1e-15 rounds each entry once, so the estimate moves by
	// a few eps relative at most; 1e-12 is a generous bound.
	if r2 := f.RCond(); math.Abs(r2-r1) > 1e-12*r1 {
		t.Errorf("RCond of 1e-15·A = %.15g, of A = %.15g: want equal", r2, r1)
	}
}

func TestLUZeroOrder(t *testing.T) {
	var f LU
	if err := f.Factorize(0, nil); err != nil {
		t.Fatal(err)
	}
	f.Solve(nil, nil)
	f.SolveTrans(nil, nil)
	if r := f.RCond(); r != 1 {
		t.Errorf("RCond of a 0×0 matrix = %g, want 1", r)
	}
}

func TestLUMisusePanics(t *testing.T) {
	tests := []struct {
		name string
		do   func()
	}{
		{"Solve after singular Factorize", func() {
			var f LU
			_ = f.Factorize(1, []float64{0})
			f.Solve(make([]float64, 1), make([]float64, 1))
		}},
		{"Solve with wrong length", func() {
			var f LU
			_ = f.Factorize(1, []float64{2})
			f.Solve(make([]float64, 2), make([]float64, 2))
		}},
		{"Factorize with wrong length", func() {
			var f LU
			_ = f.Factorize(2, []float64{1, 2, 3})
		}},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			defer func() {
				if recover() == nil {
					t.Errorf("no panic, want one for a programming error")
				}
			}()
			tt.do()
		})
	}
}

func TestLUAllocs(t *testing.T) {
	rng := rand.New(rand.NewPCG(9, 10))
	var f LU
	// Factor the largest size first: smaller sizes must reuse its storage.
	if err := f.Factorize(12, randomMatrix(rng, 12)); err != nil {
		t.Fatal(err)
	}
	for n := 1; n <= 12; n++ {
		a := randomMatrix(rng, n)
		b, x := randomMatrix(rng, n)[:n], make([]float64, n)
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
