package device

import (
	"fmt"
	"math"

	"stagewright/core/fastmath"
)

// Physical constants, SI.
const (
	Boltzmann = 1.380649e-23     // J/K, exact (SI 2019)
	Charge    = 1.602176634e-19  // C, elementary charge, exact (SI 2019)
	Eps0      = 8.8541878128e-12 // F/m, vacuum permittivity (CODATA 2018)
)

// epsOx is the relative permittivity of SiO₂.
const epsOx = 3.9

// Accepted ranges of the arguments of New. They are far wider than any
// design needs and keep every derived quantity finite.
const (
	minTemp, maxTemp = 100.0, 600.0 // K
	minSize, maxSize = 1e-9, 1.0    // m, for W and L
	minPhi, maxPhi   = 0.1, 2.0     // V, 2φF at the device temperature
)

// voltageLimit bounds the bulk-referred terminal voltages the model
// evaluates: beyond ±1 kV a value is held at the limit (the derivative in that
// direction is then 0). It keeps every exponent and product finite for any
// finite, infinite or NaN input; no circuit here comes near it.
const voltageLimit = 1e3 // V

// smoothWidth is the width of the smooth positive part that replaces the
// effective gate voltage VG' where it would go negative. Its effect on VP is
// below smoothWidth·e^(−VG'/smoothWidth), under 10⁻¹² V at threshold.
const smoothWidth = 0.05 // V

// ThermalVoltage returns U_T = kT/q in V for an absolute temperature in K.
func ThermalVoltage(tKelvin float64) float64 { return Boltzmann * tKelvin / Charge }

// BandGap returns the silicon band gap in eV at an absolute temperature in K,
// by Varshni's law Eg = 1.17 − 4.73·10⁻⁴·T²/(T + 636).
func BandGap(tKelvin float64) float64 {
	return 1.17 - 4.73e-4*tKelvin*tKelvin/(tKelvin+636)
}

// IntrinsicDensity returns the intrinsic carrier density of silicon in m⁻³:
// 1.0·10¹⁶ m⁻³ at 300 K, scaled by T^1.5 and the band gap,
// ni(T) = ni(300)·(T/300)^1.5·exp(Eg(300)/(2U_T(300)) − Eg(T)/(2U_T(T))).
func IntrinsicDensity(tKelvin float64) float64 { return math.Exp(logIntrinsicDensity(tKelvin)) }

// logIntrinsicDensity is ln(ni/m⁻³); it stays finite where ni underflows.
func logIntrinsicDensity(t float64) float64 {
	const t0, ni0 = 300.0, 1.0e16
	return math.Log(ni0) + 1.5*math.Log(t/t0) + BandGap(t0)/(2*ThermalVoltage(t0)) - BandGap(t)/(2*ThermalVoltage(t))
}

// Device is one transistor of a given polarity, geometry and temperature,
// with every temperature- and geometry-dependent constant computed once.
// Build it with New; the zero value is not usable.
type Device struct {
	pol        Polarity
	prm        Params
	w, l, temp float64 // m, m, K

	ut      float64 // V, thermal voltage
	vt0     float64 // V, VT0 at temp
	phi     float64 // V, 2φF at temp
	sqrtPhi float64
	vgShift float64 // V, VG' = VG + vgShift

	cox      float64 // F/m²
	kp       float64 // A/V², µ·Cox
	specPerN float64 // A, I_spec / n = 2·β·U_T²
	lambda   float64 // 1/V
	dibl     float64 // V/V, σ = DIBL/L: the threshold falls by σ·|VDS|
	theta    float64 // 1/V, Theta + 1/(ECrit·L)

	cGate   float64 // F, Cox·W·L
	cgso    float64 // F, CGSO·W
	cgdo    float64 // F, CGDO·W
	cjArea  float64 // F, CJ·W·LDiff
	cjPerim float64 // F, CJSW·(W + 2·LDiff)
	flicker float64 // V², KF/(Cox·W·L)
}

