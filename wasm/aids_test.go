package main

import (
	"encoding/json"
	"math"
	"strings"
	"testing"

	"stagewright/core/design"
	"stagewright/core/sizing"
	"stagewright/core/variation"
)

// A resistor-loaded common-source stage of the d180 demo process that is
// well inside saturation, the base of most checks here.
const aidBase = "v=1&stage=cs&pol=n&proc=d180&bias=id&id=100u&load=r&rd=5k&cl=1p"

func aidCall(t *testing.T, method string, arg string) decoded {
	t.Helper()
	return call(t, method, StringArg(arg))
}

func mustResult(t *testing.T, method string, d decoded, into any) {
	t.Helper()
	if d.Error != nil {
		t.Fatalf("%s: error %+v", method, *d.Error)
	}
	if err := json.Unmarshal(d.Result, into); err != nil {
		t.Fatalf("%s: result does not decode: %v (%.200s)", method, err, d.Result)
	}
}

func TestAidMethodsAreRegistered(t *testing.T) {
	names := aidMethodNames()
	for _, want := range []string{"transfer", "distortion", "corners", "charts", "sweep", "compare", "montecarloStart", "sizeStart", "fitStart", "step", "cancel"} {
		found := false
		for _, n := range names {
			found = found || n == want
		}
		if !found {
			t.Errorf("method %s not registered (have %v)", want, names)
		}
	}
}

func TestAidRequestErrors(t *testing.T) {
	cases := []struct {
		method string
		args   []Arg
		code   string
		key    string
	}{
		{"transfer", nil, CodeRequest, ""},
		{"corners", []Arg{OtherArg("number")}, CodeRequest, ""},
		{"charts", []Arg{StringArg("v=1&w=banana")}, CodeFragment, "w"},
		{"sweep", []Arg{StringArg(strings.Repeat("x", maxFragmentBytes+1))}, CodeRequest, ""},
		{"compare", []Arg{StringArg(aidBase)}, CodeAnalysis, "pin"},
		{"montecarloStart", []Arg{StringArg(aidBase + "&mc=0")}, CodeAnalysis, "mc"},
		{"sizeStart", []Arg{StringArg(aidBase)}, CodeAnalysis, ""}, // no target set
		{"step", []Arg{StringArg("montecarlo-999999")}, CodeRequest, ""},
	}
	for _, c := range cases {
		d := call(t, c.method, c.args...)
		if d.Error == nil {
			t.Errorf("%s%v: no error", c.method, c.args)
			continue
		}
		if d.Error.Code != c.code || d.Error.Key != c.key {
			t.Errorf("%s: code %q key %q, want %q %q (%s)", c.method, d.Error.Code, d.Error.Key, c.code, c.key, d.Error.Message)
		}
		if !strings.HasPrefix(d.Error.Message, c.method) {
			t.Errorf("%s: message %q does not name the method", c.method, d.Error.Message)
		}
	}
}

func TestTransferMatchesTheOperatingPoint(t *testing.T) {
	var tr struct {
		Vin, Vout, Gain []float64
		OpIndex         int     `json:"op_index"`
		Swing           float64 `json:"swing"`
		LimitLo         string  `json:"limit_lo"`
		Runs            []struct{ From, To int }
	}
	mustResult(t, "transfer", aidCall(t, "transfer", aidBase), &tr)
	r := new(design.Evaluator).EvaluateFragment(aidBase)
	if !r.OK || r.Midband == nil {
		t.Fatal("base design has no result")
	}
	// The curve passes through the operating point and its slope there is
	// the midband gain (the small-signal gain is the derivative of the DC
	// transfer: common practice). 1e-6 relative: both come from the same
	// converged Newton solution, so only the solver's tolerance separates them.
	i := tr.OpIndex
	if i < 0 || i >= len(tr.Vout) || len(tr.Vin) != len(tr.Vout) {
		t.Fatalf("op_index %d of %d points", i, len(tr.Vout))
	}
	if g, want := tr.Gain[i], float64(r.Midband.Gain); math.Abs(g-want) > 1e-6*math.Abs(want) {
		t.Errorf("gain at the operating point %g, midband gain %g", g, want)
	}
	// A common-source stage inverts: the output falls as the gate rises (common practice).
	for k := 1; k < len(tr.Vout); k++ {
		if tr.Vout[k] > tr.Vout[k-1]+1e-9 {
			t.Fatalf("vout rises from %g to %g at vin %g", tr.Vout[k-1], tr.Vout[k], tr.Vin[k])
		}
	}
	if !(tr.Swing > 0) || tr.LimitLo == "" || len(tr.Runs) == 0 {
		t.Errorf("swing %g, limit %q, %d runs", tr.Swing, tr.LimitLo, len(tr.Runs))
	}
}

