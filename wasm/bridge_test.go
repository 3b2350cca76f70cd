package main

import (
	"encoding/json"
	"go/parser"
	"go/token"
	"math"
	"path/filepath"
	"slices"
	"strings"
	"testing"

	"stagewright/core/jsonenc"
)

// decoded is the response as the page sees it after JSON.parse.
type decoded struct {
	Result json.RawMessage `json:"result"`
	Error  *ErrorInfo      `json:"error"`
}

func call(t *testing.T, method string, args ...Arg) decoded {
	t.Helper()
	var d decoded
	if err := json.Unmarshal(Encode(Handle(method, args)), &d); err != nil {
		t.Fatalf("%s: response is not JSON: %v", method, err)
	}
	return d
}

type resultView struct {
	OK       bool   `json:"ok"`
	Design   string `json:"design"`
	Problems []struct {
		Key, Value, Message string
	} `json:"problems"`
	Midband *struct {
		Gain *float64 `json:"gain"`
	} `json:"midband"`
	AC *struct {
		F     []float64 `json:"f"`
		MagDB []float64 `json:"mag_db"`
	} `json:"ac"`
}

func TestEvaluateReturnsAResult(t *testing.T) {
	// evaluateMany carries the series in JSON; evaluate takes them out.
	many := call(t, "evaluateMany", ArrayArg(StringArg("v=1&stage=cs&pol=n&proc=d180&bias=id&id=100u&load=r&rd=10k")))
	var items []decoded
	if err := json.Unmarshal(many.Result, &items); err != nil || len(items) != 1 {
		t.Fatalf("evaluateMany: %v, %d items", err, len(items))
	}
	d := items[0]
	if d.Error != nil {
		t.Fatalf("error %+v for a good design", d.Error)
	}
	var r resultView
	if err := json.Unmarshal(d.Result, &r); err != nil {
		t.Fatal(err)
	}
	if !r.OK || r.Midband == nil || r.Midband.Gain == nil || r.AC == nil || len(r.AC.F) < 2 || len(r.AC.F) != len(r.AC.MagDB) {
		t.Fatalf("result lacks ok/midband/ac: %s", string(d.Result)[:200])
	}
	// A common-source stage inverts (common practice): the midband gain is negative.
	if *r.Midband.Gain >= 0 {
		t.Errorf("cs gain %g, want negative", *r.Midband.Gain)
	}
	if !strings.Contains(r.Design, "stage=cs") {
		t.Errorf("canonical design %q lacks stage=cs", r.Design)
	}
}

func TestEvaluateSplitsSeries(t *testing.T) {
	const fragment = "v=1&stage=sf&load=active&ppd=20"
	resp := Handle("evaluate", []Arg{StringArg(fragment)})
	want := map[[2]string]bool{{"ac", "f"}: true, {"ac", "mag_db"}: true, {"ac", "phase_deg"}: true, {"ac", "zin"}: true,
		{"ac", "zout"}: true, {"noise", "f"}: true, {"noise", "out"}: true, {"noise", "in"}: true}
	if len(resp.Series) != len(want) {
		t.Fatalf("%d series, want %d", len(resp.Series), len(want))
	}
	// Copy now: the series belong to the shared evaluator.
	split := map[[2]string][]float64{}
	for _, s := range resp.Series {
		if !want[s.Path] {
			t.Errorf("unexpected series %v", s.Path)
		}
		split[s.Path] = append([]float64(nil), s.Values...)
	}
	var stripped struct {
		AC map[string]any `json:"ac"`
	}
	if err := json.Unmarshal(resp.Result.(jsonenc.Raw), &stripped); err != nil {
		t.Fatal(err)
	}
	if f, ok := stripped.AC["f"].([]any); !ok || len(f) != 0 {
		t.Errorf("ac.f in the JSON is %v, want an empty array", stripped.AC["f"])
	}
	// The same design through the JSON path gives the same numbers to the 8
	// significant digits the JSON carries (design.Floats writes 'g', 8), so
	// a relative 1e-7 covers the rounding.
	many := call(t, "evaluateMany", ArrayArg(StringArg(fragment)))
	var items []struct {
		Result struct {
			AC    map[string]json.RawMessage `json:"ac"`
			Noise map[string]json.RawMessage `json:"noise"`
		} `json:"result"`
	}
	if err := json.Unmarshal(many.Result, &items); err != nil {
		t.Fatal(err)
	}
	for path, values := range split {
		var viaJSON []float64
		raw := items[0].Result.AC[path[1]]
		if path[0] == "noise" {
			raw = items[0].Result.Noise[path[1]]
		}
		if err := json.Unmarshal(raw, &viaJSON); err != nil {
			t.Fatalf("%v: %v", path, err)
		}
		if len(viaJSON) != len(values) || len(values) < 2 {
			t.Fatalf("%v: %d values split, %d via JSON", path, len(values), len(viaJSON))
		}
		for i := range values {
			if d := math.Abs(values[i] - viaJSON[i]); d > 1e-7*math.Abs(values[i]) {
				t.Fatalf("%v[%d]: split %g, JSON %g", path, i, values[i], viaJSON[i])
			}
		}
	}
}

