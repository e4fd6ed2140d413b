package amp

import (
	"math"
	"math/cmplx"
)

// Circle is a circle |Γ − Center| = Radius in a reflection plane, or, when
// Line is set, the straight line through Center perpendicular to Normal (a
// circle through ∞, which a locus becomes when its quadratic term vanishes).
// For a line, Center is the line's point nearest the origin, Normal is a
// unit vector and Radius is +∞.
type Circle struct {
	Center complex128
	Radius float64
	Line   bool
	Normal complex128
}

// Point returns the point of c at angle θ (radians) seen from its centre,
// Center + Radius·e^(jθ). For a line it returns the point reached by
// running along the line from Center by tan(θ/2) (θ = ±π is the point at
// ∞ and gives an infinite value), so that θ ∈ (−π, π) covers the line once.
func (c Circle) Point(theta float64) complex128 {
	if c.Line {
		return c.Center + complex(0, 1)*c.Normal*complex(math.Tan(theta/2), 0)
	}
	return c.Center + cmplx.Rect(c.Radius, theta)
}

// Side says where the stable terminations lie relative to a
// [StabilityCircle].
type Side int

const (
	// Inside: the stable terminations lie inside the circle.
	Inside Side = iota + 1
	// Outside: the stable terminations lie outside the circle.
	Outside
	// NormalSide: the circle is a line and the stable terminations lie on
	// the side its Normal points to.
	NormalSide
	// Everywhere: every termination is stable (a unilateral device with
	// S22 = 0, say, whose circle has shrunk to nothing).
	Everywhere
	// Nowhere: no termination is stable.
	Nowhere
)

// String returns "inside", "outside", "normal_side", "everywhere" or
// "nowhere".
func (s Side) String() string {
	switch s {
	case Inside:
		return "inside"
	case Outside:
		return "outside"
	case NormalSide:
		return "normal_side"
	case Everywhere:
		return "everywhere"
	case Nowhere:
		return "nowhere"
	}
	return "unknown"
}

// StabilityCircle is the boundary between the terminations of one port that
// keep the other port's reflection below 1 and those that do not, with the
// side on which the stable ones lie.
type StabilityCircle struct {
	Circle
	Stable Side
}

// IsStable reports whether the termination g lies on the stable side of c.
// Points on the boundary are not stable.
func (c StabilityCircle) IsStable(g complex128) bool {
	switch c.Stable {
	case Inside:
		return cmplx.Abs(g-c.Center) < c.Radius
	case Outside:
		return cmplx.Abs(g-c.Center) > c.Radius
	case NormalSide:
		return real(cmplx.Conj(c.Normal)*(g-c.Center)) > 0
	case Everywhere:
		return true
	}
	return false
}

// DiscStable reports whether every passive termination (|Γ| < 1) lies on
// the stable side of c.
func (c StabilityCircle) DiscStable() bool {
	switch c.Stable {
	case Inside:
		return c.Radius-cmplx.Abs(c.Center) >= 1
	case Outside:
		return cmplx.Abs(c.Center)-c.Radius >= 1
	case NormalSide:
		// The origin must be on the stable side, at least 1 from the line.
		return real(cmplx.Conj(c.Normal)*(-c.Center)) >= 1
	case Everywhere:
		return true
	}
	return false
}

// locus returns the set a·|Γ|² − 2·Re(b·Γ) + e = 0 and the side on which
// a·|Γ|² − 2·Re(b·Γ) + e > 0. For a ≠ 0 it is the circle with centre b*/a
// and radius r (the caller passes r from its own closed form, which is more
// accurate than √(|b|² − a·e)/|a|); for a = 0 it is the line
// Re(b·Γ) = e/2.
func locus(a float64, b complex128, e, r float64) (Circle, Side) {
	switch {
	case a > 0:
		return Circle{Center: cmplx.Conj(b) / complex(a, 0), Radius: r}, Outside
	case a < 0:
		return Circle{Center: cmplx.Conj(b) / complex(a, 0), Radius: r}, Inside
	}
	bm := cmplx.Abs(b)
	if bm == 0 {
		// No Γ-dependence left: the sign of e decides everything.
		c := Circle{Radius: math.Inf(1), Line: true, Normal: 1}
		if e > 0 {
			return c, Everywhere
		}
		return c, Nowhere
	}
	// Re(b·Γ) = |b|·Re(n̄·Γ) with n = b*/|b|, so the line is Re(n̄·Γ) = d,
	// d = e/(2|b|), its nearest point to the origin is n·d, and the form is
	// positive where Re(n̄·Γ) < d: on the side of −n.
	n := cmplx.Conj(b) / complex(bm, 0)
	d := e / (2 * bm)
	return Circle{Center: n * complex(d, 0), Radius: math.Inf(1), Line: true, Normal: -n}, NormalSide
}
