package design

import (
	"math"

	"stagewright/core/device"
)

// defaultProcess is the process of a fragment that names none.
const defaultProcess = "d180"

// processDefaults are the defaults that differ between processes, beyond
// what device.Process itself says (VDD and the geometry limits).
type processDefaults struct {
	L      float64 // m, M1 length
	LoadL  float64 // m, M2 length
	Vin    float64 // V, input DC level
	VG     float64 // V, cg gate level
	VOut   float64 // V, output target with transistor loads
	LoadVB float64 // V, |VGS| of M2
	RD     float64 // Ω, drain resistor
	RSF    float64 // Ω, bias resistor of a source follower with load r
}

// builtinDefaults holds the defaults for each built-in demo process. They
// are starting points chosen for these invented processes, not data of any
// real one.
var builtinDefaults = map[string]processDefaults{
	"d180": {L: 0.5e-6, LoadL: 1e-6, Vin: 0.7, VG: 1.2, VOut: 0.9, LoadVB: 0.7, RD: 10e3, RSF: 5e3},
	"d65":  {L: 0.2e-6, LoadL: 0.5e-6, Vin: 0.5, VG: 0.8, VOut: 0.6, LoadVB: 0.5, RD: 5e3, RSF: 3e3},
}

// inputLevels are the default input and cg gate levels (V) of each
// process by stage and polarity of M1: a follower's gate sits high, a
// common-gate input low, and the PMOS stages mirror the NMOS ones with room
// for the larger |VGS| of the slower device.
var inputLevels = map[string]map[string][2]float64{ // "stage/pol" → {vin, vg}
	"d180": {"cs/n": {0.7, 0.9}, "cs/p": {1.0, 0.9}, "sf/n": {1.3, 0.9}, "sf/p": {0.5, 0.9}, "cg/n": {0.3, 1.1}, "cg/p": {1.5, 0.7}},
	"d65":  {"cs/n": {0.5, 0.65}, "cs/p": {0.65, 0.65}, "sf/n": {0.9, 0.65}, "sf/p": {0.3, 0.65}, "cg/n": {0.2, 0.75}, "cg/p": {1.0, 0.4}},
}

// inputDefaults returns the default vin and vg for d's stage and polarity.
func inputDefaults(pr *device.Process, d *Design) (vin, vg float64) {
	pd := defaultsOf(pr)
	vin, vg = pd.Vin, pd.VG
	if t, ok := inputLevels[pr.Name]; ok {
		if v, ok := t[string(d.Stage)+"/"+d.Pol]; ok {
			vin, vg = v[0], v[1]
		}
	}
	return math.Min(vin, d.VDD), math.Min(vg, d.VDD)
}

// defaultsOf returns the defaults for pr; a process without an entry gets
// those of d180 (the key table clamps them into the process's limits).
func defaultsOf(pr *device.Process) processDefaults {
	if pd, ok := builtinDefaults[pr.Name]; ok {
		return pd
	}
	return builtinDefaults[defaultProcess]
}

// processes holds a copy of every built-in process, read once; the key
// table only reads them.
var processes = func() map[string]*device.Process {
	m := map[string]*device.Process{}
	for _, name := range device.BuiltinNames() {
		pr, _ := device.Builtin(name)
		m[name] = &pr
	}
	return m
}()

// lookupProcess returns the built-in process called name, or d180 when
// there is none by that name. The result is shared: never modify it.
func lookupProcess(name string) *device.Process {
	if pr, ok := processes[name]; ok {
		return pr
	}
	if pr, ok := processes[defaultProcess]; ok {
		return pr
	}
	return &device.Process{}
}

// Default returns the default design for the built-in process proc; ""
// and any name that is not a built-in process mean d180. The result passes
// Validate and has no overrides (Overrides is nil).
//
// Defaults that depend on other keys follow them: vdd is the process's
// supply; vin, vg, vout and vbl are the process's values or vdd when that is
// lower; rs is 10 kΩ for a source follower and 0 (none) otherwise; fmax, nlo
// and nhi stay inside the sweep. Decode applies the same rules, whatever the
// order of the keys in the fragment.
func Default(proc string) Design {
	var given [numKeys]givenValue
	if _, ok := device.Builtin(proc); ok {
		given[keyIndex["proc"]] = givenValue{text: proc, present: true}
	}
	d, _ := resolve(&given)
	return d
}
