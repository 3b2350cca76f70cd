package procfile

import (
	"math"
	"os"
	"reflect"
	"strings"
	"sync"
	"testing"

	"stagewright/core/chardata"
	"stagewright/core/design"
	"stagewright/core/device"
	"stagewright/core/extract"
)

var (
	demoOnce sync.Once
	demoFile File
	demoErr  error
)

// demo fits the demo n-channel file (invented demo data, made from a model
// that is not Stagewright's) once for all tests.
func demo(t *testing.T) File {
	t.Helper()
	demoOnce.Do(func() {
		data, err := os.ReadFile("../../testdata/chardata/demo_n.csv")
		if err != nil {
			demoErr = err
			return
		}
		tab, err := chardata.Read(data, chardata.Options{Pol: device.NMOS})
		if err != nil {
			demoErr = err
			return
		}
		pr, _ := device.Builtin("d180")
		res, err := extract.Fit(tab, extract.Options{Pol: device.NMOS, Base: pr.N, TNom: pr.TNom,
			GDSWeight: extract.DefaultGDSWeight, Bins: true}, nil)
		if err != nil {
			demoErr = err
			return
		}
		demoFile, demoErr = FromFits("demofab", "Demo fab (invented)", "d180", Fit{Result: res, Table: tab, File: "demo_n.csv"})
	})
	if demoErr != nil {
		t.Fatal(demoErr)
	}
	return demoFile
}

func TestRoundTrip(t *testing.T) {
	f := demo(t)
	if len(f.N.Bins) == 0 {
		t.Fatal("the demo fit has no bins; the test wants to carry them")
	}
	text := f.AppendJSON(nil)
	g, err := Read(text)
	if err != nil {
		t.Fatalf("%v\n%s", err, text)
	}
	if !reflect.DeepEqual(f, g) {
		t.Errorf("read back differs:\n%+v\n%+v", f, g)
	}
	if !strings.Contains(string(text), `"fingerprint": "fnv1a64:`) || !strings.Contains(string(text), `"id_rms_pct"`) {
		t.Errorf("the file lacks the source fingerprint or the fit report:\n%s", text)
	}
}

// The fragment opens without a problem and gives the design the file's
// parameters: every fitted value, bit for bit, and every bin.
func TestFragmentCarriesTheProcess(t *testing.T) {
	f := demo(t)
	d, err := design.Decode(f.Fragment() + "&l=350n")
	if err != nil {
		t.Fatalf("%v\n%s", err, f.Fragment())
	}
	pr, err := d.ProcessOf()
	if err != nil {
		t.Fatal(err)
	}
	for key, want := range f.N.Params {
		info, _, _ := device.ParamByKey(key)
		if got := *info.Field(&pr.N); got != want {
			t.Errorf("n.%s = %v, file %v", key, got, want)
		}
	}
	if len(pr.NBins) != len(f.N.Bins) {
		t.Fatalf("%d bins, file %d", len(pr.NBins), len(f.N.Bins))
	}
	for i, b := range f.N.Bins {
		if pr.NBins[i].L != b.L {
			t.Errorf("bin %d at %g, file %g", i, pr.NBins[i].L, b.L)
		}
		for key, want := range b.Params {
			info, _, _ := device.ParamByKey(key)
			if got := *info.Field(&pr.NBins[i].Params); got != want {
				t.Errorf("bin %d %s = %v, file %v", i, key, got, want)
			}
		}
	}
	if pr.P != mustBuiltin(t, "d180").P {
		t.Error("a polarity the file does not fit must keep the base's parameters")
	}
	r := design.Evaluate(d)
	if !r.OK {
		t.Fatalf("a design on the fitted process fails: %v", r.Error)
	}
}

func mustBuiltin(t *testing.T, name string) device.Process {
	pr, ok := device.Builtin(name)
	if !ok {
		t.Fatal(name)
	}
	return pr
}

func TestSpreadInTheFile(t *testing.T) {
	f := demo(t)
	f.N.Spread = map[string]float64{"vtspread": 0.025, "vtmatch": 6e-9}
	g, err := Read(f.AppendJSON(nil))
	if err != nil {
		t.Fatal(err)
	}
	if !reflect.DeepEqual(f.N.Spread, g.N.Spread) {
		t.Errorf("spread read back as %v", g.N.Spread)
	}
	d, err := design.Decode(g.Fragment())
	if err != nil {
		t.Fatal(err)
	}
	pr, _ := d.ProcessOf()
	if s := pr.Spread(device.NMOS); s.SigmaVT != 0.025 || s.AVT != 6e-9 {
		t.Errorf("the link's n spread is %+v", s)
	}
}

