// Package transfer traces the large-signal DC transfer of a stage and its
// harmonic distortion.
//
// Curve sweeps the input DC level (the gate of a cs or sf stage, the
// signal source of a cg stage) across 0 … VDD with the bias voltages held
// at the design's solved operating point, by Newton continuation outwards
// from that point, and reports the output level, both transistors' regions
// and the exact small-signal gain at every level, together with the input
// range and output swing over which the stage keeps its operating-point
// behaviour. The curve is refined where it is steep (every output step at
// most StepFraction of the supply), and it reports the swing around the
// operating point in output terms: the headroom up and down from the DC
// output to the first transistor of the stage leaving saturation, and the
// symmetric swing, twice the smaller. Distortion drives the solved transfer quasi-statically with a
// sine and reports the 2nd and 3rd harmonic distortion and the THD from a
// DFT of one period, beside the Taylor estimate from the derivatives at the
// operating point. Harmonics is the DFT part on its own, for any transfer
// function.
//
// Voltages are in V, gains in V/V, distortion as plain amplitude ratios and
// in dBc.
package transfer
