package chartsvg

import (
	"io"
	"math"
	"math/cmplx"
)

// # Regions and spots
//
// A Region is a circle of the Γ plane, or a straight line (a circle
// through ∞), drawn from its numbers with one side shaded: the stability
// circles of an amplifier with their unstable side, circles of constant
// gain or noise figure with nothing shaded. Regions are drawn above the
// grid and below the traces, clipped to the shown disc, in the layer
// P+"regions" with one group P+"region-"+Region.ID each.
//
// A Spot is a labelled point: a reflection such as Γopt or the conjugate
// match, or (Handle set) a termination the page lets the user drag. Spots
// are drawn on top of everything else in the layer P+"spots", each in a
// group P+"spot-"+Spot.ID placed by transform="translate(x y)" with
// data-re and data-im holding its Γ.

// Shade says which side of a [Region] is shaded.
type Shade int

const (
	// ShadeNone draws the outline only.
	ShadeNone Shade = iota
	// ShadeInside shades the inside of the circle.
	ShadeInside
	// ShadeOutside shades the outside of the circle.
	ShadeOutside
	// ShadeNormal shades the side of a line its Normal points to;
	// ShadeAgainst the other side.
	ShadeNormal
	ShadeAgainst
	// ShadeAll shades the whole disc (every termination is on the shaded
	// side).
	ShadeAll
)

// Region is a circle |Γ − Center| = Radius or, when Line is set, the
// straight line through Center perpendicular to the unit vector Normal,
// with the side Shade shaded. A circle of radius zero is drawn as a dot.
type Region struct {
	ID     string
	Center complex128
	Radius float64
	Line   bool
	Normal complex128
	Shade  Shade
	// Color is the outline's and the shading's colour; Dashed draws the
	// outline dashed. Label, when set, is written on the outline where it
	// comes nearest the centre of the chart.
	Color  string
	Dashed bool
	Label  string
}

// Spot is a labelled point of the Γ plane; Handle draws it as a handle to
// drag (a larger ring with a cross).
type Spot struct {
	ID     string
	Gamma  complex128
	Label  string
	Color  string
	Handle bool
}

// Colours of the regions: a warm red for the unstable side.
const (
	colRegion     = "#9c2f2f"
	regionOpacity = ".14"
)

// RenderRegions writes the regions layer alone: <g id="regions"> holding
// one <g id="region-ID"> per region of c.Regions.
func (c *Chart) RenderRegions(w io.Writer) error {
	sw := getWriter(w)
	c.regions(sw, c.layout())
	return sw.done()
}

// RenderSpots writes the spots layer alone: <g id="spots"> holding one
// <g id="spot-ID"> per spot of c.Spots.
func (c *Chart) RenderSpots(w io.Writer) error {
	sw := getWriter(w)
	c.spots(sw, c.layout())
	return sw.done()
}

// RenderSpot writes one spot's group, <g id="spot-ID">, to replace that
// element inside the spots layer.
func (c *Chart) RenderSpot(w io.Writer, s Spot) error {
	sw := getWriter(w)
	c.spot(sw, c.layout(), &s)
	return sw.done()
}

func (c *Chart) regions(sw *writer, l layout) {
	sw.s(`<g`)
	c.id(sw, "regions")
	if len(c.Regions) == 0 {
		sw.s(`></g>`)
		sw.maybeFlush()
		return
	}
	// The regions' own clip: the shown disc, or, on a chart zoomed off
	// Γ = 0, the unit disc inside the chart's clip of the shown disc.
	off := !l.centred()
	sw.s(` clip-path="url(#`)
	sw.text(c.IDPrefix)
	sw.s(`rclip)"><defs><clipPath`)
	c.id(sw, "rclip")
	sw.s(`><circle`)
	if off {
		o := l.o()
		sw.numAttr("cx", o.x)
		sw.numAttr("cy", o.y)
		sw.numAttr("r", l.k)
	} else {
		sw.numAttr("r", l.rpx)
	}
	sw.s(`/></clipPath></defs>`)
	if off {
		sw.s(`<g`)
		c.clipAttr(sw, l)
		sw.b('>')
	}
	for i := range c.Regions {
		c.region(sw, l, &c.Regions[i])
	}
	if off {
		sw.s(`</g>`)
	}
	sw.s(`</g>`)
	sw.maybeFlush()
}

