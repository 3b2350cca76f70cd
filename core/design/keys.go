package design

import (
	"math"
	"slices"
	"strconv"
	"strings"

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
	GroupAids          = "design aids"
	GroupTargets       = "targets"
	GroupSizing        = "sizing"
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

	// Text keys (vary, pin): neither a number nor one word.
	readText  func(d *Design, text string) string // applies text to d; "" or what is wrong
	writeText func(d *Design) string              // the value as a fragment writes it
	checkText func(d *Design) string              // Validate's check; "" when fine
	defText   string                              // the default, as a fragment writes it
	choices   []string                            // the parts a text key is made of (vary)
	separator string                              // what joins the parts
	accepts   string                              // what a text key accepts, in words
	long      bool                                // the value may be up to MaxFragmentBytes long

	// optional keys (the design aids) are written only when they differ
	// from their defaults, so links made before they existed keep their
	// form.
	optional bool

	setsProcess bool // later keys take their process limits from this one
}

func (k *keyDef) isWord() bool { return k.words != nil }
func (k *keyDef) isText() bool { return k.readText != nil }

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
	versionWords = []string{"1", "2"}
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
		doc: "Version of the fragment format: 2; links of version 1 open with the demo processes as they were then " +
			"(no drain-induced barrier lowering, less channel-length modulation), so they keep their figures.",
		words: func(*Design) []string { return versionWords }, defWord: "2",
		getWord: func(d *Design) string {
			switch d.Version {
			case 1:
				return "1"
			case 2:
				return "2"
			}
			return strconv.Itoa(d.Version)
		},
		setWord:   func(d *Design, w string) { d.Version = int(w[0] - '0') },
		wrongWord: func(*Design) string { return "this build reads fragment versions 1 and 2" },
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
		doc:  "Input DC level, V: the gate of a cs or sf stage, the signal source for a cg stage (bias vin; a source follower with a current-sink load uses it in every bias mode, since the sink sets the current).",
		when: []Condition{{Biases: []string{string(BiasVin)}}, {Stages: []string{string(SourceFollower)}, Loads: []string{string(LoadActive)}}},
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
	// The design aids. None of them changes the evaluation but corner.
	{
		name: "corner", group: GroupAids, label: "process corner",
		doc: "Process corner of the evaluation: tt typical, ss, ff, sf, fs (first letter NMOS, second PMOS; s slow, f fast, " +
			"3 global sigma of the demo spread).",
		words: func(*Design) []string { return cornerWords }, defWord: "tt",
		getWord:  func(d *Design) string { return d.Aids.Corner },
		setWord:  func(d *Design, w string) { d.Aids.Corner = w },
		optional: true,
	},
	{
		name: "vddtol", group: GroupAids, label: "supply tolerance of the corners",
		doc: "Supply spread of the corner table, a fraction of vdd: rows at vdd·(1 − vddtol), vdd and vdd·(1 + vddtol); " +
			"0 keeps vdd alone.",
		span: fixed(0, 0.5), def: constant(0.1), optional: true,
		get: func(d *Design) float64 { return d.Aids.VDDTol },
		set: func(d *Design, v float64) { d.Aids.VDDTol = v },
	},
	{
		name: "hold", group: GroupAids, label: "bias held by",
		doc: "What holds the bias of an id or gmid design at the corners and in Monte Carlo: mirror, a diode-connected copy " +
			"of each current-biased transistor carrying the nominal current and varying with the rest; fixed, the nominal " +
			"bias voltages; ideal, the current itself, exactly.",
		words: func(*Design) []string { return holdWords }, defWord: "mirror",
		getWord:  func(d *Design) string { return d.Aids.Hold },
		setWord:  func(d *Design, w string) { d.Aids.Hold = w },
		when:     []Condition{{Biases: []string{string(BiasID), string(BiasGmID)}}},
		optional: true,
	},
	{
		name: "amp", group: GroupAids, label: "input amplitude", unit: "V",
		doc:  "Amplitude of the input sine for the distortion figures, V.",
		span: func(_ *device.Process, d *Design) span { return span{lo: 1e-6, hi: d.VDD, hiName: "vdd"} },
		def:  constant(10e-3), log: true, optional: true,
		get: func(d *Design) float64 { return d.Aids.Amp },
		set: func(d *Design, v float64) { d.Aids.Amp = v },
	},
	{
		name: "mc", group: GroupAids, label: "Monte Carlo samples",
		doc:  "Number of Monte Carlo samples of the process spread and mismatch; 0 for none.",
		span: fixed(0, 10000), def: constant(1000), integer: true, optional: true,
		get: func(d *Design) float64 { return float64(d.Aids.MC) },
		set: func(d *Design, v float64) { d.Aids.MC = int(v) },
	},
	{
		name: "seed", group: GroupAids, label: "random seed",
		doc:  "Seed of the random draws (Monte Carlo, sizing restarts); the same seed gives the same numbers.",
		span: fixed(0, 1e9), def: constant(1), integer: true, optional: true,
		get: func(d *Design) float64 { return float64(d.Aids.Seed) },
		set: func(d *Design, v float64) { d.Aids.Seed = int(v) },
	},
	target("t.gain", "least gain", "V/V", "Sizing target: least magnitude of the midband gain, V/V.",
		fixed(1e-3, 1e6), func(t *Targets) *float64 { return &t.Gain }),
	target("t.f3db", "least bandwidth", "Hz", "Sizing target: least −3 dB bandwidth, Hz.",
		fixed(1e-3, 1e12), func(t *Targets) *float64 { return &t.F3dB }),
	target("t.gbw", "least gain–bandwidth", "Hz", "Sizing target: least gain–bandwidth product |gain|·f3db, Hz.",
		fixed(1e-3, 1e13), func(t *Targets) *float64 { return &t.GBW }),
	target("t.idd", "most supply current", "A", "Sizing target: most current drawn from the supply, A.",
		fixed(1e-12, 1), func(t *Targets) *float64 { return &t.IDD }),
	target("t.power", "most power", "W", "Sizing target: most power drawn from the supply, W.",
		fixed(1e-12, 10), func(t *Targets) *float64 { return &t.Power }),
	target("t.swing", "least output swing", "V", "Sizing target: least peak-to-peak output swing with M1 in saturation, V.",
		func(_ *device.Process, d *Design) span { return span{lo: 1e-3, hi: d.VDD, hiName: "vdd"} },
		func(t *Targets) *float64 { return &t.Swing }),
	target("t.noise", "most input noise", "V", "Sizing target: most input-referred rms noise over nlo … nhi, V.",
		fixed(1e-12, 1), func(t *Targets) *float64 { return &t.Noise }),
	target("t.margin", "least saturation margin", "V", "Sizing target: least saturation margin |VDS| − VDsat of M1, V.",
		func(_ *device.Process, d *Design) span { return span{lo: 1e-3, hi: d.VDD, hiName: "vdd"} },
		func(t *Targets) *float64 { return &t.Margin }),
	{
		name: "vary", group: GroupSizing, label: "inputs sizing may move",
		doc:      "Inputs sizing may move, joined by dots (w.l.id.rd.rs.vin.lw.ll.vout, any subset in any order), or none; those that do not matter for the stage are left alone.",
		readText: readVary, defText: "w.l.id.rd",
		writeText: func(d *Design) string { return d.Aids.Vary.String() },
		checkText: func(d *Design) string {
			if d.Aids.Vary&^varAll != 0 {
				return "inputs sizing may move: unknown bits in the set"
			}
			return ""
		},
		choices: append(append([]string(nil), varNames...), "none"), separator: ".",
		accepts:  "any of w, l, id, rd, rs, vin, lw, ll, vout joined by dots, or none",
		optional: true,
	},
	sizingRange("lo.w", "least width", "m", "Sizing: least channel width of M1, m.", widthBounds, rangeLow(1e-6), widthWhen,
		func(r *Ranges) *Range { return &r.W }, true),
	sizingRange("hi.w", "most width", "m", "Sizing: most channel width of M1, m.", widthBounds, rangeHigh(200e-6), widthWhen,
		func(r *Ranges) *Range { return &r.W }, false),
	sizingRange("lo.l", "least length", "m", "Sizing: least channel length of M1, m.", lengthBounds, rangeLowFn(func(pr *device.Process) float64 { return pr.LMin }), nil,
		func(r *Ranges) *Range { return &r.L }, true),
	sizingRange("hi.l", "most length", "m", "Sizing: most channel length of M1, m (20 × the process minimum by default).", lengthBounds,
		rangeHighFn(func(pr *device.Process) float64 { return 20 * pr.LMin }), nil,
		func(r *Ranges) *Range { return &r.L }, false),
	sizingRange("lo.id", "least drain current", "A", "Sizing: least drain current of M1, A.", fixedBounds(1e-9, 10e-3), rangeLow(1e-6),
		[]Condition{{Biases: []string{string(BiasID), string(BiasGmID)}}}, func(r *Ranges) *Range { return &r.ID }, true),
	sizingRange("hi.id", "most drain current", "A", "Sizing: most drain current of M1, A.", fixedBounds(1e-9, 10e-3), rangeHigh(1e-3),
		[]Condition{{Biases: []string{string(BiasID), string(BiasGmID)}}}, func(r *Ranges) *Range { return &r.ID }, false),
	sizingRange("lo.rd", "least drain resistor", "Ω", "Sizing: least drain resistor, Ω.", fixedBounds(1, 1e9), rangeLow(100), rdWhen,
		func(r *Ranges) *Range { return &r.RD }, true),
	sizingRange("hi.rd", "most drain resistor", "Ω", "Sizing: most drain resistor, Ω.", fixedBounds(1, 1e9), rangeHigh(1e6), rdWhen,
		func(r *Ranges) *Range { return &r.RD }, false),
	sizingRange("lo.rs", "least source resistor", "Ω", "Sizing: least source resistor, Ω (above 0: sizing moves it on a log scale).",
		fixedBounds(0, 1e9), rangeLow(10), rsWhen, func(r *Ranges) *Range { return &r.RS }, true),
	sizingRange("hi.rs", "most source resistor", "Ω", "Sizing: most source resistor, Ω.", fixedBounds(0, 1e9), rangeHigh(100e3), rsWhen,
		func(r *Ranges) *Range { return &r.RS }, false),
	// Steering sizing (sizingkeys.go): hard, obj, lo.lw, hi.lw, lo.ll, hi.ll, lo.vout, hi.vout.
	sizingSteerKeys()[0], sizingSteerKeys()[1], sizingSteerKeys()[2], sizingSteerKeys()[3],
	sizingSteerKeys()[4], sizingSteerKeys()[5], sizingSteerKeys()[6], sizingSteerKeys()[7],
	{
		name: "sw", group: GroupAids, label: "swept key",
		doc:   "Input key a sweep moves: any number key of the design or a process parameter (n.thresh).",
		words: func(*Design) []string { return sweepWords }, defWord: "w",
		getWord:  func(d *Design) string { return d.Aids.Sweep.Key },
		setWord:  func(d *Design, w string) { d.Aids.Sweep.Key = w },
		optional: true,
	},
	{
		name: "sw.lo", group: GroupAids, label: "sweep start",
		doc: "Start of the sweep of the swept key, in its unit; its whole range by default.",
		span: func(pr *device.Process, d *Design) span {
			sp := sweepSpan(pr, d, d.Aids.Sweep.Key)
			return span{lo: sp.lo, hi: sp.hi, loOpen: sp.loOpen, hiOpen: true, loName: sp.loName, hiName: sp.hiName}
		},
		def:      func(pr *device.Process, d *Design) float64 { return sweepSpan(pr, d, d.Aids.Sweep.Key).lo },
		optional: true,
		get:      func(d *Design) float64 { return d.Aids.Sweep.Lo },
		set:      func(d *Design, v float64) { d.Aids.Sweep.Lo = v },
	},
	{
		name: "sw.hi", group: GroupAids, label: "sweep stop",
		doc: "End of the sweep of the swept key, in its unit.",
		span: func(pr *device.Process, d *Design) span {
			sp := sweepSpan(pr, d, d.Aids.Sweep.Key)
			return span{lo: d.Aids.Sweep.Lo, hi: sp.hi, loOpen: true, loName: "sw.lo", hiName: sp.hiName}
		},
		def:      func(pr *device.Process, d *Design) float64 { return sweepSpan(pr, d, d.Aids.Sweep.Key).hi },
		optional: true,
		get:      func(d *Design) float64 { return d.Aids.Sweep.Hi },
		set:      func(d *Design, v float64) { d.Aids.Sweep.Hi = v },
	},
	{
		name: "sw.n", group: GroupAids, label: "sweep points",
		doc:  "Number of points of the sweep of the swept key.",
		span: fixed(2, 1000), def: constant(50), integer: true, optional: true,
		get: func(d *Design) float64 { return float64(d.Aids.Sweep.N) },
		set: func(d *Design, v float64) { d.Aids.Sweep.N = int(v) },
	},
	{
		name: "pin", group: GroupAids, label: "pinned design",
		doc: "A pinned reference design to compare with: its whole fragment, percent-encoded; empty for none.",
		// readText, writeText and checkText are set in init: they call
		// Decode, Encode and Validate, which read this table.
		defText: "",
		accepts: "a design fragment, percent-encoded, with no pin of its own; empty for none",
		long:    true, optional: true,
	},
}

