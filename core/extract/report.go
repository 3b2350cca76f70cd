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
	GDSRMSPct  float64 // rms error of gds in saturation relative to the data's rms gds, 100·√(Σ(m − d)²/Σd²), %
	Regions    Regions
	Findings   []string
}

type acc struct {
	n        int
	sum, max float64
	mean     float64 // signed sum, for the bias of an error
	worst    int     // point of the largest |e|
	vals     []float64
}

func (a *acc) add(e float64, i int) {
	a.n++
	a.sum += e * e
	a.mean += e
	a.vals = append(a.vals, e)
	if math.Abs(e) > a.max || a.n == 1 {
		a.max, a.worst = math.Abs(e), i
	}
}

func (a *acc) rms() float64 {
	if a.n == 0 {
		return 0
	}
	return math.Sqrt(a.sum / float64(a.n))
}

// bias is the median signed error.
func (a *acc) bias() float64 {
	if a.n == 0 {
		return 0
	}
	return median(a.vals)
}

// sums compares model and data gds in aggregate: Σ and Σ² over the points.
// Ratios of sums stay meaningful where a differenced data gds of a flat
// curve scatters around 0 and point-by-point relative errors would not
// (and would, when only positive data values were kept, be biased).
type sums struct {
	n              int
	dm, d, dm2, d2 float64
}

func (s *sums) add(m, d float64) {
	s.n++
	s.dm += m - d
	s.d += d
	s.dm2 += (m - d) * (m - d)
	s.d2 += d * d
}

// biasPct is 100·Σ(m − d)/Σd; ok false when the data show no gds.
func (s *sums) biasPct() (float64, bool) {
	if s.n == 0 || !(s.d > 0) {
		return 0, false
	}
	return 100 * s.dm / s.d, true
}

// rmsPct is 100·√(Σ(m − d)²/Σd²).
func (s *sums) rmsPct() float64 {
	if s.n == 0 || !(s.d2 > 0) {
		return 0
	}
	return 100 * math.Sqrt(s.dm2/s.d2)
}

func (a *acc) region() RegionFit { return RegionFit{Points: a.n, IDRMSPct: a.rms(), IDMaxPct: a.max} }

// report evaluates p at every point and writes the Report and the plots.
func (f *fitter) report(p device.Params) (Report, plots, error) {
	ev := f.ev
	if err := ev.eval(p, true); err != nil {
		return Report{}, plots{}, errorf("the fitted values are outside the model's range: " + err.Error())
	}
	var all, weak, mod, strong, tri, sat, gmid acc
	var gds sums
	var gmidWeak acc
	gdsByL := map[float64]*sums{}
	for _, i := range f.idPts {
		pt := &f.pr.pts[i]
		rep := ev.report(i)
		e := 100 * (ev.id[i] - pt.ID) / pt.ID
		all.add(e, i)
		switch {
		case rep.IF < 0.1:
			weak.add(e, i)
		case rep.IF > 10:
			strong.add(e, i)
		default:
			mod.add(e, i)
		}
		if rep.Margin > 0 {
			sat.add(e, i)
		} else {
			tri.add(e, i)
		}
		if mg := ev.modelGM(i); pt.gm > 0 && ev.id[i] > 0 && !math.IsNaN(mg) {
			dm := pt.gm / pt.ID
			eg := 100 * (mg/ev.id[i] - dm) / dm
			if rep.Margin > 0 {
				gmid.add(eg, i)
				if rep.IF < 0.1 {
					gmidWeak.add(eg, i)
				}
			}
		}
		if mg := ev.modelGDS(i); rep.Margin > 0 && !math.IsNaN(pt.gds) && !math.IsNaN(mg) {
			gds.add(mg, pt.gds)
			l := key(f.pr.geos[pt.geo].l)
			if gdsByL[l] == nil {
				gdsByL[l] = &sums{}
			}
			gdsByL[l].add(mg, pt.gds)
		}
	}
	r := Report{
		Points: all.n, IDRMSPct: all.rms(), IDMaxPct: all.max,
		GmIDRMSPct: gmid.rms(), GDSRMSPct: gds.rmsPct(),
		Regions: Regions{Weak: weak.region(), Moderate: mod.region(), Strong: strong.region(),
			Triode: tri.region(), Saturation: sat.region()},
	}
	worst := map[string]string{}
	for k, a := range map[string]*acc{"weak": &weak, "moderate": &mod, "strong": &strong, "triode": &tri, "saturation": &sat} {
		if a.n > 0 {
			worst[k] = f.where(a.worst)
		}
	}
	r.Findings = findings(r, worst, &gmidWeak, gdsByL)
	return r, f.plots(p), nil
}

// where names the bias of point i for a finding.
func (f *fitter) where(i int) string {
	p := &f.pr.pts[i]
	return "VGS = " + fmtSI(p.VGS, "V") + ", VDS = " + fmtSI(p.VDS, "V") + ", VBS = " + fmtSI(p.VBS, "V") + ", L = " + fmtSI(p.L, "m")
}

// findings writes what the numbers mean for a design.
func findings(r Report, worst map[string]string, gmidWeak *acc, gdsByL map[float64]*sums) []string {
	var out []string
	for _, reg := range []struct {
		key, name, where string
		fit              RegionFit
	}{
		{"weak", "weak inversion", "below IC 0.1", r.Regions.Weak},
		{"moderate", "moderate inversion", "between IC 0.1 and 10", r.Regions.Moderate},
		{"strong", "strong inversion", "above IC 10", r.Regions.Strong},
		{"triode", "triode", "below VDsat", r.Regions.Triode},
		{"saturation", "saturation", "above VDsat", r.Regions.Saturation},
	} {
		if reg.fit.Points > 0 && reg.fit.IDRMSPct > BinThresholdPct {
			out = append(out, "Drain current in "+reg.name+" ("+reg.where+") is off by "+pct(reg.fit.IDRMSPct)+
				" % rms (worst "+pct(reg.fit.IDMaxPct)+" % at "+worst[reg.key]+"): bias currents and gm there are uncertain by about as much.")
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
		if b, ok := a.biasPct(); ok && math.Abs(b) > 10 {
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
