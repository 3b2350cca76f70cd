package sizing

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"strconv"

	"stagewright/core/design"
	"stagewright/core/units"
)

// Search budget.
const (
	MaxEvaluations = 3000 // evaluations of one Size call, at most
	samples        = 240  // Latin-hypercube points of the first stage
	restarts       = 4    // Nelder–Mead runs from the best distinct points
	aim            = 0.02 // the search aims 2 % beyond each target (log margin), so rounding does not miss it
	bindWithin     = 0.02 // a met target binds when its margin is at most 2 %
	// hardEdge: a hard target counts as kept, in the search, only with a
	// log margin of at least 0.1 %: twice the most that rounding an input
	// to four digits moves a current set by it (0.05 %); the report falls
	// back to the unrounded inputs should rounding still break it.
	hardEdge = 1e-3
	// The tiers of the penalty: a design that meets every target (with the
	// aim) scores feasibleTier + ln(objective), below 0 for any objective
	// in SI units (ln of 10 W is 2.3); one that misses soft targets scores
	// its squared shortfalls (at most eight times 10² at worst); one that
	// breaks a hard target hardTier on top; one with no operating point
	// failTier. The search compares penalties only by order, so the tiers
	// make the choice lexicographic: hard targets first, then the others,
	// then the objective.
	feasibleTier = -1e3
	hardTier     = 1e3
	failTier     = 1e4
	// metSlack: a target missed by less than one part in a million counts as
	// met: the operating point carries the DC solver's 1e-9 relative
	// residual, and no display or fragment (four digits) shows the
	// difference. leakSlack: the supply current also carries the solver's
	// leakage, gmin = 1e-12 S from each node to ground, a few pA from a
	// 1.8 V supply; 1e-11 A covers up to five nodes at 2 V. A stage biased
	// at exactly t.idd would otherwise miss it by that leakage.
	metSlack  = 1e-6
	leakSlack = 1e-11 // A
)

// ErrCancelled is returned when progress asked Size to stop; the Sizing
// returned with it holds the best design found so far.
var ErrCancelled = errors.New("sizing: cancelled")

// Sizing is what Size found.
type Sizing struct {
	// Feasible says every target is met at Design.
	Feasible bool   `json:"feasible"`
	Message  string `json:"message"`
	// Design is the found design (the best compromise when infeasible),
	// Fragment its canonical fragment.
	Design   design.Design `json:"-"`
	Fragment string        `json:"fragment"`
	Targets  []Target      `json:"targets"`
	Vars     []Var         `json:"variables"`
	Ignored  []string      `json:"ignored,omitempty"` // vary entries that do not matter for this stage and bias
	// Missed are the targets still missed at the best point; Conflicts the
	// pairs of targets that traded against each other along the search.
	Missed    []string   `json:"missed,omitempty"`
	Conflicts []Conflict `json:"conflicts,omitempty"`
	// Objective is what the search minimised once every target was met,
	// nil without one (obj=none).
	Objective   *Objective `json:"objective,omitempty"`
	Evaluations int        `json:"evaluations"`
	Cancelled   bool       `json:"cancelled,omitempty"`
	// Bound explains, when it applies, why no sizing can meet the targets
	// at all: the gain–bandwidth product they ask for needs more gm/ID than
	// any transistor gives at the current allowed.
	Bound string `json:"bound,omitempty"`
}

// Target is one target at the found design.
type Target struct {
	Key    string     `json:"key"`  // t.gain …
	Name   string     `json:"name"` // gain …
	Unit   string     `json:"unit"`
	Kind   string     `json:"kind"` // "min" (at least) or "max" (at most)
	Target design.Num `json:"target"`
	Value  design.Num `json:"value"`
	// Margin is the relative margin: (value − target)/target for a min
	// target, (target − value)/target for a max; negative when missed.
	Margin design.Num `json:"margin"`
	Met    bool       `json:"met"`
	Binds  bool       `json:"binds"`          // met within 2 %
	Hard   bool       `json:"hard,omitempty"` // an at-most target the search never lets the result exceed (hard=…)
}

// Objective is the objective's value at the found design and at the start.
type Objective struct {
	Key   string     `json:"key"`  // power, area, noise (the obj word)
	Name  string     `json:"name"` // supply power, gate area, input noise
	Unit  string     `json:"unit"` // W, m², V
	Value design.Num `json:"value"`
	Start design.Num `json:"start"` // at the design sizing started from; null without an operating point there
}

