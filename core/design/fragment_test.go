package design

import (
	"encoding/json"
	"errors"
	"math"
	"math/rand/v2"
	"reflect"
	"slices"
	"strconv"
	"strings"
	"testing"

	"stagewright/core/device"
	"stagewright/core/units"
)

// refFloat reads a number the way an independent reader would: strconv.ParseFloat
// on plain e-notation. Decode goes through units.Parse and its prefixes, so
// agreement checks the prefix handling against the standard library.
func refFloat(t *testing.T, s string) float64 {
	t.Helper()
	v, err := strconv.ParseFloat(s, 64)
	if err != nil {
		t.Fatalf("bad reference number %q: %v", s, err)
	}
	return v
}

// keyValue returns the number a design holds for a plain key, or the value of
// an override.
func keyValue(d Design, key string) float64 {
	if i, ok := keyIndex[key]; ok && !keyTable[i].isWord() && !keyTable[i].isText() {
		return keyTable[i].get(&d)
	}
	key = CanonicalKey(key) // an old name reads the parameter it names
	for _, o := range d.Overrides {
		if o.Key == key && o.L == 0 {
			return o.Value
		}
	}
	return math.NaN()
}

// sameFloat compares bit for bit: a fragment must carry a value exactly,
// so no tolerance applies.
func sameFloat(a, b float64) bool { return math.Float64bits(a) == math.Float64bits(b) || a == b }

// TestDefaults holds Default to the key table of the task description (the
// agreed defaults; "the spec" below) and the supplies to device.Process.
func TestDefaults(t *testing.T) {
	type row struct {
		proc  string
		field string
		got   func(d Design) float64
		want  float64
	}
	common := func(proc string) []row {
		return []row{
			{proc, "temp", func(d Design) float64 { return d.Temp }, 27},
			{proc, "w", func(d Design) float64 { return d.W }, 10e-6},
			{proc, "id", func(d Design) float64 { return d.ID }, 100e-6},
			{proc, "gmid", func(d Design) float64 { return d.GmID }, 10},
			{proc, "rs", func(d Design) float64 { return d.RS }, 0},
			{proc, "lw", func(d Design) float64 { return d.LoadW }, 10e-6},
			{proc, "rsig", func(d Design) float64 { return d.RSig }, 1e3},
			{proc, "rl", func(d Design) float64 { return d.RL }, math.Inf(1)},
			{proc, "cl", func(d Design) float64 { return d.CL }, 100e-15},
			{proc, "fmin", func(d Design) float64 { return d.FMin }, 1},
			{proc, "fmax", func(d Design) float64 { return d.FMax }, 100e9},
			{proc, "ppd", func(d Design) float64 { return float64(d.PPD) }, 40},
			{proc, "nlo", func(d Design) float64 { return d.NoiseLo }, 1},
			{proc, "nhi", func(d Design) float64 { return d.NoiseHi }, 100e6},
		}
	}
	rows := []row{
		{"d180", "vdd", func(d Design) float64 { return d.VDD }, 1.8},
		{"d180", "l", func(d Design) float64 { return d.L }, 0.5e-6},
		{"d180", "vin", func(d Design) float64 { return d.Vin }, 0.7},
		{"d180", "vg", func(d Design) float64 { return d.VG }, 0.9},
		{"d180", "vout", func(d Design) float64 { return d.VOut }, 0.9},
		{"d180", "rd", func(d Design) float64 { return d.RD }, 10e3},
		{"d180", "ll", func(d Design) float64 { return d.LoadL }, 1e-6},
		{"d180", "vbl", func(d Design) float64 { return d.LoadVB }, 0.7},
		{"d65", "vdd", func(d Design) float64 { return d.VDD }, 1.2},
		{"d65", "l", func(d Design) float64 { return d.L }, 0.2e-6},
		{"d65", "vin", func(d Design) float64 { return d.Vin }, 0.5},
		{"d65", "vg", func(d Design) float64 { return d.VG }, 0.65},
		{"d65", "vout", func(d Design) float64 { return d.VOut }, 0.6},
		{"d65", "rd", func(d Design) float64 { return d.RD }, 5e3},
		{"d65", "ll", func(d Design) float64 { return d.LoadL }, 0.5e-6},
		{"d65", "vbl", func(d Design) float64 { return d.LoadVB }, 0.5},
	}
	rows = append(rows, common("d180")...)
	rows = append(rows, common("d65")...)
	for _, r := range rows {
		if got := r.got(Default(r.proc)); got != r.want {
			t.Errorf("Default(%q).%s = %g, want %g (spec key table)", r.proc, r.field, got, r.want)
		}
	}
	for _, name := range device.BuiltinNames() {
		d := Default(name)
		pr, _ := device.Builtin(name)
		if d.VDD != pr.VDD {
			t.Errorf("Default(%q).VDD = %g, want the process supply %g", name, d.VDD, pr.VDD)
		}
		if d.Process != name || d.Version != 2 || d.Stage != CommonSource || d.Pol != "n" ||
			d.Bias != BiasID || d.Load != LoadResistor || d.Overrides != nil {
			t.Errorf("Default(%q) words = %+v, want v2 cs n id r and no overrides", name, d)
		}
		if err := d.Validate(); err != nil {
			t.Errorf("Default(%q) fails Validate: %v", name, err)
		}
		if _, ok := builtinDefaults[name]; !ok {
			t.Errorf("built-in process %q has no entry in builtinDefaults", name)
		}
	}
	for _, name := range []string{"", "nonesuch"} {
		if got := Default(name); !reflect.DeepEqual(got, Default("d180")) {
			t.Errorf("Default(%q) = %+v, want the d180 defaults", name, got)
		}
	}
	// Stage- and supply-dependent defaults (spec: rs is 10k for sf; the DC
	// levels stay at or below vdd).
	if d, _ := Decode("stage=sf"); d.RS != 5e3 {
		t.Errorf("sf default rs = %g, want 5k", d.RS)
	}
	if d, _ := Decode("vdd=0.5"); d.Vin != 0.5 || d.VG != 0.5 || d.VOut != 0.5 || d.LoadVB != 0.5 {
		t.Errorf("vdd=0.5: DC level defaults %g %g %g %g, want each clamped to 0.5", d.Vin, d.VG, d.VOut, d.LoadVB)
	}
}

