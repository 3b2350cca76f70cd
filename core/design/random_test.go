package design

import (
	"fmt"
	"math"
	"math/rand"
	"sort"
	"strings"
	"testing"

	"stagewright/core/circuit"
	"stagewright/core/device"
	"stagewright/core/stage"
	"stagewright/core/units"
)

// randomFragment draws one design across every documented range: each
// stage, load, polarity, bias mode and process, −40 … 125 °C, geometry over
// the process limits, currents 1 nA … 10 mA, resistances 1 Ω … 1 GΩ.
func randomFragment(rng *rand.Rand) string {
	logU := func(lo, hi float64) float64 { return lo * math.Pow(hi/lo, rng.Float64()) }
	pick := func(s ...string) string { return s[rng.Intn(len(s))] }
	proc := pick("d180", "d65")
	pr, _ := device.Builtin(proc)
	vdd := pr.VDD
	st := pick("cs", "cg", "sf")
	load := pick("r", "active", "diode")
	if st == "sf" && load == "diode" {
		load = pick("r", "active")
	}
	num := func(v float64) string { return units.Exact(v) }
	kv := []string{
		"v=1", "stage=" + st, "pol=" + pick("n", "p"), "proc=" + proc, "load=" + load,
		"bias=" + pick("id", "id", "vin", "gmid"),
		"temp=" + num(math.Round(-40+165*rng.Float64())),
		"w=" + num(logU(pr.WMin, math.Min(pr.WMax, 1e-3))),
		"l=" + num(logU(pr.LMin, pr.LMax)),
		"id=" + num(logU(1e-9, 10e-3)),
		"gmid=" + num(math.Round(3+25*rng.Float64())),
		"vin=" + num(math.Round(1000*vdd*rng.Float64())/1000),
		"vg=" + num(math.Round(1000*vdd*rng.Float64())/1000),
		"vout=" + num(math.Round(1000*vdd*(0.05+0.9*rng.Float64()))/1000),
		"rd=" + num(logU(1, 1e9)),
		"lw=" + num(logU(pr.WMin, math.Min(pr.WMax, 1e-3))),
		"ll=" + num(logU(pr.LMin, pr.LMax)),
		"vbl=" + num(math.Round(1000*vdd*rng.Float64())/1000),
		"rsig=" + num(logU(1, 1e9)),
		"ppd=" + num(float64(5+rng.Intn(20))),
	}
	if st == "sf" && load == "r" || rng.Intn(3) == 0 {
		kv = append(kv, "rs="+num(logU(1, 1e9)))
	}
	if rng.Intn(2) == 0 {
		kv = append(kv, "rl="+num(logU(1, 1e9)))
	}
	if rng.Intn(4) != 0 {
		kv = append(kv, "cl="+num(logU(1e-15, 1e-9)))
	}
	return strings.Join(kv, "&")
}

// Random designs: each either converges to an operating point that obeys
// KCL at every node and reports only finite numbers, or says clearly why
// there is none. Never a panic, never NaN.
func TestRandomDesigns(t *testing.T) {
	n := 10000
	if testing.Short() {
		n = 1000
	}
	rng := rand.New(rand.NewSource(20261201))
	var e Evaluator
	ok, iters := 0, []int{}
	reasons := map[string]int{}
	for i := 0; i < n; i++ {
		frag := randomFragment(rng)
		d, err := Decode(frag)
		if err != nil {
			// A draw can break a cross-key rule (vin above vdd cannot
			// happen, but a sweep too long can); it must say so.
			if !strings.Contains(err.Error(), "=") {
				t.Errorf("%s: unclear decode error %q", frag, err)
			}
			continue
		}
		r := e.Evaluate(d)
		if !r.OK {
			if r.Error == nil || len(r.Error.Message) < 20 || r.Error.Code == "internal" {
				t.Errorf("%s: unclear failure %+v", frag, r.Error)
			}
			reasons[r.Error.Code]++
			if genericFailure(r.Error) {
				t.Errorf("%s: a failure of the solver reported as the design's: %s", frag, r.Error.Message)
			}
			continue
		}
		ok++
		iters = append(iters, r.Iterations)
		checkFinite(t, frag, &r)
		if i%10 == 0 { // KCL on a tenth of them: it re-solves the circuit
			checkKCLOf(t, d)
		}
		if t.Failed() {
			t.Fatalf("stopping after the first failing design: %s", frag)
		}
	}
	sort.Ints(iters)
	med := 0
	if len(iters) > 0 {
		med = iters[len(iters)/2]
	}
	t.Logf("%d random designs: %d evaluated (%.1f %%), median %d Newton iterations, slowest %d; failures by code %v",
		n, ok, 100*float64(ok)/float64(n), med, iters[len(iters)-1], reasons)
	if ok < n/4 {
		t.Errorf("only %d of %d random designs have an operating point", ok, n)
	}
}

// genericFailure says whether a failure blames the design for what is the
// solver's: a no_operating_point whose message carries the solver's report
// instead of a cause in the user's terms. Every such failure must be a
// named cause or carry CodeSolverFailed.
func genericFailure(f *Failure) bool {
	return f.Code == "no_operating_point" &&
		(strings.Contains(f.Message, "found no operating point") || strings.Contains(f.Message, "no DC solution") ||
			strings.Contains(f.Message, "cannot be biased"))
}

func checkKCLOf(t *testing.T, d Design) {
	t.Helper()
	spec, err := d.Spec()
	if err != nil {
		t.Fatal(err)
	}
	sol, err := stage.Solve(spec)
	if err != nil {
		t.Fatalf("%s: re-solve failed: %v", d.Encode(), err)
	}
	if err := sol.C.CheckKCL(sol.OP, circuit.Options{}); err != nil {
		t.Errorf("%s: %v", d.Encode(), err)
	}
	if sol.OP.Method == "bracketed" {
		// The bracketed solve's roots are held to CheckKCL alone: its
		// floor includes the model's floating-point resolution, and a
		// strong device at VDS ≈ 0 resolves its current only to a few
		// 1e-17 A (a 0.35 S load at 2 fV steps its ID by 2.8e-17 A between
		// adjacent doubles, measured on a design of the full run), above
		// the 1e-17 A floor below, which is Newton's stopping rule.
		return
	}
	imb, mag := sol.C.KCL(sol.OP)
	for k := 1; k < len(imb); k++ {
		// Newton stops at a relative residual of 1e-9 plus gmin (1e-12 S)
		// times the node voltage; allow ten times that.
		if math.Abs(imb[k]) > 1e-8*mag[k]+1e-11*math.Abs(sol.OP.V[k])+1e-17 {
			t.Errorf("%s: KCL at %s off by %.3g A of %.3g A", d.Encode(), sol.C.NodeName(circuit.Node(k)), imb[k], mag[k])
		}
	}
}

func ExampleEvaluate() {
	d, _ := Decode("v=1&stage=cs&pol=n&proc=d180&w=10u&l=0.5u&bias=id&id=100u&load=r&rd=10k")
	r := Evaluate(d)
	fmt.Printf("gain %.4g V/V, rout %.4g Ω, gm %.4g S, region %s\n", float64(r.Midband.Gain), float64(r.Midband.Rout), float64(r.OP.GM), r.OP.Region)
	// Output: gain -7.096 V/V, rout 9627 Ω, gm 0.0007371 S, region saturation
}
