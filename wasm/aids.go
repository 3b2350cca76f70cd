package main

import (
	"errors"
	"fmt"
	"sort"
	"strconv"
	"sync"
	"time"

	"stagewright/core/charts"
	"stagewright/core/design"
	"stagewright/core/jsonenc"
	"stagewright/core/sizing"
	"stagewright/core/sweep"
	"stagewright/core/transfer"
	"stagewright/core/variation"
)

// The design-aid methods of the bridge. Each takes the design as its URL
// fragment (every option of an aid is a key of the fragment: amp, mc, seed,
// t.*, vary, lo.*/hi.*, sw*, pin), so the page never builds a second
// request format and a link restores every aid.
//
//	transfer(fragment)        {result: DC transfer curve}           (transfer.Curve)
//	distortion(fragment)      {result: HD2, HD3, THD at amp}        (transfer.Distortion)
//	corners(fragment)         {result: [row…]}                      (variation.Corners)
//	charts(fragment)          {result: gm/ID charts}                (charts.ForDesign)
//	sweep(fragment)           {result: figures against sw}          (sweep.Sweep)
//	compare(fragment)         {result: A/B table with pin}          (sweep.ComparePinned)
//	montecarloStart(fragment) {result: {run, total}}                (variation.MonteCarloWith)
//	sizeStart(fragment)       {result: {run, total}}                (sizing.Size)
//	fitStart(csvText, opts)   {result: {run, total}}                (extract.Fit, see fit.go)
//	step(run)                 {result: {run, done, total, finished, result?}}
//	cancel(run)               {result: the same, finished, with what was done}
//
// The two long aids run as jobs in bounded steps: step lets the job work for
// about stepBudget and returns its progress, so the Worker can post progress,
// serve slider evaluations and read a cancel message between steps.

// CodeAnalysis is the error code of a design aid that could not be done for
// a valid design (no operating point to trace from, a range outside the
// key's, no target to size to).
const CodeAnalysis = "analysis"

// stepBudget is how long one step of a job computes before it reports back.
// 40 ms keeps a slider key press waiting at most about one frame pair while
// a job runs; the per-step overhead (one message each way) is well below 1 %.
const stepBudget = 40 * time.Millisecond

// chartPoints is the number of gate drives of the gm/ID charts on the page.
const chartPoints = 120

// aidMethods maps each design-aid method to its handler. Handle looks
// methods up here when they are not its own.
var aidMethods = map[string]func(method string, args []Arg) Response{
	"transfer":        withDesign(transferCurve),
	"distortion":      withDesign(distortion),
	"corners":         withDesign(corners),
	"charts":          withDesign(gmIDCharts),
	"sweep":           withDesign(sweepFigures),
	"compare":         withDesign(comparePinned),
	"montecarloStart": withDesign(startMonteCarlo),
	"sizeStart":       withDesign(startSizing),
	"fitStart":        startFit, // the file's text and options, see fit.go
	"step":            withRun(func(j *job) Response { return j.step(true) }),
	"cancel":          withRun(func(j *job) Response { return j.step(false) }),
}

// aidMethodNames lists the design-aid methods, sorted, for the glue to
// register on globalThis.stagewright.
func aidMethodNames() []string {
	names := make([]string, 0, len(aidMethods))
	for n := range aidMethods {
		names = append(names, n)
	}
	sort.Strings(names)
	return names
}

// handleAid serves a design-aid method; ok is false for a name that is not
// one.
func handleAid(method string, args []Arg) (resp Response, ok bool) {
	h, ok := aidMethods[method]
	if !ok {
		return Response{}, false
	}
	return h(method, args), true
}

// withDesign decodes the one fragment argument strictly (an aid run on a
// design the user did not ask for would mislead) and calls f. Not inlined:
// inlined into the method table it made one copy of its closure per aid.
//
//go:noinline
func withDesign(f func(d design.Design) Response) func(string, []Arg) Response {
	return func(method string, args []Arg) Response {
		fragment, bad := oneString(method, "URL fragment", args)
		if bad != nil {
			return *bad
		}
		if len(fragment) > maxFragmentBytes {
			return requestError("%s: fragment is %d bytes; at most %d accepted", method, len(fragment), maxFragmentBytes)
		}
		d, err := design.Decode(fragment)
		if err != nil {
			info := &ErrorInfo{Code: CodeFragment, Message: method + ": " + err.Error()}
			var fe *design.FragmentError
			if errors.As(err, &fe) && len(fe.Problems) > 0 {
				info.Key = fe.Problems[0].Key
			}
			return Response{Error: info}
		}
		resp := f(d)
		if resp.Error != nil && resp.Error.Message != "" {
			resp.Error.Message = method + ": " + resp.Error.Message
		}
		return resp
	}
}

