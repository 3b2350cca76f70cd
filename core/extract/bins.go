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
	pb := lmProblem{n: n, m: len(f.idPts) + len(f.gdsPts), lo: lo, hi: hi,
		residual: func(x, r []float64) bool { return f.residualAt(unpack(x), r) }}
	res := levenbergMarquardt(pb, x0, progress)
	unpack(res.x)
	bins := make([]device.Bin, len(ls))
	for b, l := range ls {
		bins[b] = device.Bin{L: l, Params: sets[b]}
	}
	return bins, res.iterations, res.cancelled
}
