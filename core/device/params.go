package device

import (
	"fmt"
	"sort"
	"strconv"
)

// Polarity says whether a device is n-channel or p-channel.
type Polarity int

// The two polarities. The values are the signs used to mirror a p-channel
// device onto the n-channel equations.
const (
	NMOS Polarity = 1
	PMOS Polarity = -1
)

// String returns "n" or "p".
func (p Polarity) String() string {
	switch p {
	case NMOS:
		return "n"
	case PMOS:
		return "p"
	}
	return "Polarity(" + strconv.Itoa(int(p)) + ")"
}

// ParsePolarity reads "n" or "p", the forms String writes.
func ParsePolarity(s string) (Polarity, error) {
	switch s {
	case "n":
		return NMOS, nil
	case "p":
		return PMOS, nil
	}
	return 0, fmt.Errorf("device: polarity %q is not \"n\" or \"p\"", s)
}

// Params holds one polarity's process parameters in SI units. Threshold and
// other voltages are magnitudes: VT0 is positive for a p-channel device too.
type Params struct {
	VT0     float64 // V, zero-bias threshold magnitude at the nominal temperature
	U0      float64 // m²/(V·s), low-field mobility at the nominal temperature
	Tox     float64 // m, gate-oxide thickness; Cox = 3.9·ε0/Tox
	Gamma   float64 // √V, body-effect coefficient
	Phi     float64 // V, surface potential 2φF at the nominal temperature; 0 = derive it from NSub and ni(T)
	NSub    float64 // m⁻³, substrate doping, used only when Phi == 0
	NFixed  float64 // when > 0, a constant slope factor n (simple EKV form VP = (VGB − VT0)/n); 0 = derive n from Gamma
	LambdaL float64 // m/V, channel-length modulation: λ = LambdaL/L
	Theta   float64 // 1/V, mobility reduction by the vertical field
	ECrit   float64 // V/m, critical lateral field for velocity saturation; 0 = off
	TCV     float64 // V/K, threshold drift: VT0(T) = VT0 − TCV·(T − TNom)
	BEX     float64 // mobility temperature exponent: µ(T) = U0·(T/TNom)^BEX, normally about −1.5
	CGSO    float64 // F/m, gate–source overlap capacitance per width
	CGDO    float64 // F/m, gate–drain overlap capacitance per width
	CJ      float64 // F/m², zero-bias bottom junction capacitance
	CJSW    float64 // F/m, zero-bias sidewall junction capacitance
	MJ      float64 // bottom junction grading exponent
	MJSW    float64 // sidewall junction grading exponent
	PB      float64 // V, junction built-in potential
	LDiff   float64 // m, source/drain diffusion length: area W·LDiff, perimeter W + 2·LDiff
	KF      float64 // V²·F, flicker coefficient: gate-referred S_vg(f) = KF/(Cox·W·L·f)
	DIBL    float64 // m, drain-induced barrier lowering: the threshold falls by σ·|VDS| with σ = DIBL/L (V/V)
}

// RangeError reports a value outside its accepted range: a process
// parameter, a geometry or a temperature.
type RangeError struct {
	Name     string  // the field or argument, e.g. "VT0", "W"
	Value    float64 // the value given
	Min, Max float64 // the accepted closed range
	Unit     string  // SI unit of Value, Min and Max ("" when dimensionless)
	Note     string  // extra condition, e.g. "or exactly 0 (off)"; may be empty
}

func (e *RangeError) Error() string {
	u := ""
	if e.Unit != "" {
		u = " " + e.Unit
	}
	s := fmt.Sprintf("device: %s = %g%s is outside the accepted range [%g, %g]%s", e.Name, e.Value, u, e.Min, e.Max, u)
	if e.Note != "" {
		s += " " + e.Note
	}
	return s
}

// paramRange is one row of the table Validate checks.
type paramRange struct {
	name     string
	get      func(Params) float64
	min, max float64
	unit     string
	zeroOK   bool // 0 means "off" or "derive it", allowed besides [min, max]
}

