package extract

import (
	"math"

	"stagewright/core/chardata"
	"stagewright/core/dense"
	"stagewright/core/device"
)

// Options say what to fit and how.
type Options struct {
	Pol  device.Polarity
	Base device.Params // every parameter not fitted, and the start of those the data do not show
	TNom float64       // K, the temperature at which Base holds and the result is given

	// Free lists the parameters to fit by their device.ParamTable keys;
	// nil fits DefaultFree (with slope in place of body when Base has a
	// fixed slope factor).
	Free []string

	// GDSWeight weighs the output-conductance residuals (ln of the ratio of
	// model to data in saturation) against the ln ID residuals; 0 leaves gds
	// out. DefaultGDSWeight when negative.
	GDSWeight float64

	MaxIter int // Levenberg–Marquardt iterations; 0 = 60
}

// DefaultFree are the parameters a fit moves unless told otherwise.
var DefaultFree = []string{"thresh", "mobility", "body", "surface", "mobred", "velsat", "lenmod", "dibl"}

// DefaultGDSWeight weighs each gds residual like one ln ID residual: the
// saturation points then count twice, once through their current and once
// through its slope, which is what a gain figure depends on.
const DefaultGDSWeight = 1

// bound is the range a fitted parameter moves in, mapped from an
// unbounded variable by a logistic function (on a log scale when log).
type bound struct {
	key    string
	lo, hi float64
	log    bool
	field  func(*device.Params) *float64
}

// bounds are the fit ranges: wide enough for any bulk CMOS device, inside
// the ranges device.Params.Validate accepts.
var bounds = []bound{
	{key: "thresh", lo: -0.5, hi: 1.5},
	{key: "mobility", lo: 1e-4, hi: 0.2, log: true},
	{key: "body", lo: 0, hi: 3},
	{key: "slope", lo: 1, hi: 3},
	{key: "surface", lo: 0.3, hi: 1.4},
	{key: "mobred", lo: 0, hi: 5},
	{key: "velsat", lo: 1e5, hi: 1e10, log: true},
	{key: "lenmod", lo: 0, hi: 5e-7},
	{key: "dibl", lo: 0, hi: 2e-7},
	{key: "threshtemp", lo: -5e-3, hi: 5e-3},
	{key: "mobtemp", lo: -3, hi: 0},
}

func init() {
	for i := range bounds {
		info, _, ok := device.ParamByKey(bounds[i].key)
		if !ok {
			panic("extract: no parameter " + bounds[i].key)
		}
		bounds[i].field = info.Field
	}
}

func boundOf(key string) (bound, bool) {
	for _, b := range bounds {
		if b.key == key {
			return b, true
		}
	}
	return bound{}, false
}

// to maps a parameter value into the fit variable; from maps back.
func (b bound) to(v float64) float64 {
	lo, hi := b.lo, b.hi
	if b.log {
		lo, hi, v = math.Log(lo), math.Log(hi), math.Log(v)
	}
	u := (v - lo) / (hi - lo)
	u = math.Min(math.Max(u, 1e-4), 1-1e-4) // a start on a bound stays movable
	return math.Log(u / (1 - u))
}

func (b bound) from(x float64) float64 {
	u := 1 / (1 + math.Exp(-x))
	lo, hi := b.lo, b.hi
	if b.log {
		return math.Exp(math.Log(lo) + u*(math.Log(hi)-math.Log(lo)))
	}
	return lo + u*(hi-lo)
}

// Result is a finished (or cancelled) fit.
type Result struct {
	Pol        device.Polarity
	Params     device.Params // the fitted set
	Start      device.Params // step (a)
	Base       device.Params
	Free       []string
	Report     Report
	Iterations int
	Cancelled  bool
	Points     int

	table  *chardata.Table
	groups groups
	tnom   float64
}

// problem is one fit: the table, its groups and which residuals count.
type problem struct {
	t     *chardata.Table
	g     *groups
	base  device.Params
	tnom  float64
	free  []bound
	used  []int     // points whose ln ID counts
	lnID  []float64 // ln ID of the data at used
	pairs []gdsPair // saturation pairs whose gds counts (no gds column)
	gdsAt []int     // saturation points whose gds counts (gds column)
	wGDS  float64
	devs  []devGroup
	model []float64 // model ID at every point (scratch)
	gdsM  []float64 // model GDS at every point (scratch, gds column only)
}

// devGroup is the points of one device (W, L, temperature).
type devGroup struct {
	w, l, tempK float64
	idx         []int
}

