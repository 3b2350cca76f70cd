// Package fastmath holds the few elementary functions of the engine's inner
// loops (the sweep's logarithms and phase, the transistor model's
// exponentials) in a form that is cheap under WebAssembly.
//
// Each function is the portable algorithm of Go's math package (from
// FreeBSD's msun and Cephes) written as one function without inner calls:
// the exponent is split off and put back with bit operations instead of
// Frexp and Ldexp, and Atan2 evaluates its rational approximation in place.
// Go's js/wasm backend intrinsifies none of these functions, and every call
// there costs a spill to its own stack, so the same arithmetic runs in
// roughly half the time. Special inputs (zero, subnormal, infinite, NaN,
// and results that would leave the normal range) go to the math package.
//
// Where Go's math package uses the same portable code (every function on
// js/wasm, Atan2 on every architecture) the results are identical to the
// bit; where it uses assembly (Exp and Log on amd64 and arm64, …) they
// agree within one unit in the last place.
package fastmath
