package chartsvg

import (
	"io"
	"math"
	"strconv"
)

// DefaultSizePx is the chart width used when Chart.SizePx is zero.
const DefaultSizePx = 700

// Chart holds the options of a reflection-plane (Smith) chart. Its zero value
// draws a 700-pixel chart with only the rim and the real axis; set the fields
// to add grids, scales and overlays. A Chart is not changed by rendering, so
// one value may serve concurrent renders.
type Chart struct {
	// SizePx is the width of the drawing in pixels, which is also its width
	// in SVG user units. Zero means DefaultSizePx.
	SizePx int

	// ImpedanceGrid draws circles of constant normalised resistance r and
	// arcs of constant normalised reactance x. AdmittanceGrid draws circles
	// of constant conductance g and arcs of constant susceptance b. Either,
	// both or neither may be on.
	ImpedanceGrid, AdmittanceGrid bool

	// Zoom, when in (0, 1), shows only |Γ| ≤ Zoom, magnified to fill the
	// chart. Zero, or a value ≥ 1, shows the whole chart.
	Zoom float64

	// Centre is the Γ at the middle of a zoomed chart: the chart then shows
	// the disc |Γ − Centre| ≤ Zoom (with the parts of it outside the unit
	// circle left blank). It is ignored, and taken as 0, when the whole
	// chart is shown. The root element carries it as data-gamma-centre
	// ("re im").
	Centre complex128

	// VSWRCircles lists circles of constant VSWR (values > 1) to draw.
	// ReturnLossCircleDB lists circles of constant return loss in dB
	// (positive values, e.g. 10). QArcs lists arcs of constant loaded
	// Q = |X|/R (positive values).
	VSWRCircles        []float64
	ReturnLossCircleDB []float64
	QArcs              []float64

	// AngleScale draws the angle of Γ in degrees around the rim.
	// WavelengthScale draws the wavelengths-toward-generator scale outside it.
	AngleScale, WavelengthScale bool

	// Z0Ohm is the reference impedance that the grid is normalised to; when
	// positive it is written in the chart's caption.
	Z0Ohm float64

	// IDPrefix is put before every element id the chart writes, so that two
	// charts can share a page. See the package documentation for the ids.
	IDPrefix string

	// Title is the accessible name of the drawing (its <title>); empty means
	// "Reflection coefficient chart".
	Title string

	// TolerancePx is how far, in user units, a trace point may lie from the
	// drawn curve when long traces are thinned; zero means
	// DefaultTolerancePx and a negative value keeps every point.
	TolerancePx float64

	// NoLegend leaves out the legend strip below the chart.
	NoLegend bool

	// Tag, when set, is written on the root element as data-tag, so that a
	// page can tell which of its requests a drawing answers.
	Tag string

	// Regions are circles and lines drawn from their numbers with a side
	// shaded, above the grid; Spots are labelled points on top of
	// everything (see regions.go). A nil slice leaves its layer out.
	Regions []Region
	Spots   []Spot
}

// layout is the geometry derived from the options.
type layout struct {
	size float64    // width in user units
	rpx  float64    // radius of the shown disc in user units
	k    float64    // user units per unit of Γ
	zoom float64    // radius in Γ of the shown disc
	c    complex128 // the Γ at the middle of the shown disc
}

// centred reports whether the shown disc is centred on Γ = 0, so that the
// rim scales and the labels at the rim apply.
func (l layout) centred() bool { return l.c == 0 }

// o returns where Γ = 0 is drawn.
func (l layout) o() pt { return l.xy(0) }

func (c *Chart) layout() layout {
	size := float64(c.SizePx)
	if c.SizePx <= 0 {
		size = DefaultSizePx
	}
	margin := 10.0
	if c.AngleScale {
		margin += 24
	}
	if c.WavelengthScale {
		margin += 20
	}
	if !c.AngleScale && !c.WavelengthScale {
		margin += 2
	}
	rpx := size/2 - margin
	zoom := c.Zoom
	if !(zoom > 0 && zoom < 1) {
		zoom = 1
	}
	l := layout{size: size, rpx: rpx, k: rpx / zoom, zoom: zoom}
	if zoom < 1 && finite(c.Centre) {
		l.c = c.Centre
	}
	return l
}

// Scale returns K, the number of SVG user units per unit of Γ: a point Γ is
// drawn at (K·Re(Γ − C), −K·Im(Γ − C)) with C the centre of the shown disc
// (0 unless zoomed with a Centre). The root element carries K as the
// attribute data-gamma-scale and C as data-gamma-centre.
func (c *Chart) Scale() float64 { return c.layout().k }

// ShownCentre returns C, the Γ drawn at the middle of the chart: Centre
// when the chart is zoomed, else 0.
func (c *Chart) ShownCentre() complex128 { return c.layout().c }

