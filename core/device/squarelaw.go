package device

import "math"

// SquareLaw is the Shichman–Hodges hand model of a device at a given drain
// current, with the same process numbers as the full model:
// KP = µ(T)·Cox, VT with body effect (see Threshold) and λ = LambdaL/L.
// All values are magnitudes.
type SquareLaw struct {
	Vov   float64 // V, √(2·ID/(KP·W/L)), λ neglected
	GM    float64 // S, √(2·KP·(W/L)·ID) = 2·ID/Vov
	GMB   float64 // S, GM·γ/(2·√(2φF + VSB)); (n − 1)·GM with a fixed slope factor
	RO    float64 // Ω, 1/(λ·ID); +Inf when λ·ID = 0
	VDsat float64 // V, equal to Vov
}

// SquareLawAt returns the hand model at drain current magnitude id (A) and
// source–bulk reverse bias vsb (V). A negative id counts by its magnitude and
// NaN as 0; a forward vsb beyond −2φF + U_T is held there so GMB stays
// finite.
func (d *Device) SquareLawAt(id, vsb float64) SquareLaw {
	id = math.Abs(id)
	if !(id <= math.MaxFloat64) {
		id = 0
	}
	kpw := d.kp * d.w / d.l
	s := SquareLaw{
		Vov: math.Sqrt(2 * id / kpw),
		GM:  math.Sqrt(2 * kpw * id),
		RO:  1 / (d.lambda * id),
	}
	s.VDsat = s.Vov
	if n := d.prm.NFixed; n > 0 {
		s.GMB = (n - 1) * s.GM
	} else {
		s.GMB = s.GM * d.prm.Gamma / (2 * math.Sqrt(math.Max(d.phi+clampVoltage(vsb), d.ut)))
	}
	return s
}

// SquareLawCurrent returns the hand-model drain current magnitude (A) at
// gate–source vgs, drain–source vds and source–bulk vsb voltages (V,
// magnitudes, polarity-normalized):
//
//	saturation (VDS ≥ Vov): ½·KP·(W/L)·Vov²·(1 + λ·VDS)
//	triode     (VDS < Vov): KP·(W/L)·(Vov·VDS − VDS²/2)·(1 + λ·VDS)
//
// and 0 when Vov ≤ 0 or VDS ≤ 0.
func (d *Device) SquareLawCurrent(vgs, vds, vsb float64) float64 {
	vgs, vds = clampVoltage(vgs), clampVoltage(vds)
	vov := vgs - d.Threshold(vsb)
	if vov <= 0 || vds <= 0 {
		return 0
	}
	kpw := d.kp * d.w / d.l
	clm := 1 + d.lambda*vds
	if vds >= vov {
		return 0.5 * kpw * vov * vov * clm
	}
	return kpw * (vov*vds - vds*vds/2) * clm
}
