package main

import (
	"strings"

	"stagewright/core/design"
	"stagewright/core/jsonenc"
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
	if !design.IsProcess(proc) {
		return Response{Error: &ErrorInfo{
			Code:    CodeRequest,
			Key:     "proc",
			Message: "schema: unknown process " + quoteShort(proc) + " (built in: " + strings.Join(design.Processes(), ", ") + ")",
		}}
	}
	return Response{Result: design.Schema(proc)}
}

// evaluate answers evaluate(fragment). The result is encoded at once,
// because its series belong to the shared evaluator and the next call
// overwrites them. With split, the sweep series are left out of the JSON
// and returned as Series (still the evaluator's memory: the glue copies
// them into JavaScript before the next call).
func evaluate(fragment string, split bool) Response {
	r := evaluator.EvaluateFragment(fragment)
	var series []Series
	if split {
		series = splitSeries(&r)
	}
	resp := Response{Result: jsonenc.Raw(r.JSON()), Series: series}
	if !r.OK && r.Error != nil {
		resp.Error = &ErrorInfo{Code: r.Error.Code, Message: r.Error.Message, Key: r.Error.Key}
	}
	return resp
}

func quoteShort(s string) string {
	if len(s) > 40 {
		s = s[:40] + "…"
	}
	return string(jsonenc.AppendString(nil, s))
}

// splitSeries takes the sweep series out of r (replacing r.AC and r.Noise
// by copies without them) and returns them with their places.
func splitSeries(r *design.Result) []Series {
	var out []Series
	if r.AC != nil {
		ac := *r.AC
		out = append(out,
			Series{[2]string{"ac", "f"}, ac.F}, Series{[2]string{"ac", "mag_db"}, ac.MagDB},
			Series{[2]string{"ac", "phase_deg"}, ac.PhaseDeg}, Series{[2]string{"ac", "zin"}, ac.Zin},
			Series{[2]string{"ac", "zout"}, ac.Zout})
		ac.F, ac.MagDB, ac.PhaseDeg, ac.Zin, ac.Zout = nil, nil, nil, nil, nil
		r.AC = &ac
	}
	if r.Noise != nil {
		n := *r.Noise
		out = append(out, Series{[2]string{"noise", "f"}, n.F}, Series{[2]string{"noise", "out"}, n.Out}, Series{[2]string{"noise", "in"}, n.In})
		n.F, n.Out, n.In = nil, nil, nil
		r.Noise = &n
	}
	return out
}