func TestApply(t *testing.T) {
	f := File{Name: "x", Base: "d65", VDD: 1.1, N: Side{Params: map[string]float64{"thresh": 0.4, "mobility": 0.02}}}
	got := Apply("#v=1&stage=cs&proc=d180&vdd=1.8&n.thresh=0.5&w=2u", f)
	d, err := design.Decode(got)
	if err != nil {
		t.Fatalf("%s: %v", got, err)
	}
	if d.Process != "d65" || d.VDD != 1.1 || d.Version != 2 || d.W != 2e-6 {
		t.Errorf("%s: process %s vdd %g version %d w %g", got, d.Process, d.VDD, d.Version, d.W)
	}
	want := map[string]float64{"n.thresh": 0.5, "n.mobility": 0.02} // the fragment's own thresh wins
	for _, o := range d.Overrides {
		if want[o.Key] != o.Value {
			t.Errorf("%s = %g, want %g", o.Key, o.Value, want[o.Key])
		}
		delete(want, o.Key)
	}
	if len(want) != 0 {
		t.Errorf("missing %v in %s", want, got)
	}
}

func TestReadProblems(t *testing.T) {
	good := string(demo(t).AppendJSON(nil))
	for _, c := range []struct{ name, text, want string }{
		{"empty", "", "empty or cut short"},
		{"cut", good[:40], "empty or cut short"},
		{"syntax", "{\n  \"format\": \"stagewright-process\",\n  \"version\": 1,,\n}", "line 3, column 16"}, // the second comma
		{"not ours", `{"format":"other","version":1}`, "format: not a Stagewright process file"},
		{"version", `{"format":"stagewright-process","version":7}`, "version: this build reads process files of version 1"},
		{"unknown member", strings.Replace(good, `"title"`, `"colour": 1, "title"`, 1), `unknown field "colour"`},
		{"type", strings.Replace(good, `"vdd": 1.8`, `"vdd": "high"`, 1), "vdd: expected a float64, found a JSON string"},
		{"base", strings.Replace(good, `"base": "d180"`, `"base": "x90"`, 1), `base: unknown base process "x90"`},
		{"name", strings.Replace(good, `"name": "demofab"`, `"name": ""`, 1), "name: give a name"},
		{"old parameter name", strings.Replace(good, `"thresh":`, `"vt0":`, 1), "n.vt0: unknown parameter"},
		{"out of range", strings.Replace(good, `"oxide": 4.1e-09`, `"oxide": 4`, 1), "n: device: Tox = 4 m is outside"},
		{"bin length", strings.Replace(good, `{"l": 1.8e-07`, `{"l": 1e-09`, 1), "n_bins[0].l: length 1n m outside the base's 180n … 20u m"},
		{"bin order", strings.Replace(good, `{"l": 1.8e-07`, `{"l": 9e-06`, 1), "n_bins[1].l: bins must rise in length"},
		{"vdd", strings.Replace(good, `"vdd": 1.8`, `"vdd": 50`, 1), "vdd: supply 50 V outside"},
		{"spread key", strings.Replace(good, `"p": {}`, `"p": {}, "p_spread": {"sigma": 1}`, 1), "p_spread.sigma: unknown spread figure"},
		{"spread range", strings.Replace(good, `"p": {}`, `"p": {}, "p_spread": {"vtspread": 2}`, 1), "p_spread.vtspread: global threshold spread"},
	} {
		_, err := Read([]byte(c.text))
		if err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%s: error %v, want one containing %q", c.name, err, c.want)
		}
	}
	if _, err := Read([]byte(strings.Repeat(" ", MaxBytes+1))); err == nil || !strings.Contains(err.Error(), "at most") {
		t.Errorf("an oversized file: %v", err)
	}
}

func TestLineColumn(t *testing.T) {
	data := []byte("ab\ncd\nef")
	for _, c := range []struct {
		off       int64
		line, col int
	}{{1, 1, 1}, {2, 1, 2}, {4, 2, 1}, {8, 3, 2}, {99, 3, 2}} {
		if l, col := lineColumn(data, c.off); l != c.line || col != c.col {
			t.Errorf("offset %d: line %d column %d, want %d %d", c.off, l, col, c.line, c.col)
		}
	}
}

// Numbers are written as the shortest decimal that reads back to the same
// float64 (strconv's 'g', -1 form, which encoding/json reads exactly).
func TestNumbersRoundTrip(t *testing.T) {
	// difflen accepts 0 … 10 µm in a link.
	for _, v := range []float64{0, 1e-5 / 3, 4.1e-9, 3.3e-7, 1e-6 - 1e-22, 7.000000000000001e-6, math.SmallestNonzeroFloat64} {
		b := appendNumber(nil, v)
		g, err := Read([]byte(`{"format":"stagewright-process","version":1,"name":"x","base":"d180","n":{"difflen":` + string(b) + `}}`))
		if err != nil {
			t.Fatalf("%v (%s): %v", v, b, err)
		}
		if g.N.Params["difflen"] != v {
			t.Errorf("%v written as %s read back as %v", v, b, g.N.Params["difflen"])
		}
	}
	if string(appendNumber(nil, math.NaN())) != "null" {
		t.Error("NaN must be written as null")
	}
}
