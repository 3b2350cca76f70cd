package extract

import (
	"math"
	"strconv"

	"stagewright/core/device"
	"stagewright/core/jsonenc"
	"stagewright/core/units"
)

// AppendJSON appends the fit object that the command line prints and the
// bridge returns (see the package's CONTRACT): the fitted and starting
// parameters by their ParamTable keys, the fit report, the findings, the
// design-fragment overrides and the plots. No number is NaN or ±Inf; a
// missing value is null.
func (r Result) AppendJSON(dst []byte) []byte {
	w := jw{b: dst}
	w.open('{')
	w.key("ok")
	w.raw("true")
	w.key("pol")
	w.str(r.Pol.String())
	w.key("points")
	w.int(r.Report.Points)
	w.key("params")
	w.params(r.Params)
	w.key("start")
	w.params(r.Start)
	w.key("bins")
	w.open('[')
	for _, b := range r.bins {
		w.open('{')
		w.key("l")
		w.num(b.L)
		w.key("params")
		w.params(b.Params)
		w.close('}')
	}
	w.close(']')
	r.appendReport(&w)
	w.key("fragment")
	w.str(r.Fragment())
	w.key("iterations")
	w.int(r.Iterations)
	w.key("cancelled")
	w.raw(strconv.FormatBool(r.Cancelled))
	w.key("plots")
	w.open('{')
	for _, p := range []struct {
		k string
		s []series
	}{{"id_vgs", r.plots.idVGS}, {"gmid_id", r.plots.gmidID}, {"gds_vds", r.plots.gdsVDS}} {
		w.key(p.k)
		w.open('[')
		for _, s := range p.s {
			w.open('{')
			w.key("label")
			w.str(s.label)
			w.key("x")
			w.nums(s.x)
			w.key("data")
			w.nums(s.data)
			w.key("model")
			w.nums(s.model)
			w.close('}')
		}
		w.close(']')
	}
	w.close('}')
	w.close('}')
	return w.b
}

// AppendReportJSON appends the fit report alone, as a process file keeps
// it: {"points":N,"iterations":N,"fit":{…},"findings":[…]} with the same
// fields as in AppendJSON.
func (r Result) AppendReportJSON(dst []byte) []byte {
	w := jw{b: dst}
	w.open('{')
	w.key("points")
	w.int(r.Report.Points)
	w.key("iterations")
	w.int(r.Iterations)
	r.appendReport(&w)
	w.close('}')
	return w.b
}

// appendReport writes the "fit" and "findings" members.
func (r Result) appendReport(w *jw) {
	w.key("fit")
	w.open('{')
	w.key("id_rms_pct")
	w.num(r.Report.IDRMSPct)
	w.key("id_max_pct")
	w.num(r.Report.IDMaxPct)
	w.key("gm_id_rms_pct")
	w.num(r.Report.GmIDRMSPct)
	w.key("gds_rms_pct")
	w.num(r.Report.GDSRMSPct)
	w.key("regions")
	w.open('{')
	for _, g := range []struct {
		k string
		f RegionFit
	}{{"weak", r.Report.Regions.Weak}, {"moderate", r.Report.Regions.Moderate}, {"strong", r.Report.Regions.Strong},
		{"triode", r.Report.Regions.Triode}, {"saturation", r.Report.Regions.Saturation}} {
		w.key(g.k)
		w.open('{')
		w.key("points")
		w.int(g.f.Points)
		w.key("id_rms_pct")
		w.num(g.f.IDRMSPct)
		w.key("id_max_pct")
		w.num(g.f.IDMaxPct)
		w.close('}')
	}
	w.close('}')
	w.close('}')
	w.key("findings")
	w.open('[')
	for _, s := range r.Report.Findings {
		w.str(s)
	}
	w.close(']')
}

// Fragment returns the overrides to append to a design fragment: the
// parameters that differ from the base, by their ParamTable keys with the
// polarity's prefix ("n.thresh=412.5m&n.mobility=…"), then for each
// per-length bin the parameters that differ from the global set, with the
// length after '@' ("n.thresh@500n=…"); values written by units.Exact so
// that they read back bit for bit.
func (r Result) Fragment() string {
	var b []byte
	b = appendOverrides(b, r.Pol, r.Params, r.Base, 0)
	for _, bin := range r.bins {
		b = appendOverrides(b, r.Pol, bin.Params, r.Params, bin.L)
	}
	return string(b)
}

func appendOverrides(b []byte, pol device.Polarity, p, base device.Params, l float64) []byte {
	for _, info := range device.ParamTable {
		v := *info.Field(&p)
		if v == *info.Field(&base) {
			continue
		}
		if len(b) > 0 {
			b = append(b, '&')
		}
		b = append(b, pol.String()...)
		b = append(b, '.')
		b = append(b, info.Key...)
		if l > 0 {
			b = append(b, '@')
			b = units.AppendExact(b, l)
		}
		b = append(b, '=')
		b = units.AppendExact(b, v)
	}
	return b
}

// jw writes compact JSON.
type jw struct {
	b     []byte
	comma bool
}

//go:noinline
func (w *jw) sep() {
	if w.comma {
		w.b = append(w.b, ',')
	}
	w.comma = true
}

//go:noinline
func (w *jw) key(k string) {
	w.sep()
	w.b = jsonenc.AppendString(w.b, k)
	w.b = append(w.b, ':')
	w.comma = false
}

//go:noinline
func (w *jw) open(c byte) { w.sep(); w.b = append(w.b, c); w.comma = false }

//go:noinline
func (w *jw) close(c byte) { w.b = append(w.b, c); w.comma = true }

//go:noinline
func (w *jw) raw(s string) { w.sep(); w.b = append(w.b, s...) }

//go:noinline
func (w *jw) str(s string) { w.sep(); w.b = jsonenc.AppendString(w.b, s) }

//go:noinline
func (w *jw) int(i int) { w.sep(); w.b = strconv.AppendInt(w.b, int64(i), 10) }

//go:noinline
func (w *jw) num(v float64) {
	w.sep()
	if math.IsNaN(v) || math.IsInf(v, 0) {
		w.b = append(w.b, "null"...)
		return
	}
	w.b = strconv.AppendFloat(w.b, v, 'g', -1, 64)
}

//go:noinline
func (w *jw) nums(v []float64) {
	w.open('[')
	for _, x := range v {
		if math.IsNaN(x) || math.IsInf(x, 0) {
			w.sep()
			w.b = append(w.b, "null"...)
			continue
		}
		w.sep()
		w.b = strconv.AppendFloat(w.b, x, 'g', 8, 64)
	}
	w.close(']')
}
func (w *jw) params(p device.Params) {
	w.open('{')
	for _, info := range device.ParamTable {
		w.key(info.Key)
		w.num(*info.Field(&p))
	}
	w.close('}')
}
