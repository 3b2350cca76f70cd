package extract

import (
	"math"

	"stagewright/core/device"
)

// freeParam is one parameter the fit can move: where it lives in Params,
// the interval it is held to, and whether the fit works on its logarithm.
//
// The intervals are the ranges a design link accepts (inside
// device.Params.Validate's); for the
// parameters whose range starts at 0 (off) the fit, which works on their
// logarithm, starts the interval at a value too small to matter instead
// (a test checks every interval against Validate).
type freeParam struct {
	key    string
	field  func(*device.Params) *float64
	lo, hi float64
	log    bool
}

var freeParams = []freeParam{
	{"thresh", func(p *device.Params) *float64 { return &p.VT0 }, 0, 2, false},
	{"mobility", func(p *device.Params) *float64 { return &p.U0 }, 1e-4, 0.2, true},
	{"body", func(p *device.Params) *float64 { return &p.Gamma }, 1e-3, 3, true},    // γ below 1 m√V changes nothing measurable
	{"slope", func(p *device.Params) *float64 { return &p.NFixed }, 1, 3, false},    // a constant n
	{"surface", func(p *device.Params) *float64 { return &p.Phi }, 0.2, 1.5, false}, // 2φF
	{"mobred", func(p *device.Params) *float64 { return &p.Theta }, 1e-4, 5, true},  // θ·n·U_T below 3e-6: no effect
	{"velsat", func(p *device.Params) *float64 { return &p.ECrit }, 1e5, 1e10, true},
	{"lenmod", func(p *device.Params) *float64 { return &p.LambdaL }, 1e-10, 1e-6, true}, // λ below 1e-4 /V at 1 µm
	{"dibl", func(p *device.Params) *float64 { return &p.DIBL }, 1e-12, 1e-6, true},      // σ below 1e-5 V/V at 100 nm
}

// Bounds returns the interval a fitted parameter is kept in, by its
// ParamTable key; false for a parameter the fit does not adjust. Every
// interval lies inside what a design link accepts for the parameter, so a
// fitted set always opens as a link.
func Bounds(key string) (lo, hi float64, ok bool) {
	f, ok := findFree(key)
	return f.lo, f.hi, ok
}

func findFree(key string) (freeParam, bool) {
	for _, f := range freeParams {
		if f.key == key {
			return f, true
		}
	}
	return freeParam{}, false
}

// resolveFree turns Options.Free into the table rows, rejecting unknown and
// repeated keys and body together with slope.
func resolveFree(keys []string) ([]freeParam, error) {
	if keys == nil {
		keys = DefaultFree
	}
	var out []freeParam
	seen := map[string]bool{}
	for _, k := range keys {
		if info, _, ok := device.ParamByKey(k); ok {
			k = info.Key
		}
		f, ok := findFree(k)
		if !ok {
			return nil, errorf("parameter " + quote(k) + " cannot be fitted; the fit can move thresh, mobility, body or slope, surface, mobred, velsat, lenmod and dibl")
		}
		if seen[k] {
			return nil, errorf("parameter " + quote(k) + " is listed twice")
		}
		seen[k] = true
		out = append(out, f)
	}
	if seen["body"] && seen["slope"] {
		return nil, errorf("body and slope cannot both be fitted: a constant slope factor replaces the body effect in the slope")
	}
	if len(out) == 0 {
		return nil, errorf("no parameter to fit")
	}
	return out, nil
}

func quote(s string) string { return "\"" + s + "\"" }

// clamp holds v in [lo, hi]; NaN becomes lo.
func clamp(v, lo, hi float64) float64 {
	if !(v >= lo) {
		return lo
	}
	if v > hi {
		return hi
	}
	return v
}

// toX writes the transformed free parameters of p into x.
func toX(free []freeParam, p device.Params, x []float64) {
	for i, f := range free {
		v := clamp(*f.field(&p), f.lo, f.hi)
		if f.log {
			v = math.Log(v)
		}
		x[i] = v
	}
}

// fromX writes x back into p (x is clamped to the bounds first).
func fromX(free []freeParam, x []float64, p *device.Params) {
	for i, f := range free {
		lo, hi := f.lo, f.hi
		if f.log {
			lo, hi = math.Log(lo), math.Log(hi)
		}
		x[i] = clamp(x[i], lo, hi)
		v := x[i]
		if f.log {
			v = math.Exp(v)
		}
		*f.field(p) = clamp(v, f.lo, f.hi)
	}
}

// bounds returns the transformed interval of each free parameter.
func bounds(free []freeParam) (lo, hi []float64) {
	lo = make([]float64, len(free))
	hi = make([]float64, len(free))
	for i, f := range free {
		lo[i], hi[i] = f.lo, f.hi
		if f.log {
			lo[i], hi[i] = math.Log(f.lo), math.Log(f.hi)
		}
	}
	return lo, hi
}
