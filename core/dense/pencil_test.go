package dense

import (
	"errors"
	"math"
	"math/cmplx"
	"math/rand/v2"
	"slices"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// checkRoots matches each wanted root to the nearest unused computed one
// (so that reference rounding cannot reorder a pair) and requires the
// distance to be at most tol·max(|want_i|, floor). It also checks the
// documented order: |s| ascending, and a complex pair as conj(s), s.
// nearest pairs each wanted value with the nearest computed one not taken
// by an earlier wanted value: the index in got and the distance. got must be
// at least as long as want.
func nearest(got, want []complex128) (index []int, dist []float64) {
	used := make([]bool, len(got))
	index, dist = make([]int, len(want)), make([]float64, len(want))
	for i, w := range want {
		best, bestD := -1, math.Inf(1)
		for j, g := range got {
			if d := cmplx.Abs(g - w); !used[j] && d < bestD {
				best, bestD = j, d
			}
		}
		used[best] = true
		index[i], dist[i] = best, bestD
	}
	return index, dist
}

func checkRoots(t *testing.T, got, want []complex128, tol, floor float64) {
	t.Helper()
	if len(got) != len(want) {
		t.Fatalf("got %d roots %v, want %d: %v", len(got), got, len(want), want)
	}
	best, dist := nearest(got, want)
	for i, w := range want {
		if dist[i] > tol*math.Max(cmplx.Abs(w), floor) {
			t.Errorf("want root %.10g, nearest computed %.10g (|diff| %.3g)", w, got[best[i]], dist[i])
		}
	}
	for i := 0; i+1 < len(got); i++ {
		if cmplx.Abs(got[i]) > cmplx.Abs(got[i+1]) {
			t.Errorf("roots %d, %d = %v, %v not in ascending |s|", i, i+1, got[i], got[i+1])
		}
	}
	for i := 0; i < len(got); i++ {
		switch {
		case imag(got[i]) < 0:
			if i+1 == len(got) || got[i+1] != cmplx.Conj(got[i]) {
				t.Errorf("root %d = %v is not followed by its exact conjugate", i, got[i])
			}
			i++
		case imag(got[i]) > 0:
			t.Errorf("root %d = %v with positive imaginary part is not preceded by its conjugate", i, got[i])
		}
	}
}

// quadRoots solves a·s² + b·s + c = 0 by the quadratic formula in the form
// q = −(b + sign(b)·√(b² − 4ac))/2, s = q/a and c/q, which avoids
// cancellation when the roots are far apart (common practice).
func quadRoots(a, b, c float64) []complex128 {
	d := cmplx.Sqrt(complex(b*b-4*a*c, 0))
	if b < 0 {
		d = -d
	}
	q := -(complex(b, 0) + d) / 2
	return []complex128{q / complex(a, 0), complex(c, 0) / q}
}

func diag(v ...float64) []float64 {
	n := len(v)
	a := make([]float64, n*n)
	for i, x := range v {
		a[i*n+i] = x
	}
	return a
}

// gonumPoles returns the eigenvalues of −C⁻¹·G for an invertible C, with
// C⁻¹·G formed by gonum's Solve and the eigenvalues by gonum's Eigen: the
// independent reference for a pencil without infinite roots.
func gonumPoles(t *testing.T, n int, g, c []float64) []complex128 {
	t.Helper()
	var x mat.Dense
	if err := x.Solve(mat.NewDense(n, n, slices.Clone(c)), mat.NewDense(n, n, slices.Clone(g))); err != nil {
		t.Fatalf("gonum Solve: %v", err)
	}
	x.Scale(-1, &x)
	var e mat.Eigen
	if !e.Factorize(&x, mat.EigenNone) {
		t.Fatal("gonum Eigen failed")
	}
	return e.Values(nil)
}

// ladder returns G and C of an RC ladder: a resistor r0 from the driven end
// (AC ground) to node 0, resistors r[i] from node i to node i+1, and a
// capacitor c[i] from node i to ground.
func ladder(r0 float64, r, c []float64) (g, cm []float64) {
	n := len(c)
	g, cm = make([]float64, n*n), diag(c...)
	g[0] = 1 / r0
	for i, ri := range r {
		y := 1 / ri
		g[i*n+i] += y
		g[(i+1)*n+i+1] += y
		g[i*n+i+1] -= y
		g[(i+1)*n+i] -= y
	}
	return g, cm
}

func TestPencilRoots(t *testing.T) {
	const (
		// Diagonal and 2×2 problems with entries of one scale: the roots
		// are exact up to a few hundred eps.
		tight = 1e-13
		// RC ladders spread their roots over up to ~3 decades; eigenvalue
		// errors are eps·‖M‖, so the smallest root carries ~1e3 more
		// relative error than the largest. 1e-10 leaves a wide margin.
		ladderTol = 1e-10
	)
	g1, c1 := 1e-3, 1e-12
	tests := []struct {
		name  string
		n     int
		g, c  []float64
		want  func(t *testing.T) []complex128
		tol   float64
		floor float64 // roots near 0 compare absolutely against floor
	}{
		{
			// (a) det = Π (g_i + s·c_i), roots −g_i/c_i (direct algebra).
			name: "diagonal", n: 3,
			g: diag(1e-3, 2e-4, 5e-3), c: diag(1e-12, 1e-12, 1e-13),
			want: func(*testing.T) []complex128 { return []complex128{-1e9, -2e8, -5e10} },
			tol:  tight,
		},
		{
			// (a) roots over eight decades, as from a large compensation
			// capacitor next to a small parasitic one: all must be kept.
			name: "diagonal, wide spread", n: 3,
			g: diag(1e-6, 1e-3, 1e-2), c: diag(1e-9, 1e-12, 1e-13),
			want: func(*testing.T) []complex128 { return []complex128{-1e3, -1e9, -1e11} },
			tol:  tight,
		},
		{
			// (c) two coupled nodes with time constants eight decades apart:
			// G = [[ga+gm, −gm], [−gm, gb+gm]], C = diag(ca, cb),
			// det = ca·cb·s² + (ca·(gb+gm) + cb·(ga+gm))·s + ga·gb + gm·(ga+gb)
			// (direct algebra).
			name: "2×2 by hand, wide spread", n: 2,
			g: []float64{1e-6 + 1e-7, -1e-7, -1e-7, 1e-2 + 1e-7}, c: diag(1e-9, 1e-13),
			want: func(*testing.T) []complex128 {
				ga, gb, gm, ca, cb := 1e-6, 1e-2, 1e-7, 1e-9, 1e-13
				return quadRoots(ca*cb, ca*(gb+gm)+cb*(ga+gm), ga*gb+gm*(ga+gb))
			},
			// The slow root is computed from the same well-conditioned M
			// but the references round differently: 1e-11 relative.
			tol: 1e-11,
		},
		{
			// (c) det = c1·c2·s² + (g11·c2 + g22·c1)·s + (g11·g22 − g12·g21),
			// expanded by hand, roots by the quadratic formula. Complex pair.
			name: "2×2 by hand, complex pair", n: 2,
			g: []float64{2, -1, 3, 1}, c: diag(1, 0.5),
			want: func(*testing.T) []complex128 { return quadRoots(1*0.5, 2*0.5+1*1, 2*1-(-1*3.0)) },
			tol:  tight,
		},
		{
			// (c) the same with a coupling capacitor: C = [[c1+cc, −cc],
			// [−cc, c2+cc]], G = diag(ga, gb):
			// det = (c1c2 + cc(c1+c2))·s² + (ga(c2+cc) + gb(c1+cc))·s + ga·gb.
			name: "2×2 by hand, coupling capacitor", n: 2,
			g: diag(1e-3, 4e-4), c: []float64{1e-12 + 2e-13, -2e-13, -2e-13, 3e-12 + 2e-13},
			want: func(*testing.T) []complex128 {
				ca, cb, cc, ga, gb := 1e-12, 3e-12, 2e-13, 1e-3, 4e-4
				return quadRoots(ca*cb+cc*(ca+cb), ga*(cb+cc)+gb*(ca+cc), ga*gb)
			},
			tol: tight,
		},
		{
			// (b) RC ladder against gonum's eigenvalues of −C⁻¹·G.
			name: "RC ladder, 5 nodes, uneven", n: 5,
			g: func() []float64 {
				g, _ := ladder(1e3, []float64{2e3, 500, 1e4, 3e3}, []float64{1e-12, 4e-12, 2e-13, 1e-12, 5e-12})
				return g
			}(),
			c: diag(1e-12, 4e-12, 2e-13, 1e-12, 5e-12),
			want: func(t *testing.T) []complex128 {
				g, c := ladder(1e3, []float64{2e3, 500, 1e4, 3e3}, []float64{1e-12, 4e-12, 2e-13, 1e-12, 5e-12})
				return gonumPoles(t, 5, g, c)
			},
			tol: ladderTol,
		},
		{
			// (b) uniform ladder, R and C per section, open far end: the
			// poles are −(2 − 2cos((2k−1)π/(2n+1)))/(RC), k = 1..n (the
			// eigenvalues of the tridiagonal [2 … 2 1] matrix; from memory).
			name: "RC ladder, 7 uniform sections, closed form", n: 7,
			g: func() []float64 {
				g, _ := ladder(1e3, []float64{1e3, 1e3, 1e3, 1e3, 1e3, 1e3}, make([]float64, 7))
				return g
			}(),
			c: diag(1e-12, 1e-12, 1e-12, 1e-12, 1e-12, 1e-12, 1e-12),
			want: func(*testing.T) []complex128 {
				var w []complex128
				for k := 1; k <= 7; k++ {
					w = append(w, complex(-(2-2*math.Cos(float64(2*k-1)*math.Pi/15))/(1e3*1e-12), 0))
				}
				return w
			},
			tol: ladderTol,
		},
		{
			// (d) node 1 has no capacitance: r01 and r12 act in series
			// (common practice), leaving the 2-node pencil
			// G' = [[g0+gs, −gs], [−gs, gs]], C' = diag(c0, c2), gs = 1/(r01+r12):
			// det = c0·c2·s² + (c0·gs + c2·(g0+gs))·s + g0·gs, and no third root.
			name: "singular C: node without capacitance", n: 3,
			g: func() []float64 {
				g, _ := ladder(1e3, []float64{2e3, 3e3}, make([]float64, 3))
				return g
			}(),
			c: diag(1e-12, 0, 2e-12),
			want: func(*testing.T) []complex128 {
				g0, gs, c0, c2 := 1e-3, 1/(2e3+3e3), 1e-12, 2e-12
				return quadRoots(c0*c2, c0*gs+c2*(g0+gs), g0*gs)
			},
			tol: tight * 10, // the reference itself rounds gs and the quadratic
		},
		{
			// (d) singular C without a zero row: a floating capacitor cc
			// between two grounded resistors. det(G + sC) =
			// g1·g2 + s·cc·(g1+g2), one root −1/(cc·(r1+r2)) (the capacitor
			// sees both resistors in series; common practice).
			name: "singular C: floating capacitor only", n: 2,
			g: diag(1e-3, 5e-4), c: []float64{1e-12, -1e-12, -1e-12, 1e-12},
			want: func(*testing.T) []complex128 { return []complex128{complex(-1/(1e-12*(1e3+2e3)), 0)} },
			tol:  tight * 10,
		},
		{
			// (d) zero C row and column whose G entry is zero as well:
			// det([[1+s, 1], [1, 0]]) = −1, no roots at all (direct algebra).
			name: "singular C and singular G block: constant determinant", n: 2,
			g: []float64{1, 1, 1, 0}, c: diag(1, 0),
			want: func(*testing.T) []complex128 { return nil },
		},
		{
			// (e) node 1 connects to node 0 only through cc: G is singular.
			// det = s·cc·(g0 + s·c0) (direct algebra): roots 0 and −g0/c0.
			name: "singular G: node with only a capacitor", n: 2,
			g: diag(g1, 0), c: []float64{c1 + 3e-13, -3e-13, -3e-13, 3e-13},
			want: func(*testing.T) []complex128 { return []complex128{0, complex(-g1/c1, 0)} },
			// The root at 0 comes from σ − 1/λ with σ ~ ‖G‖/‖C‖ ≈ 1e9:
			// absolute error ~ eps·σ; compare it against floor = 1e9.
			tol: 1e-12, floor: 1e9,
		},
		{
			name: "empty", n: 0,
			want: func(*testing.T) []complex128 { return nil },
		},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			got, err := PencilRoots(tt.n, tt.g, tt.c)
			if err != nil {
				t.Fatal(err)
			}
			checkRoots(t, got, tt.want(t), tt.tol, tt.floor)
		})
	}
}

