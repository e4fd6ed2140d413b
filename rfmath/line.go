package rfmath

import (
	"math"
	"math/cmplx"
)

// SpeedOfLight is the speed of light in vacuum in m/s (exact by the SI
// definition of the metre).
const SpeedOfLight = 299792458

// nepersPerDB converts an attenuation in dB to nepers: 1 Np = 20/ln 10 dB.
const nepersPerDB = math.Ln10 / 20

// Line is a uniform TEM transmission line, such as a coaxial cable.
//
// The attenuation is LossDBPerM at LossRefHz and scales with √f, as the
// conductor (skin-effect) loss of a cable does; a LossRefHz of zero or less
// makes it independent of frequency. The characteristic impedance stays the
// real Z0Ohm at every frequency (the low-loss approximation). A
// VelocityFactor of zero is taken as 1 (air). Z0Ohm must be positive.
type Line struct {
	Z0Ohm          float64 // characteristic impedance in ohms
	LengthM        float64 // physical length in metres
	VelocityFactor float64 // phase velocity / c, in (0, 1]; 0 means 1
	LossDBPerM     float64 // attenuation in dB/m at LossRefHz
	LossRefHz      float64 // frequency at which LossDBPerM holds
}

// LineFromDegrees returns a lossless line of characteristic impedance z0Ohm
// that is deg electrical degrees long at atHz, with velocity factor vf
// (0 means 1): LengthM = (deg/360)·vf·c/atHz. A 90° line is a quarter
// wavelength.
func LineFromDegrees(z0Ohm, deg, atHz, vf float64) Line {
	l := Line{Z0Ohm: z0Ohm, VelocityFactor: vf}
	l.LengthM = deg / 360 * l.vf() * SpeedOfLight / atHz
	return l
}

func (l Line) vf() float64 {
	if l.VelocityFactor == 0 {
		return 1
	}
	return l.VelocityFactor
}

// DelayS returns the one-way delay of the line in seconds,
// LengthM/(VelocityFactor·c).
func (l Line) DelayS() float64 {
	return l.LengthM / (l.vf() * SpeedOfLight)
}

// ElectricalDeg returns the electrical length of the line at fHz in
// degrees, β·l = 360°·f·DelayS.
func (l Line) ElectricalDeg(fHz float64) float64 {
	return 360 * fHz * l.DelayS()
}

// AlphaNpPerM returns the attenuation constant in nepers per metre at fHz.
func (l Line) AlphaNpPerM(fHz float64) float64 {
	a := l.LossDBPerM * nepersPerDB
	if l.LossRefHz > 0 {
		a *= math.Sqrt(fHz / l.LossRefHz)
	}
	return a
}

// LossDB returns the one-way attenuation of the whole line at fHz in dB.
func (l Line) LossDB(fHz float64) float64 {
	return l.AlphaNpPerM(fHz) * l.LengthM / nepersPerDB
}

// ABCD returns the ABCD matrix of the line at fHz. With γ·l = α·l + jβ·l
// (Pozar, Microwave Engineering, Table 4.1, from memory):
//
//	⎡cosh γl       Z0·sinh γl⎤
//	⎣sinh γl / Z0  cosh γl   ⎦
//
// For a lossless line cosh γl = cos βl and sinh γl = j·sin βl exactly, so
// a quarter-wave line is [0, jZ0; j/Z0, 0] up to the rounding of cos(π/2).
// ABCD implements [Element]: a line in a [Ladder] is in series between its
// neighbours.
func (l Line) ABCD(fHz float64) ABCD {
	al := l.AlphaNpPerM(fHz) * l.LengthM
	bl := 2 * math.Pi * fHz * l.DelayS()
	ch, sh := coshSinh(al, bl)
	z0 := complex(l.Z0Ohm, 0)
	return ABCD{ch, z0 * sh, sh / z0, ch}
}

