package amp_test

import (
	"fmt"
	"math"
	"math/cmplx"

	"matchbench/rfmath/amp"
	"matchbench/rfmath/touchstone"
)

func polar(m, deg float64) complex128 { return cmplx.Rect(m, deg*math.Pi/180) }

func show(g complex128) string {
	return fmt.Sprintf("%.4g∠%.4g°", cmplx.Abs(g), cmplx.Phase(g)*180/math.Pi)
}

// The conjugate-matched design of a GaAs FET at 4 GHz (the inputs of the
// worked example in Pozar's amplifier chapter, from memory).
func ExampleConjugateMatch() {
	s := [4]complex128{polar(0.72, -116), polar(0.03, 57), polar(2.60, 76), polar(0.73, -54)}
	st := amp.StabilityOf(s)
	fmt.Printf("K = %.4g, |Δ| = %.4g, μ = %.4g\n", st.K, st.DeltaMag, st.Mu)
	gs, gl, err := amp.ConjugateMatch(s)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("Γs = %s, ΓL = %s\n", show(gs), show(gl))
	fmt.Printf("G_T = %.4g dB\n", amp.DB(amp.TransducerGain(s, gs, gl)))
	// Output:
	// K = 1.195, |Δ| = 0.4875, μ = 1.04
	// Γs = 0.8718∠123.4°, ΓL = 0.8763∠61.03°
	// G_T = 16.71 dB
}

// A potentially unstable device has no conjugate match; its stability
// circles say where the unstable terminations are.
func ExampleOutputStabilityCircle() {
	s := [4]complex128{polar(0.894, -60.6), polar(0.020, 62.4), polar(3.122, 123.6), polar(0.781, -27.6)}
	c := amp.OutputStabilityCircle(s)
	fmt.Printf("load plane: centre %s, radius %.4g, stable %v\n", show(c.Center), c.Radius, c.Stable)
	_, _, err := amp.ConjugateMatch(s)
	fmt.Println(err)
	// Output:
	// load plane: centre 1.363∠46.69°, radius 0.4997, stable outside
	// amp: no simultaneous conjugate match: the device is only conditionally stable (K = 0.6071 ≤ 1), so some passive source or load makes it oscillate
}

// The 2 dB noise circle of a GaAs FET with NFmin = 1.6 dB, Γopt = 0.62∠100°
// and Rn = 20 Ω (Pozar's low-noise example, from memory).
func ExampleNoiseCircle() {
	p := touchstone.NoisePoint{FreqHz: 4e9, NFminDB: 1.6, GammaOptMag: 0.62, GammaOptDeg: 100, RnOhm: 20}
	c, err := amp.NoiseCircle(p, 50, 2)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("centre %s, radius %.4g\n", show(c.Center), c.Radius)
	fmt.Printf("NF from 50 Ω: %.4g dB\n", amp.NoiseFigureDB(p, 50, 0))
	// Output:
	// centre 0.5627∠100°, radius 0.2454
	// NF from 50 Ω: 2.948 dB
}