func TestDistortionAgreesWithTaylorAtSmallAmplitude(t *testing.T) {
	var l struct {
		HD2       float64 `json:"hd2"`
		TaylorHD2 float64 `json:"taylor_hd2"`
		OK        bool    `json:"small_signal_ok"`
		HD2dB     float64 `json:"hd2_db"`
	}
	mustResult(t, "distortion", aidCall(t, "distortion", aidBase+"&amp=1m"), &l)
	// At 1 mV the cubic Taylor series describes the transfer (textbook:
	// HD2 ≈ a2·A/(2·a1)); 10 % is the core's own AgreeTolerance.
	if !l.OK || math.Abs(l.HD2-l.TaylorHD2) > 0.1*l.TaylorHD2 {
		t.Errorf("hd2 %g vs Taylor %g (small_signal_ok %v)", l.HD2, l.TaylorHD2, l.OK)
	}
	// dBc is 20·log10 of the ratio (definition); 1e-9 dB is rounding.
	if math.Abs(l.HD2dB-20*math.Log10(l.HD2)) > 1e-9 {
		t.Errorf("hd2 %g dBc for a ratio %g", l.HD2dB, l.HD2)
	}
	// Ten times the amplitude gives about ten times HD2 (HD2 ∝ A, textbook); 30 % allows the A³ terms.
	var big struct {
		HD2 float64 `json:"hd2"`
	}
	mustResult(t, "distortion", aidCall(t, "distortion", aidBase+"&amp=10m"), &big)
	if r := big.HD2 / l.HD2; r < 7 || r > 13 {
		t.Errorf("HD2 grew %gx for 10x the amplitude", r)
	}
}

func TestCornersTable(t *testing.T) {
	var rows []struct {
		Corner string
		Temp   float64
		VDD    float64
		OK     bool
		Gain   *float64
	}
	frag := aidBase + "&hold=ideal"
	mustResult(t, "corners", aidCall(t, "corners", frag), &rows)
	// Five corners at −40, 27 and 125 °C (the design's own 27 °C is one of
	// them), each at the supply and ±10 %.
	if len(rows) != 45 {
		t.Fatalf("%d rows, want 45", len(rows))
	}
	r := new(design.Evaluator).EvaluateFragment(frag)
	for _, row := range rows {
		if row.Corner == "tt" && row.Temp == 27 && row.VDD == float64(r.Nodes["vdd"]) {
			// The tt row at the design's temperature is the design itself (same solver: 1e-9).
			if row.Gain == nil || math.Abs(*row.Gain-float64(r.Midband.Gain)) > 1e-9*math.Abs(float64(r.Midband.Gain)) {
				t.Errorf("tt 27 °C gain %v, design %g", row.Gain, r.Midband.Gain)
			}
		}
	}
}

func TestChartsStayBelowTheWeakInversionLimit(t *testing.T) {
	var c struct {
		GmID      []float64 `json:"gm_id"`
		N         []float64 `json:"n"`
		TempK     float64   `json:"temp_k"`
		Saturated []bool    `json:"saturated"`
		Present   *struct {
			GmID float64 `json:"gm_id"`
		} `json:"present"`
	}
	mustResult(t, "charts", aidCall(t, "charts", aidBase), &c)
	if len(c.GmID) != chartPoints || c.Present == nil {
		t.Fatalf("%d points, present %v", len(c.GmID), c.Present)
	}
	// gm/ID ≤ 1/(n·UT), UT = kT/q (textbook, weak inversion); k and q are
	// the exact SI values. n is not the chart's own: the source sits on the
	// bulk, so a weakly inverted channel has VP ≤ 0 and a slope factor no
	// smaller than at VP = 0, which the EKV form n = 1 + γ/(2·√(2φF + VP))
	// (Enz & Vittoz 2006) gives from the process's γ = 0.45 √V and
	// 2φF = 0.85 V: 1.2440, so 31.08 S/A at 27 °C. The model's guard term
	// (+4UT under the root) lowers its n at VP = 0 by 1.1 %, and moderate
	// inversion costs more gm/ID than that; 1.2 % allows it, and a chart
	// whose gm/ID came out a few per cent high would still fail.
	const k, q = 1.380649e-23, 1.602176634e-19
	ut := k * c.TempK / q
	n0 := 1 + 0.45/(2*math.Sqrt(0.85))
	lim := 1 / (n0 * ut)
	for i, g := range c.GmID {
		if g > lim*1.012 {
			t.Errorf("point %d: gm/ID %g above 1/(n₀·UT) = %g", i, g, lim)
		}
	}
	// The chart's n stays above 1 and falls as the gate rises (EKV: n falls
	// with VP).
	for i := 1; i < len(c.N); i++ {
		if !(c.N[i] >= 1 && c.N[i] <= c.N[i-1]) {
			t.Errorf("point %d: n = %g (previous %g), want above 1 and falling", i, c.N[i], c.N[i-1])
			break
		}
	}
}

