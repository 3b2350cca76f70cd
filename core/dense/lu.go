package dense

import (
	"errors"
	"fmt"
	"math"
)

// ErrSingular is reported, wrapped in a *SingularError, when Factorize meets
// a column without a usable pivot.
var ErrSingular = errors.New("dense: matrix is singular")

// ErrNotFinite is reported, wrapped in a *NotFiniteError, when a matrix entry
// is NaN or ±Inf, or when elimination overflows.
var ErrNotFinite = errors.New("dense: matrix entry is not finite")

// minPivot is the smallest pivot magnitude Factorize accepts: the smallest
// normal float64. Below it the reciprocal of the pivot overflows.
const minPivot = 0x1p-1022

// SingularError says where elimination found no usable pivot.
// errors.Is(err, ErrSingular) holds for it.
type SingularError struct {
	N     int     // order of the matrix
	Col   int     // 0-based column (unknown) where elimination stopped
	Pivot float64 // magnitude of the best pivot candidate in that column
	Scale float64 // largest entry magnitude of the input matrix (|Re|+|Im| for CLU)
}

func (e *SingularError) Error() string {
	return fmt.Sprintf("dense: matrix is singular: column %d (0-based) of %d has best pivot magnitude %g, need at least %g (largest entry magnitude %g)",
		e.Col, e.N, e.Pivot, minPivot, e.Scale)
}

// Unwrap returns ErrSingular.
func (e *SingularError) Unwrap() error { return ErrSingular }

// NotFiniteError says which entry is NaN or ±Inf. errors.Is(err,
// ErrNotFinite) holds for it.
type NotFiniteError struct {
	Row, Col int        // 0-based position of the entry
	Value    complex128 // the entry; imaginary part zero for a real matrix
	Overflow bool       // true when the input was finite but elimination overflowed
}

func (e *NotFiniteError) Error() string {
	if e.Overflow {
		return fmt.Sprintf("dense: elimination overflowed at row %d, column %d (0-based): rescale the matrix", e.Row, e.Col)
	}
	if imag(e.Value) == 0 {
		return fmt.Sprintf("dense: matrix entry at row %d, column %d (0-based) is %g, want a finite number", e.Row, e.Col, real(e.Value))
	}
	return fmt.Sprintf("dense: matrix entry at row %d, column %d (0-based) is %g, want a finite number", e.Row, e.Col, e.Value)
}

// Unwrap returns ErrNotFinite.
func (e *NotFiniteError) Unwrap() error { return ErrNotFinite }

// isFinite reports whether v is neither NaN nor ±Inf (one comparison: NaN
// compares false).
func isFinite(v float64) bool { return math.Abs(v) <= math.MaxFloat64 }

// LU is an LU factorization with partial pivoting, P·A = L·U, of a real n×n
// matrix A. The zero value is ready to use; it reuses its storage across
// calls, so after the first Factorize of a given order nothing allocates.
type LU struct {
	n       int
	ok      bool      // the last Factorize succeeded
	a       []float64 // L (unit lower, below the diagonal) and U, row-major
	orig    []float64 // copy of A, for the 1-norm in RCond
	invDiag []float64 // 1/U_kk
	piv     []int     // row k was swapped with row piv[k] at step k
	w       [4][]float64
}

func growFloat(s []float64, n int) []float64 {
	if cap(s) < n {
		return make([]float64, n)
	}
	return s[:n]
}

func growInt(s []int, n int) []int {
	if cap(s) < n {
		return make([]int, n)
	}
	return s[:n]
}

