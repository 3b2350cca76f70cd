package dense

import "math"

// Eigenvalues of a small real nonsymmetric matrix, by the textbook route:
//
//  1. balancing: permutations isolate eigenvalues that can be read off the
//     diagonal (a row or column that is zero off the diagonal within the
//     remaining block), then scaling by powers of two evens out row and
//     column norms of the rest (Parlett and Reinsch, 1969); both are exact
//     similarity transforms;
//  2. reduction of the remaining block to upper Hessenberg form by
//     Householder reflections;
//  3. the implicitly shifted QR algorithm with Francis's double shift on the
//     real Hessenberg matrix, deflating at negligible subdiagonal entries and
//     reading the eigenvalues off the 1×1 and 2×2 diagonal blocks (as in
//     Golub and Van Loan, Matrix Computations, §7.4–7.5).
//
// Only the eigenvalues are wanted, so each transform is applied to the block
// still being worked on and nothing else: the eigenvalues of a block upper
// triangular matrix are those of its diagonal blocks.

// eigenMaxSweeps bounds the QR iterations spent on one eigenvalue (or pair)
// before giving up. Double-shift QR typically needs 2–4; the exceptional
// shifts at every tenth iteration break the rare cycles.
const eigenMaxSweeps = 60

// eigenvalues returns the eigenvalues of the real n×n row-major matrix a
// (which is not changed) appended to dst[:0]. A complex pair appears as
// (re, +im) then (re, −im), exact conjugates. The order is otherwise
// unspecified. ok is false if the QR iteration did not converge.
func eigenvalues(n int, a []float64, dst []complex128) (vals []complex128, ok bool) {
	vals = dst[:0]
	if n == 0 {
		return vals, true
	}
	w := make([]float64, n*n)
	copy(w, a)
	lo, hi := isolate(n, w)
	for i := 0; i < lo; i++ {
		vals = append(vals, complex(w[i*n+i], 0))
	}
	for i := hi + 1; i < n; i++ {
		vals = append(vals, complex(w[i*n+i], 0))
	}
	m := hi - lo + 1
	if m <= 0 {
		return vals, true
	}
	// The remaining block, on its own.
	h := w
	if m < n {
		h = make([]float64, m*m)
		for i := 0; i < m; i++ {
			copy(h[i*m:(i+1)*m], w[(lo+i)*n+lo:(lo+i)*n+hi+1])
		}
	}
	scaleBalance(m, h)
	hessenberg(m, h)
	return hessenbergQR(m, h, vals)
}

// isolate permutes rows and columns of the n×n matrix a (a similarity) so
// that it is block upper triangular with upper triangular leading block
// a[:lo, :lo] and trailing block a[hi+1:, hi+1:]: their diagonal entries are
// eigenvalues, and the rest are those of a[lo:hi+1, lo:hi+1].
func isolate(n int, a []float64) (lo, hi int) {
	lo, hi = 0, n-1
	swap := func(i, j int) {
		if i == j {
			return
		}
		for k := 0; k < n; k++ {
			a[i*n+k], a[j*n+k] = a[j*n+k], a[i*n+k]
		}
		for k := 0; k < n; k++ {
			a[k*n+i], a[k*n+j] = a[k*n+j], a[k*n+i]
		}
	}
	for changed := true; changed && lo <= hi; {
		changed = false
		// A row zero off the diagonal within the block goes to the bottom.
		for i := hi; i >= lo; i-- {
			if rowIsolated(n, a, i, lo, hi) {
				swap(i, hi)
				hi--
				changed = true
				break
			}
		}
		if changed {
			continue
		}
		// A column zero off the diagonal within the block goes to the top.
		for j := lo; j <= hi; j++ {
			if colIsolated(n, a, j, lo, hi) {
				swap(j, lo)
				lo++
				changed = true
				break
			}
		}
	}
	return lo, hi
}

func rowIsolated(n int, a []float64, i, lo, hi int) bool {
	for j := lo; j <= hi; j++ {
		if j != i && a[i*n+j] != 0 {
			return false
		}
	}
	return true
}

func colIsolated(n int, a []float64, j, lo, hi int) bool {
	for i := lo; i <= hi; i++ {
		if i != j && a[i*n+j] != 0 {
			return false
		}
	}
	return true
}

