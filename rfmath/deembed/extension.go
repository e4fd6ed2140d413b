package deembed

import (
	"math"

	"matchbench/rfmath"
)

// Extension is a port extension: the matched line between a calibrated
// port and the reference plane that is wanted, described by its one-way
// delay and one-way loss. The zero value moves nothing.
//
// The one-way loss at f is
//
//	A(f) = LossDB·√(f/LossRefHz) + FlatLossDB   (LossRefHz > 0)
//	A(f) = LossDB + FlatLossDB                  (LossRefHz ≤ 0)
//
// the √f term being the conductor (skin-effect) loss of a cable and the
// flat term that of an adapter or a connector, as [rfmath.Line] models it.
type Extension struct {
	DelayS     float64 // one-way delay in seconds; negative adds line
	LossDB     float64 // one-way loss in dB at LossRefHz, scaling with √f
	LossRefHz  float64 // frequency at which LossDB holds
	FlatLossDB float64 // one-way loss in dB at every frequency
}

// FromLength returns the lossless extension of a line lengthM metres long
// with velocity factor vf (0 means 1, air): DelayS = lengthM/(vf·c).
// REFERENCE-CHECKS §10: 10 cm at VF 0.66 is 0.50540 ns.
func FromLength(lengthM, vf float64) Extension {
	return FromLine(rfmath.Line{LengthM: lengthM, VelocityFactor: vf})
}

// FromLine returns the extension that removes the line l: its delay, and its
// loss LossDBPerM·LengthM at LossRefHz. The characteristic impedance of l is
// ignored; an extension assumes a line matched to the reference.
func FromLine(l rfmath.Line) Extension {
	return Extension{DelayS: l.DelayS(), LossDB: l.LossDBPerM * l.LengthM, LossRefHz: l.LossRefHz}
}

// Neg returns the extension that undoes e: it adds the line that e removes.
func (e Extension) Neg() Extension {
	return Extension{DelayS: -e.DelayS, LossDB: -e.LossDB, LossRefHz: e.LossRefHz, FlatLossDB: -e.FlatLossDB}
}

// OneWayLossDB returns the one-way loss A(f) in dB at fHz.
func (e Extension) OneWayLossDB(fHz float64) float64 {
	a := e.LossDB
	if e.LossRefHz > 0 {
		a *= math.Sqrt(fHz / e.LossRefHz)
	}
	return a + e.FlatLossDB
}

// Transmission returns the factor by which removing the extension
// multiplies a transmission term at fHz:
//
//	t(f) = e^(+j·2π·f·τ) · 10^(A(f)/20)
func (e Extension) Transmission(fHz float64) complex128 {
	mag := math.Pow(10, e.OneWayLossDB(fHz)/20)
	s, c := math.Sincos(2 * math.Pi * fHz * e.DelayS)
	return complex(mag*c, mag*s)
}

// Reflection returns the factor by which removing the extension multiplies a
// reflection term at fHz, t(f)²:
//
//	e^(+j·2π·f·2τ) · 10^(2·A(f)/20)
func (e Extension) Reflection(fHz float64) complex128 {
	mag := math.Pow(10, e.OneWayLossDB(fHz)/10)
	s, c := math.Sincos(4 * math.Pi * fHz * e.DelayS)
	return complex(mag*c, mag*s)
}

// GammaTo fills dst with the reflection coefficients gamma, measured at
// freqHz, seen at the plane beyond the extension, and returns dst. A nil dst
// is allocated; a dst or gamma whose length differs from freqHz panics. dst
// may be gamma.
func (e Extension) GammaTo(dst, gamma []complex128, freqHz []float64) []complex128 {
	if len(gamma) != len(freqHz) {
		panic(badGammaF)
	}
	if dst == nil {
		dst = make([]complex128, len(gamma))
	} else if len(dst) != len(gamma) {
		panic(badLength)
	}
	for k, f := range freqHz {
		dst[k] = gamma[k] * e.Reflection(f)
	}
	return dst
}

// Extend returns a new sweep with the extension ext[p] removed at port p+1
// of s:
//
//	S'ᵢⱼ = Sᵢⱼ · tᵢ(f) · tⱼ(f)
//
// with tₚ the [Extension.Transmission] of ext[p]. A zero Extension leaves
// its port where it was. s is not modified. An ext whose length is not
// s.Ports panics.
func Extend(s *rfmath.Sweep, ext []Extension) *rfmath.Sweep {
	if len(ext) != s.Ports {
		panic(badExtLen)
	}
	out := s.Clone()
	p := s.Ports
	var stack [8]complex128
	t := stack[:0]
	if p > len(stack) {
		t = make([]complex128, 0, p)
	}
	t = t[:p]
	for k, f := range s.FreqHz {
		for i := range p {
			if ext[i] == (Extension{}) {
				t[i] = 1
			} else {
				t[i] = ext[i].Transmission(f)
			}
		}
		m := out.Matrix(k)
		for i := range p {
			for j := range p {
				m[i*p+j] *= t[i] * t[j]
			}
		}
	}
	return out
}

// ExtendAll returns a new sweep with the same extension e removed at every
// port of s; see [Extend].
func ExtendAll(s *rfmath.Sweep, e Extension) *rfmath.Sweep {
	ext := make([]Extension, s.Ports)
	for i := range ext {
		ext[i] = e
	}
	return Extend(s, ext)
}
