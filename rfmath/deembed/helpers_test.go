package deembed

import (
	"math"
	"math/cmplx"
	"math/rand/v2"
	"testing"

	"matchbench/rfmath"
	"matchbench/rfmath/touchstone"
)

// closeC reports whether |a − b| ≤ tol.
func closeC(a, b complex128, tol float64) bool { return cmplx.Abs(a-b) <= tol }

// grid returns n frequencies lo + k·step.
func grid(lo, step float64, n int) []float64 {
	f := make([]float64, n)
	for k := range f {
		f[k] = lo + step*float64(k)
	}
	return f
}

// lineSweep returns the 2-port S-parameters (50 Ω) of the ABCD function a on
// the grid f.
func twoPortSweep(f []float64, a func(float64) rfmath.ABCD) *rfmath.Sweep {
	s := rfmath.NewSweep(len(f), 2, 50)
	copy(s.FreqHz, f)
	for k, fk := range f {
		m := rfmath.ABCDToS(a(fk), 50, 50)
		copy(s.Matrix(k), m[:])
	}
	return s
}

// randomC returns a complex number with |Re|, |Im| < r.
func randomC(rnd *rand.Rand, r float64) complex128 {
	return complex(r*(2*rnd.Float64()-1), r*(2*rnd.Float64()-1))
}

func readDemo(t *testing.T, name string) *rfmath.Sweep {
	t.Helper()
	f, err := touchstone.ReadFile("../../testdata/demo/"+name, touchstone.Limits{})
	if err != nil {
		t.Fatal(err)
	}
	return f.Sweep
}

func panics(f func()) (ok bool) {
	defer func() { ok = recover() != nil }()
	f()
	return false
}

// deg returns the angle of c in degrees.
func deg(c complex128) float64 { return cmplx.Phase(c) * 180 / math.Pi }
