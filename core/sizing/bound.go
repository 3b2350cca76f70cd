package sizing

import (
	"fmt"
	"math"

	"stagewright/core/design"
	"stagewright/core/device"
	"stagewright/core/units"
)

// gbwLimit is the most 2π·GBW·CL per ampere of supply current (S/A) that
// any design of a stage can reach, and the reasoning in words.
type gbwLimit struct {
	most float64 // S/A
	why  string
}

// stageGBWLimit is the bound for the stage of d, with gainAtLeast the least
// gain the targets ask for (0 when none). ok is false when no bound holds.
//
// The gain–bandwidth product of a stage that drives CL is at most its
// transconductance over 2π·CL: the gain is Gm·R and the output pole is no
// faster than 1/(2π·R·CL) (common practice). What caps Gm per ampere depends
// on the stage:
//
//   - Common source: the gate drives the channel, Gm ≤ gm, and
//     gm/ID ≤ 1/(n·UT) in every region (its weak-inversion value, Enz &
//     Vittoz 2006), n taken where the pinch-off voltage VP is 0. M1's source
//     sits on its bulk (or above it, through RS: then Gm = gm/(1 + (gm+gmb)·RS)
//     loses more than the smaller n gains), so a weakly inverted channel has
//     VP ≤ 0 and n no smaller than that; a stronger one loses far more in gm/ID
//     than n gives. n falls with temperature through 2φF, so it is read from
//     the model at the design's temperature.
//   - Common gate: the source drives the channel, and the stage's gain goes
//     with gm + gmb + gds, the source transconductance gms, whose
//     weak-inversion limit is 1/UT: no slope factor divides it (Enz & Vittoz
//     2006). gms = −∂ID/∂VS grows with the forward current IF alone, while
//     ID = IF − IR; in triode the reverse current IR is not small and gms/ID has no limit at all (a channel at
//     VDS ≈ 0 passes the signal at gain ≈ 1 with almost no current). The gain
//     is at most gms/gds ≤ IF/IR, so a gain of at least A keeps IR/IF ≤ 1/A
//     and gms/ID ≤ 1/(UT·(1 − 1/A)). Channel-length modulation adds λ·ID and
//     barrier lowering σ·gm ≤ σ·gms to gms. Without a gain target above 1
//     there is no bound.
//     The bound needs a gain target of at least 2: a gain near 1 can be held
//     up by the signal through Cgd rather than gm.
//   - Source follower: no bound (its gain is below 1 and its bandwidth is
//     not set by the load alone).
func stageGBWLimit(d *design.Design, gainAtLeast float64) (gbwLimit, bool) {
	spec, err := d.Spec()
	if err != nil {
		return gbwLimit{}, false
	}
	prm := spec.Process.ParamsAt(spec.Pol, spec.L)
	ut := device.ThermalVoltage(spec.TempK)
	switch d.Stage {
	case design.CommonSource:
		// The signal that crosses Cgd from the gate (a capacitive divider,
		// at most Cgd/(Cgd + Cout) < 1 of it) can hold a low gain within
		// 3 dB past the output pole, so that gain times f3db is not
		// limited by gm. A gain of at least 2 (above √2) must fall by 3 dB
		// before it reaches that plateau; the bound is stated from there.
		if !(gainAtLeast >= 2) {
			return gbwLimit{}, false
		}
		n, ok := slopeAtZeroVP(spec.Pol, prm, spec.Process.TNom, spec.TempK)
		if !ok {
			return gbwLimit{}, false
		}
		return gbwLimit{most: 1 / (n * ut), why: fmt.Sprintf("1/(n·UT) in weak inversion, n = %.3g at VP = 0", n)}, true
	case design.CommonGate:
		// A p-channel common-gate stage draws its current from the signal
		// source's DC level, not the supply, so a supply-current cap does
		// not cap M1's current.
		if spec.Pol == device.PMOS || !(gainAtLeast > 1) {
			return gbwLimit{}, false
		}
		lmin := math.Min(d.L, d.Aids.Ranges.L.Lo)
		lambda := prm.LambdaL / lmin
		sigma := prm.DIBL / lmin
		most := (1+sigma)/(ut*(1-1/gainAtLeast)) + lambda
		return gbwLimit{most: most, why: fmt.Sprintf("(gm+gmb+gds)/ID ≤ 1/(UT·(1 − 1/A)) at gain A = %.3g, in weak inversion", gainAtLeast)}, true
	}
	return gbwLimit{}, false
}

// slopeAtZeroVP is the model's slope factor n where the pinch-off voltage is
// 0, that is with the gate at the threshold and the source on the bulk
// (EKV: VP(VG = VT0) = 0, Enz & Vittoz 2006).
func slopeAtZeroVP(pol device.Polarity, prm device.Params, tnom, tempK float64) (float64, bool) {
	const l, vds = 1e-6, 1.0
	dev, err := device.New(pol, prm, tnom, 10e-6, l, tempK)
	if err != nil {
		return 0, false
	}
	s := float64(pol)
	// Barrier lowering raises the gate's effect by σ·VDS (σ = dibl/L), so
	// VP = 0 sits that much below the zero-bias threshold at VDS = 1 V.
	vg := dev.Threshold(0) - prm.DIBL/l*vds
	n := dev.Report(s*vds, s*vg, 0, 0).N
	if !(n >= 1) || math.IsInf(n, 0) {
		return 0, false
	}
	return n, true
}

// gainBandwidthBound checks the targets against a limit no sizing can beat
// (stageGBWLimit) and returns an explanation when the targets ask for more,
// and "" otherwise.
func gainBandwidthBound(d *design.Design) string {
	t := d.Aids.Targets
	if d.Stage == design.SourceFollower || d.CL <= 0 {
		return ""
	}
	gbw, how := t.GBW, fmt.Sprintf("t.gbw = %s", units.Engineering(t.GBW, 3, "Hz"))
	if t.Gain > 0 && t.F3dB > 0 && t.Gain*t.F3dB > gbw {
		gbw = t.Gain * t.F3dB
		how = fmt.Sprintf("gain ≥ %.3g V/V with f3db ≥ %s is a gain–bandwidth product of %s", t.Gain, units.Engineering(t.F3dB, 3, "Hz"), units.Engineering(gbw, 3, "Hz"))
	}
	imax := math.Inf(1)
	limit := ""
	if t.IDD > 0 {
		imax, limit = t.IDD, "a supply current of at most "+units.Engineering(t.IDD, 3, "A")
	}
	if t.Power > 0 && t.Power/d.VDD < imax {
		imax, limit = t.Power/d.VDD, "a power of at most "+units.Engineering(t.Power, 3, "W")
	}
	if gbw <= 0 || math.IsInf(imax, 1) {
		return ""
	}
	lim, ok := stageGBWLimit(d, t.Gain)
	if !ok {
		return ""
	}
	gmNeed := 2 * math.Pi * gbw * d.CL
	ratio := gmNeed / imax
	if ratio <= lim.most {
		return ""
	}
	return fmt.Sprintf("%s; into CL = %s that needs a transconductance ≥ 2π·GBW·CL = %s, which with %s is %.3g S/A — above %.3g S/A, the most a %s stage of this process gives per ampere (%s), so no W, L or load meets it: it takes at least %s, or a smaller CL or gain–bandwidth product",
		how, units.Engineering(d.CL, 3, "F"), units.Engineering(gmNeed, 3, "S"), limit, ratio, lim.most, d.Stage, lim.why, units.Engineering(gmNeed/lim.most, 3, "A"))
}
