// Package device models one MOSFET: the drain current and its exact
// derivatives in every region of operation, the operating-point report
// (region, inversion level, small-signal conductances, capacitances, noise)
// and a square-law hand model built from the same process numbers.
//
// # Model
//
// The current comes from the charge-based EKV model (Enz and Vittoz,
// Charge-Based MOS Transistor Modeling, Wiley 2006). All voltages are
// referred to the bulk and normalized to an n-channel device; a p-channel
// device evaluates the mirrored n-channel one, I_p(v) = −I_n(−v). The
// pinch-off voltage VP follows from the gate voltage; the normalized
// inversion charges q_f and q_r at the source and drain ends solve
// (VP − V)/U_T = 2q + ln q, done with the Wright omega function; the
// normalized currents are i = q² + q and
//
//	ID = I_spec·(i_f − i_r)·M/D,  I_spec = 2·n·µ·Cox·(W/L)·U_T²,
//
// with M = 1 + λ·|VDS| for channel-length modulation and
// D = 1 + θeff·n·U_T·(q_f + q_r) for mobility reduction and velocity
// saturation. One formula covers weak, moderate and strong inversion and
// both directions of conduction, and has continuous first derivatives, which
// a Newton–Raphson operating-point solver needs.
//
// Gate capacitances follow Meyer's model (RCA Review 1971), smoothed across
// regions by the charges; junction capacitances use the usual graded-junction
// law. Channel thermal noise uses the long-channel all-region EKV form and
// flicker noise the gate-referred KF/(Cox·W·L·f) form.
//
// # Units
//
// Everything is SI: V, A, S, F, m, K, Hz. Temperatures are absolute (K).
// Process parameters give magnitudes (a p-channel VT0 is positive); the
// signed values in a Report follow the terminals.
//
// # Demo processes
//
// The built-in processes "d180" and "d65" are invented demo data with values
// plausible for their technology class; they describe no real foundry
// process.
//
// # Use
//
// Build a Device with New (or from a Process with Process.Params), then call
// Current in a solver's inner loop (it does not allocate) and Report once at
// the solved operating point.
package device