// numKeys is the number of plain keys (overrides not counted).
const numKeys = len(keyTable)

// overrideParam is one process parameter a fragment may override, as
// "n.KEY" or "p.KEY", and for one length bin as "n.KEY@L". The names are
// device.ParamTable's; old is the name links made before the rename carry,
// which Decode still reads.
type overrideParam struct {
	name, old, label, unit, doc string
	lo, hi                      float64
	zeroMeans                   string // 0 is accepted besides [lo, hi] and means this
	log                         bool
	field                       func(p *device.Params) *float64 // a model parameter, or
	spread                      func(s *device.Spread) *float64 // a figure of the manufacturing spread (no length bins)
}

func (f *overrideParam) span() span {
	return span{lo: f.lo, hi: f.hi, zeroOK: f.zeroMeans != ""}
}

// overrideParams lists the overridable parameters, sorted by name. The
// ranges are generous bounds of physical sense for bulk CMOS, not the
// limits of any one process.
var overrideParams = [...]overrideParam{
	{name: "betamatch", label: "current-factor mismatch A_β", unit: "m", lo: 0, hi: 1e-7, zeroMeans: "the base process's",
		doc: "Pelgrom current-factor mismatch A_β, m (1 %·µm = 10n): σ(Δβ/β) = A_β/√(W·L) in Monte Carlo; 0 keeps the base process's.", spread: func(s *device.Spread) *float64 { return &s.ABeta }},
	{name: "body", old: "gamma", label: "body-effect coefficient", unit: "√V", lo: 0, hi: 3,
		doc: "Body-effect coefficient γ, √V.", field: func(p *device.Params) *float64 { return &p.Gamma }},
	{name: "dibl", label: "drain-induced barrier lowering", unit: "m", lo: 0, hi: 1e-6,
		doc: "Drain-induced barrier lowering σ·L, m: the threshold falls by σ·|VDS| with σ = dibl/L.", field: func(p *device.Params) *float64 { return &p.DIBL }},
	{name: "difflen", old: "ldiff", label: "diffusion length", unit: "m", lo: 0, hi: 10e-6,
		doc: "Source/drain diffusion length L_diff, m: junction area W·L_diff, perimeter W + 2·L_diff.", field: func(p *device.Params) *float64 { return &p.LDiff }},
	{name: "doping", old: "nsub", label: "substrate doping", unit: "m⁻³", lo: 1e20, hi: 1e26, zeroMeans: "unused", log: true,
		doc: "Substrate doping N_sub, m⁻³; used only when surface is 0.", field: func(p *device.Params) *float64 { return &p.NSub }},
	{name: "flicker", old: "kf", label: "flicker-noise coefficient", unit: "V²·F", lo: 0, hi: 1e-20,
		doc: "Flicker-noise coefficient K_f, V²·F: gate-referred S_vg(f) = K_f/(Cox·W·L·f).", field: func(p *device.Params) *float64 { return &p.KF }},
	{name: "jarea", old: "cj", label: "junction capacitance per area", unit: "F/m²", lo: 0, hi: 0.1,
		doc: "Zero-bias bottom junction capacitance per area C_j0, F/m².", field: func(p *device.Params) *float64 { return &p.CJ }},
	{name: "jgrade", old: "mj", label: "junction grading exponent", lo: 0, hi: 1,
		doc: "Grading exponent m_j of the bottom junction.", field: func(p *device.Params) *float64 { return &p.MJ }},
	{name: "jpotential", old: "pb", label: "junction built-in potential", unit: "V", lo: 0.1, hi: 2,
		doc: "Junction built-in potential φ_B, V.", field: func(p *device.Params) *float64 { return &p.PB }},
	{name: "jside", old: "cjsw", label: "junction sidewall capacitance", unit: "F/m", lo: 0, hi: 5e-9,
		doc: "Zero-bias sidewall junction capacitance per perimeter C_jsw0, F/m.", field: func(p *device.Params) *float64 { return &p.CJSW }},
	{name: "jsidegrade", old: "mjsw", label: "sidewall grading exponent", lo: 0, hi: 1,
		doc: "Grading exponent m_jsw of the sidewall junction.", field: func(p *device.Params) *float64 { return &p.MJSW }},
	{name: "lenmod", old: "clm", label: "channel-length modulation", unit: "m/V", lo: 0, hi: 1e-6,
		doc: "Channel-length modulation λ·L, m/V: λ = lenmod/L.", field: func(p *device.Params) *float64 { return &p.LambdaL }},
	{name: "mobility", old: "u0", label: "low-field mobility", unit: "m²/(V·s)", lo: 1e-4, hi: 0.2, log: true,
		doc: "Low-field carrier mobility µ0 at the nominal temperature, m²/(V·s).", field: func(p *device.Params) *float64 { return &p.U0 }},
	{name: "mobred", old: "theta", label: "mobility reduction", unit: "1/V", lo: 0, hi: 5,
		doc: "Mobility reduction θ by the vertical field, 1/V.", field: func(p *device.Params) *float64 { return &p.Theta }},
	{name: "mobspread", label: "global mobility spread σ(µ)/µ", lo: 0, hi: 0.3, zeroMeans: "the base process's",
		doc: "One standard deviation of the die-to-die mobility shift, relative (0.04 = 4 %), for corners (3σ) and Monte Carlo; 0 keeps the base process's.", spread: func(s *device.Spread) *float64 { return &s.SigmaMu }},
	{name: "mobtemp", old: "bex", label: "mobility temperature exponent", lo: -3, hi: 0,
		doc: "Mobility temperature exponent β_µ: µ(T) = µ0·(T/TNom)^β_µ.", field: func(p *device.Params) *float64 { return &p.BEX }},
	{name: "ovdrain", old: "cgdo", label: "gate–drain overlap capacitance", unit: "F/m", lo: 0, hi: 5e-9,
		doc: "Gate–drain overlap capacitance per width C_ov,d, F/m.", field: func(p *device.Params) *float64 { return &p.CGDO }},
	{name: "ovsource", old: "cgso", label: "gate–source overlap capacitance", unit: "F/m", lo: 0, hi: 5e-9,
		doc: "Gate–source overlap capacitance per width C_ov,s, F/m.", field: func(p *device.Params) *float64 { return &p.CGSO }},
	{name: "oxide", old: "tox", label: "oxide thickness", unit: "m", lo: 0.5e-9, hi: 100e-9, log: true,
		doc: "Gate-oxide thickness t_ox, m (Cox = 3.9·ε0/t_ox).", field: func(p *device.Params) *float64 { return &p.Tox }},
	{name: "slope", old: "nfix", label: "fixed slope factor", lo: 1, hi: 3, zeroMeans: "derived from body",
		doc: "A constant slope factor n; 0 derives n from the body-effect coefficient.", field: func(p *device.Params) *float64 { return &p.NFixed }},
	{name: "surface", old: "phi", label: "surface potential 2φF", unit: "V", lo: 0.2, hi: 1.5, zeroMeans: "derived from doping",
		doc: "Surface potential 2φF at the nominal temperature, V; 0 derives it from the doping.", field: func(p *device.Params) *float64 { return &p.Phi }},
	{name: "thresh", old: "vt0", label: "threshold voltage", unit: "V", lo: 0, hi: 2,
		doc: "Zero-bias threshold voltage magnitude V_T0 at the nominal temperature, V.", field: func(p *device.Params) *float64 { return &p.VT0 }},
	{name: "threshtemp", old: "tcv", label: "threshold temperature drift", unit: "V/K", lo: -5e-3, hi: 5e-3,
		doc: "Threshold drift dV_T0/dT, V/K: the threshold falls by threshtemp·(T − TNom).", field: func(p *device.Params) *float64 { return &p.TCV }},
	{name: "velsat", old: "ecrit", label: "critical field", unit: "V/m", lo: 1e5, hi: 1e10, zeroMeans: "off", log: true,
		doc: "Critical lateral field E_c for velocity saturation, V/m; 0 turns it off.", field: func(p *device.Params) *float64 { return &p.ECrit }},
	{name: "vtmatch", label: "threshold mismatch A_VT", unit: "V·m", lo: 0, hi: 50e-9, zeroMeans: "the base process's",
		doc: "Pelgrom threshold mismatch A_VT, V·m (1 mV·µm = 1n): σ(ΔVT) = A_VT/√(W·L) in Monte Carlo; 0 keeps the base process's.", spread: func(s *device.Spread) *float64 { return &s.AVT }},
	{name: "vtspread", label: "global threshold spread σ(VT)", unit: "V", lo: 0, hi: 0.2, zeroMeans: "the base process's",
		doc: "One standard deviation of the die-to-die threshold shift, V, for corners (3σ) and Monte Carlo; 0 keeps the base process's.", spread: func(s *device.Spread) *float64 { return &s.SigmaVT }},
}