// scaleBalance applies D⁻¹·a·D for a diagonal D of powers of two (exact)
// chosen so that each row and the matching column have 1-norms (without the
// diagonal) within a factor of about 2 of each other. This keeps the
// rounding errors of the QR iteration, which scale with the norm, from being
// set by a few large entries.
func scaleBalance(n int, a []float64) {
	const radix = 2.0
	for sweep := 0; sweep < 100; sweep++ {
		done := true
		for i := 0; i < n; i++ {
			var c, r float64
			for j := 0; j < n; j++ {
				if j != i {
					c += math.Abs(a[j*n+i])
					r += math.Abs(a[i*n+j])
				}
			}
			if c == 0 || r == 0 {
				continue
			}
			s := c + r
			f := 1.0
			for g := r / radix; c < g && f < 0x1p500; {
				f *= radix
				c *= radix * radix
			}
			for g := r * radix; c >= g && f > 0x1p-500; {
				f /= radix
				c /= radix * radix
			}
			if (c+r)/f >= 0.95*s {
				continue
			}
			done = false
			for j := 0; j < n; j++ {
				a[i*n+j] /= f
			}
			for j := 0; j < n; j++ {
				a[j*n+i] *= f
			}
		}
		if done {
			return
		}
	}
}

// hessenberg reduces the n×n matrix a in place to upper Hessenberg form by a
// similarity of Householder reflections, one per column; the entries below
// the first subdiagonal are set to zero.
func hessenberg(n int, a []float64) {
	v := make([]float64, n)
	for k := 0; k+2 < n; k++ {
		// Reflect x = a[k+1:, k] onto −α·e₁.
		scale := 0.0
		for i := k + 1; i < n; i++ {
			scale += math.Abs(a[i*n+k])
		}
		if scale == 0 {
			continue
		}
		norm2 := 0.0
		for i := k + 1; i < n; i++ {
			v[i] = a[i*n+k] / scale
			norm2 += v[i] * v[i]
		}
		alpha := math.Copysign(math.Sqrt(norm2), v[k+1])
		// P = I − v·vᵀ/β with v = x/scale + α·e₁ and β = α·v₁.
		v[k+1] += alpha
		beta := alpha * v[k+1]
		// Left: rows k+1.., columns k.. (column k becomes −α·scale·e₁).
		for j := k + 1; j < n; j++ {
			dot := 0.0
			for i := k + 1; i < n; i++ {
				dot += v[i] * a[i*n+j]
			}
			f := dot / beta
			for i := k + 1; i < n; i++ {
				a[i*n+j] -= f * v[i]
			}
		}
		a[(k+1)*n+k] = -alpha * scale
		for i := k + 2; i < n; i++ {
			a[i*n+k] = 0
		}
		// Right: all rows, columns k+1...
		for i := 0; i < n; i++ {
			dot := 0.0
			for j := k + 1; j < n; j++ {
				dot += a[i*n+j] * v[j]
			}
			f := dot / beta
			for j := k + 1; j < n; j++ {
				a[i*n+j] -= f * v[j]
			}
		}
	}
}

// hessenbergQR finds the eigenvalues of the n×n upper Hessenberg matrix h
// (destroyed) by double-shift QR and appends them to vals.
func hessenbergQR(n int, h []float64, vals []complex128) ([]complex128, bool) {
	at := func(i, j int) float64 { return h[i*n+j] }
	// norm: for the deflation test when both neighbouring diagonal entries
	// are zero.
	norm := 0.0
	for _, x := range h {
		norm = math.Max(norm, math.Abs(x))
	}
	const eps = 0x1p-52
	hi := n - 1
	iter := 0
	for hi >= 0 {
		// Find the top l of the unreduced block ending at hi: the first
		// negligible subdiagonal entry above hi is set to zero.
		l := hi
		for ; l > 0; l-- {
			s := math.Abs(at(l-1, l-1)) + math.Abs(at(l, l))
			if s == 0 {
				s = norm
			}
			if math.Abs(at(l, l-1)) <= eps*s {
				h[l*n+l-1] = 0
				break
			}
		}
		switch l {
		case hi: // 1×1 block: a real eigenvalue
			vals = append(vals, complex(at(hi, hi), 0))
			hi--
			iter = 0
			continue
		case hi - 1: // 2×2 block: a real pair or a complex pair
			vals = append2x2(vals, at(hi-1, hi-1), at(hi-1, hi), at(hi, hi-1), at(hi, hi))
			hi -= 2
			iter = 0
			continue
		}
		if iter == eigenMaxSweeps {
			return vals, false
		}
		iter++
		// Shifts: the eigenvalues of the trailing 2×2 block, given as their
		// sum s and product t (real even when the pair is complex). Every
		// tenth iteration an exceptional shift from the size of the last
		// subdiagonal entries breaks a possible cycle.
		var s, t float64
		if iter%10 == 0 {
			x := math.Abs(at(hi, hi-1)) + math.Abs(at(hi-1, hi-2))
			s, t = 1.5*x, x*x
		} else {
			p, q, r, u := at(hi-1, hi-1), at(hi-1, hi), at(hi, hi-1), at(hi, hi)
			s, t = p+u, p*u-q*r
		}
		// First column of (H − σ₁)(H − σ₂) = H² − s·H + t·I at row l.
		h00, h01, h10, h11, h21 := at(l, l), at(l, l+1), at(l+1, l), at(l+1, l+1), at(l+2, l+1)
		x := h00*h00 + h01*h10 - s*h00 + t
		y := h10 * (h00 + h11 - s)
		z := h10 * h21
		// Chase the bulge down the block with 3×3 reflections.
		for k := l; k <= hi-2; k++ {
			reflect3(n, h, k, l, hi, x, y, z)
			x = at(k+1, k)
			y = at(k+2, k)
			if k+3 <= hi {
				z = at(k+3, k)
			}
		}
		// The last step is a 2×2 reflection on rows and columns hi−1, hi.
		reflect2(n, h, hi-1, l, hi, x, y)
	}
	return vals, true
}

