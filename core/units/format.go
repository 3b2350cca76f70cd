package units

import (
	"math"
	"strconv"
)

// Exact formats v, a value in SI units, as the shortest decimal that Parse
// reads back as exactly v, bit for bit: 20e-6 is "20u", 4700 is "4.7k", 1.8
// is "1.8", 0.5e-6 is "500n", 1e-15 is "1f", 0 is "0", -0 is "-0" and
// -2.5e-3 is "-2.5m". The prefix is the one that puts the digits before it
// in 1 <= |m| < 1000; below 1f or from 1000G on it writes e-notation without
// a plus sign or leading exponent zeros ("1e-18", "3e12").
//
// NaN and the infinities come out as strconv writes them ("NaN", "+Inf",
// "-Inf"), which Parse rejects.
func Exact(v float64) string {
	var buf [32]byte
	return string(AppendExact(buf[:0], v))
}

// AppendExact appends Exact(v) to dst and returns the extended slice. It
// does not allocate when dst has room for 25 more bytes.
func AppendExact(dst []byte, v float64) []byte {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return strconv.AppendFloat(dst, v, 'g', -1, 64)
	}
	// The shortest digits that strconv reads back as v; only the place of
	// the decimal point changes below, so the decimal value stays the same.
	d, ok := shortDecimal(v)
	if !ok {
		d = splitScientific(v, -1)
	}
	if d.negative {
		dst = append(dst, '-')
	}
	dst, prefix := d.appendMantissa(dst, &asciiMicro)
	return append(dst, prefix...)
}

// Engineering formats v, a value in SI units, rounded to sig significant
// digits, with an SI prefix and the unit symbol, for display:
// Engineering(4.7e3, 3, "Ω") is "4.70 kΩ" and Engineering(1.234567e-6, 4,
// "A") is "1.235 µA". Trailing zeros are kept to show the precision; a
// mantissa of 10 or more shows its integer digits even when sig is smaller
// ("20 µA" for sig 1). Outside f..G it writes e-notation ("1.00e-18 A").
// sig below 1 counts as 1, above 17 as 17. Zero has no sign. NaN prints
// "—" (em dash) and the infinities "∞" and "-∞", without the unit.
func Engineering(v float64, sig int, unit string) string {
	var buf [48]byte
	return string(AppendEngineering(buf[:0], v, sig, unit))
}

// AppendEngineering appends Engineering(v, sig, unit) to dst and returns the
// extended slice.
func AppendEngineering(dst []byte, v float64, sig int, unit string) []byte {
	switch {
	case math.IsNaN(v):
		return append(dst, "—"...)
	case math.IsInf(v, 1):
		return append(dst, "∞"...)
	case math.IsInf(v, -1):
		return append(dst, "-∞"...)
	}
	sig = min(max(sig, 1), 17)
	// Round first, then choose the prefix, so that 999.96 to four digits
	// becomes "1.000 k" and not "1000".
	d := splitScientific(v, sig-1)
	if d.negative && v != 0 {
		dst = append(dst, '-')
	}
	dst, prefix := d.appendMantissa(dst, &displayMicro)
	if prefix != "" || unit != "" {
		dst = append(dst, ' ')
		dst = append(dst, prefix...)
		dst = append(dst, unit...)
	}
	return dst
}

// Prefix symbols from 1e-15 to 1e9 in steps of 1e3; index (exp10+15)/3.
var (
	asciiMicro   = [...]string{"f", "p", "n", "u", "m", "", "k", "M", "G"}
	displayMicro = [...]string{"f", "p", "n", "µ", "m", "", "k", "M", "G"}
)

// scientific is a finite float64 as strconv writes it in 'e' format: the
// value is ±d[0].d[1]d[2]… × 10^exp10.
type scientific struct {
	negative bool
	digits   [24]byte
	n        int // number of digits used
	exp10    int
}

// pow10 holds the powers of ten that are exact in float64.
var pow10 = [...]float64{1e0, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10,
	1e11, 1e12, 1e13, 1e14, 1e15, 1e16, 1e17, 1e18, 1e19, 1e20, 1e21, 1e22}

