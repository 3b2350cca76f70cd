package design

import (
	"math"
	"sort"
	"strconv"

	"stagewright/core/jsonenc"
)

// The result is written as JSON by hand: encoding/json handles each of the
// hundred-odd Num fields through its Marshaler interface and then
// re-validates the bytes it returns, which under WebAssembly costs more
// than the whole evaluation (measured: about 0.5 ms for a 3 kB result). This
// writer produces the same JSON as encoding/json would for these types —
// same keys, order, omissions and number formats — which a test checks.

// The writer's small methods are kept out of line: inlined into the
// hundred-odd calls of AppendJSON they made it 88 kB of WebAssembly
// (measured), for no measurable gain in speed.
type jsonWriter struct {
	b     []byte
	comma bool // a value was written in the present object or array
}

//go:noinline
func (w *jsonWriter) sep() {
	if w.comma {
		w.b = append(w.b, ',')
	}
	w.comma = true
}

//go:noinline
func (w *jsonWriter) key(k string) {
	w.sep()
	w.b = append(w.b, '"')
	w.b = append(w.b, k...) // keys are plain ASCII
	w.b = append(w.b, '"', ':')
	w.comma = false
}

//go:noinline
func (w *jsonWriter) open(c byte) { w.sep(); w.b = append(w.b, c); w.comma = false }

//go:noinline
func (w *jsonWriter) close(c byte) { w.b = append(w.b, c); w.comma = true }

//go:noinline
func (w *jsonWriter) null() { w.sep(); w.b = append(w.b, "null"...) }

//go:noinline
func (w *jsonWriter) boolean(v bool) {
	w.sep()
	w.b = strconv.AppendBool(w.b, v)
}

//go:noinline
func (w *jsonWriter) integer(v int) {
	w.sep()
	w.b = strconv.AppendInt(w.b, int64(v), 10)
}

// num writes a Num as Num.MarshalJSON does.
//
//go:noinline
func (w *jsonWriter) num(v Num) {
	w.sep()
	f := float64(v)
	if math.IsNaN(f) || math.IsInf(f, 0) {
		w.b = append(w.b, "null"...)
		return
	}
	w.b = strconv.AppendFloat(w.b, f, 'g', -1, 64)
}

// floats writes a series as Floats.MarshalJSON does (nil as []).
func (w *jsonWriter) floats(fs Floats) {
	w.sep()
	w.b = append(w.b, '[')
	for i, f := range fs {
		if i > 0 {
			w.b = append(w.b, ',')
		}
		if math.IsNaN(f) || math.IsInf(f, 0) {
			w.b = append(w.b, "null"...)
			continue
		}
		w.b = strconv.AppendFloat(w.b, f, 'g', 8, 64)
	}
	w.b = append(w.b, ']')
}

// str writes a JSON string the way encoding/json does with HTML escaping
// off: control characters, quote and backslash escaped, U+2028 and U+2029
// escaped, invalid UTF-8 replaced by U+FFFD.
//
//go:noinline
func (w *jsonWriter) str(s string) {
	w.sep()
	w.b = jsonenc.AppendStringKeepHTML(w.b, s)
}

func (w *jsonWriter) strings(ss []string) {
	if ss == nil {
		w.null()
		return
	}
	w.open('[')
	for _, s := range ss {
		w.str(s)
	}
	w.close(']')
}

func sortedKeys[V any](m map[string]V) []string {
	keys := make([]string, 0, len(m))
	for k := range m {
		keys = append(keys, k)
	}
	sort.Strings(keys)
	return keys
}

func (w *jsonWriter) device(op *DeviceOP) {
	w.open('{')
	w.deviceFields(op)
	w.close('}')
}