// paramRanges are wide enough for any plausible bulk CMOS process and narrow
// enough that every derived quantity stays finite.
var paramRanges = []paramRange{
	{"VT0", func(p Params) float64 { return p.VT0 }, -1, 2, "V", false},
	{"U0", func(p Params) float64 { return p.U0 }, 1e-4, 1, "m²/(V·s)", false},
	{"Tox", func(p Params) float64 { return p.Tox }, 0.5e-9, 1e-6, "m", false},
	{"Gamma", func(p Params) float64 { return p.Gamma }, 0, 5, "√V", false},
	{"Phi", func(p Params) float64 { return p.Phi }, 0.2, 1.5, "V", true},
	{"NSub", func(p Params) float64 { return p.NSub }, 1e20, 1e26, "m⁻³", true},
	{"NFixed", func(p Params) float64 { return p.NFixed }, 1, 5, "", true},
	{"LambdaL", func(p Params) float64 { return p.LambdaL }, 0, 1e-5, "m/V", false},
	{"Theta", func(p Params) float64 { return p.Theta }, 0, 10, "1/V", false},
	{"ECrit", func(p Params) float64 { return p.ECrit }, 1e5, 1e10, "V/m", true},
	{"TCV", func(p Params) float64 { return p.TCV }, -0.01, 0.01, "V/K", false},
	{"BEX", func(p Params) float64 { return p.BEX }, -4, 2, "", false},
	{"CGSO", func(p Params) float64 { return p.CGSO }, 0, 1e-8, "F/m", false},
	{"CGDO", func(p Params) float64 { return p.CGDO }, 0, 1e-8, "F/m", false},
	{"CJ", func(p Params) float64 { return p.CJ }, 0, 0.1, "F/m²", false},
	{"CJSW", func(p Params) float64 { return p.CJSW }, 0, 1e-8, "F/m", false},
	{"MJ", func(p Params) float64 { return p.MJ }, 0, 1, "", false},
	{"MJSW", func(p Params) float64 { return p.MJSW }, 0, 1, "", false},
	{"PB", func(p Params) float64 { return p.PB }, 0.1, 2, "V", false},
	{"LDiff", func(p Params) float64 { return p.LDiff }, 0, 1e-4, "m", false},
	{"KF", func(p Params) float64 { return p.KF }, 0, 1e-20, "V²·F", false},
	{"DIBL", func(p Params) float64 { return p.DIBL }, 0, 1e-6, "m", false},
}

// Validate checks every field against its accepted range and returns a
// *RangeError naming the first bad field. NaN and ±Inf are always rejected.
// Phi == 0 requires NSub in range, since 2φF is then derived from it.
func (p Params) Validate() error {
	for _, r := range paramRanges {
		v := r.get(p)
		if r.zeroOK && v == 0 {
			continue
		}
		if !(v >= r.min && v <= r.max) { // also catches NaN
			e := &RangeError{Name: r.name, Value: v, Min: r.min, Max: r.max, Unit: r.unit}
			if r.zeroOK {
				e.Note = "or exactly 0"
			}
			return e
		}
	}
	if p.Phi == 0 && p.NSub == 0 {
		return &RangeError{Name: "NSub", Value: 0, Min: 1e20, Max: 1e26, Unit: "m⁻³",
			Note: "(needed because Phi = 0 asks for 2φF to be derived from the doping)"}
	}
	return nil
}

// Process is a named set of n- and p-channel parameters with the supply and
// geometry limits a design may use.
type Process struct {
	Name       string  // short key, e.g. "d180"
	Title      string  // human title
	VDD        float64 // V, nominal supply
	LMin, LMax float64 // m, allowed channel length
	WMin, WMax float64 // m, allowed channel width
	TNom       float64 // K, temperature at which the parameters hold
	N, P       Params

	// NBins and PBins are per-length parameter sets, sorted by L; empty
	// when one set (N, P) serves every length. See ParamsAt.
	NBins, PBins []Bin

	// NSpread and PSpread replace the manufacturing spread field by field
	// where they are not 0 (a user's own figures); see Spread.
	NSpread, PSpread Spread
}