// overrideRef says which polarity and parameter an override key names.
type overrideRef struct {
	pol   byte // 'n' or 'p'
	field int  // index into overrideParams
}

var (
	keyIndex      = map[string]int{}
	overrideIndex = map[string]overrideRef{} // by name and by old name
	overrideKeys  []string                   // every override key by its name, sorted: "n.body" … "p.velsat"
)

// tableRows is keyTable, for the functions its own rows call (a row may
// not name the table it is in).
var tableRows []keyDef

func init() {
	tableRows = keyTable[:]
	pin := &keyTable[len(keyTable)-1]
	pin.readText, pin.writeText, pin.checkText = readPin, writePin, checkPin
	for i := range keyTable {
		k := &keyTable[i]
		keyIndex[k.name] = i
		if !k.isWord() && !k.isText() && !k.optional && !notSwept[k.name] && k.name != "v" {
			sweepWords = append(sweepWords, k.name)
		}
	}
	for _, pol := range []byte{'n', 'p'} {
		for i := range overrideParams {
			key := string(pol) + "." + overrideParams[i].name
			overrideIndex[key] = overrideRef{pol: pol, field: i}
			overrideKeys = append(overrideKeys, key)
			if old := overrideParams[i].old; old != "" {
				overrideIndex[string(pol)+"."+old] = overrideRef{pol: pol, field: i}
			}
		}
	}
	sweepWords = append(sweepWords, overrideKeys...)
}

