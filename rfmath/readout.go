package rfmath

import (
	"math"
	"math/cmplx"
)

// Readout is everything an engineer reads off one point of a reflection
// trace: the impedance, the reflection coefficient and the scalar match
// figures derived from it.
type Readout struct {
	FreqHz         float64
	Gamma          complex128 // reflection coefficient in Z0Ohm
	Z0Ohm          float64
	Z              complex128 // ohms; cmplx.Inf() at Γ = 1
	Y              complex128 // siemens
	GammaMag       float64
	GammaDeg       float64
	ReturnLossDB   float64 // +Inf at a perfect match
	VSWR           float64 // +Inf at |Γ| = 1; NaN above (see VSWR)
	MismatchLossDB float64
	Q              float64    // |X|/R of the series model; +Inf at |Γ| = 1
	Equiv          Equivalent // the series-model reactance as an L or a C, or KindNone
	Warnings       []string   // e.g. "|Γ| > 1: active or noisy data"
}

// NewReadout computes the readout of reflection coefficient gamma, measured
// against a real reference of z0Ohm ohms, at fHz.
func NewReadout(fHz float64, gamma complex128, z0Ohm float64) Readout {
	z0 := complex(z0Ohm, 0)
	m := cmplx.Abs(gamma)
	r := Readout{
		FreqHz:         fHz,
		Gamma:          gamma,
		Z0Ohm:          z0Ohm,
		Z:              ZFromGamma(gamma, z0),
		Y:              YFromGamma(gamma, z0),
		GammaMag:       m,
		GammaDeg:       AngleDeg(gamma),
		ReturnLossDB:   ReturnLossDB(m),
		VSWR:           VSWR(m),
		MismatchLossDB: MismatchLossDB(m),
	}
	r.Equiv = SeriesEquivalent(r.Z, fHz)
	if !cmplx.IsInf(r.Z) {
		r.Q = Q(r.Z)
	} else {
		r.Q = math.Inf(1) // an open is lossless, as every point of |Γ| = 1
	}
	if m > 1 {
		r.Warnings = append(r.Warnings, "|Γ| > 1: the data show gain (an active device, or noise on a near-total reflection); VSWR and mismatch loss are undefined")
	}
	return r
}
