package chartsvg

import (
	"io"
	"math"
	"strconv"
)

// Shape is the outline of a marker.
type Shape int

// The marker shapes. ShapeAuto picks one from the marker's number, so that
// markers 1 to 8 each get their own outline.
const (
	ShapeAuto Shape = iota
	ShapeCircle
	ShapeSquare
	ShapeTriangle
	ShapeDiamond
	ShapeTriangleDown
	ShapeHexagon
	ShapeCross
	ShapeStar
	numShapes
)

// shapePaths holds each outline centred on (0, 0), about 12 units across,
// with a short dash at the centre that shows the exact point.
var shapePaths = [numShapes]string{
	ShapeCircle:       "M-5.5 0a5.5 5.5 0 1 0 11 0a5.5 5.5 0 1 0-11 0z",
	ShapeSquare:       "M-4.8-4.8h9.6v9.6h-9.6z",
	ShapeTriangle:     "M0-6.8l6.2 10.6h-12.4z",
	ShapeDiamond:      "M0-6.8l6.8 6.8-6.8 6.8-6.8-6.8z",
	ShapeTriangleDown: "M0 6.8l6.2-10.6h-12.4z",
	ShapeHexagon:      "M5.8 0l-2.9 5-5.8 0-2.9-5 2.9-5 5.8 0z",
	ShapeCross:        "M-2-6.2h4v4.2h4.2v4h-4.2v4.2h-4v-4.2h-4.2v-4h4.2z",
	ShapeStar:         starPath(7, 3),
}

// starPath returns a five-pointed star of outer radius ro and inner ri.
func starPath(ro, ri float64) string {
	b := []byte{'M'}
	for i := 0; i < 10; i++ {
		r := ro
		if i%2 == 1 {
			r = ri
		}
		th := -math.Pi/2 + float64(i)*math.Pi/5
		if i > 0 {
			b = append(b, 'L')
		}
		b = appendTenths(b, tenths(r*math.Cos(th)))
		b = append(b, ' ')
		b = appendTenths(b, tenths(r*math.Sin(th)))
	}
	return string(append(b, 'z'))
}

// centreDot marks the exact point inside every outline.
const centreDot = "M-.9 0h1.8"

// shapeFor returns the outline for marker number num: ShapeCircle for 1,
// ShapeSquare for 2 and so on, cycling after 8.
func shapeFor(s Shape, num int) Shape {
	if s > ShapeAuto && s < numShapes {
		return s
	}
	if num < 1 {
		num = 1
	}
	return Shape((num-1)%int(numShapes-1) + 1)
}

// Marker is a numbered point on the chart.
type Marker struct {
	// ID names the marker; its group is written with id "mk-ID".
	ID string
	// Num is the number written beside the marker and chooses its shape.
	Num int
	// Label is optional short text written after the number.
	Label string
	// Gamma is where the marker is drawn.
	Gamma complex128
	// FreqHz is the marker's frequency, written as data-f when positive.
	FreqHz float64
	// Trace is the ID of the trace the marker sits on, written as
	// data-trace when set.
	Trace string
	// Color is any SVG colour; empty means the ink colour.
	Color string
	// Shape overrides the outline chosen by Num.
	Shape Shape
}

// markers writes the marker layer.
func (c *Chart) markers(sw *writer, l layout, markers []Marker) {
	sw.s(`<g`)
	c.id(sw, "markers")
	c.clipAttr(sw, l)
	sw.s(` fill="#fff" fill-opacity=".75" stroke-width="1.7" font-size="12" font-weight="bold">`)
	for i := range markers {
		c.marker(sw, l, &markers[i])
	}
	sw.s(`</g>`)
}

// RenderMarkers writes the marker layer alone: <g id="markers"> holding one
// <g id="mk-ID"> per marker. Its work is proportional to the number of
// markers only; it never looks at a trace.
func (c *Chart) RenderMarkers(w io.Writer, markers []Marker) error {
	sw := getWriter(w)
	c.markers(sw, c.layout(), markers)
	return sw.done()
}

// RenderMarker writes one marker's group, <g id="mk-ID">, to replace that
// element inside the markers layer. The group places the marker with
// transform="translate(x y)", so a page may also move it by rewriting that
// attribute alone.
func (c *Chart) RenderMarker(w io.Writer, m Marker) error {
	sw := getWriter(w)
	c.marker(sw, c.layout(), &m)
	return sw.done()
}

func (c *Chart) marker(sw *writer, l layout, m *Marker) {
	col := m.Color
	if col == "" {
		col = colInk
	}
	p := pt{}
	if finite(m.Gamma) {
		p = l.xy(m.Gamma)
	}
	sw.s(`<g`)
	c.id2(sw, "mk-", m.ID)
	// A transform's numbers need a separator even before a minus sign.
	sw.s(` transform="translate(`)
	sw.num(p.x)
	sw.b(' ')
	sw.num(p.y)
	sw.s(`)"`)
	if m.FreqHz > 0 {
		sw.s(` data-f="`)
		sw.g(m.FreqHz, 10)
		sw.b('"')
	}
	if m.Trace != "" {
		sw.attr("data-trace", m.Trace)
	}
	sw.s(` stroke="`)
	sw.text(col)
	sw.s(`"><path d="`)
	sw.s(shapePaths[shapeFor(m.Shape, m.Num)])
	sw.s(centreDot)
	sw.s(`"/><text x="8" y="-8" fill="`)
	sw.text(col)
	sw.s(`" fill-opacity="1" stroke="#fff" stroke-width="3" paint-order="stroke">`)
	sw.buf = strconv.AppendInt(sw.buf, int64(m.Num), 10)
	if m.Label != "" {
		sw.b(' ')
		sw.text(m.Label)
	}
	sw.s(`</text></g>`)
}