// lookupOverride returns the field an override key names, by its name
// ("n.thresh") or its old name ("n.vt0"), without a length suffix.
func lookupOverride(key string) (*overrideParam, overrideRef, bool) {
	ref, ok := overrideIndex[key]
	if !ok {
		return nil, overrideRef{}, false
	}
	return &overrideParams[ref.field], ref, true
}

// key returns the override key of ref by the parameter's name: "n.thresh".
func (ref overrideRef) key() string {
	if ref.pol == 'p' {
		return pKeys[ref.field]
	}
	return nKeys[ref.field]
}

// nKeys and pKeys are the override keys by field, made once (key runs on
// every evaluation).
var nKeys, pKeys [len(overrideParams)]string

func init() {
	for i := range overrideParams {
		nKeys[i], pKeys[i] = "n."+overrideParams[i].name, "p."+overrideParams[i].name
	}
}

// CanonicalKey returns key as the current version writes it: an override
// by its old name ("n.vt0") becomes its name ("n.thresh"); any other key is
// returned as it is.
func CanonicalKey(key string) string {
	if _, ref, ok := lookupOverride(key); ok {
		return ref.key()
	}
	return key
}

// Relevant reports whether key matters for the design's stage, load and
// bias mode. Every process-parameter override ("n.thresh") is relevant; an
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

