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

// CornerRow is one corner at one temperature. Figures are SI (V/V, Hz, A,
// V, W, V rms); Temp is °C. A row whose design has no operating point has
// OK false, Error set and null figures. Design is the row's own fragment
// (the corner written as n.vt0, n.u0, p.vt0, p.u0 overrides, the
// temperature as temp), so the row can be reopened and evaluated alone.
type CornerRow struct {
	Corner string          `json:"corner"`
	Temp   design.Num      `json:"temp"`
	OK     bool            `json:"ok"`
	Error  *design.Failure `json:"error,omitempty"`
	Gain   design.Num      `json:"gain"`
	F3dB   design.Num      `json:"f3db"`
	GBW    design.Num      `json:"gbw"`
	ID     design.Num      `json:"id"`
	VOut   design.Num      `json:"vout"`
	Power  design.Num      `json:"power"`
	Margin design.Num      `json:"margin"`
	Region string          `json:"region"`
	InRMS  design.Num      `json:"in_rms"`
	Design string          `json:"design"`
}

// Corners evaluates d at every process corner (device.CornerNames) and at
// every temperature of CornerTemps, plus the design's own. The design's
// inputs and bias mode stay as given, as a designer checks a finished
// design: bias vin keeps the input level, bias id keeps the drain current.
// A gm/ID design keeps the width solved at its own corner (tt) and
// temperature and is evaluated with bias id at that width, since a
// fabricated width does not move with the process. The tt row at the
// design's temperature is the plain design.Evaluate of d (for bias vin and
// id exactly; for gmid up to the search tolerance of W).
//
// The error is non-nil only when d itself is invalid, or when a gm/ID
// design has no operating point at its own corner (there is no width to
// keep). Rows come ordered by corner, then by temperature.
func Corners(d design.Design) ([]CornerRow, error) {
	if err := d.Validate(); err != nil {
		return nil, err
	}
	pr, err := d.ProcessOf()
	if err != nil {
		return nil, err
	}
	var ev design.Evaluator
	if d.Bias == design.BiasGmID {
		r := ev.Evaluate(d)
		if !r.OK || r.OP == nil || !r.OP.W.Finite() {
			msg := "no result"
			if r.Error != nil {
				msg = r.Error.Message
			}
			return nil, fmt.Errorf("variation: the gm/ID design has no operating point at corner tt and %g °C, so there is no width to check at the corners: %s", d.Temp, msg)
		}
		d.W = float64(r.OP.W)
		d.Bias = design.BiasID
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
	names := device.CornerNames()
	rows := make([]CornerRow, 0, len(names)*len(temps))
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
			dt := dc
			dt.Temp = t
			rows = append(rows, cornerRow(name, t, ev.Evaluate(dt)))
		}
	}
	return rows, nil
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

func cornerRow(name string, temp float64, r design.Result) CornerRow {
	nan := design.Num(math.NaN())
	row := CornerRow{
		Corner: name, Temp: design.Num(temp), OK: r.OK, Error: r.Error, Design: r.Design,
		Gain: nan, F3dB: nan, GBW: nan, ID: nan, VOut: nan, Power: nan, Margin: nan, InRMS: nan,
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
		row.ID, row.Margin, row.Region = r.OP.ID, r.OP.Margin, r.OP.Region
		if r.OP.Power != nil {
			row.Power = *r.OP.Power
		}
	}
	if v, ok := r.Nodes["out"]; ok {
		row.VOut = v
	}
	if r.Noise != nil {
		row.InRMS = r.Noise.InRMS
	}
	return row
}