func TestDecodeGood(t *testing.T) {
	tests := []struct {
		fragment string
		key      string
		want     string // e-notation for strconv.ParseFloat, or "inf"
	}{
		{"w=20u", "w", "20e-6"},
		{"#w=20u", "w", "20e-6"},
		{"w=20%C2%B5", "w", "20e-6"}, // percent-escaped micro sign U+00B5
		{"w=20%CE%BC", "w", "20e-6"}, // percent-escaped Greek mu U+03BC
		{"w=20µ", "w", "20e-6"},
		{"rd=4.7k", "rd", "4.7e3"},
		{"cl=2.2p", "cl", "2.2e-12"},
		{"id=1e-3", "id", "1e-3"},
		{"id=1m", "id", "1e-3"},
		{"temp=-40", "temp", "-40"},
		{"temp=+27", "temp", "27"}, // '+' stays a plus sign (path unescaping, not query)
		{"rl=inf", "rl", "inf"},
		{"rl=1M", "rl", "1e6"},
		{"rsig=1G", "rsig", "1e9"},
		{"ppd=4e1", "ppd", "40"},
		{"ppd=200", "ppd", "200"},
		{"gmid=25.5", "gmid", "25.5"},
		{"stage=cg&vg=0.9", "vg", "0.9"},
		{"proc=d65&l=65n", "l", "65e-9"},
		{"l=65n&proc=d65", "l", "65e-9"},
		{"vin=1.8", "vin", "1.8"},           // vin = vdd is inside 0 … vdd
		{"vin=1.2&vdd=1.2", "vin", "1.2"},   // order does not matter
		{"stage=sf&load=r&rs=1", "rs", "1"}, // any rs above 0
		{"fmin=1m&fmax=1e12&ppd=200", "fmax", "1e12"},
		{"nlo=1&nhi=100G", "nhi", "100e9"}, // nhi = fmax is inside
		{"w=20u&&&l=1u&", "l", "1e-6"},     // empty pairs are skipped
		{"n.vt0=0.5", "n.vt0", "0.5"},
		{"p.ecrit=0", "p.ecrit", "0"}, // 0 = off, below the 100k … 10G range
		{"n.phi=0&n.nsub=1e23", "n.phi", "0"},
		{"n.tcv=-2m", "n.tcv", "-2e-3"},
	}
	for _, tt := range tests {
		d, err := Decode(tt.fragment)
		if err != nil {
			t.Errorf("Decode(%q): unexpected error %v", tt.fragment, err)
			continue
		}
		want := math.Inf(1)
		if tt.want != "inf" {
			want = refFloat(t, tt.want)
		}
		if got := keyValue(d, tt.key); !sameFloat(got, want) {
			t.Errorf("Decode(%q) %s = %g, want %g", tt.fragment, tt.key, got, want)
		}
		if err := d.Validate(); err != nil {
			t.Errorf("Decode(%q) result fails Validate: %v", tt.fragment, err)
		}
	}

	d, err := Decode("p.u0=10m&n.u0=20m&stage=cg&pol=p&bias=gmid&load=active&proc=d65&v=1")
	if err != nil {
		t.Fatal(err)
	}
	if d.Stage != CommonGate || d.Pol != "p" || d.Bias != BiasGmID || d.Load != LoadActive || d.Process != "d65" {
		t.Errorf("words not applied: %+v", d)
	}
	wantOv := []Override{{Key: "n.mobility", Value: 20e-3}, {Key: "p.mobility", Value: 10e-3}} // old names read as the new
	if !reflect.DeepEqual(d.Overrides, wantOv) {
		t.Errorf("overrides = %v, want %v sorted by key", d.Overrides, wantOv)
	}
}

func TestDecodeProblems(t *testing.T) {
	numReason := func(s string) string {
		_, err := units.Parse(s)
		var ne *units.NumError
		if !errors.As(err, &ne) {
			t.Fatalf("units.Parse(%q) did not fail with *units.NumError: %v", s, err)
		}
		return ne.Reason
	}
	tests := []struct {
		name     string
		fragment string
		key      string // the key the problem names
		value    string // the value as typed
		message  string // a part of the message
		after    string // key whose decoded value is checked, "" for none
		want     string // that value, e-notation
	}{
		{"unknown, near", "rsign=1k", "rsign", "1k", `unknown key (did you mean "rsig"?)`, "", ""},
		{"unknown override", "n.vto=0.4", "n.vto", "0.4", `did you mean "n.thresh"?`, "", ""}, // near an old name: its new one
		{"unknown new name", "n.thres=0.4", "n.thres", "0.4", `did you mean "n.thresh"?`, "", ""},
		{"old and new name", "n.vt0=0.5&n.thresh=0.6", "n.thresh", "0.6", "first value (n.vt0=0.5) is kept", "n.thresh", "0.5"},
		{"bad bin length", "n.thresh@x=0.4", "n.thresh@x", "0.4", "length after @ must be a channel length", "", ""},
		{"bin length out", "n.thresh@50n=0.4", "n.thresh@50n", "0.4", "outside d180's channel lengths", "", ""},
		{"repeated bin", "n.thresh@1u=0.4&n.vt0@1000n=0.5", "n.vt0@1000n", "0.5", "first value (n.thresh@1u=0.4) is kept", "", ""},
		{"upper case", "W=1u", "W", "1u", `keys are lower case (did you mean "w"?)`, "w", "10e-6"},
		{"unknown, far", "zzzzzz=1", "zzzzzz", "1", "unknown key", "", ""},
		{"repeated", "w=20u&w=30u", "w", "30u", "repeated key: the first value (20u) is kept", "w", "20e-6"},
		{"repeated override", "n.vt0=0.5&n.vt0=0.6", "n.vt0", "0.6", "first value (n.vt0=0.5) is kept", "n.vt0", "0.5"},
		{"empty key", "=5", "", "5", "empty key", "", ""},
		{"missing =", "w", "w", "", "missing '='", "w", "10e-6"},
		{"bad number", "w=4.7kk", "w", "4.7kk", numReason("4.7kk") + "; width must be between 220n and 1m (m)", "w", "10e-6"},
		{"unit letters", "rd=10kOhm", "rd", "10kOhm", numReason("10kOhm"), "rd", "10e3"},
		{"empty value", "rd=", "rd", "", numReason(""), "rd", "10e3"},
		{"Inf is not inf", "rl=Inf", "rl", "Inf", "load resistance must be between 1 and 1G (Ω), or inf", "rl", "inf"},
		{"out of range", "w=-3u", "w", "-3u", "width must be between 220n and 1m (m)", "w", "10e-6"},
		{"process limits", "proc=d65&l=60n", "l", "60n", "length must be between 65n and 10u (m)", "l", "0.2e-6"},
		{"temperature", "temp=200", "temp", "200", "temperature must be between -55 and 150 (°C)", "temp", "27"},
		{"wrong word", "stage=ce", "stage", "ce", "stage must be one of cs, cg, sf", "", ""},
		{"wrong bias", "bias=vgs", "bias", "vgs", "bias mode must be one of vin, id, gmid", "", ""},
		{"wrong process", "proc=d90", "proc", "d90", "process must be one of d180, d65", "l", "0.5e-6"},
		{"version", "v=3", "v", "3", "this build reads fragment versions 1 and 2", "", ""},
		{"diode for sf", "stage=sf&load=diode", "load", "diode", "a source follower cannot take a diode load", "", ""},
		{"sf needs rs", "stage=sf&rs=0", "rs", "0", "source resistor must be above 0 and at most 1G (Ω)", "rs", "5e3"},
		{"fmin = fmax", "fmin=1k&fmax=1k", "fmax", "1k", "sweep stop must be above fmin = 1k and at most 1e12 (Hz)", "fmax", "100e9"},
		{"fmin at the top", "fmin=1e12", "fmin", "1e12", "sweep start must be at least 1m and below 1e12 (Hz)", "fmin", "1"},
		{"nlo >= nhi", "nlo=1M&nhi=1k", "nhi", "1k", "noise band stop must be above nlo = 1M and at most fmax = 100G (Hz)", "nhi", "100e6"},
		{"nlo below fmin", "fmin=10&nlo=1", "nlo", "1", "noise band start must be at least fmin = 10 and below fmax = 100G (Hz)", "nlo", "10"},
		{"vin above vdd", "vdd=1&vin=1.2", "vin", "1.2", "input DC level must be between 0 and vdd = 1 (V)", "vin", "0.7"},
		{"vin above vdd, reversed", "vin=1.2&vdd=1", "vin", "1.2", "between 0 and vdd = 1 (V)", "vin", "0.7"},
		{"vg above vdd", "vdd=1&vg=1.1", "vg", "1.1", "gate DC level must be between 0 and vdd = 1 (V)", "vg", "0.9"},
		{"ppd zero", "ppd=0", "ppd", "0", "points per decade must be a whole number between 1 and 200", "ppd", "40"},
		{"ppd fraction", "ppd=2.5", "ppd", "2.5", "whole number", "ppd", "40"},
		{"bad key escape", "%zz=1", "%zz", "1", `the key has a bad percent escape (invalid escape "%zz")`, "", ""},
		{"bad value escape", "w=%zz", "w", "%zz", "the value has a bad percent escape", "w", "10e-6"},
		{"unknown key, bad value", "zzzzzz=%zz", "zzzzzz", "%zz", "unknown key", "", ""},
		{"long value", "w=" + strings.Repeat("1", 65), "w", strings.Repeat("1", 65), "at most 64", "w", "10e-6"},
		{"override range", "n.tox=0.1n", "n.tox", "0.1n", "oxide thickness must be between 500p and 100n (m)", "", ""},
		{"override zero-or-range", "n.ecrit=1k", "n.ecrit", "1k", "critical field must be 0 (off) or between 100k and 10G (V/m)", "", ""},
		{"phi without doping", "n.phi=0", "n.phi", "0", "n.doping must be given too", "", ""},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			d, err := Decode(tt.fragment)
			var fe *FragmentError
			if !errors.As(err, &fe) {
				t.Fatalf("Decode(%q) error = %v, want a *FragmentError", tt.fragment, err)
			}
			if len(fe.Problems) != 1 {
				t.Fatalf("Decode(%q) problems = %q, want exactly one", tt.fragment, fe.Problems)
			}
			p := fe.Problems[0]
			if p.Key != tt.key || p.Value != tt.value || !strings.Contains(p.Message, tt.message) {
				t.Errorf("Decode(%q) problem = {%q %q %q}, want key %q value %q and a message containing %q",
					tt.fragment, p.Key, p.Value, p.Message, tt.key, tt.value, tt.message)
			}
			if strings.HasPrefix(p.Message, tt.key+"=") && tt.key != "" {
				t.Errorf("message %q repeats the key prefix", p.Message)
			}
			if err := d.Validate(); err != nil {
				t.Errorf("Decode(%q) result fails Validate: %v", tt.fragment, err)
			}
			if tt.after != "" {
				want := math.Inf(1)
				if tt.want != "inf" {
					want = refFloat(t, tt.want)
				}
				if got := keyValue(d, tt.after); !sameFloat(got, want) {
					t.Errorf("Decode(%q) %s = %g, want %g", tt.fragment, tt.after, got, want)
				}
			}
		})
	}
}