func TestPencilRootsZeroExact(t *testing.T) {
	// (e) the root at s = 0 of a node with only a capacitor (det =
	// s·cc·(g0 + s·c0), direct algebra) is reported as exactly 0, not as the
	// rounding noise of σ − 1/λ, for seeded random element values.
	rng := rand.New(rand.NewPCG(19, 20))
	for k := 0; k < 20; k++ {
		g0, c0, cc := 1e-3*(1+rng.Float64()), 1e-12*(1+rng.Float64()), 1e-13*(1+rng.Float64())
		got, err := PencilRoots(2, diag(g0, 0), []float64{c0 + cc, -cc, -cc, cc})
		if err != nil {
			t.Fatal(err)
		}
		if len(got) != 2 || got[0] != 0 {
			t.Errorf("g0=%g c0=%g cc=%g: roots %v, want exactly 0 and %g", g0, c0, cc, got, -g0/c0)
		}
	}
}

func TestPencilRootsLowRankC(t *testing.T) {
	// C = B·Bᵀ with B n×r, spread over all nodes (no zero rows): n − r
	// infinite roots. By the matrix determinant lemma (Sylvester's identity,
	// common practice) det(G + s·B·Bᵀ) = det(G)·det(I + s·Bᵀ·G⁻¹·B), so
	// the finite roots are −1/μ for the eigenvalues μ of Bᵀ·G⁻¹·B, computed
	// here with gonum.
	rng := rand.New(rand.NewPCG(21, 22))
	for n := 2; n <= 8; n++ {
		for r := 1; r < n; r++ {
			g := make([]float64, n*n)
			for i := range g {
				g[i] = 1e-3 * (rng.Float64()*2 - 1)
			}
			for i := 0; i < n; i++ {
				g[i*n+i] += 1e-3 * float64(n)
			}
			bm := mat.NewDense(n, r, nil)
			for i := 0; i < n; i++ {
				for j := 0; j < r; j++ {
					bm.Set(i, j, 1e-6*(rng.Float64()*2-1)) // √F scale: B·Bᵀ ~ 1e-12 F
				}
			}
			var cm mat.Dense
			cm.Mul(bm, bm.T())
			var ginvB, small mat.Dense
			if err := ginvB.Solve(mat.NewDense(n, n, slices.Clone(g)), bm); err != nil {
				t.Fatal(err)
			}
			small.Mul(bm.T(), &ginvB)
			var e mat.Eigen
			if !e.Factorize(&small, mat.EigenNone) {
				t.Fatal("gonum Eigen failed")
			}
			var want []complex128
			scale := 0.0
			for _, mu := range e.Values(nil) {
				want = append(want, -1/mu)
				scale = math.Max(scale, cmplx.Abs(-1/mu))
			}
			got, err := PencilRoots(n, g, cm.RawMatrix().Data)
			if err != nil {
				t.Fatal(err)
			}
			// As in the random test: ~1e2·eps·‖M‖ eigenvalue errors in each
			// method, relative to the largest root. Random B can make a root
			// ill-conditioned, so compare relative to the largest.
			t.Run("", func(t *testing.T) { checkRoots(t, got, want, 1e-9, scale) })
		}
	}
}