func TestSweepAndCompare(t *testing.T) {
	var s struct {
		Key    string
		Values []float64
		Series []struct {
			Name   string
			Values []*float64
		}
	}
	mustResult(t, "sweep", aidCall(t, "sweep", aidBase+"&sw=rd&sw.lo=1k&sw.hi=10k&sw.n=7"), &s)
	if s.Key != "rd" || len(s.Values) != 7 || s.Values[0] != 1e3 || s.Values[6] != 10e3 {
		t.Fatalf("sweep of %s over %v", s.Key, s.Values)
	}
	for _, ser := range s.Series {
		if ser.Name == "gain" {
			// |A| ≈ gm·(RD‖ro) grows with RD at a fixed current (common practice).
			if ser.Values[0] == nil || ser.Values[6] == nil || math.Abs(*ser.Values[6]) <= math.Abs(*ser.Values[0]) {
				t.Errorf("gain over rd: %v … %v", ser.Values[0], ser.Values[6])
			}
		}
	}
	// A design compared with itself pinned differs in nothing.
	d, err := design.Decode(aidBase)
	if err != nil {
		t.Fatal(err)
	}
	pinned := d
	d.Aids.Pin = &pinned
	var c struct {
		Rows []struct {
			Name string
			Diff *float64
		}
	}
	mustResult(t, "compare", aidCall(t, "compare", d.Encode()), &c)
	if len(c.Rows) == 0 {
		t.Fatal("no rows")
	}
	for _, r := range c.Rows {
		if r.Diff != nil && *r.Diff != 0 {
			t.Errorf("%s differs by %g from itself", r.Name, *r.Diff)
		}
	}
}

type jobView struct {
	Run      string          `json:"run"`
	Done     int             `json:"done"`
	Total    int             `json:"total"`
	Finished bool            `json:"finished"`
	Result   json.RawMessage `json:"result"`
}

// runJob starts a job and steps it to the end, at most maxSteps steps.
func runJob(t *testing.T, start, fragment string, maxSteps int) (jobView, int) {
	t.Helper()
	var j jobView
	mustResult(t, start, aidCall(t, start, fragment), &j)
	if j.Finished || j.Done != 0 {
		t.Fatalf("%s: a new run is finished or has work done: %+v", start, j)
	}
	steps := 0
	for !j.Finished {
		if steps++; steps > maxSteps {
			t.Fatalf("%s: not finished after %d steps", start, maxSteps)
		}
		prev := j.Done
		mustResult(t, "step", aidCall(t, "step", j.Run), &j)
		if j.Done < prev || j.Done > j.Total {
			t.Fatalf("progress went from %d to %d of %d", prev, j.Done, j.Total)
		}
	}
	return j, steps
}

func TestMonteCarloInStepsIsTheWholeRun(t *testing.T) {
	frag := aidBase + "&mc=2000&seed=7&t.gain=3"
	j, _ := runJob(t, "montecarloStart", frag, 10000)
	var stepped variation.MCResult
	if err := json.Unmarshal(j.Result, &stepped); err != nil {
		t.Fatal(err)
	}
	d, _ := design.Decode(frag)
	whole, err := variation.MonteCarlo(d, 2000, 7, &variation.Targets{MinGain: 3})
	if err != nil {
		t.Fatal(err)
	}
	// Pausing between blocks changes nothing: the same draws in the same order.
	if stepped.Samples != 2000 || stepped.Gain.Mean != whole.Gain.Mean || stepped.Yield != whole.Yield || stepped.Gain.Hist != whole.Gain.Hist {
		t.Errorf("stepped run %d samples, mean %v yield %v; whole run mean %v yield %v",
			stepped.Samples, stepped.Gain.Mean, stepped.Yield, whole.Gain.Mean, whole.Yield)
	}
}

