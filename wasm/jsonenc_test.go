package main

import (
	"encoding/json"
	"strings"
	"testing"

	"stagewright/core/charts"
	"stagewright/core/design"
	"stagewright/core/device"
	"stagewright/core/jsonenc"
	"stagewright/core/sizing"
	"stagewright/core/sweep"
	"stagewright/core/transfer"
	"stagewright/core/variation"
)

// The bridge writes every aid result with core/jsonenc; the page was built
// against encoding/json's output. For the real results of every aid on
// several designs (each stage and load, both polarities, failures and
// cancelled runs included) the bytes must equal encoding/json's Marshal,
// the outside reference.
func TestAidJSONMatchesEncodingJSON(t *testing.T) {
	fragments := []string{
		aidBase,
		aidBase + "&sw=rd&sw.lo=1k&sw.hi=10k&sw.n=7&pin=" + "v%3D1%26stage%3Dcs%26rd%3D8k",
		"v=1&stage=cg&pol=p&proc=d180&bias=id&id=50u&load=active",
		"v=1&stage=sf&pol=n&proc=d180&bias=vin&vin=1.2&load=r",
		"v=1&stage=cs&pol=n&proc=d180&bias=gmid&gmid=12&load=diode&amp=0.05&t.gain=3&t.f3db=1G",
		"v=1&stage=cs&pol=n&proc=d180&bias=vin&vin=0.1&load=r", // off: aids report failures
	}
	compared := map[string]int{}
	same := func(what string, v any) {
		t.Helper()
		compared[what[strings.LastIndex(what, " ")+1:]]++
		want, wantErr := json.Marshal(v)
		got, err := jsonenc.Marshal(v)
		if (err == nil) != (wantErr == nil) {
			t.Fatalf("%s: jsonenc error %v, encoding/json error %v", what, err, wantErr)
		}
		if string(got) != string(want) {
			t.Fatalf("%s: jsonenc and encoding/json differ:\n got %.300s\nwant %.300s", what, got, want)
		}
	}
	for _, frag := range fragments {
		d, err := design.Decode(frag)
		if err != nil {
			t.Fatalf("%s: %v", frag, err)
		}
		if v, err := transfer.Curve(d, 0); err == nil {
			same(frag+": transfer", v)
		}
		if v, err := transfer.Distortion(d, d.Aids.Amp); err == nil {
			same(frag+": distortion", v)
		}
		if v, err := variation.Corners(d); err == nil {
			same(frag+": corners", v)
		}
		if v, err := charts.ForDesign(d, chartPoints); err == nil {
			same(frag+": charts", v)
		}
		if v, err := sweep.Sweep(d, "rd", 1e3, 1e4, 5); err == nil {
			same(frag+": sweep", v)
		}
		if d.Aids.Pin != nil {
			if v, err := sweep.ComparePinned(d); err == nil {
				same(frag+": compare", v)
			}
		}
		mc, _ := variation.MonteCarloWith(d, variation.Options{Samples: 50, Seed: 3, Targets: mcTargets(d.Aids.Targets)})
		same(frag+": montecarlo", mc)
		stopAt := 0
		sz, _ := sizing.Size(d, func(done, total int) bool { stopAt++; return stopAt < 40 }) // cancelled early
		same(frag+": size", sz)
	}
	for _, proc := range device.BuiltinNames() {
		same("schema "+proc, design.Schema(proc))
	}
	for _, aid := range []string{"transfer", "distortion", "corners", "charts", "sweep", "compare", "montecarlo", "size"} {
		if compared[aid] == 0 {
			t.Errorf("no %s result was compared (every design failed?)", aid)
		}
	}
	t.Logf("results compared: %v", compared)
	same("job state", JobState{Run: "size-1", Kind: "size", Done: 3, Total: 9, Finished: true, Result: jsonenc.Raw(`{"a":1}`)})
	same("error response", Response{Error: &ErrorInfo{Code: CodeRequest, Message: "a <b> & \"c\"", Key: "k"}})
}
