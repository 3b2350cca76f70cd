package extract

import (
	"math"

	"stagewright/core/chardata"
	"stagewright/core/device"
)

// Fit fits the model to the table: step (a), the published gm/ID
// extraction, gives the starting values; step (b), Levenberg–Marquardt,
// minimizes Σ(ln ID_model − ln ID_data)² over the points above the current
// floor plus GDSWeight·Σ((gds_model − gds_data)/gds_data)² over the
// saturated points, moving only the free parameters.
//
// progress, when not nil, is called about once per iteration with
// (iteration, maximum); returning false stops the fit, which then returns
// the best parameters so far with Cancelled set. A table the extraction
// cannot read (no weak inversion, a single VGS, everything in cut-off)
// gives an *Error saying what it lacks.
func Fit(t chardata.Table, o Options, progress func(done, total int) bool) (Result, error) {
	if o.Pol != device.NMOS && o.Pol != device.PMOS {
		return Result{}, errorf("the polarity must be n or p")
	}
	if o.TNom == 0 {
		o.TNom = 300.15
	}
	if err := o.Base.Validate(); err != nil {
		return Result{}, errorf("the base parameters are not valid: " + err.Error())
	}
	if !(o.GDSWeight >= 0) || math.IsInf(o.GDSWeight, 0) {
		return Result{}, errorf("GDSWeight must be 0 or above")
	}
	free, err := resolveFree(o.Free)
	if err != nil {
		return Result{}, err
	}
	if has(free, "slope") && o.Base.NFixed == 0 {
		o.Base.NFixed = 1.3 // replaced by step (a)
	}
	pr, err := prepare(t)
	if err != nil {
		return Result{}, err
	}
	p0, err := start(pr, o, free)
	if err != nil {
		return Result{}, err
	}
	f := newFitter(pr, o, free)
	if err := f.ev.eval(p0, false); err != nil {
		return Result{}, errorf("the starting values are outside the model's range: " + err.Error())
	}
	f.markSaturation(p0)
	var p device.Params
	var iters int
	var cancelled bool
	if len(f.gdsPts) > 0 && !t.HasGDS {
		// gds by differences of noisy currents is far noisier than ln ID
		// (1 % current noise on a 0.3 V VDS step gives tens of percent), so
		// its weight is taken relative to the noise of each term: first
		// ln ID alone, then both, the gds term scaled by the ratio of the
		// two rms residuals at the first solution (each term normalized by
		// its own scatter, as in iteratively reweighted least squares).
		w := f.wGDS
		f.wGDS = 0
		var p1 device.Params
		var it1 int
		var c1 bool
		f.lnIDOnly(func() {
			// Many points: converge on a thinned set first (every k-th
			// point, about coarsePoints of them), then on all; the thinned
			// fit lands where the full one does within its noise, so the
			// full run needs only a few iterations.
			start := p0
			if k := len(f.idPts) / coarsePoints; k >= 2 {
				f.thinned(k, func() {
					start, it1, c1 = f.run(p0, progress)
				})
			}
			if !c1 {
				var it int
				p1, it, c1 = f.run(start, progress)
				it1 += it
			}
		})
		sID, sGDS := f.scatter(p1)
		f.wGDS = w * sID / sGDS
		p, iters, cancelled = p1, it1, c1
		if !c1 && sGDS > 0 && f.wGDS > 0 {
			var it2 int
			p, it2, cancelled = f.run(p1, progress)
			iters += it2
		}
	} else {
		p, iters, cancelled = f.run(p0, progress)
	}
	res := Result{Pol: o.Pol, Params: p, Start: p0, Base: o.Base, Iterations: iters, Cancelled: cancelled}
	rep, pl, err := f.report(p)
	if err != nil {
		return Result{}, err
	}
	res.Report, res.plots = rep, pl
	// Per-length bins when one set cannot follow the data.
	if o.Bins && !cancelled && rep.IDRMSPct > BinThresholdPct && len(pr.lengths) > 1 {
		bins, it, c := f.fitBins(p, progress)
		if len(bins) > 0 {
			rb, plb, err := f.report(p) // with the evaluator's per-length sets
			if err == nil {
				res.bins, res.Report, res.plots, res.Cancelled = bins, rb, plb, c
				res.Iterations += it
			}
		}
		f.ev.byLength = nil
	}
	return res, nil
}

// coarsePoints is about how many points the first pass of a large fit
// works on.
const coarsePoints = 2000

// lnIDOnly runs fn with the gds rows left out of the residuals and the
// model evaluated only where ln ID is fitted (the first pass, before the
// gds term gets its weight).
func (f *fitter) lnIDOnly(fn func()) {
	gds, all := f.gdsPts, f.needAll
	f.gdsPts, f.needAll = nil, false
	defer func() { f.gdsPts, f.needAll = gds, all }()
	fn()
}

