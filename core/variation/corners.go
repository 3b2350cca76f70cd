package variation

import (
	"cmp"
	"fmt"
	"math"
	"slices"
	"strings"

	"stagewright/core/design"
	"stagewright/core/device"
)

// CornerTemps are the temperatures (°C) every corner is evaluated at; the
// design's own temperature is added when it is not one of them.
var CornerTemps = [...]float64{-40, 27, 125}

// CornerRow is one corner at one temperature and supply. Figures are SI
// (V/V, Hz, A, V, W, V rms); Temp is °C. A row whose design has no
// operating point has OK false, Error set and null figures. Design is the
// row's own fragment (the corner written as threshold and mobility
// overrides, the temperature as temp, the supply as vdd and a held bias as
// the levels that hold it), so the row can be reopened and evaluated alone.
//
// Devices lists every transistor's region and saturation margin; Margin and
// Region are the worst device's: Region is "saturation" when every device
// is saturated, and otherwise names the worst one ("M2 triode, −36 mV"),
// with Flag set.
type CornerRow struct {
	Corner    string          `json:"corner"`
	Temp      design.Num      `json:"temp"`
	VDD       design.Num      `json:"vdd"`
	OK        bool            `json:"ok"`
	Error     *design.Failure `json:"error,omitempty"`
	Gain      design.Num      `json:"gain"`
	F3dB      design.Num      `json:"f3db"`
	GBW       design.Num      `json:"gbw"`
	ID        design.Num      `json:"id"`
	VOut      design.Num      `json:"vout"`
	VOutDrift design.Num      `json:"vout_drift"` // V, VOut less the nominal design's
	Power     design.Num      `json:"power"`
	Margin    design.Num      `json:"margin"`
	Region    string          `json:"region"`
	Flag      bool            `json:"flag"` // a device is out of saturation
	Devices   []DeviceState   `json:"devices"`
	InRMS     design.Num      `json:"in_rms"`
	Design    string          `json:"design"`
}

// DeviceState is one transistor's region and saturation margin in a row.
type DeviceState struct {
	Name   string     `json:"name"` // M1, M2
	Role   string     `json:"role"` // amplifier, load, sink
	Region string     `json:"region"`
	Margin design.Num `json:"margin"` // V, |VDS| − VDsat
}

// Corners evaluates d at every process corner (device.CornerNames), at
// every temperature of CornerTemps plus the design's own, and at the
// supply vdd·(1 − vddtol), vdd and vdd·(1 + vddtol) (Aids.VDDTol; only vdd
// when it is 0, and a supply outside the vdd key's range is left out). The
// design's inputs stay as given, as a designer checks a finished design:
// bias vin keeps the input level. A bias id design is held as Aids.Hold
// says (see HeldAt): by a mirror, by its nominal bias voltages, or with the
// current itself held exactly. A gm/ID design keeps the width solved at its
// own corner (tt) and temperature and is then treated as bias id at that
// width, since a fabricated width does not move with the process. The tt
// row at the design's temperature and supply is the plain design.Evaluate
// of d (for bias vin and id exactly; for gmid up to the search tolerance
// of W).
//
// The error is non-nil only when d itself is invalid, or when a gm/ID or
// held design has no operating point at its own corner (no width to keep,
// no bias to hold).
func Corners(d design.Design) ([]CornerRow, error) {
	if err := d.Validate(); err != nil {
		return nil, err
	}
	var ev design.Evaluator
	nominal := ev.Evaluate(d)
	if d.Bias == design.BiasGmID {
		if !nominal.OK || nominal.OP == nil || !nominal.OP.W.Finite() {
			return nil, fmt.Errorf("variation: the gm/ID design has no operating point at corner tt and %g °C, so there is no width to check at the corners: %s", d.Temp, failure(nominal))
		}
		d.W = float64(nominal.OP.W)
		d.Bias = design.BiasID
	}
	held := d.Bias == design.BiasID && d.Aids.Hold != "ideal"
	if held && !nominal.OK {
		return nil, fmt.Errorf("variation: the design has no operating point at corner tt and %g °C, so there is no bias to hold at the corners: %s", d.Temp, failure(nominal))
	}
	temps := CornerTemps[:]
	if !slices.Contains(temps, d.Temp) {
		// Insert in order (a handful of temperatures; a generic sort of
		// float64 would add some 13 kB to the WebAssembly engine).
		i := 0
		for i < len(temps) && temps[i] < d.Temp {
			i++
		}
		temps = slices.Insert(slices.Clone(temps), i, d.Temp)
	}
	supplies := []float64{d.VDD}
	if tol := d.Aids.VDDTol; tol > 0 {
		supplies = nil
		for _, v := range [...]float64{d.VDD * (1 - tol), d.VDD, d.VDD * (1 + tol)} {
			if v >= 0.2 && v <= 5 { // the vdd key's range
				supplies = append(supplies, v)
			}
		}
	}
	pr, err := d.ProcessOf()
	if err != nil {
		return nil, err
	}
	vout0 := math.NaN()
	if v, ok := nominal.Nodes["out"]; ok && nominal.OK {
		vout0 = float64(v)
	}
	names := device.CornerNames()
	rows := make([]CornerRow, 0, len(names)*len(temps)*len(supplies))
	for _, name := range names {
		cp, err := device.Corner(pr, name)
		if err != nil {
			return nil, err
		}
		dc := d
		if name != "tt" {
			dc.Overrides = withCorner(d.Overrides, cp)
		}
		for _, t := range temps {
			for _, v := range supplies {
				dt := dc
				dt.Temp, dt.VDD = t, v
				var r design.Result
				if held {
					var msg string
					if dt, msg = HeldAt(d, nominal, dt); msg != "" {
						r = design.Result{Error: &design.Failure{Code: "bias", Message: msg}}
						rows = append(rows, cornerRow(name, t, v, vout0, d.Stage == design.SourceFollower, r))
						continue
					}
				}
				r = ev.Evaluate(dt)
				rows = append(rows, cornerRow(name, t, v, vout0, d.Stage == design.SourceFollower, r))
			}
		}
	}
	return rows, nil
}

