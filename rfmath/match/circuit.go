package match

import (
	"math"

	"matchbench/rfmath"
	"matchbench/rfmath/parts"
)

// Circuit returns the network with its parts made by the model m (nil
// means ideal parts), ready to be evaluated without allocation.
func (n Network) Circuit(m parts.Model) Circuit {
	if m == nil {
		m = parts.Ideal
	}
	c := Circuit{els: make([]element, len(n))}
	for i, p := range n {
		c.els[i] = compile(m.Part(p.Kind.Part(), p.Value), p.Kind.Shunt())
	}
	return c
}

// Circuit is a [Network] whose parts have been made by a model.
type Circuit struct {
	els []element
}

// Forms of element whose impedance is computed in closed form; any other
// part is asked for its ImpedanceAt.
const (
	formGeneric = iota
	formIdealL
	formIdealC
	formInductor
	formCapacitor
)

// element is a part with its model's constants taken out once, so that a
// sweep needs no interface call and, for a shunt part, computes its
// admittance directly (one division fewer).
type element struct {
	form  int
	shunt bool
	part  rfmath.Part
	// formIdealL, formInductor: l; formIdealC, formCapacitor: c.
	l, c float64
	// formInductor: R(f) = r0·f^(law exponent), parallel cp.
	r0, cp float64
	law    parts.Law
	// formCapacitor: series esr and ls.
	esr, ls float64
}

func compile(p rfmath.Part, shunt bool) element {
	e := element{shunt: shunt, part: p}
	switch q := p.(type) {
	case parts.IdealInductor:
		e.form, e.l = formIdealL, q.LH
	case parts.IdealCapacitor:
		e.form, e.c = formIdealC, q.CF
	case parts.Inductor:
		e.form, e.l, e.cp, e.law = formInductor, q.LH, q.ParallelCF(), q.RLaw
		// R(f) = R(fRef)·(f/fRef)^a = r0·f^a.
		if r := q.SeriesROhm(q.QRefHz); r > 0 {
			switch q.RLaw {
			case parts.Flat:
				e.r0 = r
			case parts.Linear:
				e.r0 = r / q.QRefHz
			default:
				e.r0 = r / math.Sqrt(q.QRefHz)
			}
		}
	case parts.Capacitor:
		e.form, e.c, e.esr, e.ls = formCapacitor, q.CF, q.ESR(), q.SeriesLH()
	}
	return e
}

// step returns the impedance (series) or admittance (shunt) of the element
// at fHz, ω = 2π·fHz.
func (e *element) step(fHz, w float64) complex128 {
	switch e.form {
	case formIdealL:
		if e.shunt {
			return complex(0, -1/(w*e.l))
		}
		return complex(0, w*e.l)
	case formIdealC:
		if e.shunt {
			return complex(0, w*e.c)
		}
		return complex(0, -1/(w*e.c))
	case formInductor:
		var r float64
		switch e.law {
		case parts.Flat:
			r = e.r0
		case parts.Linear:
			r = e.r0 * fHz
		default:
			r = e.r0 * math.Sqrt(fHz)
		}
		zs := complex(r, w*e.l)
		if e.shunt {
			return 1/zs + complex(0, w*e.cp)
		}
		if e.cp == 0 {
			return zs
		}
		return zs / (1 + complex(0, w*e.cp)*zs)
	case formCapacitor:
		z := complex(e.esr, w*e.ls-1/(w*e.c))
		if e.shunt {
			return 1 / z
		}
		return z
	}
	z := e.part.ImpedanceAt(fHz)
	if e.shunt {
		return 1 / z
	}
	return z
}

// GammaAt returns the reflection coefficient seen from the source at fHz,
// against the real reference z0 (ohms), with a load of reflection
// coefficient loadGamma against the same z0.
//
// It carries the voltage and current from the load toward the source, both
// scaled by the incident wave and with the current in units of 1/z0:
//
//	at the load     v = 1 + ΓL,  i = 1 − ΓL
//	series Z        v ← v + (Z/z0)·i
//	shunt Y = 1/Z   i ← i + (Y·z0)·v
//	at the source   Γin = (v − i)/(v + i)
//
// which is the ABCD cascade of the ladder applied to the load's (V, I)
// (see [rfmath.ABCD.InputGamma]). An open or short load needs no infinite
// number. It does not allocate.
func (c Circuit) GammaAt(fHz float64, loadGamma complex128, z0 float64) complex128 {
	v, i := 1+loadGamma, 1-loadGamma
	w := 2 * math.Pi * fHz
	g := 1 / z0
	for j := range c.els {
		e := &c.els[j]
		x := e.step(fHz, w)
		if e.shunt {
			i += complex(real(x)*z0, imag(x)*z0) * v
		} else {
			v += complex(real(x)*g, imag(x)*g) * i
		}
	}
	return (v - i) / (v + i)
}

// GammaTo fills dst with the reflection coefficient seen from the source at
// each frequency of freqHz, with the load's reflection coefficient
// loadGamma[k] at freqHz[k], all against the real reference z0, and returns
// dst. A nil dst is allocated; a dst or loadGamma whose length differs from
// freqHz panics. Given dst it does not allocate.
func (c Circuit) GammaTo(dst []complex128, freqHz []float64, loadGamma []complex128, z0 float64) []complex128 {
	if len(loadGamma) != len(freqHz) {
		panic(badLength)
	}
	if dst == nil {
		dst = make([]complex128, len(freqHz))
	} else if len(dst) != len(freqHz) {
		panic(badLength)
	}
	for k, f := range freqHz {
		dst[k] = c.GammaAt(f, loadGamma[k], z0)
	}
	return dst
}
