package main

import (
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

const demoN, demoP = "../../../testdata/chardata/demo_n.csv", "../../../testdata/chardata/demo_p.csv"

// fitOutput is the part of `stagewright fit`'s object the tests read.
type fitOutput struct {
	OK     bool               `json:"ok"`
	Pol    string             `json:"pol"`
	Points int                `json:"points"`
	Params map[string]float64 `json:"params"`
	Fit    struct {
		IDRMS   *float64 `json:"id_rms_pct"`
		IDMax   *float64 `json:"id_max_pct"`
		GmIDRMS *float64 `json:"gm_id_rms_pct"`
		GDSRMS  *float64 `json:"gds_rms_pct"`
		Regions map[string]struct {
			Points int      `json:"points"`
			IDRMS  *float64 `json:"id_rms_pct"`
		} `json:"regions"`
	} `json:"fit"`
	Fragment string `json:"fragment"`
	Error    *struct{ Code, Message, Key string }
}

func TestFitCommand(t *testing.T) {
	dir := t.TempDir()
	proc := filepath.Join(dir, "demofab.json")
	var fragments []string
	for _, c := range []struct{ file, pol string }{{demoN, "n"}, {demoP, "p"}} {
		code, out, errs := runCLI([]string{"fit", c.file, "-pol", c.pol, "-process", "demofab", "-o", proc}, "")
		if code != 0 {
			t.Fatalf("fit %s: exit %d: %s", c.file, code, errs)
		}
		var r fitOutput
		if err := json.Unmarshal([]byte(out), &r); err != nil {
			t.Fatalf("not one JSON object: %v\n%s", err, out)
		}
		if !r.OK || r.Pol != c.pol || r.Points < 600 || r.Fit.IDRMS == nil || r.Fit.IDMax == nil || r.Fit.GmIDRMS == nil || r.Fit.GDSRMS == nil {
			t.Errorf("%s: %+v", c.file, r)
		}
		for _, k := range []string{"weak", "moderate", "strong", "triode", "saturation"} {
			if g, ok := r.Fit.Regions[k]; !ok || g.Points == 0 || g.IDRMS == nil {
				t.Errorf("%s: region %s = %+v", c.file, k, g)
			}
		}
		for _, k := range []string{"thresh", "mobility", "body", "lenmod", "dibl"} {
			if _, ok := r.Params[k]; !ok {
				t.Errorf("%s: params lack %s", c.file, k)
			}
		}
		if !strings.HasPrefix(r.Fragment, c.pol+".") || strings.Contains(r.Fragment, "vt0") {
			t.Errorf("%s: fragment %q", c.file, r.Fragment)
		}
		fragments = append(fragments, r.Fragment)
	}
	// The process file holds both polarities; a design on it evaluates and
	// its figures are those of the fit's own fragment.
	text, err := os.ReadFile(proc)
	if err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(string(text), `"n": {`) || !strings.Contains(string(text), `"p": {`) {
		t.Fatalf("the process file lacks a polarity:\n%s", text)
	}
	const design = "stage=cs&pol=n&load=active&l=350n&ll=1u&bias=id&id=50u"
	code, viaFile, errs := runCLI([]string{"eval", "-process", proc, design}, "")
	if code != 0 {
		t.Fatalf("eval -process: exit %d: %s", code, errs)
	}
	code, viaLink, errs := runCLI([]string{"eval", "v=2&proc=d180&" + design + "&" + fragments[0] + "&" + fragments[1]}, "")
	if code != 0 {
		t.Fatalf("eval with the fit's keys: exit %d: %s", code, errs)
	}
	gain := func(out string) float64 {
		var r struct{ Midband struct{ Gain float64 } }
		if err := json.Unmarshal([]byte(out), &r); err != nil {
			t.Fatal(err)
		}
		return r.Midband.Gain
	}
	if g1, g2 := gain(viaFile), gain(viaLink); g1 != g2 || g1 == 0 {
		t.Errorf("gain %g on the process file, %g with the fit's keys in the link", g1, g2)
	}
	_, onBase, _ := runCLI([]string{"eval", "v=2&proc=d180&" + design}, "")
	if gain(onBase) == gain(viaFile) {
		t.Error("the process file changed nothing")
	}
}

func TestFitBadInput(t *testing.T) {
	dir := t.TempDir()
	bad := filepath.Join(dir, "bad.csv")
	if err := os.WriteFile(bad, []byte("vgs,vds,id,w,l\n0.5,1,1u,1u,1u\n0.6,1,1.2x,1u,1u\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	for _, c := range []struct {
		args []string
		code int
		want string
	}{
		{[]string{"fit", bad, "-pol", "n"}, 1, "line 3, column 3 (id)"},
		{[]string{"fit", filepath.Join(dir, "none.csv"), "-pol", "n"}, 1, "none.csv"},
		{[]string{"fit", demoN}, 2, "-pol must be n or p"},
		{[]string{"fit", demoN, "-pol", "n", "-base", "x9"}, 2, `-base "x9"`},
		{[]string{"fit", demoN, "-pol", "n", "-process", "a"}, 2, "go together"},
		{[]string{"fit", demoN, "-pol", "n", "-w", "ten"}, 2, "-w"},
		{[]string{"fit", demoP, "-pol", "n"}, 1, "loaded as n-type"},
		{[]string{"eval", "-process", filepath.Join(dir, "none.json"), "stage=cs"}, 2, "none.json"},
		{[]string{"eval", "-process", bad, "stage=cs"}, 2, "process file"},
	} {
		code, out, errs := runCLI(c.args, "")
		if code != c.code || !strings.Contains(errs, c.want) {
			t.Errorf("%v: exit %d, stderr %q; want exit %d and %q", c.args, code, errs, c.code, c.want)
		}
		if c.code == 1 && strings.HasPrefix(strings.Join(c.args, " "), "fit") {
			var r fitOutput
			if err := json.Unmarshal([]byte(out), &r); err != nil || r.OK || r.Error == nil || r.Error.Key != "file" {
				t.Errorf("%v: stdout %q, want ok false with an error naming the file", c.args, out)
			}
		}
	}
}
