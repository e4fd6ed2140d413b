package rfmath

import "math"

// Law says how the series resistance of a lumped part grows with
// frequency.
type Law int

const (
	// SqrtF: R ∝ √f, the skin effect in a winding, so an inductor's Q grows
	// as √f. The zero value.
	SqrtF Law = iota
	// Flat: R constant with frequency.
	Flat
	// Linear: R ∝ f, so an inductor's Q = ωL/R is the same at every
	// frequency.
	Linear
	// Inverse: R ∝ 1/f, so a capacitor's Q = 1/(ωCR) is the same at every
	// frequency.
	Inverse
)

// Lumped is the closed form of every lumped two-terminal part matchbench
// models: a series branch of resistance R(f), inductance L and capacitance
// C, shunted by a capacitance Cp:
//
//	Z = (R(f) + jωL + 1/(jωC)) ∥ 1/(jωCp)
//	R(f) = ROhm·(f/RefHz)^a,  a = ½, 0, 1 or −1 by RLaw
//
// A CF of zero leaves the series capacitor out (a DC path); a ParallelCF
// of zero leaves Cp out; a RefHz of zero or less makes R flat. An ideal
// inductor is Lumped{LH: L}, an ideal capacitor Lumped{CF: C}, a resistor
// with its lead inductance Lumped{ROhm: R, LH: ESL, RLaw: Flat}.
//
// Part models implement [Lumper] by returning their Lumped form, so that
// the impedance of a part and its compiled form in a [Circuit] come from
// the same arithmetic.
type Lumped struct {
	LH         float64 // series inductance in henries
	CF         float64 // series capacitance in farads; 0 means none
	ROhm       float64 // series resistance at RefHz, in ohms
	RefHz      float64 // frequency at which ROhm holds
	RLaw       Law     // growth of R with frequency
	ParallelCF float64 // capacitance across the whole branch; 0 means none
}

// Lumper is a [Part] whose impedance has the closed form [Lumped].
type Lumper interface {
	Part
	Lumped() Lumped
}

// Compile-time check.
var _ Lumper = Lumped{}

// lawCoeff returns r0 such that R(f) = r0·g(f) with g(f) = √f, 1, f or
// 1/f by law.
func lawCoeff(r, refHz float64, law Law) float64 {
	if !(refHz > 0) {
		return r
	}
	switch law {
	case SqrtF:
		return r / math.Sqrt(refHz)
	case Linear:
		return r / refHz
	case Inverse:
		return r * refHz
	}
	return r
}

// lawR returns r0·g(f) (see lawCoeff).
func lawR(r0, fHz float64, law Law) float64 {
	switch law {
	case SqrtF:
		return r0 * math.Sqrt(fHz)
	case Linear:
		return r0 * fHz
	case Inverse:
		return r0 / fHz
	}
	return r0
}

// flatLaw returns the law R follows: Flat when no reference frequency is
// set.
func (p Lumped) flatLaw() Law {
	if !(p.RefHz > 0) {
		return Flat
	}
	return p.RLaw
}

// SeriesROhm returns the series resistance R(f) in ohms at fHz.
func (p Lumped) SeriesROhm(fHz float64) float64 {
	law := p.flatLaw()
	return lawR(lawCoeff(p.ROhm, p.RefHz, law), fHz, law)
}

// Lumped returns p itself.
func (p Lumped) Lumped() Lumped { return p }

// ImpedanceAt returns Z in ohms at fHz (see [Lumped]). A branch with no
// parts at all is a short, Z = 0.
func (p Lumped) ImpedanceAt(fHz float64) complex128 {
	var e lumpedForm
	e.set(p)
	return e.impedance(fHz, 2*math.Pi*fHz)
}

// AdmittanceAt returns Y = 1/Z in siemens at fHz, computed without forming
// Z where Cp is present (Y = 1/Zs + jωCp).
func (p Lumped) AdmittanceAt(fHz float64) complex128 {
	var e lumpedForm
	e.set(p)
	return e.admittance(fHz, 2*math.Pi*fHz)
}

// lumpedForm is a Lumped with its constants taken out once.
type lumpedForm struct {
	l, c, r0, cp float64
	law          Law
}

func (e *lumpedForm) set(p Lumped) {
	law := p.flatLaw()
	e.l, e.c, e.cp, e.law = p.LH, p.CF, p.ParallelCF, law
	e.r0 = lawCoeff(p.ROhm, p.RefHz, law)
}

// series returns the series branch R(f) + jωL + 1/(jωC), ω = 2π·fHz.
func (e *lumpedForm) series(fHz, w float64) complex128 {
	x := w * e.l
	if e.c != 0 {
		x -= 1 / (w * e.c)
	}
	return complex(lawR(e.r0, fHz, e.law), x)
}

func (e *lumpedForm) impedance(fHz, w float64) complex128 {
	zs := e.series(fHz, w)
	if e.cp == 0 {
		return zs
	}
	return zs / (1 + complex(0, w*e.cp)*zs)
}

func (e *lumpedForm) admittance(fHz, w float64) complex128 {
	y := recip(e.series(fHz, w))
	if e.cp == 0 {
		return y
	}
	return y + complex(0, w*e.cp)
}
