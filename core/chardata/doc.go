// Package chardata reads a transistor's characterization table: the drain
// current of one device type swept over its terminal voltages (and often
// over several lengths and widths), as a user's own simulator or probe
// station writes it, so that the model can be fitted to it.
//
// The file is a CSV table with a header row; comma, semicolon or tab
// separated; lines that start with '#' are comments. Read checks every cell
// and names the line and the column of the first thing wrong. A Table holds
// the points in the n-channel sense whatever the device (see Point).
package chardata
