package design

import (
	"errors"
	"fmt"
	"math"
	"sort"

	"stagewright/core/circuit"
	"stagewright/core/device"
	"stagewright/core/stage"
)

// Evaluator turns designs into results. It keeps the sweep workspace
// between calls, so evaluating on every slider move reuses memory. The
// series in a Result (ac, noise) belong to the Evaluator and are overwritten
// by its next Evaluate. The zero value is ready to use; it is not safe for
// concurrent use.
type Evaluator struct {
	an    circuit.Analyzer
	resp  circuit.Response
	sweep [3]float64 // fmin, fmax, ppd of the frequencies in resp.F
}

// Evaluate evaluates d with a fresh Evaluator.
func Evaluate(d Design) Result {
	var e Evaluator
	return e.Evaluate(d)
}

// EvaluateFragment decodes a fragment and evaluates it. Problems in the
// fragment are listed in the result; the design is evaluated with the
// defaults in their place.
func (e *Evaluator) EvaluateFragment(fragment string) Result {
	d, err := Decode(fragment)
	r := e.evaluate(d, true) // Decode returns a design that passes Validate
	var fe *FragmentError
	if errors.As(err, &fe) {
		r.Problems = append(fe.Problems, r.Problems...)
	} else if err != nil {
		r.Problems = append(r.Problems, Problem{Message: err.Error()})
	}
	return r
}

// Spec converts a design into the stage specification it describes.
func (d Design) Spec() (stage.Spec, error) {
	pr, err := d.ProcessOf()
	if err != nil {
		return stage.Spec{}, err
	}
	pol := device.NMOS
	if d.Pol == "p" {
		pol = device.PMOS
	}
	return stage.Spec{
		Kind: stage.Kind(d.Stage), Pol: pol, Load: stage.Load(d.Load), Bias: stage.Bias(d.Bias),
		Process: pr, VDD: d.VDD, TempK: d.Temp + 273.15,
		W: d.W, L: d.L, ID: d.ID, GmID: d.GmID, Vin: d.Vin, VG: d.VG, VOut: d.VOut,
		RD: d.RD, RS: d.RS, LoadW: d.LoadW, LoadL: d.LoadL, LoadVB: d.LoadVB,
		RSig: d.RSig, RL: d.RL, CL: d.CL,
	}, nil
}

func fail(r Result, code, key, msg string) Result {
	r.OK = false
	r.Error = &Failure{Code: code, Message: msg, Key: key}
	return r
}

// Evaluate solves the operating point of d and computes every small-signal
// figure. It never panics: a design that cannot be evaluated gives a
// result with OK false and an error that names the input to change.
func (e *Evaluator) Evaluate(d Design) Result { return e.evaluate(d, false) }

