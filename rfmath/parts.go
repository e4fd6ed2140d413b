package rfmath

import "math"

// SeriesZ returns the ABCD matrix of the impedance z (ohms) in series
// between the two ports (Pozar, Microwave Engineering, Table 4.1, from
// memory):
//
//	⎡1  Z⎤
//	⎣0  1⎦
func SeriesZ(z complex128) ABCD {
	return ABCD{1, z, 0, 1}
}

// ShuntY returns the ABCD matrix of the admittance y (siemens) across the
// line between the two ports (Pozar, Table 4.1, from memory):
//
//	⎡1  0⎤
//	⎣Y  1⎦
func ShuntY(y complex128) ABCD {
	return ABCD{1, 0, y, 1}
}

// IdealTransformer returns the ABCD matrix of an ideal transformer with the
// turns ratio n = N1/N2 (port 1 : port 2), which shows a load Z at port 2 as
// n²·Z at port 1:
//
//	⎡n   0 ⎤
//	⎣0  1/n⎦
func IdealTransformer(n float64) ABCD {
	return ABCD{complex(n, 0), 0, 0, complex(1/n, 0)}
}

// ImpedanceOfL returns the impedance in ohms of an ideal inductance lH
// (henries) at fHz: Z = jωL, ω = 2π·fHz.
func ImpedanceOfL(lH, fHz float64) complex128 {
	return complex(0, ReactanceOfL(lH, fHz))
}

// ImpedanceOfC returns the impedance in ohms of an ideal capacitance cF
// (farads) at fHz: Z = −j/(ωC), ω = 2π·fHz. A zero capacitance, or zero
// frequency, gives an imaginary part of −Inf (an open).
func ImpedanceOfC(cF, fHz float64) complex128 {
	return complex(0, ReactanceOfC(cF, fHz))
}

// AdmittanceOfL returns the admittance in siemens of an ideal inductance lH
// at fHz: Y = −j/(ωL). A zero inductance, or zero frequency, gives an
// imaginary part of −Inf (a short).
func AdmittanceOfL(lH, fHz float64) complex128 {
	return complex(0, -1/(2*math.Pi*fHz*lH))
}

// AdmittanceOfC returns the admittance in siemens of an ideal capacitance cF
// at fHz: Y = jωC.
func AdmittanceOfC(cF, fHz float64) complex128 {
	return complex(0, 2*math.Pi*fHz*cF)
}
