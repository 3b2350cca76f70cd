// Package extract fits the device model to a user's characterization table
// (a chardata.Table) and reports the fit in design terms.
//
// Fit runs in two steps:
//
//  1. Starting values by the published EKV extraction from the gm/ID curve
//     (Enz, Chicco and Pezzotta, IEEE Solid-State Circuits Magazine 2017;
//     Enz and Vittoz 2006): the slope factor from the weak-inversion plateau
//     of gm/ID, the specific current where gm·n·U_T/ID falls to 0.618
//     (IC = 1), the threshold from the pinch-off relation there, the mobility
//     from I_spec = 2·n·µ·Cox·(W/L)·U_T², then body effect, drain-induced
//     barrier lowering and channel-length modulation from how those move
//     with VBS and VDS.
//  2. Weighted nonlinear least squares by Levenberg–Marquardt on transformed
//     parameters (logarithms of the positive ones, clamped to the device's
//     accepted ranges): ln ID at every point above a current floor, plus the
//     relative error of gds in saturation with weight Options.GDSWeight.
//
// The Report gives the rms and worst relative drain-current error in weak,
// moderate and strong inversion and in triode and saturation, the rms error
// of gm/ID and gds, and Findings: plain sentences that say where the model
// cannot follow the data and what that means for a design.
package extract