var (
	objectiveNames = map[design.Objective]string{design.ObjPower: "supply power", design.ObjArea: "gate area", design.ObjNoise: "input noise"}
	objectiveUnits = map[design.Objective]string{design.ObjPower: "W", design.ObjArea: "m²", design.ObjNoise: "V"}
)

// Var is one input the search moved.
type Var struct {
	Key   string     `json:"key"`
	Lo    design.Num `json:"lo"`
	Hi    design.Num `json:"hi"`
	Start design.Num `json:"start"`
	Value design.Num `json:"value"`
	Log   bool       `json:"log"`
}

// Conflict is a pair of targets whose margins moved against each other
// over the evaluated designs (Spearman rank correlation below −0.3).
type Conflict struct {
	A, B        string     `json:"-"`
	Pair        [2]string  `json:"pair"`
	Correlation design.Num `json:"correlation"`
}

// variable is one input the search moves, in the unit cube coordinate u.
type variable struct {
	key    string
	lo, hi float64
	log    bool
	set    func(d *design.Design, v float64)
	get    func(d *design.Design) float64
}

func (v *variable) value(u float64) float64 {
	u = math.Max(0, math.Min(1, u))
	if v.log {
		return math.Exp(math.Log(v.lo) + u*(math.Log(v.hi)-math.Log(v.lo)))
	}
	return v.lo + u*(v.hi-v.lo)
}

func (v *variable) coord(x float64) float64 {
	if v.log {
		if x <= 0 {
			return 0
		}
		return math.Max(0, math.Min(1, (math.Log(x)-math.Log(v.lo))/(math.Log(v.hi)-math.Log(v.lo))))
	}
	return math.Max(0, math.Min(1, (x-v.lo)/(v.hi-v.lo)))
}

// variables lists the inputs d.Aids.Vary names that matter for d, and
// those that do not.
func variables(d *design.Design) ([]variable, []string) {
	r := d.Aids.Ranges
	all := []variable{
		{key: "w", lo: r.W.Lo, hi: r.W.Hi, log: true, set: func(d *design.Design, v float64) { d.W = v }, get: func(d *design.Design) float64 { return d.W }},
		{key: "l", lo: r.L.Lo, hi: r.L.Hi, log: true, set: func(d *design.Design, v float64) { d.L = v }, get: func(d *design.Design) float64 { return d.L }},
		{key: "id", lo: r.ID.Lo, hi: r.ID.Hi, log: true, set: func(d *design.Design, v float64) { d.ID = v }, get: func(d *design.Design) float64 { return d.ID }},
		{key: "rd", lo: r.RD.Lo, hi: r.RD.Hi, log: true, set: func(d *design.Design, v float64) { d.RD = v }, get: func(d *design.Design) float64 { return d.RD }},
		{key: "rs", lo: r.RS.Lo, hi: r.RS.Hi, log: true, set: func(d *design.Design, v float64) { d.RS = v }, get: func(d *design.Design) float64 { return d.RS }},
		{key: "vin", lo: 0, hi: d.VDD, set: func(d *design.Design, v float64) { d.Vin = v }, get: func(d *design.Design) float64 { return d.Vin }},
		{key: "lw", lo: r.LW.Lo, hi: r.LW.Hi, log: true, set: func(d *design.Design, v float64) { d.LoadW = v }, get: func(d *design.Design) float64 { return d.LoadW }},
		{key: "ll", lo: r.LL.Lo, hi: r.LL.Hi, log: true, set: func(d *design.Design, v float64) { d.LoadL = v }, get: func(d *design.Design) float64 { return d.LoadL }},
		{key: "vout", lo: r.VOut.Lo, hi: math.Min(r.VOut.Hi, d.VDD), set: func(d *design.Design, v float64) { d.VOut = v }, get: func(d *design.Design) float64 { return d.VOut }},
	}
	var vars []variable
	var ignored []string
	for _, v := range all {
		if !d.Aids.Vary.Has(v.key) {
			continue
		}
		if !d.Relevant(v.key) || !(v.hi > v.lo) {
			ignored = append(ignored, v.key)
			continue
		}
		vars = append(vars, v)
	}
	return vars, ignored
}

// point is one evaluated design.
type point struct {
	u       []float64
	penalty float64
	scores  []float64 // per goal; nil when the design could not be evaluated
}

