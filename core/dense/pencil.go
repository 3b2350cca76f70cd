package dense

import (
	"errors"
	"fmt"
	"math"
	"math/cmplx"
	"slices"
)

// ErrSingularPencil is reported when det(G + s·C) vanishes for every s, so
// the network has no well-defined natural frequencies (typically a node or
// group of nodes with neither a conductive nor a capacitive path that fixes
// its voltage).
var ErrSingularPencil = errors.New("dense: det(G + s·C) is zero for every s")

const (
	// infTol: eigenvalues λ of (G + σC)⁻¹·C with |λ| ≤ infTol·max|λ| are
	// taken as infinite roots. Exactly zero eigenvalues are computed as about
	// n·eps·max|λ| ≈ 1e-14·max|λ|; the margin of 1000 keeps that noise out
	// while still resolving roots spread over eleven decades.
	infTol = 1e-11
	// zeroShiftRCond: G itself is used (σ = 0, best accuracy for small roots)
	// when its estimated reciprocal condition number is at least this; the
	// roots then lose at most about log10(1/zeroShiftRCond) = 10 digits in
	// the worst case and usually far fewer.
	zeroShiftRCond = 1e-10
	// goodShiftRCond: the first trial shift reaching this is used.
	goodShiftRCond = 1e-4
	// singularPencilRCond: below this for G and every trial shift, G + σC is
	// singular to working precision (a few hundred eps) for every σ tried.
	singularPencilRCond = 1e-13
	// zeroSnap: with a shift σ ≠ 0, a root with |s| ≤ zeroSnap·|σ| is below
	// the rounding error of s = σ − 1/λ (a few eps·|σ| amplified by the
	// conditioning) and is reported as exactly 0.
	zeroSnap = 1e-12
)

// shiftFactors are the trial shifts, in units of ‖G‖₁/‖C‖₁ (about the
// largest root magnitude). Positive shifts come first: passive and stable
// networks have their roots in the left half-plane, far from them.
var shiftFactors = [...]float64{1, -1, 0.1, -0.1, 10, -10, 0.01, -0.01, 3.7, -3.7}

// PencilRoots returns the finite roots s of det(G + s·C) = 0 for real n×n G
// and C (row-major, len n·n): the natural frequencies (poles) of a linear
// network with nodal conductance matrix G (S) and capacitance matrix C (F),
// or its zeros when given a minor of that pencil. Roots are in rad/s for G in
// S and C in F, negative real parts meaning decaying modes.
//
// Method: with a real shift σ, chosen so that G + σC is well conditioned
// (σ = 0 when G is), the eigenvalues λ of M = (G + σC)⁻¹·C are found by
// balancing, Hessenberg reduction and double-shift QR (see eigen.go) and
// mapped to s = σ − 1/λ. Eigenvalues with
// |λ| ≤ 1e-11·max|λ| belong to infinite roots and are dropped; so a root
// more than about 1e11 times farther from σ than the nearest root is dropped
// too. A node without capacitance gives a zero column of M, which the
// balancing step of the eigensolver isolates, so its infinite root is dropped
// exactly. With σ ≠ 0, a root within 1e-12·|σ| of 0 (below the rounding
// error of σ − 1/λ) is reported as exactly 0.
//
// The roots are sorted by |s| ascending; ties by real part, then imaginary
// part, so a complex pair appears as conj(s) (negative imaginary part) then
// s, and the two are exact conjugates. Real roots have a zero imaginary part.
// n = 0 gives no roots. A NaN or ±Inf entry gives a *NotFiniteError, a
// pencil singular for every s gives an error wrapping ErrSingularPencil, and
// mismatched lengths an error saying so.
func PencilRoots(n int, g, c []float64) ([]complex128, error) {
	return pencilRoots(n, g, c, eigenvalues)
}

// eigenSolver returns the eigenvalues of a real n×n row-major matrix
// (unchanged) appended to dst[:0], complex pairs as exact conjugates, or
// false if its iteration failed. PencilRoots uses eigenvalues; the tests
// also run the whole method with gonum's solver.
type eigenSolver func(n int, a []float64, dst []complex128) ([]complex128, bool)

func pencilRoots(n int, g, c []float64, eig eigenSolver) ([]complex128, error) {
	if n < 0 || len(g) != n*n || len(c) != n*n {
		return nil, fmt.Errorf("dense: PencilRoots: n = %d, len(g) = %d, len(c) = %d, want n ≥ 0 and both lengths n·n", n, len(g), len(c))
	}
	if n == 0 {
		return nil, nil
	}
	for _, m := range [...]struct {
		name string
		a    []float64
	}{{"G", g}, {"C", c}} {
		for i, v := range m.a {
			if !isFinite(v) {
				return nil, fmt.Errorf("dense: PencilRoots: matrix %s: %w", m.name, &NotFiniteError{Row: i / n, Col: i % n, Value: complex(v, 0)})
			}
		}
	}
	if !slices.ContainsFunc(c, func(v float64) bool { return v != 0 }) {
		// C = 0: det(G + s·C) = det(G) does not depend on s.
		var lu LU
		if err := lu.Factorize(n, g); err != nil || lu.RCond() < singularPencilRCond {
			return nil, fmt.Errorf("%w: C is zero and G is singular", ErrSingularPencil)
		}
		return nil, nil
	}
	return shiftedRoots(n, g, c, eig)
}

