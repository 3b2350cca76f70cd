package device

import "math"

// Region is the operating region shown to a user.
type Region int

// The regions, decided in this order: Cutoff when the source-end inversion
// coefficient IF is below 10⁻⁴; else Triode when |VDS| < VDsat; else
// Subthreshold when Vov < 0; else Saturation.
const (
	Cutoff Region = iota
	Subthreshold
	Triode
	Saturation
)

var regionNames = [...]string{"cutoff", "subthreshold", "triode", "saturation"}

// String returns "cutoff", "subthreshold", "triode" or "saturation".
func (r Region) String() string {
	if r >= 0 && int(r) < len(regionNames) {
		return regionNames[r]
	}
	return "region?"
}

// Inversion is the inversion level: Weak when IF < 0.1, Strong when IF > 10,
// Moderate between (common practice).
type Inversion int

// The inversion levels.
const (
	Weak Inversion = iota
	Moderate
	Strong
)

var inversionNames = [...]string{"weak", "moderate", "strong"}

// String returns "weak", "moderate" or "strong".
func (v Inversion) String() string {
	if v >= 0 && int(v) < len(inversionNames) {
		return inversionNames[v]
	}
	return "inversion?"
}

// Thresholds of the region and inversion classification.
const (
	cutoffIC = 1e-4
	weakIC   = 0.1
	strongIC = 10.0
)

// Report is the operating point of one device at given terminal voltages.
// Signed values follow the terminals (a conducting p-channel device has
// negative VGS, VDS and VTH); "normalized" values are those of the mirrored
// n-channel device and are positive in normal operation for both polarities.
// A device with its drain below its source (normalized) conducts in reverse:
// ID is then negative.
type Report struct {
	ID                 float64 // A, drain current, normalized: positive when conducting normally
	VGS, VDS, VBS, VTH float64 // V, signed terminal values; VTH includes body effect and temperature
	Vov                float64 // V, normalized VGS − VTH
	VDsat              float64 // V, 2U_T·√(IF + ¼) + 3U_T (Enz and Vittoz 2006)
	Margin             float64 // V, |VDS| − VDsat: positive in saturation
	Region             Region
	Inversion          Inversion

	GM, GMB, GDS float64 // S, as in Eval
	RO           float64 // Ω, 1/GDS; +Inf when GDS is 0 or below ~5.6e-309 S (callers must handle it)
	GmID         float64 // 1/V (S/A), GM/|ID|; 0 when ID = 0
	IC           float64 // |ID|/I_spec, the inversion coefficient in saturation
	IF           float64 // i = q² + q at the more inverted channel end; equals IC in saturation without θ, λ; decides Region and Inversion
	N            float64 // slope factor n at this bias
	QF, QR       float64 // normalized inversion charges at the source and drain ends

	CGS, CGD, CGB float64 // F, gate capacitances (intrinsic Meyer-type plus overlap)
	CDB, CSB      float64 // F, drain–bulk and source–bulk junction capacitances
	FT            float64 // Hz, GM/(2π·(CGS + CGD + CGB)); 0 when the sum is 0

	SID         float64 // A²/Hz, channel thermal-noise current PSD
	GammaNoise  float64 // SID/(4kT·n·GM): ½ in weak, ⅔ in strong inversion (saturation); 0 when GM is 0 or too small for a finite ratio
	FlickerGate float64 // V², S_vg(f) = FlickerGate/f = KF/(Cox·W·L·f)

	Ispec float64 // A, specific current 2·n·µ·Cox·(W/L)·U_T²
	Cox   float64 // F/m², oxide capacitance per area
}

