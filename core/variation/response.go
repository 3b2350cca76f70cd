package variation

import (
	"math"

	"stagewright/core/circuit"
	"stagewright/core/dense"
)

// response evaluates the transfer function H(jω) = v(out)/v(sig) of a
// linearized network one frequency at a time, by solving
// (G + jω·C)·v = −(GSig + jω·CSig), the same equation the AC sweep solves.
// This is the rational function with the network's exact poles and zeros,
// at the cost of one 3×3 determinant pair (Cramer's rule; a complex LU
// for larger networks) per frequency, far cheaper than finding the poles
// and zeros. Cramer's rule is exact algebra and, for the diagonally
// dominant admittance matrices of a stage of at most three free nodes,
// loses no more accuracy than the LU; a test checks it against the LU. The
// zero value is ready; after the first network of a given size nothing
// allocates.
type response struct {
	lu   dense.CLU
	y, b []complex128
}

// at returns H(j·2π·f) for nw, and false when the matrix is singular.
func (r *response) at(nw *circuit.Network, f float64) (complex128, bool) {
	n := nw.N
	if nw.Out < 0 || n == 0 {
		return 0, false
	}
	if cap(r.y) < n*n {
		r.y = make([]complex128, n*n)
	}
	if cap(r.b) < n {
		r.b = make([]complex128, n)
	}
	y, b := r.y[:n*n], r.b[:n]
	w := 2 * math.Pi * f
	for i := range y {
		y[i] = complex(nw.G[i], w*nw.C[i])
	}
	for i := range b {
		b[i] = complex(-nw.GSig[i], -w*nw.CSig[i])
	}
	var h complex128
	if n <= 3 {
		// Cramer's rule: v_out = det(Y with column out replaced by b)/det(Y).
		den := det3(n, y, nil, -1)
		if den == 0 {
			return 0, false
		}
		h = det3(n, y, b, nw.Out) / den
	} else {
		if err := r.lu.Factorize(n, y); err != nil {
			return 0, false
		}
		r.lu.Solve(b, b)
		h = b[nw.Out]
	}
	if math.IsNaN(real(h)) || math.IsNaN(imag(h)) || math.IsInf(real(h), 0) || math.IsInf(imag(h), 0) {
		return 0, false
	}
	return h, true
}

// det3 is the determinant of the n×n (n ≤ 3) row-major matrix y, with
// column col replaced by b when col ≥ 0, by cofactor expansion.
func det3(n int, y, b []complex128, col int) complex128 {
	e := func(i, j int) complex128 {
		if j == col {
			return b[i]
		}
		return y[i*n+j]
	}
	switch n {
	case 1:
		return e(0, 0)
	case 2:
		return e(0, 0)*e(1, 1) - e(0, 1)*e(1, 0)
	}
	return e(0, 0)*(e(1, 1)*e(2, 2)-e(1, 2)*e(2, 1)) -
		e(0, 1)*(e(1, 0)*e(2, 2)-e(1, 2)*e(2, 0)) +
		e(0, 2)*(e(1, 0)*e(2, 1)-e(1, 1)*e(2, 0))
}

// half is the −3 dB power ratio |H|²/|H(0)|² = 1/2 that defines f3db; the
// design's sweep uses the equivalent 20·log10 level −3.0103 dB.
const half = 0.5

// scanPPD is the points per decade of the coarse scan that brackets the
// first crossing before the root is refined.
const scanPPD = 4

// f3dB returns the lowest frequency in [fmin, fmax] (Hz) where |H(jω)|²
// falls through |H(0)|²/2, the same first down-crossing the design's
// sweep reports. A coarse scan at scanPPD points per decade brackets the
// crossing; the Illinois variant of regula falsi on log f then refines it
// to a relative 1e-10. ok is false when there is no crossing in range or
// the network cannot be solved. A response that dips below −3 dB and
// recovers between two scan points is missed; at 4 points per decade that
// needs a resonance sharper than any single-transistor stage shows (Q of
// about 3 or more).
func (r *response) f3dB(nw *circuit.Network, gain0, fmin, fmax float64) (float64, bool) {
	ref := gain0 * gain0
	if !(ref > 0) || math.IsInf(ref, 0) || !(fmin > 0) || !(fmax > fmin) {
		return 0, false
	}
	g := func(lf float64) (float64, bool) {
		h, ok := r.at(nw, math.Exp(lf))
		if !ok {
			return 0, false
		}
		return (real(h)*real(h)+imag(h)*imag(h))/ref - half, true
	}
	la, lmax := math.Log(fmin), math.Log(fmax)
	step := math.Ln10 / scanPPD
	ga, ok := g(la)
	if !ok {
		return 0, false
	}
	for la < lmax {
		lb := math.Min(la+step, lmax)
		gb, ok := g(lb)
		if !ok {
			return 0, false
		}
		if ga > 0 && gb <= 0 {
			return math.Exp(illinois(g, la, lb, ga, gb)), true
		}
		la, ga = lb, gb
	}
	return 0, false
}

// illinois refines a bracketed root of g between a and b (g(a) > 0 ≥ g(b))
// by the Illinois method (Dowell and Jarratt, BIT 1971), a regula falsi
// that halves the weight of a stale end so convergence stays superlinear.
func illinois(g func(float64) (float64, bool), a, b, ga, gb float64) float64 {
	side := 0
	for it := 0; it < 60 && b-a > 1e-10; it++ {
		c := b - gb*(b-a)/(gb-ga)
		if !(c > a && c < b) {
			c = (a + b) / 2
		}
		gc, ok := g(c)
		if !ok {
			return c
		}
		if gc > 0 {
			a, ga = c, gc
			if side == -1 {
				gb /= 2
			}
			side = -1
		} else {
			b, gb = c, gc
			if side == 1 {
				ga /= 2
			}
			side = 1
		}
		if gc == 0 {
			return c
		}
	}
	return (a + b) / 2
}
