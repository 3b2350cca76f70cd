// Package extract fits the device model to a user's characterization table
// (package chardata), so that a design can be sized in the user's own
// process, and reports the fit in a designer's terms.
//
// It works in two documented steps:
//
//  1. Starting values from the gm/ID curve, by the published charge-based
//     EKV extraction (Enz, Chicco & Pezzotta, IEEE Solid-State Circuits
//     Magazine, 2017; Enz & Vittoz 2006): the slope factor n from the
//     weak-inversion plateau gm/ID → 1/(n·U_T); the specific current where
//     gm·n·U_T/ID falls to 0.618, which is IC = 1; the threshold from the
//     pinch-off relation there; the body effect and barrier lowering from how
//     that threshold moves with VBS and VDS (see Start).
//  2. Weighted nonlinear least squares of the model parameters from there,
//     by a short Levenberg–Marquardt (see Fit): ln ID over every point above
//     a current floor, and the output conductance in saturation.
//
// The report (Report) gives the ID error per inversion level and per
// operating region, the gm/ID and gds errors, and plain sentences on what the
// misfit means for a design.
package extract
