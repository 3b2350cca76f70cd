package extract

import (
	"math"
	"sort"

	"stagewright/core/chardata"
	"stagewright/core/device"
)

// floorAbs and floorRel set the current floor below which points are left
// out of the fit: 1 pA, or 10⁻⁶ of the table's largest current when that is
// larger (below it leakage, not the channel, decides a measured current).
const (
	floorAbs = 1e-12 // A
	floorRel = 1e-6
)

// point is one row of the table as the fit uses it.
type point struct {
	chardata.Point
	geo     int     // index into prepared.geos
	gm, gds float64 // S, data derivatives (the table's, or by differences); NaN when unknown
	inFit   bool    // above the current floor
	sat     bool    // saturation at the starting parameters
	gmDiff  bool    // gm is a difference of the data (so the model's is taken alike)
	gdsDiff bool    // gds likewise

	vgsCurve, vgsPos int // its curve along VGS and its place there
	vdsCurve, vdsPos int // its curve along VDS and its place there
}

// geometry is one (W, L, temperature) group: one device.New per evaluation.
type geometry struct {
	w, l, tempC float64
}

// curve is an ordered run of points along one voltage with the others fixed.
type curve struct {
	idx []int // point indexes, ascending in the swept voltage
}

type prepared struct {
	pts       []point
	geos      []geometry
	vgsCurves []curve // along VGS at fixed (W, L, T, VDS, VBS)
	vdsCurves []curve // along VDS at fixed (W, L, T, VGS, VBS)
	floor     float64 // A
	nFit      int
	lengths   []float64 // the distinct lengths, ascending
}

// key rounds a voltage or size so that a sweep's repeated values group
// together though written with different digits.
func key(v float64) float64 {
	if v == 0 {
		return 0
	}
	e := math.Floor(math.Log10(math.Abs(v)))
	s := math.Pow(10, 9-e)
	return math.Round(v*s) / s
}

func prepare(t chardata.Table) (*prepared, error) {
	if len(t.Points) == 0 {
		return nil, errorf("the table has no points")
	}
	pr := &prepared{pts: make([]point, len(t.Points))}
	maxID := 0.0
	for i, p := range t.Points {
		for _, v := range [...]float64{p.VGS, p.VDS, p.VBS, p.ID, p.W, p.L, p.TempC} {
			if math.IsNaN(v) || math.IsInf(v, 0) {
				return nil, errorf("line " + itoa(p.Line) + ": a value is not a finite number")
			}
		}
		if !(p.W > 0 && p.L > 0) {
			return nil, errorf("line " + itoa(p.Line) + ": W and L must be above 0")
		}
		pr.pts[i] = point{Point: p, gm: math.NaN(), gds: math.NaN()}
		if p.ID > maxID {
			maxID = p.ID
		}
	}
	pr.floor = math.Max(floorAbs, floorRel*maxID)

	type gkey struct{ w, l, t float64 }
	geo := map[gkey]int{}
	type ckey struct {
		g         int
		fixed, vb float64
	}
	vgsC := map[ckey]int{}
	vdsC := map[ckey]int{}
	for i := range pr.pts {
		p := &pr.pts[i]
		gk := gkey{key(p.W), key(p.L), key(p.TempC)}
		g, ok := geo[gk]
		if !ok {
			g = len(pr.geos)
			geo[gk] = g
			pr.geos = append(pr.geos, geometry{p.W, p.L, p.TempC})
		}
		p.geo = g
		ck := ckey{g, key(p.VDS), key(p.VBS)}
		c, ok := vgsC[ck]
		if !ok {
			c = len(pr.vgsCurves)
			vgsC[ck] = c
			pr.vgsCurves = append(pr.vgsCurves, curve{})
		}
		pr.vgsCurves[c].idx = append(pr.vgsCurves[c].idx, i)
		ck = ckey{g, key(p.VGS), key(p.VBS)}
		c, ok = vdsC[ck]
		if !ok {
			c = len(pr.vdsCurves)
			vdsC[ck] = c
			pr.vdsCurves = append(pr.vdsCurves, curve{})
		}
		pr.vdsCurves[c].idx = append(pr.vdsCurves[c].idx, i)
		p.inFit = p.ID > pr.floor && p.VDS > 0
		if p.inFit {
			pr.nFit++
		}
	}
	if pr.nFit == 0 {
		return nil, errorf("no point carries more than the current floor of " + fmtSI(pr.floor, "A") + ": every point is in cut-off")
	}
	for _, c := range pr.vgsCurves {
		sort.SliceStable(c.idx, func(a, b int) bool { return pr.pts[c.idx[a]].VGS < pr.pts[c.idx[b]].VGS })
	}
	for _, c := range pr.vdsCurves {
		sort.SliceStable(c.idx, func(a, b int) bool { return pr.pts[c.idx[a]].VDS < pr.pts[c.idx[b]].VDS })
	}
	ls := map[float64]float64{}
	for _, g := range pr.geos {
		ls[key(g.l)] = g.l
	}
	for _, l := range ls {
		pr.lengths = append(pr.lengths, l)
	}
	sort.Float64s(pr.lengths)

	// Data derivatives: the table's columns, or three-point differences
	// (exact for a parabola through the point and its two neighbours) along
	// VGS of ln ID, and along VDS of ID.
	vgs := func(i int) float64 { return pr.pts[i].VGS }
	vds := func(i int) float64 { return pr.pts[i].VDS }
	lnID := func(i int) float64 { return logPos(pr.pts[i].ID) }
	id := func(i int) float64 { return pr.pts[i].ID }
	for c, cv := range pr.vgsCurves {
		for k, i := range cv.idx {
			p := &pr.pts[i]
			p.vgsCurve, p.vgsPos = c, k
			if t.HasGM && !math.IsNaN(p.Point.GM) {
				p.gm = p.Point.GM
				continue
			}
			p.gm = derivative(cv.idx, k, vgs, lnID) * p.ID
			p.gmDiff = true
		}
	}
	for c, cv := range pr.vdsCurves {
		for k, i := range cv.idx {
			p := &pr.pts[i]
			p.vdsCurve, p.vdsPos = c, k
			if t.HasGDS && !math.IsNaN(p.Point.GDS) {
				p.gds = p.Point.GDS
				continue
			}
			p.gds = derivative(cv.idx, k, vds, id)
			p.gdsDiff = true
		}
	}
	return pr, nil
}