// The design aids' words and relevance conditions.
var (
	cornerWords = device.CornerNames()
	holdWords   = []string{"mirror", "fixed", "ideal"}
	// sweepWords are the keys a sweep may move, set in init: every number
	// key of the design above the aids but the frequency sweep's own, then
	// every override.
	sweepWords []string
	widthWhen  = []Condition{{Biases: []string{string(BiasVin), string(BiasID)}}}
	rdWhen     = []Condition{{Stages: []string{string(CommonSource), string(CommonGate)}, Loads: []string{string(LoadResistor)}}}
	rsWhen     = []Condition{
		{Stages: []string{string(CommonSource)}},
		{Stages: []string{string(SourceFollower)}, Loads: []string{string(LoadResistor)}},
	}
)

// notSwept are number keys a sweep may not move: the frequency sweep's own.
var notSwept = map[string]bool{"fmin": true, "fmax": true, "ppd": true, "nlo": true, "nhi": true}

// target is the row of a sizing target: 0 means no target, any other
// value must lie in the span.
func target(name, label, unit, doc string, sp func(*device.Process, *Design) span, field func(*Targets) *float64) keyDef {
	return keyDef{
		name: name, group: GroupTargets, label: label, unit: unit, doc: doc,
		span: func(pr *device.Process, d *Design) span {
			s := sp(pr, d)
			s.zeroOK = true
			return s
		},
		def: constant(0), log: true, zeroMeans: "no target", optional: true,
		get: func(d *Design) float64 { return *field(&d.Aids.Targets) },
		set: func(d *Design, v float64) { *field(&d.Aids.Targets) = v },
	}
}

