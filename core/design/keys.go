package design

import (
	"math"
	"strconv"

	"stagewright/core/device"
)

// Groups of keys, in the order the page shows them.
const (
	GroupDevice        = "device"
	GroupBias          = "bias"
	GroupLoad          = "load"
	GroupSourceAndLoad = "source and load"
	GroupProcess       = "process"
	GroupSweep         = "sweep"
)

// MaxSweepPoints is the largest number of frequency points a design may ask
// for (see Design.SweepPoints).
const MaxSweepPoints = 10000

// Condition is one circumstance under which a key matters: the stage is one
// of Stages, the load one of Loads and the bias mode one of Biases. An empty
// list allows anything.
type Condition struct {
	Stages []string `json:"stages,omitempty"`
	Loads  []string `json:"loads,omitempty"`
	Biases []string `json:"biases,omitempty"`
}

// Holds reports whether the condition is met by the stage, load and bias
// mode.
func (c Condition) Holds(stage Stage, load Load, bias BiasMode) bool {
	return allowed(c.Stages, string(stage)) && allowed(c.Loads, string(load)) && allowed(c.Biases, string(bias))
}

func allowed(list []string, s string) bool {
	if len(list) == 0 {
		return true
	}
	for _, x := range list {
		if x == s {
			return true
		}
	}
	return false
}

// span is the interval a number key accepts in the context of the keys
// resolved before it.
type span struct {
	lo, hi         float64
	loOpen, hiOpen bool   // the bound itself is not accepted
	loName, hiName string // the key a bound follows ("vdd"); "" for a fixed bound
	zeroOK         bool   // 0 is accepted besides [lo, hi]
	note           string // why the interval is what it is, when that is not obvious
}

func (s span) contains(v float64) bool {
	if s.zeroOK && v == 0 {
		return true
	}
	if math.IsNaN(v) || v < s.lo || v > s.hi {
		return false
	}
	return !(s.loOpen && v == s.lo) && !(s.hiOpen && v == s.hi)
}

// keyDef is one row of the key table. A row is either a word key (words is
// set) or a number key (span is set).
type keyDef struct {
	name, group, label, unit, doc string

	when []Condition // empty: the key always matters

	// Word keys.
	words     func(d *Design) []string // the accepted words, given the keys before
	defWord   string
	getWord   func(d *Design) string
	setWord   func(d *Design, w string) // w is one of words(d)
	wrongWord func(d *Design) string    // the message for a word not accepted; nil: list the words

	// Number keys.
	span      func(pr *device.Process, d *Design) span
	def       func(pr *device.Process, d *Design) float64 // always inside span(pr, d)
	get       func(d *Design) float64
	set       func(d *Design, v float64)
	log       bool                              // a slider for it is logarithmic
	integer   bool                              // whole numbers only
	infOK     bool                              // the word "inf" is accepted and means +Inf
	zeroMeans string                            // what 0 means, when 0 is special (and accepted even below the span)
	extra     func(d *Design, v float64) string // a further check; "" when fine

	setsProcess bool // later keys take their process limits from this one
}

func (k *keyDef) isWord() bool { return k.words != nil }

// relevant reports whether the key matters for the stage, load and bias of d.
func (k *keyDef) relevant(d *Design) bool {
	if len(k.when) == 0 {
		return true
	}
	for _, c := range k.when {
		if c.Holds(d.Stage, d.Load, d.Bias) {
			return true
		}
	}
	return false
}

// The accepted words. The slices are shared; never modify them.
var (
	versionWords = []string{"1"}
	stageWords   = []string{string(CommonSource), string(CommonGate), string(SourceFollower)}
	polWords     = []string{"n", "p"}
	biasWords    = []string{string(BiasVin), string(BiasID), string(BiasGmID)}
	loadWords    = []string{string(LoadResistor), string(LoadActive), string(LoadDiode)}
	followerLoad = []string{string(LoadResistor), string(LoadActive)}
	// processNames is device.BuiltinNames(), read once.
	processNames = device.BuiltinNames()
)

