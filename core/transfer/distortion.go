package transfer

import (
	"math"

	"stagewright/core/circuit"
	"stagewright/core/design"
)

// DefaultAmp is the input amplitude Distortion is usually asked for, V.
const DefaultAmp = 10e-3

// TaylorStep is the largest input step of the finite differences that
// give the Taylor coefficients, V. It is a fifth of the thermal voltage,
// the shortest voltage scale of the transistor model (weak inversion), so
// the O(h⁴) error of the Richardson-extrapolated differences is about
// (h/(n·U_T))⁴ ≈ 10⁻⁴ of each coefficient at worst. A stage with a high
// gain uses a smaller step, taylorSwing·VDD/|gain|, so that the widest
// point of the stencil (±2h) moves the output by at most 8 % of the
// supply and stays in the operating point's region; the solver's rounding
// of the output, δ ≈ 10⁻¹² V, then adds about δ/(h/2)³ to the third
// derivative, below 10⁻⁴ of its value for these stages.
const TaylorStep = 5e-3

// taylorSwing is the output excursion, as a fraction of the supply, that
// one Taylor step h may cause at the operating point's gain.
const taylorSwing = 0.02

// AgreeTolerance is how far, as a fraction, the DFT and Taylor values of a
// harmonic may differ with the small-signal picture still holding (10 %).
const AgreeTolerance = 0.1

// negligible is a harmonic ratio (−120 dBc) below which the DFT and the
// Taylor estimate count as agreeing whatever their ratio: such a harmonic
// matters to no design, and it nears the numerical floor of the solved
// transfer at small amplitudes.
const negligible = 1e-6

// Linearity is the harmonic distortion of a stage driven at its input by
// a sine of amplitude Amp around the operating point's input level, the
// output taken quasi-statically from the solved DC transfer (bias held,
// rl connected as the AC-coupled load it is).
type Linearity struct {
	Amp         float64 // V, input amplitude
	InputLevel  float64 // V, the operating point's input level
	Fundamental float64 // V, output amplitude at the signal frequency

	HD2, HD3, THD       float64 // ratios to the fundamental, from the DFT of one period
	HD2dB, HD3dB, THDdB float64 // the same in dBc (floored at −300)

	// The Taylor estimate from vout ≈ vout0 + a1·x + a2·x² + a3·x³ at the
	// operating point: HD2 ≈ |a2|·A/(2|a1|), HD3 ≈ |a3|·A²/(4|a1|).
	TaylorHD2, TaylorHD3 float64
	A1                   float64 // V/V
	A2                   float64 // V/V²
	A3                   float64 // V/V³

	// SmallSignalOK says that the DFT and Taylor values of HD2 and of HD3
	// each agree within AgreeTolerance (or are both below −120 dBc): the
	// amplitude is small enough for the derivatives at the operating point
	// to describe the distortion. When false, the amplitude reaches where
	// the transfer bends more than its first three derivatives say.
	SmallSignalOK bool
}

// Distortion computes the harmonic distortion of d for an input sine of
// amplitude amp (V, 0 < amp ≤ VDD). The period is solved at
// SamplesPerPeriod points by Newton continuation from the operating point
// around the period.
func Distortion(d design.Design, amp float64) (Linearity, error) {
	t, err := newTracer(d, true)
	if err != nil {
		return Linearity{}, err
	}
	if !(amp > 0) || amp > t.vdd {
		return Linearity{}, errorf("amp", "the input amplitude must lie in 0 … %s (above 0), got %s", eng(t.vdd, "V"), eng(amp, "V"))
	}
	out0 := t.out(&t.op)
	prev := append([]float64(nil), t.op.V...)
	var solveErr error
	last := 0.0
	// The transfer relative to the operating point; each level starts
	// from the previous one along the period.
	f := func(x float64) float64 {
		if solveErr != nil {
			return last
		}
		op, err := t.solve(t.vinOp+x, prev)
		if err != nil {
			solveErr = err
			return last
		}
		copy(prev, op.V)
		last = t.out(&op) - out0
		return last
	}
	sp, err := Harmonics(f, amp)
	if solveErr != nil {
		return Linearity{}, solveErr
	}
	if err != nil {
		return Linearity{}, err
	}
	h := TaylorStep
	if g := math.Abs(t.gain0); g > 0 {
		h = math.Min(h, taylorSwing*t.vdd/g)
	}
	a1, a2, a3, err := t.taylor(h)
	if err != nil {
		return Linearity{}, err
	}
	r := Linearity{
		Amp: amp, InputLevel: t.vinOp, Fundamental: sp.Amplitudes[1],
		HD2: sp.HD2, HD3: sp.HD3, THD: sp.THD,
		HD2dB: DBc(sp.HD2), HD3dB: DBc(sp.HD3), THDdB: DBc(sp.THD),
		A1: a1, A2: a2, A3: a3,
	}
	if a1 != 0 {
		r.TaylorHD2 = math.Abs(a2) * amp / (2 * math.Abs(a1))
		r.TaylorHD3 = math.Abs(a3) * amp * amp / (4 * math.Abs(a1))
	}
	r.SmallSignalOK = agree(r.HD2, r.TaylorHD2) && agree(r.HD3, r.TaylorHD3)
	return r, nil
}

func agree(dft, taylor float64) bool {
	big := math.Max(dft, taylor)
	return big < negligible || math.Abs(dft-taylor) <= AgreeTolerance*big
}

// taylor returns the first three Taylor coefficients of the output level
// in the input level at the operating point, from central differences with
// steps h and h/2 combined by Richardson extrapolation (error O(h⁴)).
func (t *tracer) taylor(h float64) (a1, a2, a3 float64, err error) {
	// Levels in units of h/2: −4 … 4 are ±2h, ±h, ±h/2 and 0.
	var y [9]float64 // y[4+k] at x = k·h/2, k ∈ {−4, −2, −1, 0, 1, 2, 4}
	out0 := t.out(&t.op)
	for _, dir := range [2]int{1, -1} {
		warm := t.op.V
		for _, k := range [3]int{1, 2, 4} {
			var op circuit.OperatingPoint
			op, err = t.solve(t.vinOp+float64(dir*k)*h/2, warm)
			if err != nil {
				return 0, 0, 0, err
			}
			warm = op.V
			y[4+dir*k] = t.out(&op) - out0
		}
	}
	at := func(k int) float64 { return y[4+k] }
	q := h / 2
	// First derivative: [f(h) − f(−h)]/(2h), error −f‴h²/6.
	d1h := (at(2) - at(-2)) / (2 * h)
	d1q := (at(1) - at(-1)) / (2 * q)
	// Second: [f(h) − 2f(0) + f(−h)]/h², error f⁗h²/12; f(0) = 0 here.
	d2h := (at(2) + at(-2)) / (h * h)
	d2q := (at(1) + at(-1)) / (q * q)
	// Third: [f(2h) − 2f(h) + 2f(−h) − f(−2h)]/(2h³), error f⁽⁵⁾h²/4.
	d3h := (at(4) - 2*at(2) + 2*at(-2) - at(-4)) / (2 * h * h * h)
	d3q := (at(2) - 2*at(1) + 2*at(-1) - at(-2)) / (2 * q * q * q)
	rich := func(coarse, fine float64) float64 { return (4*fine - coarse) / 3 }
	return rich(d1h, d1q), rich(d2h, d2q) / 2, rich(d3h, d3q) / 6, nil
}
