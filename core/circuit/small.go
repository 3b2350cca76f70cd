package circuit

import (
	"math"
)

// sweepSmall is the sweep for networks of one to three free nodes, which is
// every stage without an internal source node and the degenerated common
// source. It inverts Y(jω) by cofactors (Cramer's rule) instead of a
// general LU: the same exact arithmetic, a fraction of the work, no
// pivoting. zin and zout come from matrices assembled without the
// signal-source and load conductances rather than by subtracting them from
// an inverse, so an open input (a gate) stays exact.
func (a *Analyzer) sweepSmall(nw *Network, r *Response) {
	n := nw.N
	in, out := nw.In, nw.Out
	var g, c, gIn, gOut [9]float64
	copy(g[:], nw.G)
	copy(c[:], nw.C)
	gIn, gOut = g, g
	gIn[in*n+in] -= nw.RSigG
	gOut[out*n+out] -= nw.RLG
	prev := 0.0
	var y, yi, yo [9]complex128
	var z [3]complex128
	for k, f := range r.F {
		w := 2 * math.Pi * f
		for i := 0; i < n*n; i++ {
			jc := complex(0, w*c[i])
			y[i] = complex(g[i], 0) + jc
			yi[i] = complex(gIn[i], 0) + jc
			yo[i] = complex(gOut[i], 0) + jc
		}
		// Row "out" of Y⁻¹: z_j = cof(j, out)/det, the transfer from a unit
		// current injected at node j to v(out).
		det := determinant(n, &y)
		inv := recip(det)
		for j := 0; j < n; j++ {
			z[j] = cofactor(n, &y, j, out) * inv
		}
		var h complex128
		for j := 0; j < n; j++ {
			h -= z[j] * complex(nw.GSig[j], w*nw.CSig[j])
		}
		noise := 0.0
		for _, s := range nw.Noise {
			var t complex128
			if s.A >= 0 {
				t += z[s.A]
			}
			if s.B >= 0 {
				t -= z[s.B]
			}
			noise += (s.White + s.Flicker/f) * (real(t)*real(t) + imag(t)*imag(t))
		}
		zout := absC(z[out])
		if nw.RLG != 0 {
			zout = absC(cofactor(n, &yo, out, out) * recip(determinant(n, &yo)))
		}
		zin := math.Inf(1)
		if di := determinant(n, &yi); di != 0 {
			zin = absC(cofactor(n, &yi, in, in) * recip(di))
		}
		a.store(r, k, h, zin, zout, noise, &prev)
	}
}

func absC(z complex128) float64 { return math.Hypot(real(z), imag(z)) }

// recip is 1/z by the plain formula, which is safe for the admittance
// scales of a circuit (no overflow of |z|² between 1e-150 and 1e150) and
// much cheaper than the general complex division.
func recip(z complex128) complex128 {
	d := real(z)*real(z) + imag(z)*imag(z)
	if d == 0 || math.IsInf(d, 0) || d < 1e-300 {
		return 1 / z
	}
	return complex(real(z)/d, -imag(z)/d)
}

// determinant of the n×n (n ≤ 3) row-major matrix m.
func determinant(n int, m *[9]complex128) complex128 {
	switch n {
	case 1:
		return m[0]
	case 2:
		return m[0]*m[3] - m[1]*m[2]
	default:
		return m[0]*(m[4]*m[8]-m[5]*m[7]) - m[1]*(m[3]*m[8]-m[5]*m[6]) + m[2]*(m[3]*m[7]-m[4]*m[6])
	}
}

// cofactor returns the (i, j) cofactor of m: (−1)^(i+j) times the minor
// without row i and column j. (Y⁻¹)_{ji} = cofactor(i, j)/det.
func cofactor(n int, m *[9]complex128, i, j int) complex128 {
	switch n {
	case 1:
		return 1
	case 2:
		v := m[(1-i)*2+(1-j)]
		if (i+j)%2 == 1 {
			return -v
		}
		return v
	default:
		var r, cc [2]int
		for a, k := 0, 0; a < 3; a++ {
			if a != i {
				r[k] = a
				k++
			}
		}
		for b, k := 0, 0; b < 3; b++ {
			if b != j {
				cc[k] = b
				k++
			}
		}
		v := m[r[0]*3+cc[0]]*m[r[1]*3+cc[1]] - m[r[0]*3+cc[1]]*m[r[1]*3+cc[0]]
		if (i+j)%2 == 1 {
			return -v
		}
		return v
	}
}
