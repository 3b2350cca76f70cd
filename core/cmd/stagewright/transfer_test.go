package main

import (
	"bytes"
	"encoding/csv"
	"encoding/json"
	"io"
	"math"
	"strings"
	"testing"

	"stagewright/core/transfer"
)

type runFunc func(args []string, stdin io.Reader, stdout, stderr io.Writer) int

func runAid(cmd runFunc, args ...string) (code int, stdout, stderr string) {
	var out, errb bytes.Buffer
	code = cmd(args, strings.NewReader(""), &out, &errb)
	return code, out.String(), errb.String()
}

const transferFrag = "v=1&stage=cs&pol=n&w=20u&l=0.5u&bias=id&id=100u&load=r&rd=10k"

func TestTransferCommandJSON(t *testing.T) {
	code, out, errs := runAid(cmdTransfer, transferFrag)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	var r struct {
		Vin, Vout, Gain  []float64
		Region1, Region2 []string
		OpIndex          int     `json:"op_index"`
		InLo             float64 `json:"in_lo"`
		InHi             float64 `json:"in_hi"`
		Swing            float64 `json:"swing"`
		LimitLo          string  `json:"limit_lo"`
		OutOp            float64 `json:"out_op"`
		HeadroomHi       float64 `json:"headroom_hi"`
		HeadroomLo       float64 `json:"headroom_lo"`
		SwingSym         float64 `json:"swing_sym"`
		LimitOutHi       string  `json:"limit_out_hi"`
		LimitOutLo       string  `json:"limit_out_lo"`
		Runs             []struct {
			From, To int
		}
	}
	if err := json.Unmarshal([]byte(out), &r); err != nil {
		t.Fatalf("not JSON: %v\n%s", err, out)
	}
	if n := len(r.Vin); n < 201 || len(r.Vout) != n || len(r.Gain) != n || len(r.Region1) != n || len(r.Region2) != n {
		t.Fatalf("series lengths %d %d %d %d %d", len(r.Vin), len(r.Vout), len(r.Gain), len(r.Region1), len(r.Region2))
	}
	if !(r.InLo < r.InHi && r.Swing > 0 && r.LimitLo != "" && len(r.Runs) > 0) {
		t.Errorf("summary: %+v", r)
	}
	// A resistor-loaded cs stage: the output rises to the supply as M1
	// turns off, and falls until M1 leaves saturation.
	if r.LimitOutHi != transfer.LimitSupply || r.LimitOutLo != transfer.LimitM1 ||
		!(r.HeadroomHi > 0 && r.HeadroomLo > 0) || r.SwingSym != 2*math.Min(r.HeadroomHi, r.HeadroomLo) ||
		math.Abs(r.OutOp-r.Vout[r.OpIndex]) > 1e-7 { // the series are written to 8 digits
		t.Errorf("swing around the operating point: out %g, up %g (%q), down %g (%q), symmetric %g",
			r.OutOp, r.HeadroomHi, r.LimitOutHi, r.HeadroomLo, r.LimitOutLo, r.SwingSym)
	}
	// The same design from the eval command: the gain at the operating
	// point (1e-6, as the transfer package's own check).
	_, evalOut, _ := runAid(run, "eval", transferFrag)
	var e struct{ Midband struct{ Gain float64 } }
	if err := json.Unmarshal([]byte(evalOut), &e); err != nil {
		t.Fatal(err)
	}
	if g := r.Gain[r.OpIndex]; math.Abs(g-e.Midband.Gain) > 1e-6*math.Abs(e.Midband.Gain) {
		t.Errorf("gain at the operating point %g, eval %g", g, e.Midband.Gain)
	}
}

