package transfer

import (
	"math"
	"testing"
)

func BenchmarkCurve(b *testing.B) {
	d := decode(b, testDesigns[0].frag)
	b.ReportAllocs()
	for b.Loop() {
		if _, err := Curve(d, DefaultPoints); err != nil {
			b.Fatal(err)
		}
	}
}

func BenchmarkCurveActiveLoad(b *testing.B) {
	d := decode(b, "v=1&stage=cs&load=active")
	b.ReportAllocs()
	for b.Loop() {
		if _, err := Curve(d, DefaultPoints); err != nil {
			b.Fatal(err)
		}
	}
}

func BenchmarkDistortion(b *testing.B) {
	d := decode(b, testDesigns[0].frag)
	b.ReportAllocs()
	for b.Loop() {
		if _, err := Distortion(d, DefaultAmp); err != nil {
			b.Fatal(err)
		}
	}
}

func BenchmarkHarmonics(b *testing.B) {
	f := func(x float64) float64 { return math.Tanh(3 * x) }
	b.ReportAllocs()
	var sp Spectrum
	for b.Loop() {
		sp, _ = Harmonics(f, 0.2)
	}
	_ = sp
}

// BenchmarkCurveHighGain: the gain-100 stage whose curve the refinement
// fills in (about 320 levels from the 202 of the grid).
func BenchmarkCurveHighGain(b *testing.B) {
	d := decode(b, highGain)
	b.ReportAllocs()
	for b.Loop() {
		if _, err := Curve(d, DefaultPoints); err != nil {
			b.Fatal(err)
		}
	}
}
