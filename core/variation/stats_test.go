package variation

import (
	"math"
	"math/rand"
	"testing"

	"gonum.org/v1/gonum/stat"
)

// TestSummarizeKnownNormal feeds draws of a known normal distribution and
// checks that mean and standard deviation are recovered within four
// standard errors (common practice: σ/√n for the mean, σ/√(2n) for the
// standard deviation of normal data), and that they equal gonum's
// stat.Mean and stat.StdDev (an independent library) to 1e-12 relative,
// rounding only.
func TestSummarizeKnownNormal(t *testing.T) {
	for _, c := range []struct {
		mu, sigma float64
		n         int
		seed      int64
	}{
		{0, 1, 10000, 1},
		{0.9, 1e-3, 10000, 2}, // a DC level with a tiny spread: Welford keeps it accurate
		{-12.5, 0.8, 1000, 3},
		{1e-4, 3e-6, 5000, 4},
	} {
		rng := rand.New(rand.NewSource(c.seed))
		xs := make([]float64, c.n)
		for i := range xs {
			xs[i] = c.mu + c.sigma*rng.NormFloat64()
		}
		s := summarize(xs)
		if s.N != c.n {
			t.Errorf("N = %d, want %d", s.N, c.n)
		}
		se := c.sigma / math.Sqrt(float64(c.n))
		if d := math.Abs(float64(s.Mean) - c.mu); d > 4*se {
			t.Errorf("mean %g vs %g: off by %g > 4·%g", float64(s.Mean), c.mu, d, se)
		}
		if d := math.Abs(float64(s.SD)-c.sigma) / c.sigma; d > 4/math.Sqrt(2*float64(c.n)) {
			t.Errorf("sd %g vs %g: relative %g beyond 4/√(2n)", float64(s.SD), c.sigma, d)
		}
		if m := stat.Mean(xs, nil); math.Abs(float64(s.Mean)-m) > 1e-12*(math.Abs(c.mu)+c.sigma) {
			t.Errorf("mean %g, gonum %g", float64(s.Mean), m)
		}
		if sd := stat.StdDev(xs, nil); math.Abs(float64(s.SD)-sd) > 1e-9*sd {
			t.Errorf("sd %g, gonum %g", float64(s.SD), sd)
		}
		total := 0
		for _, k := range s.Hist.Counts {
			total += k
		}
		if total != c.n || s.Hist.Lo != s.Min || s.Hist.Hi != s.Max {
			t.Errorf("histogram holds %d of %d, range [%g, %g]", total, c.n, float64(s.Hist.Lo), float64(s.Hist.Hi))
		}
		// A normal histogram peaks near the middle: the central six bins
		// hold far more than the outer six.
		mid := 0
		for _, k := range s.Hist.Counts[12:18] {
			mid += k
		}
		outer := 0
		for _, k := range append(s.Hist.Counts[:3:3], s.Hist.Counts[27:]...) {
			outer += k
		}
		if mid <= 5*outer {
			t.Errorf("histogram not peaked: middle %d, tails %d", mid, outer)
		}
	}
}

func TestSummarizeEdgeCases(t *testing.T) {
	nanInf := []float64{math.NaN(), math.Inf(1), math.Inf(-1)}
	for _, c := range []struct {
		name string
		xs   []float64
		n    int
		mean float64 // NaN: none
		mid  int     // expected count in bin Bins/2, −1 to skip
	}{
		{"empty", nil, 0, math.NaN(), 0},
		{"only non-finite", nanInf, 0, math.NaN(), 0},
		{"all equal", []float64{2, 2, 2}, 3, 2, 3},
		{"one", []float64{5}, 1, 5, 1},
		{"non-finite skipped", append([]float64{1, 3}, nanInf...), 2, 2, -1},
	} {
		s := summarize(c.xs)
		if s.N != c.n {
			t.Errorf("%s: N = %d, want %d", c.name, s.N, c.n)
		}
		if math.IsNaN(c.mean) != !s.Mean.Finite() || (s.Mean.Finite() && float64(s.Mean) != c.mean) {
			t.Errorf("%s: mean %g, want %g", c.name, float64(s.Mean), c.mean)
		}
		if c.n < 2 && s.SD.Finite() {
			t.Errorf("%s: sd %g from fewer than two values", c.name, float64(s.SD))
		}
		if c.mid >= 0 && s.Hist.Counts[Bins/2] != c.mid {
			t.Errorf("%s: middle bin %d, want %d", c.name, s.Hist.Counts[Bins/2], c.mid)
		}
	}
	// The largest value lands in the last bin, the smallest in the first.
	s := summarize([]float64{0, 1, 2, 3})
	if s.Hist.Counts[0] != 1 || s.Hist.Counts[Bins-1] != 1 {
		t.Errorf("ends: first %d, last %d", s.Hist.Counts[0], s.Hist.Counts[Bins-1])
	}
}
