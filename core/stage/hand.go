package stage

import (
	"math"

	"stagewright/core/device"
)

// Hand is the textbook hand estimate of a stage's midband figures, from the
// same gm, gmb and ro as the exact solution, with the formulas written out.
type Hand struct {
	Gain, Rin, Rout                      float64 // V/V, Ω, Ω (+Inf where the formula says open)
	GainFormula, RinFormula, RoutFormula string
	// SupplyGain is v(out)/v(VDD) at midband (V/V, signed) with the signal
	// held, the gate bias of a PMOS load or sink moving with VDD and every
	// other bias level fixed from ground (see supplyFormulas).
	SupplyGain    float64
	SupplyFormula string
}

func par(rs ...float64) float64 {
	g := 0.0
	for _, r := range rs {
		if math.IsInf(r, 1) {
			continue
		}
		g += 1 / r
	}
	if g == 0 {
		return math.Inf(1)
	}
	return 1 / g
}

// small holds the small-signal values a formula uses.
type small struct{ gm, gmb, ro float64 }

func fromReport(r device.Report) small { return small{r.GM, r.GMB, 1 / r.GDS} }

// HandEstimate writes the textbook estimates for the stage with M1's values
// m1 and, where there is one, the load transistor's m2.
func HandEstimate(s Spec, m1 device.Report, m2 *device.Report) Hand {
	a, b := fromReport(m1), m2small(m2)
	h := handFormulas(s, a, b)
	zl, zlName := loadSeen(s, b)
	h.SupplyGain, h.SupplyFormula = supplyFormulas(s, a, zl, zlName)
	return h
}

func m2small(m2 *device.Report) *small {
	if m2 == nil {
		return nil
	}
	v := fromReport(*m2)
	return &v
}

// SquareLawGain is the hand gain with Shichman–Hodges values at the same
// drain current: gm = 2·ID/Vov, ro = 1/(λ·ID), as a hand calculation would
// take them from the process's µCox, VT and λ.
func SquareLawGain(s Spec, m1, m2 device.SquareLaw, hasM2 bool) float64 {
	a := small{m1.GM, m1.GMB, m1.RO}
	var b *small
	if hasM2 {
		b = &small{m2.GM, m2.GMB, m2.RO}
	}
	return handFormulas(s, a, b).Gain
}

func handFormulas(s Spec, m1 small, m2 *small) Hand {
	var h Hand
	gm, gmb, ro := m1.gm, m1.gmb, m1.ro
	rl := s.RL
	inf := math.Inf(1)
	zl, zlName := loadSeen(s, m2)
	switch s.Kind {
	case CS:
		h.Rin, h.RinFormula = inf, "∞ (gate)"
		if s.RS > 0 {
			gmEff := gm / (1 + (gm+gmb)*s.RS)
			rdeg := (1+(gm+gmb)*s.RS)*ro + s.RS
			h.Gain = -gmEff * par(zl, rl)
			h.GainFormula = "−gm·(" + zlName + "‖RL)/(1+(gm+gmb)·RS)"
			h.Rout = par(zl, rdeg)
			h.RoutFormula = zlName + "‖[(1+(gm+gmb)·RS)·ro+RS]"
		} else {
			h.Gain = -gm * par(zl, ro, rl)
			h.GainFormula = "−gm·(" + zlName + "‖ro‖RL)"
			h.Rout = par(zl, ro)
			h.RoutFormula = zlName + "‖ro"
		}
	case CG:
		gt := gm + gmb
		h.Gain = gt * par(zl, rl) / (1 + gt*s.RSig)
		h.GainFormula = "(gm+gmb)·(" + zlName + "‖RL)/(1+(gm+gmb)·Rsig)"
		h.Rin = 1 / gt
		h.RinFormula = "1/(gm+gmb)"
		h.Rout = par(zl, (1+gt*s.RSig)*ro)
		h.RoutFormula = zlName + "‖[(1+(gm+gmb)·Rsig)·ro]"
	case SF:
		h.Rin, h.RinFormula = inf, "∞ (gate)"
		rload := par(zl, rl)
		h.Gain = gm * rload / (1 + (gm+gmb)*rload)
		h.GainFormula = "gm·(" + zlName + "‖RL)/(1+(gm+gmb)·(" + zlName + "‖RL))"
		h.Rout = par(1/(gm+gmb), zl)
		h.RoutFormula = "1/(gm+gmb)‖" + zlName
	}
	return h
}

// loadSeen is the load seen at the output node, looking away from M1, and
// its name in the formulas.
func loadSeen(s Spec, m2 *small) (float64, string) {
	switch s.Load {
	case Active:
		return m2.ro, "ro2"
	case Diode:
		return par(1/m2.gm, m2.ro), "(1/gm2‖ro2)"
	}
	if s.Kind == SF {
		return s.RS, "RS"
	}
	return s.RD, "RD"
}

