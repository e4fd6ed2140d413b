package match

import (
	"math"
	"testing"

	"matchbench/rfmath"
	"matchbench/rfmath/parts"
)

// grid returns n frequencies evenly spaced from lo to hi.
func grid(lo, hi float64, n int) []float64 {
	f := make([]float64, n)
	for k := range f {
		f[k] = lo + (hi-lo)*float64(k)/float64(n-1)
	}
	return f
}

// loadOf returns the load of impedance z(f) at freq, in z0.
func loadOf(freq []float64, z0 float64, z func(float64) complex128) Load {
	l := Load{FreqHz: freq, Gamma: make([]complex128, len(freq)), Z0Ohm: z0}
	for k, f := range freq {
		l.Gamma[k] = rfmath.GammaFromZ(z(f), complex(z0, 0))
	}
	return l
}

// smallAntenna is an invented small antenna for the tests (not the demo's
// numbers): a series R–L–C resonant near 2.5 GHz whose radiation
// resistance grows as f², behind a pad capacitance.
func smallAntenna(f float64) complex128 {
	w := 2 * math.Pi * f
	const l, c, pad = 5.1e-9, 0.8e-12, 0.25e-12
	r := 4 + 15*(f/2.5e9)*(f/2.5e9)
	z := complex(r, w*l-1/(w*c))
	return 1 / (1/z + complex(0, w*pad))
}

// lowBandAntenna is an invented trace antenna for two sub-GHz bands.
func lowBandAntenna(f float64) complex128 {
	w := 2 * math.Pi * f
	const l, c, pad = 30e-9, 1.0e-12, 0.5e-12
	r := 3 + 10*(f/950e6)*(f/950e6)
	z := complex(r, w*l-1/(w*c))
	return 1 / (1/z + complex(0, w*pad))
}

// compiled returns n with its parts made by the model m, compiled; a part
// that cannot be built fails the test.
func compiled(t testing.TB, n Network, m parts.Model) rfmath.Circuit {
	t.Helper()
	c, err := n.WithModel(m).Circuit()
	if err != nil {
		t.Fatal(err)
	}
	return c
}

// ladderOf returns n with its parts made by the model m as an rfmath
// ladder.
func ladderOf(t testing.TB, n Network, m parts.Model) rfmath.Ladder {
	t.Helper()
	l, err := n.WithModel(m).Ladder()
	if err != nil {
		t.Fatal(err)
	}
	return l
}
