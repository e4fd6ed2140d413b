// Package deembed moves the reference plane of a measured sweep: it removes
// a length of line (port extension), fits that extension to a measurement of
// an open or shorted end, removes a measured 2-port fixture, and re-expresses
// a sweep against another reference impedance.
//
// # Conventions
//
// The conventions are those of package rfmath: SI units, frequencies in
// hertz, time dependence e^(+jωt), S-parameters against real port
// references held in [rfmath.Sweep]. Every function here returns a new
// sweep or slice; the sweep it was given is never modified, so the raw
// measurement stays as it was received.
//
// A delay is the one-way delay of the line being removed, in seconds. A loss
// is the one-way loss of that line, in dB, positive for a lossy line.
// Removing a matched line of one-way delay τ and one-way loss A dB
// multiplies a reflection term by
//
//	e^(+j·2π·f·2τ) · 10^(2A/20)
//
// and a transmission term by e^(+j·2π·f·τ)·10^(A/20) (REFERENCE-CHECKS §10,
// common practice). A negative delay or loss adds line instead.
//
// # Fixtures
//
// A fixture is a 2-port between an analyser port and the device, given as a
// sweep of its S-parameters. [Remove] cascades the inverse of each fixture
// with the measurement. A fixture is used only between its first and last
// frequency; it is never extrapolated, and a sweep that reaches outside it is
// refused with a [*CoverageError] that names the frequencies.
//
// # References
//
// [Renormalize] converts to other real references through
// [rfmath.Renormalize]. [ComplexRefTo] shows a reflection against a complex
// source impedance Zs with the power-wave definition
//
//	Γ' = (Z − Zs*)/(Z + Zs)
//
// (K. Kurokawa, "Power waves and the scattering matrix", IEEE Trans. MTT-13,
// 1965), under which Γ' = 0 is a conjugate match and 1 − |Γ'|² is the
// fraction of the source's available power that the load takes.
package deembed