func failure(r design.Result) string {
	if r.Error != nil {
		return r.Error.Message
	}
	return "no result"
}

// HeldAt returns the design at a corner (dt: d with the corner's overrides,
// temperature and supply) with its bias held as d.Aids.Hold says, given the
// nominal evaluation of d (bias id):
//
//   - fixed: the nominal bias voltages stay, each measured from the rail its
//     device's source returns to (as a fixed gate voltage or a divider
//     referred to that rail would hold them): the input level and the
//     gate of a current-source load or sink.
//   - mirror: each current-biased transistor's gate comes from a
//     diode-connected copy of it (same type and size, the same source
//     resistor) that carries the nominal drain current and sees the same
//     corner, temperature and supply: M1's gate in a common-source stage,
//     the gate of a current-source load or sink. The input level of a
//     common-gate stage and of a resistor-biased follower is held fixed.
//
// The result has bias vin. msg is not empty when the mirror cannot carry
// the current within the supply.
func HeldAt(d design.Design, nominal design.Result, dt design.Design) (design.Design, string) {
	iref := math.Abs(float64(nominal.OP.ID))
	near := func(v float64) float64 { return v } // a level from M1's near rail as a node voltage
	if d.Pol == "p" {
		near = func(v float64) float64 { return dt.VDD - v }
	}
	// The nominal input level, from M1's near rail (the signal source's DC
	// level: for a common-gate stage the source side, before rsig).
	in := nominal.Nodes["sig"]
	fromNear := float64(in)
	if d.Pol == "p" {
		fromNear = d.VDD - float64(in)
	}
	dt.Bias = design.BiasVin
	dt.Vin = near(fromNear)
	transistorLoad := d.Load == design.LoadActive
	if transistorLoad && nominal.LoadOP != nil {
		dt.LoadVB = math.Abs(float64(nominal.LoadOP.VGS))
	}
	if d.Stage == design.SourceFollower && d.Load == design.LoadActive {
		dt.Vin = d.Vin // the follower's input stays at vin; the sink's gate is the bias
	}
	if d.Aids.Hold != "mirror" {
		return clampLevels(dt)
	}
	pr, err := dt.ProcessOf()
	if err != nil {
		return dt, err.Error()
	}
	tempK := dt.Temp + 273.15
	if d.Stage == design.CommonSource {
		pol := device.NMOS
		if d.Pol == "p" {
			pol = device.PMOS
		}
		vgs, ok := diodeVGS(pol, pr.ParamsAt(pol, dt.L), pr.TNom, dt.W, dt.L, tempK, iref, math.Abs(float64(nominal.OP.VGS)), dt.VDD)
		if !ok {
			return dt, fmt.Sprintf("the mirror copy of M1 cannot carry %.3g A within the %.3g V supply", iref, dt.VDD)
		}
		dt.Vin = near(vgs + iref*dt.RS)
	}
	if transistorLoad {
		pol := device.PMOS // the load is M1's complement, the sink M1's own type
		if (d.Pol == "p") != (d.Stage == design.SourceFollower) {
			pol = device.NMOS
		}
		vgs, ok := diodeVGS(pol, pr.ParamsAt(pol, dt.LoadL), pr.TNom, dt.LoadW, dt.LoadL, tempK, iref, dt.LoadVB, dt.VDD)
		if !ok {
			return dt, fmt.Sprintf("the mirror copy of the load transistor cannot carry %.3g A within the %.3g V supply", iref, dt.VDD)
		}
		dt.LoadVB = vgs
	}
	return clampLevels(dt)
}

