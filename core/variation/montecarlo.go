package variation

import (
	"fmt"
	"math"
	"math/rand"

	"stagewright/core/circuit"
	"stagewright/core/design"
	"stagewright/core/device"
	"stagewright/core/stage"
)

// MaxSamples is the largest Monte Carlo sample count.
const MaxSamples = 10000

// Targets are the design goals a Monte Carlo yield counts. A zero field
// is no target. Units: V/V, Hz, A, W, V.
type Targets struct {
	MinGain   float64 // minimum |gain|
	MinF3dB   float64 // minimum −3 dB frequency
	MinGBW    float64 // minimum |gain|·f3db
	MaxIDD    float64 // maximum supply current
	MaxPower  float64 // maximum supply power
	MinSwing  float64 // minimum output swing: not counted per sample (see Covered)
	MaxNoise  float64 // maximum input-referred rms noise: not counted per sample (see Covered)
	MinMargin float64 // minimum saturation margin |VDS| − VDsat of every transistor
}

// Options set up a Monte Carlo run beyond the design itself.
type Options struct {
	Samples int      // 0 … MaxSamples
	Seed    int64    // math/rand seed: the same seed gives the same run
	Targets *Targets // nil: no yield
	// Progress, when set, is called after every block of samples (about
	// every 1 %) and at the end with the samples done and the total;
	// returning false stops the run, which returns the samples done so far
	// with Canceled set.
	Progress func(done, total int) bool
	// NoGlobal leaves out the global process shift, NoMismatch the local
	// mismatch, NoBetaMismatch only its current-factor part (for checks).
	NoGlobal, NoMismatch, NoBetaMismatch bool
}

// MCResult summarizes a Monte Carlo run. Gain is V/V (signed, as the
// design reports it), F3dB Hz, ID (M1's drain current in its own sense)
// A, VOut (DC output level) V; DVT1 is the threshold shift drawn for M1,
// global plus mismatch, V. Failed counts samples with no operating point
// (or none whose bias stays inside the supply). Yield is the fraction of
// all samples, failed ones included, that meet every target named in
// Covered; NotCovered names targets set but not counted per sample.
type MCResult struct {
	Samples    int        `json:"samples"`
	Seed       int64      `json:"seed"`
	Canceled   bool       `json:"canceled"`
	Failed     int        `json:"failed"`
	Gain       Stat       `json:"gain"`
	F3dB       Stat       `json:"f3db"`
	ID         Stat       `json:"id"`
	VOut       Stat       `json:"vout"`
	DVT1       Stat       `json:"dvt1"`
	Yield      design.Num `json:"yield"`
	Passed     int        `json:"passed"`
	Covered    []string   `json:"covered"`
	NotCovered []string   `json:"not_covered"`
	// Sigma are the standard deviations drawn from (global VT and mobility
	// for M1's polarity, V and relative; M1's Pelgrom σ of VT and β).
	Sigma Sigmas `json:"sigma"`
}

// Sigmas are the spreads a run draws M1's parameters from.
type Sigmas struct {
	GlobalVT   design.Num `json:"global_vt"`
	GlobalMu   design.Num `json:"global_mu"`
	MismatchVT design.Num `json:"mismatch_vt"`
	MismatchB  design.Num `json:"mismatch_beta"`
}

// MonteCarlo runs n samples of d with the given seed and, when t is not
// nil, counts the yield against t. See MonteCarloWith.
func MonteCarlo(d design.Design, n int, seed int64, t *Targets) (MCResult, error) {
	return MonteCarloWith(d, Options{Samples: n, Seed: seed, Targets: t})
}

