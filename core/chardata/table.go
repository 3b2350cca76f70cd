package chardata

import "stagewright/core/device"

// Point is one row of a characterization table, in SI units (V, A, m, S, F)
// and polarity-normalized: for a p-channel device every voltage and the
// current are given the signs of the mirrored n-channel device, so that a
// conducting p-channel device has VGS > 0, VDS > 0 and ID > 0 here, and a
// reverse-biased bulk has VBS ≤ 0 for both types.
//
// GM, GDS and CGG are NaN where the file has no such column.
type Point struct {
	VGS, VDS, VBS float64 // V, polarity-normalized
	ID            float64 // A, into the drain, polarity-normalized
	W, L          float64 // m
	TempC         float64 // °C
	GM, GDS       float64 // S, ∂ID/∂VGS and ∂ID/∂VDS (NaN when absent)
	CGG           float64 // F, total gate capacitance (NaN when absent)
	Line          int     // line of the file the point came from (1-based)
}

// Table is a whole characterization file.
type Table struct {
	Pol    device.Polarity
	Points []Point

	// Which optional columns the file had.
	HasGM, HasGDS, HasCGG bool

	// Fingerprint identifies the file's bytes (see the function
	// Fingerprint): a process fitted to the table records it, so that the
	// source data of a fit can be recognised later.
	Fingerprint string
}