// Relevance conditions shared by several keys.
var (
	transistorLoads = []Condition{{Loads: []string{string(LoadActive), string(LoadDiode)}}}
)

func fixed(lo, hi float64) func(*device.Process, *Design) span {
	return func(*device.Process, *Design) span { return span{lo: lo, hi: hi} }
}

func constant(v float64) func(*device.Process, *Design) float64 {
	return func(*device.Process, *Design) float64 { return v }
}

// upToVDD is the span of a DC level: 0 … vdd.
func upToVDD(_ *device.Process, d *Design) span {
	return span{lo: 0, hi: d.VDD, hiName: "vdd"}
}

func widthSpan(pr *device.Process, _ *Design) span  { return span{lo: pr.WMin, hi: pr.WMax} }
func lengthSpan(pr *device.Process, _ *Design) span { return span{lo: pr.LMin, hi: pr.LMax} }

// keyTable lists every plain key in the fixed order of the canonical
// fragment. The order is also the order of resolution: a key's span and
// default depend only on keys above it (the process on proc, rs on stage and
// load, DC levels on vdd, the sweep and noise band on the keys before them),
// so the order of keys in a fragment never matters.
var keyTable = [...]keyDef{
	{
		name: "v", group: GroupDevice, label: "format version",
		doc:   "Version of the fragment format; this build reads 1.",
		words: func(*Design) []string { return versionWords }, defWord: "1",
		getWord: func(d *Design) string {
			if d.Version == 1 {
				return "1"
			}
			return strconv.Itoa(d.Version)
		},
		setWord:   func(d *Design, _ string) { d.Version = 1 },
		wrongWord: func(*Design) string { return "this build reads fragment version 1" },
	},
	{
		name: "stage", group: GroupDevice, label: "stage",
		doc:   "Amplifier topology: cs common source, cg common gate, sf source follower.",
		words: func(*Design) []string { return stageWords }, defWord: string(CommonSource),
		getWord: func(d *Design) string { return string(d.Stage) },
		setWord: func(d *Design, w string) { d.Stage = Stage(w) },
	},
	{
		name: "pol", group: GroupDevice, label: "polarity",
		doc:   "Polarity of the amplifying device M1: n (NMOS) or p (PMOS, the circuit mirrored between the rails).",
		words: func(*Design) []string { return polWords }, defWord: "n",
		getWord: func(d *Design) string { return d.Pol },
		setWord: func(d *Design, w string) { d.Pol = w },
	},
	{
		name: "proc", group: GroupProcess, label: "process",
		doc:   "Built-in demo process (invented data); it sets the supply, the geometry limits and the device parameters.",
		words: func(*Design) []string { return processNames }, defWord: defaultProcess,
		getWord:     func(d *Design) string { return d.Process },
		setWord:     func(d *Design, w string) { d.Process = w },
		setsProcess: true,
	},
	{
		name: "vdd", group: GroupProcess, label: "supply voltage", unit: "V",
		doc:  "Supply voltage, V; the process's nominal supply by default.",
		span: fixed(0.2, 5),
		def:  func(pr *device.Process, _ *Design) float64 { return clamp(pr.VDD, 0.2, 5) },
		get:  func(d *Design) float64 { return d.VDD },
		set:  func(d *Design, v float64) { d.VDD = v },
	},
	{
		name: "temp", group: GroupProcess, label: "temperature", unit: "°C",
		doc:  "Temperature in degrees Celsius (the one non-SI unit, as users write it).",
		span: fixed(-55, 150), def: constant(27),
		get: func(d *Design) float64 { return d.Temp },
		set: func(d *Design, v float64) { d.Temp = v },
	},
	{
		name: "w", group: GroupDevice, label: "width", unit: "m",
		doc:  "Channel width of the amplifying device M1, m (in gmid mode the engine solves W instead).",
		when: []Condition{{Biases: []string{string(BiasVin), string(BiasID)}}},
		span: widthSpan, log: true,
		def: func(pr *device.Process, _ *Design) float64 { return clamp(10e-6, pr.WMin, pr.WMax) },
		get: func(d *Design) float64 { return d.W },
		set: func(d *Design, v float64) { d.W = v },
	},
	{
		name: "l", group: GroupDevice, label: "length", unit: "m",
		doc:  "Channel length of the amplifying device M1, m.",
		span: lengthSpan, log: true,
		def: func(pr *device.Process, _ *Design) float64 { return clamp(defaultsOf(pr).L, pr.LMin, pr.LMax) },
		get: func(d *Design) float64 { return d.L },
		set: func(d *Design, v float64) { d.L = v },
	},
	{
		name: "bias", group: GroupBias, label: "bias mode",
		doc:   "What is given: vin the input DC level, id the drain current, gmid gm/ID with the drain current (W is solved).",
		words: func(*Design) []string { return biasWords }, defWord: string(BiasID),
		getWord: func(d *Design) string { return string(d.Bias) },
		setWord: func(d *Design, w string) { d.Bias = BiasMode(w) },
	},
	{
		name: "id", group: GroupBias, label: "drain current", unit: "A",
		doc:  "Target drain current of M1, A (bias id and gmid).",
		when: []Condition{{Biases: []string{string(BiasID), string(BiasGmID)}}},
		span: fixed(1e-9, 10e-3), def: constant(100e-6), log: true,
		get: func(d *Design) float64 { return d.ID },
		set: func(d *Design, v float64) { d.ID = v },
	},
	{
		name: "gmid", group: GroupBias, label: "gm/ID", unit: "S/A",
		doc:  "Target transconductance efficiency gm/ID of M1, S/A (bias gmid).",
		when: []Condition{{Biases: []string{string(BiasGmID)}}},
		span: fixed(1, 40), def: constant(10),
		get: func(d *Design) float64 { return d.GmID },
		set: func(d *Design, v float64) { d.GmID = v },
	},
	{
		name: "vin", group: GroupBias, label: "input DC level", unit: "V",
		doc:  "Input DC level, V: the gate of a cs or sf stage, the signal source for a cg stage (bias vin).",
		when: []Condition{{Biases: []string{string(BiasVin)}}},
		span: upToVDD,
		def:  func(pr *device.Process, d *Design) float64 { v, _ := inputDefaults(pr, d); return v },
		get:  func(d *Design) float64 { return d.Vin },
		set:  func(d *Design, v float64) { d.Vin = v },
	},
	{
		name: "vg", group: GroupBias, label: "gate DC level", unit: "V",
		doc:  "Gate DC level of a common-gate stage, V.",
		when: []Condition{{Stages: []string{string(CommonGate)}}},
		span: upToVDD,
		def:  func(pr *device.Process, d *Design) float64 { _, v := inputDefaults(pr, d); return v },
		get:  func(d *Design) float64 { return d.VG },
		set:  func(d *Design, v float64) { d.VG = v },
	},
	{
		name: "vout", group: GroupBias, label: "output DC level", unit: "V",
		doc:  "Target output DC level of a cs or cg stage with a current-source load, V (bias id and gmid; a diode load sets the level itself).",
		when: []Condition{{Stages: []string{string(CommonSource), string(CommonGate)}, Loads: []string{string(LoadActive)}, Biases: []string{string(BiasID), string(BiasGmID)}}},
		span: upToVDD,
		def:  func(pr *device.Process, d *Design) float64 { return math.Min(defaultsOf(pr).VOut, d.VDD) },
		get:  func(d *Design) float64 { return d.VOut },
		set:  func(d *Design, v float64) { d.VOut = v },
	},
	{
		name: "load", group: GroupLoad, label: "load",
		doc: "What sits at the output: r a resistor, active a transistor current source (sf: a current sink), " +
			"diode a diode-connected transistor (not for sf).",
		words: func(d *Design) []string {
			if d.Stage == SourceFollower {
				return followerLoad
			}
			return loadWords
		},
		defWord: string(LoadResistor),
		getWord: func(d *Design) string { return string(d.Load) },
		setWord: func(d *Design, w string) { d.Load = Load(w) },
		wrongWord: func(d *Design) string {
			if d.Stage == SourceFollower {
				return "load must be one of r, active: a source follower cannot take a diode load"
			}
			return ""
		},
	},
	{
		name: "rd", group: GroupLoad, label: "drain resistor", unit: "Ω",
		doc:  "Drain resistor of a cs or cg stage with load r, Ω.",
		when: []Condition{{Stages: []string{string(CommonSource), string(CommonGate)}, Loads: []string{string(LoadResistor)}}},
		span: fixed(1, 1e9), log: true,
		def: func(pr *device.Process, _ *Design) float64 { return defaultsOf(pr).RD },
		get: func(d *Design) float64 { return d.RD },
		set: func(d *Design, v float64) { d.RD = v },
	},
	{
		name: "rs", group: GroupLoad, label: "source resistor", unit: "Ω",
		doc: "Source resistor, Ω: degeneration of a cs stage (0 = none), " +
			"or the bias resistor of a source follower with load r (must be above 0).",
		when: []Condition{
			{Stages: []string{string(CommonSource)}},
			{Stages: []string{string(SourceFollower)}, Loads: []string{string(LoadResistor)}},
		},
		span: func(_ *device.Process, d *Design) span {
			if d.Stage == SourceFollower && d.Load == LoadResistor {
				return span{lo: 0, hi: 1e9, loOpen: true, note: "a source follower with load r needs it to bias the output"}
			}
			return span{lo: 0, hi: 1e9}
		},
		def: func(pr *device.Process, d *Design) float64 {
			if d.Stage == SourceFollower {
				return defaultsOf(pr).RSF
			}
			return 0
		},
		log: true, zeroMeans: "none",
		get: func(d *Design) float64 { return d.RS },
		set: func(d *Design, v float64) { d.RS = v },
	},
	{
		name: "lw", group: GroupLoad, label: "load width", unit: "m",
		doc:  "Channel width of the load or sink transistor M2, m.",
		when: transistorLoads,
		span: widthSpan, log: true,
		def: func(pr *device.Process, _ *Design) float64 { return clamp(10e-6, pr.WMin, pr.WMax) },
		get: func(d *Design) float64 { return d.LoadW },
		set: func(d *Design, v float64) { d.LoadW = v },
	},
	{
		name: "ll", group: GroupLoad, label: "load length", unit: "m",
		doc:  "Channel length of the load or sink transistor M2, m.",
		when: transistorLoads,
		span: lengthSpan, log: true,
		def: func(pr *device.Process, _ *Design) float64 {
			return clamp(defaultsOf(pr).LoadL, pr.LMin, pr.LMax)
		},
		get: func(d *Design) float64 { return d.LoadL },
		set: func(d *Design, v float64) { d.LoadL = v },
	},
	{
		name: "vbl", group: GroupLoad, label: "load gate drive |VGS|", unit: "V",
		doc:  "Gate–source voltage magnitude of the current-source load or sink M2, V (given in bias vin, solved otherwise).",
		when: []Condition{{Loads: []string{string(LoadActive)}, Biases: []string{string(BiasVin)}}},
		span: upToVDD,
		def:  func(pr *device.Process, d *Design) float64 { return math.Min(defaultsOf(pr).LoadVB, d.VDD) },
		get:  func(d *Design) float64 { return d.LoadVB },
		set:  func(d *Design, v float64) { d.LoadVB = v },
	},
	{
		name: "rsig", group: GroupSourceAndLoad, label: "signal-source resistance", unit: "Ω",
		doc:  "Series resistance of the signal source, Ω.",
		span: fixed(1, 1e9), def: constant(1e3), log: true,
		get: func(d *Design) float64 { return d.RSig },
		set: func(d *Design, v float64) { d.RSig = v },
	},
	{
		name: "rl", group: GroupSourceAndLoad, label: "load resistance", unit: "Ω",
		doc:  "AC-coupled load resistance at the output, Ω; inf for none.",
		span: fixed(1, 1e9), def: constant(math.Inf(1)), log: true, infOK: true,
		get: func(d *Design) float64 { return d.RL },
		set: func(d *Design, v float64) { d.RL = v },
	},
	{
		name: "cl", group: GroupSourceAndLoad, label: "load capacitance", unit: "F",
		doc:  "Capacitance at the output, F.",
		span: fixed(0, 1e-6), def: constant(100e-15), log: true, zeroMeans: "none",
		get: func(d *Design) float64 { return d.CL },
		set: func(d *Design, v float64) { d.CL = v },
	},
	{
		name: "fmin", group: GroupSweep, label: "sweep start", unit: "Hz",
		doc:  "Lowest frequency of the AC and noise sweeps, Hz.",
		span: func(*device.Process, *Design) span { return span{lo: 1e-3, hi: 1e12, hiOpen: true} },
		def:  constant(1), log: true,
		get: func(d *Design) float64 { return d.FMin },
		set: func(d *Design, v float64) { d.FMin = v },
	},
	{
		name: "fmax", group: GroupSweep, label: "sweep stop", unit: "Hz",
		doc: "Highest frequency of the AC and noise sweeps, Hz.",
		span: func(_ *device.Process, d *Design) span {
			return span{lo: d.FMin, hi: 1e12, loOpen: true, loName: "fmin"}
		},
		def: func(_ *device.Process, d *Design) float64 {
			if d.FMin < 100e9 {
				return 100e9
			}
			return 1e12
		},
		log: true,
		get: func(d *Design) float64 { return d.FMax },
		set: func(d *Design, v float64) { d.FMax = v },
	},
	{
		name: "ppd", group: GroupSweep, label: "points per decade",
		doc:  "Frequency points per decade of the sweeps; at most 10000 points in all.",
		span: fixed(1, 200), def: constant(40), integer: true,
		get: func(d *Design) float64 { return float64(d.PPD) },
		set: func(d *Design, v float64) { d.PPD = int(v) },
		extra: func(d *Design, v float64) string {
			if n := sweepPoints(d.FMin, d.FMax, v); n > MaxSweepPoints {
				return "the sweep would have " + strconv.Itoa(n) + " points; at most " +
					strconv.Itoa(MaxSweepPoints) + " (lower ppd or narrow fmin … fmax)"
			}
			return ""
		},
	},
	{
		name: "nlo", group: GroupSweep, label: "noise band start", unit: "Hz",
		doc: "Lower end of the band over which the input-referred noise is integrated, Hz.",
		span: func(_ *device.Process, d *Design) span {
			return span{lo: d.FMin, hi: d.FMax, hiOpen: true, loName: "fmin", hiName: "fmax"}
		},
		def: func(_ *device.Process, d *Design) float64 {
			if d.FMin <= 1 && 1 < d.FMax {
				return 1
			}
			return d.FMin
		},
		log: true,
		get: func(d *Design) float64 { return d.NoiseLo },
		set: func(d *Design, v float64) { d.NoiseLo = v },
	},
	{
		name: "nhi", group: GroupSweep, label: "noise band stop", unit: "Hz",
		doc: "Upper end of the noise integration band, Hz.",
		span: func(_ *device.Process, d *Design) span {
			return span{lo: d.NoiseLo, hi: d.FMax, loOpen: true, loName: "nlo", hiName: "fmax"}
		},
		def: func(_ *device.Process, d *Design) float64 {
			if d.NoiseLo < 100e6 && 100e6 <= d.FMax {
				return 100e6
			}
			return d.FMax
		},
		log: true,
		get: func(d *Design) float64 { return d.NoiseHi },
		set: func(d *Design, v float64) { d.NoiseHi = v },
	},
}