// reflect3 applies the Householder reflection P that maps (x, y, z) onto a
// multiple of e₁ to rows and columns k, k+1, k+2 of the block h[l:hi+1,
// l:hi+1]: H ← P·H·P. For k > l, (x, y, z) is h[k:k+3, k−1], which becomes
// (−α, 0, 0) exactly.
func reflect3(n int, h []float64, k, l, hi int, x, y, z float64) {
	scale := math.Abs(x) + math.Abs(y) + math.Abs(z)
	if scale == 0 {
		return
	}
	x, y, z = x/scale, y/scale, z/scale
	alpha := math.Copysign(math.Sqrt(x*x+y*y+z*z), x)
	// P = I − τ·u·uᵀ with u = (1, q, r).
	v0 := x + alpha
	tau := v0 / alpha
	q, r := y/v0, z/v0
	if k > l {
		h[k*n+k-1] = -alpha * scale
		h[(k+1)*n+k-1] = 0
		h[(k+2)*n+k-1] = 0
	}
	for j := k; j <= hi; j++ {
		p := h[k*n+j] + q*h[(k+1)*n+j] + r*h[(k+2)*n+j]
		p *= tau
		h[k*n+j] -= p
		h[(k+1)*n+j] -= p * q
		h[(k+2)*n+j] -= p * r
	}
	last := min(k+3, hi)
	for i := l; i <= last; i++ {
		p := h[i*n+k] + q*h[i*n+k+1] + r*h[i*n+k+2]
		p *= tau
		h[i*n+k] -= p
		h[i*n+k+1] -= p * q
		h[i*n+k+2] -= p * r
	}
}

// reflect2 is reflect3 for the last pair of rows and columns k, k+1.
func reflect2(n int, h []float64, k, l, hi int, x, y float64) {
	scale := math.Abs(x) + math.Abs(y)
	if scale == 0 {
		return
	}
	x, y = x/scale, y/scale
	alpha := math.Copysign(math.Hypot(x, y), x)
	v0 := x + alpha
	tau := v0 / alpha
	q := y / v0
	if k > l {
		h[k*n+k-1] = -alpha * scale
		h[(k+1)*n+k-1] = 0
	}
	for j := k; j <= hi; j++ {
		p := tau * (h[k*n+j] + q*h[(k+1)*n+j])
		h[k*n+j] -= p
		h[(k+1)*n+j] -= p * q
	}
	for i := l; i <= hi; i++ {
		p := tau * (h[i*n+k] + q*h[i*n+k+1])
		h[i*n+k] -= p
		h[i*n+k+1] -= p * q
	}
}

// append2x2 appends the eigenvalues of [[a, b], [c, d]]: λ = d + μ with
// μ² − 2p·μ − b·c = 0, p = (a − d)/2. Real roots are formed without
// cancellation (the larger μ from the formula, the other from the product
// −b·c); a complex pair has real part (a + d)/2 and is appended as exact
// conjugates. The block is scaled by its largest entry first so that the
// squares neither overflow nor underflow.
func append2x2(vals []complex128, a, b, c, d float64) []complex128 {
	scale := math.Max(math.Max(math.Abs(a), math.Abs(b)), math.Max(math.Abs(c), math.Abs(d)))
	if scale == 0 {
		return append(vals, 0, 0)
	}
	a, b, c, d = a/scale, b/scale, c/scale, d/scale
	p := 0.5 * (a - d)
	bc := b * c
	disc := p*p + bc
	if disc >= 0 {
		mu := p + math.Copysign(math.Sqrt(disc), p)
		l1 := d + mu
		l2 := d
		if mu != 0 {
			l2 = d - bc/mu
		}
		return append(vals, complex(l1*scale, 0), complex(l2*scale, 0))
	}
	re := (d + p) * scale
	im := math.Sqrt(-disc) * scale
	return append(vals, complex(re, im), complex(re, -im))
}
