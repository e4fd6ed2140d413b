package rfmath

import "math"

// Circuit is a [Ladder] compiled for evaluation at many frequencies: each
// series or shunt part whose model has a closed form ([Lumper], and the
// ideal SeriesL … ShuntR elements) has its constants taken out once, so a
// sweep needs neither interface calls nor matrix products. Other elements
// (lines, stubs, transformers, parts without a closed form) keep their own
// ABCD or impedance. Its arithmetic carries the voltage and current from
// the load toward the source, both scaled by the incident wave at the load
// and with the current in units of 1/z0:
//
//	at the load     v = 1 + ΓL,  i = 1 − ΓL
//	series Z        v ← v + (Z/z0)·i
//	shunt Y         i ← i + (Y·z0)·v
//	other [A B;C D] v ← A·v + (B/z0)·i,  i ← (C·z0)·v + D·i
//	at the source   Γin = (v − i)/(v + i)
//
// which is the ABCD cascade of the ladder applied to the load's (V, I) (see
// [ABCD.InputGamma]); an open or short load needs no infinite number. In
// the same units the real power flowing toward the load at any plane is
// Re(v·i*) and the power the source makes available is |v + i|²/4 (the
// incident power of a source matched to z0), so the power accounting of
// [Circuit.BalanceTo] comes from the same walk.
//
// The zero Circuit is a through connection. A Circuit is read-only once
// made and safe for concurrent use.
type Circuit struct {
	els []circuitElement
}

// Forms of compiled element.
const (
	formLumped  = iota // closed form
	formPart           // a Part without closed form: its ImpedanceAt
	formGeneric        // any other Element: its ABCD
)

type circuitElement struct {
	form  int
	shunt bool
	lumpedForm
	part     Part
	el       Element
	lossless bool // a generic element known to dissipate nothing
}

// Circuit returns the ladder compiled (see [Circuit]).
func (l Ladder) Circuit() Circuit {
	c := Circuit{els: make([]circuitElement, len(l))}
	for j, e := range l {
		c.els[j] = compileElement(e)
	}
	return c
}

func compileElement(e Element) circuitElement {
	var ce circuitElement
	lumped := func(p Lumped, shunt bool) {
		ce.form, ce.shunt = formLumped, shunt
		ce.lumpedForm.set(p)
	}
	switch e := e.(type) {
	case SeriesL:
		lumped(Lumped{LH: e.LH}, false)
	case SeriesC:
		lumped(Lumped{CF: e.CF}, false)
	case SeriesR:
		lumped(Lumped{ROhm: e.ROhm}, false)
	case ShuntL:
		lumped(Lumped{LH: e.LH}, true)
	case ShuntC:
		lumped(Lumped{CF: e.CF}, true)
	case ShuntR:
		lumped(Lumped{ROhm: e.ROhm}, true)
	case Series:
		if lp, ok := e.Part.(Lumper); ok {
			lumped(lp.Lumped(), false)
		} else {
			ce.form, ce.part = formPart, e.Part
		}
	case Shunt:
		if lp, ok := e.Part.(Lumper); ok {
			lumped(lp.Lumped(), true)
		} else {
			ce.form, ce.shunt, ce.part = formPart, true, e.Part
		}
	case Transformer:
		ce.form, ce.el, ce.lossless = formGeneric, e, true
	case Line:
		ce.form, ce.el, ce.lossless = formGeneric, e, e.LossDBPerM == 0
	case ShuntStub:
		ce.form, ce.el, ce.lossless = formGeneric, e, e.Line.LossDBPerM == 0
	default:
		ce.form, ce.el = formGeneric, e
	}
	return ce
}

// Len returns the number of elements.
func (c Circuit) Len() int { return len(c.els) }

// Prefix returns the circuit of the first n elements, those nearest the
// load. It shares c's storage and does not allocate; n out of range panics.
func (c Circuit) Prefix(n int) Circuit {
	return Circuit{els: c.els[:n:n]}
}

