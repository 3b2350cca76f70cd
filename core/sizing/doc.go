// Package sizing searches for a design that meets the targets of its
// design aids (design.Targets): least gain, bandwidth and gain–bandwidth,
// most supply current, power and input noise, least output swing and
// saturation margin, by moving the inputs named in Aids.Vary (w, l, id, rd,
// rs, vin) inside Aids.Ranges.
//
// The search is deterministic and bounded: a Latin-hypercube stage with a
// fixed seed (Aids.Seed) over the variables, in logarithmic coordinates for
// w, l, id, rd and rs, then Nelder–Mead restarts from the
// best points on a smooth penalty of the logarithmic shortfall of every
// target, at most MaxEvaluations evaluations in all. It reports the found
// design, each target's value and margin, the targets that bind, and when no
// design meets every target the best compromise and the targets that
// conflict.
//
// Units are SI throughout (V, A, Ω, Hz, W, m).
package sizing