// deviceFields writes the members of a DeviceOP, without the braces, so
// that op, load_op and each entry of devices share them.
func (w *jsonWriter) deviceFields(op *DeviceOP) {
	for _, f := range [...]struct {
		k string
		v Num
	}{{"id", op.ID}, {"vgs", op.VGS}, {"vds", op.VDS}, {"vbs", op.VBS}, {"vth", op.VTH}, {"vov", op.Vov}, {"vdsat", op.VDsat}} {
		w.key(f.k)
		w.num(f.v)
	}
	w.key("region")
	w.str(op.Region)
	w.key("inversion")
	w.str(op.Inversion)
	for _, f := range [...]struct {
		k string
		v Num
	}{{"gm", op.GM}, {"gmb", op.GMB}, {"gds", op.GDS}, {"ro", op.RO}, {"gm_id", op.GmID}, {"ic", op.IC}, {"n", op.N}, {"margin", op.Margin}} {
		w.key(f.k)
		w.num(f.v)
	}
	if op.Power != nil {
		w.key("power")
		w.num(*op.Power)
	}
	for _, f := range [...]struct {
		k string
		v Num
	}{{"cgs", op.CGS}, {"cgd", op.CGD}, {"cgb", op.CGB}, {"cdb", op.CDB}, {"csb", op.CSB}, {"ft", op.FT}, {"gamma_noise", op.Gamma}, {"w", op.W}, {"l", op.L}} {
		w.key(f.k)
		w.num(f.v)
	}
}

func (w *jsonWriter) triple(t *Triple) {
	w.key("gain")
	w.num(t.Gain)
	w.key("rin")
	w.num(t.Rin)
	w.key("rout")
	w.num(t.Rout)
}

func (w *jsonWriter) roots(rs []Root) {
	if rs == nil {
		w.null()
		return
	}
	w.open('[')
	for _, r := range rs {
		w.open('{')
		w.key("re")
		w.num(r.Re)
		w.key("im")
		w.num(r.Im)
		w.close('}')
	}
	w.close(']')
}

