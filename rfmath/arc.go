package rfmath

import (
	"math"
	"math/cmplx"
)

// ValueAlongArc returns the value (henries or farads) of a part of kind k
// (series or shunt L or C)
// that moves the point Γb (the reflection seen before the part, in a real
// reference z0Ohm, at fHz) along its circle of constant resistance (series
// parts) or conductance (shunt parts) to the point nearest target, and
// reports whether the kind can be placed this way.
//
// The part adds a reactance X = Im(Zt) − Im(Zb) in series, or a
// susceptance B = Im(Yt) − Im(Yb) in shunt, where Zt, Yt are the impedance
// and admittance at target: the point of the circle with the target's
// reactance (or susceptance). That is the target's projection along its arc
// of constant reactance, which is what a pointer dragged near the circle
// means. A reactance of the wrong sign for the kind (an inductor cannot add
// negative reactance) gives the smallest value that moves the point by
// 10⁻⁶·z0, i.e. the part at its lower end of travel; current is returned
// unchanged when target is not a finite point.
func ValueAlongArc(k PartKind, gb, target complex128, z0Ohm, fHz, current float64) (float64, bool) {
	w := 2 * math.Pi * fHz
	z0 := complex(z0Ohm, 0)
	if cmplx.IsNaN(target) || cmplx.IsInf(target) || cmplx.Abs(target) >= 1 {
		if cmplx.Abs(target) >= 1 {
			target = target / complex(cmplx.Abs(target)*(1+1e-9), 0)
		} else {
			return current, k.Reactive()
		}
	}
	tiny := 1e-6 * z0Ohm
	switch k {
	case PartSeriesL, PartSeriesC:
		x := imag(ZFromGamma(target, z0)) - imag(ZFromGamma(gb, z0))
		if k == PartSeriesL {
			return math.Max(x, tiny) / w, true
		}
		return 1 / (w * math.Max(-x, tiny)), true
	case PartShuntL, PartShuntC:
		b := imag(YFromGamma(target, z0)) - imag(YFromGamma(gb, z0))
		tinyB := 1e-6 / z0Ohm
		if k == PartShuntC {
			return math.Max(b, tinyB) / w, true
		}
		return 1 / (w * math.Max(-b, tinyB)), true
	}
	return current, false
}
