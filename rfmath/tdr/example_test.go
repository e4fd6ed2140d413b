package tdr_test

import (
	"fmt"
	"math"
	"math/cmplx"

	"matchbench/rfmath/tdr"
)

// The exact case of REFERENCE-CHECKS §12: a 100 Ω load 1 ns down a 50 Ω
// line, swept 0–1000 MHz in 10 MHz steps, shows at 2 ns round trip as a
// step of 1/3, that is 100 Ω; in VF 0.66 coax that is 19.8 cm away.
func ExampleTransform() {
	var f []float64
	var g []complex128
	for k := 0; k <= 100; k++ {
		fk := 10e6 * float64(k)
		f = append(f, fk)
		g = append(g, complex(1.0/3, 0)*cmplx.Exp(complex(0, -2*math.Pi*fk*2e-9)))
	}
	r, err := tdr.Transform(f, g, nil)
	if err != nil {
		fmt.Println(err)
		return
	}
	i := r.Index(2e-9)
	fmt.Printf("t = %.4g ns, h = %.4g, step %.4g, Z = %.4g Ω, d = %.4g m\n",
		r.TimeS[i]*1e9, r.Impulse[i], r.Step[i], tdr.Impedance(r.Step[i], 50), tdr.Distance(r.TimeS[i], 0.66))
	// Output:
	// t = 2 ns, h = 0.3333, step 0.3333, Z = 100 Ω, d = 0.1979 m
}

func ExampleParseWindow() {
	w, err := tdr.ParseWindow("kaiser:6")
	fmt.Println(w, err, w.At(0), fmt.Sprintf("%.4g", w.At(1)))
	// Output:
	// kaiser:6 <nil> 1 0.01487
}
