package demo

import (
	"math"
	"math/cmplx"
	"path/filepath"
	"testing"

	"matchbench/rfmath"
	"matchbench/rfmath/touchstone"
)

// The committed files in testdata/demo must be what the model generates,
// to the 10 significant digits they are written with.
func TestCommittedFilesMatchModel(t *testing.T) {
	t.Parallel()
	for _, f := range Generate() {
		t.Run(f.Name, func(t *testing.T) {
			t.Parallel()
			got, err := touchstone.ReadFile(filepath.Join("..", "..", "testdata", "demo", f.Name), touchstone.DefaultLimits)
			if err != nil {
				t.Fatalf("%v (remake with: go run . demo testdata/demo)", err)
			}
			s := got.Sweep
			if s.Len() != f.Sweep.Len() || s.Ports != f.Sweep.Ports {
				t.Fatalf("file has %d points, %d ports; model has %d, %d", s.Len(), s.Ports, f.Sweep.Len(), f.Sweep.Ports)
			}
			for k := range s.FreqHz {
				if math.Abs(s.FreqHz[k]-f.Sweep.FreqHz[k]) > 1e-6 {
					t.Fatalf("point %d: frequency %g, model %g", k, s.FreqHz[k], f.Sweep.FreqHz[k])
				}
			}
			for n := range s.Data {
				if cmplx.Abs(s.Data[n]-f.Sweep.Data[n]) > 1e-9 {
					t.Fatalf("value %d: %v, model %v (remake with: go run . demo testdata/demo)", n, s.Data[n], f.Sweep.Data[n])
				}
			}
		})
	}
}

// The fixture is a passive, reciprocal 2-port: S12 = S21 and the power
// sum of each column stays at or below 1 (common practice for a cable).
func TestFixtureIsPassiveAndReciprocal(t *testing.T) {
	t.Parallel()
	var fx *rfmath.Sweep
	for _, f := range Generate() {
		if f.Sweep.Ports == 2 {
			fx = f.Sweep
		}
	}
	if fx == nil {
		t.Fatal("no 2-port fixture generated")
	}
	for k := range fx.Len() {
		s11, s12, s21, s22 := fx.At(k, 0, 0), fx.At(k, 0, 1), fx.At(k, 1, 0), fx.At(k, 1, 1)
		if cmplx.Abs(s12-s21) > 1e-12 {
			t.Fatalf("point %d: S12 %v ≠ S21 %v", k, s12, s21)
		}
		p1 := real(s11)*real(s11) + imag(s11)*imag(s11) + real(s21)*real(s21) + imag(s21)*imag(s21)
		p2 := real(s22)*real(s22) + imag(s22)*imag(s22) + real(s12)*real(s12) + imag(s12)*imag(s12)
		if p1 > 1+1e-12 || p2 > 1+1e-12 {
			t.Fatalf("point %d: column power %g, %g > 1", k, p1, p2)
		}
	}
}

// The cable's delay is what its length and velocity factor say:
// τ = 0.25 m / (0.66·c) = 1.2635 ns (REFERENCE-CHECKS §10: 10 cm at VF 0.66
// is 0.50540 ns, so 25 cm is 1.26350 ns).
func TestCableDelay(t *testing.T) {
	t.Parallel()
	if got, want := cable.DelayS(), 1.26350e-9; math.Abs(got-want) > 1e-13 {
		t.Errorf("cable delay %g s, want %g s", got, want)
	}
}
