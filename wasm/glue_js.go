//go:build js && wasm

package main

import (
	"math"
	"runtime"

	"github.com/hack-pad/safejs"
)

// buildVersion is set at link time (-X main.buildVersion=…) to the same
// string the page bundle carries; the page refuses to run on a mismatch.
var buildVersion = "dev"

func main() {
	if err := register(); err != nil {
		// Nothing useful can run without the namespace; say so where a
		// developer looks and stop.
		println("stagewright: cannot register the bridge:", err.Error())
		return
	}
	select {} // keep the Go runtime alive for callbacks
}

// register puts globalThis.stagewright in place and, when the host page or
// worker defined globalThis.stagewrightReady, calls it.
func register() error {
	global := safejs.Global()
	object, err := global.Get("Object")
	if err != nil {
		return err
	}
	ns, err := object.New()
	if err != nil {
		return err
	}
	if err := ns.Set("version", buildVersion); err != nil {
		return err
	}
	jsonObj, err := global.Get("JSON")
	if err != nil {
		return err
	}
	for _, method := range append([]string{"schema", "evaluate", "evaluateMany"}, aidMethodNames()...) {
		method := method
		fn, err := safejs.FuncOf(func(_ safejs.Value, args []safejs.Value) any {
			return answer(jsonObj, method, args)
		})
		if err != nil {
			return err
		}
		if err := ns.Set(method, fn.Value()); err != nil {
			return err
		}
	}
	if err := global.Set("stagewright", ns); err != nil {
		return err
	}
	if ready, err := global.Get("stagewrightReady"); err == nil && ready.Type() == safejs.TypeFunction {
		_, _ = ready.Invoke()
	}
	return nil
}

// answer runs one exported call. It recovers from panics in the conversion
// as well as in the core, so JavaScript always gets an object back.
func answer(jsonObj safejs.Value, method string, args []safejs.Value) (out any) {
	defer func() {
		if p := recover(); p != nil {
			out = parse(jsonObj, Encode(Response{Error: &ErrorInfo{Code: CodeInternal, Message: method + ": internal error in the bridge"}}))
		}
	}()
	converted := make([]Arg, len(args))
	for i, a := range args {
		converted[i] = toArg(a, 0)
	}
	resp := Handle(method, converted)
	if method != "evaluate" {
		// An aid call (a transfer curve, a chart, a Monte Carlo step) leaves
		// much garbage; collecting it now, between calls, keeps the next
		// call's heap goal low, so the engine's memory (which WebAssembly
		// never gives back) stays at its working size instead of creeping up
		// to the largest peak a late collection allowed.
		runtime.GC()
	}
	if debugStack != "" {
		println("stagewright:", method, "recovered from a panic:\n"+debugStack)
		debugStack = ""
	}
	out = parse(jsonObj, Encode(resp))
	if len(resp.Series) > 0 {
		if obj, ok := out.(safejs.Value); ok {
			if err := attachSeries(obj, resp.Series); err != nil {
				return parse(jsonObj, Encode(Response{Error: &ErrorInfo{Code: CodeInternal, Message: method + ": could not hand over the sweep: " + err.Error()}}))
			}
		}
	}
	return out
}

// seriesBytes is reused between calls so a slider move does not allocate
// a new buffer for the arrays.
var seriesBytes []byte

// attachSeries copies every series into one new Float64Array, in a single
// copy, and sets a subarray view of it for each series at its place in
// obj.result. Each call across the boundary costs microseconds under
// js/wasm (and each JavaScript value held by Go a finalizer), so the
// handover is one allocation and one copy, then two calls a series. The
// page may move the shared buffer to another thread: it is not the
// engine's memory. Non-finite values cross as NaN; the page turns them
// into null, as the JSON path would.
func attachSeries(obj safejs.Value, series []Series) error {
	result, err := obj.Get("result")
	if err != nil || result.Type() != safejs.TypeObject {
		return err
	}
	total := 0
	for _, s := range series {
		total += len(s.Values)
	}
	if cap(seriesBytes) < 8*total {
		seriesBytes = make([]byte, 8*total)
	}
	buf := seriesBytes[:8*total]
	at := 0
	for _, s := range series {
		for _, v := range s.Values {
			putUint64LE(buf[at:at+8], math.Float64bits(v))
			at += 8
		}
	}
	global := safejs.Global()
	f64, err := global.Get("Float64Array")
	if err != nil {
		return err
	}
	u8, err := global.Get("Uint8Array")
	if err != nil {
		return err
	}
	all, err := f64.New(total)
	if err != nil {
		return err
	}
	ab, err := all.Get("buffer")
	if err != nil {
		return err
	}
	bytes, err := u8.New(ab)
	if err != nil {
		return err
	}
	if _, err := safejs.CopyBytesToJS(bytes, buf); err != nil {
		return err
	}
	parents := map[string]safejs.Value{}
	start := 0
	for _, s := range series {
		end := start + len(s.Values)
		parent, seen := parents[s.Path[0]]
		if !seen {
			p, err := result.Get(s.Path[0])
			if err != nil {
				return err
			}
			parent, parents[s.Path[0]] = p, p
		}
		if parent.Type() == safejs.TypeObject {
			view, err := all.Call("subarray", start, end)
			if err != nil {
				return err
			}
			if err := parent.Set(s.Path[1], view); err != nil {
				return err
			}
		}
		start = end
	}
	return nil
}

// toArg converts a JavaScript value into the bridge's plain argument form.
// Arrays are followed one level deep (evaluateMany takes an array of
// strings); anything deeper is reported by kind only.
func toArg(v safejs.Value, depth int) Arg {
	switch v.Type() {
	case safejs.TypeString:
		s, err := v.String()
		if err != nil {
			return OtherArg("unreadable string")
		}
		return StringArg(s)
	case safejs.TypeObject:
		if depth > 0 {
			return OtherArg("object")
		}
		array, err := safejs.Global().Get("Array")
		if err != nil {
			return OtherArg("object")
		}
		isArray, err := array.Call("isArray", v)
		if err != nil {
			return OtherArg("object")
		}
		if ok, _ := isArray.Bool(); !ok {
			return OtherArg("object")
		}
		n, err := v.Length()
		if err != nil {
			return OtherArg("array")
		}
		if n > maxManyFragments {
			// Do not copy a huge array just to refuse it.
			return Arg{Kind: "array", Items: make([]Arg, n)}
		}
		items := make([]Arg, n)
		for i := range items {
			item, err := v.Index(i)
			if err != nil {
				items[i] = OtherArg("unreadable item")
				continue
			}
			items[i] = toArg(item, depth+1)
		}
		return Arg{Kind: "array", Items: items}
	default:
		return OtherArg(v.Type().String())
	}
}

// parse hands JSON text to JSON.parse and returns the object; JSON.parse of
// one string is the fastest way to build a large object graph from Go.
func parse(jsonObj safejs.Value, text []byte) any {
	v, err := jsonObj.Call("parse", string(text))
	if err != nil {
		return "stagewright: JSON.parse failed: " + err.Error()
	}
	return v
}

// putUint64LE stores x little-endian in b[:8] (what encoding/binary's
// LittleEndian.PutUint64 does; that package adds 9 kB of initialization to
// the engine for this one loop).
func putUint64LE(b []byte, x uint64) {
	_ = b[7]
	b[0], b[1], b[2], b[3] = byte(x), byte(x>>8), byte(x>>16), byte(x>>24)
	b[4], b[5], b[6], b[7] = byte(x>>32), byte(x>>40), byte(x>>48), byte(x>>56)
}
