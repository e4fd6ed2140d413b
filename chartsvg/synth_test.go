package chartsvg

import (
	"math"
	"math/cmplx"
)

// Synthetic test sweeps (not measured data): a series R-L-C resonator seen
// through a lossless line of the reference impedance. The load is
//
//	Z = R + j(ωL − 1/(ωC)),  L = Q·R/ω₀,  C = 1/(ω₀²·L)
//
// and the line of one-way delay τ turns its reflection coefficient by
// e^(−j2ωτ) (toward the generator):
//
//	Γ = (Z − Z0)/(Z + Z0) · e^(−j2ωτ)
type synth struct {
	f0, r, q, delay, z0 float64
}

// sweep returns n frequencies from lo to hi (Hz) and the Γ of s at each.
func (s synth) sweep(lo, hi float64, n int) ([]float64, []complex128) {
	f := make([]float64, n)
	g := make([]complex128, n)
	w0 := 2 * math.Pi * s.f0
	l := s.q * s.r / w0
	c := 1 / (w0 * w0 * l)
	for i := range f {
		f[i] = lo + (hi-lo)*float64(i)/float64(n-1)
		w := 2 * math.Pi * f[i]
		z := complex(s.r, w*l-1/(w*c))
		g[i] = (z - complex(s.z0, 0)) / (z + complex(s.z0, 0)) * cmplx.Exp(complex(0, -2*w*s.delay))
	}
	return f, g
}

// demoTraces returns four synthetic traces of n points each over 2.0–2.9 GHz.
func demoTraces(n int) []Trace {
	specs := []struct {
		id, name string
		s        synth
	}{
		{"ant", "antenna at the connector", synth{2.45e9, 38, 6, 0.08e-9, 50}},
		{"ant-dp", "antenna, port extension removed", synth{2.45e9, 38, 6, 0, 50}},
		{"cable", "antenna through 1 m cable", synth{2.41e9, 30, 9, 4.9e-9, 50}},
		{"match", "with L-network (computed)", synth{2.44e9, 52, 3, 0.02e-9, 50}},
	}
	out := make([]Trace, len(specs))
	for i, sp := range specs {
		f, g := sp.s.sweep(2.0e9, 2.9e9, n)
		out[i] = Trace{ID: sp.id, Name: sp.name, FreqHz: f, Gamma: g}
	}
	out[3].Dashed = true
	return out
}

func pow10(x float64) float64 { return math.Pow(10, x) }
