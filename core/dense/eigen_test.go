package dense

import (
	"fmt"
	"math"
	"math/cmplx"
	"math/rand/v2"
	"slices"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// gonumEigen is the independent reference: gonum's mat.Eigen (LAPACK's
// Dgeev algorithm), with the same contract as eigenvalues.
func gonumEigen(n int, a []float64, dst []complex128) ([]complex128, bool) {
	if n == 0 {
		return dst[:0], true
	}
	var e mat.Eigen
	if !e.Factorize(mat.NewDense(n, n, slices.Clone(a)), mat.EigenNone) {
		return dst[:0], false
	}
	return append(dst[:0], e.Values(nil)...), true
}

// gonumCondEigen returns gonum's eigenvalues of a with the condition number
// κ(λ) = ‖x‖·‖y‖/|yᴴx| of each (x, y its right and left eigenvectors): to
// first order a perturbation E of the matrix moves λ by at most κ(λ)·‖E‖₂
// (Wilkinson; Golub and Van Loan §7.2.2).
func gonumCondEigen(t *testing.T, n int, a []float64) ([]complex128, []float64) {
	t.Helper()
	var e mat.Eigen
	if !e.Factorize(mat.NewDense(n, n, slices.Clone(a)), mat.EigenBoth) {
		t.Fatal("gonum Eigen failed")
	}
	vals := e.Values(nil)
	var right, left mat.CDense
	e.VectorsTo(&right)
	e.LeftVectorsTo(&left)
	cond := make([]float64, n)
	for k := range vals {
		var xy complex128
		var nx, ny float64
		for i := 0; i < n; i++ {
			x, y := right.At(i, k), left.At(i, k)
			xy += cmplx.Conj(y) * x
			nx += real(x)*real(x) + imag(x)*imag(x)
			ny += real(y)*real(y) + imag(y)*imag(y)
		}
		cond[k] = math.Sqrt(nx*ny) / cmplx.Abs(xy)
	}
	return vals, cond
}

func frobenius(a []float64) float64 {
	s := 0.0
	for _, x := range a {
		s += x * x
	}
	return math.Sqrt(s)
}

// checkEigen matches each wanted eigenvalue to the nearest unused computed
// one and requires the distance to be at most tol[i]; it also checks that
// complex eigenvalues come as (re, +im), (re, −im) exact conjugates.
func checkEigen(t *testing.T, what string, got, want []complex128, tol []float64) {
	t.Helper()
	if len(got) != len(want) {
		t.Fatalf("%s: %d eigenvalues %v, want %d: %v", what, len(got), got, len(want), want)
	}
	best, dist := nearest(got, want)
	for i, w := range want {
		if !(dist[i] <= tol[i]) {
			t.Errorf("%s: want %.15g, nearest computed %.15g (|diff| %.3g > tol %.3g)", what, w, got[best[i]], dist[i], tol[i])
		}
	}
	for i := 0; i < len(got); i++ {
		if imag(got[i]) == 0 {
			continue
		}
		if imag(got[i]) < 0 || i+1 == len(got) || got[i+1] != cmplx.Conj(got[i]) {
			t.Errorf("%s: eigenvalue %d = %v is not (re, +im) followed by its exact conjugate: %v", what, i, got[i], got)
			continue
		}
		i++
	}
}

func randomDense(rng *rand.Rand, n int) []float64 {
	a := make([]float64, n*n)
	for i := range a {
		a[i] = rng.Float64()*2 - 1
	}
	return a
}

// similar returns V·diag-block(d)·V⁻¹ (V⁻¹ by gonum), with d given as a
// dense n×n matrix.
func similar(t *testing.T, n int, v, d []float64) []float64 {
	t.Helper()
	vm := mat.NewDense(n, n, slices.Clone(v))
	var vinv, out mat.Dense
	if err := vinv.Inverse(vm); err != nil {
		t.Fatal(err)
	}
	out.Product(vm, mat.NewDense(n, n, slices.Clone(d)), &vinv)
	return out.RawMatrix().Data
}

func TestEigenvaluesAgainstGonum(t *testing.T) {
	// Both solvers are backward stable: each returns the exact eigenvalues
	// of A + E with ‖E‖₂ ≲ p(n)·eps·‖A‖, p(n) a modest polynomial (about n²
	// for n ≤ 8 here). Two such answers differ by at most
	// 2·κ(λ)·p(n)·eps·‖A‖_F per simple eigenvalue; the tolerance is that
	// with p(n) = 10·n² (a margin of ten), plus the same again to cover
	// second-order terms.
	rng := rand.New(rand.NewPCG(31, 32))
	kinds := []struct {
		name string
		make func(n int) []float64
		// graded: the matrix is D·A·D⁻¹ for the A that make returns, with
		// D = diag(10^(12·i/(n−1))): the eigenvalues of A, but entries over
		// 24 decades. Rounding the scaled entries is a relative change of
		// eps in each entry of A, so A's κ and norm set the tolerance, if
		// balancing undoes the scaling as it should.
		graded bool
	}{
		{"uniform", func(n int) []float64 { return randomDense(rng, n) }, false},
		{"graded rows and columns over 12 decades", func(n int) []float64 { return randomDense(rng, n) }, true},
		{"eigenvalues over 8 decades", func(n int) []float64 {
			d := make([]float64, n*n)
			for i := 0; i < n; i++ {
				d[i*n+i] = -math.Pow(10, -8*rng.Float64())
			}
			return similar(t, n, randomDense(rng, n), d)
		}, false},
		{"rotation blocks (complex pairs)", func(n int) []float64 {
			d := make([]float64, n*n)
			for i := 0; i+1 < n; i += 2 {
				re, im := -rng.Float64(), rng.Float64()+0.1
				d[i*n+i], d[i*n+i+1], d[(i+1)*n+i], d[(i+1)*n+i+1] = re, im, -im, re
			}
			if n%2 == 1 {
				d[n*n-1] = rng.Float64()
			}
			return similar(t, n, randomDense(rng, n), d)
		}, false},
		{"zero columns and rows", func(n int) []float64 {
			a := randomDense(rng, n)
			for k := 0; k < n; k += 3 {
				for i := 0; i < n; i++ {
					a[i*n+k] = 0 // column k: an exact zero eigenvalue
				}
			}
			for k := 1; k < n; k += 4 {
				for j := 0; j < n; j++ {
					if j != k {
						a[k*n+j] = 0 // row k: eigenvalue a[k][k]
					}
				}
			}
			return a
		}, false},
		{"upper Hessenberg", func(n int) []float64 {
			a := randomDense(rng, n)
			for i := 0; i < n; i++ {
				for j := 0; j+1 < i; j++ {
					a[i*n+j] = 0
				}
			}
			return a
		}, false},
	}
	for _, kind := range kinds {
		for n := 1; n <= 8; n++ {
			for trial := 0; trial < 8; trial++ {
				ref := kind.make(n)
				a := slices.Clone(ref)
				if kind.graded {
					for i := 0; i < n; i++ {
						for j := 0; j < n; j++ {
							a[i*n+j] *= math.Pow(10, 12*(float64(i-j))/float64(max(n-1, 1)))
						}
					}
				}
				orig := slices.Clone(a)
				got, ok := eigenvalues(n, a, nil)
				if !ok {
					t.Fatalf("%s n=%d trial %d: did not converge", kind.name, n, trial)
				}
				if !slices.Equal(a, orig) {
					t.Fatalf("%s n=%d: eigenvalues changed its input", kind.name, n)
				}
				want, cond := gonumCondEigen(t, n, ref)
				tol := make([]float64, n)
				for i := range tol {
					tol[i] = 2 * 2 * cond[i] * 10 * float64(n*n) * eps * frobenius(ref)
				}
				checkEigen(t, fmt.Sprintf("%s n=%d trial %d", kind.name, n, trial), got, want, tol)
			}
		}
	}
}

func TestEigenvaluesKnown(t *testing.T) {
	// Matrices whose eigenvalues are known by hand (direct algebra).
	tests := []struct {
		name string
		n    int
		a    []float64
		want []complex128
		tol  float64 // absolute
	}{
		{"1×1", 1, []float64{-3.5}, []complex128{-3.5}, 0},
		{"zero 3×3", 3, make([]float64, 9), []complex128{0, 0, 0}, 0},
		// Triangular: the diagonal, found exactly by the isolation step.
		{"upper triangular", 3, []float64{1, 2, 3, 0, -4, 5, 0, 0, 6}, []complex128{1, -4, 6}, 0},
		{"lower triangular", 3, []float64{1, 0, 0, 2, -4, 0, 3, 5, 6}, []complex128{1, -4, 6}, 0},
		// Rotation by θ scaled by r: r·e^(±jθ).
		{"rotation", 2, []float64{0.6, -0.8, 0.8, 0.6}, []complex128{complex(0.6, 0.8), complex(0.6, -0.8)}, 4 * eps},
		// Companion matrix of (x − 1)(x − 2)(x − 3)(x − 4) = x⁴ − 10x³ +
		// 35x² − 50x + 24: its eigenvalues are the roots. Well separated,
		// but the companion matrix is far from normal (κ(λ) ~ 1e2–1e3).
		{"companion of (x−1)(x−2)(x−3)(x−4)", 4, []float64{
			10, -35, 50, -24,
			1, 0, 0, 0,
			0, 1, 0, 0,
			0, 0, 1, 0,
		}, []complex128{1, 2, 3, 4}, 1e-11},
		// Companion of x³ + 1: the cube roots of −1.
		{"companion of x³ + 1", 3, []float64{0, 0, -1, 1, 0, 0, 0, 1, 0},
			[]complex128{-1, complex(0.5, math.Sqrt(3)/2), complex(0.5, -math.Sqrt(3)/2)}, 1e-14},
		// Jordan block of order 3 for eigenvalue 2 (defective): a backward
		// error δ ~ eps moves the eigenvalues by δ^(1/3) ~ 6e-6; 1e-4 leaves
		// a margin for the polynomial factor.
		{"Jordan block 3", 3, []float64{2, 1, 0, 0, 2, 1, 0, 0, 2}, []complex128{2, 2, 2}, 0},
		{"Jordan block 3, rotated", 3, nil, []complex128{2, 2, 2}, 1e-4},
		// A repeated, non-defective eigenvalue hidden by a similarity:
		// V·diag(−1, −1, −1, 5)·V⁻¹ with a well-conditioned V. A semisimple
		// eigenvalue behaves like a simple one (error ~ κ(V)·eps·‖A‖).
		{"semisimple triple root", 4, nil, []complex128{-1, -1, -1, 5}, 1e-12},
	}
	rotated := func(n int, d []float64) []float64 {
		v := []float64{
			1, 0.5, -0.25, 0.1,
			0.2, 1, 0.3, -0.4,
			-0.3, 0.1, 1, 0.2,
			0.1, -0.2, 0.4, 1,
		}
		vn := make([]float64, n*n)
		for i := 0; i < n; i++ {
			copy(vn[i*n:(i+1)*n], v[i*4:i*4+n])
		}
		return similar(t, n, vn, d)
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			a := tt.a
			switch tt.name {
			case "Jordan block 3, rotated":
				a = rotated(3, []float64{2, 1, 0, 0, 2, 1, 0, 0, 2})
			case "semisimple triple root":
				a = rotated(4, diag(-1, -1, -1, 5))
			}
			got, ok := eigenvalues(tt.n, a, nil)
			if !ok {
				t.Fatal("did not converge")
			}
			tol := make([]float64, len(tt.want))
			for i := range tol {
				tol[i] = tt.tol
			}
			checkEigen(t, tt.name, got, tt.want, tol)
		})
	}
}

