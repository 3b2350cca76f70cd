package main

import (
	"bytes"
	"encoding/csv"
	"encoding/json"
	"math"
	"strings"
	"testing"
)

func corners(args ...string) (int, string, string) {
	var out, errb bytes.Buffer
	code := cmdCorners(args, strings.NewReader(""), &out, &errb)
	return code, out.String(), errb.String()
}

func mc(args ...string) (int, string, string) {
	var out, errb bytes.Buffer
	code := cmdMC(args, strings.NewReader(""), &out, &errb)
	return code, out.String(), errb.String()
}

const demoFragment = "v=1&stage=cs&pol=n&bias=vin&vin=0.7&load=r&rd=5k"

func TestCornersCommand(t *testing.T) {
	code, out, errs := corners(demoFragment)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	var r struct {
		OK   bool
		Rows []struct {
			Corner string
			Temp   float64
			VDD    float64
			OK     bool
			ID     *float64
		}
	}
	if err := json.Unmarshal([]byte(out), &r); err != nil {
		t.Fatal(err)
	}
	if !r.OK || len(r.Rows) != 45 {
		t.Fatalf("ok %v, %d rows", r.OK, len(r.Rows))
	}
	// Common practice: at a fixed input level the slow corner carries the
	// least current, the fast one the most.
	var ss, ff, tt float64
	for _, row := range r.Rows {
		if row.Temp == 27 && row.VDD == 1.8 && row.ID != nil {
			switch row.Corner {
			case "ss":
				ss = *row.ID
			case "ff":
				ff = *row.ID
			case "tt":
				tt = *row.ID
			}
		}
	}
	if !(ss < tt && tt < ff) {
		t.Errorf("ID ss %g tt %g ff %g", ss, tt, ff)
	}

	// The same table as CSV, flag before or after the fragment.
	for _, args := range [][]string{{"-csv", demoFragment}, {demoFragment, "-csv"}} {
		code, out, _ = corners(args...)
		recs, err := csv.NewReader(strings.NewReader(out)).ReadAll()
		if code != 0 || err != nil || len(recs) != 46 || recs[0][0] != "corner" || len(recs[1]) != 16 {
			t.Errorf("%v: exit %d, %v, %d records", args, code, err, len(recs))
		}
	}
}

func TestMCCommand(t *testing.T) {
	code, out, errs := mc(demoFragment, "-n", "500", "-seed", "3", "-t.gain", "3.9", "-t.noise", "10u")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	var r struct {
		OK bool
		MC struct {
			Samples    int
			Seed       int64
			Yield      *float64
			Covered    []string `json:"covered"`
			NotCovered []string `json:"not_covered"`
			Gain       struct {
				N    int
				Hist struct{ Counts []int }
			}
		}
	}
	if err := json.Unmarshal([]byte(out), &r); err != nil {
		t.Fatal(err)
	}
	if !r.OK || r.MC.Samples != 500 || r.MC.Seed != 3 || r.MC.Yield == nil || len(r.MC.Gain.Hist.Counts) != 30 {
		t.Fatalf("%s", out)
	}
	// About half the samples reach the mean gain; four binomial standard
	// errors √(0.25/500) ≈ 2.2 % each side.
	if y := *r.MC.Yield; math.Abs(y-0.5) > 0.09 {
		t.Errorf("yield %g", y)
	}
	if strings.Join(r.MC.Covered, ",") != "gain" || strings.Join(r.MC.NotCovered, ",") != "noise" {
		t.Errorf("covered %v, not covered %v", r.MC.Covered, r.MC.NotCovered)
	}
	// Deterministic: the same command gives the same bytes.
	_, again, _ := mc(demoFragment, "-n", "500", "-seed", "3", "-t.gain", "3.9", "-t.noise", "10u")
	if again != out {
		t.Error("the same seed gave different output")
	}
}

func TestVariationCommandErrors(t *testing.T) {
	for _, c := range []struct {
		name string
		run  func(...string) (int, string, string)
		args []string
		code int
	}{
		{"corners no fragment", corners, nil, 2},
		{"corners two fragments", corners, []string{demoFragment, "x=1"}, 2},
		{"corners unknown flag", corners, []string{"-x", demoFragment}, 2},
		{"corners bad fragment", corners, []string{"v=1&w=-3"}, 1},
		{"corners gmid without op", corners, []string{"v=1&bias=gmid&gmid=40"}, 1},
		{"mc too many", mc, []string{demoFragment, "-n", "10001"}, 2},
		{"mc bad number", mc, []string{demoFragment, "-n", "many"}, 2},
		{"mc bad target", mc, []string{demoFragment, "-t.gain", "-1"}, 2},
		{"mc bad fragment", mc, []string{"v=1&stage=xx"}, 1},
		{"mc no operating point", mc, []string{"v=1&stage=cs&pol=n&bias=id&id=10m&load=r&rd=100k"}, 1},
		{"mc help", mc, []string{"-h"}, 0},
	} {
		code, out, errs := c.run(c.args...)
		if code != c.code {
			t.Errorf("%s: exit %d, want %d (%s)", c.name, code, c.code, errs)
		}
		if c.code == 1 {
			var r struct {
				OK    bool
				Error struct{ Code, Message string }
			}
			if err := json.Unmarshal([]byte(out), &r); err != nil || r.OK || r.Error.Message == "" || errs == "" {
				t.Errorf("%s: output %q, stderr %q", c.name, out, errs)
			}
		}
	}
}

// The fragment's mc and seed keys set the run when no flag is given.
func TestMCFromFragment(t *testing.T) {
	var out, errb bytes.Buffer
	if code := run([]string{"mc", "stage=cs&load=r&mc=200&seed=3"}, strings.NewReader(""), &out, &errb); code != 0 {
		t.Fatalf("exit %d: %s", code, errb.String())
	}
	if !strings.Contains(out.String(), `"samples":200`) && !strings.Contains(out.String(), `"n":200`) {
		t.Errorf("the run did not take mc=200 from the fragment: %.300s", out.String())
	}
}