// MonteCarloWith samples d o.Samples times. Each sample draws a global
// shift of VT0 (normal, σ = SigmaVT) and of U0 (relative, σ = SigmaMu) for
// each polarity, and for M1 and M2 separately a mismatch by Pelgrom's law
// (Pelgrom, Duinmaijer, Welbers, IEEE JSSC 1989), σ(ΔVT) = AVT/√(W·L) and
// σ(Δβ/β) = ABeta/√(W·L), applied to VT0 and U0. It then solves the
// operating point (warm-started from the nominal one) and computes the
// midband gain and f3db of the linearized stage (see response.f3dB), not
// the sweep or the noise.
//
// The bias mode stays as in the design; a gm/ID design keeps its solved
// nominal width and is sampled with bias id. Per sample the yield counts
// MinGain, MinF3dB, MinGBW, MaxIDD, MaxPower and MinMargin; MinSwing and
// MaxNoise need the full evaluation and are listed in NotCovered when set.
//
// The error is non-nil when d is invalid, the sample count is out of
// range, or the nominal design has no operating point.
func MonteCarloWith(d design.Design, o Options) (res MCResult, err error) {
	if o.Samples < 0 || o.Samples > MaxSamples {
		return res, fmt.Errorf("variation: Monte Carlo samples = %d is outside the accepted range [0, %d]", o.Samples, MaxSamples)
	}
	if err := d.Validate(); err != nil {
		return res, err
	}
	defer func() {
		if p := recover(); p != nil {
			res, err = MCResult{}, fmt.Errorf("variation: internal error during Monte Carlo: %v", p)
		}
	}()
	m, err := newSampler(d)
	if err != nil {
		return res, err
	}
	n := o.Samples
	res = MCResult{Seed: o.Seed, Covered: []string{}, NotCovered: []string{}}
	t := Targets{}
	if o.Targets != nil {
		t = *o.Targets
		res.Covered, res.NotCovered = coverage(t)
	}
	sp1 := m.pr.Spread(m.spec.Pol)
	res.Sigma = Sigmas{
		GlobalVT: design.Num(sp1.SigmaVT), GlobalMu: design.Num(sp1.SigmaMu),
		MismatchVT: design.Num(sp1.AVT / math.Sqrt(m.spec.W*m.spec.L)), MismatchB: design.Num(sp1.ABeta / math.Sqrt(m.spec.W*m.spec.L)),
	}
	gain := make([]float64, 0, n)
	f3 := make([]float64, 0, n)
	id := make([]float64, 0, n)
	vout := make([]float64, 0, n)
	dvt := make([]float64, 0, n)
	rng := rand.New(rand.NewSource(o.Seed))
	block := max(1, n/100)
	var z [12]float64
	draws := 8 // the mirror copies take four more; the stream is fixed by the design, not by results
	if m.hold == "mirror" {
		draws = 12
	}
	for i := 0; i < n; i++ {
		for k := range z[:draws] {
			z[k] = rng.NormFloat64()
		}
		if o.NoGlobal {
			z[0], z[1], z[2], z[3] = 0, 0, 0, 0
		}
		if o.NoMismatch {
			z[4], z[5], z[6], z[7], z[8], z[9], z[10], z[11] = 0, 0, 0, 0, 0, 0, 0, 0
		}
		if o.NoBetaMismatch {
			z[5], z[7], z[9], z[11] = 0, 0, 0, 0
		}
		s, ok := m.sample(&z, d.FMin, math.Max(d.FMax, 10*t.MinF3dB))
		res.Samples++
		dvt = append(dvt, s.dvt1)
		if !ok {
			res.Failed++
		} else {
			gain = append(gain, s.gain)
			f3 = append(f3, s.f3db)
			id = append(id, s.id)
			vout = append(vout, s.vout)
			if o.Targets != nil && t.meets(&s) {
				res.Passed++
			}
		}
		if o.Progress != nil && ((i+1)%block == 0 || i+1 == n) {
			if !o.Progress(i+1, n) {
				res.Canceled = i+1 < n
				break
			}
		}
	}
	res.Gain, res.F3dB, res.ID, res.VOut, res.DVT1 = summarize(gain), summarize(f3), summarize(id), summarize(vout), summarize(dvt)
	res.Yield = design.Num(math.NaN())
	if o.Targets != nil && res.Samples > 0 {
		res.Yield = design.Num(float64(res.Passed) / float64(res.Samples))
	}
	return res, nil
}

