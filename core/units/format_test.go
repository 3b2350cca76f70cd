package units

import (
	"fmt"
	"math"
	"math/rand/v2"
	"strconv"
	"strings"
	"testing"
)

// The expected strings are the ones the task specification lists, plus edge
// cases worked out by hand from the rule "shortest digits, prefix putting
// the mantissa in [1, 1000)".
func TestExact(t *testing.T) {
	tests := []struct {
		in   float64
		want string
	}{
		{20e-6, "20u"},
		{4700, "4.7k"},
		{1.8, "1.8"},
		{0.5e-6, "500n"},
		{1e-15, "1f"},
		{0, "0"},
		{math.Copysign(0, -1), "-0"},
		{-2.5e-3, "-2.5m"},
		{1, "1"},
		{999, "999"},
		{1000, "1k"},
		{999.9e9, "999.9G"},
		{1e12, "1e12"},
		{3e12, "3e12"},
		{1e-18, "1e-18"},
		{1.5e-20, "1.5e-20"},
		{999e-18, "9.99e-16"},
		{0.1, "100m"},
		{123456789, "123.456789M"},
		{1.0 / 3, "333.3333333333333m"},
		{math.MaxFloat64, "1.7976931348623157e308"},
		{math.SmallestNonzeroFloat64, "5e-324"},
		{math.NaN(), "NaN"},
		{math.Inf(1), "+Inf"},
		{math.Inf(-1), "-Inf"},
	}
	for _, tc := range tests {
		if got := Exact(tc.in); got != tc.want {
			t.Errorf("Exact(%v) = %q, want %q", tc.in, got, tc.want)
		}
	}
}

// eNotationOf rewrites an Exact result with its prefix spelled as a power of
// ten ("20u" -> "20e-6"), by text substitution only, so that strconv can read
// it without this package's Parse.
func eNotationOf(s string) string {
	for _, p := range [...]struct{ suffix, exp string }{
		{"f", "e-15"}, {"p", "e-12"}, {"n", "e-9"}, {"u", "e-6"}, {"m", "e-3"}, {"k", "e3"}, {"M", "e6"}, {"G", "e9"},
	} {
		if m, ok := strings.CutSuffix(s, p.suffix); ok {
			return m + p.exp
		}
	}
	return s
}

// significantDigits counts the digits of a decimal mantissa without leading
// or trailing zeros ("0.0120" has 2).
func significantDigits(mantissa string) int {
	d := strings.Trim(strings.NewReplacer("-", "", ".", "").Replace(mantissa), "0")
	return len(d)
}

// checkExact holds Exact(v) to its promises, each against strconv:
// strconv.ParseFloat of the same text reads back v bit for bit; Parse agrees;
// the mantissa before a prefix lies in [1, 1000); and no more significant
// digits are written than strconv's shortest round-trip form has.
func checkExact(t *testing.T, v float64) {
	t.Helper()
	s := Exact(v)
	ref := eNotationOf(s)
	back, err := strconv.ParseFloat(ref, 64)
	if err != nil || math.Float64bits(back) != math.Float64bits(v) {
		t.Fatalf("Exact(%v) = %q; strconv reads %q as %v, %v", v, s, ref, back, err)
	}
	parsed, err := Parse(s)
	if err != nil || math.Float64bits(parsed) != math.Float64bits(v) {
		t.Fatalf("Exact(%v) = %q; Parse reads it as %v, %v", v, s, parsed, err)
	}
	mantissa, _, hasExponent := strings.Cut(ref, "e")
	if ref != s && v != 0 {
		m, _ := strconv.ParseFloat(mantissa, 64)
		if m := math.Abs(m); m < 1 || m >= 1000 {
			t.Fatalf("Exact(%v) = %q: mantissa %v outside [1, 1000)", v, s, m)
		}
	} else if hasExponent && v != 0 {
		if a := math.Abs(v); a >= 1e-15 && a < 1e12 {
			t.Fatalf("Exact(%v) = %q: e-notation inside the prefix range", v, s)
		}
	}
	shortest, _, _ := strings.Cut(strconv.FormatFloat(v, 'e', -1, 64), "e")
	if got, want := significantDigits(mantissa), significantDigits(shortest); got != want {
		t.Fatalf("Exact(%v) = %q has %d significant digits, strconv's shortest form %q has %d", v, s, got, shortest, want)
	}
}

