package device

import (
	"math"
	"testing"

	"gonum.org/v1/gonum/diff/fd"
)

// TestWrightOmegaResidual checks the defining equation ω + ln ω = y
// (Lawrence, Corless and Jeffrey, ACM TOMS 2012) over y ∈ [−700, 1e6].
func TestWrightOmegaResidual(t *testing.T) {
	var ys []float64
	for y := -700.0; y <= 20; y += 0.01 { // dense where the start switches (−36, −2, 2)
		ys = append(ys, y)
	}
	for e := 1.3; e <= 6; e += 0.001 { // log-spaced from 20 to 1e6
		ys = append(ys, math.Pow(10, e))
	}
	ys = append(ys, -36, -2, 2, 1e6, math.Nextafter(-36, 0), math.Nextafter(-2, 0), math.Nextafter(2, 3))
	worst, worstY := 0.0, 0.0
	for _, y := range ys {
		w := wrightOmega(y)
		if !(w > 0) || math.IsInf(w, 0) {
			t.Fatalf("ω(%g) = %g, want positive and finite", y, w)
		}
		// Relative to the size of the terms summed: forming ω + ln ω − y in
		// double precision alone costs a few ulps of that, so 1e-14 leaves a
		// margin of ~20 ulps while any wrong branch or missing iteration
		// leaves residuals of 1e-4 or more.
		scale := math.Abs(w) + math.Abs(math.Log(w))
		res := math.Abs(w+math.Log(w)-y) / scale
		if res > worst {
			worst, worstY = res, y
		}
		if res > 1e-14 {
			t.Errorf("ω(%g) = %.17g: residual %.3g relative, want ≤ 1e-14", y, w, res)
		}
	}
	t.Logf("worst relative residual %.3g at y = %g over %d points", worst, worstY, len(ys))
}

// TestWrightOmegaKnownValues compares with Lambert W, since ω(y) = W(e^y).
func TestWrightOmegaKnownValues(t *testing.T) {
	tests := []struct {
		y, want float64
		source  string
	}{
		{0, 0.5671432904097838, "W(1), the omega constant (common practice)"},
		{1, 1, "W(e) = 1, exact"},
		{math.Ln2, 0.8526055020137254, "W(2); computed by Newton's method on w·e^w = 2 in double precision (tables, from memory)"},
		{-1000, 0, "e^(−1000) underflows; ω must not be NaN"},
		{math.Inf(1), math.Inf(1), "limit"},
	}
	for _, tc := range tests {
		got := wrightOmega(tc.y)
		// 2 ulps: the iteration converges to the nearest doubles.
		if math.Abs(got-tc.want) > 4.5e-16*math.Abs(tc.want) {
			t.Errorf("ω(%g) = %.17g, want %.17g (%s)", tc.y, got, tc.want, tc.source)
		}
	}
	if !math.IsNaN(wrightOmega(math.NaN())) {
		t.Error("ω(NaN) should be NaN")
	}
}

// TestChargeLambertIdentity checks q = W(2eˣ)/2 by the defining equation of
// Lambert W: with w = 2q, w·e^w = 2eˣ (Enz and Vittoz 2006 give v = 2q + ln q).
func TestChargeLambertIdentity(t *testing.T) {
	for _, x := range []float64{-30, -5, -1, 0, 0.5, 1, 5, 20, 100, 600} {
		q, _ := charge(x)
		w := 2 * q
		// Compare in the log domain, ln w + w = ln 2 + x, to avoid overflow;
		// tolerance as for the ω residual.
		lhs, rhs := math.Log(w)+w, math.Ln2+x
		if d := math.Abs(lhs - rhs); d > 1e-14*(math.Abs(lhs)+1) {
			t.Errorf("x = %g: ln(2q) + 2q = %.17g, want ln 2 + x = %.17g", x, lhs, rhs)
		}
		// And the relation as the model states it, 2q + ln q = x.
		if d := math.Abs(2*q + math.Log(q) - x); d > 1e-14*(math.Abs(x)+1) {
			t.Errorf("x = %g: 2q + ln q − x = %.3g", x, d)
		}
	}
}

// TestChargeDerivative checks dq/dx = q/(2q+1) against gonum central
// differences.
func TestChargeDerivative(t *testing.T) {
	for _, x := range []float64{-40, -10, -2, -0.5, 0, 0.7, 3, 15, 60, 400} {
		_, got := charge(x)
		num := fd.Derivative(func(v float64) float64 { q, _ := charge(v); return q }, x,
			&fd.Settings{Formula: fd.Central, Step: 1e-5})
		// Truncation (h²/6)·q''' ≲ 2e-11·q' for curvature on the unit scale of
		// x; roundoff ε·q/h ≲ 2e-11·q, and q/q' ≤ 2q + 1 ≲ 400 here.
		if math.Abs(got-num) > 1e-7*math.Abs(got) {
			t.Errorf("x = %g: dq/dx = %.12g, central difference %.12g", x, got, num)
		}
	}
}

// TestChargeHeldBelowMinimum checks the floor that keeps charges positive.
func TestChargeHeldBelowMinimum(t *testing.T) {
	q0, _ := charge(minChargeArg)
	for _, x := range []float64{minChargeArg - 1, -1e5, -1e300, math.Inf(-1)} {
		q, dq := charge(x)
		if q != q0 || dq != 0 {
			t.Errorf("charge(%g) = %g, %g; want held value %g with derivative 0", x, q, dq, q0)
		}
	}
	if !(q0 > 0) || q0 < 0x1p-1022 {
		t.Errorf("held charge %g must be a positive normal double", q0)
	}
}