// derivative is dy/dx at idx[k] by the three-point formula on an uneven
// grid (two-point at the ends); NaN when the neighbours are missing,
// coincide or have no finite y.
func derivative(idx []int, k int, x, y func(i int) float64) float64 {
	n := len(idx)
	if n < 2 {
		return math.NaN()
	}
	at := func(j int) (float64, float64) { return x(idx[j]), y(idx[j]) }
	var d float64
	switch {
	case k == 0:
		x0, y0 := at(0)
		x1, y1 := at(1)
		d = (y1 - y0) / (x1 - x0)
	case k == n-1:
		x0, y0 := at(n - 2)
		x1, y1 := at(n - 1)
		d = (y1 - y0) / (x1 - x0)
	default:
		xa, ya := at(k - 1)
		xb, yb := at(k)
		xc, yc := at(k + 1)
		h1, h2 := xb-xa, xc-xb
		d = (-h2/(h1*(h1+h2)))*ya + ((h2-h1)/(h1*h2))*yb + (h1/(h2*(h1+h2)))*yc
	}
	if math.IsNaN(d) || math.IsInf(d, 0) {
		return math.NaN()
	}
	return d
}

// logPos is ln v, NaN for v ≤ 0.
func logPos(v float64) float64 {
	if v <= 0 {
		return math.NaN()
	}
	return math.Log(v)
}

// tempK converts the table's °C.
func tempK(c float64) float64 { return c + 273.15 }

// evaluator computes the model at every point for one parameter set.
type evaluator struct {
	pr         *prepared
	tnom       float64
	shiftDIBL  bool // the device model ignores Params.DIBL: apply the contract's gate shift here
	devs       []device.Device
	geoParams  []device.Params // the parameters each geometry was built with
	id, gm, gd []float64

	// byLength, when set, gives each geometry its own length's parameters
	// (per-length bins) in place of the one set eval is given.
	byLength func(l float64) (device.Params, bool)
}