func (e *Evaluator) evaluate(d Design, valid bool) (res Result) {
	res = Result{Warnings: []string{}, Zeros: []Root{}}
	defer func() {
		if p := recover(); p != nil {
			res = fail(Result{Warnings: []string{}, Zeros: []Root{}, Design: res.Design}, "internal", "", fmt.Sprintf("internal error while evaluating: %v", p))
		}
	}()
	if valid {
		// Decode has checked every key.
	} else if err := d.Validate(); err != nil {
		key := ""
		var fe *FragmentError
		if errors.As(err, &fe) && len(fe.Problems) > 0 {
			key = fe.Problems[0].Key
			res.Problems = fe.Problems
		}
		return fail(res, "fragment", key, err.Error())
	}
	res.Design = d.Encode()
	spec, err := d.Spec()
	if err != nil {
		return fail(res, "fragment", "proc", err.Error())
	}
	// Every evaluation starts from the same guess, so a fragment gives the
	// same result to the last bit whatever was evaluated before it.
	sol, err := stage.Solve(spec)
	if err != nil {
		var se *stage.Error
		if errors.As(err, &se) {
			code := "no_operating_point"
			switch {
			case se.SolverFailed:
				code = CodeSolverFailed
			case se.Key == "gmid" || se.Key == "stage" || se.Key == "load" || se.Key == "pol":
				code = "bias"
			}
			return fail(res, code, se.Key, se.Message)
		}
		return fail(res, "internal", "", err.Error())
	}
	res.Iterations = sol.Iterations
	res.Method = sol.OP.Method
	res.Warnings = append(res.Warnings, sol.Warnings...)

	// Operating point: op (M1's, with the stage's power), and one entry of
	// devices per transistor, load_op being M2's. One allocation holds
	// them all.
	m1 := sol.Report(1)
	st := new(opStore)
	st.op = deviceOP(m1, sol.W, spec.L)
	st.power = Num(spec.VDD * sol.SupplyCurrent())
	st.op.Power = &st.power
	res.OP = &st.op
	st.devices[0] = Device{Name: sol.C.FETs[sol.M1].Name, Role: sol.Role(sol.M1), Pol: polName(spec.Pol), DeviceOP: st.op}
	st.devices[0].Power = nil
	res.Devices = st.devices[:1]
	var m2 *device.Report
	if sol.M2 >= 0 {
		r2 := sol.Report(2)
		m2 = &r2
		st.devices[1] = Device{Name: sol.C.FETs[sol.M2].Name, Role: sol.Role(sol.M2), Pol: polName(sol.Dev2.Polarity()), DeviceOP: deviceOP(r2, spec.LoadW, spec.LoadL)}
		res.LoadOP = &st.devices[1].DeviceOP
		res.Devices = st.devices[:2]
	}
	res.Nodes = map[string]Num{}
	for name := range sol.Nodes {
		v, _ := sol.Node(name)
		res.Nodes[name] = Num(v)
	}

	// Small signal.
	nw, err := sol.C.Linearize(sol.OP, sol.Ports, spec.TempK)
	if err != nil {
		return fail(res, "internal", "", err.Error())
	}
	mb, err := nw.Midband()
	if err != nil {
		return fail(res, "internal", "", err.Error())
	}
	supply, err := nw.SupplyGain()
	if err != nil {
		return fail(res, "internal", "", err.Error())
	}
	res.Midband = &Midband{
		Gain: Num(mb.Gain), GainDB: Num(20 * math.Log10(math.Abs(mb.Gain))), Rin: Num(mb.Rin), Rout: Num(mb.Rout),
		SupplyGain: Num(supply), PSRRdB: Num(psrrDB(mb.Gain, supply)),
	}
	if supply == 0 {
		res.Warnings = append(res.Warnings, "psrr is infinite: no path carries a supply change to the output at low frequency")
	}
	if math.IsInf(mb.Rin, 0) {
		res.Warnings = append(res.Warnings, "rin is infinite: the input is a gate, which draws no current at low frequency")
	}
	if math.IsInf(mb.Rout, 0) {
		res.Warnings = append(res.Warnings, "rout is infinite: nothing at the output conducts at low frequency")
	}
	h := stage.HandEstimate(sol.Built.Spec, m1, m2)
	res.Hand = &HandResult{
		Triple:     Triple{Gain: Num(h.Gain), Rin: Num(h.Rin), Rout: Num(h.Rout)},
		SupplyGain: Num(h.SupplyGain), PSRRdB: Num(psrrDB(h.Gain, h.SupplyGain)),
		Formula: map[string]string{"gain": h.GainFormula, "rin": h.RinFormula, "rout": h.RoutFormula, "supply_gain": h.SupplyFormula},
	}
	res.DiffPct = &Diffs{
		Triple:     Triple{Gain: pct(h.Gain, mb.Gain), Rin: pct(h.Rin, mb.Rin), Rout: pct(h.Rout, mb.Rout)},
		SupplyGain: pct(h.SupplyGain, supply),
	}
	sq1 := sol.Dev1.SquareLawAt(m1.ID, -m1.VBS*float64(spec.Pol))
	var sq2 device.SquareLaw
	if m2 != nil {
		sq2 = sol.Dev2.SquareLawAt(m2.ID, -m2.VBS*float64(sol.Dev2.Polarity()))
	}
	res.Square = &SquareLaw{Vov: Num(sq1.Vov), GM: Num(sq1.GM), Gain: Num(stage.SquareLawGain(sol.Built.Spec, sq1, sq2, m2 != nil))}

	// Frequency response and noise over one sweep.
	if key := [3]float64{d.FMin, d.FMax, float64(d.PPD)}; key != e.sweep || len(e.resp.F) == 0 {
		e.resp.F = circuit.LogSweep(e.resp.F, d.FMin, d.FMax, d.PPD)
		e.resp.Resize(len(e.resp.F))
		e.sweep = key
	}
	e.an.Sweep(nw, &e.resp)
	res.AC = figures(&e.resp, mb.Gain)
	inRMS, outRMS := e.resp.NoiseRMS(d.NoiseLo, d.NoiseHi)
	res.Noise = &Noise{
		F: e.resp.F, Out: e.resp.NoiseOut, In: e.resp.NoiseIn,
		InRMS:  Num(inRMS),
		OutRMS: Num(outRMS),
		Band:   [2]Num{Num(d.NoiseLo), Num(d.NoiseHi)},
		Corner: Num(math.Inf(1)),
	}
	if fc, ok := nw.FlickerCorner(); ok {
		res.Noise.Corner = Num(fc)
	}

	// Poles and zeros.
	poles, err := nw.Poles()
	if err != nil {
		res.Warnings = append(res.Warnings, "poles could not be computed: "+err.Error())
	}
	zeros, err := nw.Zeros()
	if err != nil {
		res.Warnings = append(res.Warnings, "zeros could not be computed: "+err.Error())
	}
	res.Poles = roots(poles)
	res.Zeros = roots(zeros)
	if len(res.Poles) > 0 {
		dom := 0 // roots are sorted by magnitude: the slowest pole dominates
		res.Dominant = &dom
	}
	res.Estimate = estimates(spec, nw, m1, mb, poles, zeros, res.AC)

	// Large signal.
	res.Large = &LargeSignal{}
	if sl, ok := sol.Slew(spec.CL); ok {
		res.Large.Slew = &SlewRate{Up: Num(sl.Up), Down: Num(sl.Down), IUp: Num(sl.IUp), IDown: Num(sl.IDown)}
	}
	res.OK = true
	return res
}

