package stage

import (
	"flag"
	"fmt"
	"math"
	"math/rand"
	"os"
	"strconv"
	"testing"
	"time"

	"stagewright/core/circuit"
	"stagewright/core/device"
)

// randomVinCount is how many stages TestRandomInputLevelStages draws:
// 20,000 by default, 2,000 with -short, and whatever
// STAGEWRIGHT_RANDOM_VIN says (`make random-full` sets 1,000,000).
func randomVinCount(t *testing.T) int {
	if s := os.Getenv("STAGEWRIGHT_RANDOM_VIN"); s != "" {
		n, err := strconv.Atoi(s)
		if err != nil || n <= 0 {
			t.Fatalf("STAGEWRIGHT_RANDOM_VIN=%q: want a positive whole number", s)
		}
		return n
	}
	if testing.Short() {
		return 2000
	}
	return 20000
}

var randomVinSeed = flag.Int64("vinseed", 20261203, "seed of TestRandomInputLevelStages")

// randomInputLevelSpec draws one stage biased by its input level: each
// stage, load and polarity, both demo processes, −40 … 125 °C, W and L over
// the whole range the process allows, the input, the common-gate gate and
// the load's gate drive anywhere in the supply, resistances 1 Ω … 1 GΩ,
// degeneration on a third of the common-source stages.
func randomInputLevelSpec(rng *rand.Rand) Spec {
	logU := func(lo, hi float64) float64 { return lo * math.Pow(hi/lo, rng.Float64()) }
	procs := [...]string{"d180", "d65"}
	pr, _ := device.Builtin(procs[rng.Intn(2)])
	kinds := [...]Kind{CS, CG, SF}
	kind := kinds[rng.Intn(3)]
	loads := [...]Load{Resistor, Active, Diode}
	load := loads[rng.Intn(3)]
	if kind == SF && load == Diode {
		load = loads[rng.Intn(2)]
	}
	pol := device.NMOS
	if rng.Intn(2) == 0 {
		pol = device.PMOS
	}
	level := func() float64 { return math.Round(1000*pr.VDD*rng.Float64()) / 1000 } // mV steps, as the keys take them
	s := Spec{
		Kind: kind, Pol: pol, Load: load, Bias: ByVin, Process: pr, VDD: pr.VDD,
		TempK: math.Round(-40+165*rng.Float64()) + 273.15,
		W:     logU(pr.WMin, pr.WMax), L: logU(pr.LMin, pr.LMax),
		Vin: level(), VG: level(), VOut: pr.VDD / 2,
		RD: logU(1, 1e9), LoadW: logU(pr.WMin, pr.WMax), LoadL: logU(pr.LMin, pr.LMax),
		LoadVB: level(), RSig: logU(1, 1e9), RL: math.Inf(1), CL: 0,
	}
	if kind == SF && load == Resistor {
		s.RS = logU(1, 1e9)
	} else if kind == CS && rng.Intn(3) == 0 {
		s.RS = logU(1, 1e9)
	}
	return s
}

func (s Spec) String() string {
	return fmt.Sprintf("%s %s %v load=%s T=%.0f°C W=%.4g L=%.4g vin=%.3f vg=%.3f rd=%.4g rs=%.4g lw=%.4g ll=%.4g vbl=%.3f rsig=%.4g",
		s.Process.Name, s.Kind, s.Pol, s.Load, s.TempK-273.15, s.W, s.L, s.Vin, s.VG, s.RD, s.RS, s.LoadW, s.LoadL, s.LoadVB, s.RSig)
}

// Every stage biased by its input level has an operating point: its
// devices (or a device and a resistor) sit in series between fixed
// voltages with fixed gate levels, so the chain's current is monotone in
// each node. The solver must find it for every draw, and the point must
// obey KCL.
func TestRandomInputLevelStages(t *testing.T) {
	n := randomVinCount(t)
	rng := rand.New(rand.NewSource(*randomVinSeed))
	failed := 0
	methods := map[string]int{}
	var slowest time.Duration
	var slowestSpec Spec
	start := time.Now()
	for i := 0; i < n; i++ {
		s := randomInputLevelSpec(rng)
		t0 := time.Now()
		sol, err := Solve(s)
		if dt := time.Since(t0); dt > slowest {
			slowest, slowestSpec = dt, s
		}
		if err != nil {
			failed++
			if failed <= 10 {
				t.Errorf("draw %d: %v: %v", i, s, err)
			}
			continue
		}
		methods[sol.OP.Method]++
		if err := sol.C.CheckKCL(sol.OP, circuit.Options{}); err != nil {
			t.Errorf("draw %d: %v: %v", i, s, err)
		}
	}
	t.Logf("%d stages biased by input level in %v: %d failed; converged by %v; slowest %v: %v",
		n, time.Since(start).Round(time.Millisecond), failed, methods, slowest.Round(time.Microsecond), slowestSpec)
	if failed > 0 {
		t.Errorf("%d of %d stages biased by input level found no operating point (every one has one)", failed, n)
	}
}
