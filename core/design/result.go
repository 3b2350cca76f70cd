package design

import (
	"math"
	"strconv"
)

// Num is a float64 that marshals to JSON null when it is not finite: an
// infinite resistance or an undefined figure crosses as null, never as a
// NaN or Inf that JSON cannot carry.
type Num float64

// MarshalJSON writes the number, or null when it is NaN or infinite.
func (n Num) MarshalJSON() ([]byte, error) {
	f := float64(n)
	if math.IsNaN(f) || math.IsInf(f, 0) {
		return []byte("null"), nil
	}
	return strconv.AppendFloat(nil, f, 'g', -1, 64), nil
}

// Finite says whether the number is neither NaN nor infinite.
func (n Num) Finite() bool { return !math.IsNaN(float64(n)) && !math.IsInf(float64(n), 0) }

// Floats is a series of numbers that marshals like Num, element by element.
type Floats []float64

// MarshalJSON writes the array with null for non-finite elements.
func (fs Floats) MarshalJSON() ([]byte, error) {
	b := make([]byte, 0, 2+len(fs)*12)
	b = append(b, '[')
	for i, f := range fs {
		if i > 0 {
			b = append(b, ',')
		}
		if math.IsNaN(f) || math.IsInf(f, 0) {
			b = append(b, "null"...)
			continue
		}
		b = strconv.AppendFloat(b, f, 'g', 8, 64)
	}
	return append(b, ']'), nil
}

// Result is everything one evaluation reports. Its JSON form is the
// contract with the page and the command line (see the README).
type Result struct {
	OK         bool      `json:"ok"`
	Error      *Failure  `json:"error,omitempty"`
	Problems   []Problem `json:"problems,omitempty"`
	Warnings   []string  `json:"warnings"`
	Design     string    `json:"design"`
	Iterations int       `json:"iterations"`
	Method     string    `json:"method,omitempty"`

	OP       *DeviceOP      `json:"op,omitempty"`
	LoadOP   *DeviceOP      `json:"load_op,omitempty"`
	Devices  []Device       `json:"devices,omitempty"`
	Nodes    map[string]Num `json:"nodes,omitempty"`
	Midband  *Midband       `json:"midband,omitempty"`
	Hand     *HandResult    `json:"hand,omitempty"`
	DiffPct  *Diffs         `json:"diff_pct,omitempty"`
	Square   *SquareLaw     `json:"square_law,omitempty"`
	AC       *AC            `json:"ac,omitempty"`
	Poles    []Root         `json:"poles,omitempty"`
	Zeros    []Root         `json:"zeros"`
	Dominant *int           `json:"dominant_pole"`
	Estimate map[string]Est `json:"estimates,omitempty"`
	Noise    *Noise         `json:"noise,omitempty"`
	Large    *LargeSignal   `json:"large_signal,omitempty"`
}

// LargeSignal holds the figures of the stage beyond small signals.
type LargeSignal struct {
	Slew *SlewRate `json:"slew,omitempty"` // nil when cl is 0
}

// SlewRate is how fast the output can move into cl, up and down (V/s,
// both positive), with the currents behind them (A): see stage.Slew.
type SlewRate struct {
	Up    Num `json:"up"`
	Down  Num `json:"down"`
	IUp   Num `json:"i_up"`
	IDown Num `json:"i_down"`
}

// Failure says why there is no result: Code is one of "fragment",
// "no_operating_point" (the design has none, for the reason given), "bias",
// CodeSolverFailed (the solver failed; the design may well have one) and
// "internal"; Key names the input to change.
type Failure struct {
	Code    string `json:"code"`
	Message string `json:"message"`
	Key     string `json:"key,omitempty"`
}

// DeviceOP is one transistor's operating point. Voltages VGS, VDS, VBS, VTH
// are signed terminal values; ID, Vov, VDsat and Margin are in the device's
// own sense (positive when on and saturated, for NMOS and PMOS alike).
type DeviceOP struct {
	ID        Num    `json:"id"`
	VGS       Num    `json:"vgs"`
	VDS       Num    `json:"vds"`
	VBS       Num    `json:"vbs"`
	VTH       Num    `json:"vth"`
	Vov       Num    `json:"vov"`
	VDsat     Num    `json:"vdsat"`
	Region    string `json:"region"`
	Inversion string `json:"inversion"`
	GM        Num    `json:"gm"`
	GMB       Num    `json:"gmb"`
	GDS       Num    `json:"gds"`
	RO        Num    `json:"ro"`
	GmID      Num    `json:"gm_id"`
	IC        Num    `json:"ic"`
	N         Num    `json:"n"`
	Margin    Num    `json:"margin"`
	Power     *Num   `json:"power,omitempty"`
	CGS       Num    `json:"cgs"`
	CGD       Num    `json:"cgd"`
	CGB       Num    `json:"cgb"`
	CDB       Num    `json:"cdb"`
	CSB       Num    `json:"csb"`
	FT        Num    `json:"ft"`
	Gamma     Num    `json:"gamma_noise"`
	W         Num    `json:"w"`
	L         Num    `json:"l"`
}

