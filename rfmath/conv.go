package rfmath

import (
	"math"
	"math/cmplx"
)

// GammaFromZ returns the reflection coefficient of the impedance z (ohms)
// against the reference impedance z0 (ohms), with the power-wave definition
// (Kurokawa 1965; see the package documentation):
//
//	Γ = (Z − Z0*)/(Z + Z0)
//
// For a real z0 this is (Z − Z0)/(Z + Z0). Special cases are:
//
//	GammaFromZ(∞, z0) = 1   (an open; any infinite z, see [cmplx.IsInf])
//	GammaFromZ(0, R0) = −1  for a real R0 > 0
//	GammaFromZ(−Z0, Z0) = ∞ (no finite value; an active load)
func GammaFromZ(z, z0 complex128) complex128 {
	if cmplx.IsInf(z) {
		return 1
	}
	return (z - cmplx.Conj(z0)) / (z + z0)
}

// ZFromGamma returns the impedance in ohms whose reflection coefficient
// against z0 (ohms) is g; it inverts [GammaFromZ]:
//
//	Z = (Z0* + Γ·Z0)/(1 − Γ)
//
// Special cases are:
//
//	ZFromGamma(1, z0) = cmplx.Inf()
//	ZFromGamma(−1, R0) = 0  for a real R0
func ZFromGamma(g, z0 complex128) complex128 {
	if g == 1 {
		return cmplx.Inf()
	}
	return (cmplx.Conj(z0) + g*z0) / (1 - g)
}

// GammaFromY returns the reflection coefficient of the admittance y
// (siemens) against the reference impedance z0 (ohms). It equals
// GammaFromZ(1/y, z0) without forming 1/y:
//
//	Γ = (1 − Y·Z0*)/(1 + Y·Z0)
//
// Special cases are:
//
//	GammaFromY(0, z0) = 1          (an open)
//	GammaFromY(∞, z0) = −Z0*/Z0    (a short; −1 for a real Z0)
func GammaFromY(y, z0 complex128) complex128 {
	if cmplx.IsInf(y) {
		return -cmplx.Conj(z0) / z0
	}
	return (1 - y*cmplx.Conj(z0)) / (1 + y*z0)
}

// YFromGamma returns the admittance in siemens whose reflection coefficient
// against z0 (ohms) is g; it inverts [GammaFromY]:
//
//	Y = (1 − Γ)/(Z0* + Γ·Z0)
//
// Special cases are:
//
//	YFromGamma(−1, R0) = cmplx.Inf()  for a real R0 (a short)
//	YFromGamma(1, z0) = 0
func YFromGamma(g, z0 complex128) complex128 {
	d := cmplx.Conj(z0) + g*z0
	if d == 0 {
		return cmplx.Inf()
	}
	return (1 - g) / d
}

// Normalize returns z/z0: the impedance z (ohms) normalised to the real
// reference z0 (ohms), as read on a Smith chart. An admittance in siemens
// is normalised by multiplying by z0 instead.
func Normalize(z complex128, z0 float64) complex128 {
	return z / complex(z0, 0)
}

// VSWR returns the voltage standing-wave ratio for the reflection
// magnitude gammaMag:
//
//	VSWR = (1 + |Γ|)/(1 − |Γ|)
//
// Special cases are:
//
//	VSWR(0) = 1
//	VSWR(1) = +Inf
//	VSWR(|Γ| > 1) = NaN   (active or noisy data: undefined)
//	VSWR(|Γ| < 0) = NaN
//	VSWR(NaN) = NaN
func VSWR(gammaMag float64) float64 {
	switch {
	case gammaMag == 1:
		return math.Inf(1)
	case !(gammaMag >= 0 && gammaMag < 1):
		return math.NaN()
	}
	return (1 + gammaMag) / (1 - gammaMag)
}

// ReturnLossDB returns the return loss in dB for the reflection magnitude
// gammaMag, positive for a passive load:
//
//	RL = −20·log10|Γ|
//
// Special cases are:
//
//	ReturnLossDB(0) = +Inf
//	ReturnLossDB(1) = 0   (+0, never −0, so that it prints as 0.00)
//	ReturnLossDB(|Γ| > 1) < 0   (active or noisy data)
//	ReturnLossDB(|Γ| < 0) = NaN
func ReturnLossDB(gammaMag float64) float64 {
	return plusZero(-20 * math.Log10(gammaMag))
}

// plusZero returns v, or +0 if v is −0.
func plusZero(v float64) float64 {
	if v == 0 {
		return 0
	}
	return v
}

// MismatchLossDB returns the mismatch loss in dB for the reflection
// magnitude gammaMag: the ratio of the power a matched load would take to
// the power this load takes,
//
//	ML = −10·log10(1 − |Γ|²)
//
// Special cases are:
//
//	MismatchLossDB(0) = 0   (+0, never −0)
//	MismatchLossDB(1) = +Inf
//	MismatchLossDB(|Γ| > 1) = NaN   (active or noisy data: undefined)
func MismatchLossDB(gammaMag float64) float64 {
	if gammaMag < 0 {
		return math.NaN()
	}
	return plusZero(-10 * math.Log10(1-gammaMag*gammaMag))
}