// New builds a device of polarity pol from process parameters prm valid at
// tnom (K), with width w and length l (m), at temperature temp (K).
//
// It returns a *RangeError (possibly wrapped) when prm fails Validate, when
// W or L is outside [1 nm, 1 m], when temp or tnom is outside [100 K, 600 K]
// or when 2φF at temp falls outside [0.1 V, 2 V].
//
// Temperature: U_T = kT/q, VT0(T) = VT0 − TCV·(T − TNom),
// µ(T) = U0·(T/TNom)^BEX. When Phi is given, 2φF(T) follows the doping it
// implies: 2φF(T) = Phi·T/TNom − 3·U_T·ln(T/TNom) + Eg(T) − Eg(TNom)·T/TNom,
// which is exactly 2·U_T·ln(N/ni(T)) for the N that gives Phi at TNom; when
// Phi is 0 it is 2·U_T·ln(NSub/ni(T)).
func New(pol Polarity, prm Params, tnom float64, w, l, temp float64) (Device, error) {
	if pol != NMOS && pol != PMOS {
		return Device{}, fmt.Errorf("device: polarity %d is neither NMOS (1) nor PMOS (−1)", int(pol))
	}
	if err := prm.Validate(); err != nil {
		return Device{}, err
	}
	for _, a := range [...]RangeError{
		{Name: "W", Value: w, Min: minSize, Max: maxSize, Unit: "m"},
		{Name: "L", Value: l, Min: minSize, Max: maxSize, Unit: "m"},
		{Name: "temperature", Value: temp, Min: minTemp, Max: maxTemp, Unit: "K"},
		{Name: "TNom", Value: tnom, Min: minTemp, Max: maxTemp, Unit: "K"},
	} {
		if !(a.Value >= a.Min && a.Value <= a.Max) {
			e := a // only a failure allocates
			return Device{}, &e
		}
	}
	d := Device{pol: pol, prm: prm, w: w, l: l, temp: temp}
	d.ut = ThermalVoltage(temp)
	d.vt0 = prm.VT0 - prm.TCV*(temp-tnom)
	mu := prm.U0 * math.Pow(temp/tnom, prm.BEX)
	if prm.Phi > 0 {
		r := temp / tnom
		d.phi = prm.Phi*r - 3*d.ut*math.Log(r) + BandGap(temp) - BandGap(tnom)*r
	} else {
		d.phi = 2 * d.ut * (math.Log(prm.NSub) - logIntrinsicDensity(temp))
	}
	if !(d.phi >= minPhi && d.phi <= maxPhi) {
		return Device{}, &RangeError{Name: "2φF", Value: d.phi, Min: minPhi, Max: maxPhi, Unit: "V",
			Note: fmt.Sprintf("(derived at T = %g K from Phi = %g V, NSub = %g m⁻³)", temp, prm.Phi, prm.NSub)}
	}
	d.sqrtPhi = math.Sqrt(d.phi)
	d.vgShift = -d.vt0 + d.phi + prm.Gamma*d.sqrtPhi

	d.cox = epsOx * Eps0 / prm.Tox
	d.kp = mu * d.cox
	d.specPerN = 2 * d.kp * (w / l) * d.ut * d.ut
	d.lambda = prm.LambdaL / l
	d.dibl = prm.DIBL / l
	d.theta = prm.Theta
	if prm.ECrit > 0 {
		d.theta += 1 / (prm.ECrit * l)
	}

	d.cGate = d.cox * w * l
	d.cgso = prm.CGSO * w
	d.cgdo = prm.CGDO * w
	d.cjArea = prm.CJ * w * prm.LDiff
	d.cjPerim = prm.CJSW * (w + 2*prm.LDiff)
	d.flicker = prm.KF / d.cGate
	return d, nil
}

// Polarity returns the device polarity.
func (d *Device) Polarity() Polarity { return d.pol }

// W returns the channel width in m.
func (d *Device) W() float64 { return d.w }

// L returns the channel length in m.
func (d *Device) L() float64 { return d.l }

// Temperature returns the device temperature in K.
func (d *Device) Temperature() float64 { return d.temp }