func TestDecodeWordFallbacks(t *testing.T) {
	// A bad word falls back to the default, and keys after it see the default.
	d, _ := Decode("stage=sf&load=diode")
	if d.Stage != SourceFollower || d.Load != LoadResistor || d.RS != 5e3 {
		t.Errorf("sf with diode: stage %q load %q rs %g, want sf, r and the sf default rs 5k", d.Stage, d.Load, d.RS)
	}
	d, _ = Decode("proc=d90&l=65n")
	if d.Process != "d180" {
		t.Errorf("unknown process: Process = %q, want d180", d.Process)
	}
	if d.L != 0.5e-6 {
		t.Errorf("l=65n under d180 limits: L = %g, want the default 0.5u", d.L)
	}
}

func TestDecodeListsEveryProblem(t *testing.T) {
	f := "w=-3u&stage=xx&rsg=1&ppd=0&w=1u&n.vt0=9&vin=5"
	_, err := Decode(f)
	var fe *FragmentError
	if !errors.As(err, &fe) {
		t.Fatalf("Decode: error %v, want *FragmentError", err)
	}
	var keys []string
	for _, p := range fe.Problems {
		keys = append(keys, p.Key)
	}
	want := []string{"w", "stage", "rsg", "ppd", "w", "n.vt0", "vin"} // fragment order
	if !slices.Equal(keys, want) {
		t.Errorf("problem keys = %q, want %q", keys, want)
	}
	if msg := err.Error(); strings.Count(msg, "; ") != len(want)-1 || !strings.HasPrefix(msg, "w=-3u: width must be") {
		t.Errorf("Error() = %q, want the problems joined by \"; \"", msg)
	}
	if p, ok := fe.Problem("stage"); !ok || p.Value != "xx" {
		t.Errorf("Problem(stage) = %v %v", p, ok)
	}
}

// TestDecodeOneProblemPerPair: a pair is reported once, for the first thing
// wrong with it, so a repeated bad value does not bury the rest.
func TestDecodeOneProblemPerPair(t *testing.T) {
	_, err := Decode("n.vt0=%zz&n.vt0=%zz&w=%zz&w=1u&zz=" + strings.Repeat("x", 80))
	var fe *FragmentError
	if !errors.As(err, &fe) {
		t.Fatalf("error %v, want *FragmentError", err)
	}
	want := []string{"bad percent escape", "repeated key", "bad percent escape", "repeated key", "unknown key"}
	if len(fe.Problems) != len(want) {
		t.Fatalf("problems %q, want %d", fe.Problems, len(want))
	}
	for i, p := range fe.Problems {
		if !strings.Contains(p.Message, want[i]) {
			t.Errorf("problem %d = %q, want %q", i, p, want[i])
		}
	}
}

func TestDecodeLongFragment(t *testing.T) {
	f := "w=20u&" + strings.Repeat("x", MaxFragmentBytes)
	d, err := Decode(f)
	var fe *FragmentError
	if !errors.As(err, &fe) || len(fe.Problems) != 1 || !strings.Contains(fe.Problems[0].Message, "at most 4096") {
		t.Fatalf("Decode(long) error = %v, want one problem naming the 4096-byte limit", err)
	}
	if !reflect.DeepEqual(d, Default("")) {
		t.Errorf("Decode(long) = %+v, want the defaults", d)
	}
	if _, err := Decode(strings.Repeat("&", MaxFragmentBytes)); err != nil {
		t.Errorf("a fragment of exactly %d bytes is read: %v", MaxFragmentBytes, err)
	}
}

func TestDecodeOrderDoesNotMatter(t *testing.T) {
	pairs := []string{"proc=d65", "l=70n", "vdd=1", "vin=0.9", "stage=sf", "load=r", "rs=5k",
		"fmin=10", "fmax=1G", "nlo=20", "nhi=1M", "n.vt0=0.4", "p.vt0=0.3", "ll=100n", "bias=vin"}
	want, err := Decode(strings.Join(pairs, "&"))
	if err != nil {
		t.Fatal(err)
	}
	rng := rand.New(rand.NewPCG(1, 2))
	for range 200 {
		rng.Shuffle(len(pairs), func(i, j int) { pairs[i], pairs[j] = pairs[j], pairs[i] })
		f := strings.Join(pairs, "&")
		got, err := Decode(f)
		if err != nil || !reflect.DeepEqual(got, want) {
			t.Fatalf("Decode(%q) = %+v, %v; want %+v as for any other order", f, got, err, want)
		}
	}
}

