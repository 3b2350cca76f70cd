package extract

import (
	"math"
	"sort"
	"strconv"

	"stagewright/core/device"
	"stagewright/core/jsonenc"
	"stagewright/core/units"
)

// Changed lists the parameters of the fitted set that differ from the base,
// in the order of device.ParamTable.
func (r *Result) Changed() []device.ParamInfo {
	var out []device.ParamInfo
	for _, info := range device.ParamTable {
		p, b := r.Params, r.Base
		if *info.Field(&p) != *info.Field(&b) {
			out = append(out, info)
		}
	}
	return out
}

// Fragment is the fitted set as design-fragment overrides: "n.thresh=…&…"
// for every parameter that differs from the base, shortest exact values.
func (r *Result) Fragment() string {
	prefix := r.Pol.String() + "."
	var b []byte
	for i, info := range r.Changed() {
		if i > 0 {
			b = append(b, '&')
		}
		p := r.Params
		b = append(b, prefix...)
		b = append(b, info.Key...)
		b = append(b, '=')
		b = units.AppendExact(b, *info.Field(&p))
	}
	return string(b)
}

// AppendJSON writes the fit as one JSON object (see the command line's fit
// and the page's process panel): ok, pol, points, params (every fitted
// parameter by its ParamTable key, SI), start (step (a) for the same keys),
// fit (the errors), findings, fragment, iterations, cancelled and plots.
func (r *Result) AppendJSON(b []byte) []byte {
	b = append(b, `{"ok":true,"pol":`...)
	b = jsonenc.AppendString(b, r.Pol.String())
	b = append(b, `,"points":`...)
	b = strconv.AppendInt(b, int64(r.Points), 10)
	b = append(b, `,"params":`...)
	b = r.appendParams(b, r.Params)
	b = append(b, `,"start":`...)
	b = r.appendParams(b, r.Start)
	rep := &r.Report
	b = append(b, `,"fit":{"points":`...)
	b = strconv.AppendInt(b, int64(rep.Points), 10)
	b = appendKV(b, "id_rms_pct", rep.IDRMSPct)
	b = appendKV(b, "id_max_pct", rep.IDMaxPct)
	b = appendKV(b, "gm_id_rms_pct", rep.GmIDRMSPct)
	b = appendKV(b, "gds_rms_pct", rep.GDSRMSPct)
	b = append(b, `,"regions":{`...)
	for i, reg := range []struct {
		name string
		f    RegionFit
	}{{"weak", rep.Weak}, {"moderate", rep.Moderate}, {"strong", rep.Strong}, {"triode", rep.Triode}, {"saturation", rep.Saturation}} {
		if i > 0 {
			b = append(b, ',')
		}
		b = jsonenc.AppendString(b, reg.name)
		b = append(b, `:{"points":`...)
		b = strconv.AppendInt(b, int64(reg.f.Points), 10)
		b = appendKV(b, "id_rms_pct", reg.f.IDRMSPct)
		b = appendKV(b, "id_max_pct", reg.f.IDMaxPct)
		b = appendKV(b, "id_bias_pct", reg.f.IDBias)
		b = append(b, '}')
	}
	b = append(b, `}},"findings":[`...)
	for i, f := range rep.Findings {
		if i > 0 {
			b = append(b, ',')
		}
		b = jsonenc.AppendString(b, f)
	}
	b = append(b, `],"fragment":`...)
	b = jsonenc.AppendString(b, r.Fragment())
	b = append(b, `,"iterations":`...)
	b = strconv.AppendInt(b, int64(r.Iterations), 10)
	b = append(b, `,"cancelled":`...)
	b = strconv.AppendBool(b, r.Cancelled)
	b = append(b, `,"plots":`...)
	b = r.appendPlots(b)
	return append(b, '}')
}

// appendParams writes the free parameters of p by key.
func (r *Result) appendParams(b []byte, p device.Params) []byte {
	b = append(b, '{')
	for i, k := range r.Free {
		info, _, _ := device.ParamByKey(k)
		if i > 0 {
			b = append(b, ',')
		}
		b = jsonenc.AppendString(b, k)
		b = append(b, ':')
		b = appendNum(b, *info.Field(&p))
	}
	return append(b, '}')
}

func appendKV(b []byte, k string, v float64) []byte {
	b = append(b, ',')
	b = jsonenc.AppendString(b, k)
	b = append(b, ':')
	return appendNum(b, v)
}

// appendNum writes a finite number, or null.
func appendNum(b []byte, v float64) []byte {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return append(b, "null"...)
	}
	return strconv.AppendFloat(b, v, 'g', 8, 64)
}

// series is one curve of a plot: data and model at the same x.
type series struct {
	label          string
	x, data, model []float64
}

func appendSeries(b []byte, list []series) []byte {
	b = append(b, '[')
	for i, s := range list {
		if i > 0 {
			b = append(b, ',')
		}
		b = append(b, `{"label":`...)
		b = jsonenc.AppendString(b, s.label)
		for _, f := range []struct {
			k string
			v []float64
		}{{"x", s.x}, {"data", s.data}, {"model", s.model}} {
			b = append(b, ',')
			b = jsonenc.AppendString(b, f.k)
			b = append(b, ":["...)
			for j, v := range f.v {
				if j > 0 {
					b = append(b, ',')
				}
				b = appendNum(b, v)
			}
			b = append(b, ']')
		}
		b = append(b, '}')
	}
	return append(b, ']')
}

