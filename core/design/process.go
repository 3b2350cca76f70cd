package design

import (
	"fmt"
	"strings"

	"stagewright/core/device"
)

// overrideField maps an override key's parameter name (after "n." or
// "p.") to the field of device.Params it replaces.
var overrideField = map[string]func(*device.Params) *float64{
	"vt0":   func(p *device.Params) *float64 { return &p.VT0 },
	"u0":    func(p *device.Params) *float64 { return &p.U0 },
	"tox":   func(p *device.Params) *float64 { return &p.Tox },
	"gamma": func(p *device.Params) *float64 { return &p.Gamma },
	"phi":   func(p *device.Params) *float64 { return &p.Phi },
	"nsub":  func(p *device.Params) *float64 { return &p.NSub },
	"nfix":  func(p *device.Params) *float64 { return &p.NFixed },
	"clm":   func(p *device.Params) *float64 { return &p.LambdaL },
	"theta": func(p *device.Params) *float64 { return &p.Theta },
	"ecrit": func(p *device.Params) *float64 { return &p.ECrit },
	"tcv":   func(p *device.Params) *float64 { return &p.TCV },
	"bex":   func(p *device.Params) *float64 { return &p.BEX },
	"cgso":  func(p *device.Params) *float64 { return &p.CGSO },
	"cgdo":  func(p *device.Params) *float64 { return &p.CGDO },
	"cj":    func(p *device.Params) *float64 { return &p.CJ },
	"cjsw":  func(p *device.Params) *float64 { return &p.CJSW },
	"mj":    func(p *device.Params) *float64 { return &p.MJ },
	"mjsw":  func(p *device.Params) *float64 { return &p.MJSW },
	"pb":    func(p *device.Params) *float64 { return &p.PB },
	"ldiff": func(p *device.Params) *float64 { return &p.LDiff },
	"kf":    func(p *device.Params) *float64 { return &p.KF },
}

// ProcessOf returns the design's process with its overrides applied and
// then moved to the design's corner (Aids.Corner; "" means tt): the
// overrides describe the typical device, the corner skews it.
func (d Design) ProcessOf() (device.Process, error) {
	pr, ok := device.Builtin(d.Process)
	if !ok {
		return pr, fmt.Errorf("unknown process %q", d.Process)
	}
	for _, o := range d.Overrides {
		pol, name, _ := strings.Cut(o.Key, ".")
		field, ok := overrideField[name]
		if !ok || (pol != "n" && pol != "p") {
			return pr, fmt.Errorf("unknown process parameter %q", o.Key)
		}
		if pol == "n" {
			*field(&pr.N) = o.Value
		} else {
			*field(&pr.P) = o.Value
		}
	}
	if c := d.Aids.Corner; c != "" && c != "tt" {
		var err error
		if pr, err = device.Corner(pr, c); err != nil {
			return pr, fmt.Errorf("corner: %w", err)
		}
	}
	if err := pr.N.Validate(); err != nil {
		return pr, fmt.Errorf("NMOS parameters: %w", err)
	}
	if err := pr.P.Validate(); err != nil {
		return pr, fmt.Errorf("PMOS parameters: %w", err)
	}
	return pr, nil
}
