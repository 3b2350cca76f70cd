package circuit

import (
	"math"
	"testing"
)

// Tolerances. The DC solver stops on a relative KCL residual of 1e-9, so
// solved voltages of a linear network agree with the exact answer to about
// that; 1e-8 leaves a decade of margin.
const dcTol = 1e-8

func near(a, b, rel float64) bool {
	return math.Abs(a-b) <= rel*math.Max(math.Abs(a), math.Abs(b))+1e-300
}

// A two-resistor divider: Ohm's law gives V(mid) = V·R2/(R1+R2).
func TestDividerDC(t *testing.T) {
	c := New()
	top, mid := c.AddNode("top"), c.AddNode("mid")
	vs := c.AddVSource("V1", top, Ground, 3)
	c.AddResistor("R1", top, mid, 1e3)
	c.AddResistor("R2", mid, Ground, 2e3)
	op, err := c.SolveDC(nil, Options{})
	if err != nil {
		t.Fatal(err)
	}
	if want := 3 * 2e3 / 3e3; !near(op.V[mid], want, dcTol) {
		t.Errorf("V(mid) = %.12g, want %.12g", op.V[mid], want)
	}
	// The source delivers 1 mA: its branch current P→source→N is −1 mA.
	if want := -1e-3; !near(op.Branch[vs], want, dcTol) {
		t.Errorf("source current = %g, want %g", op.Branch[vs], want)
	}
	checkKCL(t, c, op)
}

// A voltage servo finds the source value that puts a node at a target:
// with a 1:2 divider, V(mid) = 1.5 V needs a 2.25 V source.
func TestVoltageServo(t *testing.T) {
	c := New()
	top, mid := c.AddNode("top"), c.AddNode("mid")
	vs := c.AddVSource("V1", top, Ground, 0)
	c.AddResistor("R1", top, mid, 1e3)
	c.AddResistor("R2", mid, Ground, 2e3)
	c.AddServo(Servo{Source: vs, Kind: ServoVoltage, Target: int(mid), Value: 1.5, Lo: 0, Hi: 10})
	op, err := c.SolveDC(nil, Options{})
	if err != nil {
		t.Fatal(err)
	}
	if !near(op.Source[vs], 2.25, dcTol) || !near(op.V[mid], 1.5, dcTol) {
		t.Errorf("source %g V, mid %g V; want 2.25 V and 1.5 V", op.Source[vs], op.V[mid])
	}
}

// A current source into a resistor: V = I·R, and the ISource sign
// convention (current leaves A, enters B).
func TestCurrentSource(t *testing.T) {
	c := New()
	a := c.AddNode("a")
	c.AddISource("I1", Ground, a, 2e-3)
	c.AddResistor("R1", a, Ground, 500)
	op, err := c.SolveDC(nil, Options{})
	if err != nil {
		t.Fatal(err)
	}
	if !near(op.V[a], 1.0, dcTol) {
		t.Errorf("V(a) = %g, want 1 V", op.V[a])
	}
}

func TestCheckRejectsBadCircuits(t *testing.T) {
	cases := map[string]func(c *Circuit){
		"zero resistance": func(c *Circuit) { c.AddResistor("R", 1, 0, 0) },
		"NaN source":      func(c *Circuit) { c.AddVSource("V", 1, 0, math.NaN()) },
		"node range":      func(c *Circuit) { c.AddResistor("R", 1, 7, 1) },
		"servo target": func(c *Circuit) {
			v := c.AddVSource("V", 1, 0, 1)
			c.AddServo(Servo{Source: v, Kind: ServoCurrent, Target: 3})
		},
	}
	for name, build := range cases {
		c := New()
		c.AddNode("a")
		build(c)
		if _, err := c.SolveDC(nil, Options{}); err == nil {
			t.Errorf("%s: no error", name)
		}
	}
}

func checkKCL(t *testing.T, c *Circuit, op OperatingPoint) {
	t.Helper()
	imb, mag := c.KCL(op)
	for n := 1; n < len(imb); n++ {
		// The solver's own tolerance is 1e-9 of the currents at a node
		// plus gmin (1e-12 S) times the node voltage; allow 1e-8.
		if math.Abs(imb[n]) > 1e-8*mag[n]+1e-11*math.Abs(op.V[n])+1e-18 {
			t.Errorf("KCL at %s: imbalance %.3g A of %.3g A", c.NodeName(Node(n)), imb[n], mag[n])
		}
	}
}

// rcCircuit: a signal source with series resistance R driving a capacitor C
// to ground at the output.
func rcCircuit(r, cap float64) (*Circuit, Ports) {
	c := New()
	sig, out := c.AddNode("sig"), c.AddNode("out")
	vs := c.AddVSource("VSIG", sig, Ground, 0)
	ri := c.AddResistor("R", sig, out, r)
	c.AddCapacitor("C", out, Ground, cap)
	return c, Ports{Signal: vs, In: out, Out: out, RSig: ri, RL: -1}
}