// InputImpedance returns the impedance in ohms at the input of the line at
// fHz when port 2 is loaded with zLoad (ohms; cmplx.Inf() for an open).
func (l Line) InputImpedance(zLoad complex128, fHz float64) complex128 {
	return l.ABCD(fHz).InputImpedance(zLoad)
}

// coshSinh returns cosh(a + jb) and sinh(a + jb).
func coshSinh(a, b float64) (ch, sh complex128) {
	s, c := math.Sincos(b)
	ca, sa := math.Cosh(a), math.Sinh(a)
	return complex(ca*c, sa*s), complex(sa*c, ca*s)
}

// LineInputImpedance returns the input impedance in ohms of a lossless line
// of characteristic impedance z0 (ohms) and electrical length betaLRad
// (β·l in radians) terminated in zLoad (ohms):
//
//	Zin = Z0·(ZL·cos βl + j·Z0·sin βl)/(Z0·cos βl + j·ZL·sin βl)
//
// which is the textbook Z0·(ZL + jZ0·tan βl)/(Z0 + jZL·tan βl) (Pozar,
// Microwave Engineering, Section 2.3, from memory; REFERENCE-CHECKS §4)
// multiplied through by cos βl, so that a quarter-wave line (βl = π/2) gives
// Z0²/ZL without an infinite tangent. Special cases are:
//
//	zLoad infinite (an open): Zin = −j·Z0·cot βl
//	a zero denominator (a short at λ/4): Zin = cmplx.Inf()
func LineInputImpedance(zLoad, z0 complex128, betaLRad float64) complex128 {
	return LossyLineInputImpedance(zLoad, z0, 0, betaLRad)
}

// LossyLineInputImpedance returns the input impedance in ohms of a line of
// characteristic impedance z0 (ohms), total attenuation alphaLNp (α·l in
// nepers; 1 Np ≈ 8.686 dB) and electrical length betaLRad (β·l in radians)
// terminated in zLoad (ohms):
//
//	Zin = Z0·(ZL·cosh γl + Z0·sinh γl)/(Z0·cosh γl + ZL·sinh γl),  γl = αl + jβl
//
// the form Z0·(ZL + Z0·tanh γl)/(Z0 + ZL·tanh γl) (Pozar, Section 2.7, from
// memory) multiplied through by cosh γl. The special cases of
// [LineInputImpedance] apply.
func LossyLineInputImpedance(zLoad, z0 complex128, alphaLNp, betaLRad float64) complex128 {
	ch, sh := coshSinh(alphaLNp, betaLRad)
	var n, d complex128
	if cmplx.IsInf(zLoad) {
		n, d = z0*ch, sh
	} else {
		n, d = z0*(zLoad*ch+z0*sh), z0*ch+zLoad*sh
	}
	if d == 0 {
		return cmplx.Inf()
	}
	return n / d
}

// OpenStubAdmittance returns the input admittance in siemens of a lossless
// open-circuited stub of characteristic impedance z0Ohm and electrical
// length betaLRad (REFERENCE-CHECKS §8):
//
//	Y = j·Y0·tan βl
//
// computed as j·Y0·sin βl/cos βl; at βl = π/2 it is very large (cos(π/2)
// rounds to 6e-17, not 0).
func OpenStubAdmittance(z0Ohm, betaLRad float64) complex128 {
	s, c := math.Sincos(betaLRad)
	return complex(0, s/(c*z0Ohm))
}

// ShortStubAdmittance returns the input admittance in siemens of a lossless
// short-circuited stub of characteristic impedance z0Ohm and electrical
// length betaLRad (REFERENCE-CHECKS §8):
//
//	Y = −j·Y0·cot βl
//
// A stub of zero length is a short: the imaginary part is then −Inf.
func ShortStubAdmittance(z0Ohm, betaLRad float64) complex128 {
	s, c := math.Sincos(betaLRad)
	return complex(0, -c/(s*z0Ohm))
}
