package dense

import (
	"fmt"
	"math/rand/v2"
	"testing"
)

// A well-conditioned matrix like a nodal matrix: random entries with a
// dominant diagonal.
func benchMatrix(rng *rand.Rand, n int) []float64 {
	a := randomMatrix(rng, n)
	for i := 0; i < n; i++ {
		a[i*n+i] += float64(n)
	}
	return a
}

func BenchmarkLUFactorizeSolve(b *testing.B) {
	for _, n := range []int{3, 5, 7} {
		b.Run(fmt.Sprintf("n=%d", n), func(b *testing.B) {
			rng := rand.New(rand.NewPCG(1, uint64(n)))
			a := benchMatrix(rng, n)
			rhs, x := randomMatrix(rng, n)[:n], make([]float64, n)
			var f LU
			b.ReportAllocs()
			for b.Loop() {
				if err := f.Factorize(n, a); err != nil {
					b.Fatal(err)
				}
				f.Solve(x, rhs)
			}
		})
	}
}

func BenchmarkCLUFactorizeSolve(b *testing.B) {
	for _, n := range []int{3, 5, 7} {
		b.Run(fmt.Sprintf("n=%d", n), func(b *testing.B) {
			rng := rand.New(rand.NewPCG(2, uint64(n)))
			a := randomCMatrix(rng, n)
			for i := 0; i < n; i++ {
				a[i*n+i] += complex(float64(n), 0)
			}
			rhs, x := randomCMatrix(rng, n)[:n], make([]complex128, n)
			var f CLU
			b.ReportAllocs()
			for b.Loop() {
				if err := f.Factorize(n, a); err != nil {
					b.Fatal(err)
				}
				f.Solve(x, rhs)
			}
		})
	}
}

func BenchmarkLURCond(b *testing.B) {
	rng := rand.New(rand.NewPCG(3, 5))
	const n = 5
	var f LU
	if err := f.Factorize(n, benchMatrix(rng, n)); err != nil {
		b.Fatal(err)
	}
	b.ReportAllocs()
	for b.Loop() {
		_ = f.RCond()
	}
}

// pencilBenchCases are the pencils of the PencilRoots benchmarks. The
// three-node one is a common-source stage with a Miller capacitor (the gate
// node, the drain node and a node between two resistors); the ladders (real,
// spread poles) stand for the fallback path of networks of more than three
// nodes. Values are invented for the benchmark.
func pencilBenchCases() []struct {
	name string
	n    int
	g, c []float64
} {
	cases := []struct {
		name string
		n    int
		g, c []float64
	}{{
		name: "miller n=3", n: 3,
		g: []float64{
			1e-3 + 1e-4, 0, -1e-4,
			2e-3, 1e-4, 0, // gm = 2 mS from node 0 into node 1
			-1e-4, 0, 2e-4,
		},
		c: []float64{
			2e-13 + 5e-14, -5e-14, 0,
			-5e-14, 5e-14 + 1e-12, 0,
			0, 0, 3e-13,
		},
	}}
	for _, n := range []int{5, 8} {
		r := make([]float64, n-1)
		cs := make([]float64, n)
		for i := range cs {
			cs[i] = 1e-12 * float64(1+i%3)
		}
		for i := range r {
			r[i] = 1e3 * float64(1+2*(i%2))
		}
		g, c := ladder(1e3, r, cs)
		cases = append(cases, struct {
			name string
			n    int
			g, c []float64
		}{fmt.Sprintf("ladder n=%d", n), n, g, c})
	}
	return cases
}

func benchPencil(b *testing.B, eig eigenSolver) {
	for _, tc := range pencilBenchCases() {
		b.Run(tc.name, func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				if _, err := pencilRoots(tc.n, tc.g, tc.c, eig); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}

// BenchmarkPencilRoots measures PencilRoots with its own eigenvalue solver.
func BenchmarkPencilRoots(b *testing.B) { benchPencil(b, eigenvalues) }

// BenchmarkPencilRootsGonumEigen is the same method with gonum's mat.Eigen
// (what PencilRoots used before), for comparison.
func BenchmarkPencilRootsGonumEigen(b *testing.B) { benchPencil(b, gonumEigen) }