func TestPencilRootsRandomAgainstGonum(t *testing.T) {
	// Non-symmetric G (transconductances) and a non-diagonal positive
	// definite C: poles against gonum's eigenvalues of −C⁻¹·G.
	rng := rand.New(rand.NewPCG(17, 18))
	for n := 1; n <= 8; n++ {
		for trial := 0; trial < 5; trial++ {
			g := make([]float64, n*n)
			c := make([]float64, n*n)
			for i := 0; i < n; i++ {
				for j := 0; j < n; j++ {
					g[i*n+j] = 1e-3 * (rng.Float64()*2 - 1)
					c[i*n+j] = 1e-13 * (rng.Float64()*2 - 1)
				}
				g[i*n+i] += 1e-3 * float64(n)
			}
			// C = B·Bᵀ + n·1e-26 I: symmetric positive definite, like a
			// capacitance matrix.
			cc := make([]float64, n*n)
			for i := 0; i < n; i++ {
				for j := 0; j < n; j++ {
					s := 0.0
					for k := 0; k < n; k++ {
						s += c[i*n+k] * c[j*n+k]
					}
					cc[i*n+j] = s / 1e-13
				}
				cc[i*n+i] += 1e-13
			}
			got, err := PencilRoots(n, g, cc)
			if err != nil {
				t.Fatal(err)
			}
			// Two different eigenproblems of random non-normal matrices of
			// order ≤ 8 with κ(C), κ(G) ≲ 1e2: errors of ~1e2·eps·‖M‖ in
			// each, relative to the largest root; 1e-10 of it covers that.
			want := gonumPoles(t, n, g, cc)
			scale := 0.0
			for _, w := range want {
				scale = math.Max(scale, cmplx.Abs(w))
			}
			checkRoots(t, got, want, 1e-10, scale)
		}
	}
}

