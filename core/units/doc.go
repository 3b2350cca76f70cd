// Package units reads and writes plain numbers with SI prefixes, such as
// "4.7k" for 4700 or "180n" for 180e-9, for the URL fragment and the page.
//
// Values are bare SI numbers: the caller knows whether a value is in ohms,
// farads or amperes, and no unit letters are written or read.
//
//   - [Parse] reads "4.7k", "10u", "1e-3" into a float64. It is strict: no
//     spaces, units, NaN, infinities, hexadecimal or digit separators. The
//     page trims its text field with strings.TrimSpace before calling Parse;
//     the fragment decoder passes its text untouched.
//   - [Exact] writes the shortest prefixed form that Parse reads back as the
//     same float64, bit for bit, so a design survives a trip through the URL.
//   - [Engineering] rounds to a number of significant digits and adds a unit,
//     for display only ("4.70 kΩ").
//
// The prefixes are f (1e-15), p (1e-12), n (1e-9), u or µ (1e-6), m (1e-3),
// k (1e3), M (1e6) and G (1e9). Parse reads both the micro sign U+00B5 and
// the Greek small letter mu U+03BC as u; Exact writes u and Engineering µ
// (U+00B5).
package units
