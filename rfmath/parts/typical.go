package parts

import (
	"fmt"
	"math"
	"sort"
	"strings"

	"matchbench/rfmath"
)

// Kind is the kind of a lumped part: [rfmath.Component].
type Kind = rfmath.Component

// Kinds of part.
const (
	KindL = rfmath.ComponentL // inductor; values in henries
	KindC = rfmath.ComponentC // capacitor; values in farads
	KindR = rfmath.ComponentR // resistor; values in ohms
)

// Model makes the part that a nominal value stands for.
type Model interface {
	// Part returns the part of kind k and nominal value v (henries,
	// farads or ohms). An unknown kind panics.
	Part(k Kind, v float64) rfmath.Part
}

// Ideal is the [Model] of lossless parts without parasitics:
// [IdealInductor], [IdealCapacitor], [IdealResistor].
var Ideal Model = idealModel{}

type idealModel struct{}

func (idealModel) Part(k Kind, v float64) rfmath.Part {
	switch k {
	case KindL:
		return IdealInductor{v}
	case KindC:
		return IdealCapacitor{v}
	case KindR:
		return IdealResistor{v}
	}
	panic(badKind)
}

// Rating is what a part may carry. The numbers are the data-sheet kind: a
// DC voltage and a DC (heating) current; compare RF peak voltage and RMS
// current with them and derate as the maker and local practice require.
// A zero field means not rated (no check).
type Rating struct {
	MaxVoltageV float64 // peak voltage across the part
	MaxCurrentA float64 // RMS current through the part
	MaxPowerW   float64 // dissipation, for resistors
}

// Tolerance is the ± spread of a part's value about its nominal value: the
// larger of Rel·v and Abs. That is an absolute tolerance for small values
// and a relative one above the value where the two are equal (Abs/Rel), as
// catalogues state "±0.1 nH" for small inductors and "±2 %" for larger
// ones.
type Tolerance struct {
	Rel float64 // relative tolerance, 0.02 for ±2 %
	Abs float64 // absolute tolerance in the value's unit
}

// Of returns the tolerance of a part of nominal value v: max(Rel·|v|, Abs).
func (t Tolerance) Of(v float64) float64 {
	return math.Max(t.Rel*math.Abs(v), t.Abs)
}

// Typical tolerances: typical values FROM MEMORY of common catalogue parts,
// not a vendor's data. Inductors ±2 % or ±0.1 nH (equal at 5 nH), small C0G
// capacitors ±2 % or ±0.05 pF (equal at 2.5 pF), thin-film chip resistors
// ±1 %.
var (
	InductorTolerance  = Tolerance{Rel: 0.02, Abs: 0.1e-9}
	CapacitorTolerance = Tolerance{Rel: 0.02, Abs: 0.05e-12}
	ResistorTolerance  = Tolerance{Rel: 0.01}
)

// DefaultTolerance returns the typical tolerance of a part of kind k
// (above). An unknown kind panics.
func DefaultTolerance(k Kind) Tolerance {
	switch k {
	case KindL:
		return InductorTolerance
	case KindC:
		return CapacitorTolerance
	case KindR:
		return ResistorTolerance
	}
	panic(badKind)
}

// InductorPoint is a typical inductor of one value in a [Family].
type InductorPoint struct {
	LH          float64 // inductance in henries
	Q           float64 // Q at the family's InductorQRefHz
	SRFHz       float64 // self-resonant frequency
	MaxCurrentA float64 // rated current
}

// CapacitorPoint is a typical capacitor of one value in a [Family].
type CapacitorPoint struct {
	CF     float64 // capacitance in farads
	ESROhm float64 // equivalent series resistance near 1 GHz
}

// Family is a table of typical parts of one case size: multilayer chip
// inductors, C0G (NP0) multilayer capacitors and thin-film resistors. A
// value between two table points takes Q, SRF, ESR and current rating
// interpolated linearly in log(value) against log(quantity); a value
// outside the table takes the nearest end point's numbers (LRange and CRange
// say what the family is sold in). A capacitor's SRF follows from the
// family's CapacitorESLH, the mounting and package inductance, which hardly
// depends on the value.
//
// Family implements [Model].
type Family struct {
	Name                 string
	InductorQRefHz       float64
	Inductors            []InductorPoint // by increasing LH
	CapacitorESLH        float64
	Capacitors           []CapacitorPoint // by increasing CF
	CapacitorMaxVoltageV float64
	ResistorESLH         float64
	ResistorMaxPowerW    float64
	ResistorMaxVoltageV  float64
	LRange, CRange       [2]float64 // values sold, henries and farads
}

