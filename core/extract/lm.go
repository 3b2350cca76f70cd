package extract

import (
	"math"

	"stagewright/core/dense"
)

// Levenberg–Marquardt (Levenberg 1944, Marquardt 1963) for a box-bounded
// least-squares problem min ½·Σ r_i(x)², written for this fit: a handful of
// parameters and thousands of residuals.
//
// Each iteration takes the Jacobian J by forward differences, then solves
// (JᵀJ + λ·diag(JᵀJ))·δ = −Jᵀr (Marquardt's scaling, so the step does not
// depend on the parameters' units) and projects x + δ onto the box. A step
// that lowers the cost is taken and λ shrinks; one that does not is refused
// and λ grows, which turns the step towards steepest descent.

type lmProblem struct {
	n, m     int
	lo, hi   []float64
	residual func(x, r []float64) bool // false when the model cannot be evaluated at x

	// column, when set, may fill the residuals at x with parameter k
	// moved (the Jacobian's step) from base, the residuals before the
	// move, recomputing only the rows k reaches; handled false leaves it
	// to residual.
	column func(x []float64, k int, base, r []float64) (handled, ok bool)

	maxIter int // 0: lmMaxIter
}

type lmResult struct {
	x          []float64
	cost       float64 // ½·Σr²
	iterations int
	cancelled  bool
}

const (
	lmMaxIter = 100
	lmTolCost = 1e-8 // relative cost decrease below which the fit has converged

	// A fit that cannot follow the data crawls: it stops when five
	// iterations together lowered the cost by less than 1e-3 of itself,
	// 0.05 % of the rms error (a good fit converges quadratically long
	// before this applies; at 1e-4 the demo model's fit ran 45 iterations
	// more for an rms error the same to three digits).
	lmStallIter, lmStallTol = 5, 1e-3
)

func halfSumSq(r []float64) float64 {
	s := 0.0
	for _, v := range r {
		s += v * v
	}
	return s / 2
}

// levenbergMarquardt minimizes from x0 (which it does not change).
// progress is called after each iteration with (iteration, lmMaxIter); when
// it returns false the best point so far is returned with cancelled set.
func levenbergMarquardt(pb lmProblem, x0 []float64, progress func(done, total int) bool) lmResult {
	n, m := pb.n, pb.m
	x := append([]float64(nil), x0...)
	project(x, pb.lo, pb.hi)
	r := make([]float64, m)
	rt := make([]float64, m)
	jac := make([]float64, n*m) // column-major: column k at jac[k*m:]
	a := make([]float64, n*n)
	g := make([]float64, n)
	rhs := make([]float64, n)
	delta := make([]float64, n)
	xt := make([]float64, n)
	var lu dense.LU

	if !pb.residual(x, r) {
		return lmResult{x: x, cost: math.Inf(1)}
	}
	cost := halfSumSq(r)
	lambda := 1e-3
	res := lmResult{x: x, cost: cost}
	var history [lmStallIter]float64
	maxIter := pb.maxIter
	if maxIter <= 0 {
		maxIter = lmMaxIter
	}
	for it := 1; it <= maxIter; it++ {
		if it > lmStallIter {
			if old := history[it%lmStallIter]; old-cost < lmStallTol*cost {
				break
			}
		}
		history[it%lmStallIter] = cost
		res.iterations = it
		// Forward differences on the transformed parameters; the step
		// 1e-6·(1 + |x|) sits near √ε of the residuals, which are ln ID
		// (smooth, of order 1), and steps inwards at an upper bound.
		for k := 0; k < n; k++ {
			h := 1e-6 * (1 + math.Abs(x[k]))
			if x[k]+h > pb.hi[k] {
				h = -h
			}
			copy(xt, x)
			xt[k] += h
			col := jac[k*m : (k+1)*m]
			handled, ok := false, false
			if pb.column != nil {
				handled, ok = pb.column(xt, k, r, col)
			}
			if !handled {
				ok = pb.residual(xt, col)
			}
			if !ok {
				for i := range col {
					col[i] = 0
				}
				continue
			}
			for i := range col {
				col[i] = (col[i] - r[i]) / h
			}
		}
		for j := 0; j < n; j++ {
			cj := jac[j*m : (j+1)*m]
			s := 0.0
			for i, v := range cj {
				s += v * r[i]
			}
			g[j] = s
			for k := 0; k <= j; k++ {
				ck := jac[k*m : (k+1)*m]
				s := 0.0
				for i, v := range cj {
					s += v * ck[i]
				}
				a[j*n+k], a[k*n+j] = s, s
			}
		}
		maxDiag := 0.0
		for j := 0; j < n; j++ {
			maxDiag = math.Max(maxDiag, a[j*n+j])
		}
		improved := false
		for try := 0; try < 12; try++ {
			m2 := append([]float64(nil), a...)
			for j := 0; j < n; j++ {
				// A parameter the data do not see (a zero column) still
				// gets a floor of damping, so the system stays regular.
				m2[j*n+j] += lambda * math.Max(a[j*n+j], 1e-12*maxDiag+1e-300)
				rhs[j] = -g[j]
			}
			if lu.Factorize(n, m2) != nil {
				lambda *= 10
				continue
			}
			lu.Solve(delta, rhs)
			for j := range xt {
				xt[j] = x[j] + delta[j]
			}
			project(xt, pb.lo, pb.hi)
			if pb.residual(xt, rt) {
				if c := halfSumSq(rt); c < cost {
					rel := (cost - c) / math.Max(cost, 1e-300)
					copy(x, xt)
					r, rt = rt, r
					cost = c
					lambda = math.Max(lambda/3, 1e-12)
					improved = true
					res.cost = cost
					if rel < lmTolCost {
						improved = false // converged
					}
					break
				}
			}
			lambda *= 4
		}
		res.x, res.cost = x, cost
		if progress != nil && !progress(it, maxIter) {
			res.cancelled = true
			return res
		}
		if !improved {
			break
		}
	}
	return res
}

func project(x, lo, hi []float64) {
	for i := range x {
		x[i] = clamp(x[i], lo[i], hi[i])
	}
}