// bounds gives the interval a sizing range must lie in.
type bounds func(pr *device.Process) (lo, hi float64)

func widthBounds(pr *device.Process) (float64, float64)  { return pr.WMin, pr.WMax }
func lengthBounds(pr *device.Process) (float64, float64) { return pr.LMin, pr.LMax }
func fixedBounds(lo, hi float64) bounds {
	return func(*device.Process) (float64, float64) { return lo, hi }
}

// rangeDefault is the default of one end of a sizing range, given the
// bounds and, for the upper end, the lower end already resolved.
type rangeDefault func(pr *device.Process, lo, hi, low float64) float64

// rangeLow prefers v, kept inside [lo, hi).
func rangeLow(v float64) rangeDefault {
	return rangeLowFn(func(*device.Process) float64 { return v })
}

func rangeLowFn(v func(*device.Process) float64) rangeDefault {
	return func(pr *device.Process, lo, hi, _ float64) float64 {
		if x := clamp(v(pr), lo, hi); x < hi && x > 0 {
			return x
		}
		return lo
	}
}

// rangeHigh prefers v when it lies above the lower end, else the bound hi.
func rangeHigh(v float64) rangeDefault {
	return rangeHighFn(func(*device.Process) float64 { return v })
}

func rangeHighFn(v func(*device.Process) float64) rangeDefault {
	return func(pr *device.Process, _, hi, low float64) float64 {
		if x := v(pr); x > low && x <= hi {
			return x
		}
		return hi
	}
}

