package parts_test

import (
	"fmt"

	"matchbench/rfmath/parts"
)

func ExampleNearest() {
	// The L-section of Pozar Example 5.1 (REFERENCE-CHECKS §6) snapped to
	// E12: 0.92282 pF and 38.985 nH.
	fmt.Printf("%.4g F\n", parts.Nearest(0.92282e-12, "E12"))
	fmt.Printf("%.4g H\n", parts.Nearest(38.985e-9, "E12"))
	// Output:
	// 1e-12 F
	// 3.9e-08 H
}

func ExampleFamily_Inductor() {
	// A typical 0402 10 nH multilayer inductor at 915 MHz: ωL = 57.49 Ω,
	// R = 2.244 Ω·√(915/500) = 3.036 Ω, both raised by the parallel C
	// (SRF 3.5 GHz) by about 1/(1 − (915/3500)²) = 1.073 in X, its square in R.
	l := parts.Typical0402.Inductor(10e-9)
	z := l.ImpedanceAt(915e6)
	fmt.Printf("Q %.3g, SRF %.3g Hz, Z = %.4g\n", l.Q, l.SRFHz, z)
	// Output:
	// Q 14, SRF 3.5e+09 Hz, Z = (3.497+61.7i)
}
