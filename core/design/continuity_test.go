package design

import (
	"fmt"
	"math"
	"testing"

	"stagewright/core/device"
)

// A slider move must never make a figure leap where the physics is smooth:
// the EKV model, the linearization and the interpolated sweep figures are
// all continuous in every input while an operating point exists.
//
// Each sweep moves one key over n steps. In log terms a smooth figure y
// changes per step by about s·(d ln y/d ln x), where s is the step in log
// terms of the slider: Δln x for the keys swept geometrically, Δx/U_T for
// the voltages (the steepest dependence of a drain current on a voltage is
// the weak-inversion exp(V/(n·U_T)) with n ≥ 1 — common practice), and
// for the temperature ΔT/T + ΔT·|tcv|/U_T (T in kelvin: mobility and U_T
// go as powers of T, and at a fixed input level the threshold drift tcv
// acts like an input step of ΔT·tcv). The log-sensitivities of these
// figures stay well below 10 in the ranges swept (id ∝ W, gm ∝ √(W·ID) …
// ID, f3db ∝ 1/CL, noise ∝ 1/√gm: exponents of order 1), so a jump of more
// than 10·s between neighbours is a discontinuity, not physics. Pairs where
// either side has no operating point, or a figure is undefined (a sweep
// that does not reach −3 dB), are skipped and counted: there the physics
// itself jumps. So are the f3db pairs of a stage that attenuates (|gain|
// < 1): there the response has a shelf where the gate–drain capacitance
// feeds the input through, within 3 dB of the low-frequency level, and the
// first −3 dB crossing jumps from the shelf's start to its end as the shelf
// sinks — the curve moves smoothly, the figure defined on it does not.
// Steps where M1 is in triode or at its edge on either side (margin
// |VDS| − VDsat below 4·U_T) are skipped too: there gds climbs from λ·ID
// towards µCox·(W/L)·Vov and Cgd from the overlap alone towards ½·W·L·Cox
// (Meyer) within a few U_T of drain voltage (the reverse charge of the EKV
// model wakes up as exp(−(VDS − VDsat)/U_T)), log-sensitivities of 10 and
// more that are physics.

// continuityFigures are the figures watched, by their JSON path.
var continuityFigures = []struct {
	name string
	get  func(r *Result) float64
}{
	{"op.id", func(r *Result) float64 { return float64(r.OP.ID) }},
	{"op.gm", func(r *Result) float64 { return float64(r.OP.GM) }},
	{"op.gds", func(r *Result) float64 { return float64(r.OP.GDS) }},
	{"op.cgs", func(r *Result) float64 { return float64(r.OP.CGS) }},
	{"op.cgd", func(r *Result) float64 { return float64(r.OP.CGD) }},
	{"op.ft", func(r *Result) float64 { return float64(r.OP.FT) }},
	{"midband.gain", func(r *Result) float64 { return float64(r.Midband.Gain) }},
	{"midband.rout", func(r *Result) float64 { return float64(r.Midband.Rout) }},
	{"ac.f3db", func(r *Result) float64 { return float64(r.AC.F3dB) }},
	{"noise.in_rms", func(r *Result) float64 { return float64(r.Noise.InRMS) }},
}

// slider is one swept key: its range, geometric or linear spacing, and how
// to set it.
type slider struct {
	key    string
	lo, hi float64
	geom   bool
	set    func(d *Design, v float64)
}

// sliders returns the keys swept for base design d over their documented
// ranges, with two cuts. A resistor sweep stops where it would drop a fifth
// (rs) or half (rd, and the current through a load resistor) of the supply
// at the design current: beyond that the stage runs into triode, where gm
// falls as fast as the drain voltage and the log-sensitivity grows without
// bound as VDS → 0. A design biased by its input level (bias vin) sweeps
// only vin and the temperature: with the input fixed, W, L or a resistor
// move the drain voltage by the stage's own gain times the change, so the
// step measure above would not hold.
func sliders(d Design) []slider {
	pr, _ := device.Builtin(d.Process)
	s := []slider{
		{"temp", -55, 150, false, func(d *Design, v float64) { d.Temp = v }},
	}
	if d.Bias == BiasVin {
		return append(s, slider{"vin", 0, d.VDD, false, func(d *Design, v float64) { d.Vin = v }})
	}
	s = append(s,
		slider{"w", pr.WMin, math.Min(pr.WMax, 1e-3), true, func(d *Design, v float64) { d.W = v }},
		slider{"l", pr.LMin, pr.LMax, true, func(d *Design, v float64) { d.L = v }},
		slider{"cl", 1e-15, 1e-6, true, func(d *Design, v float64) { d.CL = v }},
		slider{"rsig", 1, 1e9, true, func(d *Design, v float64) { d.RSig = v }},
		slider{"vdd", 0.2, 5, false, func(d *Design, v float64) { d.VDD = v }},
	)
	idmax := 10e-3
	if d.Load == LoadResistor {
		r := d.RD
		if d.Stage == SourceFollower {
			r = d.RS
		}
		idmax = 0.5 * d.VDD / r
	}
	s = append(s, slider{"id", 1e-9, idmax, true, func(d *Design, v float64) { d.ID = v }})
	if d.Load == LoadResistor && d.Stage != SourceFollower {
		s = append(s, slider{"rd", 1, 0.5 * d.VDD / d.ID, true, func(d *Design, v float64) { d.RD = v }})
	}
	if d.Stage == CommonSource {
		s = append(s, slider{"rs", 1, 0.2 * d.VDD / d.ID, true, func(d *Design, v float64) { d.RS = v }})
	}
	return s
}