// thinned runs fn on every k-th ln ID point only: the others leave the
// residuals and are not evaluated. Use inside lnIDOnly.
func (f *fitter) thinned(k int, fn func()) {
	full := f.idPts
	kept := make([]int, 0, len(full)/k+1)
	for j, i := range full {
		if j%k == 0 {
			kept = append(kept, i)
		} else {
			f.pr.pts[i].inFit = false
		}
	}
	f.idPts = kept
	defer func() {
		for _, i := range full {
			f.pr.pts[i].inFit = true
		}
		f.idPts = full
	}()
	fn()
}

func has(free []freeParam, k string) bool {
	for _, f := range free {
		if f.key == k {
			return true
		}
	}
	return false
}

// fitter holds one fit's data, model evaluator and residual layout.
type fitter struct {
	pr      *prepared
	o       Options
	free    []freeParam
	ev      *evaluator
	idPts   []int // residual k < len(idPts): ln ID at this point
	gdsPts  []int // then √w·relative gds error at these
	wGDS    float64
	needAll bool // the gds term differences the model over whole curves
	scratch device.Params
}

func newFitter(pr *prepared, o Options, free []freeParam) *fitter {
	f := &fitter{pr: pr, o: o, free: free, ev: newEvaluator(pr, o.TNom, !modelUsesDIBL(o.Base, o.TNom))}
	for i := range pr.pts {
		if pr.pts[i].inFit {
			f.idPts = append(f.idPts, i)
		}
	}
	f.wGDS = math.Sqrt(o.GDSWeight)
	return f
}

// markSaturation decides once, at the starting values, which points are
// saturated (|VDS| above the model's VDsat), so the residual set stays
// fixed during the iterations.
func (f *fitter) markSaturation(p device.Params) {
	f.gdsPts = f.gdsPts[:0]
	for _, i := range f.idPts {
		pt := &f.pr.pts[i]
		rep := f.ev.report(i)
		pt.sat = rep.Margin > 0
		if f.wGDS > 0 && pt.sat && pt.gds > 0 && !math.IsInf(pt.gds, 0) {
			f.gdsPts = append(f.gdsPts, i)
			f.needAll = f.needAll || pt.gdsDiff
		}
	}
}

func (f *fitter) residual(x, r []float64) bool {
	p := f.scratch // the fixed fields; x is already inside the bounds
	fromX(f.free, x, &p)
	return f.residualAt(p, r)
}

// residualAt fills r at parameters p (and the evaluator's per-length sets,
// when it has them).
func (f *fitter) residualAt(p device.Params, r []float64) bool {
	if err := f.ev.eval(p, f.needAll); err != nil {
		return false
	}
	for k := range r {
		r[k] = f.residualRow(k)
	}
	return true
}

// residualRow is residual k from the evaluator's last values: ln ID for
// k < len(idPts), then the weighted relative gds error.
func (f *fitter) residualRow(k int) float64 {
	if k < len(f.idPts) {
		i := f.idPts[k]
		id := f.ev.id[i]
		if !(id > 0) {
			id = f.pr.floor * 1e-6 // far below: a large but finite residual
		}
		return math.Log(id) - math.Log(f.pr.pts[i].ID)
	}
	i := f.gdsPts[k-len(f.idPts)]
	d := f.pr.pts[i].gds
	m := f.ev.modelGDS(i)
	if math.IsNaN(m) {
		m = f.ev.gd[i]
	}
	return f.wGDS * (m - d) / d
}

// scatter returns the rms ln ID residual and the rms relative gds error
// (over the gds points) at p.
func (f *fitter) scatter(p device.Params) (sID, sGDS float64) {
	if f.ev.eval(p, true) != nil {
		return 0, 0
	}
	for _, i := range f.idPts {
		if id := f.ev.id[i]; id > 0 {
			e := math.Log(id / f.pr.pts[i].ID)
			sID += e * e
		}
	}
	for _, i := range f.gdsPts {
		d := f.pr.pts[i].gds
		m := f.ev.modelGDS(i)
		if math.IsNaN(m) {
			m = f.ev.gd[i]
		}
		e := (m - d) / d
		sGDS += e * e
	}
	return math.Sqrt(sID / float64(len(f.idPts))), math.Sqrt(sGDS / float64(max(len(f.gdsPts), 1)))
}

// run is step (b) from p0; it returns the fitted parameters.
func (f *fitter) run(p0 device.Params, progress func(done, total int) bool) (device.Params, int, bool) {
	f.scratch = p0
	n := len(f.free)
	x0 := make([]float64, n)
	toX(f.free, p0, x0)
	lo, hi := bounds(f.free)
	pb := lmProblem{n: n, m: len(f.idPts) + len(f.gdsPts), lo: lo, hi: hi, residual: f.residual}
	res := levenbergMarquardt(pb, x0, progress)
	p := p0
	fromX(f.free, res.x, &p)
	return p, res.iterations, res.cancelled
}
