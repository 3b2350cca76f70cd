package device

import (
	"math"

	"stagewright/core/fastmath"
)

// Solving v = 2q + ln q for the normalized inversion charge q.
//
// With u = 2q the relation becomes u + ln u = v + ln 2, whose solution is the
// Wright omega function, u = ω(v + ln 2); equivalently q = W(2·e^v)/2 with
// Lambert's W. The derivative follows from dv/dq = 2 + 1/q:
// dq/dv = q/(2q + 1), and the normalized current i = q² + q has di/dv = q.

// minChargeArg is the lowest normalized voltage v = (VP − V)/U_T the charge
// solve accepts; lower values are held here. q(−700) ≈ 2·10⁻³⁰⁵ is still a
// normal double, so no charge is ever 0 and no ratio of charges is 0/0. The
// current at this point is ~10⁻³⁰⁴ of I_spec, far below anything a circuit
// resolves.
const minChargeArg = -700

// charge returns q(v) and dq/dv for v = (VP − V)/U_T. Below minChargeArg q is
// held constant and the derivative is 0, so the pair stays consistent.
func charge(v float64) (q, dqdv float64) {
	held := false
	if v < minChargeArg {
		v, held = minChargeArg, true
	}
	q = 0.5 * wrightOmega(v+math.Ln2)
	if held {
		return q, 0
	}
	return q, q / (2*q + 1)
}

// wrightOmega returns ω(y), the solution of ω + ln ω = y, for real y.
//
// An asymptotic or series start is refined by the fourth-order iteration of
// Fritsch, Shafer and Crowley (CACM 1973), as used for ω by Lawrence,
// Corless and Jeffrey (ACM TOMS 2012). It is accurate to a few units in the
// last place for y from −745 up to beyond 10⁶; below about −745 the result
// underflows towards 0 like e^y (callers keep y ≥ −700). NaN gives NaN and
// +Inf gives +Inf.
func wrightOmega(y float64) float64 {
	switch {
	case y < -36:
		// ω = e^(y−ω) and ω < 2.4e-16, so e^(−ω) rounds to 1: ω = e^y exactly
		// in double precision. No iteration: it would take ln of a value that
		// may be subnormal.
		return fastmath.Exp(y)
	case !(y <= math.MaxFloat64): // NaN or +Inf
		return y
	}
	var w float64
	switch {
	case y <= -2:
		// Lambert series W(x) = x − x² + (3/2)x³ − … with x = e^y ≤ e⁻².
		x := fastmath.Exp(y)
		w = x * (1 - x*(1-1.5*x))
	case y <= 2:
		// Taylor series of ω about y = 1, where ω = 1.
		t := y - 1
		w = 1 + t*(1.0/2+t*(1.0/16+t*(-1.0/192+t*(-1.0/3072+t*(13.0/61440)))))
	default:
		// ω = y − ln y + ln y / y + … for large y.
		l := fastmath.Log(y)
		w = y - l + l/y
	}
	// Each step takes the relative error e ≈ r/(1 + w) to O(e⁴); the starts
	// above are within 7 % everywhere. Once a step starts from |e| < 1e-5 the
	// result is exact to rounding, so the loop stops without another log;
	// it never needs more than three steps.
	for i := 0; i < 3; i++ {
		r := y - w - fastmath.Log(w)
		wp := 1 + w
		z := 2 * wp * (wp + 2*r/3)
		w *= 1 + r/wp*(z-r)/(z-2*r)
		if math.Abs(r) < 1e-5*wp {
			break
		}
	}
	return w
}
