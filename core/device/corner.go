package device

import (
	"fmt"
)

// Spread describes how one polarity's parameters vary in manufacture: the
// global (die-to-die) spread that process corners and Monte Carlo draw
// from, and the Pelgrom coefficients of local mismatch between neighbouring
// devices (Pelgrom, Duinmaijer, Welbers, IEEE JSSC 1989):
//
//	σ(ΔVT) = AVT/√(W·L),  σ(Δβ/β) = ABeta/√(W·L).
type Spread struct {
	SigmaVT float64 // V, one standard deviation of the global threshold shift
	SigmaMu float64 // relative (1 = 100 %), one standard deviation of the global mobility shift
	AVT     float64 // V·m, Pelgrom threshold-mismatch coefficient (1 mV·µm = 1e-9 V·m)
	ABeta   float64 // m, Pelgrom current-factor mismatch coefficient, relative·m (1 %·µm = 1e-8 m)
}

// CornerSigmas is how many global standard deviations a slow or fast corner
// lies from typical.
const CornerSigmas = 3

// spreads holds the spreads of the built-in processes, indexed by process
// name, then n-channel and p-channel. INVENTED DEMO DATA, like the processes
// themselves. The magnitudes are common practice, from memory: a global
// threshold σ of 10–20 mV and a mobility σ of 3–5 %; AVT close to 1 mV·µm
// per nm of oxide (d180: Tox 4.1 nm → 5 mV·µm, d65: 1.8 nm → 3 mV·µm),
// p-channel devices somewhat worse than n-channel, and ABeta near 1 %·µm.
var spreads = map[string][2]Spread{
	"d180": {
		{SigmaVT: 15e-3, SigmaMu: 0.035, AVT: 5.0e-9, ABeta: 1.0e-8},
		{SigmaVT: 17e-3, SigmaMu: 0.040, AVT: 5.5e-9, ABeta: 1.2e-8},
	},
	"d65": {
		{SigmaVT: 18e-3, SigmaMu: 0.045, AVT: 3.0e-9, ABeta: 1.0e-8},
		{SigmaVT: 20e-3, SigmaMu: 0.050, AVT: 3.3e-9, ABeta: 1.2e-8},
	},
}

// Spread returns the manufacturing spread of polarity p: the process's
// own figures (NSpread, PSpread) where they are not 0, the rest from the
// built-in process's table. A process without a table (not a built-in
// one) gets a generic invented spread: SigmaVT 15 mV, SigmaMu 4 %, AVT =
// 1 mV·µm per nm of Tox and ABeta 1 %·µm. A polarity that is neither NMOS
// nor PMOS gets the zero Spread.
func (pr Process) Spread(p Polarity) Spread {
	idx, own := 0, pr.NSpread
	switch p {
	case NMOS:
	case PMOS:
		idx, own = 1, pr.PSpread
	default:
		return Spread{}
	}
	s, ok := spreads[pr.Name]
	base := s[idx]
	if !ok {
		// 1 mV·µm per nm: AVT = (Tox/1 nm)·1e-9 V·m, which is Tox·(1 V).
		base = Spread{SigmaVT: 15e-3, SigmaMu: 0.04, AVT: pr.Params(p).Tox * 1.0, ABeta: 1e-8}
	}
	for _, f := range [...]struct{ own, base *float64 }{
		{&own.SigmaVT, &base.SigmaVT}, {&own.SigmaMu, &base.SigmaMu}, {&own.AVT, &base.AVT}, {&own.ABeta, &base.ABeta},
	} {
		if *f.own != 0 {
			*f.base = *f.own
		}
	}
	return base
}

// CornerNames lists the process corners Corner accepts: the first letter
// is the n-channel device, the second the p-channel one; t = typical,
// s = slow, f = fast.
func CornerNames() []string { return []string{"tt", "ss", "ff", "sf", "fs"} }

// CornerError reports a corner name Corner does not know.
type CornerError struct {
	Name string
}

func (e *CornerError) Error() string {
	return fmt.Sprintf("device: corner %q is not one of tt, ss, ff, sf, fs (first letter n-channel, second p-channel)", e.Name)
}

// Corner returns pr moved to a process corner. A slow device has its
// threshold magnitude VT0 raised by CornerSigmas·SigmaVT and its mobility
// U0 lowered by the factor 1 − CornerSigmas·SigmaMu; a fast one the
// opposite; a typical one is unchanged, so Corner(pr, "tt") returns pr
// exactly. The title says the corner; the name stays. Errors: *CornerError for an
// unknown name, a wrapped *RangeError if the shifted parameters leave
// their accepted range.
func Corner(pr Process, name string) (Process, error) {
	if len(name) != 2 {
		return pr, &CornerError{Name: name}
	}
	kn, okn := cornerSign(name[0])
	kp, okp := cornerSign(name[1])
	if !okn || !okp || (name[0] == 't') != (name[1] == 't') {
		return pr, &CornerError{Name: name}
	}
	if kn == 0 && kp == 0 {
		return pr, nil
	}
	out := pr
	out.N = shift(pr.N, pr.Spread(NMOS), kn)
	out.P = shift(pr.P, pr.Spread(PMOS), kp)
	out.NBins = shiftBins(pr.NBins, pr.Spread(NMOS), kn)
	out.PBins = shiftBins(pr.PBins, pr.Spread(PMOS), kp)
	out.Title = pr.Title + ", corner " + name // Name stays, so Spread and look-ups by name still work
	if err := out.N.Validate(); err != nil {
		return pr, fmt.Errorf("device: corner %q of process %q, n-channel: %w", name, pr.Name, err)
	}
	if err := out.P.Validate(); err != nil {
		return pr, fmt.Errorf("device: corner %q of process %q, p-channel: %w", name, pr.Name, err)
	}
	return out, nil
}

// shiftBins returns a copy of bins with each set moved as shift moves one.
func shiftBins(bins []Bin, s Spread, k float64) []Bin {
	if len(bins) == 0 || k == 0 {
		return bins
	}
	out := make([]Bin, len(bins))
	for i, b := range bins {
		out[i] = Bin{L: b.L, Params: shift(b.Params, s, k)}
	}
	return out
}

// cornerSign maps a corner letter to the number of global σ a device is
// slowed by: s → +CornerSigmas, f → −CornerSigmas, t → 0.
func cornerSign(c byte) (float64, bool) {
	switch c {
	case 't':
		return 0, true
	case 's':
		return CornerSigmas, true
	case 'f':
		return -CornerSigmas, true
	}
	return 0, false
}

// shift slows a parameter set by k global standard deviations (k < 0
// speeds it up).
func shift(p Params, s Spread, k float64) Params {
	p.VT0 += k * s.SigmaVT
	p.U0 *= 1 - k*s.SigmaMu
	return p
}
