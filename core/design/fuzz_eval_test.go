package design

import (
	"encoding/json"
	"math"
	"reflect"
	"strconv"
	"strings"
	"testing"
)

// nullableJSON lists the result fields (by JSON name) that may be NaN or
// infinite and so cross as null: an open port's resistance, a figure that
// the sweep does not reach, a percentage of an infinite or zero exact value,
// and the impedance series (an open input is infinite at low frequency).
// The README documents each of them.
var nullableJSON = map[string]bool{
	"rin": true, "rout": true, "f3db": true, "ugf": true, "gbw": true,
	"phase_at_ugf": true, "corner": true, "diff_pct": true, "zin": true, "zout": true,
}

// nonFinite walks v (a Result or a part of it) and returns the JSON path of
// every float64, Num or Floats element that is NaN or infinite outside the
// nullable fields. In the estimates, "exact" may be null too (a pole the
// pencil does not have).
func nonFinite(v reflect.Value, path string, inEstimate bool, out *[]string) {
	bad := func(x float64) bool { return math.IsNaN(x) || math.IsInf(x, 0) }
	switch v.Kind() {
	case reflect.Pointer, reflect.Interface:
		if !v.IsNil() {
			nonFinite(v.Elem(), path, inEstimate, out)
		}
	case reflect.Float64:
		if bad(v.Float()) {
			*out = append(*out, path)
		}
	case reflect.Slice, reflect.Array:
		for i := range v.Len() {
			nonFinite(v.Index(i), path+"["+strconv.Itoa(i)+"]", inEstimate, out)
		}
	case reflect.Map:
		iter := v.MapRange()
		for iter.Next() {
			nonFinite(iter.Value(), path+"."+iter.Key().String(), inEstimate || strings.HasSuffix(path, "estimates"), out)
		}
	case reflect.Struct:
		t := v.Type()
		for i := range t.NumField() {
			name := strings.Split(t.Field(i).Tag.Get("json"), ",")[0]
			if name == "" || name == "-" {
				name = t.Field(i).Name
			}
			if nullableJSON[name] || inEstimate && name == "exact" {
				continue
			}
			nonFinite(v.Field(i), path+"."+name, inEstimate, out)
		}
	}
}

