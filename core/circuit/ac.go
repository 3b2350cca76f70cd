package circuit

import (
	"math"
	"math/cmplx"

	"stagewright/core/dense"
	"stagewright/core/fastmath"
)

// Response holds a frequency sweep. The caller sizes every slice to the
// number of frequencies (Resize does it) and the analyzer fills them, so
// a repeated sweep allocates nothing.
type Response struct {
	F        []float64 // Hz
	Gain     []complex128
	MagDB    []float64
	PhaseDeg []float64 // unwrapped
	Zin      []float64 // |Zin|, Ω (+Inf where the input is open)
	Zout     []float64 // |Zout|, Ω
	NoiseOut []float64 // output noise density, V/√Hz
	NoiseIn  []float64 // input-referred noise density, V/√Hz

	lnF, lnOut, lnIn []float64 // logs of f and of the noise powers, for NoiseRMS
	lnFOf            []float64 // the F the lnF were taken of (first and last point)
}

// Resize makes every slice n long, reusing storage.
func (r *Response) Resize(n int) {
	grow := func(s []float64) []float64 {
		if cap(s) < n {
			return make([]float64, n)
		}
		return s[:n]
	}
	r.F, r.MagDB, r.PhaseDeg = grow(r.F), grow(r.MagDB), grow(r.PhaseDeg)
	r.Zin, r.Zout, r.NoiseOut, r.NoiseIn = grow(r.Zin), grow(r.Zout), grow(r.NoiseOut), grow(r.NoiseIn)
	r.lnF, r.lnOut, r.lnIn = grow(r.lnF), grow(r.lnOut), grow(r.lnIn)
	r.lnFOf = r.lnFOf[:0]
	if cap(r.Gain) < n {
		r.Gain = make([]complex128, n)
	}
	r.Gain = r.Gain[:n]
}

// LogSweep fills f with a log-spaced sweep from fmin to fmax at ppd points
// per decade and returns it, reusing f's storage. Both ends are included:
// the last step is shorter when the range is not a whole number of steps.
// The count is ⌈ppd·log10(fmax/fmin)⌉ + 1.
func LogSweep(f []float64, fmin, fmax float64, ppd int) []float64 {
	steps := math.Ceil(float64(ppd)*math.Log10(fmax/fmin) - 1e-9)
	n := int(steps) + 1
	if n < 2 || math.IsNaN(steps) {
		n = 2
	}
	if cap(f) < n {
		f = make([]float64, n)
	}
	f = f[:n]
	for i := range f {
		f[i] = fmin * math.Pow(10, float64(i)/float64(ppd))
	}
	f[n-1] = fmax
	return f
}

// Analyzer sweeps a network. Its zero value is ready; it keeps its
// workspace between calls.
type Analyzer struct {
	general      bool // always use the LU path (tests)
	y, yin, yout []complex128
	b, z, x      []complex128
	lu, luIn     dense.CLU
	luOut        dense.CLU
	terms        []noiseTerm // the small sweep's noise sources
}

func (a *Analyzer) size(n int) {
	if cap(a.y) < n*n {
		a.y = make([]complex128, n*n)
		a.yin = make([]complex128, n*n)
		a.yout = make([]complex128, n*n)
	}
	a.y, a.yin, a.yout = a.y[:n*n], a.yin[:n*n], a.yout[:n*n]
	if cap(a.b) < n {
		a.b, a.z, a.x = make([]complex128, n), make([]complex128, n), make([]complex128, n)
	}
	a.b, a.z, a.x = a.b[:n], a.z[:n], a.x[:n]
}

// Sweep evaluates the network at every frequency in r.F (Resize r first):
// the gain v(out)/v(signal), the input impedance (the signal-source
// resistance excluded), the output impedance (signal shorted, the load
// resistance excluded), and the output and input-referred noise densities
// from every noise source through the adjoint network.
func (a *Analyzer) Sweep(nw *Network, r *Response) {
	r.logGrid()
	if nw.N <= 3 && nw.Out >= 0 && nw.In >= 0 && !a.general {
		a.sweepSmall(nw, r)
		return
	}
	a.sweepLU(nw, r)
}

