package design

import (
	"fmt"
	"math"
	"math/cmplx"
	"strconv"

	"stagewright/core/circuit"
	"stagewright/core/device"
	"stagewright/core/stage"
	"stagewright/core/units"
)

// crossing returns the frequency where y crosses level, interpolated
// linearly in log f between the two sweep points that bracket it, searching
// from the first point on; ok is false when y never crosses.
func crossing(f, y []float64, level float64) (float64, int, bool) {
	for i := 1; i < len(f); i++ {
		a, b := y[i-1]-level, y[i]-level
		if a > 0 && b <= 0 {
			t := a / (a - b)
			lf := math.Log(f[i-1]) + t*(math.Log(f[i])-math.Log(f[i-1]))
			return math.Exp(lf), i, true
		}
	}
	return 0, 0, false
}

// figures fills the AC figures of merit from a sweep: the −3 dB frequency
// relative to the low-frequency gain, the unity-gain frequency, the
// gain–bandwidth product and the phase at unity gain.
func figures(r *circuit.Response, dcGain float64) *AC {
	ac := &AC{
		F: r.F, MagDB: r.MagDB, PhaseDeg: r.PhaseDeg, Zin: r.Zin, Zout: r.Zout,
		F3dB: Num(math.NaN()), UGF: Num(math.NaN()), GBW: Num(math.NaN()), PhaseAtUGF: Num(math.NaN()),
	}
	ref := 20 * math.Log10(math.Abs(dcGain))
	ac.DCGainDB = Num(ref)
	if f3, _, ok := crossing(r.F, r.MagDB, ref-3.0103); ok {
		ac.F3dB = Num(f3)
		ac.GBW = Num(math.Abs(dcGain) * f3)
	}
	if fu, i, ok := crossing(r.F, r.MagDB, 0); ok && ref > 0 {
		ac.UGF = Num(fu)
		t := math.Log(fu/r.F[i-1]) / math.Log(r.F[i]/r.F[i-1])
		ac.PhaseAtUGF = Num(r.PhaseDeg[i-1] + t*(r.PhaseDeg[i]-r.PhaseDeg[i-1]))
	}
	return ac
}

