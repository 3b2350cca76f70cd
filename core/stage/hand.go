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
	return handFormulas(s, fromReport(m1), m2small(m2))
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
	// The load seen at the output node, looking away from M1.
	var zl float64
	var zlName string
	switch s.Load {
	case Resistor:
		zl, zlName = s.RD, "RD"
		if s.Kind == SF {
			zl, zlName = s.RS, "RS"
		}
	case Active:
		zl, zlName = m2.ro, "ro2"
	case Diode:
		zl, zlName = par(1/m2.gm, m2.ro), "(1/gm2‖ro2)"
	}
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
