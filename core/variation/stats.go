package variation

import (
	"math"

	"stagewright/core/design"
)

// Bins is the number of histogram bins.
const Bins = 30

// Stat summarizes one quantity over the samples that gave a finite value.
// Mean and SD are in the quantity's unit; SD is the sample standard
// deviation (divisor n − 1). N counts the values summarized.
type Stat struct {
	N    int        `json:"n"`
	Mean design.Num `json:"mean"`
	SD   design.Num `json:"sd"`
	Min  design.Num `json:"min"`
	Max  design.Num `json:"max"`
	Hist Histogram  `json:"hist"`
}

// Histogram counts values in Bins equal bins from Lo to Hi (the smallest
// and largest value); bin i covers [Lo + i·w, Lo + (i+1)·w), the last one
// includes Hi. All values equal puts every count in the middle bin.
type Histogram struct {
	Lo     design.Num `json:"lo"`
	Hi     design.Num `json:"hi"`
	Counts [Bins]int  `json:"counts"`
}

// summarize computes the statistics of the finite values in xs. The mean
// and variance use Welford's one-pass update (Welford, Technometrics 1962),
// which keeps the variance accurate when the spread is tiny beside the
// mean, as for an output level of 0.9 V ± 1 mV.
func summarize(xs []float64) Stat {
	nan := design.Num(math.NaN())
	s := Stat{Mean: nan, SD: nan, Min: nan, Max: nan, Hist: Histogram{Lo: nan, Hi: nan}}
	var mean, m2 float64
	lo, hi := math.Inf(1), math.Inf(-1)
	n := 0
	for _, x := range xs {
		if math.IsNaN(x) || math.IsInf(x, 0) {
			continue
		}
		n++
		d := x - mean
		mean += d / float64(n)
		m2 += d * (x - mean)
		lo, hi = math.Min(lo, x), math.Max(hi, x)
	}
	s.N = n
	if n == 0 {
		return s
	}
	s.Mean, s.Min, s.Max = design.Num(mean), design.Num(lo), design.Num(hi)
	if n > 1 {
		s.SD = design.Num(math.Sqrt(m2 / float64(n-1)))
	}
	s.Hist.Lo, s.Hist.Hi = design.Num(lo), design.Num(hi)
	width := (hi - lo) / Bins
	for _, x := range xs {
		if math.IsNaN(x) || math.IsInf(x, 0) {
			continue
		}
		i := Bins / 2
		if width > 0 && !math.IsInf(width, 0) {
			i = int((x - lo) / width)
			i = min(max(i, 0), Bins-1)
		}
		s.Hist.Counts[i]++
	}
	return s
}
