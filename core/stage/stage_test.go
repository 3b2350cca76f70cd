package stage

import (
	"fmt"
	"math"
	"testing"

	"stagewright/core/circuit"
	"stagewright/core/device"
)

func baseSpec(t testing.TB, proc string, kind Kind, pol device.Polarity, load Load) Spec {
	t.Helper()
	pr, ok := device.Builtin(proc)
	if !ok {
		t.Fatalf("no process %s", proc)
	}
	s := Spec{
		Kind: kind, Pol: pol, Load: load, Bias: ByID, Process: pr, VDD: pr.VDD, TempK: 300.15,
		W: 10e-6, L: 0.5e-6, ID: 100e-6, GmID: 12, Vin: 0.7, VG: 1.2, VOut: pr.VDD / 2,
		RD: 5e3, RS: 0, LoadW: 10e-6, LoadL: 1e-6, LoadVB: 0.7, RSig: 1e3, RL: math.Inf(1), CL: 100e-15,
	}
	if proc == "d65" {
		s.L, s.VG, s.Vin, s.LoadVB, s.LoadL, s.RD = 0.2e-6, 0.8, 0.5, 0.5, 0.5e-6, 3e3
	}
	if kind == SF && load == Resistor {
		s.RS = 5e3
	}
	// Input levels by stage, measured from M1's source-side rail: a
	// follower's gate sits high, a common-gate input low.
	switch kind {
	case SF:
		s.Vin = 0.65 * s.VDD
	case CG:
		s.Vin, s.VG = 0.2*s.VDD, 0.7*s.VDD
	}
	if pol == device.PMOS {
		s.Vin, s.VG = s.VDD-s.Vin, s.VDD-s.VG
		s.W *= 3 // holes are slower: a wider device for the same current
	}
	if s.loadPol() == device.PMOS {
		s.LoadW *= 3
	}
	return s
}

// exact gives the exact midband gain, rin and rout of each stage's linear
// small-signal circuit in terms of gm, gmb, ro of M1 and the load, written
// out from the textbook analysis (Razavi, Design of Analog CMOS Integrated
// Circuits, 2nd ed., ch. 3; Sedra & Smith, Microelectronic Circuits; from
// memory): CS with degeneration through its Norton equivalent
// Gm = gm/(1+(gm+gmb)·RS+RS/ro), Rout = ro+RS+(gm+gmb)·ro·RS; CG
// Av = ZL·(1+(gm+gmb)·ro)/(ro+(gm+gmb)·ro·Rsig+ZL+Rsig),
// Rin = (ZL+ro)/(1+(gm+gmb)·ro); SF Av = gm/(gm+gmb+gds+1/ZL).
func exact(s Spec, m1 device.Report, m2 *device.Report) (gain, rin, rout float64) {
	gm, gmb, ro := m1.GM, m1.GMB, 1/m1.GDS
	inf := math.Inf(1)
	var zNoRL float64 // load impedance at the output, RL not included
	switch s.Load {
	case Resistor:
		zNoRL = s.RD
		if s.Kind == SF {
			zNoRL = s.RS
		}
	case Active:
		zNoRL = 1 / m2.GDS
	case Diode:
		zNoRL = 1 / (m2.GM + m2.GDS) // source and bulk on the same rail: no gmb
	}
	zl := par(zNoRL, s.RL)
	switch s.Kind {
	case CS:
		gt := gm + gmb
		gmEff := gm / (1 + gt*s.RS + s.RS/ro)
		rdrain := ro + s.RS + gt*ro*s.RS
		return -gmEff * par(rdrain, zl), inf, par(rdrain, zNoRL)
	case CG:
		gt := gm + gmb
		gain = zl * (1 + gt*ro) / (ro + gt*ro*s.RSig + zl + s.RSig)
		rin = (zl + ro) / (1 + gt*ro)
		rout = par(zNoRL, ro+s.RSig+gt*ro*s.RSig)
		return gain, rin, rout
	default: // SF
		return gm / (gm + gmb + 1/ro + 1/zl), inf, 1 / (gm + gmb + 1/ro + 1/zNoRL)
	}
}

type variant struct {
	proc string
	kind Kind
	pol  device.Polarity
	load Load
	rs   float64
	rl   float64
}

func variants() []variant {
	var vs []variant
	for _, proc := range []string{"d180", "d65"} {
		for _, kind := range []Kind{CS, CG, SF} {
			for _, pol := range []device.Polarity{device.NMOS, device.PMOS} {
				for _, load := range []Load{Resistor, Active, Diode} {
					if kind == SF && load == Diode {
						continue
					}
					for _, rl := range []float64{math.Inf(1), 20e3} {
						vs = append(vs, variant{proc, kind, pol, load, 0, rl})
						if kind == CS && load == Resistor {
							vs = append(vs, variant{proc, kind, pol, load, 1e3, rl})
						}
					}
				}
			}
		}
	}
	return vs
}