func TestContinuity(t *testing.T) {
	steps := 400
	if testing.Short() {
		steps = 100
	}
	// A coarse sweep (10 points per decade to 10 GHz) keeps the test quick;
	// f3db is interpolated between sweep points, which is continuous too.
	const common = "&fmin=1&fmax=10G&ppd=10&nlo=1&nhi=100M"
	bases := []string{
		"stage=cs&pol=n&load=r&bias=id&id=100u&rd=10k",
		"stage=cs&pol=p&load=r&bias=id&id=50u&rd=10k",
		"stage=cs&pol=n&load=active&bias=id&id=20u&vout=0.9",
		"stage=cs&pol=p&load=active&bias=id&id=20u&vout=0.9",
		"stage=cg&pol=n&load=r&bias=id&id=100u&rd=5k",
		"stage=cg&pol=p&load=r&bias=id&id=50u&rd=5k",
		"stage=sf&pol=n&load=r&bias=id&id=100u&rs=5k",
		"stage=sf&pol=p&load=r&bias=id&id=50u&rs=5k",
		"stage=cs&pol=n&load=r&bias=vin&rd=10k",
		"stage=cs&pol=p&load=r&bias=vin&rd=10k",
	}
	var e Evaluator
	worst := map[string]float64{} // figure → largest jump / (10·s) seen
	worstAt := map[string]string{}
	skipped, pairs := 0, 0
	vals := make([][]float64, len(continuityFigures))
	for i := range vals {
		vals[i] = make([]float64, steps+1)
	}
	okAt := make([]bool, steps+1)
	stepLog := make([]float64, steps+1)
	attenuates := make([]bool, steps+1)
	triode := make([]bool, steps+1)
	folds, inTriode := 0, 0
	for _, base := range bases {
		d0 := mustDecode(t, base+common)
		pr, _ := device.Builtin(d0.Process)
		for _, sl := range sliders(d0) {
			for k := 0; k <= steps; k++ {
				f := float64(k) / float64(steps)
				v := sl.lo + f*(sl.hi-sl.lo)
				if sl.geom {
					v = sl.lo * math.Pow(sl.hi/sl.lo, f)
				}
				d := d0
				sl.set(&d, v)
				if sl.key == "vdd" && d.Bias == BiasVin {
					d.Vin = math.Min(d.Vin, v)
				}
				r := e.Evaluate(d)
				okAt[k] = r.OK
				attenuates[k] = r.OK && math.Abs(float64(r.Midband.Gain)) < 1
				triode[k] = r.OK && float64(r.OP.Margin) < 4*device.ThermalVoltage(d.Temp+273.15)
				if !r.OK {
					continue
				}
				for i, fig := range continuityFigures {
					vals[i][k] = fig.get(&r)
				}
				// The slider's step in log terms (see the comment above).
				switch {
				case sl.geom:
					stepLog[k] = math.Log(sl.hi/sl.lo) / float64(steps)
				case sl.key == "temp":
					dT := (sl.hi - sl.lo) / float64(steps)
					tcv := pr.Params(device.NMOS).TCV
					if d.Pol == "p" {
						tcv = pr.Params(device.PMOS).TCV
					}
					stepLog[k] = dT/(v+273.15) + dT*math.Abs(tcv)/device.ThermalVoltage(v+273.15)
				default:
					stepLog[k] = (sl.hi - sl.lo) / float64(steps) / device.ThermalVoltage(d.Temp+273.15)
				}
			}
			for k := 1; k <= steps; k++ {
				if !okAt[k] || !okAt[k-1] {
					skipped++
					continue
				}
				if triode[k] || triode[k-1] {
					inTriode++
					continue
				}
				for i, fig := range continuityFigures {
					a, b := vals[i][k-1], vals[i][k]
					if !(isFinite(a) && isFinite(b)) || a == 0 && b == 0 {
						skipped++
						continue
					}
					if fig.name == "ac.f3db" && (attenuates[k] || attenuates[k-1]) {
						folds++
						continue
					}
					pairs++
					jump := math.Inf(1) // a change of sign is a leap
					if a*b > 0 {
						jump = math.Abs(math.Log(b / a))
					}
					bound := 10 * math.Max(stepLog[k], stepLog[k-1])
					where := fmt.Sprintf("%s, %s %.4g → %.4g: %s %.4g → %.4g", base, sl.key, pos(sl, k-1, steps), pos(sl, k, steps), fig.name, a, b)
					if jump/bound > worst[fig.name] {
						worst[fig.name] = jump / bound
						worstAt[fig.name] = where
					}
					if jump > bound {
						t.Errorf("%s: jump %.3g in log terms, above 10× the slider step (%.3g)", where, jump, bound)
					}
				}
			}
		}
	}
	for _, fig := range continuityFigures {
		t.Logf("%-13s largest jump %.3g of the bound (%s)", fig.name, worst[fig.name], worstAt[fig.name])
	}
	t.Logf("%d neighbour pairs compared; skipped: %d (no operating point on one side, or a figure undefined), %d steps with M1 in or near triode, %d f3db pairs of an attenuating stage", pairs, skipped, inTriode, folds)
	if pairs < steps*len(bases)*len(continuityFigures) {
		t.Errorf("only %d pairs compared: most of the sweeps have no operating point", pairs)
	}
}

func isFinite(x float64) bool { return !math.IsNaN(x) && !math.IsInf(x, 0) }

func pos(sl slider, k, steps int) float64 {
	f := float64(k) / float64(steps)
	if sl.geom {
		return sl.lo * math.Pow(sl.hi/sl.lo, f)
	}
	return sl.lo + f*(sl.hi-sl.lo)
}
