package extract

import (
	"math"
	"sort"

	"stagewright/core/device"
)

// BinThresholdPct is the rms drain-current error above which a single
// parameter set is said not to follow the data, and per-length bins are
// fitted when Options.Bins allows: 5 %, about the spread of drain current
// between nominally equal devices, so a worse fit is visible in a design.
const BinThresholdPct = 5.0

// RegionFit is the drain-current error over one region of operation.
type RegionFit struct {
	Points   int
	IDRMSPct float64 // rms of 100·(ID_model − ID_data)/ID_data
	IDMaxPct float64 // the largest |…| of the same
}

// Regions splits the points by the model's own operating point: weak
// (IC < 0.1), moderate and strong (IC > 10) inversion, and triode or
// saturation by the model's VDsat at the point.
type Regions struct {
	Weak, Moderate, Strong, Triode, Saturation RegionFit
}

// Report is the fit in the user's terms.
type Report struct {
	Points     int     // points above the current floor
	IDRMSPct   float64 // rms relative drain-current error, %
	IDMaxPct   float64 // worst relative drain-current error, %
	GmIDRMSPct float64 // rms relative error of gm/ID, %
	GDSRMSPct  float64 // rms relative error of gds in saturation, %
	Regions    Regions
	Findings   []string
}

type acc struct {
	n        int
	sum, max float64
	mean     float64 // signed sum, for the bias of an error
}

func (a *acc) add(e float64) {
	a.n++
	a.sum += e * e
	a.mean += e
	a.max = math.Max(a.max, math.Abs(e))
}

func (a *acc) rms() float64 {
	if a.n == 0 {
		return 0
	}
	return math.Sqrt(a.sum / float64(a.n))
}

func (a *acc) bias() float64 {
	if a.n == 0 {
		return 0
	}
	return a.mean / float64(a.n)
}

func (a *acc) region() RegionFit { return RegionFit{Points: a.n, IDRMSPct: a.rms(), IDMaxPct: a.max} }

// report evaluates p at every point and writes the Report and the plots.
func (f *fitter) report(p device.Params) (Report, plots, error) {
	ev := f.ev
	if err := ev.eval(p, true); err != nil {
		return Report{}, plots{}, errorf("the fitted values are outside the model's range: " + err.Error())
	}
	var all, weak, mod, strong, tri, sat, gmid, gds acc
	var gmidWeak acc
	gdsByL := map[float64]*acc{}
	for _, i := range f.idPts {
		pt := &f.pr.pts[i]
		rep := ev.report(i)
		e := 100 * (ev.id[i] - pt.ID) / pt.ID
		all.add(e)
		switch {
		case rep.IF < 0.1:
			weak.add(e)
		case rep.IF > 10:
			strong.add(e)
		default:
			mod.add(e)
		}
		if rep.Margin > 0 {
			sat.add(e)
		} else {
			tri.add(e)
		}
		if mg := ev.modelGM(i); pt.gm > 0 && ev.id[i] > 0 && !math.IsNaN(mg) {
			dm := pt.gm / pt.ID
			eg := 100 * (mg/ev.id[i] - dm) / dm
			if rep.Margin > 0 {
				gmid.add(eg)
				if rep.IF < 0.1 {
					gmidWeak.add(eg)
				}
			}
		}
		if mg := ev.modelGDS(i); rep.Margin > 0 && pt.gds > 0 && !math.IsNaN(mg) {
			eg := 100 * (mg - pt.gds) / pt.gds
			gds.add(eg)
			l := key(f.pr.geos[pt.geo].l)
			if gdsByL[l] == nil {
				gdsByL[l] = &acc{}
			}
			gdsByL[l].add(eg)
		}
	}
	r := Report{
		Points: all.n, IDRMSPct: all.rms(), IDMaxPct: all.max,
		GmIDRMSPct: gmid.rms(), GDSRMSPct: gds.rms(),
		Regions: Regions{Weak: weak.region(), Moderate: mod.region(), Strong: strong.region(),
			Triode: tri.region(), Saturation: sat.region()},
	}
	r.Findings = findings(r, &gmidWeak, gdsByL)
	return r, f.plots(p), nil
}

// findings writes what the numbers mean for a design.
func findings(r Report, gmidWeak *acc, gdsByL map[float64]*acc) []string {
	var out []string
	for _, reg := range []struct {
		name, where string
		fit         RegionFit
	}{
		{"weak inversion", "below IC 0.1", r.Regions.Weak},
		{"moderate inversion", "between IC 0.1 and 10", r.Regions.Moderate},
		{"strong inversion", "above IC 10", r.Regions.Strong},
		{"triode", "below VDsat", r.Regions.Triode},
		{"saturation", "above VDsat", r.Regions.Saturation},
	} {
		if reg.fit.Points > 0 && reg.fit.IDRMSPct > BinThresholdPct {
			out = append(out, "Drain current in "+reg.name+" ("+reg.where+") is off by "+pct(reg.fit.IDRMSPct)+
				" % rms (worst "+pct(reg.fit.IDMaxPct)+" %): bias currents and gm there are uncertain by about as much.")
		}
	}
	if gmidWeak.n >= 3 {
		if b := gmidWeak.bias(); math.Abs(b) > 2 {
			word, effect := "low", "pessimistic"
			if b > 0 {
				word, effect = "high", "optimistic"
			}
			out = append(out, "gm/ID in weak inversion is "+pct(math.Abs(b))+" % "+word+", so gain and bandwidth figures below IC 0.1 are about that much "+effect+".")
		}
	}
	ls := make([]float64, 0, len(gdsByL))
	for l := range gdsByL {
		ls = append(ls, l)
	}
	sort.Float64s(ls)
	for _, l := range ls {
		a := gdsByL[l]
		if a.n < 3 {
			continue
		}
		if b := a.bias(); math.Abs(b) > 10 {
			word, effect := "high", "pessimistic (the model's output resistance is too low)"
			if b < 0 {
				word, effect = "low", "optimistic (the model's output resistance is too high)"
			}
			out = append(out, "gds in saturation at L = "+fmtSI(l, "m")+" is "+pct(math.Abs(b))+" % "+word+": gain estimates there are "+effect+".")
		}
	}
	if len(out) == 0 && r.Points > 0 {
		out = append(out, "The model follows the data within "+pct(r.IDRMSPct)+" % rms in drain current over all "+itoa(r.Points)+" points; no region stands out.")
	}
	return out
}