// GammaMagFromVSWR returns |Γ| = (VSWR − 1)/(VSWR + 1). Special cases are:
//
//	GammaMagFromVSWR(1) = 0
//	GammaMagFromVSWR(+Inf) = 1
//	GammaMagFromVSWR(v < 1) = NaN
func GammaMagFromVSWR(vswr float64) float64 {
	switch {
	case math.IsInf(vswr, 1):
		return 1
	case !(vswr >= 1):
		return math.NaN()
	}
	return (vswr - 1) / (vswr + 1)
}

// GammaMagFromReturnLossDB returns |Γ| = 10^(−|RL|/20) for a return loss rl
// in dB.
//
// Return loss is positive by the convention of this package, but it is often
// written as a negative number (an "S11 of −14 dB"); both mean a reflection
// 14 dB below the incident wave, so the sign of rl is ignored. Data with
// |Γ| > 1 therefore cannot be entered as a return loss.
//
//	GammaMagFromReturnLossDB(±Inf) = 0
//	GammaMagFromReturnLossDB(0) = 1
func GammaMagFromReturnLossDB(rl float64) float64 {
	return math.Pow(10, -math.Abs(rl)/20)
}

// PowerDeliveredFraction returns the fraction of the incident power that a
// load of reflection magnitude gammaMag takes, 1 − |Γ|². It is negative for
// |Γ| > 1 (the load gives power back).
func PowerDeliveredFraction(gammaMag float64) float64 {
	return 1 - gammaMag*gammaMag
}

// AngleDeg returns the phase angle of c in degrees, in (−180, 180]: a
// negative real c is at 180° whatever the sign of its zero imaginary part.
func AngleDeg(c complex128) float64 {
	d := cmplx.Phase(c) * (180 / math.Pi)
	if d == -180 {
		return 180
	}
	return plusZero(d)
}

// Q returns the quality factor of the impedance z (ohms) as a series R + jX:
//
//	Q = |X|/R
//
// An impedance with R ≤ 0 has no finite Q (a lossless reactance, or an
// active load), so Q returns +Inf for it, including z = 0. Q(NaN) = NaN.
func Q(z complex128) float64 {
	r, x := real(z), imag(z)
	if r <= 0 {
		return math.Inf(1)
	}
	return math.Abs(x) / r
}

// Kinds of [Equivalent] element.
const (
	KindL    = "L"    // an inductor; Value in henries
	KindC    = "C"    // a capacitor; Value in farads
	KindNone = "none" // no single L or C: see [Equivalent]
)

// Equivalent is the single inductor or capacitor whose reactance (or
// susceptance) equals that of an impedance at one frequency.
type Equivalent struct {
	// Kind is KindL, KindC or KindNone. KindNone has Value 0 when the
	// reactance (or susceptance) is zero and no element is needed (a pure
	// resistance), and Value NaN when the model does not exist or has no
	// finite element: the series model of an open, the parallel model of a
	// short, a frequency that is not positive, or a NaN reactance.
	Kind string
	// Value is in henries for KindL and farads for KindC; 0 or NaN for
	// KindNone.
	Value float64
}

// SeriesEquivalent returns the element of the series model R + jX of z
// (ohms) at fHz, with ω = 2π·fHz (REFERENCE-CHECKS §9 R-4):
//
//	X > 0:  L = X/ω
//	X < 0:  C = −1/(ω·X)
//	X = 0:  KindNone and Value 0
//
// An infinite z (an open) has no series model: KindNone and Value NaN, as
// for a fHz that is not positive.
func SeriesEquivalent(z complex128, fHz float64) Equivalent {
	if cmplx.IsInf(z) {
		return Equivalent{KindNone, math.NaN()}
	}
	return equivalent(imag(z), fHz, false)
}

// ParallelEquivalent returns the element of the parallel model G + jB of
// Y = 1/z (z in ohms) at fHz, with ω = 2π·fHz:
//
//	B < 0:  L = −1/(ω·B)
//	B > 0:  C = B/ω
//	B = 0:  KindNone and Value 0
//
// A short (z = 0) has no parallel model: KindNone and Value NaN, as for a
// fHz that is not positive.
func ParallelEquivalent(z complex128, fHz float64) Equivalent {
	if z == 0 {
		return Equivalent{KindNone, math.NaN()}
	}
	return equivalent(imag(1/z), fHz, true)
}

// equivalent returns the element for the reactance v (or the susceptance v
// if shunt is true) at fHz.
func equivalent(v, fHz float64, shunt bool) Equivalent {
	if !(fHz > 0) || math.IsNaN(v) {
		return Equivalent{KindNone, math.NaN()}
	}
	w := 2 * math.Pi * fHz
	switch {
	case v == 0:
		return Equivalent{Kind: KindNone}
	case shunt && v < 0:
		return Equivalent{Kind: KindL, Value: -1 / (w * v)}
	case shunt:
		return Equivalent{Kind: KindC, Value: v / w}
	case v > 0:
		return Equivalent{Kind: KindL, Value: v / w}
	default:
		return Equivalent{Kind: KindC, Value: -1 / (w * v)}
	}
}

// ReactanceOfL returns the reactance in ohms of an inductance lH (henries)
// at fHz: X = 2π·f·L.
func ReactanceOfL(lH, fHz float64) float64 {
	return 2 * math.Pi * fHz * lH
}

// ReactanceOfC returns the reactance in ohms of a capacitance cF (farads)
// at fHz: X = −1/(2π·f·C), negative. ReactanceOfC(0, f) = −Inf (an open).
func ReactanceOfC(cF, fHz float64) float64 {
	return -1 / (2 * math.Pi * fHz * cF)
}
