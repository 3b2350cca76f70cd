package sizing

import (
	"math"

	"stagewright/core/design"
)

// goal is one target: its key, whether the value must be at least (min) or
// at most (max) the target, and how a value is read from an evaluation.
type goal struct {
	key, name, unit string
	atLeast         bool
	linear          bool // margins in V: compare differences, not ratios
	target          float64
	value           func(d *design.Design, r *design.Result) float64
	slack           float64 // relative miss still counted as met (metSlack, plus the leakage for a current or power)
	hard            bool    // an at-most target that not even the best compromise may exceed (Aids.Hard)
}

// goals lists the targets of d that are set (non-zero), in key-table order.
func goals(d *design.Design) []goal {
	t := d.Aids.Targets
	all := []goal{
		{key: "t.gain", name: "gain", unit: "V/V", atLeast: true, target: t.Gain, value: gainOf},
		{key: "t.f3db", name: "f3db", unit: "Hz", atLeast: true, target: t.F3dB, value: f3dbOf},
		{key: "t.gbw", name: "gbw", unit: "Hz", atLeast: true, target: t.GBW, value: func(d *design.Design, r *design.Result) float64 {
			return gainOf(d, r) * f3dbOf(d, r)
		}},
		{key: "t.idd", name: "supply current", unit: "A", target: t.IDD, value: func(d *design.Design, r *design.Result) float64 {
			return powerOf(d, r) / d.VDD
		}},
		{key: "t.power", name: "power", unit: "W", target: t.Power, value: powerOf},
		{key: "t.swing", name: "output swing", unit: "V", atLeast: true, linear: true, target: t.Swing, value: SwingEstimate},
		{key: "t.noise", name: "input noise", unit: "V", target: t.Noise, value: func(_ *design.Design, r *design.Result) float64 {
			if r.Noise == nil {
				return math.NaN()
			}
			return float64(r.Noise.InRMS)
		}},
		{key: "t.margin", name: "saturation margin", unit: "V", atLeast: true, linear: true, target: t.Margin,
			value: func(_ *design.Design, r *design.Result) float64 { return float64(r.OP.Margin) }},
	}
	var out []goal
	for _, g := range all {
		g.slack = metSlack
		switch g.key {
		case "t.idd":
			g.slack += leakSlack / g.target
		case "t.power":
			g.slack += leakSlack * d.VDD / g.target
		}
		g.hard = !g.atLeast && d.Aids.Hard.Has(g.key)
		if g.target > 0 {
			out = append(out, g)
		}
	}
	return out
}

func gainOf(_ *design.Design, r *design.Result) float64 {
	if r.Midband == nil {
		return math.NaN()
	}
	return math.Abs(float64(r.Midband.Gain))
}

// f3dbOf is the bandwidth; a response that does not fall by 3 dB within the
// sweep counts as reaching its top, fmax. One already 3 dB down at the first
// point of the sweep has its slowest pole below fmin: it counts as that
// pole's frequency (|p|/2π, no lower than the −3 dB frequency of a response
// whose slowest pole dominates), and fmin when there is no pole to read.
func f3dbOf(d *design.Design, r *design.Result) float64 {
	if r.AC == nil {
		return math.NaN()
	}
	if f := float64(r.AC.F3dB); r.AC.F3dB.Finite() {
		return f
	}
	if len(r.AC.MagDB) > 0 && r.AC.MagDB[0] <= float64(r.AC.DCGainDB)-3.0103 {
		if r.Dominant != nil && *r.Dominant >= 0 && *r.Dominant < len(r.Poles) {
			p := r.Poles[*r.Dominant]
			if f := math.Hypot(float64(p.Re), float64(p.Im)); f > 0 && f < d.FMin {
				return f
			}
		}
		return d.FMin
	}
	return d.FMax
}

func powerOf(_ *design.Design, r *design.Result) float64 {
	if r.OP == nil || r.OP.Power == nil {
		return math.NaN()
	}
	return math.Abs(float64(*r.OP.Power))
}

// SwingEstimate is the headroom estimate of the peak-to-peak output swing
// (V) with every transistor kept in saturation, from the operating point:
// for a common-source or common-gate stage the output may move between the
// source of M1 plus its saturation voltage and the supply less the load's
// saturation voltage (a resistor load reaches the rail):
//
//	swing ≈ VDD − |VS1| − VDsat1 − VDsat2,
//
// and for a source follower between the sink's saturation voltage (0 with a
// resistor) and VDD − VDsat1 − |VGS1| (the gate may rise at most to VDD).
// It is a hand estimate (common practice), not a large-signal trace. NaN
// when there is no operating point.
func SwingEstimate(d *design.Design, r *design.Result) float64 {
	if r == nil || !r.OK || r.OP == nil {
		return math.NaN()
	}
	vdsat1 := math.Abs(float64(r.OP.VDsat))
	load := 0.0
	if r.LoadOP != nil && d.Load == design.LoadActive {
		load = math.Abs(float64(r.LoadOP.VDsat))
	} else if r.LoadOP != nil && d.Load == design.LoadDiode {
		load = math.Abs(float64(r.LoadOP.VGS))
	}
	var s float64
	if d.Stage == design.SourceFollower {
		s = d.VDD - vdsat1 - math.Abs(float64(r.OP.VGS)) - load
	} else {
		vs := 0.0
		if v, ok := r.Nodes["src"]; ok && v.Finite() {
			vs = float64(v)
			if d.Pol == "p" {
				vs = d.VDD - vs
			}
		}
		s = d.VDD - math.Abs(vs) - vdsat1 - load
	}
	return math.Max(s, 0)
}

// margin is the relative margin by which value meets the goal: positive
// when met (0.1: 10 % to spare), negative when missed.
func (g *goal) margin(value float64) float64 {
	if math.IsNaN(value) {
		return math.Inf(-1)
	}
	if g.atLeast {
		return value/g.target - 1
	}
	return 1 - value/g.target
}

// score is the smooth measure the search works on: the logarithmic margin
// ln(value/target) (inverted for a most-target); for the linear targets
// (swing and margin in volts) the relative difference. Positive when met.
func (g *goal) score(value float64) float64 {
	switch {
	case math.IsNaN(value):
		return -10
	case g.linear:
		return math.Max((value-g.target)/g.target, -10)
	case value <= 0:
		if g.atLeast {
			return -10
		}
		return 10
	}
	s := math.Log(value / g.target)
	if !g.atLeast {
		s = -s
	}
	return math.Max(math.Min(s, 10), -10)
}

// objectiveOf is the value the objective of d minimises at the evaluated
// result r: the supply power (W), the gate area W·L summed over every
// transistor (m², the geometry as evaluated, so a W solved in gmid mode
// counts), or the input-referred rms noise (V). NaN when there is none.
func objectiveOf(obj design.Objective, d *design.Design, r *design.Result) float64 {
	switch obj {
	case design.ObjPower:
		return powerOf(d, r)
	case design.ObjArea:
		return AreaOf(r)
	case design.ObjNoise:
		if r.Noise == nil {
			return math.NaN()
		}
		return float64(r.Noise.InRMS)
	}
	return math.NaN()
}

// AreaOf is the gate area of the evaluated design, W·L summed over M1 and
// the load or sink transistor (m²); NaN without an operating point.
func AreaOf(r *design.Result) float64 {
	if r == nil || r.OP == nil {
		return math.NaN()
	}
	a := float64(r.OP.W) * float64(r.OP.L)
	if r.LoadOP != nil {
		a += float64(r.LoadOP.W) * float64(r.LoadOP.L)
	}
	return a
}