// numKeys is the number of plain keys (overrides not counted).
const numKeys = len(keyTable)

// overrideParam is one process parameter a fragment may override, as
// "n.KEY" or "p.KEY".
type overrideParam struct {
	name, label, unit, doc string
	lo, hi                 float64
	zeroMeans              string // 0 is accepted besides [lo, hi] and means this
	log                    bool
	field                  func(p *device.Params) *float64
}

func (f *overrideParam) span() span {
	return span{lo: f.lo, hi: f.hi, zeroOK: f.zeroMeans != ""}
}

// overrideParams lists the overridable parameters, sorted by name. The
// ranges are generous bounds of physical sense for bulk CMOS, not the
// limits of any one process.
var overrideParams = [...]overrideParam{
	{name: "bex", label: "mobility temperature exponent", lo: -3, hi: 0,
		doc: "Mobility temperature exponent: µ(T) = u0·(T/TNom)^bex.", field: func(p *device.Params) *float64 { return &p.BEX }},
	{name: "cgdo", label: "gate–drain overlap capacitance", unit: "F/m", lo: 0, hi: 5e-9,
		doc: "Gate–drain overlap capacitance per width, F/m.", field: func(p *device.Params) *float64 { return &p.CGDO }},
	{name: "cgso", label: "gate–source overlap capacitance", unit: "F/m", lo: 0, hi: 5e-9,
		doc: "Gate–source overlap capacitance per width, F/m.", field: func(p *device.Params) *float64 { return &p.CGSO }},
	{name: "cj", label: "junction capacitance per area", unit: "F/m²", lo: 0, hi: 0.1,
		doc: "Zero-bias bottom junction capacitance per area, F/m².", field: func(p *device.Params) *float64 { return &p.CJ }},
	{name: "cjsw", label: "junction sidewall capacitance", unit: "F/m", lo: 0, hi: 5e-9,
		doc: "Zero-bias sidewall junction capacitance per perimeter, F/m.", field: func(p *device.Params) *float64 { return &p.CJSW }},
	{name: "clm", label: "channel-length modulation", unit: "m/V", lo: 0, hi: 1e-6,
		doc: "Channel-length modulation, m/V: λ = clm/L.", field: func(p *device.Params) *float64 { return &p.LambdaL }},
	{name: "ecrit", label: "critical field", unit: "V/m", lo: 1e5, hi: 1e10, zeroMeans: "off", log: true,
		doc: "Critical lateral field for velocity saturation, V/m; 0 turns it off.", field: func(p *device.Params) *float64 { return &p.ECrit }},
	{name: "gamma", label: "body-effect coefficient", unit: "√V", lo: 0, hi: 3,
		doc: "Body-effect coefficient, √V.", field: func(p *device.Params) *float64 { return &p.Gamma }},
	{name: "kf", label: "flicker-noise coefficient", unit: "V²·F", lo: 0, hi: 1e-20,
		doc: "Flicker-noise coefficient, V²·F: gate-referred S_vg(f) = kf/(Cox·W·L·f).", field: func(p *device.Params) *float64 { return &p.KF }},
	{name: "ldiff", label: "diffusion length", unit: "m", lo: 0, hi: 10e-6,
		doc: "Source/drain diffusion length, m: junction area W·ldiff, perimeter W + 2·ldiff.", field: func(p *device.Params) *float64 { return &p.LDiff }},
	{name: "mj", label: "junction grading exponent", lo: 0, hi: 1,
		doc: "Grading exponent of the bottom junction.", field: func(p *device.Params) *float64 { return &p.MJ }},
	{name: "mjsw", label: "sidewall grading exponent", lo: 0, hi: 1,
		doc: "Grading exponent of the sidewall junction.", field: func(p *device.Params) *float64 { return &p.MJSW }},
	{name: "nfix", label: "fixed slope factor", lo: 1, hi: 3, zeroMeans: "derived from gamma",
		doc: "A constant slope factor n; 0 derives n from gamma.", field: func(p *device.Params) *float64 { return &p.NFixed }},
	{name: "nsub", label: "substrate doping", unit: "m⁻³", lo: 1e20, hi: 1e26, zeroMeans: "unused", log: true,
		doc: "Substrate doping, m⁻³; used only when phi is 0.", field: func(p *device.Params) *float64 { return &p.NSub }},
	{name: "pb", label: "junction built-in potential", unit: "V", lo: 0.1, hi: 2,
		doc: "Junction built-in potential, V.", field: func(p *device.Params) *float64 { return &p.PB }},
	{name: "phi", label: "surface potential 2φF", unit: "V", lo: 0.2, hi: 1.5, zeroMeans: "derived from nsub",
		doc: "Surface potential 2φF at the nominal temperature, V; 0 derives it from nsub.", field: func(p *device.Params) *float64 { return &p.Phi }},
	{name: "tcv", label: "threshold temperature drift", unit: "V/K", lo: -5e-3, hi: 5e-3,
		doc: "Threshold drift, V/K: VT0(T) = vt0 − tcv·(T − TNom).", field: func(p *device.Params) *float64 { return &p.TCV }},
	{name: "theta", label: "mobility reduction", unit: "1/V", lo: 0, hi: 5,
		doc: "Mobility reduction by the vertical field, 1/V.", field: func(p *device.Params) *float64 { return &p.Theta }},
	{name: "tox", label: "oxide thickness", unit: "m", lo: 0.5e-9, hi: 100e-9, log: true,
		doc: "Gate-oxide thickness, m (Cox = 3.9·ε0/tox).", field: func(p *device.Params) *float64 { return &p.Tox }},
	{name: "u0", label: "low-field mobility", unit: "m²/(V·s)", lo: 1e-4, hi: 0.2, log: true,
		doc: "Low-field carrier mobility at the nominal temperature, m²/(V·s).", field: func(p *device.Params) *float64 { return &p.U0 }},
	{name: "vt0", label: "threshold voltage", unit: "V", lo: 0, hi: 2,
		doc: "Zero-bias threshold voltage magnitude at the nominal temperature, V.", field: func(p *device.Params) *float64 { return &p.VT0 }},
}

