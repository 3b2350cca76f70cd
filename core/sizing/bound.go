package sizing

import (
	"fmt"
	"math"

	"stagewright/core/design"
	"stagewright/core/device"
	"stagewright/core/units"
)

// gainBandwidthBound checks the targets against a limit no sizing can beat.
// A common-source or common-gate stage has gain gm·R and, into a load
// capacitance CL, a bandwidth no higher than 1/(2π·R·CL), so its
// gain–bandwidth product is at most gm/(2π·CL) (common practice). With the
// current capped, gm is capped too: gm/ID never exceeds 1/(n·UT), its
// weak-inversion value (Enz & Vittoz 2006), with n no smaller than its
// zero-bias value 1 + γ/(2·√(2φF)) in this model. It returns an explanation
// when the targets ask for more, and "" otherwise.
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
	pr, err := d.ProcessOf()
	if err != nil {
		return ""
	}
	pol := device.NMOS
	if d.Pol == "p" {
		pol = device.PMOS
	}
	prm := pr.Params(pol)
	n := 1 + prm.Gamma/(2*math.Sqrt(prm.Phi))
	if prm.NFixed > 0 {
		n = prm.NFixed
	}
	if !(n >= 1) || math.IsNaN(n) {
		n = 1
	}
	ut := device.ThermalVoltage(d.Temp + 273.15)
	gmNeed := 2 * math.Pi * gbw * d.CL
	ratio := gmNeed / imax
	most := 1 / (n * ut)
	if ratio <= most {
		return ""
	}
	return fmt.Sprintf("%s; into CL = %s that needs gm ≥ 2π·GBW·CL = %s, which with %s is gm/ID ≥ %.3g S/A — above %.3g S/A, the most gm/ID any transistor of this process gives (1/(n·UT) in weak inversion, n = %.3g). No W, L or load meets it: it takes at least %s, or a smaller CL or gain–bandwidth product",
		how, units.Engineering(d.CL, 3, "F"), units.Engineering(gmNeed, 3, "S"), limit, ratio, most, n, units.Engineering(gmNeed*n*ut, 3, "A"))
}