// Factorize copies a (row-major, len n·n) and factors it. It returns a
// *SingularError when a column has no pivot of magnitude at least the
// smallest normal float64 (in practice: an exactly zero pivot), and a
// *NotFiniteError for a NaN or ±Inf entry. Nearly singular matrices are
// factored; use RCond to judge them. After an error, Solve, SolveTrans and
// RCond must not be called until a Factorize succeeds.
// Factorize panics if n < 0 or len(a) != n·n.
func (f *LU) Factorize(n int, a []float64) error {
	if n < 0 || len(a) != n*n {
		panic(fmt.Sprintf("dense: LU.Factorize: n = %d, len(a) = %d, want len(a) = n·n", n, len(a)))
	}
	f.ok = false
	f.n = n
	f.a = growFloat(f.a, n*n)
	f.orig = growFloat(f.orig, n*n)
	f.invDiag = growFloat(f.invDiag, n)
	f.piv = growInt(f.piv, n)
	for i := range f.w {
		f.w[i] = growFloat(f.w[i], n)
	}
	lu := f.a
	copy(lu, a)
	copy(f.orig, a)
	for i, v := range a {
		if !isFinite(v) {
			return &NotFiniteError{Row: i / n, Col: i % n, Value: complex(v, 0)}
		}
	}
	for k := 0; k < n; k++ {
		p, best := k, math.Abs(lu[k*n+k])
		for i := k + 1; i < n; i++ {
			if v := math.Abs(lu[i*n+k]); v > best {
				p, best = i, v
			}
		}
		if !(best >= minPivot) {
			return &SingularError{N: n, Col: k, Pivot: best, Scale: maxAbs(a)}
		}
		f.piv[k] = p
		rowK := lu[k*n : k*n+n]
		if p != k {
			rowP := lu[p*n : p*n+n]
			for j := range rowK {
				rowK[j], rowP[j] = rowP[j], rowK[j]
			}
		}
		inv := 1 / rowK[k]
		f.invDiag[k] = inv
		for i := k + 1; i < n; i++ {
			rowI := lu[i*n : i*n+n]
			l := rowI[k] * inv
			rowI[k] = l
			if l == 0 {
				continue
			}
			for j := k + 1; j < n; j++ {
				rowI[j] -= l * rowK[j]
			}
		}
	}
	for i, v := range lu {
		if !isFinite(v) {
			return &NotFiniteError{Row: i / n, Col: i % n, Value: complex(v, 0), Overflow: true}
		}
	}
	f.ok = true
	return nil
}

// N returns the order of the last factored matrix.
func (f *LU) N() int { return f.n }

func (f *LU) check(op string, dst, b []float64) {
	if !f.ok {
		panic("dense: LU." + op + " called without a successful Factorize")
	}
	if len(dst) != f.n || len(b) != f.n {
		panic(fmt.Sprintf("dense: LU.%s: len(dst) = %d, len(b) = %d, want %d", op, len(dst), len(b), f.n))
	}
}

// Solve writes to dst the solution x of A·x = b. dst and b may be the same
// slice (but must not otherwise overlap). It does not allocate. The result is
// finite when b is finite and RCond is well above machine epsilon.
// Solve panics if the last Factorize failed or the lengths are not n.
func (f *LU) Solve(dst, b []float64) {
	f.check("Solve", dst, b)
	n, lu := f.n, f.a
	x := dst[:n]
	copy(x, b)
	for k, p := range f.piv[:n] {
		if p != k {
			x[k], x[p] = x[p], x[k]
		}
	}
	// L·y = P·b, L unit lower triangular.
	for i := 1; i < n; i++ {
		s := x[i]
		for j, l := range lu[i*n : i*n+i] {
			s -= l * x[j]
		}
		x[i] = s
	}
	// U·x = y.
	for i := n - 1; i >= 0; i-- {
		row := lu[i*n : i*n+n]
		s := x[i]
		for j := i + 1; j < n; j++ {
			s -= row[j] * x[j]
		}
		x[i] = s * f.invDiag[i]
	}
}

// SolveTrans writes to dst the solution x of Aᵀ·x = b. dst and b may be the
// same slice. It does not allocate. It panics like Solve.
func (f *LU) SolveTrans(dst, b []float64) {
	f.check("SolveTrans", dst, b)
	n, lu := f.n, f.a
	x := dst[:n]
	copy(x, b)
	// Aᵀ = Uᵀ·Lᵀ·P. Uᵀ·w = b, by rows of U.
	for i := 0; i < n; i++ {
		xi := x[i] * f.invDiag[i]
		x[i] = xi
		if xi == 0 {
			continue
		}
		row := lu[i*n : i*n+n]
		for j := i + 1; j < n; j++ {
			x[j] -= row[j] * xi
		}
	}
	// Lᵀ·v = w, by rows of L.
	for i := n - 1; i > 0; i-- {
		xi := x[i]
		if xi == 0 {
			continue
		}
		for j, l := range lu[i*n : i*n+i] {
			x[j] -= l * xi
		}
	}
	// x = Pᵀ·v.
	for k := n - 1; k >= 0; k-- {
		if p := f.piv[k]; p != k {
			x[k], x[p] = x[p], x[k]
		}
	}
}