// sizingRange is the row of one end of a sizing range. The lower end lies
// in [lo, hi) of the bounds (above 0 when lo is 0: sizing moves it on a log
// scale); the upper end lies above the lower end, up to hi.
func sizingRange(name, label, unit, doc string, b bounds, def rangeDefault, when []Condition,
	field func(*Ranges) *Range, isLow bool) keyDef {
	k := keyDef{
		name: name, group: GroupSizing, label: label, unit: unit, doc: doc, when: when,
		log: true, optional: true,
	}
	if isLow {
		k.span = func(pr *device.Process, _ *Design) span {
			lo, hi := b(pr)
			return span{lo: lo, hi: hi, loOpen: lo == 0, hiOpen: true}
		}
		k.def = func(pr *device.Process, d *Design) float64 { lo, hi := b(pr); return def(pr, lo, hi, 0) }
		k.get = func(d *Design) float64 { return field(&d.Aids.Ranges).Lo }
		k.set = func(d *Design, v float64) { field(&d.Aids.Ranges).Lo = v }
		return k
	}
	loName := "lo." + name[len("hi."):]
	k.span = func(pr *device.Process, d *Design) span {
		_, hi := b(pr)
		return span{lo: field(&d.Aids.Ranges).Lo, hi: hi, loOpen: true, loName: loName}
	}
	k.def = func(pr *device.Process, d *Design) float64 {
		lo, hi := b(pr)
		return def(pr, lo, hi, field(&d.Aids.Ranges).Lo)
	}
	k.get = func(d *Design) float64 { return field(&d.Aids.Ranges).Hi }
	k.set = func(d *Design, v float64) { field(&d.Aids.Ranges).Hi = v }
	return k
}

