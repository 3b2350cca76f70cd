//go:build js && wasm

package main

import "testing"

// The design aids through globalThis.stagewright under Node, as the Worker
// calls them: a curve, and a Monte Carlo run stepped to its end (the job's
// goroutine computes while the step call waits, which must not deadlock the
// JavaScript event loop).
func TestGlueAids(t *testing.T) {
	ns := namespace(t)
	resp, err := ns.Call("transfer", aidBase)
	if err != nil {
		t.Fatal(err)
	}
	n, err := field(t, resp, "result", "vout").Length()
	if err != nil || n < 100 {
		t.Fatalf("transfer vout has %d points (%v)", n, err)
	}
	resp, err = ns.Call("montecarloStart", aidBase+"&mc=300")
	if err != nil {
		t.Fatal(err)
	}
	run, _ := field(t, resp, "result", "run").String()
	for i := 0; ; i++ {
		if i > 1000 {
			t.Fatal("Monte Carlo did not finish in 1000 steps")
		}
		resp, err = ns.Call("step", run)
		if err != nil {
			t.Fatal(err)
		}
		if fin, _ := field(t, resp, "result", "finished").Bool(); fin {
			break
		}
	}
	samples, _ := field(t, resp, "result", "result", "samples").Int()
	if samples != 300 {
		t.Errorf("%d samples, want 300", samples)
	}
}

// fitStart takes two strings; through the glue, a bad file comes back as
// an error object naming the line and the column.
func TestGlueFitBadFile(t *testing.T) {
	ns := namespace(t)
	resp, err := ns.Call("fitStart", "vgs,vds,id\n0.1,0.2,zz\n", "pol=n&w=1u&l=1u")
	if err != nil {
		t.Fatal(err)
	}
	run, _ := field(t, resp, "result", "run").String()
	resp, err = ns.Call("step", run)
	if err != nil {
		t.Fatal(err)
	}
	code, _ := field(t, resp, "error", "code").String()
	msg, _ := field(t, resp, "error", "message").String()
	if code != CodeData || msg[:len("line 2, column 3")] != "line 2, column 3" {
		t.Errorf("bad file through the glue: code %q, message %q", code, msg)
	}
}