// overrideRef says which polarity and parameter an override key names.
type overrideRef struct {
	pol   byte // 'n' or 'p'
	field int  // index into overrideParams
}

var (
	keyIndex      = map[string]int{}
	overrideIndex = map[string]overrideRef{}
	overrideKeys  []string // every override key, sorted: "n.bex" … "p.vt0"
)

func init() {
	for i := range keyTable {
		keyIndex[keyTable[i].name] = i
	}
	for _, pol := range []byte{'n', 'p'} {
		for i := range overrideParams {
			key := string(pol) + "." + overrideParams[i].name
			overrideIndex[key] = overrideRef{pol: pol, field: i}
			overrideKeys = append(overrideKeys, key)
		}
	}
}

// lookupOverride returns the field an override key names.
func lookupOverride(key string) (*overrideParam, overrideRef, bool) {
	ref, ok := overrideIndex[key]
	if !ok {
		return nil, overrideRef{}, false
	}
	return &overrideParams[ref.field], ref, true
}

// Relevant reports whether key matters for the design's stage, load and
// bias mode. Every process-parameter override ("n.vt0") is relevant; an
// unknown key is not.
func (d Design) Relevant(key string) bool {
	if i, ok := keyIndex[key]; ok {
		return keyTable[i].relevant(&d)
	}
	_, _, ok := lookupOverride(key)
	return ok
}

// SweepPoints returns the number of frequency points of the design's sweep:
// PPD points per decade from FMin to FMax, both included, that is
// ceil(PPD·log10(FMax/FMin)) + 1. It returns 1 when the range is empty or
// not a range.
func (d Design) SweepPoints() int {
	return sweepPoints(d.FMin, d.FMax, float64(d.PPD))
}

func sweepPoints(fmin, fmax, ppd float64) int {
	if !(fmin > 0 && fmax > fmin && ppd >= 1) || math.IsInf(fmax, 0) || math.IsInf(ppd, 0) {
		return 1
	}
	// The slack keeps an exact number of decades from rounding up: the
	// rounding error of ppd·log10 is below 1e-12 for ppd·decades < 1e4.
	n := math.Ceil(ppd*math.Log10(fmax/fmin)-1e-9) + 1
	if n > 1e9 {
		return 1e9
	}
	return int(n)
}

func clamp(v, lo, hi float64) float64 {
	return math.Max(lo, math.Min(v, hi))
}
