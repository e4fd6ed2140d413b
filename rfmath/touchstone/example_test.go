package touchstone_test

import (
	"fmt"
	"math"
	"math/cmplx"
	"os"
	"strings"

	"matchbench/rfmath/touchstone"
)

func ExampleRead() {
	const file = `! a 100 ohm load, version 1 Z data normalised to R
# MHz Z RI R 50
100 2 0
`
	f, err := touchstone.Read(strings.NewReader(file), "load.s1p", touchstone.Limits{})
	if err != nil {
		fmt.Println(err)
		return
	}
	g := f.Sweep.At(0, 0, 0)
	fmt.Printf("%s %c %s: %.4g Hz, |S11| = %.4g at %.4g°\n", f.Version, f.Param, f.Format, f.Sweep.FreqHz[0], cmplx.Abs(g), math.Abs(cmplx.Phase(g)))

	_, err = touchstone.Read(strings.NewReader("# GHz S RI R 50\n1 0.5\n"), "bad.s1p", touchstone.Limits{})
	fmt.Println(err)
	// Output:
	// 1.1 Z RI: 1e+08 Hz, |S11| = 0.3333 at 0°
	// bad.s1p:2:1: touchstone: a frequency point starts on a new line with the frequency and whole pairs, an odd count of numbers; this line has 2
}

func ExampleWrite() {
	f, err := touchstone.Read(strings.NewReader("# GHz S MA R 50\n1 0.5 90\n2 0.25 180\n"), "a.s1p", touchstone.Limits{})
	if err != nil {
		fmt.Println(err)
		return
	}
	err = touchstone.Write(os.Stdout, f.Sweep, touchstone.WriteOptions{Version: 2, Format: "RI", FreqUnit: "MHz"})
	if err != nil {
		fmt.Println(err)
	}
	// Output:
	// [Version] 2.1
	// # MHz S RI R 50
	// [Number of Ports] 1
	// [Number of Frequencies] 2
	// [Network Data]
	// 1000 0 0.5
	// 2000 -0.25 0
	// [End]
}
