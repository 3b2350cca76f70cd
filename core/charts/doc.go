// Package charts computes gm/ID design charts of a process from its device
// model (the method of Jespers & Murmann, Systematic Design of Analog CMOS
// Circuits, 2017): one device of given polarity, W, L and temperature in
// saturation (VDS = VDD/2, VSB = 0) swept over VGS, giving gm/ID against the
// inversion coefficient IC, the current density ID/W, the intrinsic gain
// gm·ro and the transit frequency fT against gm/ID, with the present design
// marked. Units are SI: V, A, A/m, S/A, Hz.
package charts
