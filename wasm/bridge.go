package main

import (
	"fmt"
	"runtime/debug"

	"stagewright/core/jsonenc"
)

// Stable error codes the page can branch on. Codes from the evaluation
// itself (fragment, no_operating_point, bias, solver_failed, internal) pass through as the
// core reports them; the bridge adds "request" for calls it cannot serve.
const (
	CodeRequest  = "request"  // the call itself is malformed (wrong argument count or type, too large)
	CodeFragment = "fragment" // the design fragment has problems
	CodeInternal = "internal" // a bug: a recovered panic or a result that cannot be encoded
)

// Limits on what one call may carry, so a runaway page cannot make the
// runtime allocate without bound.
const (
	maxFragmentBytes = 64 << 10 // the codec itself stops at 4096 bytes with a problem; this only bounds copying
	maxManyFragments = 1000     // fragments in one evaluateMany call
)

// ErrorInfo is the {code, message, key} object of an error response.
type ErrorInfo struct {
	Code    string `json:"code"`
	Message string `json:"message"`
	Key     string `json:"key,omitempty"`
}

// Response is the answer to one call. A successful call carries Result; a
// failed one carries Error. An evaluation that ran but found no usable
// operating point carries both: the result (with ok=false, the canonical
// design and any fragment problems) and its error, so the page can show the
// message and still restore the controls.
type Response struct {
	Result any        `json:"result,omitempty"`
	Error  *ErrorInfo `json:"error,omitempty"`

	// Series are big arrays taken out of Result to cross as Float64Array
	// (measured: encoding them as JSON and parsing that costs about ten
	// times the evaluation itself under js/wasm; see glue_js_test.go). In
	// Result they are empty arrays; the glue puts each back at
	// result[Path[0]][Path[1]]. Only the evaluate method uses them.
	Series []Series `json:"-"`
}

// Series is one big array of a result and where it belongs.
type Series struct {
	Path   [2]string // e.g. {"ac", "f"}
	Values []float64
}

// Arg is one JavaScript argument as the bridge sees it. The glue fills Kind
// with the JavaScript type ("string", "number", "object", "undefined", …, or
// "array"), Str for strings and Items for arrays.
type Arg struct {
	Kind  string
	Str   string
	Items []Arg
}

// StringArg and ArrayArg build arguments for tests and for the glue.
func StringArg(s string) Arg    { return Arg{Kind: "string", Str: s} }
func ArrayArg(items ...Arg) Arg { return Arg{Kind: "array", Items: items} }
func OtherArg(kind string) Arg  { return Arg{Kind: kind} }
func requestError(format string, a ...any) Response {
	return Response{Error: &ErrorInfo{Code: CodeRequest, Message: fmt.Sprintf(format, a...)}}
}

// Handle serves one call by method name. It never panics: a panic inside
// the core is recovered and answered with code "internal", naming the
// method and the panic value.
func Handle(method string, args []Arg) (resp Response) {
	defer recoverInto(&resp, method)
	switch method {
	case "schema":
		proc, bad := oneString(method, "process name", args)
		if bad != nil {
			return *bad
		}
		return schema(proc)
	case "evaluate":
		fragment, bad := oneString(method, "URL fragment", args)
		if bad != nil {
			return *bad
		}
		if len(fragment) > maxFragmentBytes {
			return requestError("evaluate: fragment is %d bytes; at most %d accepted", len(fragment), maxFragmentBytes)
		}
		return evaluate(fragment, true)
	case "evaluateMany":
		if len(args) != 1 || args[0].Kind != "array" {
			return requestError("evaluateMany expects one array of URL fragments, got %s", describe(args))
		}
		items := args[0].Items
		if len(items) > maxManyFragments {
			return requestError("evaluateMany: %d fragments; at most %d per call", len(items), maxManyFragments)
		}
		out := make([]Response, len(items))
		for i, it := range items {
			if it.Kind != "string" {
				out[i] = requestError("evaluateMany: item %d is a %s, not a string", i, it.Kind)
				continue
			}
			if len(it.Str) > maxFragmentBytes {
				out[i] = requestError("evaluateMany: item %d is %d bytes; at most %d accepted", i, len(it.Str), maxFragmentBytes)
				continue
			}
			out[i] = evaluate(it.Str, false)
		}
		return Response{Result: out}
	default:
		if r, ok := handleAid(method, args); ok { // the design aids, see aids.go
			return r
		}
		return requestError("unknown method %q (known: schema, evaluate, evaluateMany)", method)
	}
}

// recoverInto, deferred, turns a panic into an internal error response.
func recoverInto(resp *Response, method string) {
	if p := recover(); p != nil {
		*resp = Response{Error: &ErrorInfo{
			Code:    CodeInternal,
			Message: fmt.Sprintf("%s: internal error (please report with the link): %v", method, p),
		}}
		debugStack = string(debug.Stack())
	}
}

// debugStack keeps the stack of the last recovered panic for the glue to
// print to the console; it is not part of any response.
var debugStack string

func oneString(method, what string, args []Arg) (string, *Response) {
	if len(args) != 1 || args[0].Kind != "string" {
		r := requestError("%s expects one string argument (the %s), got %s", method, what, describe(args))
		return "", &r
	}
	return args[0].Str, nil
}

func describe(args []Arg) string {
	switch len(args) {
	case 0:
		return "no arguments"
	case 1:
		return "a " + args[0].Kind
	}
	s := fmt.Sprintf("%d arguments (", len(args))
	for i, a := range args {
		if i > 0 {
			s += ", "
		}
		s += a.Kind
	}
	return s + ")"
}

// Encode turns a response into the JSON text the glue hands to JSON.parse.
// A response that cannot be encoded (which would mean a NaN slipped through
// the core) becomes an internal error naming the reason.
func Encode(resp Response) []byte {
	// An evaluation's result is already JSON (design.Result.AppendJSON):
	// splice it in rather than have encoding/json re-validate 3 kB of it,
	// which under js/wasm costs as much as writing it.
	if raw, ok := resp.Result.(jsonenc.Raw); ok && len(raw) > 0 {
		b := append(make([]byte, 0, len(raw)+128), `{"result":`...)
		b = append(b, raw...)
		if resp.Error != nil {
			e, err := jsonenc.Marshal(resp.Error)
			if err == nil {
				b = append(b, `,"error":`...)
				b = append(b, e...)
			}
		}
		return append(b, '}')
	}
	b, err := jsonenc.Marshal(resp)
	if err != nil {
		b, _ = jsonenc.Marshal(Response{Error: &ErrorInfo{
			Code:    CodeInternal,
			Message: "the result could not be encoded as JSON: " + err.Error(),
		}})
	}
	return b
}
