// Package rfmath holds the radio-frequency maths of matchbench: conversions
// between reflection coefficient, impedance and admittance, scalar match
// metrics, N-port network parameters, transmission lines, lumped parts,
// resonance and bandwidth search over a measured sweep.
//
// # Conventions
//
// Units are SI throughout and are spelled in the names where they could be
// mistaken: frequencies in hertz (fHz), impedances in ohms as complex128
// (R + jX), admittances in siemens, lengths in metres, angles in degrees
// unless a name says rad.
//
// Time dependence is e^(+jωt), so an inductor is Z = +jωL and a capacitor
// Z = −j/(ωC).
//
// The reflection coefficient against a reference impedance Z0 is
//
//	Γ = (Z − Z0*)/(Z + Z0)
//
// which for a real Z0 is the familiar (Z − Z0)/(Z + Z0). For a complex Z0
// this is the power-wave definition (K. Kurokawa, "Power waves and the
// scattering matrix", IEEE Trans. MTT-13, 1965), under which Γ = 0 means a
// conjugate match.
//
// Return loss is positive for a passive load: RL = −20·log10|Γ| dB.
// Mismatch loss is ML = −10·log10(1 − |Γ|²) dB. VSWR = (1 + |Γ|)/(1 − |Γ|).
//
// Functions that fill a slice take the destination first, in the manner of
// gonum/floats: a nil dst is allocated, a dst of the wrong length panics with
// an "rfmath:"-prefixed message. Data-dependent failures (a load that cannot
// be matched, a frequency outside a sweep) return errors.
//
// # Between measured points
//
// A sweep is interpolated linearly in the complex plane ([Lerp]) in its own
// reference resistances, and a sweep shown in other references is
// renormalised after interpolating, never before. [Reflection] holds one
// reflection parameter with that rule, and every figure of a reflection
// trace (readouts, band edges, the deepest point, zero crossings) comes from
// its methods, so that the figures agree with one another at every
// frequency.
package rfmath
