package match

import (
	"fmt"
	"math"
	"math/cmplx"

	"matchbench/rfmath"
)

// The functions here are what a workbench needs to build a network by
// hand on the chart: where each part takes the design-frequency point as it
// grows in, the value that puts the point where a pointer drags it, and a
// new part's default value and slider range. They judge the same
// [Network] that the search, the yield and the exports judge.

// ScaledValue returns the value of a part of kind k and value v at the
// fraction t ∈ (0, 1] of its way in from nothing: a series part's
// impedance or a shunt part's admittance grows as t (so a series C or a
// shunt L or R starts from a huge value), a line or stub grows in length,
// and a transformer's ratio goes from 1 to v.
func ScaledValue(k Kind, v, t float64) float64 {
	switch k {
	case SeriesC, ShuntL, ShuntR:
		return v / t
	case Transformer:
		return 1 + t*(v-1)
	}
	return v * t
}

// prefix returns the circuit of parts 0 … i of n with part i at value vi.
func (n Network) prefix(i int, vi float64) (rfmath.Circuit, error) {
	l := make(rfmath.Ladder, i+1)
	for j := 0; j <= i; j++ {
		v := n[j].Value
		if j == i {
			v = vi
		}
		e, err := n[j].Element(v)
		if err != nil {
			return rfmath.Circuit{}, err
		}
		l[j] = e
	}
	return l.Circuit(), nil
}

// StepGamma returns Γ at fHz seen through parts 0 … i of n, with part i at
// value vi and the others at their values, on a load of reflection gL
// against the real reference z0Ohm. A part that cannot be built gives NaN.
// i = −1 returns gL.
func (n Network) StepGamma(i int, vi, fHz float64, gL complex128, z0Ohm float64) complex128 {
	if i < 0 {
		return gL
	}
	c, err := n.prefix(i, vi)
	if err != nil {
		return cmplx.NaN()
	}
	return c.GammaAt(fHz, gL, z0Ohm)
}

// MorphTo fills dst with Γ at each frequency of freqHz (the load's Γ there
// in gL) through the whole network with part i at value vi, and returns it:
// one frame of a part's value changing. A nil dst is allocated; lengths
// that differ panic.
func (n Network) MorphTo(dst []complex128, i int, vi float64, freqHz []float64, gL []complex128, z0Ohm float64) ([]complex128, error) {
	m := n.Clone()
	m[i].Value = vi
	c, err := m.Circuit()
	if err != nil {
		return nil, err
	}
	return c.GammaTo(dst, freqHz, gL, z0Ohm), nil
}

// Path returns the matching path of n at fHz on a load of reflection gL:
// for each part j, samples values of Γ as part j grows in from nothing to
// its value (parts before it at their values), the last being the point
// after part j. With override ≥ 0, part override is drawn at value ov, its
// track stops at the fraction frac ∈ (0, 1] of its way, and the path ends
// there (the frames of an animation).
func (n Network) Path(fHz float64, gL complex128, z0Ohm float64, samples, override int, ov, frac float64) [][]complex128 {
	out := make([][]complex128, 0, len(n))
	for j, p := range n {
		v := p.Value
		if j == override {
			v = ov
		}
		last := 1.0
		if j == override && frac > 0 && frac < 1 {
			last = frac
		}
		pts := make([]complex128, samples)
		for s := range samples {
			t := last * math.Max(float64(s)/float64(samples-1), 1e-4)
			pts[s] = n.StepGamma(j, ScaledValue(p.Kind, v, t), fHz, gL, z0Ohm)
		}
		out = append(out, pts)
		if j == override {
			break
		}
	}
	return out
}

// DragValue returns the value of part i of n that moves the design-frequency
// point after it nearest to target, along its circle of constant
// resistance or conductance ([rfmath.ValueAlongArc]), on a load of
// reflection gL at fHz. Only series and shunt inductors and capacitors can
// be dragged; other kinds return an error.
func (n Network) DragValue(i int, fHz float64, gL complex128, z0Ohm float64, target complex128) (float64, error) {
	if i < 0 || i >= len(n) {
		return 0, fmt.Errorf("%w: no part %d", ErrPart, i+1)
	}
	p := n[i]
	before := gL
	if i > 0 {
		before = n.StepGamma(i-1, n[i-1].Value, fHz, gL, z0Ohm)
	}
	v, ok := rfmath.ValueAlongArc(p.Kind, before, target, z0Ohm, fHz, p.Value)
	if !ok {
		return 0, fmt.Errorf("%w: a %s cannot be dragged on the chart; type its value", ErrPart, p.Kind)
	}
	return v, nil
}

// DefaultValue is a new part's value at the design frequency fHz: a
// reactance or resistance of z0Ohm, an eighth of a wavelength in air, or a
// ratio of 1.5.
func DefaultValue(k Kind, fHz, z0Ohm float64) float64 {
	w := 2 * math.Pi * fHz
	switch k {
	case SeriesL, ShuntL:
		return z0Ohm / w
	case SeriesC, ShuntC:
		return 1 / (w * z0Ohm)
	case SeriesR, ShuntR:
		return z0Ohm
	case Line, StubOpen, StubShort:
		return rfmath.SpeedOfLight / fHz / 8
	}
	return 1.5
}

// SliderRange is the value range of a part's logarithmic slider: two
// decades either side of the default value at fHz (up to half a
// wavelength for lines and stubs, 0.1 to 10 for a transformer), widened to
// hold the part's own value.
func SliderRange(p Part, fHz, z0Ohm float64) (lo, hi float64) {
	c := DefaultValue(p.Kind, fHz, z0Ohm)
	lo, hi = c/100, c*100
	switch p.Kind {
	case Line, StubOpen, StubShort:
		lo, hi = c/50, c*4
	case Transformer:
		lo, hi = 0.1, 10
	}
	return math.Min(lo, p.Value), math.Max(hi, p.Value)
}