func TestMonteCarloCancel(t *testing.T) {
	var j jobView
	mustResult(t, "montecarloStart", aidCall(t, "montecarloStart", aidBase+"&mc=10000"), &j)
	mustResult(t, "step", aidCall(t, "step", j.Run), &j)
	mustResult(t, "cancel", aidCall(t, "cancel", j.Run), &j)
	var r variation.MCResult
	if err := json.Unmarshal(j.Result, &r); err != nil {
		t.Fatal(err)
	}
	if !j.Finished || !r.Canceled || r.Samples >= 10000 || j.Done != r.Samples {
		t.Errorf("after cancel: finished %v, canceled %v, %d samples, done %d", j.Finished, r.Canceled, r.Samples, j.Done)
	}
	// A late step is answered with the final state.
	var again jobView
	mustResult(t, "step", aidCall(t, "step", j.Run), &again)
	if !again.Finished || again.Done != j.Done {
		t.Errorf("late step: %+v", again)
	}
}

func TestNewRunReplacesTheOpenOne(t *testing.T) {
	var a, b jobView
	mustResult(t, "montecarloStart", aidCall(t, "montecarloStart", aidBase+"&mc=500"), &a)
	mustResult(t, "montecarloStart", aidCall(t, "montecarloStart", aidBase+"&mc=600"), &b)
	if a.Run == b.Run {
		t.Fatal("same run name twice")
	}
	var late jobView
	mustResult(t, "step", aidCall(t, "step", a.Run), &late)
	if !late.Finished {
		t.Errorf("the replaced run is not finished: %+v", late)
	}
	j, _ := runJobFrom(t, b)
	if j.Total != 600 || !j.Finished {
		t.Errorf("new run: %+v", j)
	}
}

func runJobFrom(t *testing.T, j jobView) (jobView, int) {
	t.Helper()
	n := 0
	for !j.Finished && n < 10000 {
		n++
		mustResult(t, "step", aidCall(t, "step", j.Run), &j)
	}
	return j, n
}

func TestSizingInStepsIsTheWholeSearch(t *testing.T) {
	frag := aidBase + "&t.gain=10&t.f3db=20M&t.idd=300u"
	j, _ := runJob(t, "sizeStart", frag, 10000)
	var stepped struct {
		Feasible bool   `json:"feasible"`
		Fragment string `json:"fragment"`
	}
	if err := json.Unmarshal(j.Result, &stepped); err != nil {
		t.Fatal(err)
	}
	d, _ := design.Decode(frag)
	whole, err := sizing.Size(d, nil)
	if err != nil {
		t.Fatal(err)
	}
	if stepped.Fragment != whole.Fragment || stepped.Feasible != whole.Feasible {
		t.Errorf("stepped search found %q (%v), whole search %q (%v)", stepped.Fragment, stepped.Feasible, whole.Fragment, whole.Feasible)
	}
	// The found design meets the targets when evaluated on its own (the check
	// is the plain evaluation, independent of the search's bookkeeping).
	if whole.Feasible {
		r := new(design.Evaluator).EvaluateFragment(whole.Fragment)
		if !r.OK || math.Abs(float64(r.Midband.Gain)) < 10 || !(float64(r.AC.F3dB) >= 20e6) {
			t.Errorf("found design: ok %v gain %v", r.OK, r.Midband)
		}
	}
}

func BenchmarkMonteCarloStep(b *testing.B) {
	b.ReportAllocs()
	for i := 0; i < b.N; i++ {
		resp := Handle("montecarloStart", []Arg{StringArg(aidBase + "&mc=1000")})
		var j JobState
		_ = json.Unmarshal(Encode(resp), &struct{ Result *JobState }{&j})
		for !j.Finished {
			_ = json.Unmarshal(Encode(Handle("step", []Arg{StringArg(j.Run)})), &struct{ Result *JobState }{&j})
		}
	}
}