// Step returns what element j adds at fHz, normalised to z0Ohm: Z/z0 for a
// series element, Y·z0 for a shunt one, and whether it is a shunt. An
// element that is neither (a line, a transformer) returns ok = false.
func (c Circuit) Step(j int, fHz, z0Ohm float64) (x complex128, shunt, ok bool) {
	e := &c.els[j]
	if e.form == formGeneric {
		return 0, false, false
	}
	x = e.step(fHz, 2*math.Pi*fHz)
	if e.shunt {
		return complex(real(x)*z0Ohm, imag(x)*z0Ohm), true, true
	}
	return complex(real(x)/z0Ohm, imag(x)/z0Ohm), false, true
}

// step returns the impedance (series) or admittance (shunt) in ohms or
// siemens of a lumped or part element; ω = 2π·fHz.
func (e *circuitElement) step(fHz, w float64) complex128 {
	if e.form == formLumped {
		if e.shunt {
			return e.admittance(fHz, w)
		}
		return e.impedance(fHz, w)
	}
	z := e.part.ImpedanceAt(fHz)
	if e.shunt {
		return recip(z)
	}
	return z
}

// walk carries (v, i) through element e at fHz (see [Circuit]) and returns
// them with the real power, in the walk's units, that e turns to heat.
func (e *circuitElement) walk(v, i complex128, fHz, w, z0 float64) (complex128, complex128, float64) {
	if e.form == formGeneric {
		m := e.el.ABCD(fHz)
		v2 := m[0]*v + complex(real(m[1])/z0, imag(m[1])/z0)*i
		i2 := complex(real(m[2])*z0, imag(m[2])*z0)*v + m[3]*i
		if e.lossless {
			return v2, i2, 0
		}
		return v2, i2, realDot(v2, i2) - realDot(v, i)
	}
	x := e.step(fHz, w)
	if e.shunt {
		y := complex(real(x)*z0, imag(x)*z0)
		return v, i + y*v, real(y) * abs2(v)
	}
	z := complex(real(x)/z0, imag(x)/z0)
	return v + z*i, i, real(z) * abs2(i)
}

// realDot returns Re(a·b*).
func realDot(a, b complex128) float64 { return real(a)*real(b) + imag(a)*imag(b) }

// abs2 returns |a|².
func abs2(a complex128) float64 { return real(a)*real(a) + imag(a)*imag(a) }

// GammaAt returns the reflection coefficient seen from the source at fHz,
// against the real reference z0Ohm, with a load of reflection coefficient
// loadGamma against the same z0Ohm. It does not allocate.
func (c Circuit) GammaAt(fHz float64, loadGamma complex128, z0Ohm float64) complex128 {
	v, i := 1+loadGamma, 1-loadGamma
	w := 2 * math.Pi * fHz
	for j := range c.els {
		v, i, _ = c.els[j].walk(v, i, fHz, w, z0Ohm)
	}
	return (v - i) / (v + i)
}

// GammaTo fills dst with the reflection coefficient seen from the source at
// each frequency of freqHz, with the load's reflection coefficient
// loadGamma[k] at freqHz[k], all against the real reference z0Ohm, and
// returns dst. A nil dst is allocated; a dst or loadGamma whose length
// differs from freqHz panics. Given dst it does not allocate.
func (c Circuit) GammaTo(dst []complex128, freqHz []float64, loadGamma []complex128, z0Ohm float64) []complex128 {
	if len(loadGamma) != len(freqHz) {
		panic(badSweepLength)
	}
	if dst == nil {
		dst = make([]complex128, len(freqHz))
	} else if len(dst) != len(freqHz) {
		panic(badLength)
	}
	for k, f := range freqHz {
		dst[k] = c.GammaAt(f, loadGamma[k], z0Ohm)
	}
	return dst
}

// PowerAt returns the reflection coefficient seen from the source at fHz
// (as [Circuit.GammaAt]) and the transducer gain G_T: the power that
// reaches the load as a fraction of the power the source makes available.
// For a passive circuit 0 ≤ G_T ≤ 1 − |Γin|², with equality when the
// circuit is lossless. It does not allocate.
func (c Circuit) PowerAt(fHz float64, loadGamma complex128, z0Ohm float64) (gammaIn complex128, toLoad float64) {
	v, i := 1+loadGamma, 1-loadGamma
	pLoad := realDot(v, i)
	w := 2 * math.Pi * fHz
	for j := range c.els {
		v, i, _ = c.els[j].walk(v, i, fHz, w, z0Ohm)
	}
	s := v + i
	return (v - i) / s, 4 * pLoad / abs2(s)
}

