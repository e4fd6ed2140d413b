package chartsvg

import (
	"io"
	"math"
	"math/cmplx"
)

// PathKind says how a matching-path segment runs from its start to its end.
type PathKind int

const (
	// PathConstR runs along the circle of constant resistance through From,
	// as a series reactance is added; it never passes z = ∞ (Γ = +1).
	PathConstR PathKind = iota
	// PathConstG runs along the circle of constant conductance through
	// From, as a shunt susceptance is added; it never passes y = ∞ (Γ = −1).
	PathConstG
	// PathRotate turns clockwise about the centre, from From to the angle of
	// To, as a line of the reference impedance is added toward the generator.
	PathRotate
	// PathPoints is the polyline through Points, for any other path (a line
	// of another impedance, a lossy part).
	PathPoints
)

// PathSegment is one step of a matching path: the track of a design
// frequency's Γ as one part grows from nothing to its value.
type PathSegment struct {
	Kind     PathKind
	From, To complex128
	// Points is used by PathPoints only.
	Points []complex128
	// Fraction, when in (0, 1), draws only that share of the segment from
	// its start: a share of the angle turned for arcs, of the length for
	// PathPoints. Zero or 1 draws the whole segment. (The first frame of an
	// animation leaves the segment out.)
	Fraction float64
	// Color is any SVG colour; empty means the ink colour.
	Color string
	// Label is optional text written beside the segment's end.
	Label string
}

// RenderPath writes the matching-path layer alone: <g id="match-path">. One
// animation frame is one call with the growing segment's Fraction set.
func (c *Chart) RenderPath(w io.Writer, segs []PathSegment) error {
	sw := getWriter(w)
	c.path(sw, c.layout(), segs)
	return sw.done()
}

func (c *Chart) path(sw *writer, l layout, segs []PathSegment) {
	sw.s(`<g`)
	c.id(sw, "match-path")
	c.clipAttr(sw, l)
	sw.s(` fill="none" stroke="` + colPath + `" stroke-width="2.4" stroke-linecap="round">`)
	var end complex128
	for i := range segs {
		end = c.segment(sw, l, &segs[i])
		sw.maybeFlush()
	}
	if len(segs) > 0 {
		// Dots at the start of each segment, a ring at the current end.
		sw.s(`<g fill="` + colPath + `" stroke="#fff" stroke-width="1.2">`)
		for i := range segs {
			p := l.xy(segs[i].start())
			dot(sw, p, 3.2)
		}
		sw.s(`</g>`)
		p := l.xy(end)
		sw.s(`<circle fill="#fff" stroke-width="2" r="5"`)
		sw.numAttr("cx", p.x)
		sw.numAttr("cy", p.y)
		sw.s(`/>`)
	}
	sw.s(`</g>`)
}

func (s *PathSegment) start() complex128 {
	if s.Kind == PathPoints {
		if len(s.Points) == 0 {
			return 0
		}
		return s.Points[0]
	}
	return s.From
}

func dot(sw *writer, p pt, r float64) {
	sw.s(`<circle`)
	sw.numAttr("cx", p.x)
	sw.numAttr("cy", p.y)
	sw.numAttr("r", r)
	sw.s(`/>`)
}

// fraction returns the share of the segment to draw.
func (s *PathSegment) fraction() float64 {
	if s.Fraction > 0 && s.Fraction < 1 {
		return s.Fraction
	}
	return 1
}

// segment writes one segment and returns the Γ where its drawn part ends.
func (c *Chart) segment(sw *writer, l layout, s *PathSegment) complex128 {
	sw.s(`<path`)
	if s.Color != "" {
		sw.attr("stroke", s.Color)
	}
	sw.s(` d="`)
	var end complex128
	switch s.Kind {
	case PathPoints:
		end = polyPart(sw, l, s.Points, s.fraction())
	default:
		cr, a0, sweep, ok := s.circle()
		if !ok {
			end = s.From
			break
		}
		a := a0 + sweep*s.fraction()
		p0 := cr.c + cmplx.Rect(cr.r, a0)
		pm := cr.c + cmplx.Rect(cr.r, a0+(a-a0)/2)
		end = cr.c + cmplx.Rect(cr.r, a)
		arcPath(sw, l, cr.r, p0, pm, end, cr.c)
	}
	sw.s(`"/>`)
	if s.Label != "" {
		p := l.xy(end)
		sw.s(`<text stroke="#fff" stroke-width="3" paint-order="stroke" fill="` + colPath + `" font-size="11"`)
		sw.numAttr("x", p.x+9)
		sw.numAttr("y", p.y-9)
		sw.s(`>`)
		sw.text(s.Label)
		sw.s(`</text>`)
	}
	return end
}

// circle returns the circle an arc segment runs on, the angle of its start
// seen from the circle's centre, and the signed angle it turns.
func (s *PathSegment) circle() (cr circle, a0, sweep float64, ok bool) {
	if !finite(s.From) || !finite(s.To) {
		return circle{}, 0, 0, false
	}
	switch s.Kind {
	case PathConstR:
		r := real(gammaToZ(s.From))
		if !(r >= 0) || math.IsInf(r, 0) {
			return circle{}, 0, 0, false
		}
		cr = rCircle(r)
		// Angles in (0, 2π) from the centre, so that the arc between them
		// never crosses angle 0, where Γ = +1.
		a0 = wrap2pi(cmplx.Phase(s.From - cr.c))
		a1 := wrap2pi(cmplx.Phase(s.To - cr.c))
		return cr, a0, a1 - a0, true
	case PathConstG:
		g := real(gammaToZ(-s.From))
		if !(g >= 0) || math.IsInf(g, 0) {
			return circle{}, 0, 0, false
		}
		cr = rCircle(g)
		cr.c = -cr.c
		// Angles in (−π, π], so that the arc never crosses π, where Γ = −1.
		a0 = cmplx.Phase(s.From - cr.c)
		a1 := cmplx.Phase(s.To - cr.c)
		return cr, a0, a1 - a0, true
	case PathRotate:
		cr = circle{0, cmplx.Abs(s.From)}
		a0 = cmplx.Phase(s.From)
		turn := wrap2pi(a0 - cmplx.Phase(s.To))
		if turn == 0 {
			turn = 2 * math.Pi
		}
		return cr, a0, -turn, cr.r > 0
	}
	return circle{}, 0, 0, false
}

// polyPart appends the first share f (by length) of the polyline pts and
// returns where it ends.
func polyPart(sw *writer, l layout, pts []complex128, f float64) complex128 {
	if len(pts) == 0 {
		return 0
	}
	total := 0.0
	for i := 1; i < len(pts); i++ {
		total += cmplx.Abs(pts[i] - pts[i-1])
	}
	want := total * f
	p := l.xy(pts[0])
	px, py := tenths(p.x), tenths(p.y)
	sw.b('M')
	sw.xy(px, py)
	if len(pts) > 1 {
		sw.b('l')
	}
	end := pts[0]
	for i := 1; i < len(pts); i++ {
		seg := cmplx.Abs(pts[i] - pts[i-1])
		q := pts[i]
		last := false
		if seg >= want {
			if seg > 0 {
				q = pts[i-1] + (pts[i]-pts[i-1])*complex(want/seg, 0)
			}
			last = true
		}
		want -= seg
		e := l.xy(q)
		x, y := tenths(e.x), tenths(e.y)
		sw.pair(x-px, y-py)
		px, py = x, y
		end = q
		if last {
			break
		}
	}
	return end
}