// analysisError is the response of an aid that failed; the key comes from
// the core's error when it names one.
func analysisError(err error) Response {
	if info, ok := fitErrorInfo(err); ok {
		return Response{Error: info}
	}
	info := &ErrorInfo{Code: CodeAnalysis, Message: err.Error()}
	var te *transfer.Error
	if errors.As(err, &te) {
		info.Key = te.Key
	}
	var fe *design.FragmentError
	if errors.As(err, &fe) && len(fe.Problems) > 0 {
		info.Code, info.Key = CodeFragment, fe.Problems[0].Key
	}
	return Response{Error: info}
}

// result encodes v at once (results hold no shared memory, but encoding here
// keeps a non-finite number from reaching the page as anything but an error).
func result(v any, err error) Response {
	if err != nil {
		return analysisError(err)
	}
	b, err := jsonenc.Marshal(v)
	if err != nil {
		return Response{Error: &ErrorInfo{Code: CodeInternal, Message: "the result could not be encoded as JSON: " + err.Error()}}
	}
	return Response{Result: jsonenc.Raw(b)}
}

func transferCurve(d design.Design) Response {
	return result(transfer.Curve(d, 0))
}

func distortion(d design.Design) Response {
	return result(transfer.Distortion(d, d.Aids.Amp))
}

func corners(d design.Design) Response {
	return result(variation.Corners(d))
}

func gmIDCharts(d design.Design) Response {
	return result(charts.ForDesign(d, chartPoints))
}

func sweepFigures(d design.Design) Response {
	sw := d.Aids.Sweep
	return result(sweep.Sweep(d, sw.Key, sw.Lo, sw.Hi, sw.N))
}

func comparePinned(d design.Design) Response {
	if d.Aids.Pin == nil {
		return Response{Error: &ErrorInfo{Code: CodeAnalysis, Key: "pin", Message: "no design is pinned (pin is empty)"}}
	}
	return result(sweep.ComparePinned(d))
}

// mcTargets are the design's sizing targets as the yield counts them; nil
// when none is set.
func mcTargets(t design.Targets) *variation.Targets {
	v := variation.Targets{
		MinGain: t.Gain, MinF3dB: t.F3dB, MinGBW: t.GBW, MaxIDD: t.IDD,
		MaxPower: t.Power, MinSwing: t.Swing, MaxNoise: t.Noise, MinMargin: t.Margin,
	}
	if v == (variation.Targets{}) {
		return nil
	}
	return &v
}

func startMonteCarlo(d design.Design) Response {
	total := d.Aids.MC
	if total <= 0 {
		return Response{Error: &ErrorInfo{Code: CodeAnalysis, Key: "mc", Message: "mc = 0 samples; give 1 … " + strconv.Itoa(variation.MaxSamples)}}
	}
	return startJob("montecarlo", total, func(progress func(done, total int) bool) (any, error) {
		return variation.MonteCarloWith(d, variation.Options{
			Samples: total, Seed: int64(d.Aids.Seed), Targets: mcTargets(d.Aids.Targets), Progress: progress,
		})
	})
}

func startSizing(d design.Design) Response {
	if d.Aids.Targets == (design.Targets{}) {
		return Response{Error: &ErrorInfo{Code: CodeAnalysis, Message: "no target is set (give at least one of t.gain, t.f3db, t.gbw, t.idd, t.power, t.swing, t.noise, t.margin)"}}
	}
	return startJob("size", sizing.MaxEvaluations, func(progress func(done, total int) bool) (any, error) {
		s, err := sizing.Size(d, progress)
		if errors.Is(err, sizing.ErrCancelled) {
			err = nil // the Sizing says Cancelled and holds the best design so far
		}
		return s, err
	})
}

// JobState is the answer to montecarloStart, sizeStart, step and cancel.
// Result is the aid's own result once Finished (with Canceled or Cancelled
// set inside it when the run was stopped).
type JobState struct {
	Run      string      `json:"run"`
	Kind     string      `json:"kind"`
	Done     int         `json:"done"`
	Total    int         `json:"total"`
	Finished bool        `json:"finished"`
	Result   jsonenc.Raw `json:"result,omitempty"`
}

// job is one long aid running in its own goroutine, which computes only
// while a step call waits for it: the bridge still serves one call at a
// time, so the evaluator and the job never run at once.
type job struct {
	id, kind  string
	total     int
	goOn      chan bool     // step → job: true work on, false stop
	report    chan jobPoint // job → step: progress or the end
	done      int
	finished  bool
	final     Response
	finalDone int // samples or evaluations the finished run did (-1: not known)
	deadline  time.Time
}

