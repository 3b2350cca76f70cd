// Package variation checks a design against manufacturing spread: process
// corners across temperature (Corners) and Monte Carlo sampling of the
// global process shift and of device mismatch by Pelgrom's law
// (MonteCarlo), with summary statistics, histograms and the yield against
// design targets.
//
// Units are SI throughout (V, A, W, Hz), except temperatures in rows,
// which are °C as designs give them. Corner shifts and spreads come from
// device.Corner and device.Process.Spread; for the built-in processes they
// are invented demo data.
//
// Every result is deterministic for the same design, sample count and
// seed, and no figure is NaN or ±Inf in JSON: design.Num writes null.
package variation