// Fit fits the model to the table: step (a) by Start, then Levenberg–
// Marquardt on the parameters o.Free. progress is called after each
// iteration with the iteration and the most there will be; when it returns
// false the fit stops and returns the best set so far, Cancelled.
func Fit(t *chardata.Table, o Options, progress func(done, total int) bool) (Result, error) {
	if len(t.Points) == 0 {
		return Result{}, &Error{Message: "the table has no points"}
	}
	if o.TNom == 0 {
		o.TNom = 300.15
	}
	if o.MaxIter <= 0 {
		o.MaxIter = 60
	}
	wGDS := o.GDSWeight
	if wGDS < 0 {
		wGDS = DefaultGDSWeight
	}
	free := o.Free
	if free == nil {
		free = append([]string(nil), DefaultFree...)
		if o.Base.NFixed > 0 {
			free[2] = "slope"
		}
	}
	r := Result{Pol: t.Pol, Base: o.Base, Free: free, table: t, groups: groupTable(t), tnom: o.TNom, Points: len(t.Points)}
	p0, err := start(t, &r.groups, o.Base, o.TNom)
	if err != nil {
		return r, err
	}
	r.Start = p0
	pr, err := newProblem(t, &r.groups, p0, o.TNom, free, wGDS)
	if err != nil {
		return r, err
	}
	r.Params, r.Iterations, r.Cancelled = pr.levenberg(p0, o.MaxIter, progress)
	r.Report = report(t, &r.groups, r.Params, o.TNom)
	return r, nil
}

func newProblem(t *chardata.Table, g *groups, p0 device.Params, tnom float64, free []string, wGDS float64) (*problem, error) {
	pr := &problem{t: t, g: g, base: p0, tnom: tnom, wGDS: wGDS, model: make([]float64, len(t.Points))}
	for _, k := range free {
		b, ok := boundOf(k)
		if !ok {
			return nil, &Error{Message: "parameter " + k + " cannot be fitted (the fit moves " + joinKeys() + ")"}
		}
		pr.free = append(pr.free, b)
	}
	peak := 0.0
	for _, p := range t.Points {
		peak = math.Max(peak, p.ID)
	}
	floor := currentFloor(peak)
	for i, p := range t.Points {
		if p.ID >= floor {
			pr.used = append(pr.used, i)
			pr.lnID = append(pr.lnID, math.Log(p.ID))
		}
	}
	if len(pr.used) < chardata.MinPoints {
		return nil, &Error{Message: "too few points carry a current above the floor of the fit"}
	}
	byDev := map[[3]float64]int{}
	for i, p := range t.Points {
		k := [3]float64{p.W, p.L, p.TempC}
		j, ok := byDev[k]
		if !ok {
			j = len(pr.devs)
			byDev[k] = j
			pr.devs = append(pr.devs, devGroup{w: p.W, l: p.L, tempK: p.TempC + 273.15})
		}
		pr.devs[j].idx = append(pr.devs[j].idx, i)
	}
	// Saturation, judged by the start's own VDsat, fixed for the fit so the
	// residual set does not jump between iterations.
	sat := saturated(t, p0, tnom)
	if wGDS > 0 {
		if t.HasGDS {
			pr.gdsM = make([]float64, len(t.Points))
			for i, p := range t.Points {
				if sat[i] && p.GDS > 0 && p.ID >= floor {
					pr.gdsAt = append(pr.gdsAt, i)
				}
			}
		} else {
			for _, q := range g.pairs {
				a, b := t.Points[q.a], t.Points[q.b]
				if sat[q.a] && sat[q.b] && b.ID > a.ID && a.ID >= floor {
					pr.pairs = append(pr.pairs, q)
				}
			}
		}
	}
	return pr, nil
}

// currentFloor is the least current whose logarithm the fit weighs: 1 pA,
// or 1e-9 of the table's largest current, whichever is larger — below it
// leakage and the instrument's floor, not the channel, set the data.
func currentFloor(peak float64) float64 { return math.Max(1e-12, 1e-9*peak) }

// saturated marks the points at which the model with p is in saturation
// (|VDS| above its VDsat).
func saturated(t *chardata.Table, p device.Params, tnom float64) []bool {
	sat := make([]bool, len(t.Points))
	var d device.Device
	var last [3]float64
	ok := false
	for i, q := range t.Points {
		k := [3]float64{q.W, q.L, q.TempC}
		if !ok || k != last {
			var err error
			if d, err = device.New(device.NMOS, p, tnom, q.W, q.L, q.TempC+273.15); err != nil {
				continue
			}
			last, ok = k, true
		}
		sat[i] = d.Report(q.VDS, q.VGS, 0, q.VBS).Margin > 0
	}
	return sat
}

func joinKeys() string {
	s := ""
	for i, b := range bounds {
		if i > 0 {
			s += ", "
		}
		s += b.key
	}
	return s
}

// params turns fit variables into a parameter set.
func (pr *problem) params(x []float64) device.Params {
	p := pr.base
	for j, b := range pr.free {
		*b.field(&p) = b.from(x[j])
	}
	return p
}

