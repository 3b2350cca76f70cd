package extract

import (
	"encoding/json"
	"strings"
	"testing"

	"stagewright/core/device"
	"stagewright/core/units"
)

// TestAppendJSON checks the fit object against encoding/json (an outside
// parser: the bytes must be valid JSON with the contract's keys), and the
// fragment against units.Parse: every override reads back bit for bit and
// only parameters that differ from the base appear.
func TestAppendJSON(t *testing.T) {
	truth := d180n()
	truth.VT0, truth.DIBL = 0.5, 8e-9
	g := defaultGrid()
	tab := g.table(ourModel(t, truth, g.w, g.tempC), 0.01, 5)
	res, err := Fit(tab, Options{Pol: device.NMOS, Base: d180n(), TNom: 300.15, GDSWeight: DefaultGDSWeight}, nil)
	if err != nil {
		t.Fatal(err)
	}
	b := res.AppendJSON(nil)
	var obj struct {
		OK       bool               `json:"ok"`
		Pol      string             `json:"pol"`
		Points   int                `json:"points"`
		Params   map[string]float64 `json:"params"`
		Start    map[string]float64 `json:"start"`
		Fit      map[string]any     `json:"fit"`
		Findings []string           `json:"findings"`
		Fragment string             `json:"fragment"`
		Plots    map[string][]struct {
			Label          string
			X, Data, Model []*float64
		} `json:"plots"`
	}
	if err := json.Unmarshal(b, &obj); err != nil {
		t.Fatalf("%v in %s", err, b)
	}
	if !obj.OK || obj.Pol != "n" || obj.Points != res.Report.Points || len(obj.Params) != len(device.ParamTable) {
		t.Errorf("ok %v pol %q points %d params %d", obj.OK, obj.Pol, obj.Points, len(obj.Params))
	}
	if obj.Params["thresh"] != res.Params.VT0 || obj.Start["thresh"] != res.Start.VT0 {
		t.Errorf("thresh %g/%g, want %g/%g", obj.Params["thresh"], obj.Start["thresh"], res.Params.VT0, res.Start.VT0)
	}
	regions, _ := obj.Fit["regions"].(map[string]any)
	for _, k := range []string{"weak", "moderate", "strong", "triode", "saturation"} {
		if _, ok := regions[k]; !ok {
			t.Errorf("fit.regions.%s missing", k)
		}
	}
	if len(obj.Findings) == 0 {
		t.Error("no findings")
	}
	for _, k := range []string{"id_vgs", "gmid_id", "gds_vds"} {
		c := obj.Plots[k]
		if len(c) == 0 || len(c) > maxCurves {
			t.Errorf("plots.%s has %d curves, want 1 … %d", k, len(c), maxCurves)
		}
		for _, s := range c {
			if len(s.X) != len(s.Data) || len(s.X) != len(s.Model) || s.Label == "" {
				t.Errorf("plots.%s %q: %d x, %d data, %d model", k, s.Label, len(s.X), len(s.Data), len(s.Model))
			}
		}
	}
	seen := map[string]bool{}
	for _, kv := range strings.Split(obj.Fragment, "&") {
		k, v, _ := strings.Cut(kv, "=")
		name, ok := strings.CutPrefix(k, "n.")
		info, _, found := device.ParamByKey(name)
		if !ok || !found {
			t.Errorf("fragment key %q", k)
			continue
		}
		seen[info.Key] = true
		x, err := units.Parse(v)
		if err != nil || x != *info.Field(&res.Params) {
			t.Errorf("%s=%s reads %g (%v), want %g", k, v, x, err, *info.Field(&res.Params))
		}
	}
	base := d180n()
	for _, info := range device.ParamTable {
		differs := *info.Field(&res.Params) != *info.Field(&base)
		if differs != seen[info.Key] {
			t.Errorf("%s: differs from the base %v, in the fragment %v", info.Key, differs, seen[info.Key])
		}
	}
}