func TestEigenvaluesEmptyAndReuse(t *testing.T) {
	if got, ok := eigenvalues(0, nil, nil); !ok || len(got) != 0 {
		t.Errorf("n = 0: %v, %v; want no eigenvalues", got, ok)
	}
	// dst's storage is reused.
	dst := make([]complex128, 0, 4)
	got, _ := eigenvalues(2, []float64{1, 0, 0, 2}, dst)
	if &got[:1][0] != &dst[:1][0] {
		t.Error("eigenvalues did not append to dst[:0]")
	}
}

// randomPencil returns G and C of a random linear network of n nodes of one
// of several kinds: non-symmetric G with transconductances, C positive
// definite, singular (nodes without capacitance, low rank) or with elements
// over many decades.
func randomPencil(rng *rand.Rand, n, kind int) (g, c []float64) {
	g = make([]float64, n*n)
	c = make([]float64, n*n)
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			g[i*n+j] = 1e-3 * (rng.Float64()*2 - 1)
		}
		g[i*n+i] += 1e-3 * float64(n)
	}
	b := make([]float64, n*n)
	for i := range b {
		b[i] = rng.Float64()*2 - 1
	}
	rank := n
	switch kind {
	case 1: // low rank: C = B·Bᵀ with B of rank n/2 (infinite roots)
		rank = max(n/2, 1)
	case 2: // every other node without capacitance
	case 3: // node scales over six decades in both G and C
	case 4: // G singular: one node joined to the rest by capacitance only
	}
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			s := 0.0
			for k := 0; k < rank; k++ {
				s += b[i*n+k] * b[j*n+k]
			}
			c[i*n+j] = 1e-12 * s
		}
		if kind != 1 {
			c[i*n+i] += 1e-12
		}
	}
	switch kind {
	case 2:
		for k := 1; k < n; k += 2 {
			for i := 0; i < n; i++ {
				c[i*n+k], c[k*n+i] = 0, 0
			}
		}
	case 3:
		for i := 0; i < n; i++ {
			f := math.Pow(10, 6*rng.Float64()-3)
			for j := 0; j < n; j++ {
				g[i*n+j] *= f
				c[i*n+j] *= f
			}
		}
	case 4:
		k := n - 1
		for i := 0; i < n; i++ {
			g[i*n+k], g[k*n+i] = 0, 0
		}
	}
	return g, c
}