// regionSpan is how far, in Γ units, a line is drawn either side of its
// point nearest the origin, and how deep its shaded half-plane reaches: far
// beyond the shown disc.
func regionSpan(r *Region, l layout) float64 {
	return cmplx.Abs(r.Center) + 4*l.zoom + 4
}

func (c *Chart) region(sw *writer, l layout, r *Region) {
	col := r.Color
	if col == "" {
		col = colRegion
	}
	sw.s(`<g`)
	c.id2(sw, "region-", r.ID)
	sw.s(` stroke="`)
	sw.text(col)
	sw.s(`" fill="`)
	sw.text(col)
	sw.s(`">`)
	valid := finite(r.Center) && !math.IsNaN(r.Radius) && (r.Line && finite(r.Normal) && r.Normal != 0 || !r.Line && !math.IsInf(r.Radius, 0) && r.Radius >= 0)
	if !valid {
		sw.s(`</g>`)
		return
	}
	// The shaded side.
	shade := func(open string) {
		sw.s(`<path stroke="none" fill-opacity="` + regionOpacity + `" ` + open + `d="`)
	}
	switch {
	case r.Shade == ShadeAll:
		shade("")
		discPath(sw, l)
		sw.s(`"/>`)
	case r.Line && (r.Shade == ShadeNormal || r.Shade == ShadeAgainst):
		n := r.Normal / complex(cmplx.Abs(r.Normal), 0)
		if r.Shade == ShadeAgainst {
			n = -n
		}
		u := complex(0, 1) * n
		s := complex(regionSpan(r, l), 0)
		shade("")
		polyPath(sw, l, []complex128{r.Center - s*u, r.Center + s*u, r.Center + s*u + s*n, r.Center - s*u + s*n})
		sw.s(`"/>`)
	case !r.Line && r.Shade == ShadeInside && r.Radius > 0:
		shade("")
		circlePath(sw, l, r.Center, r.Radius)
		sw.s(`"/>`)
	case !r.Line && r.Shade == ShadeOutside:
		shade(`fill-rule="evenodd" `)
		discPath(sw, l)
		if r.Radius > 0 {
			circlePath(sw, l, r.Center, r.Radius)
		}
		sw.s(`"/>`)
	}
	// The outline.
	dash := ""
	if r.Dashed {
		dash = ` stroke-dasharray="6 4"`
	}
	switch {
	case r.Line:
		u := complex(0, 1) * r.Normal / complex(cmplx.Abs(r.Normal), 0)
		s := complex(regionSpan(r, l), 0)
		sw.s(`<path fill="none" stroke-width="1.6"` + dash + ` d="`)
		polyPath(sw, l, []complex128{r.Center - s*u, r.Center + s*u})
		sw.s(`"/>`)
	case r.Radius == 0:
		p := l.xy(r.Center)
		sw.s(`<circle stroke="none" r="2.5" cx="`)
		sw.num(p.x)
		sw.s(`" cy="`)
		sw.num(p.y)
		sw.s(`"/>`)
	default:
		p := l.xy(r.Center)
		sw.s(`<circle fill="none" stroke-width="1.6"` + dash + ` cx="`)
		sw.num(p.x)
		sw.s(`" cy="`)
		sw.num(p.y)
		sw.s(`" r="`)
		sw.num(r.Radius * l.k)
		sw.s(`"/>`)
	}
	if r.Label != "" {
		if at, ok := r.labelPoint(l); ok {
			sw.s(`<g stroke="none" font-size="`)
			sw.num(chartFontPx)
			sw.s(`"` + labelStyle + `>`)
			textAt(sw, l.xy(at), 0, r.Label)
			sw.s(`</g>`)
		}
	}
	sw.s(`</g>`)
}

