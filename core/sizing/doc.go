// Package sizing searches for a design that meets the targets of its
// design aids (design.Targets): least gain, bandwidth and gain–bandwidth,
// most supply current, power and input noise, least output swing and
// saturation margin, by moving the inputs named in Aids.Vary (w, l, id, rd,
// rs, vin, and the load's lw, ll and a current-source load's vout) inside
// Aids.Ranges. The at-most targets named in Aids.Hard are never exceeded,
// not even by the best compromise; Aids.Objective (power, area, noise) is
// minimised once every target is met. The penalty is tiered so that the
// choice is lexicographic: hard targets, then the rest, then the objective.
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
