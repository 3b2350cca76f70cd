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

// BenchmarkCornerTable is the whole corner table of a current-biased
// stage held by a mirror: 5 corners × 3 temperatures × 3 supplies (budget
// 100 ms natively).
func BenchmarkCornerTable(b *testing.B) {
	d, err := design.Decode("stage=cs&pol=n&load=active&bias=id&id=100u&vout=0.9&w=10u&l=1u&lw=10u&ll=1u")
	if err != nil {
		b.Fatal(err)
	}
	b.ReportAllocs()
	for b.Loop() {
		rows, err := Corners(d)
		if err != nil || len(rows) != 45 {
			b.Fatal(err, len(rows))
		}
	}
}

// BenchmarkMonteCarloHold is 10,000 samples of a current-biased stage with
// a current-source load, its bias held each way (budget for the mirror,
// which solves two diode-connected copies per sample: 400 ms).
func BenchmarkMonteCarloHold(b *testing.B) {
	for _, hold := range []string{"ideal", "fixed", "mirror"} {
		d, err := design.Decode("stage=cs&pol=n&load=active&bias=id&id=100u&vout=0.9&w=10u&l=1u&lw=10u&ll=1u&hold=" + hold)
		if err != nil {
			b.Fatal(err)
		}
		b.Run(hold, func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				r, err := MonteCarlo(d, 10000, 1, nil)
				if err != nil || r.Samples != 10000 {
					b.Fatal(err, r.Samples)
				}
			}
		})
	}
}
