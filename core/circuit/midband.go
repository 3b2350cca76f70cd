package circuit

import (
	"math"
	"sync"

	"stagewright/core/dense"
)

// Midband is the low-frequency small-signal behaviour (capacitors open).
type Midband struct {
	Gain float64 // v(out)/v(signal), with the load resistance connected
	Rin  float64 // Ω looking into In, signal-source resistance excluded; +Inf when open
	Rout float64 // Ω looking into Out with the signal shorted, load resistance excluded; +Inf when open
}

// Midband computes gain, input and output resistance numerically from the
// conductance matrix: the gain from a unit signal, each resistance by
// driving its port with a unit test voltage and measuring the current the
// test source delivers.
func (nw *Network) Midband() (Midband, error) {
	n := nw.N
	var m Midband
	if nw.Out < 0 {
		return m, errNoPort("output")
	}
	// Room on the stack for a stage's network.
	var xs [smallNodes]float64
	var gs [smallNodes * smallNodes]float64
	x, g := xs[:0], gs[:0]
	if n > smallNodes {
		x, g = make([]float64, 0, n), make([]float64, 0, n*n)
	}
	x = x[:n]
	for i := range x {
		x[i] = -nw.GSig[i]
	}
	lu, err := nw.FactorG()
	if err != nil {
		return m, err
	}
	lu.Solve(x, x)
	m.Gain = x[nw.Out]
	if nw.In >= 0 {
		g = append(g[:0], nw.G...)
		g[nw.In*n+nw.In] -= nw.RSigG
		m.Rin = driveResistance(g, n, nw.In)
	} else {
		m.Rin = math.Inf(1)
	}
	g = append(g[:0], nw.G...)
	g[nw.Out*n+nw.Out] -= nw.RLG
	m.Rout = driveResistance(g, n, nw.Out)
	return m, nil
}

// driveWork is the workspace of driveResistance, kept between calls in
// driveScratch (every entry is written before it is read).
type driveWork struct {
	lu  dense.LU
	buf []float64
}

var driveScratch = sync.Pool{New: func() any { return new(driveWork) }}

type errNoPort string

func (e errNoPort) Error() string { return "midband: the " + string(e) + " node is held by a source" }

// driveResistance holds node k of the conductance matrix g at 1 V, solves
// the other nodes, and returns 1/(current into node k). It returns +Inf when
// no current flows (an open port) or the rest of the network is singular.
func driveResistance(g []float64, n, k int) float64 {
	m := n - 1
	w := driveScratch.Get().(*driveWork)
	defer driveScratch.Put(w)
	if cap(w.buf) < m*m+m {
		w.buf = make([]float64, m*m+m)
	}
	sub, rhs := w.buf[:m*m:m*m], w.buf[m*m:m*m+m]
	for i, ii := 0, 0; i < n; i++ {
		if i == k {
			continue
		}
		rhs[ii] = -g[i*n+k]
		for j, jj := 0, 0; j < n; j++ {
			if j == k {
				continue
			}
			sub[ii*m+jj] = g[i*n+j]
			jj++
		}
		ii++
	}
	if m > 0 {
		if err := w.lu.Factorize(m, sub); err != nil {
			return math.Inf(1)
		}
		w.lu.Solve(rhs, rhs)
	}
	cur := g[k*n+k]
	scale := math.Abs(g[k*n+k])
	for j, jj := 0, 0; j < n; j++ {
		if j == k {
			continue
		}
		cur += g[k*n+j] * rhs[jj]
		scale += math.Abs(g[k*n+j] * rhs[jj])
		jj++
	}
	// A current that is only rounding noise of the terms that make it up
	// means the port is open.
	if math.Abs(cur) <= 1e-13*scale || cur == 0 {
		return math.Inf(1)
	}
	return 1 / cur
}

// SupplyGain is the low-frequency small-signal gain from the supply to the
// output, v(out)/v(supply) (V/V, signed), with the load resistance
// connected: the network driven by GSup (each source-held node moved by its
// source's Supply share, the signal source's among them; with the usual
// shares the signal is held), solved with the same factorization of G as
// the midband gain. It allocates nothing for a stage-sized network.
func (nw *Network) SupplyGain() (float64, error) {
	if nw.Out < 0 {
		return 0, errNoPort("output")
	}
	if len(nw.GSup) != nw.N {
		return 0, errNoSupply{}
	}
	lu, err := nw.FactorG()
	if err != nil {
		return 0, err
	}
	var xs [smallNodes]float64
	x := xs[:0]
	if nw.N > smallNodes {
		x = make([]float64, 0, nw.N)
	}
	x = x[:nw.N]
	for i := range x {
		x[i] = -nw.GSup[i]
	}
	lu.Solve(x, x)
	return x[nw.Out], nil
}

// SupplyGainDC is SupplyGain at DC, where the AC-coupled load resistance
// carries no current: the same excitation solved with the load resistance
// taken out of G. It factors its own matrix and allocates; the operating
// point moved by a small supply step changes the output by this much per
// volt.
func (nw *Network) SupplyGainDC() (float64, error) {
	n := nw.N
	if nw.Out < 0 {
		return 0, errNoPort("output")
	}
	if len(nw.GSup) != n {
		return 0, errNoSupply{}
	}
	g := append([]float64(nil), nw.G...)
	g[nw.Out*n+nw.Out] -= nw.RLG
	var lu dense.LU
	if err := lu.Factorize(n, g); err != nil {
		return 0, err
	}
	x := make([]float64, n)
	for i := range x {
		x[i] = -nw.GSup[i]
	}
	lu.Solve(x, x)
	return x[nw.Out], nil
}

type errNoSupply struct{}

func (errNoSupply) Error() string {
	return "supply gain: the network has no supply coupling (it was not built by Linearize)"
}