func matNorm1(n int, a []float64) float64 {
	norm := 0.0
	for j := 0; j < n; j++ {
		s := 0.0
		for i := 0; i < n; i++ {
			s += math.Abs(a[i*n+j])
		}
		norm = math.Max(norm, s)
	}
	return norm
}

// shiftedRoots does the shift-and-invert eigenvalue step on a pencil whose C
// is not zero.
func shiftedRoots(n int, g, c []float64, eig eigenSolver) ([]complex128, error) {
	scale := 1.0
	if ng, nc := matNorm1(n, g), matNorm1(n, c); ng > 0 && nc > 0 {
		scale = ng / nc
	}
	a := make([]float64, n*n)
	var lu LU
	try := func(sigma float64) float64 {
		for i := range a {
			a[i] = g[i] + sigma*c[i]
		}
		if lu.Factorize(n, a) != nil {
			return 0
		}
		return lu.RCond()
	}
	sigma, best := 0.0, try(0)
	if best < zeroShiftRCond {
		for _, f := range shiftFactors {
			s := f * scale
			if r := try(s); r > best {
				sigma, best = s, r
				if r >= goodShiftRCond {
					break
				}
			}
		}
	}
	if best < singularPencilRCond {
		return nil, fmt.Errorf("%w: best reciprocal condition of G + σ·C over %d trial shifts is %.3g (scale %.3g)",
			ErrSingularPencil, len(shiftFactors)+1, best, scale)
	}
	try(sigma) // leave lu holding the chosen shift (deterministic: same factors)
	// M = (G + σC)⁻¹·C, column by column.
	mData := make([]float64, n*n)
	col := make([]float64, n)
	for j := 0; j < n; j++ {
		for i := 0; i < n; i++ {
			col[i] = c[i*n+j]
		}
		lu.Solve(col, col)
		for i := 0; i < n; i++ {
			mData[i*n+j] = col[i]
		}
	}
	lambda, ok := eig(n, mData, make([]complex128, 0, n))
	if !ok {
		return nil, fmt.Errorf("dense: PencilRoots: eigenvalue iteration on (G + σ·C)⁻¹·C did not converge (n = %d, σ = %g)", n, sigma)
	}
	maxAbs := 0.0
	for _, l := range lambda {
		if !isFiniteC(l) {
			return nil, fmt.Errorf("dense: PencilRoots: eigenvalue %v of (G + σ·C)⁻¹·C is not finite (n = %d, σ = %g)", l, n, sigma)
		}
		maxAbs = math.Max(maxAbs, cmplx.Abs(l))
	}
	roots := make([]complex128, 0, n)
	for _, l := range lambda {
		if !(cmplx.Abs(l) > infTol*maxAbs) || imag(l) < 0 {
			continue // infinite root, or the second of a pair
		}
		s := complex(sigma, 0) - 1/l
		if sigma != 0 && cmplx.Abs(s) <= zeroSnap*math.Abs(sigma) {
			s = 0
		}
		if !isFiniteC(s) {
			return nil, fmt.Errorf("dense: PencilRoots: root %v from eigenvalue %v is not finite (σ = %g)", s, l, sigma)
		}
		if imag(l) == 0 {
			roots = append(roots, complex(real(s), 0))
			continue
		}
		re, im := real(s), math.Abs(imag(s))
		roots = append(roots, complex(re, -im), complex(re, im))
	}
	sortRoots(roots)
	return roots, nil
}

// sortRoots orders roots by |s|, then real part, then imaginary part. An
// insertion sort: there are at most a dozen or so, and a generic sort would
// add some 15 kB to the WebAssembly engine for this one call.
func sortRoots(roots []complex128) {
	less := func(x, y complex128) bool {
		if ax, ay := cmplx.Abs(x), cmplx.Abs(y); ax != ay {
			return ax < ay
		}
		if real(x) != real(y) {
			return real(x) < real(y)
		}
		return imag(x) < imag(y)
	}
	for i := 1; i < len(roots); i++ {
		r := roots[i]
		j := i
		for ; j > 0 && less(r, roots[j-1]); j-- {
			roots[j] = roots[j-1]
		}
		roots[j] = r
	}
}