// Report evaluates the full operating point at absolute terminal voltages
// vd, vg, vs, vb (V). Inputs are read as in Current. It does not allocate and
// every field is finite except RO, which is +Inf when 1/GDS overflows.
func (d *Device) Report(vd, vg, vs, vb float64) Report {
	b := d.bias(vd, vg, vs, vb)
	p := float64(d.pol)
	ut := d.ut
	var r Report

	r.ID = b.id
	r.VGS = p * (b.vg - b.vs)
	r.VDS = p * (b.vd - b.vs)
	r.VBS = -p * b.vs
	vth := d.Threshold(b.vs) - d.dibl*math.Abs(b.vd-b.vs)
	r.VTH = p * vth
	r.Vov = b.vg - b.vs - vth

	iF := b.qf * (b.qf + 1)
	iR := b.qr * (b.qr + 1)
	r.IF = math.Max(iF, iR)
	r.VDsat = 2*ut*math.Sqrt(r.IF+0.25) + 3*ut
	r.Margin = math.Abs(b.vd-b.vs) - r.VDsat
	switch {
	case r.IF < cutoffIC:
		r.Region = Cutoff
	case r.Margin < 0:
		r.Region = Triode
	case r.Vov < 0:
		r.Region = Subthreshold
	default:
		r.Region = Saturation
	}
	switch {
	case r.IF < weakIC:
		r.Inversion = Weak
	case r.IF > strongIC:
		r.Inversion = Strong
	default:
		r.Inversion = Moderate
	}

	r.GM, r.GMB, r.GDS = b.gm, b.gmb, b.gds
	r.RO = 1 / b.gds
	if b.inorm != 0 {
		r.GmID = b.gmNorm / math.Abs(b.inorm)
	}
	r.IC = math.Abs(b.inorm)
	r.N = b.n
	r.QF, r.QR = b.qf, b.qr

	d.capacitances(&r, &b)

	// Thermal noise, Enz and Vittoz 2006 long-channel form. 4kT/U_T = 4q.
	qf, qr := b.qf, b.qr
	qn := ((2.0/3)*(qf*qf+qf*qr+qr*qr) + 0.5*(qf+qr)) / (qf + qr + 1)
	r.SID = 4 * Charge * b.ispec * qn / b.mob
	// SID/(4kT·n·GM) in normalized form, which does not underflow.
	if b.gmNorm > 0 {
		if g := qn / (b.mob * b.n * ut * b.gmNorm); g <= math.MaxFloat64 {
			r.GammaNoise = g
		}
	}
	r.FlickerGate = d.flicker

	r.Ispec = b.ispec
	r.Cox = d.cox
	return r
}

// capacitances fills the gate and junction capacitances of r.
//
// Intrinsic gate capacitances, Meyer's values smoothed by the charges, with
// C = Cox·W·L and w = 2q/(2q + 1):
//
//	Cgs = ⅔·C·[1 − (q_r/(q_f + q_r))²]·w_f
//	Cgd = ⅔·C·[1 − (q_f/(q_f + q_r))²]·w_r
//	Cgb = C·(n − 1)/n·(1 − w_s)
//
// where w_s belongs to the more inverted end, so that all three follow the
// physical source and drain when the device conducts in reverse (the first two
// are symmetric under the exchange already). Strong saturation gives
// Cgs → ⅔C, Cgd → 0; VDS = 0 in strong inversion gives Cgs = Cgd → ½C; cutoff
// gives Cgb → C·(n − 1)/n, Cox in series with the depletion capacitance. The
// deviation from those limits is of order 1/(2q).
func (d *Device) capacitances(r *Report, b *biasPoint) {
	qf, qr := b.qf, b.qr
	sum := qf + qr
	wf := 2 * qf / (2*qf + 1)
	wr := 2 * qr / (2*qr + 1)
	xf, xr := qf/sum, qr/sum
	c := d.cGate
	r.CGS = (2.0/3)*c*(1-xr*xr)*wf + d.cgso
	r.CGD = (2.0/3)*c*(1-xf*xf)*wr + d.cgdo
	r.CGB = c * (b.n - 1) / b.n * (1 - math.Max(wf, wr))
	r.CDB = d.junction(b.vd)
	r.CSB = d.junction(b.vs)
	if cg := r.CGS + r.CGD + r.CGB; cg > 0 {
		r.FT = b.gm / (2 * math.Pi * cg)
	}
}

// junction returns the capacitance in F of a source or drain junction at
// reverse bias vr (V): CJ·A/(1 + VR/PB)^MJ + CJSW·P/(1 + VR/PB)^MJSW. Below
// VR = −PB/2 (forward bias) each term continues along its tangent at −PB/2
// so it stays finite.
func (d *Device) junction(vr float64) float64 {
	pb := d.prm.PB
	return graded(d.cjArea, d.prm.MJ, pb, vr) + graded(d.cjPerim, d.prm.MJSW, pb, vr)
}

// graded is one graded-junction term c0/(1 + vr/pb)^m with the linear
// continuation below vr = −pb/2.
func graded(c0, m, pb, vr float64) float64 {
	if c0 == 0 {
		return 0
	}
	const knee = 0.5 // 1 + vr/pb at vr = −pb/2
	if u := 1 + vr/pb; u >= knee {
		return c0 * math.Pow(u, -m)
	}
	ck := c0 * math.Pow(knee, -m)
	slope := -m * ck / (knee * pb) // dC/dVR at the knee
	return ck + slope*(vr+pb/2)
}
