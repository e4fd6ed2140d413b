package chartsvg

import (
	"math"
	"math/cmplx"
)

// pt is a point in SVG user units (pixels of the chart's native size).
type pt struct{ x, y float64 }

// ZToGamma returns the reflection coefficient of the normalised impedance z:
//
//	Γ = (z − 1) / (z + 1)
//
// Special cases:
//
//	ZToGamma(∞) = 1 (any infinite z)
//	ZToGamma(−1) = ∞ (complex infinity)
func ZToGamma(z complex128) complex128 {
	if cmplx.IsInf(z) {
		return 1
	}
	return (z - 1) / (z + 1)
}

// YToGamma returns the reflection coefficient of the normalised admittance y:
//
//	Γ = (1 − y) / (1 + y) = −ZToGamma(y)
//
// so the admittance grid is the impedance grid turned through 180° about the
// centre of the chart. YToGamma(∞) = −1.
func YToGamma(y complex128) complex128 { return -ZToGamma(y) }

// circle is a circle in the Γ plane.
type circle struct {
	c complex128
	r float64
}

// Constant-value loci of the bilinear map, from Γ = (z − 1)/(z + 1):
//
//	r = const: centre (r/(1+r), 0),  radius 1/(1+r)
//	x = const: centre (1, 1/x),      radius 1/|x|
//
// and the admittance loci are the same turned through 180° about the origin:
//
//	g = const: centre (−g/(1+g), 0), radius 1/(1+g)
//	b = const: centre (−1, −1/b),    radius 1/|b|
func rCircle(r float64) circle { return circle{complex(r/(1+r), 0), 1 / (1 + r)} }
func xCircle(x float64) circle { return circle{complex(1, 1/x), 1 / math.Abs(x)} }

// qCircle returns the circle of constant loaded Q = |X|/R in the upper half
// (upper = true, X > 0) or lower half of the chart. Every such circle passes
// through Γ = ±1; its centre is (0, ∓1/Q) and its radius √(1 + 1/Q²).
func qCircle(q float64, upper bool) circle {
	c := -1 / q
	if !upper {
		c = -c
	}
	return circle{complex(0, c), math.Sqrt(1 + 1/(q*q))}
}

// GammaToXY maps Γ to the chart's SVG user coordinates. The viewBox is
// centred on Γ = 0 with y pointing down, so
//
//	x = K·Re Γ,  y = −K·Im Γ,  K = c.Scale()
//
// and the page inverts it as Γ = (x, −y)/K.
func (c *Chart) GammaToXY(g complex128) (x, y float64) {
	k := c.Scale()
	return k * real(g), -k * imag(g)
}

// XYToGamma is the inverse of GammaToXY.
func (c *Chart) XYToGamma(x, y float64) complex128 {
	k := c.Scale()
	return complex(x/k, -y/k)
}

// wrap2pi returns a in [0, 2π).
func wrap2pi(a float64) float64 {
	a = math.Mod(a, 2*math.Pi)
	if a < 0 {
		a += 2 * math.Pi
	}
	return a
}

// circleCrossings returns the points where the circle a meets the circle b,
// and false when they do not meet in two points.
func circleCrossings(a, b circle) (p, q complex128, ok bool) {
	d := b.c - a.c
	dist := cmplx.Abs(d)
	if dist == 0 || dist > a.r+b.r || dist < math.Abs(a.r-b.r) {
		return 0, 0, false
	}
	along := (a.r*a.r - b.r*b.r + dist*dist) / (2 * dist)
	h := math.Sqrt(math.Max(0, a.r*a.r-along*along))
	u := d / complex(dist, 0)
	m := a.c + u*complex(along, 0)
	n := u * complex(0, h)
	return m + n, m - n, true
}
