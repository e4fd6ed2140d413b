package deembed

import (
	"fmt"
	"math"
	"math/cmplx"

	"matchbench/rfmath"
)

// Renormalize returns a new sweep holding s against the real port
// references z0 (ohms, one per port), converted point by point with
// [rfmath.Renormalize]. For one port this is (REFERENCE-CHECKS §11)
//
//	Γ' = (Γ − ρ)/(1 − ρ·Γ),  ρ = (Z0' − Z0)/(Z0' + Z0)
//
// so a 75 Ω load, Γ = 0.2 in 50 Ω, reads Γ' = 0 in 75 Ω. s is not
// modified. A reference that is not positive and finite returns an error
// wrapping [rfmath.ErrReference]; a z0 whose length is not s.Ports panics.
func Renormalize(s *rfmath.Sweep, z0 []float64) (*rfmath.Sweep, error) {
	if len(z0) != s.Ports {
		panic(badRefLen)
	}
	out := s.Clone()
	copy(out.Z0, z0)
	for k := range s.Len() {
		if _, err := rfmath.Renormalize(out.Matrix(k), s.Matrix(k), s.Ports, s.Z0, out.Z0); err != nil {
			return nil, fmt.Errorf("deembed: renormalising at %s: %w", fmtHz(s.FreqHz[k]), err)
		}
	}
	return out, nil
}

// RenormalizeAll returns a new sweep holding s against the real reference
// z0Ohm at every port; see [Renormalize].
func RenormalizeAll(s *rfmath.Sweep, z0Ohm float64) (*rfmath.Sweep, error) {
	z0 := make([]float64, s.Ports)
	for i := range z0 {
		z0[i] = z0Ohm
	}
	return Renormalize(s, z0)
}

// ComplexRefTo fills dst with the reflection coefficients gamma, given
// against the real reference z0Ohm, re-expressed against the complex
// reference zs (ohms) with the power-wave definition (Kurokawa 1965), and
// returns dst:
//
//	Γ' = (Z − Zs*)/(Z + Zs),  Z = Z0·(1 + Γ)/(1 − Γ)
//
// computed as (Z0·(1 + Γ) − Zs*·(1 − Γ))/(Z0·(1 + Γ) + Zs·(1 − Γ)) so that an
// open (Γ = 1) needs no infinite Z and gives Γ' = 1. With zs the output
// impedance of a source (a radio chip's datasheet value), Γ' = 0 is a
// conjugate match and 1 − |Γ'|² is the fraction of the source's available
// power delivered to the load. For a real zs this is the ordinary
// renormalisation.
//
// A nil dst is allocated; a dst whose length differs from gamma panics; dst
// may be gamma. It returns an error wrapping [ErrReference] if Re zs or
// z0Ohm is not positive and finite.
func ComplexRefTo(dst, gamma []complex128, z0Ohm float64, zs complex128) ([]complex128, error) {
	if dst == nil {
		dst = make([]complex128, len(gamma))
	} else if len(dst) != len(gamma) {
		panic(badLength)
	}
	if !(real(zs) > 0) || cmplx.IsInf(zs) || math.IsNaN(imag(zs)) {
		return dst, fmt.Errorf("%w: Zs = %v Ω", ErrReference, zs)
	}
	if !(z0Ohm > 0) || math.IsInf(z0Ohm, 1) {
		return dst, fmt.Errorf("%w: Z0 = %g Ω", ErrReference, z0Ohm)
	}
	z0 := complex(z0Ohm, 0)
	zc := cmplx.Conj(zs)
	for k, g := range gamma {
		p, m := z0*(1+g), 1-g
		dst[k] = (p - zc*m) / (p + zs*m)
	}
	return dst, nil
}