// modelUsesDIBL reports whether device.Device applies Params.DIBL itself
// (the form of CONTRACT.md: VG_eff = VG + σ·|VDS|).
func modelUsesDIBL(base device.Params, tnom float64) bool {
	a, b := base, base
	a.DIBL, b.DIBL = 0, 50e-9
	da, errA := device.New(device.NMOS, a, tnom, 1e-6, 1e-6, tnom)
	db, errB := device.New(device.NMOS, b, tnom, 1e-6, 1e-6, tnom)
	if errA != nil || errB != nil {
		return true
	}
	return da.Current(1, 0.3, 0, 0).ID != db.Current(1, 0.3, 0, 0).ID
}

func newEvaluator(pr *prepared, tnom float64, shift bool) *evaluator {
	n := len(pr.pts)
	return &evaluator{pr: pr, tnom: tnom, shiftDIBL: shift, devs: make([]device.Device, len(pr.geos)),
		geoParams: make([]device.Params, len(pr.geos)),
		id:        make([]float64, n), gm: make([]float64, n), gd: make([]float64, n)}
}

// eval fills e.id, e.gm, e.gd (polarity-normalized) for the points with
// inFit set, or every point when all is true.
func (e *evaluator) eval(p device.Params, all bool) error { return e.evalLength(p, all, 0) }

// evalLength is eval for the geometries of one length only (0: all); the
// other points keep what an earlier eval left.
func (e *evaluator) evalLength(p device.Params, all bool, only float64) error {
	onlyKey := key(only)
	for g, geo := range e.pr.geos {
		if only != 0 && key(geo.l) != onlyKey {
			continue
		}
		pg := p
		if e.byLength != nil {
			if b, ok := e.byLength(geo.l); ok {
				pg = b
			}
		}
		d, err := device.New(device.NMOS, pg, e.tnom, geo.w, geo.l, tempK(geo.tempC))
		if err != nil {
			return err
		}
		e.devs[g] = d
		e.geoParams[g] = pg
	}
	for i := range e.pr.pts {
		pt := &e.pr.pts[i]
		if !all && !pt.inFit {
			continue
		}
		if only != 0 && key(e.pr.geos[pt.geo].l) != onlyKey {
			continue
		}
		d := &e.devs[pt.geo]
		vg := pt.VGS
		sigma := 0.0
		if e.shiftDIBL {
			sigma = e.geoParams[pt.geo].DIBL / e.pr.geos[pt.geo].l
			vg += sigma * math.Abs(pt.VDS)
		}
		r := d.Current(pt.VDS, vg, 0, pt.VBS)
		gds := r.GDS
		if sigma != 0 && pt.VDS != 0 {
			gds += math.Copysign(sigma, pt.VDS) * r.GM
		}
		e.id[i], e.gm[i], e.gd[i] = r.ID, r.GM, gds
	}
	return nil
}

// modelGM returns the model's gm at point i as the data's was taken: the
// model's own when the table had gm, else the same difference of ln ID
// along VGS over the same points, so that like is compared with like and
// the grid's difference error cancels. Needs an eval with all set.
func (e *evaluator) modelGM(i int) float64 {
	pt := &e.pr.pts[i]
	if !pt.gmDiff {
		return e.gm[i]
	}
	d := derivative(e.pr.vgsCurves[pt.vgsCurve].idx, pt.vgsPos,
		func(j int) float64 { return e.pr.pts[j].VGS }, func(j int) float64 { return logPos(e.id[j]) })
	return d * e.id[i]
}

// modelGDS is modelGM's counterpart for gds along VDS.
func (e *evaluator) modelGDS(i int) float64 {
	pt := &e.pr.pts[i]
	if !pt.gdsDiff {
		return e.gd[i]
	}
	return derivative(e.pr.vdsCurves[pt.vdsCurve].idx, pt.vdsPos,
		func(j int) float64 { return e.pr.pts[j].VDS }, func(j int) float64 { return e.id[j] })
}

// report returns the operating-point report at point i for the devices of
// the last eval (regions, VDsat, IC).
func (e *evaluator) report(i int) device.Report {
	pt := &e.pr.pts[i]
	vg := pt.VGS
	if e.shiftDIBL {
		vg += e.geoParams[pt.geo].DIBL / e.pr.geos[pt.geo].l * math.Abs(pt.VDS)
	}
	return e.devs[pt.geo].Report(pt.VDS, vg, 0, pt.VBS)
}
