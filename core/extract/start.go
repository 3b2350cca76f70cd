package extract

import (
	"math"
	"sort"

	"stagewright/core/device"
)

// gmIDAtIC1 is gm·n·U_T/ID at IC = 1 in saturation: 2/(1 + √5) = 0.618
// (Enz and Vittoz 2006).
var gmIDAtIC1 = 2 / (1 + math.Sqrt(5))

// pinchAtIC1 is (VP − VS)/U_T at IC = 1: q = 0.618 solves q² + q = 1, and
// v = 2q + ln q (Enz and Vittoz 2006).
var pinchAtIC1 = 2*gmIDAtIC1 + math.Log(gmIDAtIC1)

// lengthStart is what step (a) finds on one length's saturation curves.
type lengthStart struct {
	l, w, ut  float64
	n         float64   // slope factor from the weak-inversion plateau
	ispec     float64   // A, ID at IC = 1
	vt        []float64 // V, threshold at IC = 1 on each curve of vbs
	vbs       []float64
	vdsSat    float64 // V, VDS of the saturation curves
	sigma     float64 // V/V, DIBL: how the gate voltage at a fixed weak current moves with VDS
	hasSigma  bool
	lambda    float64 // 1/V
	hasLambda bool
}

// satCurves returns, for each (geometry, VBS), the curve along VGS at the
// highest VDS: the saturation curve step (a) reads.
func (pr *prepared) satCurves() map[int][]int {
	type gk struct {
		g  int
		vb float64
	}
	best := map[gk]int{}
	for c, cv := range pr.vgsCurves {
		p := pr.pts[cv.idx[0]]
		k := gk{p.geo, key(p.VBS)}
		if b, ok := best[k]; !ok || pr.pts[pr.vgsCurves[b].idx[0]].VDS < p.VDS {
			best[k] = c
		}
	}
	out := map[int][]int{}
	for k, c := range best {
		out[k.g] = append(out[k.g], c)
	}
	for g := range out {
		cs := out[g]
		sort.Slice(cs, func(a, b int) bool {
			return pr.pts[pr.vgsCurves[cs[a]].idx[0]].VBS > pr.pts[pr.vgsCurves[cs[b]].idx[0]].VBS
		})
	}
	return out
}

// plateau finds the weak-inversion plateau of gm/ID on one curve and
// returns 1/(n·U_T) (S/A). Method: Enz, Chicco and Pezzotta 2017 —
// gm·n·U_T/ID → 1 in weak inversion, so the largest gm/ID of a curve that
// flattens gives n. The curve flattens when two points within 5 % of the
// largest value are at least a factor 3 apart in current (between IC 0.1 and
// 0.3 it falls by 13 %, so a curve that starts above IC 0.1 fails).
func (pr *prepared) plateau(c curve) (gmid float64, ok bool) {
	maxG := 0.0
	for _, i := range c.idx {
		p := &pr.pts[i]
		if p.inFit && p.gm > 0 && p.gm/p.ID > maxG {
			maxG = p.gm / p.ID
		}
	}
	if maxG == 0 {
		return 0, false
	}
	lo, hi := math.Inf(1), 0.0
	sum, cnt := 0.0, 0
	for _, i := range c.idx {
		p := &pr.pts[i]
		if !p.inFit || !(p.gm > 0) {
			continue
		}
		g := p.gm / p.ID
		if g >= 0.95*maxG {
			lo, hi = math.Min(lo, p.ID), math.Max(hi, p.ID)
		}
		if g >= 0.97*maxG {
			sum += g
			cnt++
		}
	}
	if hi < 3*lo || cnt == 0 {
		return maxG, false
	}
	return sum / float64(cnt), true
}

// crossIC1 returns VGS and ID where gm·n·U_T/ID first falls to 0.618 on a
// curve, by linear interpolation in VGS and ln ID between the two points
// around it (Enz, Chicco and Pezzotta 2017: that point is IC = 1, so
// I_spec = ID there).
func (pr *prepared) crossIC1(c curve, n, ut float64) (vgs, id float64, ok bool) {
	prev := -1
	for _, i := range c.idx {
		p := &pr.pts[i]
		if !p.inFit || !(p.gm > 0) {
			continue
		}
		r := p.gm / p.ID * n * ut
		if r < gmIDAtIC1 && prev >= 0 {
			q := &pr.pts[prev]
			rq := q.gm / q.ID * n * ut
			if rq < gmIDAtIC1 {
				return 0, 0, false // started below: no crossing seen
			}
			f := (rq - gmIDAtIC1) / (rq - r)
			vgs = q.VGS + f*(p.VGS-q.VGS)
			id = math.Exp(math.Log(q.ID) + f*(math.Log(p.ID)-math.Log(q.ID)))
			return vgs, id, true
		}
		prev = i
	}
	return 0, 0, false
}