// supplyFormulas is the textbook small-signal analysis of the supply's path
// to the output at midband (capacitors open), derived for the circuit as
// Build lays it out: the signal source, vin and vg are held (AC ground),
// the gate of a PMOS load or sink sits vbl below VDD and moves with it, an
// NMOS load's gate is held; M1's and M2's bulks are on their source rails.
// With the small-signal drain current i = gm·vgs + gmb·vbs + ro⁻¹·vds of
// each device (the standard hybrid-π model, as in every analog-design
// text), KCL at the output (and at the source node where there is one)
// gives, with Z = zl‖RL and zl the load seen from the output (RD, ro2,
// 1/gm2‖ro2, or a follower's RS, ro2):
//
//   - NMOS cs/cg, load to VDD: the output divides the supply between the
//     load zl (above; a PMOS load's vsg is held, so only its ro2 — or the
//     diode's 1/gm2‖ro2 — carries the change) and what sits below it, RL
//     and the resistance looking into M1's drain R1:
//     A_dd = (R1‖RL)/(zl + R1‖RL), R1 = ro, (1+(gm+gmb)·RS)·ro+RS with
//     degeneration, (1+(gm+gmb)·Rsig)·ro+Rsig for a cg. (The familiar
//     ro/(ro+RD) and ro1/(ro1+ro2), from memory, are the RS = 0, RL = ∞
//     cases.)
//   - PMOS cs: M1's source (through RS) and bulk are on VDD while its gate
//     is held, so the supply drives M1 as a signal at its source would:
//     A_dd = (1+gm·ro)·Z/(Z + R1), R1 = ro or (1+(gm+gmb)·RS)·ro+RS;
//     about the gain's magnitude, so the PSRR is near 0 dB.
//   - PMOS cg: only M1's bulk moves with VDD (gate held, source on Rsig):
//     A_dd = −gmb·ro·Z/(Z + R1), R1 = (1+(gm+gmb)·Rsig)·ro+Rsig.
//   - NMOS sf: only M1's drain is on VDD: A_dd = ro⁻¹/(gm+gmb+ro⁻¹+Z⁻¹).
//   - PMOS sf: M1's bulk and the load (RS, or the sink whose vsg is held)
//     are on VDD: A_dd = (zl⁻¹+gmb)/(gm+gmb+ro⁻¹+Z⁻¹).
//
// These hold exactly for the linearized stage at midband; they are the
// analysis a designer would do by hand, from the same gm, gmb and ro.
func supplyFormulas(s Spec, m1 small, zl float64, zlName string) (float64, string) {
	gm, gmb, ro := m1.gm, m1.gmb, m1.ro
	z := par(zl, s.RL)
	// withRL names r‖RL, or r alone without a load resistance. Names are
	// joined only on the branch taken: each join is an allocation, and one
	// evaluation runs per slider move.
	withRL := func(name string) string {
		if math.IsInf(s.RL, 1) {
			return name
		}
		return "(" + name + "‖RL)"
	}
	nmos := s.Pol == device.NMOS
	switch s.Kind {
	case CS, CG:
		r1, r1Name := ro, "ro"
		switch {
		case s.Kind == CG:
			r1, r1Name = (1+(gm+gmb)*s.RSig)*ro+s.RSig, "[(1+(gm+gmb)·Rsig)·ro+Rsig]"
		case s.RS > 0:
			r1, r1Name = (1+(gm+gmb)*s.RS)*ro+s.RS, "[(1+(gm+gmb)·RS)·ro+RS]"
		}
		switch {
		case nmos:
			below := par(r1, s.RL)
			belowName := withRL(r1Name)
			return below / (zl + below), belowName + "/(" + zlName + "+" + belowName + ")"
		case s.Kind == CS:
			zName := withRL(zlName)
			return (1 + gm*ro) * z / (z + r1), "(1+gm·ro)·" + zName + "/(" + zName + "+" + r1Name + ")"
		default:
			zName := withRL(zlName)
			return -gmb * ro * z / (z + r1), "−gmb·ro·" + zName + "/(" + zName + "+" + r1Name + ")"
		}
	default: // SF
		den := gm + gmb + 1/ro + 1/z
		if nmos {
			return (1 / ro) / den, "(1/ro)/(gm+gmb+1/ro+1/" + withRL(zlName) + ")"
		}
		return (1/zl + gmb) / den, "(1/" + zlName + "+gmb)/(gm+gmb+1/ro+1/" + withRL(zlName) + ")"
	}
}
