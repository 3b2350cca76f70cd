//go:build js && wasm

package main

import (
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
	n, err := field(t, resp, "result", "ac", "f").Length()
	if err != nil || n < 2 {
		t.Errorf("ac.f has %d points (%v)", n, err)
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