// AppendJSON appends the result's JSON (the same text encoding/json gives
// with HTML escaping off) to b.
func (r *Result) AppendJSON(b []byte) []byte {
	w := jsonWriter{b: b}
	w.open('{')
	w.key("ok")
	w.boolean(r.OK)
	if r.Error != nil {
		w.key("error")
		w.open('{')
		w.key("code")
		w.str(r.Error.Code)
		w.key("message")
		w.str(r.Error.Message)
		if r.Error.Key != "" {
			w.key("key")
			w.str(r.Error.Key)
		}
		w.close('}')
	}
	if len(r.Problems) > 0 {
		w.key("problems")
		w.open('[')
		for _, p := range r.Problems {
			w.open('{')
			w.key("key")
			w.str(p.Key)
			w.key("value")
			w.str(p.Value)
			w.key("message")
			w.str(p.Message)
			w.close('}')
		}
		w.close(']')
	}
	w.key("warnings")
	w.strings(r.Warnings)
	w.key("design")
	w.str(r.Design)
	w.key("iterations")
	w.integer(r.Iterations)
	if r.Method != "" {
		w.key("method")
		w.str(r.Method)
	}
	if r.OP != nil {
		w.key("op")
		w.device(r.OP)
	}
	if r.LoadOP != nil {
		w.key("load_op")
		w.device(r.LoadOP)
	}
	if len(r.Devices) > 0 {
		w.key("devices")
		w.open('[')
		for i := range r.Devices {
			d := &r.Devices[i]
			w.open('{')
			w.key("name")
			w.str(d.Name)
			w.key("role")
			w.str(d.Role)
			w.key("pol")
			w.str(d.Pol)
			w.deviceFields(&d.DeviceOP)
			w.close('}')
		}
		w.close(']')
	}
	if len(r.Nodes) > 0 {
		w.key("nodes")
		w.open('{')
		for _, k := range sortedKeys(r.Nodes) {
			w.key(k)
			w.num(r.Nodes[k])
		}
		w.close('}')
	}
	if m := r.Midband; m != nil {
		w.key("midband")
		w.open('{')
		w.key("gain")
		w.num(m.Gain)
		w.key("gain_db")
		w.num(m.GainDB)
		w.key("rin")
		w.num(m.Rin)
		w.key("rout")
		w.num(m.Rout)
		w.key("supply_gain")
		w.num(m.SupplyGain)
		w.key("psrr_db")
		w.num(m.PSRRdB)
		w.close('}')
	}
	if h := r.Hand; h != nil {
		w.key("hand")
		w.open('{')
		w.triple(&h.Triple)
		w.key("supply_gain")
		w.num(h.SupplyGain)
		w.key("psrr_db")
		w.num(h.PSRRdB)
		w.key("formula")
		if h.Formula == nil {
			w.null()
		} else {
			w.open('{')
			for _, k := range sortedKeys(h.Formula) {
				w.key(k)
				w.str(h.Formula[k])
			}
			w.close('}')
		}
		w.close('}')
	}
	if r.DiffPct != nil {
		w.key("diff_pct")
		w.open('{')
		w.triple(&r.DiffPct.Triple)
		w.key("supply_gain")
		w.num(r.DiffPct.SupplyGain)
		w.close('}')
	}
	if s := r.Square; s != nil {
		w.key("square_law")
		w.open('{')
		w.key("vov")
		w.num(s.Vov)
		w.key("gm")
		w.num(s.GM)
		w.key("gain")
		w.num(s.Gain)
		w.close('}')
	}
	if a := r.AC; a != nil {
		w.key("ac")
		w.open('{')
		for _, f := range [...]struct {
			k string
			v Floats
		}{{"f", a.F}, {"mag_db", a.MagDB}, {"phase_deg", a.PhaseDeg}, {"zin", a.Zin}, {"zout", a.Zout}} {
			w.key(f.k)
			w.floats(f.v)
		}
		for _, f := range [...]struct {
			k string
			v Num
		}{{"f3db", a.F3dB}, {"ugf", a.UGF}, {"gbw", a.GBW}, {"dc_gain_db", a.DCGainDB}, {"phase_at_ugf", a.PhaseAtUGF}} {
			w.key(f.k)
			w.num(f.v)
		}
		w.close('}')
	}
	if len(r.Poles) > 0 {
		w.key("poles")
		w.roots(r.Poles)
	}
	w.key("zeros")
	w.roots(r.Zeros)
	w.key("dominant_pole")
	if r.Dominant == nil {
		w.null()
	} else {
		w.integer(*r.Dominant)
	}
	if len(r.Estimate) > 0 {
		w.key("estimates")
		w.open('{')
		for _, k := range sortedKeys(r.Estimate) {
			e := r.Estimate[k]
			w.key(k)
			w.open('{')
			w.key("value")
			w.num(e.Value)
			w.key("exact")
			w.num(e.Exact)
			w.key("diff_pct")
			w.num(e.DiffPct)
			w.key("formula")
			w.str(e.Formula)
			if e.Caveat != "" {
				w.key("caveat")
				w.str(e.Caveat)
			}
			w.close('}')
		}
		w.close('}')
	}
	if n := r.Noise; n != nil {
		w.key("noise")
		w.open('{')
		w.key("f")
		w.floats(n.F)
		w.key("out")
		w.floats(n.Out)
		w.key("in")
		w.floats(n.In)
		w.key("corner")
		w.num(n.Corner)
		w.key("in_rms")
		w.num(n.InRMS)
		w.key("out_rms")
		w.num(n.OutRMS)
		w.key("band")
		w.open('[')
		w.num(n.Band[0])
		w.num(n.Band[1])
		w.close(']')
		w.close('}')
	}
	if l := r.Large; l != nil {
		w.key("large_signal")
		w.open('{')
		if sl := l.Slew; sl != nil {
			w.key("slew")
			w.open('{')
			w.key("up")
			w.num(sl.Up)
			w.key("down")
			w.num(sl.Down)
			w.key("i_up")
			w.num(sl.IUp)
			w.key("i_down")
			w.num(sl.IDown)
			w.close('}')
		}
		w.close('}')
	}
	w.close('}')
	return w.b
}