// vgsAtCurrent interpolates VGS where the curve carries current id, in
// ln ID; false when id is outside the curve's fitted range.
func (pr *prepared) vgsAtCurrent(c curve, id float64) (float64, bool) {
	prev := -1
	for _, i := range c.idx {
		p := &pr.pts[i]
		if !p.inFit {
			continue
		}
		if prev >= 0 {
			q := &pr.pts[prev]
			if q.ID <= id && p.ID >= id && p.ID > q.ID {
				f := (math.Log(id) - math.Log(q.ID)) / (math.Log(p.ID) - math.Log(q.ID))
				return q.VGS + f*(p.VGS-q.VGS), true
			}
		}
		prev = i
	}
	return 0, false
}

// start is step (a): the starting parameters from the published gm/ID
// extraction, the rest from the base.
func start(pr *prepared, o Options, free []freeParam) (device.Params, error) {
	p := o.Base
	cox := 3.9 * device.Eps0 / p.Tox
	sat := pr.satCurves()
	var per []lengthStart
	noPlateau, noCross := 0.0, false
	for g, cs := range sat {
		geo := pr.geos[g]
		ut := device.ThermalVoltage(tempK(geo.tempC))
		ls := lengthStart{l: geo.l, w: geo.w, ut: ut}
		ref := pr.vgsCurves[cs[0]] // VBS closest to 0 from below or the largest
		ls.vdsSat = pr.pts[ref.idx[0]].VDS
		// n from the weak-inversion plateau: gm/ID → 1/(n·U_T).
		gmid, ok := pr.plateau(ref)
		if !ok {
			noPlateau = math.Max(noPlateau, gmid)
			continue
		}
		ls.n = 1 / (gmid * ut)
		// I_spec where gm·n·U_T/ID = 0.618, and VT from the pinch-off
		// relation there: VP − VS = U_T·(2q + ln q) with q = 0.618, and
		// dVP/dVG = 1/n, so VT = VGS(IC = 1) − n·U_T·(2q + ln q).
		for k, c := range cs {
			cv := pr.vgsCurves[c]
			vgs, id, ok := pr.crossIC1(cv, ls.n, ut)
			if !ok {
				if k == 0 {
					noCross = true
				}
				continue
			}
			if k == 0 {
				ls.ispec = id
			}
			ls.vt = append(ls.vt, vgs-ls.n*ut*pinchAtIC1)
			ls.vbs = append(ls.vbs, pr.pts[cv.idx[0]].VBS)
		}
		if ls.ispec == 0 {
			continue
		}
		// DIBL: at a fixed weak-inversion current (IC = 0.03) the gate
		// voltage falls by σ per volt of VDS (VG_eff = VG + σ·VDS); a line
		// through VGS(VDS) over the curves with VDS ≥ 0.15 V (saturated in
		// weak inversion, VDS > 4·U_T) gives −σ. Common first-order form.
		var xs, ys []float64
		vb0 := pr.pts[ref.idx[0]].VBS
		for _, cv := range pr.vgsCurves {
			q := pr.pts[cv.idx[0]]
			if q.geo != g || key(q.VBS) != key(vb0) || q.VDS < 0.15 {
				continue
			}
			if v, ok := pr.vgsAtCurrent(cv, 0.03*ls.ispec); ok {
				xs = append(xs, q.VDS)
				ys = append(ys, v)
			}
		}
		if len(xs) >= 2 {
			if s, ok := slope(xs, ys); ok {
				ls.sigma, ls.hasSigma = math.Max(-s, 0), true
			}
		}
		// CLM: in strong saturation gds/ID = λ/(1 + λ·VDS) + σ·gm/ID
		// (M = 1 + λ·VDS and the DIBL shift), so λ ≈ gds/ID − σ·gm/ID at
		// IC > 4 and VDS well above VDsat ≈ 2·U_T·√IC (Enz and Vittoz 2006).
		var lam []float64
		for i := range pr.pts {
			q := &pr.pts[i]
			ic := q.ID / ls.ispec
			if q.geo != g || key(q.VBS) != key(vb0) || !q.inFit || ic < 4 || math.IsNaN(q.gds) || math.IsNaN(q.gm) {
				continue
			}
			if q.VDS < 2*(2*ut*math.Sqrt(ic+0.25)+3*ut) {
				continue
			}
			v := q.gds/q.ID - ls.sigma*q.gm/q.ID
			v /= 1 - v*q.VDS // undo the 1 + λ·VDS of the denominator
			if v > 0 && !math.IsInf(v, 0) {
				lam = append(lam, v)
			}
		}
		if len(lam) > 0 {
			ls.lambda, ls.hasLambda = median(lam), true
		}
		per = append(per, ls)
	}
	if len(per) == 0 {
		switch {
		case noCross:
			return p, errorf("no saturation curve reaches moderate inversion: gm·n·U_T/ID never falls to 0.618 (IC = 1), so the specific current and the threshold cannot be found; extend VGS upwards")
		case noPlateau > 0:
			return p, errorf("too few points in weak inversion to find the slope factor n: gm/ID never levels off (largest " + pct(noPlateau) + " S/A); extend VGS downwards until ID falls three decades below its value at threshold")
		default:
			return p, errorf("no curve along VGS has two or more points above the current floor (a single VGS per curve cannot give gm)")
		}
	}
	sort.Slice(per, func(a, b int) bool { return per[a].l < per[b].l })
	long := per[len(per)-1] // the longest channel: least DIBL and velocity saturation

	has := map[string]bool{}
	for _, f := range free {
		has[f.key] = true
	}
	// DIBL = σ·L: the median over lengths.
	var dl []float64
	for _, ls := range per {
		if ls.hasSigma {
			dl = append(dl, ls.sigma*ls.l)
		}
	}
	dibl := p.DIBL
	if has["dibl"] && len(dl) > 0 {
		dibl = median(dl)
		p.DIBL = dibl
	}
	sigmaLong := dibl / long.l
	// Threshold at VBS = 0 of the longest channel, with its DIBL lowering
	// at the curve's VDS put back (the model's VT0 is at VDS = 0).
	vt0 := long.vt[0] + sigmaLong*long.vdsSat
	if long.vbs[0] != 0 && p.Gamma > 0 && !has["slope"] {
		phi := p.Phi
		vt0 -= p.Gamma * (math.Sqrt(math.Max(phi-long.vbs[0], 0)) - math.Sqrt(phi))
	}
	if has["thresh"] {
		p.VT0 = vt0
	}
	// Mobility from I_spec = 2·n·µ·Cox·(W/L)·U_T².
	if has["mobility"] {
		p.U0 = long.ispec / (2 * long.n * cox * (long.w / long.l) * long.ut * long.ut)
	}
	// Body effect: VT(VBS) − VT(0) = γ·(√(2φF − VBS) − √(2φF)) by least
	// squares over the VBS curves (Razavi ch. 2); with a single VBS, from
	// the slope factor, n ≈ 1 + γ/(2·√(2φF)) deep in weak inversion
	// (Enz and Vittoz 2006).
	if has["body"] {
		sx, sy := 0.0, 0.0
		for _, ls := range per {
			for k := 1; k < len(ls.vt); k++ {
				x := math.Sqrt(math.Max(p.Phi-ls.vbs[k], 0)) - math.Sqrt(math.Max(p.Phi-ls.vbs[0], 0))
				sx += x * x
				sy += x * (ls.vt[k] - ls.vt[0])
			}
		}
		if sx > 0 {
			p.Gamma = sy / sx
		} else {
			p.Gamma = 2 * (long.n - 1) * math.Sqrt(p.Phi)
		}
	}
	if has["slope"] {
		p.NFixed = long.n
	}
	if has["lenmod"] {
		var ll []float64
		for _, ls := range per {
			if ls.hasLambda {
				ll = append(ll, ls.lambda*ls.l)
			}
		}
		if len(ll) > 0 {
			p.LambdaL = median(ll)
		}
	}
	if has["velsat"] && p.ECrit == 0 {
		p.ECrit = 1e9 // off in the base: start where it barely acts
	}
	if has["mobred"] && p.Theta == 0 {
		p.Theta = 0.01
	}
	for _, f := range free {
		v := f.field(&p)
		*v = clamp(*v, f.lo, f.hi)
	}
	return p, nil
}

// slope is the least-squares slope of y against x.
func slope(x, y []float64) (float64, bool) {
	n := float64(len(x))
	mx, my := 0.0, 0.0
	for i := range x {
		mx += x[i]
		my += y[i]
	}
	mx /= n
	my /= n
	sxx, sxy := 0.0, 0.0
	for i := range x {
		sxx += (x[i] - mx) * (x[i] - mx)
		sxy += (x[i] - mx) * (y[i] - my)
	}
	if sxx == 0 {
		return 0, false
	}
	return sxy / sxx, true
}

func median(v []float64) float64 {
	s := append([]float64(nil), v...)
	sort.Float64s(s)
	m := len(s) / 2
	if len(s)%2 == 1 {
		return s[m]
	}
	return (s[m-1] + s[m]) / 2
}
