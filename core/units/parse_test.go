package units

import (
	"errors"
	"math"
	"strconv"
	"strings"
	"testing"
)

// The reference for every accepted input is strconv.ParseFloat of the same
// number written by hand in e-notation: the standard library's correctly
// rounded decimal reader, independent of this package. The comparison is
// bit for bit (no tolerance) because Parse promises the float64 nearest to
// the decimal written, which is unique.
func TestParseAccepts(t *testing.T) {
	tests := []struct {
		in, eNotation string
	}{
		{"4.7k", "4.7e3"},
		{"180n", "180e-9"},
		{"2.2p", "2.2e-12"},
		{"1e-3", "1e-3"},
		{"10u", "10e-6"},
		{"10µ", "10e-6"}, // micro sign U+00B5
		{"10μ", "10e-6"}, // Greek small letter mu U+03BC
		{"20u", "20e-6"},
		{"1M", "1e6"},
		{"20K", "20e3"}, // K for kilo, as people type it
		{"4.7K", "4.7e3"},
		{"1G", "1e9"},
		{"100f", "100e-15"},
		{"-0.5", "-0.5"},
		{"3.3m", "3.3e-3"},
		{"+2k", "2e3"},
		{".5k", "0.5e3"},
		{"5.k", "5e3"},
		{"0", "0"},
		{"-0", "-0"},
		{"0.000", "0"},
		{"1E6", "1e6"},
		{"1e+06", "1e6"},
		{"1.5e-20", "1.5e-20"},
		{"5e-324", "5e-324"}, // smallest subnormal: nonzero, so not an underflow
		{"1.7976931348623157e308", "1.7976931348623157e308"}, // largest finite float64
		{"1.1n", "1.1e-9"}, // 1.1 * 1e-9 rounds to 1.1000000000000001e-09: the prefix must not be applied by multiplying
		{"0.1n", "1e-10"},  // likewise 0.1 * 1e-9 = 1.0000000000000002e-10
		{"12345678901234567890123k", "12345678901234567890123e3"}, // more digits than the stack buffer holds
	}
	for _, tc := range tests {
		want, err := strconv.ParseFloat(tc.eNotation, 64)
		if err != nil {
			t.Fatalf("reference %q: %v", tc.eNotation, err)
		}
		got, err := Parse(tc.in)
		if err != nil {
			t.Errorf("Parse(%q): %v", tc.in, err)
			continue
		}
		if math.Float64bits(got) != math.Float64bits(want) {
			t.Errorf("Parse(%q) = %v (bits %#x), want %v (bits %#x) as strconv reads %q",
				tc.in, got, math.Float64bits(got), want, math.Float64bits(want), tc.eNotation)
		}
	}
}

func TestParseRejects(t *testing.T) {
	tests := []struct {
		in     string
		reason string // a part of NumError.Reason that names the fault
	}{
		{"", "empty"},
		{"4.7kk", `unknown suffix "kk" (use one of f p n u m k M G)`},
		{"10uF", `unit "F" after the prefix: units are not written (write "10u")`},
		{"10µF", `unit "F" after the prefix`},
		{"1kΩ", `unit "Ω" after the prefix`},
		{"10V", `unit "V": units are not written (write "10")`},
		{"5Hz", `unit "Hz"`},
		{"4k7", "write the decimal point"},
		{"1Meg", `write M for mega ("1M")`},
		{"1meg", `write M for mega`},
		{"1KK", `unknown suffix "KK"`},
		{"1T", `unknown suffix "T"`},
		{"1x", `unknown suffix "x"`},
		{" 4.7k", "contains a space"},
		{"4.7k ", "contains a space"},
		{"4.7 k", "contains a space"},
		{"4.7\u00a0k", "contains a space"}, // no-break space
		{"4.7\tk", "contains a space"},
		{"NaN", "NaN"},
		{"nan", "NaN"},
		{"-nan", "NaN"},
		{"Inf", "infinite"},
		{"+inf", "infinite"},
		{"-Infinity", "infinite"},
		{"∞", "infinite"},
		{"0x10", "hexadecimal"},
		{"0x1p-2", "hexadecimal"},
		{"-0X1A", "hexadecimal"},
		{"1_000", "underscores"},
		{"1_0k", "underscores"},
		{"1e400", "too large"},
		{"-1e309", "too large"},
		{"1e99999999999999999999", "too large"},
		{"1e-400", "too small"},
		{"-3e-330", "too small"},
		{"1e3k", `exponent and prefix "k" together`},
		{"1e", `exponent "e" has no digits`},
		{"1E+", `exponent "E+" has no digits`},
		{"1ek", `exponent "e" has no digits`},
		{"1.2.3", "more than one decimal point"},
		{"k", "no digits"},
		{"-", "no digits"},
		{".", "no digits"},
		{"--1", "no digits"},
		{"+-1", "no digits"},
		{"e5", "no digits"},
		{".e1", "no digits"},
		{"1\xff", "not valid UTF-8"},
	}
	for _, tc := range tests {
		got, err := Parse(tc.in)
		if err == nil {
			t.Errorf("Parse(%q) = %v, want an error about %q", tc.in, got, tc.reason)
			continue
		}
		var ne *NumError
		if !errors.As(err, &ne) {
			t.Errorf("Parse(%q) error %v is %T, want *NumError", tc.in, err, err)
			continue
		}
		if ne.Input != tc.in || !strings.Contains(ne.Reason, tc.reason) {
			t.Errorf("Parse(%q) = %#v, want Input %q and a Reason containing %q", tc.in, ne, tc.in, tc.reason)
		}
		if got != 0 {
			t.Errorf("Parse(%q) returned %v with its error, want 0", tc.in, got)
		}
	}
}

func TestNumErrorMessage(t *testing.T) {
	_, err := Parse("4.7kk")
	const want = `"4.7kk": unknown suffix "kk" (use one of f p n u m k M G)`
	if err == nil || err.Error() != want {
		t.Errorf("Parse(%q) error = %v, want %s", "4.7kk", err, want)
	}
}

// Parse runs for every field of a URL fragment; it should not allocate when
// it succeeds on ordinary input.
func TestParseDoesNotAllocate(t *testing.T) {
	for _, in := range []string{"4.7k", "1e-3", "-0.5", "2.2p", "10µ"} {
		if n := testing.AllocsPerRun(100, func() { _, _ = Parse(in) }); n != 0 {
			t.Errorf("Parse(%q) allocates %v times per call, want 0", in, n)
		}
	}
}

func BenchmarkParse(b *testing.B) {
	inputs := []string{"4.7k", "180n", "1e-3", "-0.5", "2.2p", "12.345678M"}
	b.ReportAllocs()
	for i := 0; b.Loop(); i++ {
		if _, err := Parse(inputs[i%len(inputs)]); err != nil {
			b.Fatal(err)
		}
	}
}
