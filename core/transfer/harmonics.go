package transfer

import (
	"fmt"
	"math"
)

// SamplesPerPeriod is the number of points of one period at which
// Harmonics evaluates a transfer. Harmonics up to the 31st are resolved;
// the k-th harmonic aliases onto the (64 − k)-th, so the 2nd and 3rd are
// disturbed only by the 61st and 62nd, far below them for any smooth or
// mildly clipping transfer.
const SamplesPerPeriod = 64

// Spectrum is the output of a transfer driven by a sine of amplitude Amp
// around its origin: x(θ) = Amp·sin θ.
type Spectrum struct {
	Amp float64 // amplitude of the input sine, in the input's unit
	DC  float64 // mean output over a period, in the output's unit

	// Amplitudes[k] is the amplitude of the k-th harmonic of the output
	// (Amplitudes[0] is |DC|), k up to SamplesPerPeriod/2 − 1.
	Amplitudes [SamplesPerPeriod / 2]float64

	HD2, HD3 float64 // 2nd and 3rd harmonic amplitude over the fundamental's
	THD      float64 // √(Σ_{k≥2} A_k²)/A_1
}

// Harmonics samples f at SamplesPerPeriod evenly spaced phases of one
// period, x = amp·sin(2πn/N) for n = 0 … N−1 in that order (so a transfer
// that warm-starts from its previous point is called along the period,
// starting at x = 0), and takes the DFT of the samples. It does not
// allocate. It fails when amp is not a positive finite number, when f
// returns a non-finite value, or when the output has no fundamental.
func Harmonics(f func(x float64) float64, amp float64) (Spectrum, error) {
	const n = SamplesPerPeriod
	sp := Spectrum{Amp: amp}
	if !(amp > 0) || math.IsInf(amp, 1) {
		return sp, &Error{Key: "amp", Message: fmt.Sprintf("the amplitude must be a positive finite number, got %g", amp)}
	}
	// The phases are exact multiples of 2π/N, so one table of N cosines and
	// sines serves the sine samples and every DFT bin.
	var cos, sin, y [n]float64
	for m := 0; m < n; m++ {
		sin[m], cos[m] = math.Sincos(2 * math.Pi * float64(m) / n)
	}
	// Exact values at the quarter points keep the table symmetric.
	sin[0], cos[0] = 0, 1
	sin[n/4], cos[n/4] = 1, 0
	sin[n/2], cos[n/2] = 0, -1
	sin[3*n/4], cos[3*n/4] = -1, 0
	for m := 0; m < n; m++ {
		y[m] = f(amp * sin[m])
		if math.IsNaN(y[m]) || math.IsInf(y[m], 0) {
			return sp, &Error{Key: "amp", Message: fmt.Sprintf("the transfer is not finite at the input %g (phase point %d of %d)", amp*sin[m], m, n)}
		}
	}
	for k := 0; k < n/2; k++ {
		var re, im float64
		for m := 0; m < n; m++ {
			j := (k * m) % n
			re += y[m] * cos[j]
			im -= y[m] * sin[j]
		}
		a := math.Hypot(re, im) / n
		if k == 0 {
			sp.DC = re / n
		} else {
			a *= 2
		}
		sp.Amplitudes[k] = a
	}
	a1 := sp.Amplitudes[1]
	scale := math.Abs(sp.DC)
	for _, a := range sp.Amplitudes[1:] {
		scale = math.Max(scale, a)
	}
	if !(a1 > 0) || a1 < 1e-12*scale {
		return sp, &Error{Key: "amp", Message: fmt.Sprintf("the output has no fundamental (amplitude %g with an input amplitude of %g)", a1, amp)}
	}
	var sum float64
	for _, a := range sp.Amplitudes[2:] {
		sum += (a / a1) * (a / a1)
	}
	sp.HD2 = sp.Amplitudes[2] / a1
	sp.HD3 = sp.Amplitudes[3] / a1
	sp.THD = math.Sqrt(sum)
	return sp, nil
}

// DBc is a ratio in dB relative to the carrier, 20·log10(r), floored at
// −300 dBc so that a vanishing harmonic stays a finite number.
func DBc(r float64) float64 {
	const floor = 1e-15
	if !(r > floor) {
		return -300
	}
	return 20 * math.Log10(r)
}
