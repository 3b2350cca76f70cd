package device

import (
	"errors"
	"math"
	"slices"
	"strings"
	"testing"
)

// TestBuiltinProcesses: every built-in process validates, says it is
// invented, builds devices over its whole geometry and temperature range, and
// has the plausibility relations of its class (common practice): electrons
// more mobile than holes, λ larger in the smaller node, Cox larger with the
// thinner oxide.
func TestBuiltinProcesses(t *testing.T) {
	names := BuiltinNames()
	if !slices.Equal(names, []string{"d180", "d65"}) {
		t.Fatalf("BuiltinNames() = %v, want [d180 d65]", names)
	}
	if !slices.IsSorted(names) {
		t.Errorf("BuiltinNames() not sorted: %v", names)
	}
	for _, name := range names {
		pr, ok := Builtin(name)
		if !ok || pr.Name != name {
			t.Fatalf("Builtin(%q) = %q, %v", name, pr.Name, ok)
		}
		if err := pr.Validate(); err != nil {
			t.Errorf("%s: %v", name, err)
		}
		if !strings.Contains(pr.Title, "invented") {
			t.Errorf("%s: title %q does not say the data is invented", name, pr.Title)
		}
		if pr.N.U0 <= pr.P.U0 {
			t.Errorf("%s: n mobility %g not above p mobility %g", name, pr.N.U0, pr.P.U0)
		}
		for _, pol := range []Polarity{NMOS, PMOS} {
			for _, w := range []float64{pr.WMin, pr.WMax} {
				for _, l := range []float64{pr.LMin, pr.LMax} {
					for _, temp := range []float64{233.15, 398.15} {
						if _, err := New(pol, pr.Params(pol), pr.TNom, w, l, temp); err != nil {
							t.Errorf("%s %v W=%g L=%g T=%g: %v", name, pol, w, l, temp, err)
						}
					}
				}
			}
		}
	}
	if _, ok := Builtin("nope"); ok {
		t.Error(`Builtin("nope") reported ok`)
	}
	d180, _ := Builtin("d180")
	d65, _ := Builtin("d65")
	if d65.N.LambdaL/d65.LMin <= d180.N.LambdaL/d180.LMin {
		t.Error("d65 λ at minimum length should exceed d180's")
	}
	if d65.N.Tox >= d180.N.Tox || d65.VDD >= d180.VDD {
		t.Error("d65 should have thinner oxide and lower supply than d180")
	}
	if (Process{}).Params(Polarity(0)) != (Params{}) {
		t.Error("Params of an invalid polarity should be the zero value")
	}
}