func TestEncode(t *testing.T) {
	// The canonical form of the defaults: the documented key order, every
	// key relevant to cs / r / id written.
	want := "v=2&stage=cs&pol=n&proc=d180&vdd=1.8&temp=27&w=10u&l=500n&bias=id&id=100u&load=r&rd=10k&rs=0" +
		"&rsig=1k&rl=inf&cl=100f&fmin=1&fmax=100G&ppd=40&nlo=1&nhi=100M"
	if got := Default("").Encode(); got != want {
		t.Errorf("Default.Encode() =\n %s\nwant\n %s", got, want)
	}
	tests := []struct {
		fragment    string
		has, hasNot []string
	}{
		{"bias=gmid", []string{"&gmid=10&", "&id=100u&"}, []string{"&w=", "&vin="}},
		{"bias=vin", []string{"&vin=700m&", "&w=10u&"}, []string{"&id=", "&gmid="}},
		{"stage=cg", []string{"&vg=1.1&", "&rd=10k&"}, []string{"&rs="}},
		{"load=active&bias=vin", []string{"&lw=10u&", "&ll=1u&", "&vbl=700m&"}, []string{"&rd=", "&vout="}},
		{"load=diode", []string{"&lw=10u&", "&ll=1u&"}, []string{"&rd=", "&vbl=", "&vout="}},
		{"stage=sf", []string{"&rs=5k&"}, []string{"&rd="}},
		{"stage=sf&load=active", []string{"&lw="}, []string{"&rs=", "&rd="}},
		// An irrelevant key is written when it is not at its default.
		{"load=active&rd=22k", []string{"&rd=22k&"}, nil},
		{"stage=cg&rs=47", []string{"&rs=47&"}, nil},
		{"n.vt0=0.5&p.kf=1e-26", []string{"&n.thresh=500m&p.flicker=1e-26&"}, nil}, // old names written by the new
		{"n.thresh@1u=0.5&n.thresh=0.4&n.lenmod@180n=40n", []string{"&n.lenmod@180n=40n&n.thresh=400m&n.thresh@1u=500m&"}, nil},
	}
	for _, tt := range tests {
		d, err := Decode(tt.fragment)
		if err != nil {
			t.Fatal(err)
		}
		got := d.Encode() + "&"
		for _, s := range tt.has {
			if !strings.Contains(got, s) {
				t.Errorf("Encode(%q) = %q, want it to contain %q", tt.fragment, got, s)
			}
		}
		for _, s := range tt.hasNot {
			if strings.Contains(got, s) {
				t.Errorf("Encode(%q) = %q, want no %q", tt.fragment, got, s)
			}
		}
	}
	// Overrides out of order are written sorted.
	d := Default("")
	d.Overrides = []Override{{Key: "p.thresh", Value: 0.3}, {Key: "n.thresh", L: 500e-9, Value: 0.42}, {Key: "n.thresh", Value: 0.4}}
	if got := d.Encode(); !strings.HasSuffix(got, "&n.thresh=400m&n.thresh@500n=420m&p.thresh=300m") {
		t.Errorf("Encode with unsorted overrides = %q, want them sorted by key, then length", got)
	}
	if d.Overrides[0].Key != "p.thresh" {
		t.Errorf("Encode reordered the caller's overrides")
	}
}

// TestEncodeFixedPoint: whatever the fragment, encoding what Decode made of
// it gives a fragment that decodes without problems to the same design.
func TestEncodeFixedPoint(t *testing.T) {
	for _, f := range []string{
		"", "#", "w=-3u&W=3&stage=sf&load=diode&rs=0&fmin=1G&fmax=1M&ppd=3.5&v=2",
		"vdd=0.3&stage=cg&bias=vin", "fmin=500G", "fmin=999G&nlo=1", "proc=d65&n.phi=0&p.phi=0&p.nsub=1e22",
		"load=active&bias=gmid&gmid=40&id=1n&vout=1.8&rl=1&cl=0",
	} {
		d, _ := Decode(f)
		e1 := d.Encode()
		d2, err := Decode(e1)
		if err != nil {
			t.Errorf("Decode(Encode(Decode(%q))) = %v", f, err)
		}
		if !reflect.DeepEqual(d, d2) {
			t.Errorf("Decode(%q) then a round trip: %+v != %+v", f, d, d2)
		}
		if e2 := d2.Encode(); e2 != e1 {
			t.Errorf("Encode not a fixed point for %q:\n %s\n %s", f, e1, e2)
		}
	}
}

func TestValidate(t *testing.T) {
	tests := []struct {
		name    string
		mutate  func(d *Design)
		key     string
		value   string
		message string
	}{
		{"NaN width", func(d *Design) { d.W = math.NaN() }, "w", "NaN", "width must be between 220n and 1m (m)"},
		{"infinite rd", func(d *Design) { d.RD = math.Inf(1) }, "rd", "+Inf", "drain resistor must be between 1 and 1G"},
		{"negative infinite rl", func(d *Design) { d.RL = math.Inf(-1) }, "rl", "-Inf", "or inf"},
		{"vin above vdd", func(d *Design) { d.Vin = 2 }, "vin", "2", "between 0 and vdd = 1.8 (V)"},
		{"stage", func(d *Design) { d.Stage = "xx" }, "stage", "xx", "stage must be one of cs, cg, sf"},
		{"zero value stage", func(d *Design) { d.Stage = "" }, "stage", "", "stage must be one of"},
		{"version", func(d *Design) { d.Version = 3 }, "v", "3", "this build reads fragment versions 1 and 2"},
		{"process", func(d *Design) { d.Process = "x" }, "proc", "x", "process must be one of d180, d65"},
		{"ppd", func(d *Design) { d.PPD = 0 }, "ppd", "0", "whole number between 1 and 200"},
		{"diode for sf", func(d *Design) { d.Stage, d.Load = SourceFollower, LoadDiode }, "load", "diode", "source follower"},
		{"sf rs", func(d *Design) { d.Stage, d.RS = SourceFollower, 0 }, "rs", "0", "above 0"},
		{"unknown override", func(d *Design) { d.Overrides = []Override{{Key: "n.thres", Value: 0.4}} }, "n.thres", "400m", `did you mean "n.thresh"?`},
		{"old name", func(d *Design) { d.Overrides = []Override{{Key: "n.vt0", Value: 0.4}} }, "n.vt0", "400m", "by its current name, n.thresh"},
		{"bin length", func(d *Design) { d.Overrides = []Override{{Key: "n.thresh", L: 50e-9, Value: 0.4}} }, "n.thresh@50n", "400m", "outside d180's channel lengths 180n … 20u m"},
		{"override range", func(d *Design) { d.Overrides = []Override{{Key: "p.mobility", Value: 1}} }, "p.mobility", "1", "low-field mobility must be between 100u and 200m"},
		{"override NaN", func(d *Design) { d.Overrides = []Override{{Key: "p.mobility", Value: math.NaN()}} }, "p.mobility", "NaN", "between"},
		{"overrides unsorted", func(d *Design) {
			d.Overrides = []Override{{Key: "p.mobility", Value: 0.01}, {Key: "n.mobility", Value: 0.01}}
		}, "n.mobility", "10m", "sorted by key"},
		{"override twice", func(d *Design) {
			d.Overrides = []Override{{Key: "n.mobility", Value: 0.01}, {Key: "n.mobility", Value: 0.02}}
		}, "n.mobility", "20m", "each once"},
		{"phi without doping", func(d *Design) { d.Overrides = []Override{{Key: "p.surface", Value: 0}} }, "p.surface", "0", "p.doping must be given"},
	}
	for _, tt := range tests {
		d := Default("")
		tt.mutate(&d)
		err := d.Validate()
		var fe *FragmentError
		if !errors.As(err, &fe) || len(fe.Problems) != 1 {
			t.Errorf("%s: Validate() = %v, want one problem", tt.name, err)
			continue
		}
		if p := fe.Problems[0]; p.Key != tt.key || p.Value != tt.value || !strings.Contains(p.Message, tt.message) {
			t.Errorf("%s: problem {%q %q %q}, want key %q value %q message containing %q",
				tt.name, p.Key, p.Value, p.Message, tt.key, tt.value, tt.message)
		}
	}
	var zero Design
	if err := zero.Validate(); err == nil {
		t.Error("the zero Design passes Validate")
	}
}

// TestSweepPoints checks the point count against counts worked by hand
// from ppd·decades + 1.
func TestSweepPoints(t *testing.T) {
	tests := []struct {
		fmin, fmax float64
		ppd        int
		want       int
	}{
		{1, 100e9, 40, 441},     // 11 decades × 40 + 1
		{1e-3, 1e12, 200, 3001}, // 15 decades × 200 + 1, the most the ranges allow
		{1, 10, 1, 2},
		{1, 2, 10, 5}, // ceil(10·0.30103) + 1
		{10, 10, 40, 1},
		{10, 1, 40, 1},
		{0, 1, 40, 1},
	}
	for _, tt := range tests {
		d := Design{FMin: tt.fmin, FMax: tt.fmax, PPD: tt.ppd}
		if got := d.SweepPoints(); got != tt.want {
			t.Errorf("SweepPoints(%g, %g, %d) = %d, want %d", tt.fmin, tt.fmax, tt.ppd, got, tt.want)
		}
	}
	// Within the accepted ranges the 10,000-point limit cannot be reached
	// (see above); its check still fires for a count beyond it.
	ppd := &keyTable[keyIndex["ppd"]]
	d := Design{FMin: 1e-3, FMax: 1e12}
	if msg := ppd.extra(&d, 1000); !strings.Contains(msg, "15001 points; at most 10000") {
		t.Errorf("points check for ppd=1000 over 15 decades = %q", msg)
	}
	if msg := ppd.extra(&d, 200); msg != "" {
		t.Errorf("points check for ppd=200 = %q, want none", msg)
	}
}