func TestPencilRootsAgainstGonumEigen(t *testing.T) {
	// The whole PencilRoots method (shift, infinite-root test, mapping
	// s = σ − 1/λ, snapping and order) with our eigenvalues and with gonum's
	// on the same M: the number of roots must agree, and each root too.
	// Both solvers err by ≲ p(n)·eps·κ·max|λ| (≈ 1e-12·max|λ| for n ≤ 8 and
	// κ ≲ 1e2 here); a root's relative error is its eigenvalue's, |δλ|/|λ|,
	// which grows as |λ| = 1/|σ − s| shrinks: so the bound is
	// 1e-12·|s|·(|σ − s|/min|σ − s|), and σ ~ the
	// largest root gives the factor max(|s|, |s_max|)/|s_min|.
	rng := rand.New(rand.NewPCG(41, 42))
	for kind := 0; kind <= 4; kind++ {
		for n := 1; n <= 8; n++ {
			for trial := 0; trial < 10; trial++ {
				g, c := randomPencil(rng, n, kind)
				got, err1 := PencilRoots(n, g, c)
				want, err2 := pencilRoots(n, g, c, gonumEigen)
				what := fmt.Sprintf("kind %d n=%d trial %d", kind, n, trial)
				if (err1 == nil) != (err2 == nil) {
					t.Fatalf("%s: errors %v (own) and %v (gonum)", what, err1, err2)
				}
				if err1 != nil {
					continue
				}
				tol := make([]float64, len(want))
				sMin, sMax := math.Inf(1), 0.0
				for _, w := range want {
					if a := cmplx.Abs(w); a > 0 {
						sMin = math.Min(sMin, a)
					}
					sMax = math.Max(sMax, cmplx.Abs(w))
				}
				for i, w := range want {
					tol[i] = 1e-12 * math.Max(cmplx.Abs(w), sMax) * math.Max(cmplx.Abs(w), sMax) / sMin
				}
				if len(got) != len(want) {
					t.Fatalf("%s: %d roots %v, gonum's eigenvalues give %d: %v", what, len(got), got, len(want), want)
				}
				checkRoots(t, got, want, math.Inf(1), 0) // order and conjugate pairs only
				checkEigenRoots(t, what, got, want, tol)
			}
		}
	}
}

