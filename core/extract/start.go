package extract

import (
	"math"
	"sort"

	"stagewright/core/chardata"
	"stagewright/core/device"
)

// The charge at IC = 1 in saturation: i = q² + q = 1 gives q = (√5 − 1)/2,
// and gm·n·U_T/ID = 2/(1 + √(1 + 4·IC)) = 0.618 there (Enz & Vittoz 2006).
var (
	qAtIC1    = (math.Sqrt(5) - 1) / 2
	gmRatioI1 = 2 / (1 + math.Sqrt(5))
)

// minPlateau is the least gm·U_T/ID the weak-inversion plateau must reach
// for n to be read from it: 1/2.5, a slope factor of 2.5, beyond any bulk
// device; below that the data do not reach weak inversion.
const minPlateau = 1 / 2.5

// lengthStart is what step (a) reads from the saturation curves of one
// device (one W, L and temperature) at the bulk bias nearest 0.
type lengthStart struct {
	w, l, temp float64
	n          float64 // slope factor from the plateau
	ispec      float64 // A, ID where gm·n·U_T/ID = 0.618
	vt0        float64 // V, threshold extrapolated to VDS = 0
	sigma      float64 // V/V, barrier lowering from the threshold's fall with VDS (NaN with one VDS)
	gamma      float64 // √V, from the threshold's rise with VSB (NaN with one VBS)
	vdsRef     float64 // V, the drain bias of the reference curve
}

// thresholdAt reads n, I_spec and the threshold from one saturation curve:
// n = 1/(U_T·max gm/ID); at the gate voltage where gm·n·U_T/ID falls to
// 0.618 (IC = 1) the current is I_spec and the pinch-off voltage is
// VS + U_T·(2q + ln q) with q = 0.618, so the gate–source threshold is
// VGS − n·U_T·(2q + ln q).
func thresholdAt(pts []chardata.Point, c curve, ut float64) (n, ispec, vt float64, ok bool) {
	best := 0.0
	for _, g := range c.gmID {
		if g > best {
			best = g
		}
	}
	if best*ut < minPlateau {
		return 0, 0, 0, false
	}
	n = 1 / (best * ut)
	// Walk up from the plateau to the first crossing of 0.618.
	peak := 0
	for j, g := range c.gmID {
		if g == best {
			peak = j
		}
	}
	for j := peak; j+1 < len(c.gmID); j++ {
		a, b := c.gmID[j]*n*ut, c.gmID[j+1]*n*ut
		if math.IsNaN(a) || math.IsNaN(b) || !(a >= gmRatioI1 && b < gmRatioI1) {
			continue
		}
		f := (a - gmRatioI1) / (a - b)
		pa, pb := pts[c.idx[j]], pts[c.idx[j+1]]
		vgs := pa.VGS + f*(pb.VGS-pa.VGS)
		ispec = math.Exp(math.Log(pa.ID) + f*(math.Log(pb.ID)-math.Log(pa.ID)))
		// VP − VS = U_T·(2q + ln q) at IC = 1, and VG moves n times as far
		// as VP: the gate–source threshold (VP = VS) lies n·that below.
		vt = vgs - n*ut*(2*qAtIC1+math.Log(qAtIC1))
		return n, ispec, vt, true
	}
	return n, 0, 0, false
}

// Start is step (a): starting values for the fit read from the gm/ID curves
// of the table, on top of base (which supplies every parameter the data do
// not show: the oxide, the surface potential, the capacitances). tnom is the
// temperature (K) at which base holds.
//
// Per device it reads n, I_spec and the threshold from each saturation
// curve (VDS ≥ 0.2 V) at the bulk bias nearest 0; the threshold's fall with
// VDS gives the barrier lowering σ (VT = VT0 − σ·VDS) and its rise with VSB
// the body factor γ = ΔVT/(√(2φF + VSB) − √(2φF)). The mobility follows from
// I_spec = 2·n·µ·Cox·(W/L)·U_T² at the longest device, corrected by the
// base's length modulation and mobility reduction at that bias.
func Start(t *chardata.Table, base device.Params, tnom float64) (device.Params, error) {
	g := groupTable(t)
	return start(t, &g, base, tnom)
}

