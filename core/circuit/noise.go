package circuit

import "math"

// IntegrateRMS integrates a noise density d (V/√Hz, sampled at ascending
// frequencies f) over the band [lo, hi] and returns the rms value (V).
// Between neighbouring points the power density d² is taken as a power law
// of f, which is exact for white, 1/f and 1/f² stretches of a spectrum; the
// band ends are interpolated the same way. Points outside the sweep count
// as zero.
func IntegrateRMS(f, d []float64, lo, hi float64) float64 {
	total := 0.0
	for i := 0; i+1 < len(f); i++ {
		a, b := f[i], f[i+1]
		if b <= lo || a >= hi || !(b > a) {
			continue
		}
		pa, pb := d[i]*d[i], d[i+1]*d[i+1]
		lo2, hi2 := math.Max(a, lo), math.Min(b, hi)
		total += powerLawArea(a, b, pa, pb, lo2, hi2)
	}
	return math.Sqrt(total)
}

// powerLawArea integrates p(f) = pa·(f/a)^k, the power law through (a, pa)
// and (b, pb), from x to y (a ≤ x < y ≤ b). For a whole segment it needs
// no power: ∫ₐᵇ p df = (b·pb − a·pa)/(k+1).
func powerLawArea(a, b, pa, pb, x, y float64) float64 {
	if pa <= 0 || pb <= 0 || math.IsInf(pa, 0) || math.IsInf(pb, 0) {
		// Fall back to the trapezoid on a zero or unbounded stretch.
		if math.IsInf(pa, 0) || math.IsInf(pb, 0) {
			return 0
		}
		t := func(f float64) float64 { return pa + (pb-pa)*(f-a)/(b-a) }
		return 0.5 * (t(x) + t(y)) * (y - x)
	}
	return powerLawAreaK(a, b, pa, pb, x, y, math.Log(pb/pa)/math.Log(b/a)+1)
}

// powerLawAreaK is powerLawArea with the exponent plus one, k1 = k + 1,
// already known (NoiseRMS has it from the sweep's own logarithms).
func powerLawAreaK(a, b, pa, pb, x, y, k1 float64) float64 {
	if math.Abs(k1) < 1e-9 {
		return pa * a * math.Log(y/x)
	}
	if x == a && y == b {
		return (b*pb - a*pa) / k1
	}
	return pa * a / k1 * (math.Pow(y/a, k1) - math.Pow(x/a, k1))
}

// FlickerCorner returns the frequency (Hz) where the flicker part of the
// network's total output noise equals the white part, and false when there
// is no flicker noise. The noise sources' transfers are taken at their
// low-frequency (conductance-only) values, where the corner of a gain stage
// lies.
func (nw *Network) FlickerCorner() (float64, bool) {
	if nw.Out < 0 {
		return 0, false
	}
	// z: the adjoint solution at DC, z_i = (G⁻¹)_{out,i}.
	lu, err := nw.FactorG()
	if err != nil {
		return 0, false
	}
	z := make([]float64, nw.N)
	z[nw.Out] = 1
	lu.SolveTrans(z, z)
	white, flick := 0.0, 0.0
	for _, s := range nw.Noise {
		t := 0.0
		if s.A >= 0 {
			t += z[s.A]
		}
		if s.B >= 0 {
			t -= z[s.B]
		}
		white += s.White * t * t
		flick += s.Flicker * t * t
	}
	if flick <= 0 || white <= 0 {
		return 0, false
	}
	return flick / white, true
}

// logGrid takes the logarithms of the sweep frequencies once per grid.
func (r *Response) logGrid() {
	n := len(r.F)
	if len(r.lnFOf) == 2 && n > 0 && r.lnFOf[0] == r.F[0] && r.lnFOf[1] == r.F[n-1] && len(r.lnF) == n {
		return
	}
	for i, f := range r.F {
		r.lnF[i] = math.Log(f)
	}
	if n > 0 {
		r.lnFOf = append(r.lnFOf[:0], r.F[0], r.F[n-1])
	}
}

// NoiseRMS integrates the swept input-referred and output noise over
// [lo, hi] and returns both rms values (V), like IntegrateRMS but from the
// logarithms the sweep already took, so it costs no logarithm per point.
func (r *Response) NoiseRMS(lo, hi float64) (in, out float64) {
	return math.Sqrt(r.integrateLog(r.NoiseIn, r.lnIn, lo, hi)), math.Sqrt(r.integrateLog(r.NoiseOut, r.lnOut, lo, hi))
}

// integrateLog integrates the power d² given with its logarithm lnp.
func (r *Response) integrateLog(d, lnp []float64, lo, hi float64) float64 {
	n := len(r.F)
	f, lnF, d, lnp := r.F[:n], r.lnF[:n], d[:n], lnp[:n]
	total := 0.0
	for i := 0; i+1 < n; i++ {
		a, b := f[i], f[i+1]
		if b <= lo || a >= hi || !(b > a) {
			continue
		}
		la, lb := lnp[i], lnp[i+1]
		pa, pb := d[i]*d[i], d[i+1]*d[i+1]
		// The part of the segment in the band. (Plain comparisons: under
		// js/wasm the min and max built-ins are runtime calls.)
		x, y := a, b
		if lo > a {
			x = lo
		}
		if hi < b {
			y = hi
		}
		if !(la-la == 0 && lb-lb == 0) { // a logarithm is infinite or NaN
			total += powerLawArea(a, b, pa, pb, x, y)
			continue
		}
		// The exponent of the power law plus one is k1 = (lb − la + dl)/dl.
		dl := lnF[i+1] - lnF[i]
		num := lb - la + dl
		if x == a && y == b && !(num < 1e-9*dl && num > -1e-9*dl) {
			// The whole segment, as in powerLawAreaK, with one division.
			total += (b*pb - a*pa) * dl / num
			continue
		}
		total += powerLawAreaK(a, b, pa, pb, x, y, num/dl)
	}
	return total
}
