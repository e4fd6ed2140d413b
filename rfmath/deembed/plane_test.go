package deembed

import (
	"math"
	"math/cmplx"
	"slices"
	"testing"

	"matchbench/rfmath"
)

// TestPlane checks the steps' order on a load of 30 + j20 Ω measured
// through a matched 50 Ω line of 1 ns (closed form: S21 = e^(−jωτ)) and a
// further 0.2 ns of cable taken off as a port extension: the fixture
// removed, the extension applied and the result renormalised to 75 Ω must
// give Γ = (Z − 75)/(Z + 75) of the load itself at every frequency, and
// Apply must equal Remove, Extend and RenormalizeAll called in that order,
// bit for bit.
func TestPlane(t *testing.T) {
	t.Parallel()
	f := grid(100e6, 10e6, 91)
	const tau, ext = 1e-9, 0.2e-9
	zl := complex(30, 20)
	line := twoPortSweep(f, func(fHz float64) rfmath.ABCD {
		th := 2 * math.Pi * fHz * tau
		return rfmath.ABCD{complex(math.Cos(th), 0), complex(0, 50*math.Sin(th)), complex(0, math.Sin(th)/50), complex(math.Cos(th), 0)}
	})
	meas := rfmath.NewSweep(len(f), 1, 50)
	copy(meas.FreqHz, f)
	for k, fk := range f {
		g := (zl - 50) / (zl + 50)
		meas.Data[k] = g * cmplx.Exp(complex(0, -2*math.Pi*fk*2*(tau+ext)))
	}
	p := Plane{Fixtures: []Fixture{{S: line, AnalyserPort: 1}}, Extensions: []Extension{{DelayS: ext}}, RenormOhm: 75}
	got, err := p.Apply(meas)
	if err != nil {
		t.Fatal(err)
	}
	want := (zl - 75) / (zl + 75)
	for k := range f {
		if !closeC(got.Data[k], want, 1e-9) {
			t.Fatalf("%g Hz: Γ %v, want %v (the load at 75 Ω)", f[k], got.Data[k], want)
		}
	}
	step, err := Remove(meas, p.Fixtures)
	if err != nil {
		t.Fatal(err)
	}
	step, err = RenormalizeAll(Extend(step, p.Extensions), 75)
	if err != nil {
		t.Fatal(err)
	}
	if !slices.Equal(got.Data, step.Data) || !slices.Equal(got.Z0, step.Z0) {
		t.Error("Apply differs from the steps taken one by one")
	}
	if same, err := (Plane{Extensions: []Extension{{}}}).Apply(meas); err != nil || same != meas || !(Plane{}).IsZero() || p.IsZero() {
		t.Errorf("a plane that moves nothing: %p vs %p, %v", same, meas, err)
	}
	if !panics(func() { (Plane{Fixtures: []Fixture{{S: line}, {S: line}}}).Apply(meas) }) {
		t.Error("two fixtures on a 1-port accepted")
	}
}