// Round trip over 100,000 seeded values: log-uniform magnitudes from 1e-18
// to 1e12 with both signs, "nice" values with one to three digits, and
// arbitrary finite bit patterns. Exact round trips are bit for bit.
func TestExactRoundTrip(t *testing.T) {
	rng := rand.New(rand.NewPCG(20240501, 7))
	for i := range 100_000 {
		var v float64
		switch i % 4 {
		case 0, 1:
			v = math.Pow(10, -18+30*rng.Float64())
		case 2:
			digits := 1 + rng.IntN(999)
			v, _ = strconv.ParseFloat(fmt.Sprintf("%de%d", digits, -20+rng.IntN(33)), 64)
		case 3:
			v = math.Float64frombits(rng.Uint64())
			if math.IsNaN(v) || math.IsInf(v, 0) {
				v = math.Float64frombits(rng.Uint64() >> 2) // exponent field below all ones: finite
			}
		}
		if rng.IntN(2) == 0 {
			v = -v
		}
		checkExact(t, v)
	}
}

// "Nice" values written with few digits come back as the same few digits.
func TestExactKeepsNiceValuesShort(t *testing.T) {
	rng := rand.New(rand.NewPCG(99, 1))
	for range 10_000 {
		n := 1 + rng.IntN(999)
		exp := -15 + rng.IntN(24)
		v, _ := strconv.ParseFloat(fmt.Sprintf("%de%d", n, exp), 64)
		s := Exact(v)
		if got, want := significantDigits(strings.TrimRight(s, "fpnumkMG")), significantDigits(strconv.Itoa(n)); got != want {
			t.Fatalf("Exact(%de%d) = %q: %d significant digits, want %d", n, exp, s, got, want)
		}
	}
}

func TestAppendExactDoesNotAllocate(t *testing.T) {
	buf := make([]byte, 0, 32)
	for _, v := range []float64{4700, -2.5e-3, 1.0 / 3, 1e-300} {
		if n := testing.AllocsPerRun(100, func() { buf = AppendExact(buf[:0], v) }); n != 0 {
			t.Errorf("AppendExact(%v) allocates %v times per call, want 0", v, n)
		}
	}
}

func TestEngineering(t *testing.T) {
	tests := []struct {
		v    float64
		sig  int
		unit string
		want string
	}{
		{4.7e3, 3, "Ω", "4.70 kΩ"},        // task specification
		{1.234567e-6, 4, "A", "1.235 µA"}, // task specification
		{math.Inf(1), 3, "Ω", "∞"},        // task specification
		{math.Inf(-1), 3, "Ω", "-∞"},
		{math.NaN(), 3, "V", "—"}, // task specification
		{999.96, 4, "V", "1.000 kV"},
		{999.94, 4, "V", "999.9 V"},
		{20e-6, 1, "A", "20 µA"},
		{0, 3, "V", "0.00 V"},
		{math.Copysign(0, -1), 3, "V", "0.00 V"},
		{-2.5e-3, 2, "A", "-2.5 mA"},
		{1.5, 3, "", "1.50"},
		{4700, 2, "", "4.7 k"},
		{1e-18, 3, "F", "1.00e-18 F"},
		{3.1e12, 2, "Hz", "3.1e12 Hz"},
		{4700, 0, "Ω", "5 kΩ"},
		{1.0 / 3, 40, "", "333.33333333333331 m"}, // 17 digits at most
	}
	for _, tc := range tests {
		if got := Engineering(tc.v, tc.sig, tc.unit); got != tc.want {
			t.Errorf("Engineering(%v, %d, %q) = %q, want %q", tc.v, tc.sig, tc.unit, got, tc.want)
		}
	}
}

