// Package dense is small dense linear algebra for the circuit solver: LU
// factorizations with partial pivoting of real (LU) and complex (CLU)
// square matrices, and the finite roots of a matrix pencil G + s·C
// (PencilRoots).
//
// Matrices are row-major slices of length n·n, with n at most a dozen or so.
// LU and CLU own their workspace: after the first Factorize of a given order
// n, Factorize, Solve, SolveTrans and RCond allocate nothing, so one value can
// be reused for every frequency point of a sweep.
//
// Factorize reports a matrix as singular only when a pivot is exactly zero
// (or so small that its reciprocal would overflow) and rejects non-finite
// entries; nearly singular matrices are factored, and RCond gives a cheap
// estimate of the reciprocal 1-norm condition number so that callers can
// decide how far to trust a solution.
//
// Units are the caller's: the package does arithmetic only. PencilRoots
// returns s in the units of G/C, which is rad/s for G in siemens and C in
// farads.
package dense
