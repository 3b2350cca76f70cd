// Package circuit holds a small transistor circuit as an element list and
// analyses it: the DC operating point by modified nodal analysis with
// Newton–Raphson (step limiting, then gmin stepping, then source stepping as
// fallbacks), the linearized small-signal network at that point (conductance
// matrix G and capacitance matrix C), its frequency response, poles and zeros,
// and its noise.
//
// Node 0 is ground. Voltages are in volts, currents in amperes, conductances
// in siemens, capacitances in farads, frequencies in hertz.
//
// A circuit may carry servos: a voltage source whose value is not given but
// solved for, together with one extra equation (a transistor carries a target
// current, or a node sits at a target voltage). Servos let a stage be biased
// "by drain current" in a single Newton solve.
package circuit
