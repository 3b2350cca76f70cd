package transfer

import (
	"stagewright/core/design"
	"stagewright/core/jsonenc"
)

type runJSON struct {
	From    int    `json:"from"`
	To      int    `json:"to"`
	Region1 string `json:"region1"`
	Region2 string `json:"region2"`
}

type traceJSON struct {
	Vin     design.Floats `json:"vin"`
	Vout    design.Floats `json:"vout"`
	Gain    design.Floats `json:"gain"`
	Region1 []string      `json:"region1"`
	Region2 []string      `json:"region2"`
	OpIndex int           `json:"op_index"`
	InLo    design.Num    `json:"in_lo"`
	InHi    design.Num    `json:"in_hi"`
	OutLo   design.Num    `json:"out_lo"`
	OutHi   design.Num    `json:"out_hi"`
	Swing   design.Num    `json:"swing"`
	LimitLo string        `json:"limit_lo"`
	LimitHi string        `json:"limit_hi"`

	OutOp      design.Num `json:"out_op"`
	HeadroomHi design.Num `json:"headroom_hi"`
	HeadroomLo design.Num `json:"headroom_lo"`
	SwingSym   design.Num `json:"swing_sym"`
	LimitOutHi string     `json:"limit_out_hi"`
	LimitOutLo string     `json:"limit_out_lo"`

	Runs []runJSON `json:"runs"`
}

// MarshalJSON writes the curve as {vin, vout, gain, region1, region2,
// op_index, in_lo, in_hi, out_lo, out_hi, swing, limit_lo, limit_hi,
// out_op, headroom_hi, headroom_lo, swing_sym, limit_out_hi, limit_out_lo,
// runs: [{from, to, region1, region2}]}, non-finite numbers as null.
func (tr Trace) MarshalJSON() ([]byte, error) {
	j := traceJSON{
		Vin: tr.Vin, Vout: tr.Vout, Gain: tr.Gain, Region1: tr.Region1, Region2: tr.Region2,
		OpIndex: tr.OpIndex, InLo: design.Num(tr.InLo), InHi: design.Num(tr.InHi),
		OutLo: design.Num(tr.OutLo), OutHi: design.Num(tr.OutHi), Swing: design.Num(tr.Swing),
		LimitLo: tr.LimitLo, LimitHi: tr.LimitHi,
		OutOp: design.Num(tr.OutOp), HeadroomHi: design.Num(tr.HeadroomHi), HeadroomLo: design.Num(tr.HeadroomLo),
		SwingSym: design.Num(tr.SwingSym), LimitOutHi: tr.LimitOutHi, LimitOutLo: tr.LimitOutLo,
		Runs: make([]runJSON, len(tr.Runs)),
	}
	if j.Region1 == nil {
		j.Region1 = []string{}
	}
	if j.Region2 == nil {
		j.Region2 = []string{}
	}
	for i, r := range tr.Runs {
		j.Runs[i] = runJSON(r)
	}
	return jsonenc.Marshal(j)
}

type linearityJSON struct {
	Amp           design.Num `json:"amp"`
	HD2           design.Num `json:"hd2"`
	HD3           design.Num `json:"hd3"`
	THD           design.Num `json:"thd"`
	HD2dB         design.Num `json:"hd2_db"`
	HD3dB         design.Num `json:"hd3_db"`
	THDdB         design.Num `json:"thd_db"`
	TaylorHD2     design.Num `json:"taylor_hd2"`
	TaylorHD3     design.Num `json:"taylor_hd3"`
	SmallSignalOK bool       `json:"small_signal_ok"`
}

// MarshalJSON writes {amp, hd2, hd3, thd, hd2_db, hd3_db, thd_db,
// taylor_hd2, taylor_hd3, small_signal_ok}, non-finite numbers as null.
func (l Linearity) MarshalJSON() ([]byte, error) {
	return jsonenc.Marshal(linearityJSON{
		Amp: design.Num(l.Amp), HD2: design.Num(l.HD2), HD3: design.Num(l.HD3), THD: design.Num(l.THD),
		HD2dB: design.Num(l.HD2dB), HD3dB: design.Num(l.HD3dB), THDdB: design.Num(l.THDdB),
		TaylorHD2: design.Num(l.TaylorHD2), TaylorHD3: design.Num(l.TaylorHD3), SmallSignalOK: l.SmallSignalOK,
	})
}
