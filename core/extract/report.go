package extract

import (
	"fmt"
	"math"
	"sort"

	"stagewright/core/chardata"
	"stagewright/core/device"
)

// RegionFit is the ID error over the points of one region (percent).
type RegionFit struct {
	Points   int
	IDRMSPct float64
	IDMaxPct float64 // the worst |error|
	IDBias   float64 // the mean signed error, model above data when positive
}

// Report says how well the fitted model follows the data, in a designer's
// terms. Errors are relative, in percent, model against data; NaN where a
// figure has no points.
type Report struct {
	Points     int // points weighed (above the current floor)
	IDRMSPct   float64
	IDMaxPct   float64
	GmIDRMSPct float64
	GDSRMSPct  float64

	// By inversion level (IC < 0.1, between, IC > 10) and by operating
	// region (|VDS| below or above VDsat), by the fitted model at each point.
	Weak, Moderate, Strong RegionFit
	Triode, Saturation     RegionFit

	// GmIDBias are the mean signed gm/ID errors in weak, moderate and
	// strong inversion; GDSBias the mean signed gds error in saturation per
	// channel length.
	GmIDBias [3]float64
	GDSBias  []LengthBias

	// Findings are plain sentences on where the model cannot follow the
	// data and what that means for a design; empty when it follows well.
	Findings []string
}

// LengthBias is a mean signed error at one channel length.
type LengthBias struct {
	L      float64 // m
	Points int
	Pct    float64
}

// Thresholds of the findings: a region whose ID misses by more than
// idFinding rms, a gm/ID bias beyond gmIDFinding, a gds bias beyond
// gdsFinding (gds is a slope and scatters more).
const (
	idFinding   = 5.0  // %
	gmIDFinding = 2.0  // %
	gdsFinding  = 10.0 // %
)

// acc accumulates signed percent errors.
type acc struct {
	n              int
	sum, sq, worst float64
}

func (a *acc) add(pct float64) {
	if math.IsNaN(pct) || math.IsInf(pct, 0) {
		return
	}
	a.n++
	a.sum += pct
	a.sq += pct * pct
	a.worst = math.Max(a.worst, math.Abs(pct))
}

func (a acc) rms() float64 {
	if a.n == 0 {
		return math.NaN()
	}
	return math.Sqrt(a.sq / float64(a.n))
}

func (a acc) mean() float64 {
	if a.n == 0 {
		return math.NaN()
	}
	return a.sum / float64(a.n)
}

func (a acc) region() RegionFit {
	r := RegionFit{Points: a.n, IDRMSPct: a.rms(), IDMaxPct: math.NaN(), IDBias: a.mean()}
	if a.n > 0 {
		r.IDMaxPct = a.worst
	}
	return r
}

// pointEval is the fitted model at one point of the table.
type pointEval struct {
	id, gm, gds float64
	ic, margin  float64
}

// evalAll evaluates the model with p at every point.
func evalAll(t *chardata.Table, p device.Params, tnom float64) []pointEval {
	out := make([]pointEval, len(t.Points))
	var d device.Device
	var last [3]float64
	ok := false
	for i, q := range t.Points {
		k := [3]float64{q.W, q.L, q.TempC}
		if !ok || k != last {
			var err error
			if d, err = device.New(device.NMOS, p, tnom, q.W, q.L, q.TempC+273.15); err != nil {
				ok = false
				out[i] = pointEval{id: math.NaN(), gm: math.NaN(), gds: math.NaN(), ic: math.NaN(), margin: math.NaN()}
				continue
			}
			last, ok = k, true
		}
		r := d.Report(q.VDS, q.VGS, 0, q.VBS)
		out[i] = pointEval{id: r.ID, gm: r.GM, gds: r.GDS, ic: r.IC, margin: r.Margin}
	}
	return out
}

func pct(model, data float64) float64 { return 100 * (model/data - 1) }