// Device is one transistor of the stage: its name in the circuit (M1,
// M2), what it does there (Role: "input", "load", "sink"), its polarity
// ("n", "p") and its operating point. The stage's supply power is on op
// alone, not on any device.
type Device struct {
	Name string `json:"name"`
	Role string `json:"role"`
	Pol  string `json:"pol"`
	DeviceOP
}

// Midband is the exact low-frequency gain (V/V), input and output
// resistance (Ω; null when open), and the supply rejection: SupplyGain is
// v(out)/v(VDD) (V/V, signed) with the signal held, PSRRdB =
// 20·log10(|Gain|/|SupplyGain|) (null when the supply does not reach the
// output at all).
type Midband struct {
	Gain       Num `json:"gain"`
	GainDB     Num `json:"gain_db"`
	Rin        Num `json:"rin"`
	Rout       Num `json:"rout"`
	SupplyGain Num `json:"supply_gain"`
	PSRRdB     Num `json:"psrr_db"`
}

// Triple is gain, rin, rout.
type Triple struct {
	Gain Num `json:"gain"`
	Rin  Num `json:"rin"`
	Rout Num `json:"rout"`
}

// HandResult is the textbook estimate with its formulas (keys gain, rin,
// rout, supply_gain).
type HandResult struct {
	Triple
	SupplyGain Num               `json:"supply_gain"`
	PSRRdB     Num               `json:"psrr_db"`
	Formula    map[string]string `json:"formula"`
}

// Diffs is 100·(hand − exact)/|exact| of each midband figure that has a
// hand estimate (the PSRR's follows from its two gains and is not repeated).
type Diffs struct {
	Triple
	SupplyGain Num `json:"supply_gain"`
}

// SquareLaw is the Shichman–Hodges hand model at the same drain current.
type SquareLaw struct {
	Vov  Num `json:"vov"`
	GM   Num `json:"gm"`
	Gain Num `json:"gain"`
}

// AC is the frequency sweep and its figures of merit.
type AC struct {
	F          Floats `json:"f"`
	MagDB      Floats `json:"mag_db"`
	PhaseDeg   Floats `json:"phase_deg"`
	Zin        Floats `json:"zin"`
	Zout       Floats `json:"zout"`
	F3dB       Num    `json:"f3db"`
	UGF        Num    `json:"ugf"`
	GBW        Num    `json:"gbw"`
	DCGainDB   Num    `json:"dc_gain_db"`
	PhaseAtUGF Num    `json:"phase_at_ugf"`
}

// Root is a pole or zero as s/(2π), in Hz.
type Root struct {
	Re Num `json:"re"`
	Im Num `json:"im"`
}

// Est is a hand estimate of a frequency beside the exact value, Hz.
type Est struct {
	Value   Num    `json:"value"`
	Exact   Num    `json:"exact"`
	DiffPct Num    `json:"diff_pct"`
	Formula string `json:"formula"`
	// Caveat says, when it is not empty, which assumption of the formula
	// fails for this design (so that a large difference is not a surprise).
	Caveat string `json:"caveat,omitempty"`
}

// Noise is the noise analysis: densities in V/√Hz over the sweep (the
// signal source's own resistance excluded), the flicker corner (Hz) and the
// input-referred rms noise over Band (V).
type Noise struct {
	F      Floats `json:"f"`
	Out    Floats `json:"out"`
	In     Floats `json:"in"`
	Corner Num    `json:"corner"`
	InRMS  Num    `json:"in_rms"`
	OutRMS Num    `json:"out_rms"`
	Band   [2]Num `json:"band"`
}

// JSON marshals the result; it cannot fail for a Result built by Evaluate.
// Characters such as & stay as they are (no HTML escaping), so the
// fragment in "design" reads as typed.
func (r *Result) JSON() []byte { return r.AppendJSON(nil) }

// CodeSolverFailed is the error code of a design whose operating point the
// DC solver could not find, although nothing shows that none exists: a
// failure of the solver, never a property of the design.
const CodeSolverFailed = "solver_failed"
