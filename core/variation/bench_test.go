package variation

import (
	"strconv"
	"testing"

	"stagewright/core/design"
)

func defaultDesign(tb testing.TB) design.Design {
	tb.Helper()
	return design.Default("d180")
}

// BenchmarkMonteCarlo runs 1000 and 10,000 samples of the default design;
// the time per run should grow linearly (the budget is 300 ms for 10,000).
func BenchmarkMonteCarlo(b *testing.B) {
	d := defaultDesign(b)
	for _, n := range []int{1000, 10000} {
		b.Run(strconv.Itoa(n), func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				r, err := MonteCarlo(d, n, 1, &Targets{MinGain: 1})
				if err != nil || r.Samples != n {
					b.Fatal(err, r.Samples)
				}
			}
		})
	}
}

// BenchmarkCorners evaluates every corner at three temperatures.
func BenchmarkCorners(b *testing.B) {
	d := defaultDesign(b)
	b.ReportAllocs()
	for b.Loop() {
		if _, err := Corners(d); err != nil {
			b.Fatal(err)
		}
	}
}
