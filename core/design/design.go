package design

// Stage is the amplifier topology.
type Stage string

const (
	CommonSource   Stage = "cs"
	CommonGate     Stage = "cg"
	SourceFollower Stage = "sf"
)

// Load is what sits between the output and the rail opposite the amplifying
// device (for a source follower: what biases the output node).
type Load string

const (
	LoadResistor Load = "r"      // a drain resistor rd (source follower: source resistor rs)
	LoadActive   Load = "active" // a complementary-transistor current source (source follower: a same-type current sink)
	LoadDiode    Load = "diode"  // a diode-connected complementary transistor (not for a source follower)
)

// BiasMode says which quantity the user fixes and which the engine solves for.
type BiasMode string

const (
	BiasVin  BiasMode = "vin"  // the input DC level is given
	BiasID   BiasMode = "id"   // the drain current is given; the engine finds the bias voltages
	BiasGmID BiasMode = "gmid" // gm/ID and the drain current are given; the engine finds W at the given L
)

// Override replaces one process parameter of one polarity, e.g. Key
// "n.thresh". With L = 0 it applies at every length; with L > 0 it belongs
// to the parameter set fitted at that length (a length bin, written
// "n.thresh@180n" in a fragment), and a polarity with any such override
// has bins (see device.Process.ParamsAt).
type Override struct {
	Key   string
	L     float64 // m, the bin's length; 0 = every length
	Value float64
}

// Design holds everything one amplifier design needs. All values are SI
// (m, V, A, Ω, F, Hz) except Temp, which is in degrees Celsius as users
// write it. The zero value is not a valid design; start from Default.
type Design struct {
	Version int
	Stage   Stage
	Pol     string // "n" or "p": polarity of the amplifying device
	Process string // built-in process name
	VDD     float64
	Temp    float64 // °C

	W, L float64 // amplifying device geometry

	Bias BiasMode
	ID   float64 // target drain current (bias id, gmid)
	GmID float64 // target gm/ID in S/A (bias gmid)
	Vin  float64 // input DC level: gate for cs/sf, signal-source DC level for cg
	VG   float64 // gate DC level of a cg stage
	VOut float64 // target output DC level for transistor loads in id/gmid mode

	Load   Load
	RD     float64 // drain resistor (load r, cs/cg)
	RS     float64 // cs: degeneration resistor (0 = none); sf with load r: bias resistor
	LoadW  float64 // load / sink transistor width
	LoadL  float64 // load / sink transistor length
	LoadVB float64 // |VGS| of the load / sink transistor (given in vin mode; solved for where the table in the README says)

	RSig float64 // signal-source series resistance
	RL   float64 // AC-coupled load resistance; +Inf = none
	CL   float64 // load capacitance at the output

	FMin, FMax float64 // sweep range
	PPD        int     // sweep points per decade
	NoiseLo    float64 // integration band for input-referred rms noise
	NoiseHi    float64

	Overrides []Override // sorted by Key; empty when none

	Aids Aids // inputs of the design aids (corner, targets, sizing, sweep, pinned design)
}

// Aids holds the inputs of the design aids. Only Corner changes the
// evaluation itself (see Design.ProcessOf); the rest are read by the aids:
// distortion and Monte Carlo, sizing to Targets by moving Vary within
// Ranges, a sweep of one input key, and a pinned reference design.
type Aids struct {
	Corner string  // process corner: tt, ss, ff, sf, fs (first letter NMOS, second PMOS)
	VDDTol float64 // the corner table's supply spread, a fraction of VDD
	Hold   string  // what holds an id or gmid bias at the corners and in Monte Carlo: mirror, fixed, ideal
	Amp    float64 // V, amplitude of the input sine for distortion
	MC     int     // Monte Carlo samples, 0 … 10000
	Seed   int     // seed of every random draw

	Targets Targets
	Vary    VarSet // the inputs sizing may move
	Ranges  Ranges // where sizing may move them
	// Hard are the at-most targets sizing never lets even its best
	// compromise exceed; Objective what it minimises once every target is
	// met (ObjNone: it stops at the first design that meets them).
	Hard      HardSet
	Objective Objective

	Sweep SweepSpec

	// Pin is a pinned reference design, nil when none. It has no pin of
	// its own.
	Pin *Design
}

// Targets are what sizing aims for; 0 means no target.
type Targets struct {
	Gain   float64 // V/V, least |midband gain|
	F3dB   float64 // Hz, least −3 dB bandwidth
	GBW    float64 // Hz, least gain–bandwidth product
	IDD    float64 // A, most supply current
	Power  float64 // W, most supply power
	Swing  float64 // V, least output swing
	Noise  float64 // V, most input-referred rms noise over nlo … nhi
	Margin float64 // V, least saturation margin |VDS| − VDsat of M1
}

// Range is a closed interval [Lo, Hi] in SI units.
type Range struct{ Lo, Hi float64 }

// Ranges bound the inputs sizing may move (vin moves over 0 … vdd).
type Ranges struct {
	W, L, ID, RD, RS Range // m, m, A, Ω, Ω
	LW, LL           Range // m, m: the load transistor's width and length
	VOut             Range // V, the output level of a current-source load
}

// SweepSpec says which input key a sweep moves, from Lo to Hi (in the key's
// unit) over N points.
type SweepSpec struct {
	Key    string
	Lo, Hi float64
	N      int
}

// VarSet is a set of inputs sizing may move: the bits of VarW … VarVOut.
type VarSet uint16

// The inputs sizing may move, in their canonical order.
const (
	VarW    VarSet = 1 << iota // width of M1 (key w)
	VarL                       // length of M1 (key l)
	VarID                      // drain current (key id)
	VarRD                      // drain resistor (key rd)
	VarRS                      // source resistor (key rs)
	VarVin                     // input DC level (key vin)
	VarLW                      // width of the load transistor (key lw)
	VarLL                      // length of the load transistor (key ll)
	VarVOut                    // output level of a current-source load (key vout)
	varAll  = VarW | VarL | VarID | VarRD | VarRS | VarVin | VarLW | VarLL | VarVOut
)

// varNames are the keys of VarW … VarVOut in bit order.
var varNames = []string{"w", "l", "id", "rd", "rs", "vin", "lw", "ll", "vout"}

// VarNames returns the keys sizing may move, in canonical order.
func VarNames() []string { return append([]string(nil), varNames...) }

// Has reports whether the set holds the input called key ("w").
func (v VarSet) Has(key string) bool {
	for i, n := range varNames {
		if n == key {
			return v&(1<<i) != 0
		}
	}
	return false
}

// Keys returns the keys in the set, in canonical order.
func (v VarSet) Keys() []string {
	var out []string
	for i, n := range varNames {
		if v&(1<<i) != 0 {
			out = append(out, n)
		}
	}
	return out
}

// String returns the keys joined by dots ("w.l.id"), or "none".
func (v VarSet) String() string {
	if v&varAll == 0 {
		return "none"
	}
	b := make([]byte, 0, 16)
	for i, n := range varNames {
		if v&(1<<i) != 0 {
			if len(b) > 0 {
				b = append(b, '.')
			}
			b = append(b, n...)
		}
	}
	return string(b)
}