// Params returns the parameters of polarity p; for a value that is neither
// NMOS nor PMOS it returns the zero Params, which New rejects.
func (pr Process) Params(p Polarity) Params {
	switch p {
	case NMOS:
		return pr.N
	case PMOS:
		return pr.P
	}
	return Params{}
}

// Validate checks the supply, geometry limits, nominal temperature and both
// parameter sets. Errors name the process and the polarity.
func (pr Process) Validate() error {
	for _, c := range [...]RangeError{
		{Name: "VDD", Value: pr.VDD, Min: 0.1, Max: 100, Unit: "V"},
		{Name: "LMin", Value: pr.LMin, Min: minSize, Max: maxSize, Unit: "m"},
		{Name: "LMax", Value: pr.LMax, Min: pr.LMin, Max: maxSize, Unit: "m"},
		{Name: "WMin", Value: pr.WMin, Min: minSize, Max: maxSize, Unit: "m"},
		{Name: "WMax", Value: pr.WMax, Min: pr.WMin, Max: maxSize, Unit: "m"},
		{Name: "TNom", Value: pr.TNom, Min: minTemp, Max: maxTemp, Unit: "K"},
	} {
		if !(c.Value >= c.Min && c.Value <= c.Max) {
			e := c
			return fmt.Errorf("device: process %q: %w", pr.Name, &e)
		}
	}
	if err := pr.N.Validate(); err != nil {
		return fmt.Errorf("device: process %q, n-channel: %w", pr.Name, err)
	}
	if err := pr.P.Validate(); err != nil {
		return fmt.Errorf("device: process %q, p-channel: %w", pr.Name, err)
	}
	if err := validateBins(pr.NBins, pr.LMin, pr.LMax); err != nil {
		return fmt.Errorf("device: process %q, n-channel %w", pr.Name, err)
	}
	if err := validateBins(pr.PBins, pr.LMin, pr.LMax); err != nil {
		return fmt.Errorf("device: process %q, p-channel %w", pr.Name, err)
	}
	return nil
}