func TestTransferCommandCSV(t *testing.T) {
	for _, args := range [][]string{{transferFrag, "-csv", "-points", "11"}, {"-csv", "-points=11", transferFrag}} {
		code, out, errs := runAid(cmdTransfer, args...)
		if code != 0 {
			t.Fatalf("%v: exit %d: %s", args, code, errs)
		}
		rows, err := csv.NewReader(strings.NewReader(out)).ReadAll()
		if err != nil {
			t.Fatal(err)
		}
		if strings.Join(rows[0], ",") != "vin,vout,gain,region1,region2" {
			t.Errorf("header %v", rows[0])
		}
		// The 11 levels of the grid, refined where the curve is steep (at
		// most RefineFactor × 11 + 1 levels).
		if n := len(rows) - 1; n < 11 || n > transfer.RefineFactor*11+1 {
			t.Errorf("%d rows for 11 points", n)
		}
		if !strings.Contains(errs, "up ") || !strings.Contains(errs, "down ") || !strings.Contains(errs, "symmetric ") {
			t.Errorf("no swing line on stderr: %q", errs)
		}
		if rows[1][0] != "0" || rows[len(rows)-1][0] != "1.8" {
			t.Errorf("rows span %s … %s, want 0 … 1.8", rows[1][0], rows[len(rows)-1][0])
		}
	}
}

func TestDistortionCommand(t *testing.T) {
	code, out, errs := runAid(cmdDistortion, transferFrag, "-amp", "1m")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	var r map[string]any
	if err := json.Unmarshal([]byte(out), &r); err != nil {
		t.Fatalf("not JSON: %v\n%s", err, out)
	}
	if r["amp"] != 0.001 || r["small_signal_ok"] != true {
		t.Errorf("amp %v, small_signal_ok %v", r["amp"], r["small_signal_ok"])
	}
	for _, k := range []string{"hd2", "hd3", "thd", "hd2_db", "hd3_db", "thd_db", "taylor_hd2", "taylor_hd3"} {
		if _, ok := r[k].(float64); !ok {
			t.Errorf("%s = %v, want a number", k, r[k])
		}
	}
	// Default amplitude 10 mV: HD2 ten times the 1 mV value (HD2 ∝ A at
	// small amplitude, common practice), to 1 %.
	_, out10, _ := runAid(cmdDistortion, transferFrag)
	var r10 map[string]any
	if err := json.Unmarshal([]byte(out10), &r10); err != nil {
		t.Fatal(err)
	}
	if ratio := r10["hd2"].(float64) / r["hd2"].(float64); math.Abs(ratio-10) > 0.1 {
		t.Errorf("HD2(10 mV)/HD2(1 mV) = %g", ratio)
	}
}

func TestAidCommandStatus(t *testing.T) {
	for _, c := range []struct {
		cmd  runFunc
		args []string
		code int
		key  string
	}{
		{cmdTransfer, nil, 2, ""},
		{cmdTransfer, []string{transferFrag, "extra"}, 2, ""},
		{cmdTransfer, []string{transferFrag, "-bogus"}, 2, ""},
		{cmdTransfer, []string{transferFrag, "-points", "1"}, 2, ""},
		{cmdTransfer, []string{"v=1&w=zz"}, 1, "w"},
		{cmdTransfer, []string{"v=1&bias=id&id=10m&rd=10k"}, 1, "rd"},
		{cmdTransfer, []string{"-h"}, 0, ""},
		{cmdDistortion, []string{transferFrag, "-amp"}, 2, ""},
		{cmdDistortion, []string{transferFrag, "-amp", "x"}, 2, ""},
		{cmdDistortion, []string{transferFrag, "-amp", "5"}, 1, "amp"},
		{cmdDistortion, []string{"v=1&stage=xx"}, 1, "stage"},
		{cmdDistortion, []string{"--help"}, 0, ""},
	} {
		code, out, errs := runAid(c.cmd, c.args...)
		if code != c.code {
			t.Errorf("%v: exit %d, want %d (%s)", c.args, code, c.code, errs)
			continue
		}
		if c.code == 1 {
			var r struct {
				OK    bool
				Error struct{ Key, Message string }
			}
			if err := json.Unmarshal([]byte(out), &r); err != nil || r.OK || r.Error.Key != c.key || errs == "" {
				t.Errorf("%v: output %q, stderr %q; want an error naming %q", c.args, out, errs, c.key)
			}
		}
		if c.code == 2 && errs == "" {
			t.Errorf("%v: usage error without a message", c.args)
		}
	}
}
