package circuit

import (
	"math"
	"math/cmplx"
	"sort"
)

// The natural frequencies of a network of up to three free nodes are the
// roots of a polynomial of degree three at most, det(G + s·C). Expanding the
// determinant and solving the polynomial is much cheaper than a general
// eigenvalue decomposition (which matters most in WebAssembly, where the
// eigen-solver costs about a third of an evaluation); each root is polished
// by Newton's method on the polynomial and checked, and a root that does
// not check out sends the caller back to the eigen-solver.

// poly is a real polynomial, coefficient k of s^k.
type poly [5]float64

func (p poly) mul(q poly) poly {
	var r poly
	for i := 0; i < len(p); i++ {
		if p[i] == 0 {
			continue
		}
		for j := 0; i+j < len(r); j++ {
			r[i+j] += p[i] * q[j]
		}
	}
	return r
}

// pencilPoly returns det(G + s·C) for an n×n pencil, n ≤ 4, by Laplace
// expansion along the first row.
func pencilPoly(n int, g, c []float64) poly {
	var rows, cols [4]int
	for i := 0; i < n; i++ {
		rows[i], cols[i] = i, i
	}
	return laplace(n, g, c, rows[:n], cols[:n])
}

func laplace(n int, g, c []float64, rows, cols []int) poly {
	if len(rows) == 1 {
		return poly{g[rows[0]*n+cols[0]], c[rows[0]*n+cols[0]]}
	}
	var total poly
	r := rows[0]
	var sub [4]int
	for k, col := range cols {
		e := poly{g[r*n+col], c[r*n+col]}
		if e[0] == 0 && e[1] == 0 {
			continue
		}
		m := sub[:0]
		for _, cc := range cols {
			if cc != col {
				m = append(m, cc)
			}
		}
		minor := laplace(n, g, c, rows[1:], m).mul(e)
		sign := 1.0
		if k%2 == 1 {
			sign = -1
		}
		for i := range total {
			total[i] += sign * minor[i]
		}
	}
	return total
}

// smallRoots returns the roots of p with |s| ≤ maxS, sorted by magnitude,
// and false when they cannot be trusted (the caller then uses the
// eigen-solver).
func smallRoots(p poly, maxS float64) ([]complex128, bool) {
	// The degree: drop leading terms that cannot matter below maxS.
	scale := 0.0
	for k := range p {
		scale = math.Max(scale, math.Abs(p[k])*math.Pow(maxS, float64(k)))
	}
	if scale == 0 || math.IsInf(scale, 0) || math.IsNaN(scale) {
		return nil, false
	}
	deg := 0
	for k := len(p) - 1; k > 0; k-- {
		if math.Abs(p[k])*math.Pow(maxS, float64(k)) > 1e-13*scale {
			deg = k
			break
		}
	}
	if deg > 3 {
		return nil, false
	}
	var roots []complex128
	switch deg {
	case 0:
		return nil, true
	case 1:
		roots = []complex128{complex(-p[0]/p[1], 0)}
	case 2:
		roots = quadratic(p[2], p[1], p[0])
	case 3:
		roots = cubic(p[3], p[2], p[1], p[0])
	}
	polished := true
	for i, r := range roots {
		r, ok := polish(p, deg, r)
		if !ok {
			polished = false
			break
		}
		roots[i] = r
	}
	if !polished {
		// Roots many decades apart (a 1 nΩ degeneration next to a 1 kΩ
		// source) defeat the closed forms. They are then near the ratios of
		// consecutive coefficients, −p[k−1]/p[k] (the Newton-polygon
		// estimate of well-separated roots), from which Newton's method
		// converges; they are kept only if all polish, are distinct and
		// their product is (−1)^deg·p[0]/p[deg].
		var ok bool
		if roots, ok = separatedRoots(p, deg); !ok {
			return nil, false
		}
	}
	for i, r := range roots {
		if imag(r) != 0 && math.Abs(imag(r)) <= 1e-12*cmplx.Abs(r) {
			roots[i] = complex(real(r), 0)
		}
	}
	kept := roots[:0]
	for _, r := range roots {
		if cmplx.Abs(r) <= maxS {
			kept = append(kept, r)
		}
	}
	sort.Slice(kept, func(i, j int) bool {
		ai, aj := cmplx.Abs(kept[i]), cmplx.Abs(kept[j])
		if ai != aj {
			return ai < aj
		}
		if real(kept[i]) != real(kept[j]) {
			return real(kept[i]) < real(kept[j])
		}
		return imag(kept[i]) < imag(kept[j])
	})
	return kept, true
}

