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

// Override replaces one process parameter of one polarity, e.g. Key "n.vt0".
type Override struct {
	Key   string
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
}
