package rfmath_test

import (
	"fmt"
	"math"
	"math/cmplx"

	"matchbench/rfmath"
)

// The match figures of 75 + j40 Ω on a 50 Ω line (REFERENCE-CHECKS §3 N-1).
func ExampleGammaFromZ() {
	g := rfmath.GammaFromZ(75+40i, 50)
	m := cmplx.Abs(g)
	fmt.Printf("Γ = %.4g ∠ %.4g°\n", m, rfmath.AngleDeg(g))
	fmt.Printf("VSWR %.4g, RL %.4g dB, ML %.4g dB\n", rfmath.VSWR(m), rfmath.ReturnLossDB(m), rfmath.MismatchLossDB(m))
	// Output:
	// Γ = 0.3594 ∠ 40.25°
	// VSWR 2.122, RL 8.888 dB, ML 0.6007 dB
}

// A return loss written as "S11 = −14 dB" means the same as 14 dB.
func ExampleGammaMagFromReturnLossDB() {
	for _, rl := range []float64{14, -14} {
		m := rfmath.GammaMagFromReturnLossDB(rl)
		fmt.Printf("%g dB: |Γ| = %.4g, VSWR %.4g\n", rl, m, rfmath.VSWR(m))
	}
	// Output:
	// 14 dB: |Γ| = 0.1995, VSWR 1.499
	// -14 dB: |Γ| = 0.1995, VSWR 1.499
}

// A reactance read at a marker, as the part that would give it.
func ExampleSeriesEquivalent() {
	e := rfmath.SeriesEquivalent(12-159.154943i, 100e6)
	fmt.Printf("%s = %.4g pF\n", e.Kind, e.Value*1e12)
	// Output:
	// C = 10 pF
}

// A series 50 Ω resistor as a two-port, measured in 50 Ω and seen in 75 Ω
// (REFERENCE-CHECKS §11).
func ExampleRenormalize() {
	s := []complex128{1.0 / 3, 2.0 / 3, 2.0 / 3, 1.0 / 3}
	s75, err := rfmath.Renormalize(nil, s, 2, []float64{50, 50}, []float64{75, 75})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("S11 = %.4g, S21 = %.4g\n", real(s75[0]), real(s75[2]))
	// Output:
	// S11 = 0.25, S21 = 0.75
}

// An L-network that matches 200 − j100 Ω to 100 Ω at 500 MHz
// (REFERENCE-CHECKS §6a): the ladder is listed from the load toward the
// source.
func ExampleLadder() {
	l := rfmath.Ladder{
		rfmath.ShuntC{CF: 0.92282e-12}, // across the load
		rfmath.SeriesL{LH: 38.985e-9},  // toward the source
	}
	freq := []float64{450e6, 500e6, 550e6}
	load := make([]complex128, len(freq))
	for k := range load {
		load[k] = rfmath.GammaFromZ(200-100i, 100)
	}
	g := l.InputGammaTo(nil, freq, load, 100)
	for k, f := range freq {
		fmt.Printf("%.4g MHz: RL %.4g dB\n", f/1e6, rfmath.ReturnLossDB(cmplx.Abs(g[k])))
	}
	// Output:
	// 450 MHz: RL 22.59 dB
	// 500 MHz: RL 94.52 dB
	// 550 MHz: RL 21.98 dB
}

// A quarter-wave line inverts the load: 100 Ω becomes Z0²/ZL = 25 Ω
// (REFERENCE-CHECKS §4).
func ExampleLineInputImpedance() {
	z := rfmath.LineInputImpedance(100, 50, math.Pi/2)
	fmt.Printf("%.4g Ω\n", real(z))
	// Output:
	// 25 Ω
}

// Finding the resonance of a series RLC (REFERENCE-CHECKS §9 R-1, R-6).
func ExampleResonanceQ() {
	const n = 15001
	freq := make([]float64, n)
	z := make([]complex128, n)
	for k := range freq {
		f := 100e6 + 150e6*float64(k)/(n-1)
		freq[k] = f
		z[k] = 5 + rfmath.ImpedanceOfL(100e-9, f) + rfmath.ImpedanceOfC(10e-12, f)
	}
	for _, c := range rfmath.ReactanceZeroCrossings(freq, z) {
		r, err := rfmath.ResonanceQ(freq, z, c)
		if err != nil {
			fmt.Println(err)
			continue
		}
		fmt.Printf("series %v at %.4g MHz, R %.4g Ω, Q %.4g\n", r.Series, r.FreqHz/1e6, r.ROhm, r.Q)
	}
	// Output:
	// series true at 159.2 MHz, R 5 Ω, Q 20
}

// Bands of a reflection sweep with return loss of at least 10 dB.
func ExampleDips() {
	freq := []float64{1e9, 1.1e9, 1.2e9, 1.3e9, 1.4e9, 1.5e9}
	gamma := []complex128{0.9, 0.5, 0.1, 0.05, 0.2, 0.8}
	for _, d := range rfmath.Dips(freq, gamma, 10) {
		fmt.Printf("deepest %.4g GHz at %.4g dB, band %.4g–%.4g GHz\n", d.FreqHz/1e9, d.ReturnLossDB, d.LoHz/1e9, d.HiHz/1e9)
	}
	// Output:
	// deepest 1.3 GHz at 26.02 dB, band 1.146–1.419 GHz
}