func TestSchema(t *testing.T) {
	groups := []string{GroupDevice, GroupBias, GroupLoad, GroupSourceAndLoad, GroupProcess, GroupSweep,
		GroupAids, GroupTargets, GroupSizing}
	for _, proc := range device.BuiltinNames() {
		schema := Schema(proc)
		var keys []string
		for _, k := range schema {
			keys = append(keys, k.Key)
		}
		var want []string
		for i := range keyTable {
			want = append(want, keyTable[i].name)
		}
		want = append(want, overrideKeys...)
		if !slices.Equal(keys, want) {
			t.Fatalf("Schema(%q) keys = %q, want %q", proc, keys, want)
		}
		if len(overrideKeys) != 2*(len(device.ParamTable)+4) {
			t.Errorf("%d override keys, want %d parameters and 4 spread figures × 2 polarities", len(overrideKeys), len(device.ParamTable))
		}
		d := Default(proc)
		pr, _ := device.Builtin(proc)
		for _, k := range schema {
			if !slices.Contains(groups, k.Group) || k.Label == "" || k.Doc == "" || strings.Contains(k.Doc, "\n") {
				t.Errorf("%s: group %q label %q doc %q", k.Key, k.Group, k.Label, k.Doc)
			}
			if k.Text && k.Accepts == "" {
				t.Errorf("%s: a text key without Accepts", k.Key)
			}
			if len(k.Choices) > 0 && k.DefaultWord != "" && k.Separator == "" && !slices.Contains(k.Choices, k.DefaultWord) {
				t.Errorf("%s: default %q not among %q", k.Key, k.DefaultWord, k.Choices)
			}
			if k.DefaultWord == "" && !k.Text && !(k.Default >= k.Min && k.Default <= k.Max || k.Default == 0 && k.ZeroMeans != "") {
				t.Errorf("%s: default %g outside %g … %g", k.Key, k.Default, k.Min, k.Max)
			}
			if k.DefaultWord == "" && !k.Text {
				if got := keyValue(d, k.Key); !math.IsNaN(got) && got != k.Default {
					t.Errorf("%s: schema default %g, Default(%q) holds %g", k.Key, k.Default, proc, got)
				}
			}
		}
		// The geometry limits come from the process (device package).
		w := schema[keyIndex["w"]]
		if w.Min != pr.WMin || w.Max != pr.WMax || !w.Log || w.Unit != "m" {
			t.Errorf("w schema = %+v, want %g … %g m, log", w, pr.WMin, pr.WMax)
		}
		// Overrides default to the process's own values.
		vt0 := schema[numKeys+slices.Index(overrideKeys, "p.thresh")]
		if vt0.Default != pr.P.VT0 {
			t.Errorf("p.vt0 default = %g, want the process value %g", vt0.Default, pr.P.VT0)
		}
		rs := schema[keyIndex["rs"]]
		if rs.StageDefaults["sf"] != defaultsOf(&pr).RSF || !slices.Equal(rs.Stages, []string{"cs", "sf"}) || len(rs.Loads) != 0 || len(rs.When) != 2 {
			t.Errorf("rs schema = %+v, want the process's sf default, stages cs sf, any load, two conditions", rs)
		}
		vin := schema[keyIndex["vin"]]
		if vin.MaxFrom != "vdd" || vin.Max != d.VDD {
			t.Errorf("vin schema max = %g from %q, want vdd %g", vin.Max, vin.MaxFrom, d.VDD)
		}

		// JSON: marshals (no infinities) with snake_case names.
		b, err := json.Marshal(schema)
		if err != nil {
			t.Fatalf("json.Marshal(Schema(%q)): %v", proc, err)
		}
		var back []map[string]any
		if err := json.Unmarshal(b, &back); err != nil {
			t.Fatal(err)
		}
		for _, m := range back {
			for name := range m {
				if name != strings.ToLower(name) || strings.ContainsAny(name, " -") {
					t.Errorf("JSON name %q is not snake_case", name)
				}
			}
		}
		if rl := back[keyIndex["rl"]]; rl["default_word"] != "inf" {
			t.Errorf("rl JSON = %v, want default_word inf", rl)
		}
	}
}

func TestKeyTableMarkdown(t *testing.T) {
	md := KeyTableMarkdown()
	lines := strings.Split(strings.TrimSuffix(md, "\n"), "\n")
	if lines[0] != "| key | meaning | default (d180) | accepted |" {
		t.Errorf("header = %q", lines[0])
	}
	schema := Schema("d180")
	if len(lines) != len(schema)+2 {
		t.Errorf("%d lines, want a header, a rule and %d rows", len(lines), len(schema))
	}
	for _, k := range schema {
		if !strings.Contains(md, "| `"+k.Key+"` |") {
			t.Errorf("the key table does not mention %q", k.Key)
		}
	}
	for _, line := range lines {
		// Five unescaped bars make four cells.
		if n := strings.Count(line, "|") - strings.Count(line, `\|`); n != 5 {
			t.Errorf("row %q has %d cell bars, want 5", line, n)
		}
	}
	for _, s := range []string{"220n … 1m m", "0 … vdd V", "cs, cg, sf", "0 (sf: 5k)", "1 … 1G Ω, or inf"} {
		if !strings.Contains(md, s) {
			t.Errorf("the key table lacks %q", s)
		}
	}
}

// TestOverrideRanges checks the override ranges against the device package:
// the built-in processes' own values are accepted, and every bound of every
// range passes device.Params.Validate, so a decoded design never carries a
// parameter set the model rejects.
func TestOverrideRanges(t *testing.T) {
	for _, name := range device.BuiltinNames() {
		pr, _ := device.Builtin(name)
		for _, key := range overrideKeys {
			f, ref, _ := lookupOverride(key)
			params, pol := pr.N, device.NMOS
			if ref.pol == 'p' {
				params, pol = pr.P, device.PMOS
			}
			if f.spread != nil { // a spread figure: the process's own is accepted
				sp := pr.Spread(pol)
				frag := "proc=" + name + "&" + key + "=" + units.Exact(*f.spread(&sp))
				if _, err := Decode(frag); err != nil {
					t.Errorf("%s: the process's own spread is rejected: %v", frag, err)
				}
				continue
			}
			v := *f.field(&params)
			frag := "proc=" + name + "&" + key + "=" + units.Exact(v)
			if _, err := Decode(frag); err != nil {
				t.Errorf("%s: the process's own value is rejected: %v", frag, err)
			}
			bounds := []float64{f.lo, f.hi}
			if f.zeroMeans != "" {
				bounds = append(bounds, 0)
			}
			for _, b := range bounds {
				p := params
				*f.field(&p) = b
				if f.name == "surface" && b == 0 {
					p.NSub = 1e23 // the doping rule, checked separately
				}
				if err := p.Validate(); err != nil {
					t.Errorf("%s=%g inside the fragment range but device rejects it: %v", key, b, err)
				}
			}
		}
	}
}