// coverage lists the set targets counted per sample and those that are not.
func coverage(t Targets) (covered, not []string) {
	covered, not = []string{}, []string{}
	for _, c := range []struct {
		name string
		v    float64
		per  bool
	}{
		{"gain", t.MinGain, true}, {"f3db", t.MinF3dB, true}, {"gbw", t.MinGBW, true},
		{"idd", t.MaxIDD, true}, {"power", t.MaxPower, true}, {"swing", t.MinSwing, false},
		{"noise", t.MaxNoise, false}, {"margin", t.MinMargin, true},
	} {
		if c.v == 0 {
			continue
		}
		if c.per {
			covered = append(covered, c.name)
		} else {
			not = append(not, c.name)
		}
	}
	return covered, not
}

// meets says whether a solved sample meets every per-sample target. An
// f3db not found below the scan's upper end (at least 10·MinF3dB) counts
// as above it only when the gain has not yet fallen 3 dB there, which the
// scan establishes by not crossing.
func (t *Targets) meets(s *sampleResult) bool {
	f3 := s.f3db
	if math.IsNaN(f3) && s.noCrossing {
		f3 = math.Inf(1)
	}
	switch {
	case t.MinGain != 0 && !(math.Abs(s.gain) >= t.MinGain):
		return false
	case t.MinF3dB != 0 && !(f3 >= t.MinF3dB):
		return false
	case t.MinGBW != 0 && !(math.Abs(s.gain)*f3 >= t.MinGBW):
		return false
	case t.MaxIDD != 0 && !(s.idd <= t.MaxIDD):
		return false
	case t.MaxPower != 0 && !(s.power <= t.MaxPower):
		return false
	case t.MinMargin != 0 && !(s.margin >= t.MinMargin):
		return false
	}
	return true
}

// sampler holds the nominal stage and its circuit, reused by every sample.
type sampler struct {
	spec   stage.Spec
	pr     device.Process
	b      *stage.Built
	guess  circuit.Guess
	resp   response
	sp1    device.Spread // M1's polarity
	sp2    device.Spread // M2's polarity
	pol2   device.Polarity
	area1  float64          // m², W·L of M1
	area2  float64          // m², of M2
	nomPar [2]device.Params // nominal parameters of M1's and M2's polarity

	// A current bias held by a mirror: each copy (M1's, the load's) is
	// drawn with the global shift and its own mismatch, and its VGS at iref
	// sets the gate of the device it biases.
	hold                 string // "ideal", "fixed" or "mirror"
	iref                 float64
	vgs0                 [2]float64 // nominal |VGS| of M1 and the load: Newton's start for the copies
	mirrorM1, mirrorLoad bool
	near                 func(v float64) float64 // a level from M1's near rail as a node voltage
	loadNear             func(v float64) float64 // the same for the load's rail
}

type sampleResult struct {
	gain, f3db, id, vout, idd, power, margin, dvt1 float64
	noCrossing                                     bool
}

