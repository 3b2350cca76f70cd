package circuit

import "testing"

// The supply gain of a resistor network by superposition (Millman's
// theorem): a node tied through conductances G_k to sources v_k sits at
// Σ G_k·v_k / Σ G_k. A unit supply change moves the supply and the bias
// referred to it by 1, the source from ground to "neg" by −1 (it holds
// neg at −V), and neither the ground-referred level nor the signal. At DC
// the AC-coupled load carries nothing and drops out of both sums.
func TestSupplyGainSuperposition(t *testing.T) {
	c := New()
	vdd, vb, ref, sig, neg, out := c.AddNode("vdd"), c.AddNode("vb"), c.AddNode("ref"), c.AddNode("sig"), c.AddNode("neg"), c.AddNode("out")
	supply := c.AddVSource("VDD", vdd, Ground, 1.8)
	bias := c.AddVSource("VB", vb, Ground, 1.1)
	c.AddVSource("VREF", ref, Ground, 0.6)
	signal := c.AddVSource("VSIG", sig, Ground, 0.7)
	below := c.AddVSource("VNEG", Ground, neg, 0.5)
	c.VSources[supply].Supply = 1
	c.VSources[bias].Supply = 1
	c.VSources[below].Supply = 1
	g := [...]float64{1 / 1e3, 1 / 2.2e3, 1 / 4.7e3, 1 / 10e3, 1 / 3.3e3, 1 / 6.8e3, 1 / 1.5e3} // vdd, vb, ref, sig, neg, ground, RL
	from := [...]Node{vdd, vb, ref, sig, neg, Ground}
	for i, n := range from {
		if i%2 == 0 { // both orientations, so both ends' stamps are used
			c.AddResistor("R", n, out, 1/g[i])
		} else {
			c.AddResistor("R", out, n, 1/g[i])
		}
	}
	rl := c.AddResistor("RL", out, Ground, 1/g[6])
	c.Resistors[rl].ACOnly = true
	op, err := c.SolveDC(nil, Options{})
	if err != nil {
		t.Fatal(err)
	}
	nw, err := c.Linearize(op, Ports{Signal: signal, In: out, Out: out, RSig: -1, RL: rl}, 300)
	if err != nil {
		t.Fatal(err)
	}
	moved := g[0] + g[1] - g[4] // Σ G_k·Δv_k per volt of supply
	sumDC := g[0] + g[1] + g[2] + g[3] + g[4] + g[5]
	mid, err := nw.SupplyGain()
	if err != nil {
		t.Fatal(err)
	}
	dc, err := nw.SupplyGainDC()
	if err != nil {
		t.Fatal(err)
	}
	// One LU solve of a 1×1 system: rounding only.
	if want := moved / (sumDC + g[6]); !near(mid, want, 1e-13) {
		t.Errorf("midband supply gain %.15g, want %.15g", mid, want)
	}
	if want := moved / sumDC; !near(dc, want, 1e-13) {
		t.Errorf("DC supply gain %.15g, want %.15g", dc, want)
	}
	// The signal gain is unchanged by the supply coupling: G4/ΣG.
	m, err := nw.Midband()
	if err != nil {
		t.Fatal(err)
	}
	if want := g[3] / (sumDC + g[6]); !near(m.Gain, want, 1e-13) {
		t.Errorf("signal gain %.15g, want %.15g", m.Gain, want)
	}
}

// A network not built by Linearize has no supply coupling: an error, not a
// zero gain.
func TestSupplyGainNeedsCoupling(t *testing.T) {
	nw := &Network{N: 1, G: []float64{1}, C: []float64{0}, GSig: []float64{-1}, CSig: []float64{0}, In: 0, Out: 0}
	if _, err := nw.SupplyGain(); err == nil {
		t.Error("SupplyGain without GSup: no error")
	}
}
