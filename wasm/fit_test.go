package main

import (
	"encoding/json"
	"os"
	"strings"
	"testing"

	"stagewright/core/chardata"
	"stagewright/core/device"
	"stagewright/core/extract"
	"stagewright/core/units"
)

func demoFile(t *testing.T, name string) string {
	t.Helper()
	b, err := os.ReadFile("../testdata/chardata/" + name)
	if err != nil {
		t.Fatal(err)
	}
	return string(b)
}

// fitView is the part of the fit object these tests read.
type fitView struct {
	OK        bool               `json:"ok"`
	Pol       string             `json:"pol"`
	Base      string             `json:"base"`
	Points    int                `json:"points"`
	Params    map[string]float64 `json:"params"`
	Fragment  string             `json:"fragment"`
	Cancelled bool               `json:"cancelled"`
	Findings  []string           `json:"findings"`
	Fit       struct {
		IDRMSPct float64 `json:"id_rms_pct"`
	} `json:"fit"`
	Table *struct {
		Points      int        `json:"points"`
		Lengths     []float64  `json:"lengths"`
		Widths      []float64  `json:"widths"`
		VGS         [2]float64 `json:"vgs"`
		VDS         [2]float64 `json:"vds"`
		Fingerprint string     `json:"fingerprint"`
	} `json:"table"`
}

// stepFit starts a fit and steps it to the end.
func stepFit(t *testing.T, text, options string) (jobView, int) {
	t.Helper()
	var j jobView
	mustResult(t, "fitStart", call(t, "fitStart", StringArg(text), StringArg(options)), &j)
	if j.Finished || j.Done != 0 {
		t.Fatalf("a new fit is finished or has work done: %+v", j)
	}
	steps := 0
	for !j.Finished {
		if steps++; steps > 100000 {
			t.Fatal("the fit did not finish in 100000 steps")
		}
		prev := j.Done
		d := call(t, "step", StringArg(j.Run))
		if d.Error != nil {
			t.Fatalf("step %d: %+v", steps, *d.Error)
		}
		mustResult(t, "step", d, &j)
		if j.Done < prev {
			t.Fatalf("progress went back from %d to %d iterations", prev, j.Done)
		}
	}
	return j, steps
}

// The fit in steps is the fit in one call (the job only pauses it), and
// the table summary agrees with the file read here without chardata.
func TestFitInStepsIsTheWholeFit(t *testing.T) {
	text := demoFile(t, "demo_n.csv")
	j, steps := stepFit(t, text, "pol=n&base=d180&w=&l=&temp=")
	var got fitView
	if err := json.Unmarshal(j.Result, &got); err != nil {
		t.Fatalf("fit result does not decode: %v (%.200s)", err, j.Result)
	}
	table, err := chardata.Read([]byte(text), chardata.Options{Pol: device.NMOS})
	if err != nil {
		t.Fatal(err)
	}
	pr, _ := device.Builtin("d180")
	whole, err := extract.Fit(table, extract.Options{Pol: device.NMOS, Base: pr.N, TNom: pr.TNom, GDSWeight: extract.DefaultGDSWeight, Bins: true}, nil)
	if err != nil {
		t.Fatal(err)
	}
	if got.Fragment != whole.Fragment() || !got.OK || got.Pol != "n" || got.Base != "d180" || got.Cancelled {
		t.Errorf("stepped fit: ok %v pol %q base %q cancelled %v\nfragment %s\nwhole fit fragment %s", got.OK, got.Pol, got.Base, got.Cancelled, got.Fragment, whole.Fragment())
	}
	if j.Done != whole.Iterations {
		t.Errorf("the finished job says %d iterations, the fit did %d", j.Done, whole.Iterations)
	}
	t.Logf("%d steps, %d iterations, ID rms %.2f %%", steps, j.Done, got.Fit.IDRMSPct)

	// The summary against the file read line by line here: rows that are
	// neither comments nor the header, the distinct l and w cells, the
	// ranges of the vgs and vds columns (an n-type file: no sign change).
	rows, lengths, widths := 0, map[float64]bool{}, map[float64]bool{}
	vgs := [2]float64{1e9, -1e9}
	vds := vgs
	var header []string
	for _, line := range strings.Split(text, "\n") {
		line = strings.TrimSpace(line)
		if line == "" || strings.HasPrefix(line, "#") {
			continue
		}
		cells := strings.Split(line, ",")
		if header == nil {
			header = cells
			continue
		}
		rows++
		for i, name := range header {
			v, err := units.Parse(cells[i])
			if err != nil {
				t.Fatalf("demo file cell %q: %v", cells[i], err)
			}
			switch name {
			case "l":
				lengths[v] = true
			case "w":
				widths[v] = true
			case "vgs":
				vgs = [2]float64{min(vgs[0], v), max(vgs[1], v)}
			case "vds":
				vds = [2]float64{min(vds[0], v), max(vds[1], v)}
			}
		}
	}
	s := got.Table
	if s == nil {
		t.Fatal("no table summary")
	}
	if s.Points != rows || len(s.Lengths) != len(lengths) || len(s.Widths) != len(widths) || s.VGS != vgs || s.VDS != vds || s.Fingerprint != table.Fingerprint {
		t.Errorf("summary %+v; the file has %d rows, %d lengths, %d widths, VGS %v, VDS %v", *s, rows, len(lengths), len(widths), vgs, vds)
	}
	for _, l := range s.Lengths {
		if !lengths[l] {
			t.Errorf("summary length %g is not in the file", l)
		}
	}
}

