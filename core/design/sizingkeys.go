package design

import (
	"slices"
	"strconv"
	"strings"

	"stagewright/core/device"
)

// HardSet is a set of at-most sizing targets made hard: the bits of
// HardIDD … HardNoise.
type HardSet uint8

// The at-most targets that may be made hard, in their canonical order.
const (
	HardIDD   HardSet = 1 << iota // t.idd, the supply current (word idd)
	HardPower                     // t.power (word power)
	HardNoise                     // t.noise, the input-referred rms noise (word noise)
	hardAll   = HardIDD | HardPower | HardNoise
)

// hardNames are the words of HardIDD … HardNoise in bit order; each is its
// target's key without "t.".
var hardNames = []string{"idd", "power", "noise"}

// Has reports whether the set holds the target called key ("t.idd" or
// "idd").
func (h HardSet) Has(key string) bool {
	i := slices.Index(hardNames, strings.TrimPrefix(key, "t."))
	return i >= 0 && h&(1<<i) != 0
}

// String returns the words joined by dots ("idd.power"), or "none".
func (h HardSet) String() string {
	var parts []string
	for i, n := range hardNames {
		if h&(1<<i) != 0 {
			parts = append(parts, n)
		}
	}
	if len(parts) == 0 {
		return "none"
	}
	return strings.Join(parts, ".")
}

// Objective is what sizing minimises once every target is met.
type Objective string

// The objectives.
const (
	ObjNone  Objective = "none"  // stop at the first design that meets every target
	ObjPower Objective = "power" // least power drawn from the supply
	ObjArea  Objective = "area"  // least gate area: W·L summed over every transistor
	ObjNoise Objective = "noise" // least input-referred rms noise over nlo … nhi
)

var objectiveWords = []string{string(ObjNone), string(ObjPower), string(ObjArea), string(ObjNoise)}

// readHard reads the targets made hard.
func readHard(d *Design, text string) string {
	const accepted = "hard targets must be any of idd, power, noise joined by dots, or none"
	if text == "none" {
		d.Aids.Hard = 0
		return ""
	}
	var set HardSet
	for _, part := range strings.Split(text, ".") {
		i := slices.Index(hardNames, part)
		switch {
		case i < 0:
			return accepted + " (" + strconv.Quote(part) + " is not one)"
		case set&(1<<i) != 0:
			return accepted + " (" + part + " is given twice)"
		}
		set |= 1 << i
	}
	d.Aids.Hard = set
	return ""
}

// sizingSteerKeys returns the rows of the key table that steer sizing:
// which at-most targets are hard, the objective, and the ranges of the load
// transistor's geometry and of a current-source load's output level.
//
// The hard set is empty by default: a link made before the key existed
// sizes as it did, and a soft cap lets the best compromise show how much
// current (power, noise) the other targets would need, which a designer
// asks for when the cap is a wish rather than a budget; a budget is made
// hard by naming it.
func sizingSteerKeys() [8]keyDef {
	return [8]keyDef{
		{
			name: "hard", group: GroupSizing, label: "hard targets",
			doc:      "At-most targets sizing never exceeds, not even in its best compromise, joined by dots (idd.power.noise, any subset), or none.",
			readText: readHard, defText: "none",
			writeText: func(d *Design) string { return d.Aids.Hard.String() },
			checkText: func(d *Design) string {
				if d.Aids.Hard&^hardAll != 0 {
					return "hard targets: unknown bits in the set"
				}
				return ""
			},
			choices: append(append([]string(nil), hardNames...), "none"), separator: ".",
			accepts:  "any of idd, power, noise joined by dots, or none",
			optional: true,
		},
		{
			name: "obj", group: GroupSizing, label: "objective",
			doc: "What sizing minimises once every target is met: power (supply power), area (W·L summed over every transistor), " +
				"noise (input-referred rms noise), or none (the first design that meets them).",
			words:    func(*Design) []string { return objectiveWords },
			defWord:  string(ObjNone),
			getWord:  func(d *Design) string { return string(d.Aids.Objective) },
			setWord:  func(d *Design, w string) { d.Aids.Objective = Objective(w) },
			optional: true,
		},
		sizingRange("lo.lw", "least load width", "m", "Sizing: least channel width of the load transistor M2, m.", widthBounds, rangeLow(1e-6),
			transistorLoads, func(r *Ranges) *Range { return &r.LW }, true),
		sizingRange("hi.lw", "most load width", "m", "Sizing: most channel width of the load transistor M2, m.", widthBounds, rangeHigh(200e-6),
			transistorLoads, func(r *Ranges) *Range { return &r.LW }, false),
		sizingRange("lo.ll", "least load length", "m", "Sizing: least channel length of the load transistor M2, m.", lengthBounds,
			rangeLowFn(func(pr *device.Process) float64 { return pr.LMin }), transistorLoads, func(r *Ranges) *Range { return &r.LL }, true),
		sizingRange("hi.ll", "most load length", "m", "Sizing: most channel length of the load transistor M2, m (20 × the process minimum by default).", lengthBounds,
			rangeHighFn(func(pr *device.Process) float64 { return 20 * pr.LMin }), transistorLoads, func(r *Ranges) *Range { return &r.LL }, false),
		voutRange(true),
		voutRange(false),
	}
}

// voutWhen: the output level is an input only of a cs or cg stage with a
// current-source load biased by current (as the vout key itself).
var voutWhen = []Condition{{Stages: []string{string(CommonSource), string(CommonGate)}, Loads: []string{string(LoadActive)},
	Biases: []string{string(BiasID), string(BiasGmID)}}}

// voutRange is lo.vout or hi.vout: inside 0 … vdd, by default a tenth of
// the supply from either rail.
func voutRange(isLow bool) keyDef {
	k := keyDef{group: GroupSizing, unit: "V", when: voutWhen, optional: true}
	if isLow {
		k.name, k.label = "lo.vout", "least output level"
		k.doc = "Sizing: least output DC level of a current-source load, V (a tenth of vdd by default)."
		k.span = func(_ *device.Process, d *Design) span { return span{lo: 0, hi: d.VDD, hiOpen: true, hiName: "vdd"} }
		k.def = func(_ *device.Process, d *Design) float64 { return d.VDD / 10 }
		k.get = func(d *Design) float64 { return d.Aids.Ranges.VOut.Lo }
		k.set = func(d *Design, v float64) { d.Aids.Ranges.VOut.Lo = v }
		return k
	}
	k.name, k.label = "hi.vout", "most output level"
	k.doc = "Sizing: most output DC level of a current-source load, V (vdd less a tenth by default)."
	k.span = func(_ *device.Process, d *Design) span {
		return span{lo: d.Aids.Ranges.VOut.Lo, hi: d.VDD, loOpen: true, loName: "lo.vout", hiName: "vdd"}
	}
	k.def = func(_ *device.Process, d *Design) float64 { return d.VDD - d.VDD/10 }
	k.get = func(d *Design) float64 { return d.Aids.Ranges.VOut.Hi }
	k.set = func(d *Design, v float64) { d.Aids.Ranges.VOut.Hi = v }
	return k
}