// checkEigenRoots is checkEigen without the pair-order check (PencilRoots
// orders a pair as conj(s), s).
func checkEigenRoots(t *testing.T, what string, got, want []complex128, tol []float64) {
	t.Helper()
	if len(got) < len(want) {
		t.Fatalf("%s: %d roots %v, want %d: %v", what, len(got), got, len(want), want)
	}
	best, dist := nearest(got, want)
	for i, w := range want {
		if !(dist[i] <= tol[i]) {
			t.Errorf("%s: gonum-based root %.15g, own %.15g (|diff| %.3g > tol %.3g)", what, w, got[best[i]], dist[i], tol[i])
		}
	}
}

func TestPencilRootsRepeated(t *testing.T) {
	// det(A·(G + s·C)·B) = det A · det B · det(G + s·C) (direct algebra):
	// mixing a diagonal pencil with random well-conditioned A and B keeps
	// its roots. Repeated roots −g/c, semisimple, are found to
	// ~κ(A)·κ(B)·eps relative; 1e-9 covers κ up to ~1e3 each.
	rng := rand.New(rand.NewPCG(51, 52))
	for n := 2; n <= 8; n++ {
		gd := make([]float64, n)
		cd := make([]float64, n)
		var want []complex128
		for i := 0; i < n; i++ {
			// Pairs of equal time constants: roots −1e9 (twice), −3e8 (twice), …
			gd[i], cd[i] = 1e-3*float64(1+i/2), 1e-12*float64(1+i/2)*(1+float64(i/2%2)*2.3)
			want = append(want, complex(-gd[i]/cd[i], 0))
		}
		mix := func() []float64 {
			m := randomDense(rng, n)
			for i := 0; i < n; i++ {
				m[i*n+i] += float64(n)
			}
			return m
		}
		a, b := mix(), mix()
		prod := func(d []float64) []float64 {
			var x mat.Dense
			x.Product(mat.NewDense(n, n, a), mat.NewDense(n, n, diag(d...)), mat.NewDense(n, n, b))
			return x.RawMatrix().Data
		}
		got, err := PencilRoots(n, prod(gd), prod(cd))
		if err != nil {
			t.Fatal(err)
		}
		checkRoots(t, got, want, 1e-9, 0)
	}
	// A defective double root: det([[g, γ], [0, g]] + s·c·I) = (g + s·c)²
	// for any γ (direct algebra). Rounding δ ~ eps splits it by √δ ~ 1e-8
	// relative (into a close pair, possibly complex); 1e-6 leaves a margin.
	got, err := PencilRoots(2, []float64{1e-3, 5e-4, 0, 1e-3}, diag(1e-12, 1e-12))
	if err != nil {
		t.Fatal(err)
	}
	checkRoots(t, got, []complex128{-1e9, -1e9}, 1e-6, 0)
}