// sweepSpan is the interval a sweep of key may cover in the context of d:
// the key's own span, without its special 0; a logarithmic key whose span
// starts at 0 starts at 1e-6 of its top instead.
func sweepSpan(pr *device.Process, d *Design, key string) span {
	var sp span
	var log bool
	if i, ok := keyIndex[key]; ok && !tableRows[i].isWord() && !tableRows[i].isText() {
		sp, log = tableRows[i].span(pr, d), tableRows[i].log
	} else if f, _, ok := lookupOverride(key); ok {
		sp, log = f.span(), f.log
	} else {
		return span{lo: 0, hi: 1}
	}
	sp.zeroOK, sp.note = false, ""
	if log && sp.lo <= 0 {
		sp.lo, sp.loOpen, sp.loName = sp.hi*1e-6, false, ""
	}
	return sp
}

// KeyRange returns the closed interval a number key or process-parameter
// override accepts for d (bounds that follow other keys take their values
// in d; an exclusive bound is returned as it is), whether a slider for it
// is logarithmic, and false for a key that is not a number key. A
// logarithmic key whose range starts at 0 starts at 1e-6 of its top, as a
// sweep's does.
func (d Design) KeyRange(key string) (lo, hi float64, log, ok bool) {
	pr := lookupProcess(d.Process)
	if i, found := keyIndex[key]; found && !keyTable[i].isWord() && !keyTable[i].isText() {
		log = keyTable[i].log
	} else if f, _, found := lookupOverride(key); found {
		log = f.log
	} else {
		return 0, 0, false, false
	}
	sp := sweepSpan(pr, &d, key)
	return sp.lo, sp.hi, log, true
}

// readVary reads the inputs sizing may move.
func readVary(d *Design, text string) string {
	const accepted = "inputs sizing may move must be any of w, l, id, rd, rs, vin, lw, ll, vout joined by dots, or none"
	if text == "none" {
		d.Aids.Vary = 0
		return ""
	}
	var set VarSet
	rest := text
	for {
		var part string
		var more bool
		part, rest, more = strings.Cut(rest, ".")
		i := slices.Index(varNames, part)
		switch {
		case i < 0:
			return accepted + " (" + strconv.Quote(part) + " is not one)"
		case set&(1<<i) != 0:
			return accepted + " (" + part + " is given twice)"
		}
		set |= 1 << i
		if !more {
			break
		}
	}
	d.Aids.Vary = set
	return ""
}

// readPin reads a pinned design: a whole fragment, already percent-decoded
// once, with no pin of its own.
func readPin(d *Design, text string) string {
	if text == "" {
		d.Aids.Pin = nil
		return ""
	}
	if hasPin(text) {
		return "a pinned design cannot pin another design (remove pin from the pinned fragment)"
	}
	pin, err := Decode(text)
	if err != nil {
		return "pinned design: " + err.Error()
	}
	d.Aids.Pin = &pin
	return ""
}

// hasPin reports whether a fragment has a pair with the key pin.
func hasPin(fragment string) bool {
	for rest := strings.TrimPrefix(fragment, "#"); rest != ""; {
		var pair string
		pair, rest, _ = strings.Cut(rest, "&")
		key, _, _ := strings.Cut(pair, "=")
		if k, err := pathUnescape(key); err == nil && k == "pin" {
			return true
		}
	}
	return false
}

func writePin(d *Design) string {
	if d.Aids.Pin == nil {
		return ""
	}
	return escapeValue(d.Aids.Pin.Encode())
}

func checkPin(d *Design) string {
	p := d.Aids.Pin
	switch {
	case p == nil:
		return ""
	case p.Aids.Pin != nil:
		return "a pinned design cannot pin another design"
	}
	if err := p.Validate(); err != nil {
		return "pinned design: " + err.Error()
	}
	return ""
}

// escapeValue percent-encodes s for a fragment value: every byte but
// letters, digits and . _ ~ - becomes %XX.
func escapeValue(s string) string {
	const hex = "0123456789ABCDEF"
	b := make([]byte, 0, len(s)*2)
	for i := 0; i < len(s); i++ {
		c := s[i]
		if 'a' <= c && c <= 'z' || 'A' <= c && c <= 'Z' || '0' <= c && c <= '9' || c == '.' || c == '_' || c == '~' || c == '-' {
			b = append(b, c)
			continue
		}
		b = append(b, '%', hex[c>>4], hex[c&15])
	}
	return string(b)
}
