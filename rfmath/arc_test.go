package rfmath

import (
	"math"
	"math/cmplx"
	"testing"
)

// Dragging a part's point to where the part's own value puts it gives that
// value back (an independent round trip through the ladder), for each kind,
// on the loads of REFERENCE-CHECKS §6a (Pozar Example 5.1, ZL = 200 − j100 Ω
// in 100 Ω at 500 MHz) and N-3 (50 + j50 Ω in 50 Ω).
func TestValueAlongArcRoundTrip(t *testing.T) {
	t.Parallel()
	cases := []struct {
		kind  PartKind
		value float64
		elem  func(v float64) Element
	}{
		{"series_L", 38.985e-9, func(v float64) Element { return SeriesL{v} }},
		{"series_C", 2.5990e-12, func(v float64) Element { return SeriesC{v} }},
		{"shunt_L", 46.139e-9, func(v float64) Element { return ShuntL{v} }},
		{"shunt_C", 0.92282e-12, func(v float64) Element { return ShuntC{v} }},
	}
	loads := []struct {
		zl, z0 complex128
		f      float64
	}{{200 - 100i, 100, 500e6}, {50 + 50i, 50, 1e9}}
	for _, ld := range loads {
		gb := GammaFromZ(ld.zl, ld.z0)
		for _, c := range cases {
			target := Ladder{c.elem(c.value)}.InputGamma(ld.f, gb, real(ld.z0))
			got, ok := ValueAlongArc(c.kind, gb, target, real(ld.z0), ld.f, 0)
			if !ok || math.Abs(got-c.value) > 1e-9*c.value {
				t.Errorf("%s on %v: got %g (%v), want %g", c.kind, ld.zl, got, ok, c.value)
			}
		}
	}
}

// A target off the arc projects along constant reactance: a series part
// on the r = 1 circle at z = 1 (Γ = 0), dragged toward z = 2 + j1, adds
// X = 1·Z0 (the target's reactance; common practice of chart reading).
func TestValueAlongArcProjection(t *testing.T) {
	t.Parallel()
	const f, z0 = 1e9, 50.0
	got, ok := ValueAlongArc("series_L", 0, GammaFromZ(100+50i, z0), z0, f, 0)
	if want := 50 / (2 * math.Pi * f); !ok || math.Abs(got-want) > 1e-9*want {
		t.Errorf("series L = %g, want %g", got, want)
	}
	// The wrong sign pins the part at its lower end of travel.
	l, _ := ValueAlongArc("series_L", 0, GammaFromZ(50-50i, z0), z0, f, 0)
	if z := (Ladder{SeriesL{l}}).InputZ(f, 50); cmplx.Abs(z-50) > 1e-4 {
		t.Errorf("a series L dragged to negative reactance gives Zin %v, want about 50 Ω", z)
	}
	if _, ok := ValueAlongArc("line", 0, 0.5, z0, f, 0.01); ok {
		t.Error("a line reported as draggable by value")
	}
}