// FuzzEvaluate checks, for any fragment text: EvaluateFragment does not
// panic; every number in the result is finite except the documented
// nullable ones (which marshal as null); the result marshals as valid JSON
// whose "ok" agrees with the result; and the design Decode returns survives
// Encode → Decode unchanged. The seeds below and in
// testdata/fuzz/FuzzEvaluate span every stage, load, polarity, bias mode
// and process, with overrides and edge values.
func FuzzEvaluate(f *testing.F) {
	for _, s := range []string{
		"v=1&stage=cs&pol=n&w=20u&l=0.5u&bias=id&id=100u&load=r&rd=10k",
		"stage=cs&pol=p&load=active&bias=id&id=20u&vout=0.9",
		"stage=cs&load=diode&bias=vin&vin=0.8&rs=1k",
		"stage=cg&pol=n&load=r&vg=0.9&bias=gmid&gmid=15&id=10u",
		"stage=cg&pol=p&load=active&bias=vin&vin=1.5&vg=0.7&vbl=0.6",
		"stage=sf&pol=n&load=r&rs=5k&bias=id&id=50u&rl=1k",
		"stage=sf&pol=p&load=active&bias=vin&vin=0.3&cl=0",
		"proc=d65&stage=cs&load=r&rd=5k&bias=gmid&gmid=25&id=1u",
		"proc=d65&temp=150&vdd=0.2&bias=vin&vin=0.2",
		"temp=-55&n.vt0=0&n.gamma=0&n.phi=0&n.nsub=1e20&n.ecrit=0",
		"fmin=1m&fmax=1T&ppd=1&nlo=1m&nhi=1T&rsig=1G&rd=1G&id=1n",
		"w=1m&l=20u&id=10m&rd=1&cl=1u&rl=1",
		"bias=vin&vin=0&stage=cs",
		"stage=cs&rs=1G&id=1n&rd=1",
		"p.kf=1e-20&p.tox=100n&pol=p&stage=sf&rs=1",
		"l=0.18%C2%B5&w=0.22%C2%B5&id=1e-6",
		"&&junk=1&w=-1&v=2",
		"rs=1n", // poles ten decades apart: once reported a pole at 0 Hz
	} {
		f.Add(s)
	}
	var e Evaluator
	f.Fuzz(func(t *testing.T, fragment string) {
		r := e.EvaluateFragment(fragment)
		var bad []string
		nonFinite(reflect.ValueOf(r), "result", false, &bad)
		if len(bad) > 0 {
			t.Fatalf("EvaluateFragment(%q): not finite: %v", fragment, bad)
		}
		if !r.OK && (r.Error == nil || r.Error.Message == "") {
			t.Fatalf("EvaluateFragment(%q): failed without a message: %+v", fragment, r.Error)
		}
		if r.OK && (r.OP == nil || r.Midband == nil || r.AC == nil || r.Noise == nil) {
			t.Fatalf("EvaluateFragment(%q): ok but incomplete", fragment)
		}
		if r.Error != nil && r.Error.Code == "internal" {
			t.Fatalf("EvaluateFragment(%q): internal error %q", fragment, r.Error.Message)
		}
		b, err := json.Marshal(&r)
		if err != nil || !json.Valid(b) {
			t.Fatalf("EvaluateFragment(%q): JSON %v", fragment, err)
		}
		var back struct {
			OK bool `json:"ok"`
		}
		if err := json.Unmarshal(b, &back); err != nil || back.OK != r.OK {
			t.Fatalf("EvaluateFragment(%q): JSON reads back ok=%v (%v), result says %v", fragment, back.OK, err, r.OK)
		}
		d, _ := Decode(fragment)
		d2, err := Decode(d.Encode())
		if err != nil {
			t.Fatalf("Decode(Encode(Decode(%q))): %v", fragment, err)
		}
		if !reflect.DeepEqual(d, d2) {
			t.Fatalf("round trip of %q differs:\n %+v\n %+v", fragment, d, d2)
		}
		if r.OK && r.Design != d.Encode() {
			t.Fatalf("EvaluateFragment(%q): result design %q, Encode gives %q", fragment, r.Design, d.Encode())
		}
		if !r.OK {
			return
		}
		// A stage is a passive network around transistors whose
		// conductances are positive: it cannot oscillate, so every pole
		// lies in the left half plane (Re < 0), and the resistance looking
		// back into its output is positive (Kirchhoff's laws and
		// passivity; common practice).
		for _, p := range r.Poles {
			if !(float64(p.Re) < 0) {
				t.Fatalf("EvaluateFragment(%q): pole %g%+gj Hz not in the left half plane", fragment, float64(p.Re), float64(p.Im))
			}
		}
		if !(float64(r.Midband.Rout) > 0) {
			t.Fatalf("EvaluateFragment(%q): rout = %g Ω", fragment, float64(r.Midband.Rout))
		}
		// The operating point obeys KCL at every node (re-solved; the
		// same check as the random designs).
		checkKCLOf(t, d)
	})
}

// The walk that FuzzEvaluate relies on must see a NaN where one is not
// allowed and let a documented null pass.
func TestNonFiniteWalk(t *testing.T) {
	r := Evaluate(mustDecode(t, "stage=cs&load=r"))
	if !r.OK {
		t.Fatal(r.Error)
	}
	var bad []string
	nonFinite(reflect.ValueOf(r), "result", false, &bad)
	if len(bad) != 0 {
		t.Fatalf("default design: not finite %v", bad)
	}
	r.Midband.Rin = Num(math.Inf(1)) // documented nullable
	r.OP.GM = Num(math.NaN())
	r.AC.MagDB[3] = math.Inf(-1)
	nonFinite(reflect.ValueOf(r), "result", false, &bad)
	want := []string{"result.op.gm", "result.ac.mag_db[3]"}
	if !reflect.DeepEqual(bad, want) {
		t.Fatalf("walk found %v, want %v", bad, want)
	}
}