// separatedRoots finds the roots of p (degree deg) from the coefficient
// ratios −p[k−1]/p[k], each polished by Newton's method; ok is false unless
// every estimate polishes to a root, the roots are distinct (1e-6
// relative) and their product matches (−1)^deg·p[0]/p[deg] to 1e-9.
func separatedRoots(p poly, deg int) ([]complex128, bool) {
	if deg < 1 || p[0] == 0 {
		return nil, false
	}
	roots := make([]complex128, deg)
	prod := complex(1, 0)
	for k := 1; k <= deg; k++ {
		if p[k] == 0 {
			return nil, false
		}
		r, ok := polish(p, deg, complex(-p[k-1]/p[k], 0))
		if !ok {
			return nil, false
		}
		for _, q := range roots[:k-1] {
			if cmplx.Abs(r-q) <= 1e-6*cmplx.Abs(r) {
				return nil, false
			}
		}
		roots[k-1] = r
		prod *= r
	}
	want := p[0] / p[deg]
	if deg%2 == 1 {
		want = -want
	}
	if cmplx.Abs(prod-complex(want, 0)) > 1e-9*math.Abs(want) {
		return nil, false
	}
	return roots, true
}

// quadratic solves a·s² + b·s + c = 0 without cancellation.
func quadratic(a, b, c float64) []complex128 {
	disc := b*b - 4*a*c
	if disc >= 0 {
		q := -0.5 * (b + math.Copysign(math.Sqrt(disc), b))
		if q == 0 {
			return []complex128{0, 0}
		}
		return []complex128{complex(q/a, 0), complex(c/q, 0)}
	}
	re, im := -b/(2*a), math.Sqrt(-disc)/(2*math.Abs(a))
	return []complex128{complex(re, -im), complex(re, im)}
}

// cubic solves a·s³ + b·s² + c·s + d = 0: one real root by the
// trigonometric or Cardano form, then the other two from the deflated
// quadratic. Polishing happens afterwards.
func cubic(a, b, c, d float64) []complex128 {
	// Depressed cubic t³ + P·t + Q with s = t − b/(3a).
	bb, cc, dd := b/a, c/a, d/a
	sh := bb / 3
	P := cc - bb*bb/3
	Q := 2*bb*bb*bb/27 - bb*cc/3 + dd
	var t float64
	disc := Q*Q/4 + P*P*P/27
	if disc > 0 {
		sq := math.Sqrt(disc)
		t = math.Cbrt(-Q/2+sq) + math.Cbrt(-Q/2-sq)
	} else {
		r := math.Sqrt(-P / 3)
		arg := 0.0
		if r > 0 {
			arg = math.Max(-1, math.Min(1, (3*Q)/(2*P*r)))
		}
		t = 2 * r * math.Cos(math.Acos(arg)/3)
	}
	x := t - sh
	// Polish the real root before deflating so the quadratic is accurate.
	pl := poly{d, c, b, a}
	if xr, ok := polish(pl, 3, complex(x, 0)); ok {
		x = real(xr)
	}
	// Deflate: a·s³ + b·s² + c·s + d = (s − x)(a·s² + e·s + f).
	e := b + a*x
	f := c + e*x
	// For a large |x| the constant f = −d/x is the better-conditioned form.
	if x != 0 && math.Abs(d/x) > 0 && math.Abs(f) < 1e-3*math.Abs(d/x) {
		f = -d / x
	}
	q := quadratic(a, e, f)
	return []complex128{complex(x, 0), q[0], q[1]}
}

// polish refines a root of p (degree deg) by Newton's method and reports
// whether the result is a root to rounding accuracy.
func polish(p poly, deg int, r complex128) (complex128, bool) {
	eval := func(s complex128) (v, dv complex128, mag float64) {
		for k := deg; k >= 0; k-- {
			dv = dv*s + v
			v = v*s + complex(p[k], 0)
			mag = mag*cmplx.Abs(s) + math.Abs(p[k])
		}
		return v, dv, mag
	}
	for it := 0; it < 8; it++ {
		v, dv, mag := eval(r)
		if cmplx.Abs(v) <= 4e-16*mag {
			return r, true
		}
		if dv == 0 {
			break
		}
		step := v / dv
		r -= step
		if cmplx.Abs(step) <= 1e-15*cmplx.Abs(r) {
			break
		}
	}
	v, _, mag := eval(r)
	return r, cmplx.Abs(v) <= 1e-10*mag && !cmplx.IsNaN(r) && !cmplx.IsInf(r)
}
