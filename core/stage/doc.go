// Package stage builds the single-transistor gain stages — common source,
// common gate and source follower, NMOS or PMOS, with a resistor, a
// complementary current-source or a diode-connected load — as circuits,
// biases them (by input level, by drain current, or by gm/ID at a given
// drain current), and writes the textbook hand estimates beside the exact
// small-signal figures.
package stage