type jobPoint struct {
	done, total int
	end         bool
	resp        Response
}

var (
	jobsMu       sync.Mutex
	jobs         = map[string]*job{} // open jobs, at most one per kind
	lastFinished = map[string]*job{} // kind → its last finished job
	jobSeq       int
)

// startJob cancels a job of the same kind still open (the page starts a new
// run when the user presses the button again) and opens a new one. The job's
// goroutine waits for the first step before it computes anything.
func startJob(kind string, total int, run func(progress func(done, total int) bool) (any, error)) Response {
	jobsMu.Lock()
	var old *job
	for id, j := range jobs {
		if j.kind == kind {
			old = j
			delete(jobs, id)
		}
	}
	jobSeq++
	j := &job{id: kind + "-" + strconv.Itoa(jobSeq), kind: kind, total: total, goOn: make(chan bool), report: make(chan jobPoint)}
	jobs[j.id] = j
	jobsMu.Unlock()
	if old != nil {
		old.step(false)
	}
	go j.work(run)
	return j.state()
}

// work is the job's goroutine.
func (j *job) work(run func(progress func(done, total int) bool) (any, error)) {
	var resp Response
	done := -1
	func() {
		defer recoverInto(&resp, j.kind)
		// Stopped before it began, the aid still runs, told to stop at its
		// first progress call, so the result is the aid's own.
		stopped := !<-j.goOn
		progress := func(done, total int) bool {
			if stopped {
				return false
			}
			if time.Now().Before(j.deadline) {
				return true
			}
			j.report <- jobPoint{done: done, total: total}
			stopped = !<-j.goOn
			return !stopped
		}
		v, err := run(progress)
		done = jobDone(j.kind, v)
		resp = result(v, err)
	}()
	j.report <- jobPoint{end: true, resp: resp, done: done}
}

// step lets the job run for one step budget (goOn) or asks it to stop, and
// returns its state. A finished job answers with its final state again.
func (j *job) step(goOn bool) Response {
	if j.finished {
		return j.state()
	}
	j.deadline = time.Now().Add(stepBudget)
	if !goOn {
		j.deadline = time.Time{}
	}
	j.goOn <- goOn
	p := <-j.report
	if p.end {
		j.finished, j.final, j.finalDone = true, p.resp, p.done
		jobsMu.Lock()
		delete(jobs, j.id)
		lastFinished[j.kind] = j
		jobsMu.Unlock()
		if p.resp.Error != nil {
			return p.resp
		}
	} else {
		j.done, j.total = p.done, p.total
	}
	return j.state()
}

func (j *job) state() Response {
	s := JobState{Run: j.id, Kind: j.kind, Done: j.done, Total: j.total, Finished: j.finished}
	if j.finished {
		if j.final.Error != nil {
			return j.final
		}
		s.Done = s.Total
		if raw, ok := j.final.Result.(jsonenc.Raw); ok {
			s.Result = raw
			if j.finalDone >= 0 {
				s.Done = j.finalDone
			}
		}
	}
	return Response{Result: s}
}

// jobDone says how much a finished job did from its result (a cancelled
// Monte Carlo has fewer samples; a sizing says its evaluations), or -1
// when the result does not say.
func jobDone(kind string, v any) int {
	switch r := v.(type) {
	case variation.MCResult:
		if kind == "montecarlo" {
			return r.Samples
		}
	case sizing.Sizing:
		if kind == "size" {
			return r.Evaluations
		}
	case fitAnswer:
		if kind == "fit" {
			return r.res.Iterations
		}
	}
	return -1
}

// withRun finds the job named by the one string argument: an open one, or
// the last finished job of its kind (a late message from the page is
// answered with the final state instead of refused).
//
//go:noinline
func withRun(f func(j *job) Response) func(string, []Arg) Response {
	return func(method string, args []Arg) Response {
		id, bad := oneString(method, "run name from montecarloStart, sizeStart or fitStart", args)
		if bad != nil {
			return *bad
		}
		jobsMu.Lock()
		j := jobs[id]
		if j == nil {
			for _, old := range lastFinished {
				if old.id == id {
					j = old
				}
			}
		}
		jobsMu.Unlock()
		if j == nil {
			return Response{Error: &ErrorInfo{Code: CodeRequest, Message: fmt.Sprintf("%s: no run %s (replaced by a newer run, or never started)", method, quoteShort(id))}}
		}
		return f(j)
	}
}