func (v variant) spec(t testing.TB) Spec {
	s := baseSpec(t, v.proc, v.kind, v.pol, v.load)
	if v.kind == CS {
		s.RS = v.rs
	}
	s.RL = v.rl
	if v.rs > 0 {
		s.ID = 50e-6
	}
	return s
}

func (v variant) String() string {
	return fmt.Sprintf("%s/%s/%s/%s/rs=%g/rl=%g", v.proc, v.kind, v.pol, v.load, v.rs, v.rl)
}

// The numerically computed midband gain, rin and rout equal the exact
// textbook expressions for the same linear circuit with the engine's own
// gm, gmb, ro. They are the same circuit, so the only difference is
// rounding in a 3×3 to 5×5 solve: 1e-9 relative (the issue asks 1e-6).
func TestMidbandMatchesTextbook(t *testing.T) {
	for _, v := range variants() {
		t.Run(v.String(), func(t *testing.T) {
			s := v.spec(t)
			sol, err := Solve(s)
			if err != nil {
				t.Fatal(err)
			}
			nw, err := sol.C.Linearize(sol.OP, sol.Ports, s.TempK)
			if err != nil {
				t.Fatal(err)
			}
			mb, err := nw.Midband()
			if err != nil {
				t.Fatal(err)
			}
			m1 := sol.Report(1)
			var m2 *device.Report
			if sol.M2 >= 0 {
				r := sol.Report(2)
				m2 = &r
			}
			g, rin, rout := exact(s, m1, m2)
			for _, c := range []struct {
				name      string
				got, want float64
			}{{"gain", mb.Gain, g}, {"rin", mb.Rin, rin}, {"rout", mb.Rout, rout}} {
				if math.IsInf(c.want, 1) {
					if !math.IsInf(c.got, 1) {
						t.Errorf("%s = %g, want open (∞)", c.name, c.got)
					}
					continue
				}
				if math.Abs(c.got-c.want) > 1e-9*math.Abs(c.want) {
					t.Errorf("%s = %.10g, textbook %.10g (rel %.2g)", c.name, c.got, c.want, (c.got-c.want)/c.want)
				}
			}
		})
	}
}

// Every converged operating point satisfies KCL at every node, and a bias
// by drain current delivers that current.
func TestOperatingPointKCLAndTarget(t *testing.T) {
	for _, v := range variants() {
		for _, bias := range []Bias{ByID, ByVin, ByGmID} {
			s := v.spec(t)
			s.Bias = bias
			name := v.String() + "/" + string(bias)
			sol, err := Solve(s)
			if err != nil {
				if bias == ByVin {
					continue // a fixed input level may have no solution; reported as an error
				}
				t.Errorf("%s: %v", name, err)
				continue
			}
			imb, mag := sol.C.KCL(sol.OP)
			for n := 1; n < len(imb); n++ {
				// Solver tolerance 1e-9 relative plus gmin·V; allow 1e-8.
				if math.Abs(imb[n]) > 1e-8*mag[n]+1e-11*math.Abs(sol.OP.V[n])+1e-18 {
					t.Errorf("%s: KCL at %s off by %.3g A of %.3g A", name, sol.C.NodeName(circuit.Node(n)), imb[n], mag[n])
				}
			}
			m1 := sol.Report(1)
			if bias != ByVin && math.Abs(m1.ID-s.ID) > 1e-8*s.ID {
				t.Errorf("%s: ID = %.9g, target %.9g", name, m1.ID, s.ID)
			}
			if bias == ByGmID && math.Abs(m1.GmID-s.GmID) > 1e-3*s.GmID {
				t.Errorf("%s: gm/ID = %.6g, target %.6g", name, m1.GmID, s.GmID)
			}
		}
	}
}

// Requests no circuit can meet give an error that names the input.
func TestInfeasibleBias(t *testing.T) {
	s := baseSpec(t, "d180", CS, device.NMOS, Resistor)
	s.ID, s.RD = 5e-3, 10e3
	_, err := Solve(s)
	e, ok := err.(*Error)
	if !ok || e.Key != "rd" {
		t.Fatalf("err = %v, want a stage error on rd", err)
	}
	s = baseSpec(t, "d180", CS, device.NMOS, Resistor)
	s.Bias, s.GmID = ByGmID, 60
	if _, err := Solve(s); err == nil {
		t.Error("gm/ID = 60 S/A (beyond the weak-inversion limit) gave no error")
	}
	s = baseSpec(t, "d180", CS, device.NMOS, Resistor)
	s.ID, s.RD, s.W, s.L = 2e-3, 100, 0.22e-6, 20e-6 // a long, narrow device cannot carry 2 mA
	if _, err := Solve(s); err == nil {
		t.Error("2 mA through a 0.22/20 µm device gave no error")
	}
}
