package units

import (
	"errors"
	"math"
	"strconv"
	"strings"
	"testing"
	"unicode/utf8"
)

// FuzzParse: Parse never panics; an error is a *NumError naming the input
// with a reason; an accepted value is finite, survives Exact bit for bit, and
// without a prefix equals what strconv.ParseFloat reads from the same text.
func FuzzParse(f *testing.F) {
	for _, s := range []string{
		"4.7k", "180n", "2.2p", "1e-3", "10u", "10µ", "10μ", "1M", "1G", "100f", "-0.5", "3.3m",
		"", " 1", "4.7kk", "10uF", "4k7", "NaN", "-Inf", "0x1p3", "1_000", "1e400", "1e-400",
		"1e3k", "1.2.3", "--1", "5e-324", "-0", "1\xff", "20K", "1meg",
	} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		v, err := Parse(s)
		if err != nil {
			var ne *NumError
			if !errors.As(err, &ne) || ne.Input != s || ne.Reason == "" {
				t.Fatalf("Parse(%q) error %#v: want a *NumError with Input and Reason", s, err)
			}
			if v != 0 {
				t.Fatalf("Parse(%q) = %v with error %v, want 0", s, v, err)
			}
			return
		}
		if math.IsNaN(v) || math.IsInf(v, 0) {
			t.Fatalf("Parse(%q) = %v, want a finite value", s, v)
		}
		if back, err := Parse(Exact(v)); err != nil || math.Float64bits(back) != math.Float64bits(v) {
			t.Fatalf("Parse(%q) = %v; Exact gives %q, read back as %v, %v", s, v, Exact(v), back, err)
		}
		if strings.ContainsAny(s, "fpnumkKMGµμ") { // K: kilo as people type it
			return
		}
		if ref, err := strconv.ParseFloat(s, 64); err != nil || math.Float64bits(ref) != math.Float64bits(v) {
			t.Fatalf("Parse(%q) = %v, strconv reads %v, %v", s, v, ref, err)
		}
	})
}

// FuzzExact: for any finite float64, Exact writes a short, space-free
// string that Parse reads back bit for bit.
func FuzzExact(f *testing.F) {
	for _, v := range []float64{0, math.Copysign(0, -1), 20e-6, 4700, 1.8, 0.5e-6, 1e-15, -2.5e-3,
		1e12, 999.9e9, 1e-18, math.MaxFloat64, -math.SmallestNonzeroFloat64, 1.0 / 3} {
		f.Add(math.Float64bits(v))
	}
	f.Fuzz(func(t *testing.T, bits uint64) {
		v := math.Float64frombits(bits)
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return // Exact's promise is for finite values only
		}
		s := Exact(v)
		// "-1.2345678901234567e-308" is the longest form: 24 bytes.
		if len(s) > 24 || !utf8.ValidString(s) || strings.ContainsAny(s, " +") {
			t.Fatalf("Exact(%v) = %q: want at most 24 bytes of text without spaces or plus signs", v, s)
		}
		back, err := Parse(s)
		if err != nil || math.Float64bits(back) != math.Float64bits(v) {
			t.Fatalf("Exact(%v) = %q, Parse reads %v, %v", v, s, back, err)
		}
	})
}
