package rfmath

import "math"

// Element is one section of a [Ladder]: a two-port whose ABCD matrix
// depends on frequency. Port 1 faces the source and port 2 the load.
type Element interface {
	ABCD(fHz float64) ABCD
}

// Part is a one-port component, such as an inductor with losses, given by
// its impedance in ohms at a frequency. Place it in a ladder with [Series]
// or [Shunt].
type Part interface {
	ImpedanceAt(fHz float64) complex128
}

// Compile-time checks that the element types satisfy Element.
var (
	_ Element = SeriesL{}
	_ Element = SeriesC{}
	_ Element = SeriesR{}
	_ Element = ShuntL{}
	_ Element = ShuntC{}
	_ Element = ShuntR{}
	_ Element = Line{}
	_ Element = ShuntStub{}
	_ Element = Transformer{}
	_ Element = Series{}
	_ Element = Shunt{}
)

// SeriesL is an ideal inductor of LH henries in series.
type SeriesL struct{ LH float64 }

// ABCD returns [1, jωL; 0, 1].
func (e SeriesL) ABCD(fHz float64) ABCD { return SeriesZ(ImpedanceOfL(e.LH, fHz)) }

// SeriesC is an ideal capacitor of CF farads in series. CF must be
// positive: a series open has no ABCD matrix.
type SeriesC struct{ CF float64 }

// ABCD returns [1, −j/(ωC); 0, 1].
func (e SeriesC) ABCD(fHz float64) ABCD { return SeriesZ(ImpedanceOfC(e.CF, fHz)) }

// SeriesR is a resistor of ROhm ohms in series.
type SeriesR struct{ ROhm float64 }

// ABCD returns [1, R; 0, 1].
func (e SeriesR) ABCD(float64) ABCD { return SeriesZ(complex(e.ROhm, 0)) }

// ShuntL is an ideal inductor of LH henries to ground. LH must be positive:
// a shunt short has no ABCD matrix of use.
type ShuntL struct{ LH float64 }

// ABCD returns [1, 0; −j/(ωL), 1].
func (e ShuntL) ABCD(fHz float64) ABCD { return ShuntY(AdmittanceOfL(e.LH, fHz)) }

// ShuntC is an ideal capacitor of CF farads to ground.
type ShuntC struct{ CF float64 }

// ABCD returns [1, 0; jωC, 1].
func (e ShuntC) ABCD(fHz float64) ABCD { return ShuntY(AdmittanceOfC(e.CF, fHz)) }

// ShuntR is a resistor of ROhm ohms to ground.
type ShuntR struct{ ROhm float64 }

// ABCD returns [1, 0; 1/R, 1].
func (e ShuntR) ABCD(float64) ABCD { return ShuntY(complex(1/e.ROhm, 0)) }

// ShuntStub is a stub line connected across the main line: open at its far
// end if Open is true, shorted otherwise. Its admittance follows from the
// line's ABCD matrix, so loss and velocity factor count:
//
//	open:  Y = C/A
//	short: Y = D/B
type ShuntStub struct {
	Line Line
	Open bool
}

// ABCD returns [1, 0; Y, 1] with the stub's input admittance Y.
func (e ShuntStub) ABCD(fHz float64) ABCD {
	m := e.Line.ABCD(fHz)
	if e.Open {
		return ShuntY(m[2] / m[0])
	}
	return ShuntY(m[3] / m[1])
}

// Transformer is an ideal transformer with the turns ratio Ratio = N1/N2
// (source side : load side), which shows a load Z as Ratio²·Z.
type Transformer struct{ Ratio float64 }

// ABCD returns [n, 0; 0, 1/n].
func (e Transformer) ABCD(float64) ABCD { return IdealTransformer(e.Ratio) }

// Series places a [Part] in series.
type Series struct{ Part Part }

// ABCD returns [1, Z; 0, 1] with the part's impedance Z at fHz.
func (e Series) ABCD(fHz float64) ABCD { return SeriesZ(e.Part.ImpedanceAt(fHz)) }

// Shunt places a [Part] to ground.
type Shunt struct{ Part Part }

// ABCD returns [1, 0; 1/Z, 1] with the part's impedance Z at fHz.
func (e Shunt) ABCD(fHz float64) ABCD { return ShuntY(recip(e.Part.ImpedanceAt(fHz))) }

// Ladder is a cascade of elements listed from the LOAD toward the SOURCE:
// l[0] is connected to the load and l[len(l)−1] faces the source. This is
// the order in which a matching network is built up from a load on a chart.
// The empty ladder is a through connection.
type Ladder []Element

