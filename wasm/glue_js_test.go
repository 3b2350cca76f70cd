//go:build js && wasm

package main

import (
	"encoding/binary"
	"math"
	"testing"

	"github.com/hack-pad/safejs"
)

// These tests run under Node (go_js_wasm_exec) and call the bridge the way
// the page does: through globalThis.stagewright.

func namespace(t *testing.T) safejs.Value {
	t.Helper()
	if err := register(); err != nil {
		t.Fatalf("register: %v", err)
	}
	ns, err := safejs.Global().Get("stagewright")
	if err != nil || ns.Type() != safejs.TypeObject {
		t.Fatalf("globalThis.stagewright missing: %v", err)
	}
	return ns
}

func field(t *testing.T, v safejs.Value, path ...string) safejs.Value {
	t.Helper()
	for _, p := range path {
		next, err := v.Get(p)
		if err != nil {
			t.Fatalf("get %q: %v", p, err)
		}
		v = next
	}
	return v
}

func TestGlueEvaluate(t *testing.T) {
	ns := namespace(t)
	if s, _ := field(t, ns, "version").String(); s != buildVersion {
		t.Errorf("version %q, want %q", s, buildVersion)
	}
	resp, err := ns.Call("evaluate", "v=1&stage=cs&proc=d180&w=20u")
	if err != nil {
		t.Fatal(err)
	}
	ok, _ := field(t, resp, "result", "ok").Bool()
	if !ok {
		msg, _ := field(t, resp, "error", "message").String()
		t.Fatalf("result not ok: %s", msg)
	}
	f := field(t, resp, "result", "ac", "f")
	n, err := f.Length()
	if err != nil || n < 2 {
		t.Errorf("ac.f has %d points (%v)", n, err)
	}
	f64, _ := safejs.Global().Get("Float64Array")
	if is, _ := f.InstanceOf(f64); !is {
		t.Error("ac.f did not cross as a Float64Array")
	}
	// The sweep starts at fmin, 1 Hz by default (see the key table).
	first, _ := f.Index(0)
	if v, _ := first.Float(); v != 1 {
		t.Errorf("ac.f[0] = %g, want the default fmin 1 Hz", v)
	}
}

func TestGlueMalformedCalls(t *testing.T) {
	ns := namespace(t)
	for _, args := range [][]any{{}, {42}, {true}, {"a", "b"}, {map[string]any{"x": 1}}} {
		resp, err := ns.Call("evaluate", args...)
		if err != nil {
			t.Fatalf("evaluate%v threw: %v", args, err)
		}
		code, _ := field(t, resp, "error", "code").String()
		if code != CodeRequest {
			t.Errorf("evaluate%v: code %q, want %q", args, code, CodeRequest)
		}
	}
	arr, err := safejs.Global().Get("Array")
	if err != nil {
		t.Fatal(err)
	}
	list, err := arr.New()
	if err != nil {
		t.Fatal(err)
	}
	_, _ = list.Call("push", "w=10u", 7)
	resp, err := ns.Call("evaluateMany", list)
	if err != nil {
		t.Fatal(err)
	}
	n, _ := field(t, resp, "result").Length()
	if n != 2 {
		t.Fatalf("evaluateMany of 2 answered %d", n)
	}
	first, _ := field(t, resp, "result").Index(0)
	if ok, _ := field(t, first, "result", "ok").Bool(); !ok {
		t.Error("evaluateMany item 0 not ok")
	}
	second, _ := field(t, resp, "result").Index(1)
	if code, _ := field(t, second, "error", "code").String(); code != CodeRequest {
		t.Errorf("evaluateMany item 1 (a number): code %q", code)
	}
}

// Benchmarks of the crossing, run under Node:
//
//	GOOS=js GOARCH=wasm go test -exec=$(go env GOROOT)/lib/wasm/go_js_wasm_exec -run XXX -bench . ./wasm/
//
// They split one evaluate call into the core's work, the JSON encoding in Go
// and the rest (JSON.parse in JavaScript), and time the alternative of
// copying the big arrays into Float64Arrays.
const benchFragment = "v=1&stage=cs&pol=n&proc=d180&bias=id&id=100u&load=r&rd=10k"

func BenchmarkGlueEvaluate(b *testing.B) {
	b.ReportAllocs()
	if err := register(); err != nil {
		b.Fatal(err)
	}
	ns, _ := safejs.Global().Get("stagewright")
	for b.Loop() {
		if _, err := ns.Call("evaluate", benchFragment); err != nil {
			b.Fatal(err)
		}
	}
}

func BenchmarkCoreEvaluate(b *testing.B) {
	b.ReportAllocs()
	for b.Loop() {
		_ = evaluator.EvaluateFragment(benchFragment)
	}
}

func BenchmarkCoreEvaluateAndJSON(b *testing.B) {
	b.ReportAllocs()
	for b.Loop() {
		r := evaluator.EvaluateFragment(benchFragment)
		_ = r.JSON()
	}
}

// BenchmarkFloat64ArrayCopy copies seven series of the default sweep's
// length into Float64Arrays, the alternative to carrying them in JSON.
func BenchmarkFloat64ArrayCopy(b *testing.B) {
	b.ReportAllocs()
	r := evaluator.EvaluateFragment(benchFragment)
	n := len(r.AC.F)
	f64, _ := safejs.Global().Get("Float64Array")
	u8, _ := safejs.Global().Get("Uint8Array")
	buf := make([]byte, 8*n)
	for b.Loop() {
		for range 7 {
			arr, err := f64.New(n)
			if err != nil {
				b.Fatal(err)
			}
			ab, _ := arr.Get("buffer")
			view, _ := u8.New(ab)
			for i, v := range r.AC.F {
				binary.LittleEndian.PutUint64(buf[8*i:], math.Float64bits(v))
			}
			if _, err := safejs.CopyBytesToJS(view, buf); err != nil {
				b.Fatal(err)
			}
		}
	}
}
