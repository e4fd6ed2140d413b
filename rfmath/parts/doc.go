// Package parts describes the parts a matching network is built from: the
// IEC 60063 preferred values they are sold in, and models of the real parts
// with their losses and parasitic elements.
//
// # Conventions
//
// Values are SI: henries, farads, ohms, hertz, volts, amperes. A part model
// implements [rfmath.Part], its impedance in ohms at a frequency, with the
// time dependence e^(+jωt) of package rfmath, so it can be placed in a
// [rfmath.Ladder] with [rfmath.Series] or [rfmath.Shunt].
//
// # Typical values
//
// The tables of typical Q, self-resonant frequency, tolerance and rating in
// this package ([Typical0402], [Typical0603], [InductorTolerance],
// [CapacitorTolerance]) are typical values FROM MEMORY of common catalogue
// parts, not any vendor's data. They are good enough to show how far a real
// part moves a design from the ideal one; for a product, take the values
// from the data sheet of the part that will be fitted.
package parts
