package extract

import (
	"math"
	"testing"

	"gonum.org/v1/gonum/optimize"

	"stagewright/core/chardata"
	"stagewright/core/device"
)

// The alternative to our own Levenberg–Marquardt that the issue asks to
// measure: gonum's optimize package (BFGS and L-BFGS, unconstrained, so
// the bounds are kept by evaluating at the clamped point) minimizing the
// same ½·Σr² of the same fit, with the gradient Jᵀr from the same
// forward-difference Jacobian. The numbers are in DEVELOPERS.md
// ("Fitting a process").

func compareSetup(b *testing.B) (*fitter, device.Params, []float64, []float64, []float64) {
	o, g := benchTable(b)
	o.GDSWeight = 0 // one objective, ln ID only, for both
	truth := d180n()
	truth.VT0, truth.Theta, truth.DIBL = 0.47, 0.3, 10e-9
	tab := g.table(ourModel(b, truth, g.w, g.tempC), 0.01, 11)
	f, p0 := fitterFor(b, tab, o)
	x0 := make([]float64, len(f.free))
	toX(f.free, p0, x0)
	lo, hi := bounds(f.free)
	return f, p0, x0, lo, hi
}

func fitterFor(b testing.TB, tab chardata.Table, o Options) (*fitter, device.Params) {
	free, err := resolveFree(o.Free)
	if err != nil {
		b.Fatal(err)
	}
	pr, err := prepare(tab)
	if err != nil {
		b.Fatal(err)
	}
	p0, err := start(pr, o, free)
	if err != nil {
		b.Fatal(err)
	}
	f := newFitter(pr, o, free)
	if err := f.ev.eval(p0, false); err != nil {
		b.Fatal(err)
	}
	f.markSaturation(p0)
	f.scratch = p0
	return f, p0
}

func BenchmarkCompareLM(b *testing.B) {
	f, p0, _, _, _ := compareSetup(b)
	b.ReportAllocs()
	var p device.Params
	it := 0
	for b.Loop() {
		p, it, _ = f.run(p0, nil)
	}
	sID, _ := f.scatter(p)
	b.ReportMetric(float64(it), "iterations")
	b.ReportMetric(sID*sID*float64(len(f.idPts))/2, "cost")
}

func benchGonum(b *testing.B, method func() optimize.Method) {
	f, _, x0, lo, hi := compareSetup(b)
	m := len(f.idPts)
	n := len(x0)
	r := make([]float64, m)
	rh := make([]float64, m)
	xc := make([]float64, n)
	cost := func(x []float64) float64 {
		copy(xc, x)
		project(xc, lo, hi)
		if !f.residual(xc, r) {
			return math.Inf(1)
		}
		return halfSumSq(r)
	}
	grad := func(g, x []float64) {
		copy(xc, x)
		project(xc, lo, hi)
		f.residual(xc, r)
		for k := range xc {
			h := 1e-6 * (1 + math.Abs(xc[k]))
			save := xc[k]
			xc[k] += h
			f.residual(xc, rh)
			xc[k] = save
			s := 0.0
			for i := range r {
				s += (rh[i] - r[i]) / h * r[i]
			}
			g[k] = s
		}
	}
	b.ReportAllocs()
	var res *optimize.Result
	for b.Loop() {
		var err error
		res, err = optimize.Minimize(optimize.Problem{Func: cost, Grad: grad}, x0,
			&optimize.Settings{GradientThreshold: 1e-9, FuncEvaluations: 5000}, method())
		if err != nil && res == nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric(float64(res.MajorIterations), "iterations")
	b.ReportMetric(float64(res.FuncEvaluations+res.GradEvaluations*(n+1)), "evals")
	b.ReportMetric(res.F, "cost")
}

func BenchmarkCompareGonumBFGS(b *testing.B) {
	benchGonum(b, func() optimize.Method { return &optimize.BFGS{} })
}

func BenchmarkCompareGonumLBFGS(b *testing.B) {
	benchGonum(b, func() optimize.Method { return &optimize.LBFGS{} })
}