// Threshold returns the threshold voltage magnitude in V at a source–bulk
// reverse bias vsb (V, polarity-normalized: positive for a reverse-biased
// junction): VT0(T) + γ·(√(2φF + VSB) − √(2φF)), the value at which the
// pinch-off voltage equals the source voltage. With a fixed slope factor it is
// VT0(T) + (n − 1)·VSB. A forward bias beyond −2φF is held at −2φF.
func (d *Device) Threshold(vsb float64) float64 {
	if n := d.prm.NFixed; n > 0 {
		return d.vt0 + (n-1)*clampVoltage(vsb)
	}
	return d.vt0 + d.prm.Gamma*(math.Sqrt(math.Max(d.phi+clampVoltage(vsb), 0))-d.sqrtPhi)
}

// Eval is the drain current and its derivatives at one bias. ID is the
// current into the drain terminal in A (negative for a conducting p-channel
// device). GM = ∂ID/∂VG, GMB = ∂ID/∂VB and GDS = ∂ID/∂VD in S; the source
// derivative is ∂ID/∂VS = −(GM + GMB + GDS). For both polarities the three
// are positive in normal operation.
type Eval struct {
	ID, GM, GMB, GDS float64
}

// Current returns the drain current and its exact derivatives at absolute
// terminal voltages vd, vg, vs, vb (V). It does not allocate, and it returns
// finite values for any input: voltages are referred to the bulk and held
// within ±1 kV, and NaN is read as 0 V.
func (d *Device) Current(vd, vg, vs, vb float64) Eval {
	b := d.bias(vd, vg, vs, vb)
	p := float64(d.pol)
	return Eval{ID: p * b.id, GM: b.gm, GMB: b.gmb, GDS: b.gds}
}

// biasPoint is the model evaluated at one bias in n-channel, bulk-referred
// coordinates: the shared core of Current and Report.
type biasPoint struct {
	vg, vs, vd float64 // V, bulk-referred, polarity-normalized, clamped
	vp, n      float64 // V, pinch-off voltage; slope factor
	qf, qr     float64 // normalized charges at the source and drain ends
	ispec      float64 // A
	mob        float64 // D, mobility and velocity-saturation divisor
	inorm      float64 // ID/I_spec
	gmNorm     float64 // GM/I_spec, 1/V

	id           float64 // A, normalized drain current
	gm, gmb, gds float64 // S
}

// clampVoltage holds v within ±voltageLimit and reads NaN as 0.
func clampVoltage(v float64) float64 {
	switch {
	case v > voltageLimit:
		return voltageLimit
	case v < -voltageLimit:
		return -voltageLimit
	case v != v:
		return 0
	}
	return v
}

// clampedVoltage is clampVoltage that also returns the derivative factor:
// 1 inside the limits, 0 where the value is held.
func clampedVoltage(v float64) (float64, float64) {
	c := clampVoltage(v)
	if c != v {
		return c, 0
	}
	return c, 1
}

// softplus is a smooth positive part of x with width smoothWidth and its
// derivative: x + w·ln(1 + e^(−x/w)) for x ≥ 0, w·ln(1 + e^(x/w)) below.
func softplus(x float64) (s, ds float64) {
	t := x / smoothWidth
	if t > 37 {
		// e^(−t) < 1e-16: the correction is below an ulp of x and the slope
		// rounds to 1.
		return x, 1
	}
	if t >= 0 {
		e := fastmath.Exp(-t)
		return x + smoothWidth*math.Log1p(e), 1 / (1 + e)
	}
	e := fastmath.Exp(t)
	return smoothWidth * math.Log1p(e), e / (1 + e)
}