// opStore holds the operating-point figures of one result.
type opStore struct {
	op      DeviceOP
	power   Num
	devices [2]Device
}

func polName(p device.Polarity) string {
	if p == device.PMOS {
		return "p"
	}
	return "n"
}

// psrrDB is the supply rejection 20·log10(|gain|/|supply gain|), dB: the
// signal gain over the gain from the supply, the usual definition. It is
// +Inf (null in JSON) when the supply gain is 0.
func psrrDB(gain, supply float64) float64 {
	if supply == 0 {
		return math.Inf(1)
	}
	return 20 * math.Log10(math.Abs(gain)/math.Abs(supply))
}

func pct(hand, exact float64) Num {
	if math.IsInf(hand, 0) && math.IsInf(exact, 0) {
		return 0
	}
	if exact == 0 || math.IsInf(hand, 0) || math.IsInf(exact, 0) {
		return Num(math.NaN())
	}
	return Num(100 * (hand - exact) / math.Abs(exact))
}

func deviceOP(r device.Report, w, l float64) DeviceOP {
	return DeviceOP{
		ID: Num(r.ID), VGS: Num(r.VGS), VDS: Num(r.VDS), VBS: Num(r.VBS), VTH: Num(r.VTH),
		Vov: Num(r.Vov), VDsat: Num(r.VDsat), Region: r.Region.String(), Inversion: r.Inversion.String(),
		GM: Num(r.GM), GMB: Num(r.GMB), GDS: Num(r.GDS), RO: Num(r.RO), GmID: Num(r.GmID), IC: Num(r.IC),
		N: Num(r.N), Margin: Num(r.Margin),
		CGS: Num(r.CGS), CGD: Num(r.CGD), CGB: Num(r.CGB), CDB: Num(r.CDB), CSB: Num(r.CSB), FT: Num(r.FT),
		Gamma: Num(r.GammaNoise), W: Num(w), L: Num(l),
	}
}

func roots(s []complex128) []Root {
	out := make([]Root, len(s))
	for i, v := range s {
		out[i] = Root{Re: Num(real(v) / (2 * math.Pi)), Im: Num(imag(v) / (2 * math.Pi))}
	}
	sort.SliceStable(out, func(i, j int) bool {
		return math.Hypot(float64(out[i].Re), float64(out[i].Im)) < math.Hypot(float64(out[j].Re), float64(out[j].Im))
	})
	return out
}