func TestEvaluateReportsFragmentProblems(t *testing.T) {
	d := call(t, "evaluate", StringArg("w=-3u&wdth=1u&stage=xx"))
	var r resultView
	if err := json.Unmarshal(d.Result, &r); err != nil {
		t.Fatalf("no result for a partly bad fragment: %v (%+v)", err, d.Error)
	}
	keys := map[string]bool{}
	for _, p := range r.Problems {
		keys[p.Key] = true
	}
	for _, k := range []string{"w", "wdth", "stage"} {
		if !keys[k] {
			t.Errorf("no problem reported for key %q; problems %+v", k, r.Problems)
		}
	}
}

func TestMalformedRequestsGiveErrors(t *testing.T) {
	tests := []struct {
		name   string
		method string
		args   []Arg
		code   string
		want   string // part of the message
	}{
		{"no arguments", "evaluate", nil, CodeRequest, "no arguments"},
		{"number", "evaluate", []Arg{OtherArg("number")}, CodeRequest, "a number"},
		{"two strings", "evaluate", []Arg{StringArg("a"), StringArg("b")}, CodeRequest, "2 arguments"},
		{"huge fragment", "evaluate", []Arg{StringArg(strings.Repeat("w=1u&", 20000))}, CodeRequest, "bytes"},
		{"unknown method", "explode", nil, CodeRequest, "unknown method"},
		{"schema of a number", "schema", []Arg{OtherArg("number")}, CodeRequest, "process name"},
		{"unknown process", "schema", []Arg{StringArg("x999")}, CodeRequest, "unknown process"},
		{"many of a string", "evaluateMany", []Arg{StringArg("w=1u")}, CodeRequest, "array"},
		{"too many", "evaluateMany", []Arg{{Kind: "array", Items: make([]Arg, maxManyFragments+1)}}, CodeRequest, "at most"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			d := call(t, tc.method, tc.args...)
			if d.Error == nil {
				t.Fatalf("no error; result %.100s", d.Result)
			}
			if d.Error.Code != tc.code || !strings.Contains(d.Error.Message, tc.want) {
				t.Errorf("error %+v, want code %q and message containing %q", d.Error, tc.code, tc.want)
			}
		})
	}
}

func TestEvaluateManyAnswersEachItem(t *testing.T) {
	d := call(t, "evaluateMany", ArrayArg(StringArg("w=10u"), OtherArg("number"), StringArg("w=20u")))
	if d.Error != nil {
		t.Fatalf("error %+v", d.Error)
	}
	var items []decoded
	if err := json.Unmarshal(d.Result, &items); err != nil {
		t.Fatal(err)
	}
	if len(items) != 3 {
		t.Fatalf("%d answers for 3 items", len(items))
	}
	if items[1].Error == nil || items[1].Error.Code != CodeRequest {
		t.Errorf("item 1 (a number) answered %+v, want a request error", items[1].Error)
	}
	// Each item is encoded at once: the two results must differ (W changed),
	// which would fail if both pointed at the evaluator's shared series.
	if string(items[0].Result) == string(items[2].Result) {
		t.Error("items 0 and 2 have identical results for different widths")
	}
}