// estimates writes the hand estimates of the frequency behaviour beside the
// exact values: Miller input pole, output pole and right-half-plane zero of a
// common-source stage, the input and output poles of a common-gate stage,
// the left-half-plane zero of a source follower, and for every stage the
// open-circuit time-constant bandwidth 1/(2π·Σ Ri0·Ci), which equals
// 1/(2π·tr(G⁻¹C)).
func estimates(spec stage.Spec, nw *circuit.Network, m1 device.Report, mb circuit.Midband, poles, zeros []complex128, ac *AC) map[string]Est {
	out := map[string]Est{}
	hz := func(s complex128) float64 { return cmplx.Abs(s) / (2 * math.Pi) }
	add := func(name string, value, exact float64, formula string) {
		e := Est{Value: Num(value), Exact: Num(exact), Formula: formula, DiffPct: Num(math.NaN())}
		if exact != 0 && !math.IsInf(exact, 0) && !math.IsNaN(exact) {
			e.DiffPct = Num(100 * (value - exact) / exact)
		}
		out[name] = e
	}
	n := nw.N
	in, o := nw.In, nw.Out
	// Effective output resistance with the load connected.
	rout := mb.Rout
	if nw.RLG > 0 {
		rout = 1 / (1/rout + nw.RLG)
	}
	cOut := 0.0 // capacitance from the output to AC ground
	cIO := 0.0  // capacitance between input and output
	cIn := 0.0  // capacitance from the input to AC ground
	if o >= 0 && in >= 0 {
		cIO = -nw.C[in*n+o]
		cOut = nw.C[o*n+o] - cIO
		cIn = nw.C[in*n+in] - cIO
	}
	// nearestPole is the exact pole closest to a hand estimate (in
	// log-frequency): the estimate names which pole it approximates only
	// through its value, since which node is slowest depends on the design.
	nearestPole := func(est float64) float64 {
		best, dist := math.NaN(), math.Inf(1)
		for _, p := range poles {
			if d := math.Abs(math.Log(hz(p) / est)); d < dist {
				best, dist = hz(p), d
			}
		}
		return best
	}
	nearestZero := func(wantRHP bool) float64 {
		best := math.NaN()
		for _, z := range zeros {
			if (real(z) > 0) != wantRHP {
				continue
			}
			if f := hz(z); math.IsNaN(best) || f < best {
				best = f
			}
		}
		return best
	}
	rsig := spec.RSig
	gm, gmb := m1.GM, m1.GMB
	switch spec.Kind {
	case stage.CS:
		if spec.RS == 0 {
			av := gm * rout
			pin := 1 / (2 * math.Pi * rsig * (cIn + (1+av)*cIO))
			pout := 1 / (2 * math.Pi * rout * (cOut + cIO*(1+1/av)))
			add("miller_input_pole", pin, nearestPole(pin), "1/(2π·Rsig·[Cgs+(1+gm·Rout')·Cgd])")
			add("output_pole", pout, nearestPole(pout), "1/(2π·Rout'·[Cout+Cgd·(1+1/(gm·Rout'))])")
			// Each formula holds while its own node is the slow one: the Miller
			// factor 1+gm·Rout' needs the output to follow the input at the
			// midband gain up to the input pole, so the output pole must lie
			// well above it; the output-pole formula needs the input node held
			// by Rsig, so the input pole must lie well above the output pole.
			if r := pout / pin; r < poleSeparation {
				caveat(out, "miller_input_pole", fmt.Sprintf("the Miller estimate assumes the output pole lies well above the input pole (at least %g×); here the output pole (%s) is %s the input pole, as when the load capacitance dominates, so Cgd is not multiplied by the midband gain and the estimate does not hold", float64(poleSeparation), hzText(pout), ratioText(r)))
			}
			if r := pin / pout; r < poleSeparation {
				caveat(out, "output_pole", fmt.Sprintf("the output-pole estimate assumes the input pole lies well above it (at least %g×); here the input pole (%s) is %s the output pole, so the estimate does not hold", float64(poleSeparation), hzText(pin), ratioText(r)))
			}
			add("rhp_zero", gm/(2*math.Pi*cIO), nearestZero(true), "gm/(2π·Cgd)")
		}
	case stage.CG:
		gt := gm + gmb
		pin := 1 / (2 * math.Pi * cIn / (1/rsig + gt))
		pout := 1 / (2 * math.Pi * rout * cOut)
		add("input_pole", pin, nearestPole(pin), "1/(2π·(Rsig‖1/(gm+gmb))·Cin)")
		add("output_pole", pout, nearestPole(pout), "1/(2π·Rout'·Cout)")
	case stage.SF:
		if cIO > 0 {
			add("lhp_zero", gm/(2*math.Pi*cIO), nearestZero(false), "gm/(2π·Cgs)")
		}
	}
	// Open-circuit time constants: Σ Ri0·Ci = tr(G⁻¹C).
	if tau := traceGinvC(nw); tau > 0 {
		add("octc_f3db", 1/(2*math.Pi*tau), float64(ac.F3dB), "1/(2π·Σ Ri0·Ci)")
		// Σ Ri0·Ci is the sum of the pole time constants less the zeros':
		// it gives f3db when one pole dominates (and no zero is near it).
		if f1, f2, ok := twoSlowestPoles(poles); ok && f2/f1 < poleSeparation {
			caveat(out, "octc_f3db", fmt.Sprintf("the time-constant estimate assumes one dominant pole; here the second pole (%s) is %s the first (%s), so the estimate is low", hzText(f2), ratioText(f2/f1), hzText(f1)))
		}
	}
	return out
}

// poleSeparation is how far apart (a frequency ratio) two poles must lie for
// a one-pole hand estimate of either to be taken at its word: at 4× the
// neglected pole moves the estimate by some 20 %, at 10× by under 10 %
// (for two real poles, common practice).
const poleSeparation = 4

func caveat(out map[string]Est, name, text string) {
	if e, ok := out[name]; ok {
		e.Caveat = text
		out[name] = e
	}
}

func twoSlowestPoles(poles []complex128) (f1, f2 float64, ok bool) {
	f1, f2 = math.Inf(1), math.Inf(1)
	for _, p := range poles {
		f := cmplx.Abs(p) / (2 * math.Pi)
		switch {
		case f < f1:
			f1, f2 = f, f1
		case f < f2:
			f2 = f
		}
	}
	return f1, f2, !math.IsInf(f2, 0) && f1 > 0
}

func hzText(f float64) string { return units.Engineering(f, 3, "Hz") }

// ratioText says how a ratio below poleSeparation reads: "only 2.3×" above
// one, "below" at or under one.
func ratioText(r float64) string {
	if r <= 1 {
		return "below"
	}
	return "only " + strconv.FormatFloat(r, 'f', 1, 64) + "×"
}

func traceGinvC(nw *circuit.Network) float64 {
	n := nw.N
	lu, err := nw.FactorG()
	if err != nil {
		return 0
	}
	col := make([]float64, n)
	tr := 0.0
	for j := 0; j < n; j++ {
		for i := 0; i < n; i++ {
			col[i] = nw.C[i*n+j]
		}
		lu.Solve(col, col)
		tr += col[j]
	}
	return tr
}
