package circuit

import (
	"math"
	"math/cmplx"

	"stagewright/core/fastmath"
)

// sweepSmall is the sweep for networks of one to three free nodes, which is
// every stage without an internal source node and the degenerated common
// source. It inverts Y(s) = G + s·C by cofactors (Cramer's rule) instead of
// a general LU, and it expands every cofactor and determinant it needs into
// a real polynomial in s once per network: a sweep point then only
// evaluates polynomials of degree three at most at s = jω, in real
// arithmetic with no call, no pivoting and no complex division. zin and
// zout come from determinants of matrices assembled without the
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
	nn := n * n

	// Row "out" of Y⁻¹ is z_j = cof(j, out)/det: the transfer from a unit
	// current injected at node j to v(out).
	var cof [3]poly
	for j := 0; j < n; j++ {
		cof[j] = cofactorPoly(n, g[:nn], c[:nn], j, out)
	}
	det := pencilPoly(n, g[:nn], c[:nn])
	detOut := det // the load removed
	if nw.RLG != 0 {
		detOut = pencilPoly(n, gOut[:nn], c[:nn])
	}
	detIn := pencilPoly(n, gIn[:nn], c[:nn]) // the signal-source resistance removed
	cofIn := cofactorPoly(n, g[:nn], c[:nn], in, in)
	// The gain's numerator: v(out) = −Σ_j z_j·(GSig_j + s·CSig_j).
	var num poly
	for j := 0; j < n; j++ {
		t := cof[j].mul(poly{-nw.GSig[j], -nw.CSig[j]})
		for k := range num {
			num[k] += t[k]
		}
	}
	// Each noise current between A and B reaches the output through
	// z_A − z_B: its numerator cof(A, out) − cof(B, out).
	a.terms = a.terms[:0]
	for _, s := range nw.Noise {
		var p poly
		if s.A >= 0 {
			p = cof[s.A]
		}
		if s.B >= 0 {
			for k := range p {
				p[k] -= cof[s.B][k]
			}
		}
		a.terms = append(a.terms, noiseTerm{p: p, white: s.White, flicker: s.Flicker})
	}

	// The loop stores each point as store does, written out in place: a
	// call per point costs more than the arithmetic under js/wasm.
	nf := len(r.F)
	freq, gain, magDB, phase := r.F[:nf], r.Gain[:nf], r.MagDB[:nf], r.PhaseDeg[:nf]
	zinOut, zoutOut, noiseOut, noiseIn := r.Zin[:nf], r.Zout[:nf], r.NoiseOut[:nf], r.NoiseIn[:nf]
	lnOutS, lnInS := r.lnOut[:nf], r.lnIn[:nf]
	terms := a.terms
	prev := 0.0
	for k, f := range freq {
		w := 2 * math.Pi * f
		w2 := w * w
		d := det.at(w, w2)
		inv := recip(d)
		h := num.at(w, w2) * inv
		noise := 0.0
		for i := range terms {
			t := &terms[i]
			v := t.p.at(w, w2)
			noise += (t.white + t.flicker/f) * (real(v)*real(v) + imag(v)*imag(v))
		}
		noise *= real(inv)*real(inv) + imag(inv)*imag(inv)
		zout := absQuo(cof[out].at(w, w2), detOut.at(w, w2))
		zin := math.Inf(1)
		if di := detIn.at(w, w2); di != 0 {
			zin = absQuo(cofIn.at(w, w2), di)
		}

		gain[k] = h
		m2 := real(h)*real(h) + imag(h)*imag(h)
		lnH2 := fastmath.Log(m2)
		magDB[k] = lnH2 * (10 / math.Ln10)
		if m2 == 0 {
			magDB[k] = -400
		}
		ph := fastmath.Atan2(imag(h), real(h)) * (180 / math.Pi)
		if k > 0 {
			for ph-prev > 180 {
				ph -= 360
			}
			for ph-prev < -180 {
				ph += 360
			}
		}
		prev = ph
		phase[k] = ph
		zinOut[k] = zin
		zoutOut[k] = zout
		sn := math.Sqrt(noise)
		noiseOut[k] = sn
		lnOut := fastmath.Log(noise)
		lnOutS[k] = lnOut
		lnInS[k] = lnOut - lnH2
		if m2 > 0 {
			noiseIn[k] = sn / math.Sqrt(m2)
		} else {
			noiseIn[k] = math.Inf(1)
		}
	}
}

// noiseTerm is one noise source of a small network: the numerator of its
// transfer to the output, and its density White + Flicker/f.
type noiseTerm struct {
	p              poly
	white, flicker float64
}

// at evaluates p, of degree three at most, at s = jω, given ω and ω².
func (p *poly) at(w, w2 float64) complex128 {
	return complex(p[0]-p[2]*w2, w*(p[1]-p[3]*w2))
}

// cofactorPoly is the (i, j) cofactor of G + s·C (n ≤ 3): (−1)^(i+j) times
// the minor without row i and column j. (Y⁻¹)_{ji} = cofactor(i, j)/det.
func cofactorPoly(n int, g, c []float64, i, j int) poly {
	var rs, cs [3]int
	rows, cols := rs[:0], cs[:0]
	for k := 0; k < n; k++ {
		if k != i {
			rows = append(rows, k)
		}
		if k != j {
			cols = append(cols, k)
		}
	}
	if len(rows) == 0 {
		return poly{1}
	}
	p := laplace(n, g, c, rows, cols)
	if (i+j)%2 == 1 {
		for k := range p {
			p[k] = -p[k]
		}
	}
	return p
}

// absQuo is |a/b|. Where both squared magnitudes are normal numbers it is
// one square root, within two units in the last place like the plain
// formula; otherwise it falls back to the complex division.
func absQuo(a, b complex128) float64 {
	const lo, hi = 1e-290, 1e290
	na := real(a)*real(a) + imag(a)*imag(a)
	nb := real(b)*real(b) + imag(b)*imag(b)
	if nb > lo && nb < hi && (na == 0 || na > lo && na < hi) {
		return math.Sqrt(na / nb)
	}
	return absQuoSlow(a, b)
}

//go:noinline
func absQuoSlow(a, b complex128) float64 { return cmplx.Abs(a / b) }

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
