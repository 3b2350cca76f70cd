package device

// ParamInfo names one field of Params for users: Key is the name a link, a
// process file and a fit report use (after "n." or "p." in a link), Old the
// earlier name that links made before the rename still carry, Symbol the
// physical symbol the documentation writes beside it, and Unit its SI unit
// ("" when dimensionless).
type ParamInfo struct {
	Key, Old, Symbol, Unit string
	Label                  string // a few words: "threshold voltage"
	Field                  func(*Params) *float64
}

// ParamTable lists every field of Params by its user-facing name, sorted by
// Key. The names are Stagewright's own; the symbols are the textbook ones.
var ParamTable = []ParamInfo{
	{Key: "body", Old: "gamma", Symbol: "γ", Unit: "√V", Label: "body-effect coefficient", Field: func(p *Params) *float64 { return &p.Gamma }},
	{Key: "dibl", Symbol: "σ·L", Unit: "m", Label: "drain-induced barrier lowering", Field: func(p *Params) *float64 { return &p.DIBL }},
	{Key: "difflen", Old: "ldiff", Symbol: "L_diff", Unit: "m", Label: "diffusion length", Field: func(p *Params) *float64 { return &p.LDiff }},
	{Key: "doping", Old: "nsub", Symbol: "N_sub", Unit: "m⁻³", Label: "substrate doping", Field: func(p *Params) *float64 { return &p.NSub }},
	{Key: "flicker", Old: "kf", Symbol: "K_f", Unit: "V²·F", Label: "flicker-noise coefficient", Field: func(p *Params) *float64 { return &p.KF }},
	{Key: "jarea", Old: "cj", Symbol: "C_j0", Unit: "F/m²", Label: "junction capacitance per area", Field: func(p *Params) *float64 { return &p.CJ }},
	{Key: "jgrade", Old: "mj", Symbol: "m_j", Label: "junction grading exponent", Field: func(p *Params) *float64 { return &p.MJ }},
	{Key: "jpotential", Old: "pb", Symbol: "φ_B", Unit: "V", Label: "junction built-in potential", Field: func(p *Params) *float64 { return &p.PB }},
	{Key: "jside", Old: "cjsw", Symbol: "C_jsw0", Unit: "F/m", Label: "junction sidewall capacitance", Field: func(p *Params) *float64 { return &p.CJSW }},
	{Key: "jsidegrade", Old: "mjsw", Symbol: "m_jsw", Label: "sidewall grading exponent", Field: func(p *Params) *float64 { return &p.MJSW }},
	{Key: "lenmod", Old: "clm", Symbol: "λ·L", Unit: "m/V", Label: "channel-length modulation", Field: func(p *Params) *float64 { return &p.LambdaL }},
	{Key: "mobility", Old: "u0", Symbol: "µ0", Unit: "m²/(V·s)", Label: "low-field mobility", Field: func(p *Params) *float64 { return &p.U0 }},
	{Key: "mobred", Old: "theta", Symbol: "θ", Unit: "1/V", Label: "mobility reduction", Field: func(p *Params) *float64 { return &p.Theta }},
	{Key: "mobtemp", Old: "bex", Symbol: "β_µ", Label: "mobility temperature exponent", Field: func(p *Params) *float64 { return &p.BEX }},
	{Key: "ovdrain", Old: "cgdo", Symbol: "C_ov,d", Unit: "F/m", Label: "gate–drain overlap capacitance", Field: func(p *Params) *float64 { return &p.CGDO }},
	{Key: "ovsource", Old: "cgso", Symbol: "C_ov,s", Unit: "F/m", Label: "gate–source overlap capacitance", Field: func(p *Params) *float64 { return &p.CGSO }},
	{Key: "oxide", Old: "tox", Symbol: "t_ox", Unit: "m", Label: "oxide thickness", Field: func(p *Params) *float64 { return &p.Tox }},
	{Key: "slope", Old: "nfix", Symbol: "n", Label: "fixed slope factor", Field: func(p *Params) *float64 { return &p.NFixed }},
	{Key: "surface", Old: "phi", Symbol: "2φF", Unit: "V", Label: "surface potential", Field: func(p *Params) *float64 { return &p.Phi }},
	{Key: "thresh", Old: "vt0", Symbol: "V_T0", Unit: "V", Label: "threshold voltage", Field: func(p *Params) *float64 { return &p.VT0 }},
	{Key: "threshtemp", Old: "tcv", Symbol: "dV_T0/dT", Unit: "V/K", Label: "threshold temperature drift", Field: func(p *Params) *float64 { return &p.TCV }},
	{Key: "velsat", Old: "ecrit", Symbol: "E_c", Unit: "V/m", Label: "critical field of velocity saturation", Field: func(p *Params) *float64 { return &p.ECrit }},
}

// ParamByKey finds a parameter by its name, or by the name it had before
// the rename (Old), and reports which of the two matched.
func ParamByKey(key string) (info ParamInfo, old bool, ok bool) {
	for _, p := range ParamTable {
		if p.Key == key {
			return p, false, true
		}
		if p.Old != "" && p.Old == key {
			return p, true, true
		}
	}
	return ParamInfo{}, false, false
}
