package extract

import (
	"strconv"

	"stagewright/core/units"
)

func itoa(i int) string { return strconv.Itoa(i) }

// fmtSI writes v with an SI prefix and unit, three significant digits.
func fmtSI(v float64, unit string) string { return units.Engineering(v, 3, unit) }

// pct writes a percentage with at most one decimal.
func pct(v float64) string {
	if v >= 10 || v <= -10 {
		return strconv.FormatFloat(v, 'f', 0, 64)
	}
	return strconv.FormatFloat(v, 'f', 1, 64)
}
