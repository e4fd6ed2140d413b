package parts

import (
	"math"

	"matchbench/rfmath"
)

// Compile-time checks that the models are parts.
var (
	_ rfmath.Part = Inductor{}
	_ rfmath.Part = Capacitor{}
	_ rfmath.Part = Resistor{}
	_ rfmath.Part = IdealInductor{}
	_ rfmath.Part = IdealCapacitor{}
	_ rfmath.Part = IdealResistor{}

	_ rfmath.Lumper = Inductor{}
	_ rfmath.Lumper = Capacitor{}
	_ rfmath.Lumper = Resistor{}
	_ rfmath.Lumper = IdealInductor{}
	_ rfmath.Lumper = IdealCapacitor{}
	_ rfmath.Lumper = IdealResistor{}
)

// Law says how the series resistance of a part grows with frequency; it
// is [rfmath.Law].
type Law = rfmath.Law

// The laws of [rfmath.Law].
const (
	// SqrtF: R ∝ √f, the skin effect in the winding, so Q ∝ √f below the
	// self-resonance. The zero value, and the default.
	SqrtF = rfmath.SqrtF
	// Flat: R constant, so an inductor's Q ∝ f.
	Flat = rfmath.Flat
	// Linear: R ∝ f, so an inductor's Q is constant.
	Linear = rfmath.Linear
	// Inverse: R ∝ 1/f, so a capacitor's Q is constant.
	Inverse = rfmath.Inverse
)

// Inductor is a chip inductor: an inductance LH in series with a loss
// resistance R(f), the pair shunted by the capacitance Cp that makes it
// resonate at its self-resonant frequency:
//
//	Z = (R + jωL) ∥ 1/(jωCp)
//	R(fRef) = 2π·fRef·L/Q,   R(f) = R(fRef)·(f/fRef)^a   (a = ½, 0 or 1 by RLaw)
//	Cp = 1/((2π·SRF)²·L)
//
// Q is the quality factor of the series branch L–R alone at QRefHz. A data
// sheet's Q is measured on the whole part, whose parallel capacitance makes
// the apparent inductance, and the Q, fall as f nears the SRF; well below
// the SRF the two agree (at f = SRF/3 the apparent L is 1/(1 − 1/9) = 1.125
// times L). A Q or QRefHz of zero (or less) makes the inductor lossless; an
// SRFHz of zero (or less) leaves out Cp. The zero Law is [SqrtF].
type Inductor struct {
	LH     float64 // inductance in henries
	Q      float64 // Q of the series branch at QRefHz; 0 means lossless
	QRefHz float64 // frequency at which Q holds
	SRFHz  float64 // self-resonant frequency; 0 means none
	RLaw   Law     // growth of the series resistance with frequency
}

// SeriesROhm returns the loss resistance R(f) in ohms at fHz.
func (p Inductor) SeriesROhm(fHz float64) float64 { return p.Lumped().SeriesROhm(fHz) }

// ParallelCF returns the parallel capacitance Cp in farads that sets the
// self-resonance: 1/((2π·SRF)²·L), or 0 without an SRF.
func (p Inductor) ParallelCF() float64 {
	if !(p.SRFHz > 0) {
		return 0
	}
	w := 2 * math.Pi * p.SRFHz
	return 1 / (w * w * p.LH)
}

// Lumped returns the inductor's closed form: L in series with R(f), the
// pair shunted by Cp.
func (p Inductor) Lumped() rfmath.Lumped {
	f := rfmath.Lumped{LH: p.LH, ParallelCF: p.ParallelCF(), RLaw: p.RLaw}
	if p.Q > 0 && p.QRefHz > 0 {
		f.ROhm, f.RefHz = 2*math.Pi*p.QRefHz*p.LH/p.Q, p.QRefHz
	}
	return f
}

// ImpedanceAt returns the impedance in ohms at fHz (see [Inductor]).
func (p Inductor) ImpedanceAt(fHz float64) complex128 { return p.Lumped().ImpedanceAt(fHz) }

