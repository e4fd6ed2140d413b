package deembed_test

import (
	"fmt"
	"math"
	"math/cmplx"

	"matchbench/rfmath"
	"matchbench/rfmath/deembed"
)

// An open seen through 0.1 ns of line reads 1∠−72° at 1 GHz; the port
// extension puts it back at 1∠0° (REFERENCE-CHECKS §10).
func ExampleExtension_Reflection() {
	e := deembed.Extension{DelayS: 0.1e-9}
	g := cmplx.Rect(1, -72*math.Pi/180) * e.Reflection(1e9)
	fmt.Printf("%.4g ∠ %.4g°\n", cmplx.Abs(g), cmplx.Phase(g)*180/math.Pi)
	// Output:
	// 1 ∠ 0°
}

// Fitting the extension of 30 cm of PTFE coax from its open end.
func ExampleFitExtension() {
	l := rfmath.Line{Z0Ohm: 50, LengthM: 0.3, VelocityFactor: 0.695, LossDBPerM: 1, LossRefHz: 1e9}
	s := rfmath.NewSweep(300, 1, 50)
	for k := range 300 {
		s.FreqHz[k] = 10e6 * float64(k+1)
		s.Data[k] = l.ABCD(s.FreqHz[k]).InputGamma(1, 50)
	}
	fit, err := deembed.FitExtension(s, deembed.Open, nil)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("delay %.4g ns, loss %.4g dB at 1 GHz\n", fit.Extension.DelayS*1e9, fit.Extension.OneWayLossDB(1e9))
	// Output:
	// delay 1.44 ns, loss 0.3 dB at 1 GHz
}

// A 100 Ω load reads Γ = 1/3 in 50 Ω and 0.1429 in 75 Ω (§11); seen from a
// source of 25 + j25 Ω a 50 Ω load reads Γ' = 0.4 + j0.2.
func ExampleComplexRefTo() {
	s := rfmath.NewSweep(1, 1, 50)
	s.FreqHz[0], s.Data[0] = 1e9, 1.0/3
	r, _ := deembed.RenormalizeAll(s, 75)
	fmt.Printf("%.4g\n", real(r.Data[0]))
	g, _ := deembed.ComplexRefTo(nil, []complex128{0}, 50, complex(25, 25))
	fmt.Printf("%.4g\n", g[0])
	// Output:
	// 0.1429
	// (0.4+0.2i)
}