// searcher holds the state of one Size call.
type searcher struct {
	base     design.Design
	vars     []variable
	goals    []goal
	eval     design.Evaluator
	progress func(done, total int) bool
	// objective is what a design that meets every target minimises
	// (design.ObjNone: the search stops at the first one).
	objective design.Objective
	points    []point
	best      int // index into points; -1 before the first
	stopped   bool
	reached   bool // the reported design has an operating point
}

// Size searches for a design meeting the targets of d.Aids.Targets by
// moving the inputs d.Aids.Vary names inside d.Aids.Ranges, starting from
// d. progress, when not nil, is called after every evaluation with the
// number done and the budget; returning false stops the search, and Size
// then returns the best design so far with ErrCancelled. The same d always
// gives the same Sizing.
//
// Errors: a design that fails Validate, no target set, or no input to move.
// An infeasible set of targets is not an error: Sizing.Feasible is false and
// Sizing.Missed and Sizing.Conflicts say why.
func Size(d design.Design, progress func(done, total int) bool) (Sizing, error) {
	if err := d.Validate(); err != nil {
		return Sizing{}, fmt.Errorf("sizing: the design is not valid: %w", err)
	}
	gs := goals(&d)
	if len(gs) == 0 {
		return Sizing{}, errors.New("sizing: no target is set (give at least one of t.gain, t.f3db, t.gbw, t.idd, t.power, t.swing, t.noise, t.margin)")
	}
	vars, ignored := variables(&d)
	if len(vars) == 0 {
		return Sizing{}, fmt.Errorf("sizing: nothing to move: vary=%s names no input that matters for stage %s with load %s and bias %s",
			d.Aids.Vary, d.Stage, d.Load, d.Bias)
	}
	s := &searcher{base: d, vars: vars, goals: gs, progress: progress, best: -1, objective: d.Aids.Objective}
	if s.objective == "" {
		s.objective = design.ObjNone
	}
	s.base.Aids.Pin = nil // the pin plays no part and is put back at the end
	s.run()

	out := s.report(ignored)
	// The bound is stated only after the search has failed: a search that
	// meets the targets disproves any bound, and one stated beside a found
	// design would be a contradiction. It then is the message's reason and
	// what to change.
	if b := gainBandwidthBound(&d); b != "" && !out.Feasible {
		out.Bound = b
		out.Message = "no design meets every target: " + b
	}
	out.Design.Aids.Pin = d.Aids.Pin
	out.Fragment = out.Design.Encode()
	if s.stopped {
		out.Cancelled = true
		return out, ErrCancelled
	}
	return out, nil
}

// run is the search: the start, a Latin hypercube, then Nelder–Mead.
func (s *searcher) run() {
	k := len(s.vars)
	start := make([]float64, k)
	for i := range s.vars {
		start[i] = s.vars[i].coord(s.vars[i].get(&s.base))
	}
	s.evaluate(start)

	// Latin hypercube: each variable's [0, 1] cut into strata, one point
	// per stratum, the strata of the variables paired by a seeded shuffle.
	rng := rand.New(rand.NewPCG(uint64(s.base.Aids.Seed), 0x5eed))
	perms := make([][]int, k)
	for i := range perms {
		perms[i] = rng.Perm(samples)
	}
	for j := 0; j < samples && !s.done(); j++ {
		u := make([]float64, k)
		for i := range u {
			u[i] = (float64(perms[i][j]) + rng.Float64()) / samples
		}
		s.evaluate(u)
	}

	// Nelder–Mead from the best distinct points.
	order := make([]int, len(s.points))
	for i := range order {
		order[i] = i
	}
	slices.SortStableFunc(order, func(a, b int) int { return cmpFloat(s.points[a].penalty, s.points[b].penalty) })
	var starts [][]float64
	for _, i := range order {
		if len(starts) == restarts {
			break
		}
		far := true
		for _, u := range starts {
			if dist(u, s.points[i].u) < 0.15 {
				far = false
			}
		}
		if far && s.points[i].scores != nil {
			starts = append(starts, s.points[i].u)
		}
	}
	for r, u0 := range starts {
		if s.done() {
			break
		}
		left := MaxEvaluations - len(s.points)
		budget := left / (len(starts) - r)
		s.minimize(u0, budget)
	}
}

// done says the search should stop: the budget is spent, progress asked to
// stop, or every target is met with the margin aimed for and there is no
// objective to improve.
func (s *searcher) done() bool {
	return s.stopped || len(s.points) >= MaxEvaluations ||
		(s.objective == design.ObjNone && s.best >= 0 && s.points[s.best].penalty <= feasibleTier)
}

