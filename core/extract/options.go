package extract

import (
	"stagewright/core/device"
)

// DefaultGDSWeight is the weight of the relative gds error beside the ln ID
// error that the command line and the page use: gds decides a stage's gain,
// but data gds taken by differencing is noisy, so it counts for less than
// the current itself.
const DefaultGDSWeight = 0.3

// Options says what to fit and how.
type Options struct {
	Pol  device.Polarity // the table's polarity (the points are normalized to n-channel)
	Base device.Params   // the base process's parameters: the fixed ones and the oxide come from here
	TNom float64         // K, the temperature at which the fitted parameters hold

	// Free lists the parameters to fit by their ParamTable keys; nil means
	// DefaultFree. "slope" fits a constant slope factor instead of "body".
	Free []string

	// GDSWeight weighs the squared relative gds error in saturation against
	// the squared ln ID error; 0 leaves gds out of the objective.
	GDSWeight float64

	// Bins allows one parameter set per channel length when a single set
	// cannot follow the data (see Result.Bins).
	Bins bool
}

// DefaultFree is the parameter set Fit adjusts when Options.Free is nil.
var DefaultFree = []string{"thresh", "mobility", "body", "surface", "mobred", "velsat", "lenmod", "dibl"}

// Result is a finished (or cancelled) fit.
type Result struct {
	Pol        device.Polarity
	Params     device.Params // the fitted parameters
	Start      device.Params // the starting values of step (a)
	Base       device.Params // the base the fit started from (fragment overrides are relative to it)
	Report     Report
	Iterations int  // Levenberg–Marquardt iterations done
	Cancelled  bool // the progress function asked to stop; Params are the best so far

	plots plots
	bins  []device.Bin
}

// Bins returns the per-length parameter sets, rising in L, when one set
// did not follow the data and Options.Bins allowed them; nil otherwise.
// The slice is the caller's.
func (r Result) Bins() []device.Bin { return append([]device.Bin(nil), r.bins...) }

// Error says what the data lack for a fit.
type Error struct {
	Message string
}

func (e *Error) Error() string { return "fit: " + e.Message }

func errorf(msg string) error { return &Error{Message: msg} }
