package circuit

import (
	"math"
	"math/cmplx"

	"stagewright/core/dense"
)

// Poles returns the natural frequencies of the network, s in rad/s: the
// finite roots of det(G + s·C) = 0.
func (nw *Network) Poles() ([]complex128, error) {
	if nw.N <= 3 && !nw.eigenOnly {
		if r, ok := smallRoots(pencilPoly(nw.N, nw.G, nw.C), maxZero); ok {
			return r, nil
		}
	}
	return dense.PencilRoots(nw.N, nw.G, nw.C)
}

// Zeros returns the finite zeros, s in rad/s, of the transfer function from
// the signal source to the output: the roots of the bordered determinant
//
//	det [ Y(s)  b(s) ]
//	    [ e_outᵀ  0  ] = −det Y(s) · H(s),  b(s) = −(GSig + s·CSig).
func (nw *Network) Zeros() ([]complex128, error) {
	if nw.Out < 0 {
		return nil, errNoPort("output")
	}
	n := nw.N
	m := n + 1
	g := make([]float64, m*m)
	c := make([]float64, m*m)
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			g[i*m+j] = nw.G[i*n+j]
			c[i*m+j] = nw.C[i*n+j]
		}
		g[i*m+n] = -nw.GSig[i]
		c[i*m+n] = -nw.CSig[i]
	}
	g[n*m+nw.Out] = 1
	if m <= 4 && !nw.eigenOnly {
		if r, ok := smallRoots(pencilPoly(m, g, c), maxZero); ok {
			return r, nil
		}
	}
	z, err := dense.PencilRoots(m, g, c)
	// A zero beyond 1 PHz is a zero at infinity that rounding moved into
	// view (the bordered pencil has more infinite roots than the plain one).
	kept := z[:0]
	for _, s := range z {
		if cmplx.Abs(s) <= maxZero {
			kept = append(kept, s)
		}
	}
	return kept, err
}

// maxZero (rad/s) is 2π·1 PHz, far above any frequency a transistor stage
// responds to.
const maxZero = 2 * math.Pi * 1e15
