package extract

import (
	"stagewright/core/device"
)

// binFree are the parameters each length may have of its own: those that
// describe the channel at one length (threshold with its roll-off, the
// current factor, mobility reduction, CLM, DIBL, a constant slope factor).
// Body effect and 2φF are properties of the substrate and the critical
// field cannot be told from θ within one length (both enter as
// θ + 1/(E_c·L)), so those stay shared by all lengths.
var binFree = map[string]bool{"thresh": true, "mobility": true, "mobred": true, "lenmod": true, "dibl": true, "slope": true}

// binMaxIter caps the joint fit of the bins, and binFineIter its pass on
// every point after a pass on a thinned set: it starts from the single
// set, which already holds the shape. Measured on 9,928 points of the
// demo model (BenchmarkFitForeign10k): uncapped, 96 iterations to 7.711 %
// rms in 8.6 s; capped at 40, 7.780 %; thinned then capped at 12 on every
// point, 7.730 % with the whole fit in 1.6 s.
const binMaxIter, binFineIter = 40, 12

// fitBins fits one set per length jointly with the shared parameters,
// starting every length from the global set. The per-length parameters of
// the fitter's evaluator are left set to the result.
func (f *fitter) fitBins(global device.Params, progress func(done, total int) bool) ([]device.Bin, int, bool) {
	var shared, own []freeParam
	for _, p := range f.free {
		if binFree[p.key] {
			own = append(own, p)
		} else {
			shared = append(shared, p)
		}
	}
	ls := f.pr.lengths
	if len(own) == 0 || len(ls) < 2 {
		return nil, 0, false
	}
	ns, no := len(shared), len(own)
	n := ns + no*len(ls)
	x0 := make([]float64, n)
	lo := make([]float64, n)
	hi := make([]float64, n)
	toX(shared, global, x0[:ns])
	sl, sh := bounds(shared)
	copy(lo, sl)
	copy(hi, sh)
	ol, oh := bounds(own)
	for b := range ls {
		toX(own, global, x0[ns+b*no:ns+(b+1)*no])
		copy(lo[ns+b*no:], ol)
		copy(hi[ns+b*no:], oh)
	}
	sets := make([]device.Params, len(ls))
	unpack := func(x []float64) device.Params {
		p := global
		fromX(shared, x[:ns], &p)
		for b := range ls {
			sets[b] = p
			fromX(own, x[ns+b*no:ns+(b+1)*no], &sets[b])
		}
		return p
	}
	f.ev.byLength = func(l float64) (device.Params, bool) {
		k := key(l)
		for b, lb := range ls {
			if key(lb) == k {
				return sets[b], true
			}
		}
		return device.Params{}, false
	}
	// solve runs the joint fit from x with the fitter's present rows.
	solve := func(x []float64, maxIter int) lmResult {
		// Rows by length: a length's own parameters reach only its rows,
		// so their Jacobian columns need only that length's points (a fit
		// of four lengths then costs about as much per iteration as the
		// single set).
		rows := make([][]int, len(ls))
		for k, i := range append(append([]int(nil), f.idPts...), f.gdsPts...) {
			l := key(f.pr.geos[f.pr.pts[i].geo].l)
			for b, lb := range ls {
				if key(lb) == l {
					rows[b] = append(rows[b], k)
				}
			}
		}
		pb := lmProblem{n: n, m: len(f.idPts) + len(f.gdsPts), lo: lo, hi: hi, maxIter: maxIter,
			residual: func(x, r []float64) bool { return f.residualAt(unpack(x), r) },
			column: func(x []float64, k int, base, r []float64) (bool, bool) {
				if k < ns {
					return false, false
				}
				b := (k - ns) / no
				unpack(x)
				if f.ev.evalLength(global, f.needAll, ls[b]) != nil {
					return true, false
				}
				copy(r, base)
				for _, row := range rows[b] {
					r[row] = f.residualRow(row)
				}
				return true, true
			}}
		return levenbergMarquardt(pb, x, progress)
	}
	// As the single set: first ln ID on a thinned set of points when there
	// are many, then everything.
	x := x0
	iters, fine := 0, binMaxIter
	if k := len(f.idPts) / coarsePoints; k >= 2 {
		fine = binFineIter
		var coarse lmResult
		f.lnIDOnly(func() { f.thinned(k, func() { coarse = solve(x0, binMaxIter) }) })
		if coarse.cancelled {
			unpack(coarse.x)
			return binsOf(ls, sets), coarse.iterations, true
		}
		x, iters = coarse.x, coarse.iterations
	}
	res := solve(x, fine)
	res.iterations += iters
	unpack(res.x)
	return binsOf(ls, sets), res.iterations, res.cancelled
}

func binsOf(ls []float64, sets []device.Params) []device.Bin {
	bins := make([]device.Bin, len(ls))
	for b, l := range ls {
		bins[b] = device.Bin{L: l, Params: sets[b]}
	}
	return bins
}