// residuals fills res (len(pr.used) + gds terms) for x; false when the set
// is not a valid device.
func (pr *problem) residuals(x, res []float64) bool {
	p := pr.params(x)
	for _, g := range pr.devs {
		d, err := device.New(device.NMOS, p, pr.tnom, g.w, g.l, g.tempK)
		if err != nil {
			return false
		}
		for _, i := range g.idx {
			q := &pr.t.Points[i]
			e := d.Current(q.VDS, q.VGS, 0, q.VBS)
			pr.model[i] = e.ID
			if pr.gdsM != nil {
				pr.gdsM[i] = e.GDS
			}
		}
	}
	k := 0
	for j, i := range pr.used {
		res[k] = logRatio(pr.model[i], pr.lnID[j])
		k++
	}
	for _, q := range pr.pairs {
		a, b := &pr.t.Points[q.a], &pr.t.Points[q.b]
		dv := b.VDS - a.VDS
		data := (b.ID - a.ID) / dv
		model := (pr.model[q.b] - pr.model[q.a]) / dv
		res[k] = pr.wGDS * logRatio(model, math.Log(data))
		k++
	}
	for _, i := range pr.gdsAt {
		res[k] = pr.wGDS * logRatio(pr.gdsM[i], math.Log(pr.t.Points[i].GDS))
		k++
	}
	return true
}

// logRatio is ln(model) − lnData, with a model value at or below 0 read as
// 1e-30 so that the residual stays finite and large.
func logRatio(model, lnData float64) float64 {
	if !(model > 1e-30) {
		model = 1e-30
	}
	return math.Log(model) - lnData
}

func (pr *problem) size() int { return len(pr.used) + len(pr.pairs) + len(pr.gdsAt) }

func sumSq(r []float64) float64 {
	s := 0.0
	for _, v := range r {
		s += v * v
	}
	return s
}

// levenberg minimizes ½·Σr² over the free parameters from p0 by
// Levenberg–Marquardt with Marquardt's diagonal scaling: a forward-difference
// Jacobian in the fit variables, the damped normal equations
// (JᵀJ + µ·diag JᵀJ)·δ = −Jᵀr solved by LU, µ lowered after a step that
// lowers the cost and raised until one does. It stops when a step lowers the
// cost by less than 1e-10 of itself, or after maxIter iterations.
func (pr *problem) levenberg(p0 device.Params, maxIter int, progress func(done, total int) bool) (device.Params, int, bool) {
	np, m := len(pr.free), pr.size()
	x := make([]float64, np)
	for j, b := range pr.free {
		x[j] = b.to(*b.field(&p0))
	}
	r := make([]float64, m)
	if !pr.residuals(x, r) {
		return p0, 0, false
	}
	cost := sumSq(r)
	jac := make([]float64, m*np) // column-major: jac[j*m+i]
	rt := make([]float64, m)
	xt := make([]float64, np)
	a := make([]float64, np*np)
	ad := make([]float64, np*np)
	g := make([]float64, np)
	delta := make([]float64, np)
	var lu dense.LU
	mu := 1e-3
	iter := 0
	for iter < maxIter {
		iter++
		// Jacobian by forward differences: step 1e-6 in the logistic
		// variable (whose useful range is about ±9).
		for j := 0; j < np; j++ {
			copy(xt, x)
			h := 1e-6 * math.Max(1, math.Abs(x[j]))
			xt[j] += h
			col := jac[j*m : (j+1)*m]
			if !pr.residuals(xt, rt) {
				for i := range col {
					col[i] = 0
				}
				continue
			}
			for i := range col {
				col[i] = (rt[i] - r[i]) / h
			}
		}
		for j := 0; j < np; j++ {
			cj := jac[j*m : (j+1)*m]
			s := 0.0
			for i := range cj {
				s += cj[i] * r[i]
			}
			g[j] = s
			for k := j; k < np; k++ {
				ck := jac[k*m : (k+1)*m]
				t := 0.0
				for i := range cj {
					t += cj[i] * ck[i]
				}
				a[j*np+k], a[k*np+j] = t, t
			}
		}
		improved := false
		for try := 0; try < 12; try++ {
			copy(ad, a)
			for j := 0; j < np; j++ {
				ad[j*np+j] += mu * math.Max(a[j*np+j], 1e-12)
			}
			if err := lu.Factorize(np, ad); err != nil {
				mu *= 10
				continue
			}
			for j := range g {
				g[j] = -g[j]
			}
			lu.Solve(delta, g)
			for j := range g {
				g[j] = -g[j]
			}
			for j := range xt {
				xt[j] = x[j] + delta[j]
			}
			if pr.residuals(xt, rt) {
				if c := sumSq(rt); c < cost {
					rel := (cost - c) / cost
					copy(x, xt)
					r, rt = rt, r
					cost = c
					mu = math.Max(mu/3, 1e-9)
					improved = true
					if rel < 1e-10 {
						return pr.params(x), iter, false
					}
					break
				}
			}
			mu *= 4
		}
		if progress != nil && !progress(iter, maxIter) {
			return pr.params(x), iter, true
		}
		if !improved {
			break
		}
	}
	return pr.params(x), iter, false
}