// RCond returns an estimate of the reciprocal 1-norm condition number
// 1/(‖A‖₁·‖A⁻¹‖₁), in [0, 1], of the last factored matrix. ‖A⁻¹‖₁ is
// estimated with Hager's method as refined by Higham (a few solves with A
// and Aᵀ); the estimate of ‖A⁻¹‖₁ is a lower bound, so RCond is never
// smaller than the true value and is usually within a factor of 3 of it.
// Values near machine epsilon (2.2e-16) mean solutions carry no correct
// digits. It does not allocate. RCond of a 0×0 matrix is 1.
// RCond panics if the last Factorize failed.
func (f *LU) RCond() float64 {
	if !f.ok {
		panic("dense: LU.RCond called without a successful Factorize")
	}
	n := f.n
	if n == 0 {
		return 1
	}
	norm := 0.0
	for j := 0; j < n; j++ {
		s := 0.0
		for i := 0; i < n; i++ {
			s += math.Abs(f.orig[i*n+j])
		}
		if s > norm {
			norm = s
		}
	}
	inv := f.invNorm1()
	r := 1 / (norm * inv)
	if !(r >= 0) { // NaN from Inf·0 cannot occur here, but stay in range
		return 0
	}
	return math.Min(r, 1)
}

// invNorm1 estimates ‖A⁻¹‖₁ (Higham, ACM TOMS 14, 1988, Algorithm 4.1).
func (f *LU) invNorm1() float64 {
	n := f.n
	x, y, z, sgn := f.w[0][:n], f.w[1][:n], f.w[2][:n], f.w[3][:n]
	for i := range x {
		x[i] = 1 / float64(n)
	}
	f.Solve(y, x)
	est := norm1(y)
	if n == 1 {
		return est
	}
	for i, v := range y {
		sgn[i] = signOf(v)
	}
	f.SolveTrans(z, sgn)
	j := argMaxAbs(z)
	for iter := 2; iter <= 5; iter++ {
		for i := range x {
			x[i] = 0
		}
		x[j] = 1
		f.Solve(y, x)
		old := est
		est = norm1(y)
		same := true
		for i, v := range y {
			if signOf(v) != sgn[i] {
				same = false
				break
			}
		}
		if same || est <= old {
			est = math.Max(est, old)
			break
		}
		for i, v := range y {
			sgn[i] = signOf(v)
		}
		f.SolveTrans(z, sgn)
		last := j
		j = argMaxAbs(z)
		if math.Abs(z[last]) == math.Abs(z[j]) {
			break
		}
	}
	alt := 1.0
	for i := range x {
		x[i] = alt * (1 + float64(i)/float64(n-1))
		alt = -alt
	}
	f.Solve(y, x)
	if t := 2 * norm1(y) / float64(3*n); t > est {
		est = t
	}
	return est
}

func signOf(v float64) float64 {
	if v < 0 {
		return -1
	}
	return 1
}

func norm1(v []float64) float64 {
	s := 0.0
	for _, x := range v {
		s += math.Abs(x)
	}
	return s
}

func argMaxAbs(v []float64) int {
	j, best := 0, math.Abs(v[0])
	for i, x := range v {
		if a := math.Abs(x); a > best {
			j, best = i, a
		}
	}
	return j
}

// maxAbs returns the largest |v| in a; it is used for error reports only.
func maxAbs(a []float64) float64 {
	m := 0.0
	for _, v := range a {
		if x := math.Abs(v); x > m {
			m = x
		}
	}
	return m
}