// labelPoint returns where a region's label goes: its outline's point
// nearest the origin (a line's Center; a circle's point toward the origin,
// or its top when it is centred there), when that lies inside the shown
// disc and inside the chart.
func (r *Region) labelPoint(l layout) (complex128, bool) {
	var p complex128
	switch {
	case r.Line:
		p = r.Center
	case cmplx.Abs(r.Center) == 0:
		p = complex(0, r.Radius)
	default:
		d := r.Center / complex(cmplx.Abs(r.Center), 0)
		p = r.Center - d*complex(r.Radius, 0)
	}
	return p, cmplx.Abs(p-l.c) <= 0.97*l.zoom && cmplx.Abs(p) <= 0.97
}

// discPath appends the shown disc as a closed path: the disc of radius
// zoom about its centre when that lies on Γ = 0, else the unit disc (the
// regions' clip keeps the shown part of it).
func discPath(sw *writer, l layout) {
	if !l.centred() {
		circlePath(sw, l, 0, 1)
		return
	}
	r := l.zoom
	arcPath(sw, l, r, complex(-r, 0), complex(r, 0), complex(-r, 0), 0)
	sw.b('z')
}

// circlePath appends the circle of centre o and radius r (Γ units) as a
// closed path.
func circlePath(sw *writer, l layout, o complex128, r float64) {
	p := o - complex(r, 0)
	arcPath(sw, l, r, p, o+complex(r, 0), p, o)
	sw.b('z')
}

// polyPath appends the polygon (or, with two points, the segment)
// through pts.
func polyPath(sw *writer, l layout, pts []complex128) {
	for i, g := range pts {
		p := l.xy(g)
		if i == 0 {
			sw.b('M')
			sw.xy(tenths(p.x), tenths(p.y))
			continue
		}
		sw.b('L')
		sw.xy(tenths(p.x), tenths(p.y))
	}
	if len(pts) > 2 {
		sw.b('z')
	}
}

func (c *Chart) spots(sw *writer, l layout) {
	sw.s(`<g`)
	c.id(sw, "spots")
	c.clipAttr(sw, l)
	sw.s(` font-size="11.5" font-weight="bold">`)
	for i := range c.Spots {
		c.spot(sw, l, &c.Spots[i])
	}
	sw.s(`</g>`)
}

func (c *Chart) spot(sw *writer, l layout, s *Spot) {
	col := s.Color
	if col == "" {
		col = colInk
	}
	p := pt{}
	if finite(s.Gamma) {
		p = l.xy(s.Gamma)
	}
	sw.s(`<g`)
	c.id2(sw, "spot-", s.ID)
	sw.s(` transform="translate(`)
	sw.num(p.x)
	sw.b(' ')
	sw.num(p.y)
	sw.s(`)" data-re="`)
	sw.g(real(s.Gamma), 6)
	sw.s(`" data-im="`)
	sw.g(imag(s.Gamma), 6)
	sw.s(`" stroke="`)
	sw.text(col)
	sw.b('"')
	if s.Handle {
		sw.s(` class="handle"><circle r="12" fill="#fff" fill-opacity=".01" stroke="none"/><circle r="7" fill="#fff" fill-opacity=".8" stroke-width="2"/><path stroke-width="1.6" d="M-4 0h8M0-4v8"/>`)
	} else {
		sw.s(`><circle r="3.5" fill="`)
		sw.text(col)
		sw.s(`" stroke="#fff" stroke-width="1"/>`)
	}
	if s.Label != "" {
		sw.s(`<text x="9" y="-8" fill="`)
		sw.text(col)
		sw.s(`" stroke="#fff" stroke-width="3" paint-order="stroke">`)
		sw.text(s.Label)
		sw.s(`</text>`)
	}
	sw.s(`</g>`)
}