// clampLevels keeps held levels inside the supply the row has, where the
// vin and vbl keys require them.
func clampLevels(d design.Design) (design.Design, string) {
	if d.Vin < 0 || d.Vin > d.VDD {
		return d, fmt.Sprintf("the held input level %.3g V lies outside the %.3g V supply", d.Vin, d.VDD)
	}
	if d.LoadVB > d.VDD {
		return d, fmt.Sprintf("the held load gate drive %.3g V exceeds the %.3g V supply", d.LoadVB, d.VDD)
	}
	return d, ""
}

// withCorner returns a copy of overrides (sorted by key and length) with
// the threshold and mobility of both polarities, and of each length bin,
// set to those of cp.
func withCorner(overrides []design.Override, cp device.Process) []design.Override {
	out := slices.Clone(overrides)
	set := func(o design.Override) {
		i, found := slices.BinarySearchFunc(out, o, func(a, b design.Override) int {
			if c := strings.Compare(a.Key, b.Key); c != 0 {
				return c
			}
			return cmp.Compare(a.L, b.L)
		})
		if found {
			out[i].Value = o.Value
		} else {
			out = slices.Insert(out, i, o)
		}
	}
	for _, pol := range [...]struct {
		prefix string
		params device.Params
		bins   []device.Bin
	}{{"n.", cp.N, cp.NBins}, {"p.", cp.P, cp.PBins}} {
		set(design.Override{Key: pol.prefix + "mobility", Value: pol.params.U0})
		set(design.Override{Key: pol.prefix + "thresh", Value: pol.params.VT0})
		for _, b := range pol.bins {
			set(design.Override{Key: pol.prefix + "mobility", L: b.L, Value: b.Params.U0})
			set(design.Override{Key: pol.prefix + "thresh", L: b.L, Value: b.Params.VT0})
		}
	}
	return out
}

func cornerRow(name string, temp, vdd, vout0 float64, follower bool, r design.Result) CornerRow {
	nan := design.Num(math.NaN())
	row := CornerRow{
		Corner: name, Temp: design.Num(temp), VDD: design.Num(vdd), OK: r.OK, Error: r.Error, Design: r.Design,
		Gain: nan, F3dB: nan, GBW: nan, ID: nan, VOut: nan, VOutDrift: nan, Power: nan, Margin: nan, InRMS: nan,
		Devices: []DeviceState{},
	}
	if !r.OK {
		return row
	}
	if r.Midband != nil {
		row.Gain = r.Midband.Gain
	}
	if r.AC != nil {
		row.F3dB, row.GBW = r.AC.F3dB, r.AC.GBW
	}
	if r.OP != nil {
		row.ID = r.OP.ID
		if r.OP.Power != nil {
			row.Power = *r.OP.Power
		}
		row.Devices = append(row.Devices, DeviceState{Name: "M1", Role: "amplifier", Region: r.OP.Region, Margin: r.OP.Margin})
	}
	if r.LoadOP != nil {
		role := "load"
		if follower {
			role = "sink"
		}
		row.Devices = append(row.Devices, DeviceState{Name: "M2", Role: role, Region: r.LoadOP.Region, Margin: r.LoadOP.Margin})
	}
	row.Region, row.Margin, row.Flag = worstDevice(row.Devices)
	if v, ok := r.Nodes["out"]; ok {
		row.VOut = v
		row.VOutDrift = design.Num(float64(v) - vout0)
	}
	if r.Noise != nil {
		row.InRMS = r.Noise.InRMS
	}
	return row
}

// worstDevice names the device with the least saturation margin: region
// "saturation" when every device is saturated, else "M2 triode, −36 mV",
// and flag set.
func worstDevice(devs []DeviceState) (region string, margin design.Num, flag bool) {
	if len(devs) == 0 {
		return "", design.Num(math.NaN()), false
	}
	w := 0
	for i, dv := range devs {
		if dv.Margin < devs[w].Margin {
			w = i
		}
		if dv.Region != "saturation" {
			flag = true
		}
	}
	if !flag {
		return "saturation", devs[w].Margin, false
	}
	for i, dv := range devs { // the worst of those out of saturation
		if dv.Region != "saturation" && (devs[w].Region == "saturation" || dv.Margin < devs[w].Margin) {
			w = i
		}
	}
	return fmt.Sprintf("%s %s, %s", devs[w].Name, devs[w].Region, signedMV(float64(devs[w].Margin))), devs[w].Margin, true
}

// signedMV writes a margin in mV with a true minus sign: "−36 mV".
func signedMV(v float64) string {
	s := fmt.Sprintf("%.0f mV", math.Abs(v)*1e3)
	if v < 0 && math.Round(math.Abs(v)*1e3) != 0 {
		return "−" + s
	}
	return s
}