func TestPencilRootsErrors(t *testing.T) {
	tests := []struct {
		name   string
		n      int
		g, c   []float64
		target error // nil: any error
	}{
		{"floating node: G and C zero in row and column 1", 2, diag(1, 0), diag(1, 0), ErrSingularPencil},
		{"C zero and G singular", 2, []float64{1, 1, 1, 1}, make([]float64, 4), ErrSingularPencil},
		{"NaN in G", 1, []float64{math.NaN()}, []float64{1}, ErrNotFinite},
		{"Inf in C", 1, []float64{1}, []float64{math.Inf(1)}, ErrNotFinite},
		{"length mismatch", 2, []float64{1, 0, 0}, diag(1, 1), nil},
		{"negative order", -1, nil, nil, nil},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			roots, err := PencilRoots(tt.n, tt.g, tt.c)
			if err == nil {
				t.Fatalf("PencilRoots = %v, nil; want an error", roots)
			}
			if tt.target != nil && !errors.Is(err, tt.target) {
				t.Errorf("error %q, want one wrapping %q", err, tt.target)
			}
		})
	}
	// C = 0 with G invertible: a constant nonzero determinant, no roots and
	// no error (direct algebra).
	if roots, err := PencilRoots(2, diag(1, 2), make([]float64, 4)); err != nil || len(roots) != 0 {
		t.Errorf("C = 0, G invertible: PencilRoots = %v, %v; want no roots, no error", roots, err)
	}
}
