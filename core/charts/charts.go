package charts

import (
	"fmt"
	"math"

	"stagewright/core/design"
	"stagewright/core/device"
)

// Chart is one set of gm/ID curves: point i is the device at gate drive
// VGS[i] (magnitude, V). Saturated says the point is in saturation: margin
// |VDS| − VDsat above 0 and the inversion charge at the drain end below
// 1e-7 of that at the source, so the reverse current plays no part; curves
// should be drawn from those.
type Chart struct {
	Process string  `json:"process"`
	Pol     string  `json:"pol"`
	W       float64 `json:"w"`      // m
	L       float64 `json:"l"`      // m
	TempK   float64 `json:"temp_k"` // K
	VDS     float64 `json:"vds"`    // V, magnitude

	VGS       design.Floats `json:"vgs"`   // V, magnitude
	ID        design.Floats `json:"id"`    // A
	GmID      design.Floats `json:"gm_id"` // S/A
	IC        design.Floats `json:"ic"`    // inversion coefficient
	IDW       design.Floats `json:"id_w"`  // A/m
	GmRo      design.Floats `json:"gm_ro"` // V/V, intrinsic gain
	FT        design.Floats `json:"ft"`    // Hz
	N         design.Floats `json:"n"`     // slope factor
	Saturated []bool        `json:"saturated"`

	Present *Marker `json:"present,omitempty"`
}

// Marker is the present design's M1 on the charts.
type Marker struct {
	GmID design.Num `json:"gm_id"`
	IC   design.Num `json:"ic"`
	IDW  design.Num `json:"id_w"`
	GmRo design.Num `json:"gm_ro"`
	FT   design.Num `json:"ft"`
}

// MaxPoints bounds the points of one chart.
const MaxPoints = 2000

// Compute sweeps the device of polarity pol of pr (W, L in m, tempK in K)
// at VDS = vdd/2 and VSB = 0 over points gate drives from VT0 − 0.5 V to
// vdd (magnitudes; at least 0).
func Compute(pr device.Process, pol device.Polarity, w, l, tempK, vdd float64, points int) (Chart, error) {
	if points < 2 || points > MaxPoints {
		return Chart{}, fmt.Errorf("charts: points = %d; accepted 2 … %d", points, MaxPoints)
	}
	if !(vdd > 0) || math.IsInf(vdd, 0) {
		return Chart{}, fmt.Errorf("charts: supply %g V; it must be above 0", vdd)
	}
	prm, name := pr.ParamsAt(device.NMOS, l), "n"
	if pol == device.PMOS {
		prm, name = pr.ParamsAt(device.PMOS, l), "p"
	}
	dev, err := device.New(pol, prm, pr.TNom, w, l, tempK)
	if err != nil {
		return Chart{}, fmt.Errorf("charts: %w", err)
	}
	c := Chart{Process: pr.Name, Pol: name, W: w, L: l, TempK: tempK, VDS: vdd / 2}
	c.VGS = make(design.Floats, points)
	c.ID = make(design.Floats, points)
	c.GmID = make(design.Floats, points)
	c.IC = make(design.Floats, points)
	c.IDW = make(design.Floats, points)
	c.GmRo = make(design.Floats, points)
	c.FT = make(design.Floats, points)
	c.N = make(design.Floats, points)
	c.Saturated = make([]bool, points)
	lo := math.Max(0, prm.VT0-0.5)
	for i := range points {
		vgs := lo + (vdd-lo)*float64(i)/float64(points-1)
		var r device.Report
		if pol == device.PMOS {
			// Source and bulk at the supply, drain at half of it.
			r = dev.Report(vdd/2, vdd-vgs, vdd, vdd)
		} else {
			r = dev.Report(vdd/2, vgs, 0, 0)
		}
		c.VGS[i], c.ID[i], c.GmID[i], c.IC[i] = vgs, r.ID, r.GmID, r.IC
		c.IDW[i], c.GmRo[i], c.FT[i], c.N[i] = r.ID/w, finite(r.GM*r.RO), r.FT, r.N
		c.Saturated[i] = r.Margin > 0 && r.ID > 0 && r.QR <= 1e-7*r.QF
	}
	return c, nil
}

func finite(x float64) float64 {
	if math.IsNaN(x) || math.IsInf(x, 0) {
		return math.NaN() // written as null
	}
	return x
}

// ForDesign computes the charts of M1 of d (its process with overrides and
// corner, polarity, W, L, temperature and supply) and marks d's own
// operating point when it has one.
func ForDesign(d design.Design, points int) (Chart, error) {
	pr, err := d.ProcessOf()
	if err != nil {
		return Chart{}, fmt.Errorf("charts: %w", err)
	}
	pol := device.NMOS
	if d.Pol == "p" {
		pol = device.PMOS
	}
	var e design.Evaluator
	r := e.Evaluate(d)
	w := d.W
	if r.OK && r.OP != nil && r.OP.W.Finite() {
		w = float64(r.OP.W) // gmid mode solves W
	}
	c, err := Compute(pr, pol, w, d.L, d.Temp+273.15, d.VDD, points)
	if err != nil {
		return c, err
	}
	if r.OK && r.OP != nil {
		op := r.OP
		c.Present = &Marker{GmID: op.GmID, IC: op.IC, IDW: design.Num(float64(op.ID) / w),
			GmRo: design.Num(finite(float64(op.GM) * float64(op.RO))), FT: op.FT}
	}
	return c, nil
}
