package main

import (
	"encoding/json"
	"strings"

	"stagewright/core/design"
	"stagewright/core/device"
)

// evaluator is reused across calls so each slider move reuses the sweep
// workspace; the bridge serves one call at a time (JavaScript is single
// threaded), so sharing it is safe.
var evaluator design.Evaluator

// schema answers schema(proc). An unknown process name is a request error
// naming the built-in ones (design.Schema would silently use the default).
func schema(proc string) Response {
	if proc == "" {
		proc = design.Default("").Process
	}
	if _, ok := device.Builtin(proc); !ok {
		return Response{Error: &ErrorInfo{
			Code:    CodeRequest,
			Key:     "proc",
			Message: "schema: unknown process " + quoteShort(proc) + " (built in: " + strings.Join(device.BuiltinNames(), ", ") + ")",
		}}
	}
	return Response{Result: design.Schema(proc)}
}

// evaluate answers evaluate(fragment). The result is encoded at once,
// because its series belong to the shared evaluator and the next call
// overwrites them.
func evaluate(fragment string) Response {
	r := evaluator.EvaluateFragment(fragment)
	resp := Response{Result: json.RawMessage(r.JSON())}
	if !r.OK && r.Error != nil {
		resp.Error = &ErrorInfo{Code: r.Error.Code, Message: r.Error.Message, Key: r.Error.Key}
	}
	return resp
}

func quoteShort(s string) string {
	if len(s) > 40 {
		s = s[:40] + "…"
	}
	b, _ := json.Marshal(s)
	return string(b)
}