// shortDecimal is splitScientific(v, −1) for the values a fragment holds,
// which are short decimals (20e-6, 1.8, 4.7e3): the shortest digits m and
// exponent e with m·10^e read back as v, found without strconv's general
// algorithm (whose 128-bit products are slow under js/wasm). ok is false
// when v needs more than 15 digits or a power of ten beyond 10^±22; the
// caller then uses strconv.
//
// For n = 1, 2, … digits it takes the integers m nearest v/10^e, with
// e = exp10 − n + 1, and checks whether m·10^e reads back as v. The check is
// exact: m < 2^53 and 10^|e| are exact doubles, so one correctly rounded
// product or quotient is the correctly rounded value of the decimal, which
// is what ParseFloat returns. With at most 15 digits the decimals of n
// digits are 10^e apart, far more than the width of v's rounding interval
// (one unit in its last place), so at most one of them reads back as v, and
// it is the floor or the ceiling of v/10^e; the first n with one is the
// shortest length, and that decimal is the one strconv writes.
func shortDecimal(v float64) (scientific, bool) {
	var d scientific
	if v == 0 || v != v || v-v != 0 {
		return d, false // zero (and its sign), NaN and the infinities: strconv
	}
	a := v
	if a < 0 {
		a, d.negative = -a, true
	}
	// exp10 = ⌊log10 a⌋: ⌊e2·log10 2⌋ from the binary exponent e2 (by the
	// integer product e2·78913/2^18, exact over this range), which is the
	// answer or one below it; a guess that is still off makes every
	// candidate fail the digit count below, which only sends v to strconv.
	x := (int(math.Float64bits(a)>>52&0x7ff) - 1023) * 78913 >> 18
	if x < -22 || x > 22 {
		return d, false
	}
	if x+1 >= 0 && x+1 <= 22 && a >= pow10[x+1] || x+1 < 0 && a*pow10[-x-1] >= 1 {
		x++ // a ≥ 10^(x+1)
	}
	for n := 1; n <= 15; n++ {
		e := x - n + 1
		if e < -22 || e > 22 {
			return d, false
		}
		var q float64
		if e >= 0 {
			q = a / pow10[e]
		} else {
			q = a * pow10[-e]
		}
		m0 := math.Floor(q)
		for _, m := range [2]float64{m0, m0 + 1} {
			var back float64
			if e >= 0 {
				back = m * pow10[e]
			} else {
				back = m / pow10[-e]
			}
			if back != a || m < pow10[n-1] || m > pow10[n] {
				continue
			}
			if m == pow10[n] {
				// v reads back from 10^(x+1): x, from the logarithm, was one
				// too small (v is the double nearest a power of ten).
				d.digits[0], d.n, d.exp10 = '1', 1, x+1
				return d, true
			}
			// m has exactly n digits and no trailing zero (else n − 1
			// digits would have read back too).
			mi := uint64(m)
			for i := n - 1; i >= 0; i-- {
				d.digits[i] = byte('0' + mi%10)
				mi /= 10
			}
			d.n, d.exp10 = n, x
			return d, true
		}
	}
	return d, false
}

// splitScientific writes v with strconv.AppendFloat(…, 'e', prec, 64) and
// takes the result apart. v must be finite.
func splitScientific(v float64, prec int) scientific {
	var buf [32]byte
	b := strconv.AppendFloat(buf[:0], v, 'e', prec, 64)
	var d scientific
	i := 0
	if b[i] == '-' {
		d.negative = true
		i++
	}
	for ; i < len(b) && b[i] != 'e'; i++ {
		if b[i] != '.' {
			d.digits[d.n] = b[i]
			d.n++
		}
	}
	i++ // 'e'
	expNegative := b[i] == '-'
	for i++; i < len(b); i++ {
		d.exp10 = 10*d.exp10 + int(b[i]-'0')
	}
	if expNegative {
		d.exp10 = -d.exp10
	}
	return d
}

// engineeringExp10 is the multiple of three at or below exp10.
func (d *scientific) engineeringExp10() int {
	return d.exp10 - ((d.exp10%3)+3)%3
}

// appendMantissa appends the digits without sign, with the decimal point
// placed for the SI prefix that puts them in 1 <= m < 1000, and returns the
// symbol of that prefix from symbols ("" for none). Outside the prefixes it
// appends e-notation and returns "".
func (d *scientific) appendMantissa(dst []byte, symbols *[9]string) ([]byte, string) {
	e := d.engineeringExp10()
	if e < -15 || e > 9 {
		dst = appendWithPoint(dst, d.digits[:d.n], 1)
		dst = append(dst, 'e')
		return strconv.AppendInt(dst, int64(d.exp10), 10), ""
	}
	return appendWithPoint(dst, d.digits[:d.n], d.exp10-e+1), symbols[(e+15)/3]
}

// appendWithPoint appends digits with the decimal point after the first
// intLen of them, padding with zeros when there are fewer than intLen.
func appendWithPoint(dst, digits []byte, intLen int) []byte {
	if intLen >= len(digits) {
		dst = append(dst, digits...)
		for range intLen - len(digits) {
			dst = append(dst, '0')
		}
		return dst
	}
	dst = append(dst, digits[:intLen]...)
	dst = append(dst, '.')
	return append(dst, digits[intLen:]...)
}