// A p-type file in simulator signs fits as p; read as n it is refused with
// the line that shows it.
func TestFitPolarity(t *testing.T) {
	text := demoFile(t, "demo_p.csv")
	j, _ := stepFit(t, text, "pol=p&base=d65")
	var got fitView
	if err := json.Unmarshal(j.Result, &got); err != nil {
		t.Fatal(err)
	}
	if got.Pol != "p" || got.Base != "d65" || !strings.HasPrefix(got.Fragment, "p.") || strings.Contains(got.Fragment, "n.") {
		t.Errorf("p fit: pol %q base %q fragment %.120s", got.Pol, got.Base, got.Fragment)
	}
	e := fitFailure(t, text, "pol=n")
	if e.Code != CodeData || e.Key != "file" || !strings.HasPrefix(e.Message, "line ") {
		t.Errorf("a p-type file read as n: %+v", e)
	}
}

// fitFailure starts and steps a fit that must fail and returns its error.
func fitFailure(t *testing.T, text, options string) ErrorInfo {
	t.Helper()
	d := call(t, "fitStart", StringArg(text), StringArg(options))
	if d.Error != nil {
		return *d.Error
	}
	var j jobView
	mustResult(t, "fitStart", d, &j)
	for i := 0; i < 100000; i++ {
		d = call(t, "step", StringArg(j.Run))
		if d.Error != nil {
			return *d.Error
		}
		mustResult(t, "step", d, &j)
		if j.Finished {
			t.Fatalf("the fit finished: %.200s", j.Result)
		}
	}
	t.Fatal("the fit did not end")
	return ErrorInfo{}
}

func TestFitErrors(t *testing.T) {
	good := demoFile(t, "demo_n.csv")
	lines := strings.Split(good, "\n")
	// Line 14 of the file is a data row (three comment lines and the
	// header come first); its third cell is the current.
	cells := strings.Split(lines[13], ",")
	cells[2] = "1.2x"
	broken := strings.Join(append(append(append([]string{}, lines[:13]...), strings.Join(cells, ",")), lines[14:]...), "\n")
	// Only strong inversion: VGS from 1 V up, where no gm/ID plateau shows.
	var strong []string
	for i, l := range lines {
		if i < 4 || l == "" {
			strong = append(strong, l)
			continue
		}
		v, err := units.Parse(strings.Split(l, ",")[0])
		if err != nil {
			t.Fatal(err)
		}
		if v >= 1 {
			strong = append(strong, l)
		}
	}
	cases := []struct {
		name, text, options string
		code, key, message  string
	}{
		{"non-number cell", broken, "pol=n", CodeData, "file", `line 14, column 3 (id): "1.2x"`},
		{"empty file", "", "pol=n", CodeData, "file", ""},
		{"no id column", "vgs,vds\n0.1,0.2\n", "pol=n", CodeData, "file", "id"},
		{"no weak inversion", strings.Join(strong, "\n"), "pol=n", CodeAnalysis, "file", "weak inversion"},
		{"no polarity", good, "base=d180", CodeRequest, "pol", "missing"},
		{"bad polarity", good, "pol=x", CodeRequest, "pol", "n or p"},
		{"unknown base", good, "pol=n&base=d7", CodeRequest, "base", `"d7" is not a built-in process`},
		{"bad width", good, "pol=n&w=ten", CodeRequest, "w", `"ten"`},
		{"bad length", good, "pol=n&l=-1u", CodeRequest, "l", "not a device size"},
		{"bad temperature", good, "pol=n&temp=900", CodeRequest, "temp", "outside"},
		{"unknown option", good, "pol=n&vdd=1", CodeRequest, "vdd", "unknown"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			e := fitFailure(t, c.text, c.options)
			if e.Code != c.code || e.Key != c.key || !strings.Contains(e.Message, c.message) {
				t.Errorf("got %+v, want code %s key %s and a message with %q", e, c.code, c.key, c.message)
			}
		})
	}
	for _, args := range [][]Arg{nil, {StringArg(good)}, {StringArg(good), OtherArg("object")}} {
		if d := call(t, "fitStart", args...); d.Error == nil || d.Error.Code != CodeRequest {
			t.Errorf("fitStart(%s): %+v", describe(args), d.Error)
		}
	}
}

// Cancel ends the fit at once with the best parameters so far, marked.
func TestFitCancel(t *testing.T) {
	var j jobView
	mustResult(t, "fitStart", call(t, "fitStart", StringArg(demoFile(t, "demo_n.csv")), StringArg("pol=n")), &j)
	mustResult(t, "step", aidCall(t, "step", j.Run), &j)
	mustResult(t, "cancel", aidCall(t, "cancel", j.Run), &j)
	var got fitView
	if err := json.Unmarshal(j.Result, &got); err != nil {
		t.Fatalf("cancelled fit: %v (%.200s)", err, j.Result)
	}
	if !j.Finished || !got.Cancelled || !got.OK || got.Params["thresh"] == 0 || got.Table == nil {
		t.Errorf("after cancel: finished %v, cancelled %v, ok %v, thresh %v", j.Finished, got.Cancelled, got.OK, got.Params["thresh"])
	}
}