// sweepLU is the general sweep: a complex LU of Y(jω) at every point.
// sweepSmall must agree with it.
func (a *Analyzer) sweepLU(nw *Network, r *Response) {
	n := nw.N
	a.size(n)
	prevPhase := 0.0
	for k, f := range r.F {
		w := 2 * math.Pi * f
		for i := range a.y {
			a.y[i] = complex(nw.G[i], w*nw.C[i])
		}
		for i := 0; i < n; i++ {
			a.b[i] = -complex(nw.GSig[i], w*nw.CSig[i])
		}
		var h complex128
		zout := math.Inf(1)
		noise := 0.0
		if err := a.lu.Factorize(n, a.y); err == nil && nw.Out >= 0 {
			// Adjoint: z = Y⁻ᵀ e_out, so z_i = (Y⁻¹)_{out,i}: the transfer
			// from a unit current injected at node i to v(out).
			for i := range a.z {
				a.z[i] = 0
			}
			a.z[nw.Out] = 1
			a.lu.SolveTrans(a.z, a.z)
			for i := 0; i < n; i++ {
				h += a.z[i] * a.b[i]
			}
			for _, s := range nw.Noise {
				var t complex128
				if s.A >= 0 {
					t += a.z[s.A]
				}
				if s.B >= 0 {
					t -= a.z[s.B]
				}
				m := real(t)*real(t) + imag(t)*imag(t)
				noise += (s.White + s.Flicker/f) * m
			}
			zoo := a.z[nw.Out] // driving-point impedance at out, everything connected
			if nw.RLG == 0 {
				zout = cmplx.Abs(zoo)
			} else {
				copy(a.yout, a.y)
				a.yout[nw.Out*n+nw.Out] -= complex(nw.RLG, 0)
				zout = a.drivingPoint(&a.luOut, a.yout, n, nw.Out)
			}
		}
		if nw.Out < 0 {
			noise = 0
		}
		zin := math.Inf(1)
		if nw.In >= 0 {
			copy(a.yin, a.y)
			a.yin[nw.In*n+nw.In] -= complex(nw.RSigG, 0)
			zin = a.drivingPoint(&a.luIn, a.yin, n, nw.In)
		}
		a.store(r, k, h, zin, zout, noise, &prevPhase)
	}
}

// store writes one sweep point: gain in dB and unwrapped phase, the
// impedances and the noise densities.
func (a *Analyzer) store(r *Response, k int, h complex128, zin, zout, noise float64, prevPhase *float64) {
	r.Gain[k] = h
	// One logarithm gives the gain in dB and, with the log of the output
	// noise power, the log of the input-referred noise power: the noise
	// integration works on these logs (NoiseRMS), so a point costs two
	// logarithms and one arctangent, the only transcendental functions left.
	m2 := real(h)*real(h) + imag(h)*imag(h)
	lnH2 := fastmath.Log(m2)
	r.MagDB[k] = lnH2 * (10 / math.Ln10)
	if m2 == 0 {
		r.MagDB[k] = -400
	}
	ph := fastmath.Atan2(imag(h), real(h)) * (180 / math.Pi)
	if k > 0 {
		for ph-*prevPhase > 180 {
			ph -= 360
		}
		for ph-*prevPhase < -180 {
			ph += 360
		}
	}
	*prevPhase = ph
	r.PhaseDeg[k] = ph
	r.Zin[k] = zin
	r.Zout[k] = zout
	r.NoiseOut[k] = math.Sqrt(noise)
	lnOut := fastmath.Log(noise)
	r.lnOut[k] = lnOut
	r.lnIn[k] = lnOut - lnH2
	if m2 > 0 {
		r.NoiseIn[k] = r.NoiseOut[k] / math.Sqrt(m2)
	} else {
		r.NoiseIn[k] = math.Inf(1)
	}
}

// drivingPoint returns |(Y⁻¹)_kk| for the matrix y, or +Inf when y is singular.
func (a *Analyzer) drivingPoint(lu *dense.CLU, y []complex128, n, k int) float64 {
	if err := lu.Factorize(n, y); err != nil {
		return math.Inf(1)
	}
	for i := range a.x {
		a.x[i] = 0
	}
	a.x[k] = 1
	lu.Solve(a.x, a.x)
	z := cmplx.Abs(a.x[k])
	if math.IsNaN(z) {
		return math.Inf(1)
	}
	return z
}