// legend geometry.
const (
	legendRowPx   = 18.0
	legendPadPx   = 8.0
	legendFontPx  = 12.0
	legendCharPx  = 0.56 * legendFontPx // mean advance of Liberation Sans
	legendSwatch  = 22.0
	legendColGap  = 18.0
	chartFontPx   = 10.5
	captionFontPx = 11.5
)

// Render writes the whole chart as one <svg> document: the grid, the traces,
// the matching path, the markers and the legend, in that order (later layers
// draw on top). Markers and path segments may be nil. It returns the first
// error of w.
func (c *Chart) Render(w io.Writer, traces []Trace, markers []Marker, path []PathSegment) error {
	sw := getWriter(w)
	l := c.layout()
	height := l.size
	if !c.NoLegend {
		height += placeLegend(traces, l.size, nil)
	}
	half := l.size / 2
	sw.s(`<svg xmlns="http://www.w3.org/2000/svg" viewBox="`)
	sw.num(-half)
	sw.b(' ')
	sw.num(-half)
	sw.b(' ')
	sw.num(l.size)
	sw.b(' ')
	sw.num(height)
	sw.b('"')
	sw.numAttr("width", l.size)
	sw.numAttr("height", height)
	sw.attr("font-family", fontFamily)
	sw.s(` data-gamma-scale="`)
	sw.g(l.k, 8)
	sw.s(`" data-gamma-centre="`)
	sw.g(real(l.c), 8)
	sw.b(' ')
	sw.g(imag(l.c), 8)
	sw.s(`" data-gamma-radius="`)
	sw.g(l.zoom, 8)
	sw.s(`"`)
	if c.Tag != "" {
		sw.attr("data-tag", c.Tag)
	}
	sw.s(` role="img"`)
	title := c.Title
	if title == "" {
		title = "Reflection coefficient chart"
	}
	sw.attr("aria-label", title)
	sw.s("><title>")
	sw.text(title)
	sw.s("</title>")
	sw.s(`<rect x="`)
	sw.num(-half)
	sw.s(`" y="`)
	sw.num(-half)
	sw.s(`" width="`)
	sw.num(l.size)
	sw.s(`" height="`)
	sw.num(height)
	sw.s(`" fill="#fff"/>`)
	c.grid(sw, l)
	if c.Regions != nil {
		c.regions(sw, l)
	}
	c.traces(sw, l, traces)
	c.path(sw, l, path)
	c.markers(sw, l, markers)
	if c.Spots != nil {
		c.spots(sw, l)
	}
	if !c.NoLegend {
		c.legend(sw, l, traces)
	}
	sw.s("</svg>\n")
	return sw.done()
}

// RenderGrid writes the grid layer alone: the <g id="grid"> element with the
// disc, the grids and their labels, the rim scales, the overlays, the caption
// and the clip path used when zoomed. It has no data and so no trace work.
func (c *Chart) RenderGrid(w io.Writer) error {
	sw := getWriter(w)
	c.grid(sw, c.layout())
	return sw.done()
}

// RenderTraces writes the trace layer alone: <g id="traces"> holding one
// <g id="trace-ID"> per trace, in the order given.
func (c *Chart) RenderTraces(w io.Writer, traces []Trace) error {
	sw := getWriter(w)
	c.traces(sw, c.layout(), traces)
	return sw.done()
}

// RenderLegend writes the legend layer alone: <g id="legend">, placed below
// the chart disc. It is empty when NoLegend is set.
func (c *Chart) RenderLegend(w io.Writer, traces []Trace) error {
	sw := getWriter(w)
	if !c.NoLegend {
		l := c.layout()
		c.legend(sw, l, traces)
	}
	return sw.done()
}

// id appends ` id="PREFIXname"`.
func (c *Chart) id(sw *writer, name string) { c.id2(sw, name, "") }

// id2 appends ` id="PREFIXnamesuffix"`.
func (c *Chart) id2(sw *writer, name, suffix string) {
	sw.s(` id="`)
	sw.text(c.IDPrefix)
	sw.text(name)
	sw.text(suffix)
	sw.b('"')
}

// clipAttr appends the clip-path attribute used by data layers when zoomed.
func (c *Chart) clipAttr(sw *writer, l layout) {
	if l.zoom < 1 {
		sw.s(` clip-path="url(#`)
		sw.text(c.IDPrefix)
		sw.s(`clip)"`)
	}
}

// formatValue writes a grid value the short way: 0.2, 1, 20.
func formatValue(v float64) string { return strconv.FormatFloat(v, 'g', 4, 64) }

// xy maps Γ through the layout.
func (l layout) xy(g complex128) pt { return pt{l.k * real(g-l.c), -l.k * imag(g-l.c)} }

// finite reports whether Γ is a finite complex number.
func finite(g complex128) bool {
	return !math.IsNaN(real(g)) && !math.IsNaN(imag(g)) && !math.IsInf(real(g), 0) && !math.IsInf(imag(g), 0)
}
