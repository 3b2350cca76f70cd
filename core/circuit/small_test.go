package circuit

import (
	"math"
	"math/rand"
	"testing"
)

// The cofactor sweep for small networks is an optimisation of the general
// LU sweep: on random networks of one to three nodes both give the same
// gain, impedances and noise. Both are exact for the same matrices; the
// difference is rounding, bounded here by 1e-9 relative (random matrices
// with entries over six decades have condition numbers up to ~1e6).
func TestSmallSweepMatchesLU(t *testing.T) {
	rng := rand.New(rand.NewSource(7))
	for trial := 0; trial < 300; trial++ {
		n := 1 + rng.Intn(3)
		nw := randomNetwork(rng, n, 0.3, 1e-4)
		nw.In, nw.Out = rng.Intn(n), rng.Intn(n)
		nw.GSig[nw.In] = -1e-3
		nw.RSigG = 1e-3 * rng.Float64()
		nw.G[nw.In*n+nw.In] += nw.RSigG
		if rng.Intn(2) == 0 {
			nw.RLG = 1e-5
			nw.G[nw.Out*n+nw.Out] += nw.RLG
		}
		nw.Noise = []NoiseSource{{A: nw.Out, B: -1, White: 1e-24, Flicker: 1e-20}, {A: nw.In, B: nw.Out, White: 3e-25}}
		var fast, slow Response
		fast.F = LogSweep(nil, 1, 1e11, 5)
		fast.Resize(len(fast.F))
		slow.F = append([]float64(nil), fast.F...)
		slow.Resize(len(slow.F))
		(&Analyzer{}).Sweep(nw, &fast)
		(&Analyzer{general: true}).Sweep(nw, &slow)
		for k := range fast.F {
			for _, c := range []struct {
				name string
				a, b float64
			}{
				{"|H|", math.Pow(10, fast.MagDB[k]/20), math.Pow(10, slow.MagDB[k]/20)},
				{"zin", fast.Zin[k], slow.Zin[k]}, {"zout", fast.Zout[k], slow.Zout[k]},
				{"noise", fast.NoiseOut[k], slow.NoiseOut[k]},
			} {
				if math.Abs(c.a-c.b) > 1e-9*math.Max(math.Abs(c.a), math.Abs(c.b)) {
					t.Fatalf("trial %d n=%d f=%g: %s small %.12g, LU %.12g", trial, n, fast.F[k], c.name, c.a, c.b)
				}
			}
			if math.Abs(fast.PhaseDeg[k]-slow.PhaseDeg[k]) > 1e-7 {
				t.Fatalf("trial %d: phase %g vs %g", trial, fast.PhaseDeg[k], slow.PhaseDeg[k])
			}
		}
	}
}

// randomNetwork draws an n-node passive-plus-transconductance network:
// diagonal conductances over three decades keep it solvable, off-diagonal
// conductances (rand − offset)·scale make it non-symmetric like a
// transistor stage (a large scale gives feedback strong enough for complex
// natural frequencies), and capacitances couple every pair of nodes.
func randomNetwork(rng *rand.Rand, n int, offset, scale float64) *Network {
	nw := &Network{N: n, G: make([]float64, n*n), C: make([]float64, n*n), GSig: make([]float64, n), CSig: make([]float64, n)}
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			if i == j {
				nw.G[i*n+j] = math.Pow(10, -6+3*rng.Float64())
				nw.C[i*n+j] = math.Pow(10, -15+3*rng.Float64())
			} else {
				nw.G[i*n+j] = (rng.Float64() - offset) * scale
				nw.C[i*n+j] = -rng.Float64() * 1e-15
			}
		}
	}
	return nw
}

func BenchmarkSweep(b *testing.B) {
	for _, general := range []bool{false, true} {
		c, ports := rcCircuit(1e3, 1e-12)
		op, _ := c.SolveDC(nil, Options{})
		nw, _ := c.Linearize(op, ports, 300)
		var r Response
		r.F = LogSweep(nil, 10, 1e11, 40)
		r.Resize(len(r.F))
		name := "cofactor"
		if general {
			name = "lu"
		}
		b.Run(name, func(b *testing.B) {
			a := Analyzer{general: general}
			b.ReportAllocs()
			for i := 0; i < b.N; i++ {
				a.Sweep(nw, &r)
			}
		})
	}
}
