package units

import (
	"fmt"
	"math"
	"strconv"
	"strings"
	"unicode"
	"unicode/utf8"
)

// NumError says why Parse rejected its input.
type NumError struct {
	Input  string // the text as given to Parse
	Reason string // what is wrong with it and what is accepted instead
}

func (e *NumError) Error() string {
	return strconv.Quote(e.Input) + ": " + e.Reason
}

// prefixList is how error messages name the accepted prefixes.
const prefixList = "f p n u m k M G"

// readPrefixes are the SI prefixes Parse accepts, with their power of ten.
var readPrefixes = [...]struct {
	symbol string
	exp10  int
}{
	{"f", -15}, {"p", -12}, {"n", -9},
	{"u", -6}, {"µ", -6}, {"μ", -6}, // u, micro sign U+00B5, Greek mu U+03BC
	{"m", -3}, {"k", 3}, {"M", 6}, {"G", 9},
	// K is no SI prefix, but people type 20K for 20 k; no prefix (and no
	// unit written here) is K, so it cannot be misread.
	{"K", 3},
}

// unitSymbols are unit names a user may type after a number; Parse names
// them in its error so the user knows units are not written.
var unitSymbols = [...]string{"F", "H", "V", "A", "W", "Hz", "s", "S", "Ω", "Ω", "ohm", "Ohm"}

// Parse reads a decimal number with an optional SI prefix: "4.7k", "180n",
// "2.2p", "10u", "10µ", "10μ", "1M", "1G", "100f", "3.3m", "-0.5", "1e-3";
// "20K" is read as "20k".
// The result is in plain SI units ("4.7k" is 4700) and is the float64
// nearest to the decimal value written, as strconv.ParseFloat rounds it.
//
// The syntax is an optional sign, digits with at most one decimal point,
// then either an exponent ("e-3") or one prefix, or neither. Parse rejects
// empty input, spaces anywhere (trim first where that is wanted), unit
// letters ("10uF"), NaN, infinities, hexadecimal, underscores, an exponent
// together with a prefix, and values whose magnitude is too large for a
// float64 or so small that it would read as zero. Errors are *NumError.
func Parse(s string) (float64, error) {
	i := 0
	if i < len(s) && (s[i] == '+' || s[i] == '-') {
		i++
	}
	digits, nonzero, sawDot := 0, false, false
scan:
	for ; i < len(s); i++ {
		switch c := s[i]; {
		case '0' <= c && c <= '9':
			digits++
			nonzero = nonzero || c != '0'
		case c == '.' && !sawDot:
			sawDot = true
		case c == '.':
			return 0, explain(s, "more than one decimal point")
		default:
			break scan
		}
	}
	if digits == 0 {
		return 0, explain(s, "no digits (write a number such as 4.7k or 1e-3)")
	}
	mantissaEnd := i
	hasExponent := false
	if i < len(s) && (s[i] == 'e' || s[i] == 'E') {
		hasExponent = true
		i++
		if i < len(s) && (s[i] == '+' || s[i] == '-') {
			i++
		}
		expDigitsStart := i
		for i < len(s) && '0' <= s[i] && s[i] <= '9' {
			i++
		}
		if i == expDigitsStart {
			return 0, explain(s, fmt.Sprintf("exponent %q has no digits (write it as in 1e-3)", s[mantissaEnd:i]))
		}
	}
	number := s
	if rest := s[i:]; rest != "" {
		exp10, err := readPrefix(s, rest, hasExponent)
		if err != nil {
			return 0, err
		}
		// Move the decimal point by writing the prefix as an exponent, so
		// that strconv rounds the decimal value once; multiplying by a power
		// of ten afterwards would round twice.
		var buf [40]byte
		b := append(buf[:0], s[:i]...)
		b = append(b, 'e')
		b = strconv.AppendInt(b, int64(exp10), 10)
		number = string(b)
	}
	v, err := strconv.ParseFloat(number, 64)
	switch {
	case err != nil || math.IsInf(v, 0):
		// The syntax was checked above, so strconv can only object to range.
		return 0, explain(s, fmt.Sprintf("magnitude too large (a float64 holds at most %.4g)", math.MaxFloat64))
	case v == 0 && nonzero:
		return 0, explain(s, fmt.Sprintf("magnitude too small: it would read as 0 (the smallest nonzero float64 is %.4g)", math.SmallestNonzeroFloat64))
	}
	return v, nil
}

// readPrefix returns the power of ten of the prefix that is all of rest, the
// text after the digits of s, or says why rest is not a prefix.
func readPrefix(s, rest string, hasExponent bool) (int, error) {
	if strings.EqualFold(rest, "meg") || strings.EqualFold(rest, "mega") {
		return 0, explain(s, fmt.Sprintf("%q is not read: write M for mega (%q)", rest, s[:len(s)-len(rest)]+"M"))
	}
	for _, p := range readPrefixes {
		if !strings.HasPrefix(rest, p.symbol) {
			continue
		}
		after := rest[len(p.symbol):]
		switch {
		case hasExponent:
			return 0, explain(s, fmt.Sprintf("exponent and prefix %q together (write one of them)", p.symbol))
		case after == "":
			return p.exp10, nil
		case after[0] >= '0' && after[0] <= '9':
			return 0, explain(s, fmt.Sprintf("digits after the prefix %q (write the decimal point: 4.7k, not 4k7)", p.symbol))
		case isUnit(after):
			return 0, explain(s, fmt.Sprintf("unit %q after the prefix: units are not written (write %q)", after, s[:len(s)-len(after)]))
		}
		break
	}
	if isUnit(rest) {
		return 0, explain(s, fmt.Sprintf("unit %q: units are not written (write %q)", rest, s[:len(s)-len(rest)]))
	}
	return 0, explain(s, fmt.Sprintf("unknown suffix %q (use one of %s)", rest, prefixList))
}

func isUnit(s string) bool {
	for _, u := range unitSymbols {
		if s == u {
			return true
		}
	}
	return false
}

// explain builds the error for s. Faults of the whole input (empty, spaces,
// NaN, hexadecimal, …) take precedence over the local reason, which says
// where the scan stopped, because they tell the user more.
func explain(s, local string) *NumError {
	body := strings.TrimLeft(s, "+-")
	reason := local
	switch {
	case s == "":
		reason = "empty (write a number such as 4.7k or 1e-3)"
	case strings.IndexFunc(s, unicode.IsSpace) >= 0:
		reason = "contains a space (write the number and prefix together, as in 4.7k)"
	case strings.Contains(s, "_"):
		reason = "underscores are not accepted (write the digits without separators)"
	case strings.EqualFold(body, "nan"):
		reason = "NaN is not a number that can be used"
	case strings.EqualFold(body, "inf") || strings.EqualFold(body, "infinity") || body == "∞":
		reason = "infinite values are not accepted (write a finite number)"
	case len(body) >= 2 && body[0] == '0' && (body[1] == 'x' || body[1] == 'X'):
		reason = "hexadecimal is not accepted (write decimal digits)"
	case !utf8.ValidString(s):
		reason = "not valid UTF-8 text"
	}
	return &NumError{Input: s, Reason: reason}
}