func start(t *chardata.Table, g *groups, base device.Params, tnom float64) (device.Params, error) {
	type devKey struct{ w, l, temp float64 }
	byDev := map[devKey][]curve{}
	for _, c := range g.curves {
		k := devKey{c.key.w, c.key.l, c.key.temp}
		byDev[k] = append(byDev[k], c)
	}
	var starts []lengthStart
	sawPlateau, sawIC1 := false, false
	for k, cs := range byDev {
		ut := device.ThermalVoltage(k.temp + 273.15)
		// The bulk bias nearest 0.
		vbs0 := math.Inf(1)
		for _, c := range cs {
			if math.Abs(c.key.vbs) < math.Abs(vbs0) {
				vbs0 = c.key.vbs
			}
		}
		var vdsList, vtList []float64
		ls := lengthStart{w: k.w, l: k.l, temp: k.temp, sigma: math.NaN(), gamma: math.NaN()}
		var refVDS float64
		for _, c := range cs {
			if c.key.vbs != vbs0 || c.key.vds < 0.2 {
				continue
			}
			n, ispec, vt, ok := thresholdAt(t.Points, c, ut)
			if n > 0 {
				sawPlateau = true
			}
			if !ok {
				continue
			}
			sawIC1 = true
			vdsList, vtList = append(vdsList, c.key.vds), append(vtList, vt)
			if c.key.vds >= refVDS {
				refVDS, ls.n, ls.ispec = c.key.vds, n, ispec
			}
		}
		if len(vdsList) == 0 {
			continue
		}
		ls.vdsRef = refVDS
		if len(vdsList) >= 2 {
			slope, icpt := lineFit(vdsList, vtList)
			ls.sigma, ls.vt0 = math.Max(-slope, 0), icpt
		} else {
			ls.vt0 = vtList[0] + base.DIBL/k.l*vdsList[0]
		}
		// Body effect: the threshold at the reference VDS for each VBS.
		phi := base.Phi
		if phi == 0 {
			phi = 0.8
		}
		var xs, ys []float64
		for _, c := range cs {
			if c.key.vds != refVDS {
				continue
			}
			_, _, vt, ok := thresholdAt(t.Points, c, ut)
			if !ok {
				continue
			}
			vsb := -c.key.vbs
			if phi+vsb <= 0 {
				continue
			}
			xs, ys = append(xs, math.Sqrt(phi+vsb)-math.Sqrt(phi)), append(ys, vt)
		}
		if len(xs) >= 2 && spread(xs) > 0.02 {
			slope, _ := lineFit(xs, ys)
			ls.gamma = math.Max(slope, 0)
		}
		starts = append(starts, ls)
	}
	switch {
	case !sawPlateau:
		return base, &Error{Message: "the data have no point in weak inversion: gm/ID never reaches the plateau 1/(n·U_T) of a sub-threshold sweep; add gate voltages below the threshold (down to where ID is a few nA per µm of width)"}
	case !sawIC1:
		return base, &Error{Message: "no saturation curve (VDS ≥ 0.2 V) rises past IC = 1, where gm·n·U_T/ID falls to 0.618; add gate voltages well above the threshold"}
	}
	sort.Slice(starts, func(a, b int) bool { return starts[a].l < starts[b].l })
	p := base
	long := starts[len(starts)-1]
	p.VT0 = median(starts, func(s lengthStart) float64 { return s.vt0 })
	if s := median(starts, func(s lengthStart) float64 { return s.sigma * s.l }); !math.IsNaN(s) {
		p.DIBL = s
	}
	n := long.n
	if gm := median(starts, func(s lengthStart) float64 { return s.gamma }); !math.IsNaN(gm) {
		p.Gamma = gm
	} else if base.NFixed == 0 {
		// n = 1 + γ/(2·√(2φF + VP + 4U_T)) near VP = 0.
		phi := base.Phi
		if phi == 0 {
			phi = 0.8
		}
		p.Gamma = math.Max(0, 2*(n-1)*math.Sqrt(phi+4*device.ThermalVoltage(long.temp+273.15)))
	}
	if base.NFixed > 0 {
		p.NFixed = math.Min(math.Max(n, 1), 3)
	}
	// I_spec = 2·n·µ·Cox·(W/L)·U_T², and the model's current at IC = 1 in
	// saturation carries (1 + λ·VDS)/(1 + θ'·U_T·n·q) on top of it.
	ut := device.ThermalVoltage(long.temp + 273.15)
	cox := 3.9 * device.Eps0 / base.Tox
	theta := base.Theta
	if base.ECrit > 0 {
		theta += 1 / (base.ECrit * long.l)
	}
	corr := (1 + theta*ut*n*qAtIC1) / (1 + base.LambdaL/long.l*long.vdsRef)
	mu := long.ispec * corr / (2 * n * cox * long.w / long.l * ut * ut)
	// Back to the nominal temperature by the base's exponent.
	mu /= math.Pow((long.temp+273.15)/tnom, base.BEX)
	p.U0 = mu
	p.VT0 += base.TCV * (long.temp + 273.15 - tnom)
	return clampParams(p), nil
}

// clampParams holds every fitted value inside its fit bounds, so that a
// poor start still gives a valid device.
func clampParams(p device.Params) device.Params {
	for _, b := range bounds {
		f := b.field(&p)
		if b.key == "slope" && *f == 0 {
			continue // 0 means n follows from the body factor
		}
		*f = math.Min(math.Max(*f, b.lo), b.hi)
	}
	return p
}

func lineFit(x, y []float64) (slope, intercept float64) {
	var sx, sy, sxx, sxy float64
	for i := range x {
		sx += x[i]
		sy += y[i]
		sxx += x[i] * x[i]
		sxy += x[i] * y[i]
	}
	n := float64(len(x))
	den := n*sxx - sx*sx
	if den == 0 {
		return 0, sy / n
	}
	slope = (n*sxy - sx*sy) / den
	return slope, (sy - slope*sx) / n
}

func spread(x []float64) float64 {
	lo, hi := math.Inf(1), math.Inf(-1)
	for _, v := range x {
		lo, hi = math.Min(lo, v), math.Max(hi, v)
	}
	return hi - lo
}

// median of f over the starts, ignoring NaN; NaN when none.
func median(s []lengthStart, f func(lengthStart) float64) float64 {
	var v []float64
	for _, x := range s {
		if y := f(x); !math.IsNaN(y) {
			v = append(v, y)
		}
	}
	if len(v) == 0 {
		return math.NaN()
	}
	sort.Float64s(v)
	if len(v)%2 == 1 {
		return v[len(v)/2]
	}
	return (v[len(v)/2-1] + v[len(v)/2]) / 2
}