func (s *searcher) minimize(u0 []float64, budget int) {
	if budget < 2*len(s.vars)+2 {
		return
	}
	f := func(x []float64) float64 {
		if s.done() {
			return s.points[s.best].penalty + 1 // the run is being stopped
		}
		return s.points[s.evaluate(x)].penalty
	}
	nelderMead(f, slices.Clone(u0), 0.08, budget, 1e-6, s.done)
}

// evaluate scores the design at u (coordinates outside [0, 1] are clamped
// and penalised) and returns its index in s.points.
func (s *searcher) evaluate(u []float64) int {
	d := s.base
	outside := 0.0
	for i := range s.vars {
		if e := math.Max(0, math.Max(-u[i], u[i]-1)); e > 0 {
			outside += e * e
		}
		s.vars[i].set(&d, s.vars[i].value(u[i]))
	}
	p := point{u: slices.Clone(u), penalty: failTier + outside}
	if err := d.Validate(); err == nil {
		r := s.eval.Evaluate(d)
		if r.OK {
			p.scores = make([]float64, len(s.goals))
			p.penalty = 10 * outside
			broken := 0.0
			for i := range s.goals {
				g := &s.goals[i]
				sc := g.score(g.value(&d, &r))
				p.scores[i] = sc
				if short := aim - sc; short > 0 {
					p.penalty += short * short
				}
				if short := hardEdge - sc; g.hard && short > 0 {
					broken += short * short
				}
			}
			switch {
			case broken > 0:
				p.penalty += hardTier + broken
			case p.penalty == 0:
				p.penalty = feasibleTier
				if s.objective != design.ObjNone {
					if v := objectiveOf(s.objective, &d, &r); v > 0 && !math.IsInf(v, 0) {
						p.penalty += math.Log(v)
					}
				}
			}
		}
	}
	s.points = append(s.points, p)
	idx := len(s.points) - 1
	if s.best < 0 || p.penalty < s.points[s.best].penalty {
		s.best = idx
	}
	if s.progress != nil && !s.stopped && !s.progress(len(s.points), MaxEvaluations) {
		s.stopped = true
	}
	return idx
}

// report evaluates the best point again and describes it. The inputs are
// rounded to four digits; should that break a hard target the best point
// kept, they are reported unrounded instead.
func (s *searcher) report(ignored []string) Sizing {
	out := s.describe(ignored, true)
	if s.points[s.best].penalty < hardTier && s.brokeHard(&out) {
		out = s.describe(ignored, false)
	}
	switch {
	case out.Objective != nil && out.Feasible:
		out.Message = fmt.Sprintf("every target met, with the least %s found: %s", out.Objective.Name,
			units.Engineering(float64(out.Objective.Value), 4, out.Objective.Unit))
	case out.Feasible:
		out.Message = "every target met"
	default:
		out.Message = s.failure(&out)
	}
	return out
}

// brokeHard says that a hard target is missed in out.
func (s *searcher) brokeHard(out *Sizing) bool {
	for i, t := range out.Targets {
		if s.goals[i].hard && !t.Met {
			return true
		}
	}
	return false
}

// describe sets the best point's inputs (rounded to four digits when
// round is set), evaluates it and fills in the targets.
func (s *searcher) describe(ignored []string, round bool) Sizing {
	best := s.points[s.best]
	d := s.base
	out := Sizing{Ignored: ignored, Evaluations: len(s.points)}
	for i := range s.vars {
		v := &s.vars[i]
		// Four significant digits keep the fragment short; the search aims
		// 2 % beyond each target, far more than the rounding moves it.
		x := v.value(best.u[i])
		if round {
			x = math.Max(v.lo, math.Min(v.hi, round4(x)))
		}
		v.set(&d, x)
		out.Vars = append(out.Vars, Var{Key: v.key, Lo: design.Num(v.lo), Hi: design.Num(v.hi),
			Start: design.Num(v.get(&s.base)), Value: design.Num(x), Log: v.log})
	}
	out.Design = d
	r := s.eval.Evaluate(d)
	out.Feasible = r.OK
	s.reached = r.OK
	for i := range s.goals {
		g := &s.goals[i]
		value := math.NaN()
		if r.OK {
			value = g.value(&d, &r)
		}
		m := g.margin(value)
		t := Target{Key: g.key, Name: g.name, Unit: g.unit, Kind: "max", Target: design.Num(g.target),
			Value: design.Num(value), Margin: design.Num(m), Met: m >= -g.slack, Hard: g.hard}
		if g.atLeast {
			t.Kind = "min"
		}
		t.Binds = t.Met && m <= bindWithin
		if !t.Met {
			out.Feasible = false
			out.Missed = append(out.Missed, g.key)
		}
		out.Targets = append(out.Targets, t)
	}
	if s.objective != design.ObjNone {
		o := &Objective{Key: string(s.objective), Name: objectiveNames[s.objective], Unit: objectiveUnits[s.objective],
			Value: design.Num(math.NaN()), Start: design.Num(math.NaN())}
		if r.OK {
			o.Value = design.Num(objectiveOf(s.objective, &d, &r))
		}
		if r0 := s.eval.Evaluate(s.base); r0.OK {
			o.Start = design.Num(objectiveOf(s.objective, &s.base, &r0))
		}
		out.Objective = o
	}
	if r.OK && !out.Feasible {
		out.Conflicts = s.conflicts(out.Missed)
	}
	return out
}