// Balance is the power accounting of a ladder between a source of real
// impedance z0 and a load at one frequency, in watts:
//
//	AvailableW = ReflectedW + AcceptedW
//	AcceptedW  = Σ PartsW + LoadW
//
// AvailableW is what the source would deliver into a matched load,
// ReflectedW = |Γin|²·AvailableW what the mismatch sends back, AcceptedW
// what enters the ladder, PartsW[j] what element j (load first) turns to
// heat, and LoadW what reaches the load. AcceptedW is the sum of what the
// parts and the load take, so a lossless ladder has an Efficiency of
// exactly 1; ReflectedW comes from |Γin|² on its own, so
// ReflectedW + AcceptedW = AvailableW is the check that the accounting
// closes.
type Balance struct {
	AvailableW, ReflectedW, AcceptedW, LoadW float64
	PartsW                                   []float64
}

// TransducerGain returns G_T = LoadW/AvailableW: the share of the available
// power that reaches the load.
func (b Balance) TransducerGain() float64 { return b.LoadW / b.AvailableW }

// Efficiency returns η = LoadW/AcceptedW: the share of the power the
// ladder accepts that reaches the load; 1 for a lossless ladder, NaN when
// it accepts nothing.
func (b Balance) Efficiency() float64 { return b.LoadW / b.AcceptedW }

// MismatchLossDB returns −10·log10(AcceptedW/AvailableW): the loss of the
// mismatch at the input.
func (b Balance) MismatchLossDB() float64 { return -10 * math.Log10(b.AcceptedW/b.AvailableW) }

// DissipativeLossDB returns −10·log10(η): the loss of the heat in the
// parts. MismatchLossDB + DissipativeLossDB = −10·log10(G_T).
func (b Balance) DissipativeLossDB() float64 { return -10 * math.Log10(b.Efficiency()) }

// BalanceTo returns the power accounting of the circuit at fHz when a
// source of real impedance z0Ohm that makes availableW watts available
// drives it and the load's reflection coefficient is loadGamma (against
// z0Ohm). PartsW is dst (one entry per element, load first); a nil dst is
// allocated and a dst of the wrong length panics. Given dst it does not
// allocate.
//
// The figures are exact circuit theory: the dissipation of a series part is
// Re(Z)·|I|²/2 and of a shunt part Re(Y)·|V|²/2, with the part's own
// current or voltage from the walk; a line, stub or transformer dissipates
// the difference of the real powers at its two ends (none at all when it is
// lossless: an ideal transformer, a line or stub without loss).
// ReflectedW is computed from |Γin|², independently of the walk, so the sum
// ReflectedW + ΣPartsW + LoadW = AvailableW is a check that closes to
// rounding.
func (c Circuit) BalanceTo(dst []float64, fHz float64, loadGamma complex128, z0Ohm, availableW float64) Balance {
	if dst == nil {
		dst = make([]float64, len(c.els))
	} else if len(dst) != len(c.els) {
		panic(badLength)
	}
	v, i := 1+loadGamma, 1-loadGamma
	pLoad := realDot(v, i)
	w := 2 * math.Pi * fHz
	for j := range c.els {
		var d float64
		v, i, d = c.els[j].walk(v, i, fHz, w, z0Ohm)
		dst[j] = d
	}
	s := v + i
	scale := 4 * availableW / abs2(s) // watts per unit of the walk
	load := pLoad * scale
	accepted := load
	for j := range dst {
		dst[j] *= scale
		accepted += dst[j]
	}
	g := (v - i) / s
	return Balance{
		AvailableW: availableW,
		ReflectedW: abs2(g) * availableW,
		AcceptedW:  accepted,
		LoadW:      load,
		PartsW:     dst,
	}
}