// ABCD returns the ABCD matrix of the whole ladder at fHz, port 1 at the
// source. As the source-side element comes first in a cascade product,
//
//	M = l[n−1]·…·l[1]·l[0]
//
// It does not allocate.
func (l Ladder) ABCD(fHz float64) ABCD {
	// Built from the load: m = l[i]·m for i = 0, 1, …; series and shunt
	// parts take the two complex products their sparse matrices need
	// rather than a full 2×2 product.
	m := Thru
	for _, e := range l {
		switch e := e.(type) {
		case SeriesL:
			m = m.leftSeries(ImpedanceOfL(e.LH, fHz))
		case SeriesC:
			m = m.leftSeries(ImpedanceOfC(e.CF, fHz))
		case SeriesR:
			m = m.leftSeries(complex(e.ROhm, 0))
		case Series:
			m = m.leftSeries(e.Part.ImpedanceAt(fHz))
		case ShuntL:
			m = m.leftShunt(AdmittanceOfL(e.LH, fHz))
		case ShuntC:
			m = m.leftShunt(AdmittanceOfC(e.CF, fHz))
		case ShuntR:
			m = m.leftShunt(complex(1/e.ROhm, 0))
		case Shunt:
			m = m.leftShunt(recip(e.Part.ImpedanceAt(fHz)))
		default:
			m = e.ABCD(fHz).Mul(m)
		}
	}
	return m
}

// leftSeries returns [1, z; 0, 1]·m.
func (m ABCD) leftSeries(z complex128) ABCD {
	return ABCD{m[0] + z*m[2], m[1] + z*m[3], m[2], m[3]}
}

// leftShunt returns [1, 0; y, 1]·m.
func (m ABCD) leftShunt(y complex128) ABCD {
	return ABCD{m[0], m[1], y*m[0] + m[2], y*m[1] + m[3]}
}

// recip returns 1/z with one real division, z*/|z|²; zero and non-finite z
// take Go's complex division (1/0 is infinite: a short's admittance).
func recip(z complex128) complex128 {
	re, im := real(z), imag(z)
	d := re*re + im*im
	if d == 0 || math.IsInf(d, 0) || math.IsNaN(d) {
		return 1 / z
	}
	return complex(re/d, -im/d)
}

// InputZ returns the impedance in ohms seen from the source at fHz with
// zLoad (ohms; cmplx.Inf() for an open) at the load end.
func (l Ladder) InputZ(fHz float64, zLoad complex128) complex128 {
	return l.ABCD(fHz).InputImpedance(zLoad)
}

// InputGamma returns the reflection coefficient seen from the source at fHz,
// against the real reference z0 (ohms), with a load of reflection
// coefficient loadGamma against the same z0.
func (l Ladder) InputGamma(fHz float64, loadGamma complex128, z0 float64) complex128 {
	return l.ABCD(fHz).InputGamma(loadGamma, z0)
}

// InputGammaTo fills dst with the reflection coefficient seen from the
// source, against the real reference z0 (ohms), at each frequency of freqHz
// with the load's reflection coefficient loadGamma[k] (against z0) at
// freqHz[k], and returns dst. A nil dst is allocated; a dst or loadGamma
// whose length differs from freqHz panics. Given dst it does not allocate.
func (l Ladder) InputGammaTo(dst []complex128, freqHz []float64, loadGamma []complex128, z0 float64) []complex128 {
	if len(loadGamma) != len(freqHz) {
		panic(badSweepLength)
	}
	if dst == nil {
		dst = make([]complex128, len(freqHz))
	} else if len(dst) != len(freqHz) {
		panic(badLength)
	}
	for k, f := range freqHz {
		dst[k] = l.ABCD(f).InputGamma(loadGamma[k], z0)
	}
	return dst
}

// InputZTo fills dst with the impedance in ohms seen from the source at each
// frequency of freqHz with the load impedance zLoad[k] (ohms) at freqHz[k],
// and returns dst. A nil dst is allocated; a dst or zLoad whose length
// differs from freqHz panics.
func (l Ladder) InputZTo(dst []complex128, freqHz []float64, zLoad []complex128) []complex128 {
	if len(zLoad) != len(freqHz) {
		panic(badSweepLength)
	}
	if dst == nil {
		dst = make([]complex128, len(freqHz))
	} else if len(dst) != len(freqHz) {
		panic(badLength)
	}
	for k, f := range freqHz {
		dst[k] = l.ABCD(f).InputImpedance(zLoad[k])
	}
	return dst
}