// The built-in processes. INVENTED DEMO DATA: the numbers are chosen to be
// plausible for the technology class and describe no real process.
var builtins = map[string]Process{
	// A 1.8 V, 180 nm-class demo process (invented).
	"d180": {
		Name:  "d180",
		Title: "Demo 180 nm, 1.8 V (invented demo data, not a real process)",
		VDD:   1.8,
		LMin:  180e-9, LMax: 20e-6,
		WMin: 220e-9, WMax: 1e-3,
		TNom: 300.15,
		N: Params{
			VT0:     0.45,
			U0:      0.030,  // 300 cm²/(V·s)
			Tox:     4.1e-9, // Cox ≈ 8.42 mF/m² (8.42 fF/µm²)
			Gamma:   0.45,
			Phi:     0.85,
			LambdaL: 0.03e-6, // λ ≈ 0.17 /V at L = 180 nm, 0.03 /V at 1 µm
			DIBL:    3.6e-9,  // σ = 0.02 V/V at 180 nm: gm·ro ≈ 31 at gm/ID 11 S/A, VDS 1.3 V
			Theta:   0.25,
			ECrit:   4e6, // 1/(ECrit·LMin) ≈ 1.4 /V
			TCV:     1.0e-3,
			BEX:     -1.5,
			CGSO:    0.35e-9, CGDO: 0.35e-9, // 0.35 fF/µm
			CJ: 1.0e-3, CJSW: 2.0e-10, // 1 fF/µm², 0.2 fF/µm
			MJ: 0.40, MJSW: 0.30,
			PB:    0.80,
			LDiff: 0.5e-6,
			KF:    1e-25,
		},
		P: Params{
			VT0:     0.45,
			U0:      0.008, // 80 cm²/(V·s)
			Tox:     4.1e-9,
			Gamma:   0.40,
			Phi:     0.80,
			LambdaL: 0.035e-6, // λ ≈ 0.19 /V at 180 nm
			DIBL:    4.0e-9,   // σ ≈ 0.022 V/V at 180 nm
			Theta:   0.20,
			ECrit:   1.2e7,
			TCV:     1.2e-3,
			BEX:     -1.3,
			CGSO:    0.33e-9, CGDO: 0.33e-9,
			CJ: 1.1e-3, CJSW: 2.5e-10,
			MJ: 0.45, MJSW: 0.33,
			PB:    0.85,
			LDiff: 0.5e-6,
			KF:    2e-26,
		},
	},
	// A 1.2 V, 65 nm-class demo process (invented).
	"d65": {
		Name:  "d65",
		Title: "Demo 65 nm, 1.2 V (invented demo data, not a real process)",
		VDD:   1.2,
		LMin:  65e-9, LMax: 10e-6,
		WMin: 120e-9, WMax: 1e-3,
		TNom: 300.15,
		N: Params{
			VT0:     0.35,
			U0:      0.022,  // 220 cm²/(V·s)
			Tox:     1.8e-9, // Cox ≈ 19.2 mF/m²
			Gamma:   0.35,
			Phi:     0.95,
			LambdaL: 0.018e-6, // λ ≈ 0.28 /V at L = 65 nm
			DIBL:    1.3e-9,   // σ = 0.02 V/V at 65 nm: gm·ro ≈ 25 at gm/ID 11 S/A, VDS 0.8 V
			Theta:   0.45,
			ECrit:   3.5e6, // 1/(ECrit·LMin) ≈ 4.4 /V
			TCV:     0.8e-3,
			BEX:     -1.4,
			CGSO:    0.30e-9, CGDO: 0.30e-9,
			CJ: 1.2e-3, CJSW: 0.8e-10,
			MJ: 0.35, MJSW: 0.25,
			PB:    0.75,
			LDiff: 0.2e-6,
			KF:    6e-26,
		},
		P: Params{
			VT0:     0.33,
			U0:      0.007, // 70 cm²/(V·s)
			Tox:     1.9e-9,
			Gamma:   0.32,
			Phi:     0.90,
			LambdaL: 0.022e-6, // λ ≈ 0.34 /V at 65 nm
			DIBL:    1.5e-9,   // σ ≈ 0.023 V/V at 65 nm
			Theta:   0.35,
			ECrit:   1e7,
			TCV:     1.0e-3,
			BEX:     -1.2,
			CGSO:    0.28e-9, CGDO: 0.28e-9,
			CJ: 1.3e-3, CJSW: 0.9e-10,
			MJ: 0.38, MJSW: 0.27,
			PB:    0.78,
			LDiff: 0.2e-6,
			KF:    1.5e-26,
		},
	},
}

// Builtin returns the newest version of the built-in process with the
// given name. Both built-in processes are invented demo data.
func Builtin(name string) (Process, bool) {
	return BuiltinVersion(name, LatestVersion)
}

// LatestVersion is the newest version of the built-in processes.
const LatestVersion = 2

// BuiltinVersion returns a version of a built-in process, so that a design
// made with an older version keeps its figures. Version 1 had no
// drain-induced barrier lowering and a smaller channel-length modulation,
// which gave gm·ro ≈ 120 at the minimum length, three to five times what
// such a node gives; version 2 (the newest) brings it to a few tens.
// Versions outside 1 … LatestVersion are not found.
func BuiltinVersion(name string, version int) (Process, bool) {
	pr, ok := builtins[name]
	if !ok || version < 1 || version > LatestVersion {
		return Process{}, false
	}
	if version == 1 {
		v1 := version1LambdaL[name]
		pr.N.LambdaL, pr.N.DIBL = v1[0], 0
		pr.P.LambdaL, pr.P.DIBL = v1[1], 0
	}
	return pr, true
}

// version1LambdaL holds the channel-length modulation of version 1 of each
// built-in process, n-channel then p-channel (DIBL was 0).
var version1LambdaL = map[string][2]float64{
	"d180": {0.02e-6, 0.025e-6},
	"d65":  {0.012e-6, 0.015e-6},
}

// BuiltinNames returns the names of the built-in processes, sorted.
func BuiltinNames() []string {
	names := make([]string, 0, len(builtins))
	for k := range builtins {
		names = append(names, k)
	}
	sort.Strings(names)
	return names
}