// TestValidateRejects: NaN, ±Inf and out-of-range values are rejected with a
// *RangeError naming the field; zero is accepted where it means "off".
func TestValidateRejects(t *testing.T) {
	nan, inf := math.NaN(), math.Inf(1)
	tests := []struct {
		field  string
		set    func(p *Params, v float64)
		bad    []float64
		zeroOK bool
	}{
		{"VT0", func(p *Params, v float64) { p.VT0 = v }, []float64{nan, inf, -5, 3}, true},
		{"U0", func(p *Params, v float64) { p.U0 = v }, []float64{nan, -inf, 0, -0.01, 2}, false},
		{"Tox", func(p *Params, v float64) { p.Tox = v }, []float64{nan, 0, -4e-9, 1e-3}, false},
		{"Gamma", func(p *Params, v float64) { p.Gamma = v }, []float64{nan, -0.1, 10}, true},
		{"Phi", func(p *Params, v float64) { p.Phi = v }, []float64{nan, -0.8, 0.05, 3}, false},
		{"NFixed", func(p *Params, v float64) { p.NFixed = v }, []float64{nan, 0.5, -1, 9}, true},
		{"LambdaL", func(p *Params, v float64) { p.LambdaL = v }, []float64{nan, -1e-8, 1}, true},
		{"Theta", func(p *Params, v float64) { p.Theta = v }, []float64{nan, -0.1, inf}, true},
		{"ECrit", func(p *Params, v float64) { p.ECrit = v }, []float64{nan, -4e6, 10}, true},
		{"TCV", func(p *Params, v float64) { p.TCV = v }, []float64{nan, 0.5}, true},
		{"BEX", func(p *Params, v float64) { p.BEX = v }, []float64{nan, -10}, true},
		{"CGSO", func(p *Params, v float64) { p.CGSO = v }, []float64{nan, -1e-10}, true},
		{"CGDO", func(p *Params, v float64) { p.CGDO = v }, []float64{inf, -1e-10}, true},
		{"CJ", func(p *Params, v float64) { p.CJ = v }, []float64{nan, -1e-3}, true},
		{"CJSW", func(p *Params, v float64) { p.CJSW = v }, []float64{nan, -1e-10}, true},
		{"MJ", func(p *Params, v float64) { p.MJ = v }, []float64{nan, -0.5, 1.5}, true},
		{"MJSW", func(p *Params, v float64) { p.MJSW = v }, []float64{nan, 2}, true},
		{"PB", func(p *Params, v float64) { p.PB = v }, []float64{nan, 0, -0.8, 5}, false},
		{"LDiff", func(p *Params, v float64) { p.LDiff = v }, []float64{nan, -1e-6}, true},
		{"KF", func(p *Params, v float64) { p.KF = v }, []float64{nan, -1e-25, 1e-10}, true},
	}
	for _, tc := range tests {
		for _, v := range tc.bad {
			p := cleanParams()
			tc.set(&p, v)
			err := p.Validate()
			var re *RangeError
			if !errors.As(err, &re) || re.Name != tc.field {
				t.Errorf("%s = %g: error %v, want a RangeError naming %s", tc.field, v, err, tc.field)
				continue
			}
			if msg := err.Error(); !strings.Contains(msg, tc.field) || !strings.Contains(msg, "accepted range") {
				t.Errorf("%s = %g: message %q does not name the field and the range", tc.field, v, msg)
			}
		}
		p := cleanParams()
		tc.set(&p, 0)
		if err := p.Validate(); (err == nil) != tc.zeroOK {
			t.Errorf("%s = 0: error %v, want accepted = %v", tc.field, err, tc.zeroOK)
		}
	}
	// Phi = 0 asks for NSub.
	p := cleanParams()
	p.Phi = 0
	var re *RangeError
	if err := p.Validate(); !errors.As(err, &re) || re.Name != "NSub" {
		t.Errorf("Phi = 0 without NSub: %v, want an error naming NSub", err)
	}
	p.NSub = 1e23
	if err := p.Validate(); err != nil {
		t.Errorf("Phi = 0 with NSub: %v", err)
	}
}

// TestProcessValidate: errors name the process and the polarity.
func TestProcessValidate(t *testing.T) {
	pr, _ := Builtin("d180")
	pr.P.Tox = -1
	if err := pr.Validate(); err == nil || !strings.Contains(err.Error(), "d180") || !strings.Contains(err.Error(), "p-channel") || !strings.Contains(err.Error(), "Tox") {
		t.Errorf("bad p Tox: %v", err)
	}
	pr, _ = Builtin("d65")
	pr.LMax = pr.LMin / 2
	if err := pr.Validate(); err == nil || !strings.Contains(err.Error(), "LMax") {
		t.Errorf("LMax below LMin: %v", err)
	}
}

// TestParsePolarity round-trips the polarity names.
func TestParsePolarity(t *testing.T) {
	for _, p := range []Polarity{NMOS, PMOS} {
		got, err := ParsePolarity(p.String())
		if err != nil || got != p {
			t.Errorf("ParsePolarity(%q) = %v, %v", p.String(), got, err)
		}
	}
	if _, err := ParsePolarity("x"); err == nil {
		t.Error(`ParsePolarity("x") accepted`)
	}
}