// report measures the fit of p to the table.
func report(t *chardata.Table, g *groups, p device.Params, tnom float64) Report {
	ev := evalAll(t, p, tnom)
	peak := 0.0
	for _, q := range t.Points {
		peak = math.Max(peak, q.ID)
	}
	floor := currentFloor(peak)
	var all, weak, mod, strong, tri, sat acc
	for i, q := range t.Points {
		if q.ID < floor {
			continue
		}
		e := pct(ev[i].id, q.ID)
		all.add(e)
		switch ic := ev[i].ic; {
		case ic < 0.1:
			weak.add(e)
		case ic > 10:
			strong.add(e)
		default:
			mod.add(e)
		}
		if ev[i].margin > 0 {
			sat.add(e)
		} else {
			tri.add(e)
		}
	}
	var r Report
	r.Points = all.n
	r.IDRMSPct, r.IDMaxPct = all.rms(), all.worst
	r.Weak, r.Moderate, r.Strong = weak.region(), mod.region(), strong.region()
	r.Triode, r.Saturation = tri.region(), sat.region()

	// gm/ID, in saturation (where a gain stage works), from the curves.
	var gmAll acc
	var gmBy [3]acc
	for _, c := range g.curves {
		for j, i := range c.idx {
			q := t.Points[i]
			if math.IsNaN(c.gmID[j]) || q.ID < floor || !(ev[i].margin > 0) || !(ev[i].id > 0) {
				continue
			}
			e := pct(ev[i].gm/ev[i].id, c.gmID[j])
			gmAll.add(e)
			switch ic := ev[i].ic; {
			case ic < 0.1:
				gmBy[0].add(e)
			case ic > 10:
				gmBy[2].add(e)
			default:
				gmBy[1].add(e)
			}
		}
	}
	r.GmIDRMSPct = gmAll.rms()
	for k := range gmBy {
		r.GmIDBias[k] = gmBy[k].mean()
	}

	// gds in saturation: the file's column, or the secant of neighbours.
	var gdsAll acc
	byL := map[float64]*acc{}
	addGDS := func(l, e float64) {
		gdsAll.add(e)
		if byL[l] == nil {
			byL[l] = &acc{}
		}
		byL[l].add(e)
	}
	if t.HasGDS {
		for i, q := range t.Points {
			if q.GDS > 0 && q.ID >= floor && ev[i].margin > 0 {
				addGDS(q.L, pct(ev[i].gds, q.GDS))
			}
		}
	} else {
		for _, pr := range g.pairs {
			a, b := t.Points[pr.a], t.Points[pr.b]
			if !(ev[pr.a].margin > 0 && ev[pr.b].margin > 0) || a.ID < floor || !(b.ID > a.ID) {
				continue
			}
			dv := b.VDS - a.VDS
			addGDS(a.L, pct((ev[pr.b].id-ev[pr.a].id)/dv, (b.ID-a.ID)/dv))
		}
	}
	r.GDSRMSPct = gdsAll.rms()
	ls := make([]float64, 0, len(byL))
	for l := range byL {
		ls = append(ls, l)
	}
	sort.Float64s(ls)
	for _, l := range ls {
		r.GDSBias = append(r.GDSBias, LengthBias{L: l, Points: byL[l].n, Pct: byL[l].mean()})
	}
	r.Findings = findings(&r)
	return r
}

// findings turns the report into sentences a designer can act on.
func findings(r *Report) []string {
	var out []string
	names := [3]string{"weak inversion", "moderate inversion", "strong inversion"}
	ranges := [3]string{"below IC 0.1", "between IC 0.1 and 10", "above IC 10"}
	for k, b := range r.GmIDBias {
		if math.IsNaN(b) || math.Abs(b) <= gmIDFinding {
			continue
		}
		// Gain goes with gm at a given current: a model gm/ID below the
		// data makes the gain figures pessimistic.
		dir, verdict := "low", "pessimistic"
		if b > 0 {
			dir, verdict = "high", "optimistic"
		}
		out = append(out, fmt.Sprintf("gm/ID in %s is %.1f %% %s, so gain figures %s are about that much %s.", names[k], math.Abs(b), dir, ranges[k], verdict))
	}
	for _, lb := range r.GDSBias {
		if lb.Points < 3 || math.IsNaN(lb.Pct) || math.Abs(lb.Pct) <= gdsFinding {
			continue
		}
		// Intrinsic gain is gm/gds: a model gds above the data lowers it.
		dir, verdict := "high", "pessimistic"
		if lb.Pct < 0 {
			dir, verdict = "low", "optimistic"
		}
		out = append(out, fmt.Sprintf("gds in saturation at L = %s is %.0f %% %s, so gain and output-resistance figures at that length are about that much %s.", lengthText(lb.L), math.Abs(lb.Pct), dir, verdict))
	}
	for _, x := range []struct {
		name string
		f    RegionFit
		what string
	}{
		{"weak inversion", r.Weak, "leakage and sub-threshold bias currents"},
		{"moderate inversion", r.Moderate, "bias currents set by a gate voltage"},
		{"strong inversion", r.Strong, "bias currents set by a gate voltage"},
		{"triode", r.Triode, "switch resistances and the edge of saturation"},
	} {
		if x.f.Points >= 5 && x.f.IDRMSPct > idFinding {
			out = append(out, fmt.Sprintf("ID in %s misses the data by %.1f %% rms (worst %.0f %%): %s there are that uncertain; bias such a stage by its current, not its gate voltage.", x.name, x.f.IDRMSPct, x.f.IDMaxPct, x.what))
		}
	}
	return out
}

func lengthText(l float64) string {
	switch {
	case l < 1e-6:
		return fmt.Sprintf("%.3g nm", l*1e9)
	default:
		return fmt.Sprintf("%.3g µm", l*1e6)
	}
}
