package dense

import (
	"fmt"
	"math"
	"math/cmplx"
)

// abs1 is |Re z| + |Im z|, the cheap magnitude used to choose pivots. It is
// within a factor √2 of |z|.
func abs1(z complex128) float64 { return math.Abs(real(z)) + math.Abs(imag(z)) }

func isFiniteC(z complex128) bool { return isFinite(real(z)) && isFinite(imag(z)) }

func growComplex(s []complex128, n int) []complex128 {
	if cap(s) < n {
		return make([]complex128, n)
	}
	return s[:n]
}

// CLU is an LU factorization with partial pivoting, P·A = L·U, of a complex
// n×n matrix A, as used for one frequency point of an AC sweep. The zero
// value is ready to use; it reuses its storage across calls, so after the
// first Factorize of a given order nothing allocates.
type CLU struct {
	n       int
	ok      bool
	a       []complex128 // L (unit lower, below the diagonal) and U, row-major
	orig    []complex128 // copy of A, for the 1-norm in RCond
	invDiag []complex128 // 1/U_kk
	piv     []int        // row k was swapped with row piv[k] at step k
	w       [3][]complex128
}

// Factorize copies a (row-major, len n·n) and factors it. Pivots are chosen
// by |Re|+|Im|. Errors and panics are as for LU.Factorize: a *SingularError
// when a column has no pivot with |Re|+|Im| at least the smallest normal
// float64, a *NotFiniteError for an entry with a NaN or ±Inf part.
func (f *CLU) Factorize(n int, a []complex128) error {
	if n < 0 || len(a) != n*n {
		panic(fmt.Sprintf("dense: CLU.Factorize: n = %d, len(a) = %d, want len(a) = n·n", n, len(a)))
	}
	f.ok = false
	f.n = n
	f.a = growComplex(f.a, n*n)
	f.orig = growComplex(f.orig, n*n)
	f.invDiag = growComplex(f.invDiag, n)
	f.piv = growInt(f.piv, n)
	for i := range f.w {
		f.w[i] = growComplex(f.w[i], n)
	}
	lu := f.a
	copy(lu, a)
	copy(f.orig, a)
	for i, v := range a {
		if !isFiniteC(v) {
			return &NotFiniteError{Row: i / n, Col: i % n, Value: v}
		}
	}
	for k := 0; k < n; k++ {
		p, best := k, abs1(lu[k*n+k])
		for i := k + 1; i < n; i++ {
			if v := abs1(lu[i*n+k]); v > best {
				p, best = i, v
			}
		}
		if !(best >= minPivot) {
			return &SingularError{N: n, Col: k, Pivot: best, Scale: maxAbsC(a)}
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
		if !isFiniteC(v) {
			return &NotFiniteError{Row: i / n, Col: i % n, Value: v, Overflow: true}
		}
	}
	for k, v := range f.invDiag[:n] {
		if !isFiniteC(v) { // 1/p overflows only for |p| near the underflow limit
			return &NotFiniteError{Row: k, Col: k, Value: v, Overflow: true}
		}
	}
	f.ok = true
	return nil
}

// N returns the order of the last factored matrix.
func (f *CLU) N() int { return f.n }

func (f *CLU) check(op string, dst, b []complex128) {
	if !f.ok {
		panic("dense: CLU." + op + " called without a successful Factorize")
	}
	if len(dst) != f.n || len(b) != f.n {
		panic(fmt.Sprintf("dense: CLU.%s: len(dst) = %d, len(b) = %d, want %d", op, len(dst), len(b), f.n))
	}
}

// Solve writes to dst the solution x of A·x = b. dst and b may be the same
// slice (but must not otherwise overlap). It does not allocate. It panics if
// the last Factorize failed or the lengths are not n.
func (f *CLU) Solve(dst, b []complex128) {
	f.check("Solve", dst, b)
	n, lu := f.n, f.a
	x := dst[:n]
	copy(x, b)
	for k, p := range f.piv[:n] {
		if p != k {
			x[k], x[p] = x[p], x[k]
		}
	}
	for i := 1; i < n; i++ {
		s := x[i]
		for j, l := range lu[i*n : i*n+i] {
			s -= l * x[j]
		}
		x[i] = s
	}
	for i := n - 1; i >= 0; i-- {
		row := lu[i*n : i*n+n]
		s := x[i]
		for j := i + 1; j < n; j++ {
			s -= row[j] * x[j]
		}
		x[i] = s * f.invDiag[i]
	}
}

// SolveTrans writes to dst the solution x of Aᵀ·x = b with the plain
// transpose Aᵀ (entries not conjugated), as used for the adjoint network of
// a circuit matrix at one frequency. For the conjugate transpose
// Aᴴ, conjugate b before and x after: Aᴴ·x = b ⇔ Aᵀ·conj(x) = conj(b).
// dst and b may be the same slice. It does not allocate. It panics like
// Solve.
func (f *CLU) SolveTrans(dst, b []complex128) {
	f.check("SolveTrans", dst, b)
	n, lu := f.n, f.a
	x := dst[:n]
	copy(x, b)
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
	for i := n - 1; i > 0; i-- {
		xi := x[i]
		if xi == 0 {
			continue
		}
		for j, l := range lu[i*n : i*n+i] {
			x[j] -= l * xi
		}
	}
	for k := n - 1; k >= 0; k-- {
		if p := f.piv[k]; p != k {
			x[k], x[p] = x[p], x[k]
		}
	}
}

// RCond returns an estimate of the reciprocal 1-norm condition number
// 1/(‖A‖₁·‖A⁻¹‖₁), in [0, 1], with ‖A‖₁ the largest column sum of |a_ij|.
// The method and its guarantees are those of LU.RCond (complex form of
// Higham's estimator). It does not allocate. RCond of a 0×0 matrix is 1.
// RCond panics if the last Factorize failed.
func (f *CLU) RCond() float64 {
	if !f.ok {
		panic("dense: CLU.RCond called without a successful Factorize")
	}
	n := f.n
	if n == 0 {
		return 1
	}
	norm := 0.0
	for j := 0; j < n; j++ {
		s := 0.0
		for i := 0; i < n; i++ {
			s += cmplx.Abs(f.orig[i*n+j])
		}
		if s > norm {
			norm = s
		}
	}
	r := 1 / (norm * f.invNorm1())
	if !(r >= 0) {
		return 0
	}
	return math.Min(r, 1)
}

// invNorm1 estimates ‖A⁻¹‖₁ (Higham, ACM TOMS 14, 1988, complex form of
// Algorithm 4.1). Solves with Aᴴ are done as conj(A⁻ᵀ·conj(v)).
func (f *CLU) invNorm1() float64 {
	n := f.n
	x, y, z := f.w[0][:n], f.w[1][:n], f.w[2][:n]
	for i := range x {
		x[i] = complex(1/float64(n), 0)
	}
	f.Solve(y, x)
	est := cnorm1(y)
	if n == 1 {
		return est
	}
	f.adjointOfSign(z, y)
	j := cargMaxAbs(z)
	for iter := 2; iter <= 5; iter++ {
		for i := range x {
			x[i] = 0
		}
		x[j] = 1
		f.Solve(y, x)
		old := est
		est = cnorm1(y)
		if est <= old {
			est = old
			break
		}
		f.adjointOfSign(z, y)
		last := j
		j = cargMaxAbs(z)
		if cmplx.Abs(z[last]) == cmplx.Abs(z[j]) {
			break
		}
	}
	alt := 1.0
	for i := range x {
		x[i] = complex(alt*(1+float64(i)/float64(n-1)), 0)
		alt = -alt
	}
	f.Solve(y, x)
	if t := 2 * cnorm1(y) / float64(3*n); t > est {
		est = t
	}
	return est
}

// adjointOfSign sets z = A⁻ᴴ·sign(y), sign(v) = v/|v| (1 for v = 0).
func (f *CLU) adjointOfSign(z, y []complex128) {
	for i, v := range y {
		if a := cmplx.Abs(v); a > 0 {
			z[i] = cmplx.Conj(v / complex(a, 0))
		} else {
			z[i] = 1
		}
	}
	f.SolveTrans(z, z)
	for i, v := range z {
		z[i] = cmplx.Conj(v)
	}
}

func cnorm1(v []complex128) float64 {
	s := 0.0
	for _, x := range v {
		s += cmplx.Abs(x)
	}
	return s
}

func cargMaxAbs(v []complex128) int {
	j, best := 0, cmplx.Abs(v[0])
	for i, x := range v {
		if a := cmplx.Abs(x); a > best {
			j, best = i, a
		}
	}
	return j
}

// maxAbsC returns the largest |Re|+|Im| in a; it is used for error reports
// only.
func maxAbsC(a []complex128) float64 {
	m := 0.0
	for _, v := range a {
		if x := abs1(v); x > m {
			m = x
		}
	}
	return m
}
