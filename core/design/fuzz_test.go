package design

import (
	"errors"
	"math"
	"reflect"
	"strings"
	"testing"
)

// FuzzDecode checks, for any text: Decode does not panic; a problem comes
// back as a *FragmentError that lists at least one; the design it returns
// passes Validate and holds no NaN or infinity (but rl = inf); and its
// canonical fragment decodes without problems to the same design, whose
// fragment is the same again. The seed corpus is in
// testdata/fuzz/FuzzDecode; more seeds are added below.
func FuzzDecode(f *testing.F) {
	for _, s := range []string{
		"",
		"#",
		"v=1&stage=cg&vg=0.9&bias=gmid&gmid=20&id=10u",
		"stage=sf&rs=0&load=diode",
		"fmin=999G&ppd=200&nlo=1",
		"vdd=0.2&vin=0.2&vg=0.3",
		"p.phi=0&p.nsub=1e22&n.nfix=1.3&n.ecrit=0",
		"&&&=&==&a=b=c",
		"W=1u&rsign=1&n.vto=1",
		"w=" + strings.Repeat("9", 70),
		strings.Repeat("w=1u&", 900),
	} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, fragment string) {
		d, err := Decode(fragment)
		if err != nil {
			var fe *FragmentError
			if !errors.As(err, &fe) || len(fe.Problems) == 0 {
				t.Fatalf("Decode(%q) error %v: want a *FragmentError with problems", fragment, err)
			}
			for _, p := range fe.Problems {
				if p.Message == "" {
					t.Fatalf("Decode(%q): problem %+v without a message", fragment, p)
				}
			}
		}
		if err := d.Validate(); err != nil {
			t.Fatalf("Decode(%q) returned a design that fails Validate: %v", fragment, err)
		}
		rv := reflect.ValueOf(d)
		for i := range rv.NumField() {
			if fv := rv.Field(i); fv.Kind() == reflect.Float64 {
				x := fv.Float()
				if math.IsNaN(x) || (math.IsInf(x, 0) && rv.Type().Field(i).Name != "RL") {
					t.Fatalf("Decode(%q): %s = %g", fragment, rv.Type().Field(i).Name, x)
				}
			}
		}
		e := d.Encode()
		d2, err := Decode(e)
		if err != nil {
			t.Fatalf("Decode(Encode(Decode(%q))) = %v\nfragment %s", fragment, err, e)
		}
		if !reflect.DeepEqual(d2, d) {
			t.Fatalf("round trip of %q differs:\n %+v\n %+v", fragment, d, d2)
		}
		if e2 := d2.Encode(); e2 != e {
			t.Fatalf("Encode not a fixed point for %q:\n %s\n %s", fragment, e, e2)
		}
	})
}
