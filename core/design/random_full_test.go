package design

import (
	"math/rand"
	"os"
	"sort"
	"strings"
	"testing"
	"time"
)

// Newton iteration bounds derived from the solver in core/circuit/dc.go,
// with its default MaxIter = 100:
//   - plain Newton: at most MaxIter;
//   - gmin stepping: 11 rungs from 1e-2 S down to gmin = 1e-12 S plus the
//     final solve at gmin, MaxIter each, after the plain attempt:
//     13·MaxIter = 1300;
//   - source stepping: MaxIter/2 = 50 per step. A successful step moves the
//     scale by more than 1e-4 (the step floor), so there are at most 10⁴ of
//     them; the step starts at 0.1, grows ×1.5 per success and halves per
//     failure, and the loop stops below 1e-4, so failures number at most
//     log2(0.1/1e-4) + 1 + log2(1.5)·10⁴ < 5 860. With the 1 300 spent
//     before: 1300 + 50·(10 000 + 5 860) = 794 300.
//
// A gm/ID design runs up to 40 such solves (core/stage/solve.go).
const (
	maxIterPlain  = 100
	maxIterGMin   = 13 * maxIterPlain
	maxIterSource = maxIterGMin + 50*(10000+5860)
	maxSolvesGmID = 40
)

// iterationBound is the most Newton iterations an evaluation can report.
func iterationBound(method string, bias BiasMode) int {
	b := maxIterSource
	switch method {
	case "newton":
		b = maxIterPlain
	case "gmin stepping":
		b = maxIterGMin
	}
	if bias == BiasGmID {
		// The method is that of the last of the solves; the earlier ones
		// may each have needed source stepping.
		b = maxSolvesGmID * maxIterSource
	}
	return b
}

// TestRandomDesignsFull is the long form of TestRandomDesigns: 100 000
// random designs, every converged one checked for KCL, with the solver's
// effort reported. It runs only with STAGEWRIGHT_RANDOM_FULL=1 (a few
// minutes); `make random-full` sets it.
func TestRandomDesignsFull(t *testing.T) {
	if os.Getenv("STAGEWRIGHT_RANDOM_FULL") != "1" {
		t.Skip("set STAGEWRIGHT_RANDOM_FULL=1 to run 100 000 random designs")
	}
	const n = 100000
	rng := rand.New(rand.NewSource(20270117))
	var e Evaluator
	ok, decodeFailed := 0, 0
	iters := make([]int, 0, n)
	byMethod := map[string]int{}
	byCode := map[string]int{}
	var slowest time.Duration
	slowestFrag := ""
	mostIters, mostItersFrag := 0, ""
	start := time.Now()
	for i := 0; i < n; i++ {
		frag := randomFragment(rng)
		d, err := Decode(frag)
		if err != nil {
			decodeFailed++
			if !strings.Contains(err.Error(), "=") {
				t.Errorf("%s: unclear decode error %q", frag, err)
			}
			continue
		}
		t0 := time.Now()
		r := e.Evaluate(d)
		if dt := time.Since(t0); dt > slowest {
			slowest, slowestFrag = dt, frag
		}
		if !r.OK {
			if r.Error == nil || len(r.Error.Message) < 20 || r.Error.Code == "internal" {
				t.Errorf("%s: unclear failure %+v", frag, r.Error)
				continue
			}
			if genericFailure(r.Error) {
				t.Errorf("%s: a failure of the solver reported as the design's: %s", frag, r.Error.Message)
			}
			byCode[r.Error.Code]++
			continue
		}
		ok++
		byMethod[r.Method]++
		iters = append(iters, r.Iterations)
		if r.Iterations > mostIters {
			mostIters, mostItersFrag = r.Iterations, frag
		}
		if b := iterationBound(r.Method, d.Bias); r.Iterations > b || r.Iterations < 0 {
			t.Errorf("%s: %d Newton iterations (%s), above the solver's bound %d", frag, r.Iterations, r.Method, b)
		}
		checkFinite(t, frag, &r)
		checkKCLOf(t, d)
		if t.Failed() {
			t.Fatalf("stopping after the first failing design: %s", frag)
		}
	}
	sort.Ints(iters)
	med := 0
	if len(iters) > 0 {
		med = iters[len(iters)/2]
	}
	t.Logf("%d random designs in %v: %d evaluated (%.2f %%), %d rejected by Decode", n, time.Since(start).Round(time.Second), ok, 100*float64(ok)/float64(n), decodeFailed)
	t.Logf("Newton iterations: median %d, max %d (%s); converged by %v", med, mostIters, mostItersFrag, byMethod)
	t.Logf("slowest evaluation %v: %s", slowest, slowestFrag)
	t.Logf("failures by code: %v", byCode)
	if ok < n/4 {
		t.Errorf("only %d of %d random designs have an operating point", ok, n)
	}
}