func TestSchemaListsKeys(t *testing.T) {
	for _, proc := range []string{"", "d180", "d65"} {
		d := call(t, "schema", StringArg(proc))
		if d.Error != nil {
			t.Fatalf("schema(%q): %+v", proc, d.Error)
		}
		var keys []struct {
			Key string `json:"key"`
		}
		if err := json.Unmarshal(d.Result, &keys); err != nil {
			t.Fatal(err)
		}
		seen := map[string]bool{}
		for _, k := range keys {
			seen[k.Key] = true
		}
		for _, k := range []string{"stage", "pol", "w", "l", "id", "rd", "cl", "fmax", "n.thresh"} {
			if !seen[k] {
				t.Errorf("schema(%q) lacks key %q", proc, k)
			}
		}
	}
}

func TestPanicBecomesInternalError(t *testing.T) {
	// A handler that panics stands in for a bug in the core.
	resp := func() (resp Response) {
		defer recoverInto(&resp, "test")
		panic("boom")
	}()
	if resp.Error == nil || resp.Error.Code != CodeInternal || !strings.Contains(resp.Error.Message, "boom") {
		t.Fatalf("panic gave %+v, want an internal error naming the panic", resp.Error)
	}
}

func TestEncodeRefusesNonFinite(t *testing.T) {
	var d decoded
	// encoding/json rejects NaN (common practice: JSON has no NaN); the
	// bridge must turn that into an error object, not a broken reply.
	if err := json.Unmarshal(Encode(Response{Result: []float64{1, nan()}}), &d); err != nil {
		t.Fatal(err)
	}
	if d.Error == nil || d.Error.Code != CodeInternal {
		t.Fatalf("NaN result encoded as %+v", d)
	}
}

func BenchmarkEvaluateJSON(b *testing.B) {
	b.ReportAllocs()
	arg := []Arg{StringArg("v=1&stage=cs&pol=n&proc=d180&bias=id&id=100u&load=r&rd=10k")}
	n := 0
	for b.Loop() {
		n += len(Encode(Handle("evaluate", arg)))
	}
	b.ReportMetric(float64(n)/float64(b.N), "bytes/op-json")
}

func nan() float64 {
	zero := 0.0
	return zero / zero
}

// The bridge reaches the model through core/design (and the aids through
// their own packages), never the layers below it: the process list once
// came straight from core/device.
func TestBridgeSkipsTheModelLayers(t *testing.T) {
	files, err := filepath.Glob("*.go")
	if err != nil || len(files) == 0 {
		t.Fatalf("no Go files: %v", err)
	}
	below := []string{"device", "circuit", "stage", "dense", "fastmath", "units"}
	// fit.go is the bridge's half of `stagewright fit` and evaluates
	// nothing: extract.Options and chardata.Options are made of the
	// table's polarity and the base's parameters (core/device), and its
	// -w/-l/-temp options are SI numbers (core/units), as in the CLI.
	allowed := map[string][]string{"fit.go": {"device", "units"}}
	fset := token.NewFileSet()
	for _, f := range files {
		if strings.HasSuffix(f, "_test.go") {
			continue
		}
		file, err := parser.ParseFile(fset, f, nil, parser.ImportsOnly)
		if err != nil {
			t.Fatal(err)
		}
		for _, imp := range file.Imports {
			path := strings.Trim(imp.Path.Value, `"`)
			for _, b := range below {
				if path == "stagewright/core/"+b && !slices.Contains(allowed[f], b) {
					t.Errorf("%s imports %s; the bridge reaches the model through core/design", f, path)
				}
			}
		}
	}
}