// Rounding to n significant digits leaves a relative error of at most half
// a unit in the last place, 0.5·10^(1−n) (common practice). The display is
// read back by replacing µ with u; the tolerance adds 1e-12 relative for the
// float64 arithmetic of reading it back, far below the smallest bound tested
// (0.5e-7 at eight digits).
func TestEngineeringRoundsWithinHalfUnit(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 5))
	for range 20_000 {
		v := math.Pow(10, -14+22*rng.Float64())
		if rng.IntN(2) == 0 {
			v = -v
		}
		sig := 1 + rng.IntN(8)
		s := Engineering(v, sig, "V")
		text := strings.Replace(strings.TrimSuffix(strings.Replace(s, " ", "", 1), "V"), "µ", "u", 1)
		back, err := Parse(text)
		if err != nil {
			t.Fatalf("Engineering(%v, %d) = %q: %v", v, sig, s, err)
		}
		bound := 0.5*math.Pow(10, float64(1-sig)) + 1e-12
		if rel := math.Abs(back-v) / math.Abs(v); rel > bound {
			t.Fatalf("Engineering(%v, %d) = %q: relative error %.3g above %.3g", v, sig, s, rel, bound)
		}
	}
}

// sink keeps benchmark results alive so that the compiler cannot keep the
// returned strings on the stack, as it could not in real use.
var sink string

func BenchmarkExact(b *testing.B) {
	values := []float64{4700, 20e-6, -2.5e-3, 1.0 / 3, 180e-9, 3e12}
	b.ReportAllocs()
	for i := 0; b.Loop(); i++ {
		sink = Exact(values[i%len(values)])
	}
}

func BenchmarkAppendExact(b *testing.B) {
	values := []float64{4700, 20e-6, -2.5e-3, 1.0 / 3, 180e-9, 3e12}
	buf := make([]byte, 0, 32)
	b.ReportAllocs()
	for i := 0; b.Loop(); i++ {
		buf = AppendExact(buf[:0], values[i%len(values)])
	}
}

func BenchmarkEngineering(b *testing.B) {
	b.ReportAllocs()
	for b.Loop() {
		sink = Engineering(1.234567e-6, 4, "A")
	}
}

// shortDecimal must give exactly what strconv's shortest formatting gives
// (splitScientific(v, −1)), or decline. The arguments: every decimal of one
// to six digits over the decades a fragment uses (1e-18 … 1e13) — the
// values the fast path exists for, which it must accept down to 1e-22 in
// the last digit — their
// neighbours one unit in the last place away (which need 16 or 17 digits:
// declined or, if accepted, the same digits), and random doubles over
// the whole range.
func TestShortDecimalMatchesStrconv(t *testing.T) {
	same := func(v float64) bool {
		got, ok := shortDecimal(v)
		if !ok {
			return false
		}
		want := splitScientific(v, -1)
		if got != want {
			t.Fatalf("shortDecimal(%v) = %+v, strconv gives %+v", v, got, want)
		}
		return true
	}
	rng := rand.New(rand.NewPCG(5, 5))
	declined := 0
	for exp := -18; exp <= 13; exp++ {
		for i := 0; i < 4000; i++ {
			digits := 1 + rng.IntN(6)
			m := float64(rng.Int64N(int64(math.Pow(10, float64(digits)))))
			v, err := strconv.ParseFloat(strconv.FormatFloat(m, 'f', 0, 64)+"e"+strconv.Itoa(exp-digits+1), 64)
			if err != nil {
				t.Fatal(err)
			}
			if rng.IntN(2) == 0 {
				v = -v
			}
			// Accepted whenever the power of ten it needs, 10^(exp−digits+1),
			// is exact (down to 1e-22).
			if ok := same(v); !ok && v != 0 && exp-digits+1 >= -22 {
				t.Fatalf("shortDecimal declined %v (%d digits), which it is meant for", v, digits)
			}
			for _, u := range []float64{math.Nextafter(v, math.Inf(1)), math.Nextafter(v, math.Inf(-1))} {
				if !same(u) {
					declined++
				}
			}
		}
	}
	for i := 0; i < 100000; i++ {
		v := math.Float64frombits(rng.Uint64())
		if !same(v) {
			declined++
		}
	}
	for _, v := range []float64{0, math.Copysign(0, -1), math.Inf(1), math.Inf(-1), math.NaN(), math.MaxFloat64, math.SmallestNonzeroFloat64, 1e22, 1e23, 1e-22, 1e-23, 9.999999999999999e22} {
		same(v)
	}
	t.Logf("declined %d arguments (left to strconv)", declined)
}