// maxLengths is how many channel lengths the plots show (the shortest, the
// longest and those between, evenly picked).
const maxLengths = 4

// appendPlots writes the curves the page draws: ID against VGS at the
// lowest and highest drain bias, gm/ID against ID in saturation, and gds
// against VDS at two gate drives, for up to four lengths at the bulk bias
// nearest 0.
func (r *Result) appendPlots(b []byte) []byte {
	t := r.table
	if t == nil {
		return append(b, "null"...)
	}
	ev := evalAll(t, r.Params, r.tnom)
	peak := 0.0
	for _, q := range t.Points {
		peak = math.Max(peak, q.ID)
	}
	floor := currentFloor(peak)
	// Lengths, and per length the bulk bias nearest 0 and its drain biases.
	type lkey struct{ w, l, temp float64 }
	vbs0 := map[lkey]float64{}
	for _, c := range r.groups.curves {
		k := lkey{c.key.w, c.key.l, c.key.temp}
		if v, ok := vbs0[k]; !ok || math.Abs(c.key.vbs) < math.Abs(v) {
			vbs0[k] = c.key.vbs
		}
	}
	keys := make([]lkey, 0, len(vbs0))
	for k := range vbs0 {
		keys = append(keys, k)
	}
	sort.Slice(keys, func(i, j int) bool {
		if keys[i].l != keys[j].l {
			return keys[i].l < keys[j].l
		}
		if keys[i].w != keys[j].w {
			return keys[i].w < keys[j].w
		}
		return keys[i].temp < keys[j].temp
	})
	if len(keys) > maxLengths {
		picked := make([]lkey, 0, maxLengths)
		for i := 0; i < maxLengths; i++ {
			picked = append(picked, keys[i*(len(keys)-1)/(maxLengths-1)])
		}
		keys = picked
	}
	var idv, gmid, gds []series
	for _, k := range keys {
		var cs []curve
		for _, c := range r.groups.curves {
			if c.key.w == k.w && c.key.l == k.l && c.key.temp == k.temp && c.key.vbs == vbs0[k] {
				cs = append(cs, c)
			}
		}
		if len(cs) == 0 {
			continue
		}
		sort.Slice(cs, func(i, j int) bool { return cs[i].key.vds < cs[j].key.vds })
		ends := []curve{cs[0]}
		if len(cs) > 1 {
			ends = append(ends, cs[len(cs)-1])
		}
		for _, c := range ends {
			s := series{label: "L " + units.Exact(k.l) + ", VDS " + units.Exact(c.key.vds)}
			for _, i := range c.idx {
				s.x = append(s.x, t.Points[i].VGS)
				s.data = append(s.data, t.Points[i].ID)
				s.model = append(s.model, ev[i].id)
			}
			idv = append(idv, s)
		}
		sat := ends[len(ends)-1]
		s := series{label: "L " + units.Exact(k.l) + ", VDS " + units.Exact(sat.key.vds)}
		for j, i := range sat.idx {
			if t.Points[i].ID < floor || math.IsNaN(sat.gmID[j]) || !(ev[i].id > 0) {
				continue
			}
			s.x = append(s.x, t.Points[i].ID)
			s.data = append(s.data, sat.gmID[j])
			s.model = append(s.model, ev[i].gm/ev[i].id)
		}
		gmid = append(gmid, s)
		// gds at two gate drives above the threshold: 0.15 V and 0.5 V.
		for _, drive := range []float64{0.15, 0.5} {
			want := r.Params.VT0 + drive
			best, bestV := -1, 0.0
			for _, pr := range r.groups.pairs {
				a := t.Points[pr.a]
				if a.W != k.w || a.L != k.l || a.TempC != k.temp || a.VBS != vbs0[k] {
					continue
				}
				if best < 0 || math.Abs(a.VGS-want) < math.Abs(bestV-want) {
					best, bestV = pr.a, a.VGS
				}
			}
			if best < 0 {
				continue
			}
			s := series{label: "L " + units.Exact(k.l) + ", VGS " + units.Exact(bestV)}
			for _, pr := range r.groups.pairs {
				a, c := t.Points[pr.a], t.Points[pr.b]
				if a.W != k.w || a.L != k.l || a.TempC != k.temp || a.VBS != vbs0[k] || a.VGS != bestV {
					continue
				}
				dv := c.VDS - a.VDS
				s.x = append(s.x, (a.VDS+c.VDS)/2)
				s.data = append(s.data, (c.ID-a.ID)/dv)
				s.model = append(s.model, (ev[pr.b].id-ev[pr.a].id)/dv)
			}
			gds = append(gds, s)
		}
	}
	b = append(b, `{"id_vgs":`...)
	b = appendSeries(b, idv)
	b = append(b, `,"gmid_id":`...)
	b = appendSeries(b, gmid)
	b = append(b, `,"gds_vds":`...)
	b = appendSeries(b, gds)
	return append(b, '}')
}