// TestEditDistance checks the Levenshtein distance against the usual
// textbook pairs (common practice: kitten → sitting is 3).
func TestEditDistance(t *testing.T) {
	tests := []struct {
		a, b  string
		limit int
		want  int
	}{
		{"kitten", "sitting", 10, 3},
		{"flaw", "lawn", 10, 2},
		{"", "abc", 10, 3},
		{"same", "same", 10, 0},
		{"kitten", "sitting", 3, 3},                              // at the limit: reported as the limit
		{"a", "abcdef", 3, 3},                                    // too different in length
		{strings.Repeat("a", 20), strings.Repeat("a", 20), 3, 3}, // too long to bother
	}
	for _, tt := range tests {
		if got := editDistance(tt.a, tt.b, tt.limit); got != tt.want {
			t.Errorf("editDistance(%q, %q, %d) = %d, want %d", tt.a, tt.b, tt.limit, got, tt.want)
		}
	}
}

func TestProblemString(t *testing.T) {
	tests := []struct {
		p    Problem
		want string
	}{
		{Problem{"w", "-3u", "width must be between 220n and 1m (m)"}, "w=-3u: width must be between 220n and 1m (m)"},
		{Problem{"w", "", "missing '='"}, "w: missing '='"},
		{Problem{"", "5", "empty key"}, "=5: empty key"},
		{Problem{"", "", "too long"}, "too long"},
	}
	for _, tt := range tests {
		if got := tt.p.String(); got != tt.want {
			t.Errorf("String() = %q, want %q", got, tt.want)
		}
	}
}

// TestRoundTripRandomDesigns draws 10,000 valid designs across every range,
// for every built-in process, from a generator written from the task's key
// table (not from keyTable), and checks Validate accepts each, Decode(Encode)
// gives it back exactly and Encode is then a fixed point.
func TestRoundTripRandomDesigns(t *testing.T) {
	rng := rand.New(rand.NewPCG(20240601, 7))
	for i := range 10000 {
		d := randomDesign(rng)
		if err := d.Validate(); err != nil {
			t.Fatalf("design %d: generated design fails Validate: %v\n%+v", i, err, d)
		}
		f := d.Encode()
		if i%2 == 1 {
			f = "#" + f
		}
		got, err := Decode(f)
		if err != nil {
			t.Fatalf("design %d: Decode(%q): %v", i, f, err)
		}
		if !reflect.DeepEqual(got, d) {
			t.Fatalf("design %d: Decode(Encode(d)) differs:\n got %+v\nwant %+v\nfragment %s", i, got, d, f)
		}
		if again := got.Encode(); again != strings.TrimPrefix(f, "#") {
			t.Fatalf("design %d: Encode not a fixed point:\n %s\n %s", i, f, again)
		}
	}
}

// randomDesign draws a valid design. Each number is log- or linear-uniform
// over its range, and now and then exactly a closed bound.
func randomDesign(rng *rand.Rand) Design {
	pick := func(words ...string) string { return words[rng.IntN(len(words))] }
	num := func(lo, hi float64, log bool) float64 {
		switch rng.IntN(12) {
		case 0:
			return lo
		case 1:
			return hi
		}
		if log {
			return math.Exp(math.Log(lo) + rng.Float64()*(math.Log(hi)-math.Log(lo)))
		}
		return lo + rng.Float64()*(hi-lo)
	}
	// inside draws from the open interval (lo, hi).
	inside := func(lo, hi float64) float64 {
		for {
			v := num(lo, hi, true)
			if v > lo && v < hi {
				return v
			}
		}
	}
	names := device.BuiltinNames()
	proc := names[rng.IntN(len(names))]
	pr, _ := device.Builtin(proc)
	d := Design{
		Version: 1,
		Stage:   Stage(pick("cs", "cg", "sf")),
		Pol:     pick("n", "p"),
		Process: proc,
		VDD:     num(0.2, 5, false),
		Temp:    num(-55, 150, false),
		W:       num(pr.WMin, pr.WMax, true),
		L:       num(pr.LMin, pr.LMax, true),
		Bias:    BiasMode(pick("vin", "id", "gmid")),
		ID:      num(1e-9, 10e-3, true),
		GmID:    num(1, 40, false),
		RD:      num(1, 1e9, true),
		LoadW:   num(pr.WMin, pr.WMax, true),
		LoadL:   num(pr.LMin, pr.LMax, true),
		RSig:    num(1, 1e9, true),
		RL:      num(1, 1e9, true),
		CL:      num(1e-18, 1e-6, true),
		PPD:     1 + rng.IntN(200),
	}
	d.Vin, d.VG, d.VOut, d.LoadVB = num(0, d.VDD, false), num(0, d.VDD, false), num(0, d.VDD, false), num(0, d.VDD, false)
	if d.Stage == SourceFollower {
		d.Load = Load(pick("r", "active"))
	} else {
		d.Load = Load(pick("r", "active", "diode"))
	}
	d.RS = num(1e-3, 1e9, true)
	if rng.IntN(4) == 0 && !(d.Stage == SourceFollower && d.Load == LoadResistor) {
		d.RS = 0
	}
	switch rng.IntN(5) {
	case 0:
		d.RL = math.Inf(1)
	case 1:
		d.CL = 0
	}
	d.FMin = num(1e-3, 1e12, true)
	for d.FMin >= 1e12 {
		d.FMin = num(1e-3, 1e12, true)
	}
	d.FMax = inside(d.FMin, 1e12)
	if rng.IntN(8) == 0 {
		d.FMax = 1e12
	}
	d.NoiseLo = d.FMin
	if rng.IntN(3) > 0 {
		d.NoiseLo = inside(d.FMin, d.FMax)
	}
	d.NoiseHi = d.FMax
	if rng.IntN(3) > 0 {
		d.NoiseHi = inside(d.NoiseLo, d.FMax)
	}
	// Overrides: a random subset, values over the ranges the task asks for
	// (see the override table's doc; zero where zero has a meaning).
	type rng2 struct {
		lo, hi float64
		log    bool
		zero   bool
	}
	ranges := map[string]rng2{
		"vt0": {0, 2, false, false}, "u0": {1e-4, 0.2, true, false}, "tox": {0.5e-9, 100e-9, true, false},
		"gamma": {0, 3, false, false}, "phi": {0.2, 1.5, false, true}, "nsub": {1e20, 1e26, true, true},
		"nfix": {1, 3, false, true}, "clm": {0, 1e-6, false, false}, "theta": {0, 5, false, false},
		"ecrit": {1e5, 1e10, true, true}, "tcv": {-5e-3, 5e-3, false, false}, "bex": {-3, 0, false, false},
		"cgso": {0, 5e-9, false, false}, "cgdo": {0, 5e-9, false, false}, "cj": {0, 0.1, false, false},
		"cjsw": {0, 5e-9, false, false}, "mj": {0, 1, false, false}, "mjsw": {0, 1, false, false},
		"pb": {0.1, 2, false, false}, "ldiff": {0, 10e-6, false, false}, "kf": {0, 1e-20, false, false},
	}
	if rng.IntN(3) == 0 {
		for _, pol := range []string{"n", "p"} {
			for _, name := range []string{"bex", "cgdo", "cgso", "cj", "cjsw", "clm", "ecrit", "gamma", "kf", "ldiff",
				"mj", "mjsw", "nfix", "nsub", "pb", "phi", "tcv", "theta", "tox", "u0", "vt0"} {
				if rng.IntN(6) != 0 {
					continue
				}
				r := ranges[name]
				v := num(r.lo, r.hi, r.log)
				if r.zero && rng.IntN(3) == 0 && name != "phi" {
					v = 0
				}
				d.Overrides = append(d.Overrides, Override{Key: CanonicalKey(pol + "." + name), Value: v})
			}
			if rng.IntN(4) == 0 { // a length bin or two
				for range 1 + rng.IntN(2) {
					l := num(pr.LMin, pr.LMax, true)
					d.Overrides = append(d.Overrides,
						Override{Key: pol + ".thresh", L: l, Value: num(0, 2, false)},
						Override{Key: pol + ".dibl", L: l, Value: num(0, 1e-6, false)})
				}
			}
		}
		slices.SortFunc(d.Overrides, compareOverrides)
		d.Overrides = slices.CompactFunc(d.Overrides, func(a, b Override) bool { return a.Key == b.Key && a.L == b.L })
	}
	d.Aids = randomAids(rng, &pr, &d, num, inside)
	return d
}

