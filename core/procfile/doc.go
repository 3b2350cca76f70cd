// Package procfile is Stagewright's process file: a user's own process —
// a built-in base process with parameters fitted to the user's data — in
// a JSON form of Stagewright's own, which the command line writes and
// reads and the page loads, and the design-fragment keys that make any
// design use it.
//
// The file holds the name and title, the base process (its geometry
// limits, spread and every parameter the file does not give), the supply,
// the n- and p-channel parameters by the names of device.ParamTable, their
// length bins, a fingerprint of each source data file and the fit report.
// A design link carries the process as overrides on the base (Fragment),
// so a shared link stays self-contained.
package procfile