// conflicts returns the pairs of targets, one of them missed at the best
// point, whose scores are rank-correlated below −0.3 over the evaluated
// designs: improving one worsened the other along the search.
func (s *searcher) conflicts(missed []string) []Conflict {
	var rows [][]float64
	for _, p := range s.points {
		if p.scores != nil {
			rows = append(rows, p.scores)
		}
	}
	if len(rows) < 10 {
		return nil
	}
	ranks := make([][]float64, len(s.goals))
	for i := range s.goals {
		col := make([]float64, len(rows))
		for j, r := range rows {
			col[j] = r[i]
		}
		ranks[i] = rank(col)
	}
	var out []Conflict
	for i := range s.goals {
		for j := i + 1; j < len(s.goals); j++ {
			if !slices.Contains(missed, s.goals[i].key) && !slices.Contains(missed, s.goals[j].key) {
				continue
			}
			if c := pearson(ranks[i], ranks[j]); c < -0.3 {
				a, b := s.goals[i].key, s.goals[j].key
				out = append(out, Conflict{A: a, B: b, Pair: [2]string{a, b}, Correlation: design.Num(c)})
			}
		}
	}
	return out
}

// rank returns the ranks of x (ties share their mean rank).
func rank(x []float64) []float64 {
	idx := make([]int, len(x))
	for i := range idx {
		idx[i] = i
	}
	slices.SortStableFunc(idx, func(a, b int) int { return cmpFloat(x[a], x[b]) })
	r := make([]float64, len(x))
	for i := 0; i < len(idx); {
		j := i
		for j+1 < len(idx) && x[idx[j+1]] == x[idx[i]] {
			j++
		}
		for k := i; k <= j; k++ {
			r[idx[k]] = float64(i+j) / 2
		}
		i = j + 1
	}
	return r
}

// pearson is the correlation coefficient of a and b; 0 when either is
// constant.
func pearson(a, b []float64) float64 {
	n := float64(len(a))
	var ma, mb float64
	for i := range a {
		ma += a[i]
		mb += b[i]
	}
	ma, mb = ma/n, mb/n
	var sab, saa, sbb float64
	for i := range a {
		sab += (a[i] - ma) * (b[i] - mb)
		saa += (a[i] - ma) * (a[i] - ma)
		sbb += (b[i] - mb) * (b[i] - mb)
	}
	if saa == 0 || sbb == 0 {
		return 0
	}
	return sab / math.Sqrt(saa*sbb)
}

func dist(a, b []float64) float64 {
	var s float64
	for i := range a {
		s += (a[i] - b[i]) * (a[i] - b[i])
	}
	return math.Sqrt(s)
}

func cmpFloat(a, b float64) int {
	switch {
	case a < b:
		return -1
	case a > b:
		return 1
	}
	return 0
}

// round4 rounds x to four significant digits.
func round4(x float64) float64 {
	if x == 0 || math.IsNaN(x) || math.IsInf(x, 0) {
		return x
	}
	p := math.Pow(10, 3-math.Floor(math.Log10(math.Abs(x))))
	r := math.Round(x*p) / p
	if s := strconv.FormatFloat(r, 'g', 4, 64); s != "" {
		if v, err := strconv.ParseFloat(s, 64); err == nil {
			return v
		}
	}
	return r
}