func newSampler(d design.Design) (*sampler, error) {
	spec, err := d.Spec()
	if err != nil {
		return nil, err
	}
	sol, err := stage.Solve(spec)
	if err != nil {
		return nil, fmt.Errorf("variation: the nominal design has no operating point: %w", err)
	}
	spec.W = sol.W
	if spec.Bias == stage.ByGmID {
		spec.Bias = stage.ByID
	}
	m := &sampler{hold: "ideal"}
	if spec.Bias == stage.ByID && d.Aids.Hold != "ideal" && d.Aids.Hold != "" {
		// Held: the nominal bias levels become fixed sources (vin mode),
		// which a mirror then moves sample by sample.
		m.hold, m.iref = d.Aids.Hold, math.Abs(sol.Report(1).ID)
		if !(spec.Kind == stage.SF && spec.Load == stage.Active) {
			spec.Vin = sol.OP.Source[sol.Input]
		}
		if spec.Load == stage.Active {
			spec.LoadVB = math.Abs(sol.Report(2).VGS)
		}
		m.vgs0 = [2]float64{math.Abs(sol.Report(1).VGS), spec.LoadVB}
		spec.Bias = stage.ByVin
		m.mirrorM1 = m.hold == "mirror" && spec.Kind == stage.CS
		m.mirrorLoad = m.hold == "mirror" && spec.Load == stage.Active
		vdd := spec.VDD
		m.near = func(v float64) float64 { return v }
		if spec.Pol == device.PMOS {
			m.near = func(v float64) float64 { return vdd - v }
		}
	}
	b, err := stage.Build(spec)
	if err != nil {
		return nil, err
	}
	m.spec, m.pr, m.b, m.guess = spec, spec.Process, b, circuit.Guess{}
	if len(sol.OP.V) == b.C.NodeCount() {
		for i, v := range sol.OP.V {
			m.guess[circuit.Node(i)] = v
		}
	} else {
		m.guess = b.Guess
	}
	// Servo'd sources start from their nominal solved values.
	for _, sv := range b.C.Servos {
		if sv.Source < len(sol.OP.Source) {
			b.C.VSources[sv.Source].V = sol.OP.Source[sv.Source]
		}
	}
	m.sp1 = m.pr.Spread(spec.Pol)
	m.area1 = spec.W * spec.L
	m.nomPar[0] = m.pr.ParamsAt(spec.Pol, spec.L)
	if b.M2 >= 0 {
		m.pol2 = b.Dev2.Polarity()
		m.sp2 = m.pr.Spread(m.pol2)
		m.area2 = spec.LoadW * spec.LoadL
		m.nomPar[1] = m.pr.ParamsAt(m.pol2, spec.LoadL)
		vdd := spec.VDD
		m.loadNear = func(v float64) float64 { return v }
		if m.pol2 == device.PMOS {
			m.loadNear = func(v float64) float64 { return vdd - v }
		}
	}
	return m, nil
}

// diodeVGS returns |VGS| of a diode-connected device with parameters p
// carrying i, source and bulk on its rail: Newton's method from start on
// the diode's current, whose slope is gm + gds, kept inside 0 … vmax, and
// bisection over 0 … vmax if Newton has not settled in a dozen steps.
func diodeVGS(pol device.Polarity, p device.Params, tnom, w, l, tempK, i, start, vmax float64) (float64, bool) {
	dev, err := device.New(pol, p, tnom, w, l, tempK)
	if err != nil {
		return 0, false
	}
	s := float64(pol)
	v := math.Min(math.Max(start, 0), vmax)
	for range 12 {
		e := dev.Current(s*v, s*v, 0, 0)
		f := math.Abs(e.ID) - i
		if math.Abs(f) <= 1e-10*i { // the servo's own tolerance is 1e-9
			return v, true
		}
		slope := e.GM + e.GDS
		if !(slope > 0) {
			break
		}
		v = math.Min(math.Max(v-f/slope, 0), vmax)
	}
	at := func(v float64) float64 { return math.Abs(dev.Current(s*v, s*v, 0, 0).ID) }
	if at(vmax) < i {
		return 0, false
	}
	lo, hi := 0.0, vmax
	for range 48 { // 2^-48 of the supply, below 1e-14 V
		mid := (lo + hi) / 2
		if at(mid) < i {
			lo = mid
		} else {
			hi = mid
		}
	}
	return (lo + hi) / 2, true
}

// globalIndex is where a polarity's global draws sit in z: n-channel 0, 1;
// p-channel 2, 3.
func globalIndex(p device.Polarity) int {
	if p == device.PMOS {
		return 2
	}
	return 0
}

