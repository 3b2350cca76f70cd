package dense_test

import (
	"fmt"
	"math"
	"math/cmplx"

	"stagewright/core/dense"
)

// Node voltages of a small resistive network driven by a 1 mA current into
// node 0: 1 kΩ from node 0 to ground, 2 kΩ between the nodes, 3 kΩ from
// node 1 to ground. G is in S, the currents in A, the voltages in V. By
// hand: det G = 1e-6 S², v0 = 0.8333 V, v1 = 0.5 V, and ‖G‖₁·‖G⁻¹‖₁ =
// 2e-3·2000 = 4, so the estimate rcond = 0.25 is exact here.
func ExampleLU() {
	g := []float64{
		1/1e3 + 1/2e3, -1 / 2e3,
		-1 / 2e3, 1/2e3 + 1/3e3,
	}
	var lu dense.LU
	if err := lu.Factorize(2, g); err != nil {
		fmt.Println(err)
		return
	}
	v := []float64{1e-3, 0} // A; overwritten by the solution, V
	lu.Solve(v, v)
	fmt.Printf("v0 = %.4g V, v1 = %.4g V, rcond = %.3g\n", v[0], v[1], lu.RCond())
	// Output:
	// v0 = 0.8333 V, v1 = 0.5 V, rcond = 0.25
}

// The output of an RC low-pass (1 kΩ, 1 nF) driven by a 1 mA Norton source,
// at its corner frequency 1/(2π·R·C) ≈ 159.2 kHz: (G + jωC)·v = i.
func ExampleCLU() {
	const r, c = 1e3, 1e-9
	w := 1 / (r * c) // rad/s
	a := []complex128{complex(1/r, w*c)}
	var lu dense.CLU
	if err := lu.Factorize(1, a); err != nil {
		fmt.Println(err)
		return
	}
	v := []complex128{1e-3}
	lu.Solve(v, v)
	fmt.Printf("|v| = %.4g V, phase = %.4g°\n", cmplx.Abs(v[0]), cmplx.Phase(v[0])*180/math.Pi)
	// Output:
	// |v| = 0.7071 V, phase = -45°
}

// Poles of a two-section RC ladder: 1 kΩ from the driven end to node 0,
// 1 kΩ from node 0 to node 1, 1 pF from each node to ground. By hand the
// poles are −(3 ∓ √5)/2 · 1/(R·C).
func ExamplePencilRoots() {
	g := []float64{
		2e-3, -1e-3,
		-1e-3, 1e-3,
	}
	c := []float64{
		1e-12, 0,
		0, 1e-12,
	}
	poles, err := dense.PencilRoots(2, g, c)
	if err != nil {
		fmt.Println(err)
		return
	}
	for _, p := range poles {
		fmt.Printf("s = %.4g rad/s (f = %.4g MHz)\n", real(p), -real(p)/(2*math.Pi)/1e6)
	}
	// Output:
	// s = -3.82e+08 rad/s (f = 60.79 MHz)
	// s = -2.618e+09 rad/s (f = 416.7 MHz)
}