// pinchOff returns VP, dVP/dVG, n and dn/dVP at bulk-referred gate voltage vg.
//
// EKV: VG' = VG − VT0 + 2φF + γ·√(2φF) and
// VP = VG' − 2φF − γ·(√(VG' + γ²/4) − γ/2), with VG' replaced by its smooth
// positive part so that VP tends to −2φF with a continuous derivative;
// n = 1 + γ/(2·√(2φF + VP + 4U_T)). With a fixed slope factor,
// VP = (VG − VT0)/n.
func (d *Device) pinchOff(vg float64) (vp, dvp, n, dn float64) {
	if nf := d.prm.NFixed; nf > 0 {
		return (vg - d.vt0) / nf, 1 / nf, nf, 0
	}
	s, ds := softplus(vg + d.vgShift)
	if s < 1e-300 { // softplus underflows only far below threshold
		s = 1e-300
	}
	g := d.prm.Gamma
	r := math.Sqrt(s + g*g/4)
	sp := s / (r + g/2) // = √(2φF + VP), free of the cancellation in r − γ/2
	vp = s - d.phi - g*sp
	dvp = ds * (1 - g/(2*r))
	t := sp*sp + 4*d.ut // 2φF + VP + 4U_T
	st := math.Sqrt(t)
	n = 1 + g/(2*st)
	dn = -g / (4 * t * st)
	return vp, dvp, n, dn
}

// bias evaluates the model. See the package documentation for the equations;
// every derivative is the exact chain rule through n, q_f, q_r, D and M.
func (d *Device) bias(vd, vg, vs, vb float64) biasPoint {
	p := float64(d.pol)
	VG, kG := clampedVoltage(p * (vg - vb))
	VS, kS := clampedVoltage(p * (vs - vb))
	VD, kD := clampedVoltage(p * (vd - vb))

	// Drain-induced barrier lowering, the first-order form VT = VT0 − σ·|VDS|:
	// the gate voltage the pinch-off sees is raised by σ·|VDS|. Symmetric in
	// source and drain; its kink at VDS = 0 leaves the current smooth, since
	// ∂ID/∂VP vanishes there with qf = qr.
	vds := VD - VS
	sgn := 0.0
	switch {
	case vds > 0:
		sgn = 1
	case vds < 0:
		sgn = -1
	}
	vp, dvp, n, dn := d.pinchOff(VG + d.dibl*math.Abs(vds))
	ut := d.ut
	qf, af := charge((vp - VS) / ut)
	qr, ar := charge((vp - VD) / ut)
	// di/dv = (2q + 1)·dq/dv, which is q except where the charge is held.
	bf, br := af*(2*qf+1), ar*(2*qr+1)

	ispec := n * d.specPerN

	f := (qf - qr) * (qf + qr + 1) // i_f − i_r without cancellation
	fP, fS, fD := (bf-br)/ut, -bf/ut, br/ut

	sum := qf + qr
	tu := d.theta * ut
	mob := 1 + tu*n*sum
	mP := tu * (dn*sum + n*(af+ar)/ut)
	mS := -tu * n * af / ut
	mD := -tu * n * ar / ut

	clm := 1 + d.lambda*math.Abs(vds)
	cD := d.lambda * sgn

	// Derivatives of the normalized current ID/I_spec first: they stay normal
	// doubles deep in cut-off where ID itself nears the underflow limit, so
	// gm/ID and the noise factor keep full precision there.
	k := clm / mob
	inorm := f * k
	gPn := (dn/n*f+fP)*k - inorm*mP/mob
	gSn := (fS*k - f*cD/mob) - inorm*mS/mob
	gDn := (fD*k + f*cD/mob) - inorm*mD/mob

	// Barrier lowering moves VP with VDS: ∂VP/∂VD = −∂VP/∂VS = σ·sgn·dVP/dVG.
	gdl := gPn * dvp * d.dibl * sgn
	gmn := gPn * dvp * kG
	gm := ispec * gmn
	gs := ispec * (gSn - gdl) * kS
	gds := ispec * (gDn + gdl) * kD
	return biasPoint{
		vg: VG, vs: VS, vd: VD,
		vp: vp, n: n, qf: qf, qr: qr,
		ispec: ispec, mob: mob,
		inorm: inorm, gmNorm: gmn,
		id: ispec * inorm, gm: gm, gmb: -(gm + gs + gds), gds: gds,
	}
}