// vary returns nominal parameters moved by the global draws of their
// polarity and the device's own mismatch draws (z[m], z[m+1]).
func vary(nom device.Params, sp device.Spread, pol device.Polarity, area float64, z *[12]float64, m int) (device.Params, float64) {
	g := globalIndex(pol)
	sm := 1 / math.Sqrt(area)
	dvt := sp.SigmaVT*z[g] + sp.AVT*sm*z[m]
	p := nom
	p.VT0 += dvt
	p.U0 *= (1 + sp.SigmaMu*z[g+1]) * (1 + sp.ABeta*sm*z[m+1])
	return p, dvt
}

// sample evaluates one draw; ok is false when there is no operating point.
func (m *sampler) sample(z *[12]float64, fmin, fmax float64) (sampleResult, bool) {
	nan := math.NaN()
	r := sampleResult{gain: nan, f3db: nan, id: nan, vout: nan, idd: nan, power: nan, margin: nan}
	s := &m.spec
	p1, dvt1 := vary(m.nomPar[0], m.sp1, s.Pol, m.area1, z, 4)
	r.dvt1 = dvt1
	dev1, err := device.New(s.Pol, p1, m.pr.TNom, s.W, s.L, s.TempK)
	if err != nil {
		return r, false
	}
	*m.b.Dev1 = dev1
	if m.b.M2 >= 0 {
		p2, _ := vary(m.nomPar[1], m.sp2, m.pol2, m.area2, z, 6)
		dev2, err := device.New(m.pol2, p2, m.pr.TNom, s.LoadW, s.LoadL, s.TempK)
		if err != nil {
			return r, false
		}
		*m.b.Dev2 = dev2
	}
	c := m.b.C
	if m.mirrorM1 {
		pr, _ := vary(m.nomPar[0], m.sp1, s.Pol, m.area1, z, 8)
		vgs, ok := diodeVGS(s.Pol, pr, m.pr.TNom, s.W, s.L, s.TempK, m.iref, m.vgs0[0], s.VDD)
		if !ok {
			return r, false
		}
		c.VSources[m.b.Input].V = m.near(vgs + m.iref*s.RS)
	}
	if m.mirrorLoad {
		pr, _ := vary(m.nomPar[1], m.sp2, m.pol2, m.area2, z, 10)
		vgs, ok := diodeVGS(m.pol2, pr, m.pr.TNom, s.LoadW, s.LoadL, s.TempK, m.iref, m.vgs0[1], s.VDD)
		if !ok {
			return r, false
		}
		c.VSources[m.b.BiasSrc].V = m.loadNear(vgs)
	}
	op, err := c.SolveDC(m.guess, circuit.Options{})
	if err != nil {
		return r, false
	}
	const slack = 1e-6 // V, as the stage's own servo check
	for _, sv := range c.Servos {
		if v := op.Source[sv.Source]; !(v >= sv.Lo-slack && v <= sv.Hi+slack) {
			return r, false
		}
	}
	f1 := c.FETs[m.b.M1]
	v := op.V
	rep := f1.Dev.Report(v[f1.D], v[f1.G], v[f1.S], v[f1.B])
	r.id, r.margin = rep.ID, rep.Margin
	if m.b.M2 >= 0 { // the margin counts every device
		f2 := c.FETs[m.b.M2]
		r.margin = math.Min(r.margin, f2.Dev.Report(v[f2.D], v[f2.G], v[f2.S], v[f2.B]).Margin)
	}
	r.vout = v[m.b.Ports.Out]
	r.idd = -op.Branch[m.b.Supply]
	r.power = s.VDD * r.idd
	nw, err := c.Linearize(op, m.b.Ports, s.TempK)
	if err != nil {
		return r, false
	}
	h0, ok := m.resp.at(nw, 0)
	if !ok {
		return r, false
	}
	r.gain = real(h0)
	if f, ok := m.resp.f3dB(nw, r.gain, fmin, fmax); ok {
		r.f3db = f
	} else {
		r.noCrossing = true
	}
	for _, x := range [...]float64{r.gain, r.id, r.vout, r.idd, r.power, r.margin} {
		if math.IsNaN(x) || math.IsInf(x, 0) {
			return r, false
		}
	}
	return r, true
}