// The RC low-pass: one pole at −1/(RC), |H| = 1/√(1+(ωRC)²) (any circuits
// text), and its total output noise is √(kT/C) whatever R is (the kT/C
// result, common practice: 64.36 µV rms for 1 pF at 300 K).
func TestRCLowPass(t *testing.T) {
	const r, cap, temp = 1e3, 1e-12, 300.0
	c, ports := rcCircuit(r, cap)
	op, err := c.SolveDC(nil, Options{})
	if err != nil {
		t.Fatal(err)
	}
	nw, err := c.Linearize(op, ports, temp)
	if err != nil {
		t.Fatal(err)
	}
	poles, err := nw.Poles()
	if err != nil {
		t.Fatal(err)
	}
	if len(poles) != 1 || !near(real(poles[0]), -1/(r*cap), 1e-12) || imag(poles[0]) != 0 {
		t.Fatalf("poles %v, want one at %g rad/s", poles, -1/(r*cap))
	}
	var an Analyzer
	var resp Response
	resp.F = LogSweep(nil, 1, 1e14, 40)
	resp.Resize(len(resp.F))
	an.Sweep(nw, &resp)
	for i, f := range resp.F {
		wrc := 2 * math.Pi * f * r * cap
		want := -10 * math.Log10(1+wrc*wrc)
		if math.Abs(resp.MagDB[i]-want) > 1e-9 {
			t.Fatalf("f = %g: |H| = %.12g dB, want %.12g dB", f, resp.MagDB[i], want)
		}
		wantPh := -math.Atan(wrc) * 180 / math.Pi
		if math.Abs(resp.PhaseDeg[i]-wantPh) > 1e-9 {
			t.Fatalf("f = %g: phase %.9g°, want %.9g°", f, resp.PhaseDeg[i], wantPh)
		}
	}
	// √(kT/C) with CODATA k = 1.380649e-23 J/K: 64.36 µV at 1 pF, 300 K
	// (shared/reference/checks.md). The sweep stops at 1e14 Hz, which
	// leaves out (2/π)·fp/fmax ≈ 1e-6 of the noise power; the power-law
	// integration is exact on each segment's own power law, so the
	// remaining error is the 40-points-per-decade sampling of the knee:
	// well under 1e-3.
	vn := IntegrateRMS(resp.F, resp.NoiseOut, 1e-3, 1e15)
	want := math.Sqrt(1.380649e-23 * temp / cap)
	if !near(vn, want, 1e-3) || math.Abs(want-64.36e-6) > 0.01e-6 {
		t.Errorf("integrated output noise %.5g V rms, want √(kT/C) = %.5g V (64.36 µV)", vn, want)
	}
	// Johnson–Nyquist at low frequency: √(4kTR) = 4.0704 nV/√Hz for
	// 1 kΩ at 300 K (checks.md); at 1 Hz the capacitor is open.
	if !near(resp.NoiseOut[0], 4.0704e-9, 1e-4) {
		t.Errorf("noise density at 1 Hz %.5g V/√Hz, want 4.0704 nV/√Hz", resp.NoiseOut[0])
	}
}

// Zeros from the bordered determinant: a resistive divider whose top
// resistor is bridged by a capacitor has a zero at −1/(R1·C1) and a pole at
// −1/((R1‖R2)·C1) (any circuits text).
func TestBridgedDividerZero(t *testing.T) {
	const r1, r2, c1 = 1e3, 3e3, 2e-12
	c := New()
	sig, out := c.AddNode("sig"), c.AddNode("out")
	vs := c.AddVSource("V", sig, Ground, 0)
	c.AddResistor("R1", sig, out, r1)
	c.AddResistor("R2", out, Ground, r2)
	c.AddCapacitor("C1", sig, out, c1)
	op, _ := c.SolveDC(nil, Options{})
	nw, err := c.Linearize(op, Ports{Signal: vs, In: out, Out: out, RSig: -1, RL: -1}, 300)
	if err != nil {
		t.Fatal(err)
	}
	z, err := nw.Zeros()
	if err != nil {
		t.Fatal(err)
	}
	p, _ := nw.Poles()
	if len(z) != 1 || !near(real(z[0]), -1/(r1*c1), 1e-9) {
		t.Errorf("zeros %v, want −1/(R1·C1) = %g", z, -1/(r1*c1))
	}
	rp := r1 * r2 / (r1 + r2)
	if len(p) != 1 || !near(real(p[0]), -1/(rp*c1), 1e-9) {
		t.Errorf("poles %v, want %g", p, -1/(rp*c1))
	}
	mb, err := nw.Midband()
	if err != nil {
		t.Fatal(err)
	}
	if !near(mb.Gain, r2/(r1+r2), 1e-12) {
		t.Errorf("midband gain %g, want %g", mb.Gain, r2/(r1+r2))
	}
}

// IntegrateRMS is exact on power laws: white noise over a band gives
// d·√(hi−lo), 1/f noise gives √(K·ln(hi/lo)).
func TestIntegratePowerLaws(t *testing.T) {
	f := LogSweep(nil, 1, 1e6, 7)
	white := make([]float64, len(f))
	flick := make([]float64, len(f))
	for i, x := range f {
		white[i] = 3e-9
		flick[i] = math.Sqrt(1e-12 / x)
	}
	if got, want := IntegrateRMS(f, white, 10, 1e5), 3e-9*math.Sqrt(1e5-10); !near(got, want, 1e-12) {
		t.Errorf("white: %g, want %g", got, want)
	}
	if got, want := IntegrateRMS(f, flick, 3, 3e5), math.Sqrt(1e-12*math.Log(1e5)); !near(got, want, 1e-9) {
		t.Errorf("1/f: %g, want %g", got, want)
	}
}

func TestLogSweep(t *testing.T) {
	f := LogSweep(nil, 10, 1e11, 40)
	if len(f) != 401 || f[0] != 10 || !near(f[400], 1e11, 1e-12) {
		t.Errorf("sweep has %d points from %g to %g", len(f), f[0], f[len(f)-1])
	}
}

func TestLogSweepPartialDecade(t *testing.T) {
	f := LogSweep(nil, 1, 5e3, 10) // 3.699 decades: ⌈36.99⌉ + 1 = 38 points, ending at fmax
	if len(f) != 38 || f[len(f)-1] != 5e3 || !(f[len(f)-2] < 5e3) {
		t.Errorf("%d points, last two %g %g", len(f), f[len(f)-2], f[len(f)-1])
	}
}