// randomAids draws valid design-aid inputs for d over the ranges of the
// task (aids-common.md): corners, amp up to vdd, mc 0 … 10000, targets 0 or
// in range, any subset to vary, ranges inside the process limits, a sweep of
// any key within its range, and now and then a pinned design.
func randomAids(rng *rand.Rand, pr *device.Process, d *Design, num func(lo, hi float64, log bool) float64,
	inside func(lo, hi float64) float64) Aids {
	corners := []string{"tt", "ss", "ff", "sf", "fs"}
	a := Aids{
		Corner:    corners[rng.IntN(len(corners))],
		VDDTol:    num(0, 0.5, false),
		Hold:      []string{"mirror", "fixed", "ideal"}[rng.IntN(3)],
		Amp:       num(1e-6, d.VDD, true),
		MC:        rng.IntN(10001),
		Seed:      rng.IntN(1e9 + 1),
		Vary:      VarSet(rng.IntN(int(varAll) + 1)),
		Hard:      HardSet(rng.IntN(int(hardAll) + 1)),
		Objective: Objective(objectiveWords[rng.IntN(len(objectiveWords))]),
	}
	target := func(lo, hi float64) float64 {
		if rng.IntN(2) == 0 {
			return 0
		}
		return num(lo, hi, true)
	}
	a.Targets = Targets{
		Gain: target(1e-3, 1e6), F3dB: target(1e-3, 1e12), GBW: target(1e-3, 1e13), IDD: target(1e-12, 1),
		Power: target(1e-12, 10), Swing: target(1e-3, d.VDD), Noise: target(1e-12, 1), Margin: target(1e-3, d.VDD),
	}
	span := func(lo, hi float64) Range {
		l := num(lo, hi, true)
		for l >= hi {
			l = num(lo, hi, true)
		}
		h := inside(l, hi)
		if rng.IntN(6) == 0 {
			h = hi
		}
		return Range{l, h}
	}
	a.Ranges = Ranges{W: span(pr.WMin, pr.WMax), L: span(pr.LMin, pr.LMax), ID: span(1e-9, 10e-3),
		RD: span(1, 1e9), RS: span(1e-3, 1e9), LW: span(pr.WMin, pr.WMax), LL: span(pr.LMin, pr.LMax),
		VOut: span(1e-3*d.VDD, d.VDD)}
	a.Sweep.Key = sweepWords[rng.IntN(len(sweepWords))]
	lo, hi, log, _ := d.KeyRange(a.Sweep.Key)
	a.Sweep.Lo = num(lo, hi, log)
	for a.Sweep.Lo >= hi {
		a.Sweep.Lo = num(lo, hi, log)
	}
	a.Sweep.Hi = hi
	if rng.IntN(4) > 0 {
		for a.Sweep.Hi = num(a.Sweep.Lo, hi, false); a.Sweep.Hi <= a.Sweep.Lo; a.Sweep.Hi = num(a.Sweep.Lo, hi, false) {
		}
	}
	a.Sweep.N = 2 + rng.IntN(999)
	if rng.IntN(8) == 0 && d.Aids.Pin == nil {
		// A pinned design: a random design of its own, without a pin.
		var pin Design
		for pin = randomDesign(rng); pin.Aids.Pin != nil; pin = randomDesign(rng) {
		}
		a.Pin = &pin
	}
	return a
}

var sinkDesign Design

func BenchmarkDecode(b *testing.B) {
	f := "v=1&stage=cs&pol=n&proc=d180&vdd=1.8&temp=27&w=20u&l=500n&bias=id&id=100u&load=r&rd=10k&rs=0" +
		"&rsig=1k&rl=inf&cl=100f&fmin=1&fmax=100G&ppd=40&nlo=1&nhi=100M&n.vt0=450m"
	b.ReportAllocs()
	for b.Loop() {
		d, err := Decode(f)
		if err != nil {
			b.Fatal(err)
		}
		sinkDesign = d
	}
}

var sinkString string

func BenchmarkEncode(b *testing.B) {
	d, err := Decode("w=20u&n.vt0=450m")
	if err != nil {
		b.Fatal(err)
	}
	b.ReportAllocs()
	for b.Loop() {
		sinkString = d.Encode()
	}
}

var sinkErr error

func BenchmarkValidate(b *testing.B) {
	d := Default("")
	b.ReportAllocs()
	for b.Loop() {
		sinkErr = d.Validate()
	}
}