// Typical0402 and Typical0603 are typical values FROM MEMORY of 0402 and
// 0603 multilayer chip inductors, C0G capacitors and thin-film resistors,
// not any vendor's data: Q of a multilayer inductor of 10 to 20 at
// 500 MHz, SRF falling from about 10 GHz at 1 nH to under 1 GHz at 100 nH,
// C0G ESR of a few tenths of an ohm near 1 GHz with about 0.4 nH (0402) or
// 0.6 nH (0603) of mounted inductance, 50 V capacitors, 1/16 W and 1/10 W
// resistors. Use a data sheet's numbers for a product.
var (
	Typical0402 = &Family{
		Name:           "0402",
		InductorQRefHz: 500e6,
		Inductors: []InductorPoint{
			{1e-9, 10, 10e9, 0.30},
			{3.3e-9, 12, 6e9, 0.30},
			{10e-9, 14, 3.5e9, 0.25},
			{33e-9, 14, 1.8e9, 0.20},
			{100e-9, 12, 0.9e9, 0.15},
			{270e-9, 10, 0.5e9, 0.10},
		},
		CapacitorESLH: 0.4e-9,
		Capacitors: []CapacitorPoint{
			{0.5e-12, 0.5}, {1e-12, 0.4}, {10e-12, 0.15}, {100e-12, 0.08}, {1e-9, 0.05},
		},
		CapacitorMaxVoltageV: 50,
		ResistorESLH:         0.4e-9,
		ResistorMaxPowerW:    1.0 / 16,
		ResistorMaxVoltageV:  50,
		LRange:               [2]float64{1e-9, 270e-9},
		CRange:               [2]float64{0.2e-12, 1e-9},
	}
	Typical0603 = &Family{
		Name:           "0603",
		InductorQRefHz: 500e6,
		Inductors: []InductorPoint{
			{1e-9, 12, 10e9, 0.50},
			{3.3e-9, 15, 6e9, 0.45},
			{10e-9, 18, 3.2e9, 0.35},
			{33e-9, 18, 1.6e9, 0.30},
			{100e-9, 15, 0.8e9, 0.25},
			{470e-9, 12, 0.35e9, 0.15},
		},
		CapacitorESLH: 0.6e-9,
		Capacitors: []CapacitorPoint{
			{0.5e-12, 0.4}, {1e-12, 0.3}, {10e-12, 0.12}, {100e-12, 0.06}, {10e-9, 0.03},
		},
		CapacitorMaxVoltageV: 50,
		ResistorESLH:         0.6e-9,
		ResistorMaxPowerW:    0.1,
		ResistorMaxVoltageV:  75,
		LRange:               [2]float64{1e-9, 470e-9},
		CRange:               [2]float64{0.3e-12, 10e-9},
	}
)

// Families lists the tables of typical parts.
var Families = []*Family{Typical0402, Typical0603}

// LookupFamily returns the family named name ("0402"). An unknown name
// returns an error wrapping [ErrUnknownFamily].
func LookupFamily(name string) (*Family, error) {
	n := strings.TrimSpace(name)
	for _, f := range Families {
		if f.Name == n {
			return f, nil
		}
	}
	return nil, fmt.Errorf("%w: %q", ErrUnknownFamily, name)
}

// Part returns the family's typical part of kind k and value v: an
// [Inductor], [Capacitor] or [Resistor]. An unknown kind panics.
func (f *Family) Part(k Kind, v float64) rfmath.Part {
	switch k {
	case KindL:
		return f.Inductor(v)
	case KindC:
		return f.Capacitor(v)
	case KindR:
		return Resistor{ROhm: v, ESLH: f.ResistorESLH}
	}
	panic(badKind)
}

// Inductor returns the family's typical inductor of lH henries.
func (f *Family) Inductor(lH float64) Inductor {
	i, t := bracket(len(f.Inductors), func(i int) float64 { return f.Inductors[i].LH }, lH)
	a, b := f.Inductors[i], f.Inductors[min(i+1, len(f.Inductors)-1)]
	return Inductor{
		LH:     lH,
		Q:      logLerp(a.Q, b.Q, t),
		QRefHz: f.InductorQRefHz,
		SRFHz:  logLerp(a.SRFHz, b.SRFHz, t),
	}
}

// Capacitor returns the family's typical capacitor of cF farads.
func (f *Family) Capacitor(cF float64) Capacitor {
	i, t := bracket(len(f.Capacitors), func(i int) float64 { return f.Capacitors[i].CF }, cF)
	a, b := f.Capacitors[i], f.Capacitors[min(i+1, len(f.Capacitors)-1)]
	c := Capacitor{CF: cF, ESROhm: logLerp(a.ESROhm, b.ESROhm, t)}
	if f.CapacitorESLH > 0 {
		c.SRFHz = 1 / (2 * math.Pi * math.Sqrt(f.CapacitorESLH*cF))
	}
	return c
}

// Rating returns the family's typical rating of a part of kind k and
// value v. An unknown kind panics.
func (f *Family) Rating(k Kind, v float64) Rating {
	switch k {
	case KindL:
		i, t := bracket(len(f.Inductors), func(i int) float64 { return f.Inductors[i].LH }, v)
		a, b := f.Inductors[i], f.Inductors[min(i+1, len(f.Inductors)-1)]
		return Rating{MaxCurrentA: logLerp(a.MaxCurrentA, b.MaxCurrentA, t)}
	case KindC:
		return Rating{MaxVoltageV: f.CapacitorMaxVoltageV}
	case KindR:
		return Rating{MaxVoltageV: f.ResistorMaxVoltageV, MaxPowerW: f.ResistorMaxPowerW}
	}
	panic(badKind)
}

// Range returns the smallest and largest value of kind k the family is
// sold in (henries or farads), or 0, +Inf for resistors and unknown kinds.
func (f *Family) Range(k Kind) (lo, hi float64) {
	switch k {
	case KindL:
		return f.LRange[0], f.LRange[1]
	case KindC:
		return f.CRange[0], f.CRange[1]
	}
	return 0, math.Inf(1)
}

// bracket returns the index i of the table entry at or below v and the
// fraction t ∈ [0, 1] of the way in log(value) to entry i+1; below the
// table it returns 0, 0 and above it n−1, 0.
func bracket(n int, at func(int) float64, v float64) (int, float64) {
	j := sort.Search(n, func(i int) bool { return at(i) > v }) // first above v
	switch {
	case j == 0:
		return 0, 0
	case j == n:
		return n - 1, 0
	}
	i := j - 1
	return i, math.Log(v/at(i)) / math.Log(at(j)/at(i))
}

// logLerp interpolates between a and b at fraction t in log scale.
func logLerp(a, b, t float64) float64 {
	if t == 0 || a <= 0 || b <= 0 {
		return a
	}
	return a * math.Pow(b/a, t)
}
