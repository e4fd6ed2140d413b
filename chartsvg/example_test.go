package chartsvg_test

import (
	"fmt"
	"os"

	"matchbench/chartsvg"
)

func ExampleZToGamma() {
	// 75 + j40 Ω in a 50 Ω system.
	z := complex(75, 40) / 50
	g := chartsvg.ZToGamma(z)
	fmt.Printf("z = %.4g, Γ = %.4g\n", z, g)
	// Output:
	// z = (1.5+0.8i), Γ = (0.2743+0.2322i)
}

func ExampleChart_GammaToXY() {
	c := chartsvg.Chart{SizePx: 700}
	x, y := c.GammaToXY(chartsvg.ZToGamma(1 + 1i))
	fmt.Printf("K = %.4g; z = 1+j1 at (%.4g, %.4g); back to Γ = %.4g\n", c.Scale(), x, y, c.XYToGamma(x, y))
	// Output:
	// K = 338; z = 1+j1 at (67.6, -135.2); back to Γ = (0.2+0.4i)
}

func ExampleChart_RenderMarker() {
	c := chartsvg.Chart{}
	m := chartsvg.Marker{ID: "a", Num: 2, Label: "2.45 GHz", Gamma: 0.2 + 0.4i, FreqHz: 2.45e9}
	if err := c.RenderMarker(os.Stdout, m); err != nil {
		fmt.Println(err)
	}
	// Output:
	// <g id="mk-a" transform="translate(67.6 -135.2)" data-f="2450000000" stroke="#1f2328"><path d="M-4.8-4.8h9.6v9.6h-9.6zM-.9 0h1.8"/><text x="8" y="-8" fill="#1f2328" fill-opacity="1" stroke="#fff" stroke-width="3" paint-order="stroke">2 2.45 GHz</text></g>
}

func ExampleFormatHz() {
	fmt.Println(chartsvg.FormatHz(2.4e9), chartsvg.FormatHz(915e6), chartsvg.FormatHz(13.56e6))
	// Output:
	// 2.4 GHz 915 MHz 13.56 MHz
}