// TestAidKeys checks the design-aid keys (aids-common.md): their defaults,
// good and bad values, the canonical form of vary, that they are written
// only when they differ from their defaults, and the pinned design.
func TestAidKeys(t *testing.T) {
	d := Default("")
	want := Aids{Corner: "tt", VDDTol: 0.1, Hold: "mirror", Amp: 10e-3, MC: 1000, Seed: 1, Vary: VarW | VarL | VarID | VarRD,
		Ranges: Ranges{W: Range{1e-6, 200e-6}, L: Range{180e-9, 3.6e-6}, ID: Range{1e-6, 1e-3},
			RD: Range{100, 1e6}, RS: Range{10, 100e3}, LW: Range{1e-6, 200e-6}, LL: Range{180e-9, 3.6e-6},
			VOut: Range{0.18, 1.62}},
		Objective: ObjNone,
		Sweep:     SweepSpec{Key: "w", Lo: 220e-9, Hi: 1e-3, N: 50}}
	if !reflect.DeepEqual(d.Aids, want) {
		t.Errorf("default aids = %+v\nwant %+v", d.Aids, want)
	}
	good := []struct {
		fragment string
		check    func(a Aids) bool
		encoded  string // what Encode writes for it
	}{
		{"corner=sf", func(a Aids) bool { return a.Corner == "sf" }, "corner=sf"},
		{"amp=50m&mc=0&seed=7", func(a Aids) bool { return a.Amp == 50e-3 && a.MC == 0 && a.Seed == 7 }, "amp=50m&mc=0&seed=7"},
		{"t.gain=20&t.f3db=50M&t.idd=200u", func(a Aids) bool {
			return a.Targets.Gain == 20 && a.Targets.F3dB == 50e6 && a.Targets.IDD == 200e-6
		}, "t.gain=20&t.f3db=50M&t.idd=200u"},
		{"vary=id.w", func(a Aids) bool { return a.Vary == VarW|VarID }, "vary=w.id"},
		{"vary=none", func(a Aids) bool { return a.Vary == 0 }, "vary=none"},
		{"vary=vout.lw.w.ll", func(a Aids) bool { return a.Vary == VarW|VarLW|VarLL|VarVOut }, "vary=w.lw.ll.vout"},
		{"hard=power.idd&obj=area", func(a Aids) bool { return a.Hard == HardIDD|HardPower && a.Objective == ObjArea }, "hard=idd.power&obj=area"},
		{"load=active&lo.lw=2u&hi.ll=5u&lo.vout=0.5&hi.vout=1.2", func(a Aids) bool {
			return a.Ranges.LW == Range{2e-6, 200e-6} && a.Ranges.LL == Range{180e-9, 5e-6} && a.Ranges.VOut == Range{0.5, 1.2}
		}, "lo.lw=2u&hi.ll=5u&lo.vout=500m&hi.vout=1.2"},
		{"lo.w=2u&hi.w=50u", func(a Aids) bool { return a.Ranges.W == Range{2e-6, 50e-6} }, "lo.w=2u&hi.w=50u"},
		// hi.w's default follows lo.w when lo.w is above it.
		{"lo.w=300u", func(a Aids) bool { return a.Ranges.W == Range{300e-6, 1e-3} }, "lo.w=300u"},
		{"sw=vin&sw.n=11", func(a Aids) bool { return a.Sweep == SweepSpec{"vin", 0, 1.8, 11} }, "sw=vin&sw.n=11"},
		{"sw=n.vt0&sw.lo=0.3&sw.hi=0.6", func(a Aids) bool { return a.Sweep == SweepSpec{"n.thresh", 0.3, 0.6, 50} }, "sw=n.thresh&sw.lo=300m&sw.hi=600m"},
	}
	for _, g := range good {
		d, err := Decode(g.fragment)
		if err != nil {
			t.Errorf("Decode(%q): %v", g.fragment, err)
			continue
		}
		if !g.check(d.Aids) {
			t.Errorf("Decode(%q).Aids = %+v", g.fragment, d.Aids)
		}
		if e := d.Encode(); !strings.Contains(e+"&", "&"+g.encoded+"&") {
			t.Errorf("Encode(%q) = %s, want it to contain %s", g.fragment, e, g.encoded)
		}
	}
	bad := []struct{ fragment, key, says string }{
		{"corner=st", "corner", "tt, ss, ff, sf, fs"},
		{"mc=10001", "mc", "between 0 and 10k"},
		{"mc=1.5", "mc", "whole number"},
		{"amp=2&vdd=1.2", "amp", "vdd = 1.2"},
		{"t.gain=-1", "t.gain", "0 (no target)"},
		{"vary=w.x", "vary", `"x" is not one`},
		{"vary=w.w", "vary", "given twice"},
		{"vary=", "vary", `"" is not one`},
		{"hard=gain", "hard", `"gain" is not one`},
		{"hard=idd.idd", "hard", "given twice"},
		{"obj=speed", "obj", "none, power, area, noise"},
		{"load=active&lo.vout=1&hi.vout=0.9", "hi.vout", "above lo.vout"},
		{"load=active&hi.vout=2", "hi.vout", "vdd = 1.8"},
		{"lo.w=1u&hi.w=1u", "hi.w", "above lo.w"},
		{"lo.rs=0", "lo.rs", "above 0"},
		{"sw=fmax", "sw", "swept key must be one of"},
		{"sw=w&sw.lo=1m", "sw.lo", "below 1m"},
		{"pin=" + escapeValue("w=1u&pin=x"), "pin", "cannot pin another"},
		{"pin=" + escapeValue("w=-1"), "pin", "pinned design: w=-1"},
	}
	for _, b := range bad {
		d, err := Decode(b.fragment)
		var fe *FragmentError
		if !errors.As(err, &fe) {
			t.Errorf("Decode(%q) = %v, want a FragmentError", b.fragment, err)
			continue
		}
		p, ok := fe.Problem(b.key)
		if !ok || !strings.Contains(p.Message, b.says) {
			t.Errorf("Decode(%q): problem %+v, want one about %s saying %q (all: %v)", b.fragment, p, b.key, b.says, err)
		}
		if verr := d.Validate(); verr != nil {
			t.Errorf("Decode(%q) returned a design failing Validate: %v", b.fragment, verr)
		}
	}

	// A pinned design: decoded, written back percent-encoded, and equal
	// after a round trip; its value may be longer than MaxValueChars.
	inner := "v=1&stage=cg&pol=p&proc=d65&w=37u&rd=4.7k&t.gain=3"
	d, err := Decode("w=20u&pin=" + escapeValue(inner))
	if err != nil {
		t.Fatal(err)
	}
	pin, _ := Decode(inner)
	if d.Aids.Pin == nil || !reflect.DeepEqual(*d.Aids.Pin, pin) {
		t.Fatalf("pin = %+v, want %+v", d.Aids.Pin, pin)
	}
	e := d.Encode()
	if !strings.Contains(e, "&pin=v%3D1%26stage%3Dcg%26pol%3Dp%26proc%3Dd65") {
		t.Errorf("Encode with a pin = %s", e)
	}
	if d2, err := Decode(e); err != nil || !reflect.DeepEqual(d2, d) {
		t.Errorf("pin round trip: %v\n%+v\n%+v", err, d2, d)
	}
	// Validate catches a pin with a pin of its own.
	bad2 := d
	p2 := pin
	p2.Aids.Pin = &pin
	bad2.Aids.Pin = &p2
	if err := bad2.Validate(); err == nil || !strings.Contains(err.Error(), "cannot pin another") {
		t.Errorf("Validate of a pin with a pin = %v", err)
	}
}

// TestCornerInProcess checks that corner takes effect in ProcessOf: at ss
// both thresholds rise by CornerSigmas·SigmaVT and the mobilities fall by
// the factor 1 − CornerSigmas·SigmaMu (the rule device.Corner documents),
// and overrides are applied before the corner.
func TestCornerInProcess(t *testing.T) {
	tt, err := mustDecode(t, "n.vt0=0.5").ProcessOf()
	if err != nil {
		t.Fatal(err)
	}
	ss, err := mustDecode(t, "n.vt0=0.5&corner=ss").ProcessOf()
	if err != nil {
		t.Fatal(err)
	}
	sn, sp := tt.Spread(device.NMOS), tt.Spread(device.PMOS)
	// 1e-12: one addition and one multiplication of values near 1.
	if got, want := ss.N.VT0, 0.5+device.CornerSigmas*sn.SigmaVT; math.Abs(got-want) > 1e-12 {
		t.Errorf("ss NMOS VT0 = %g, want %g", got, want)
	}
	if got, want := ss.P.VT0, tt.P.VT0+device.CornerSigmas*sp.SigmaVT; math.Abs(got-want) > 1e-12 {
		t.Errorf("ss PMOS VT0 = %g, want %g", got, want)
	}
	if got, want := ss.N.U0, tt.N.U0*(1-device.CornerSigmas*sn.SigmaMu); math.Abs(got-want) > 1e-12*want {
		t.Errorf("ss NMOS U0 = %g, want %g", got, want)
	}
	var e Evaluator
	fast, slow := e.Evaluate(mustDecode(t, "bias=vin&corner=ff")), e.Evaluate(mustDecode(t, "bias=vin&corner=ss"))
	if !(fast.OK && slow.OK && fast.OP.ID > slow.OP.ID) {
		t.Errorf("at a fixed input level the ff drain current %v should exceed the ss one %v", fast.OP.ID, slow.OP.ID)
	}
}

// A source follower whose current sink sets the drain current still has its
// gate at vin: the key applies (the page shows it, the link writes it) and
// moving it moves the operating point (vin = 1.0 V leaves the sink in triode
// on d180, found by evaluating it).
func TestFollowerWithSinkUsesVin(t *testing.T) {
	for _, bias := range []string{"id", "gmid", "vin"} {
		frag := "stage=sf&load=active&bias=" + bias
		r := Evaluate(mustDecode(t, frag))
		if !strings.Contains(r.Design, "&vin=") {
			t.Errorf("%s: canonical %q leaves vin out", frag, r.Design)
		}
	}
	hi := Evaluate(mustDecode(t, "stage=sf&load=active&bias=id&vin=1.3"))
	lo := Evaluate(mustDecode(t, "stage=sf&load=active&bias=id&vin=1.0"))
	if !hi.OK || !lo.OK || hi.LoadOP == nil || lo.LoadOP == nil {
		t.Fatalf("no result: %v %v", hi.Error, lo.Error)
	}
	if hi.LoadOP.Region != "saturation" || lo.LoadOP.Region != "triode" {
		t.Errorf("sink region at vin 1.3 V %q, at 1.0 V %q; want saturation, triode", hi.LoadOP.Region, lo.LoadOP.Region)
	}
}