// Capacitor is a chip capacitor: a capacitance CF in series with its
// equivalent series resistance (ESR) and the series inductance Ls that makes
// it resonate at its self-resonant frequency:
//
//	Z = ESR + jωLs + 1/(jωC)
//	Ls = 1/((2π·SRF)²·C)
//
// The ESR is ESROhm when that is positive; otherwise it is set from Q at
// QRefHz as ESR = 1/(2π·QRefHz·C·Q), the Q of the capacitance alone. Either
// way the ESR is held constant with frequency, a fair description of a C0G
// (NP0) multilayer part over an octave or two of the GHz range (common
// practice; its ESR rises slowly with f), so Q falls as 1/f, unless
// ConstantQ is set: then the ESR falls as 1/f so that the capacitance's Q
// is the same at every frequency (a what-if model, not a real part). Zero
// ESR and Q make it lossless; an SRFHz of zero (or less) leaves out Ls.
type Capacitor struct {
	CF        float64 // capacitance in farads
	ESROhm    float64 // series resistance in ohms; 0: from Q, or lossless
	Q         float64 // Q at QRefHz, used when ESROhm is 0
	QRefHz    float64 // frequency at which Q holds
	SRFHz     float64 // self-resonant frequency; 0 means none
	ConstantQ bool    // ESR ∝ 1/f from QRefHz, so Q holds at every frequency
}

// ESR returns the series resistance in ohms.
func (p Capacitor) ESR() float64 {
	if p.ESROhm > 0 {
		return p.ESROhm
	}
	if p.Q > 0 && p.QRefHz > 0 {
		return 1 / (2 * math.Pi * p.QRefHz * p.CF * p.Q)
	}
	return 0
}

// SeriesLH returns the series inductance Ls in henries that sets the
// self-resonance: 1/((2π·SRF)²·C), or 0 without an SRF.
func (p Capacitor) SeriesLH() float64 {
	if !(p.SRFHz > 0) {
		return 0
	}
	w := 2 * math.Pi * p.SRFHz
	return 1 / (w * w * p.CF)
}

// Lumped returns the capacitor's closed form: C in series with Ls and the
// ESR.
func (p Capacitor) Lumped() rfmath.Lumped {
	f := rfmath.Lumped{CF: p.CF, LH: p.SeriesLH(), ROhm: p.ESR(), RLaw: rfmath.Flat}
	if p.ConstantQ && p.QRefHz > 0 {
		f.RefHz, f.RLaw = p.QRefHz, rfmath.Inverse
	}
	return f
}

// ImpedanceAt returns the impedance in ohms at fHz (see [Capacitor]).
func (p Capacitor) ImpedanceAt(fHz float64) complex128 { return p.Lumped().ImpedanceAt(fHz) }

// Resistor is a chip resistor with its series inductance (ESL):
//
//	Z = R + jω·ESL
type Resistor struct {
	ROhm float64 // resistance in ohms
	ESLH float64 // series inductance in henries
}

// Lumped returns the resistor's closed form.
func (p Resistor) Lumped() rfmath.Lumped {
	return rfmath.Lumped{ROhm: p.ROhm, LH: p.ESLH, RLaw: rfmath.Flat}
}

// ImpedanceAt returns the impedance in ohms at fHz.
func (p Resistor) ImpedanceAt(fHz float64) complex128 { return p.Lumped().ImpedanceAt(fHz) }

// IdealInductor is a lossless inductance without parasitics: Z = jωL.
type IdealInductor struct{ LH float64 }

// Lumped returns the closed form, L alone.
func (p IdealInductor) Lumped() rfmath.Lumped { return rfmath.Lumped{LH: p.LH} }

// ImpedanceAt returns jωL in ohms.
func (p IdealInductor) ImpedanceAt(fHz float64) complex128 {
	return rfmath.ImpedanceOfL(p.LH, fHz)
}

// IdealCapacitor is a lossless capacitance without parasitics:
// Z = 1/(jωC).
type IdealCapacitor struct{ CF float64 }

// Lumped returns the closed form, C alone.
func (p IdealCapacitor) Lumped() rfmath.Lumped { return rfmath.Lumped{CF: p.CF} }

// ImpedanceAt returns 1/(jωC) in ohms.
func (p IdealCapacitor) ImpedanceAt(fHz float64) complex128 {
	return rfmath.ImpedanceOfC(p.CF, fHz)
}

// IdealResistor is a resistance without parasitics.
type IdealResistor struct{ ROhm float64 }

// Lumped returns the closed form, R alone.
func (p IdealResistor) Lumped() rfmath.Lumped { return rfmath.Lumped{ROhm: p.ROhm, RLaw: rfmath.Flat} }

// ImpedanceAt returns R in ohms.
func (p IdealResistor) ImpedanceAt(float64) complex128 {
	return complex(p.ROhm, 0)
}
