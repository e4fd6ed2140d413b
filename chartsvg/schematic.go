package chartsvg

import (
	"io"
	"strconv"
)

// Symbol is the kind of a part in a [Schematic].
type Symbol int

// Symbols of a schematic.
const (
	SymInductor    Symbol = iota // an inductor: a row of turns
	SymCapacitor                 // a capacitor: two plates
	SymResistor                  // a resistor: a box
	SymLine                      // a section of line: a sleeve with its centre conductor
	SymStubOpen                  // a stub open at its far end
	SymStubShort                 // a stub shorted at its far end
	SymTransformer               // an ideal transformer: two windings on a core
)

// SchematicPart is one part of a [Schematic]: its symbol, whether it is in
// series with the line or shunt across it (stubs are always shunt, lines
// and transformers always in series), and the words written beside it.
type SchematicPart struct {
	Symbol     Symbol
	Shunt      bool
	Designator string   // "L1"
	Value      string   // "12 nH", "30 mm", "1.3 : 1"
	Notes      []string // further lines: "0402 typical", "E24", "Z0 60 Ω"
	Color      string   // a mark beside the designator; "" for none
}

// Schematic draws a matching network as a circuit diagram, from the source
// port at the left to the load at the right, each part with its symbol and
// words, shunt parts hanging from the line to ground. The zero value draws
// with the defaults; rendering does not change it.
type Schematic struct {
	// Source and Load label the two ends ("Source (radio), 50 Ω",
	// "Load: antenna S11"); empty ends are labelled "Source" and "Load".
	Source, Load []string
	// IDPrefix prefixes the ids of the drawing's elements: P+"schematic"
	// on the root and P+"sp-"+i on the group of part i (counted from the
	// load, as the parts are given).
	IDPrefix string
	// Title, when set, is the drawing's <title> (read by screen readers).
	Title string
}

// Geometry of the drawing, in user units (CSS pixels at 100 %). Every
// part's words stand above the line, centred on its column; shunt parts
// hang below it.
const (
	schCell    = 132.0 // width of a part's column
	schPort    = 124.0 // width of the source's and the load's columns
	schTextY   = 16.0  // baseline of the first line of words
	schRail    = 76.0  // y of the signal line
	schTop     = schRail + 20
	schBot     = schTop + 52 // a symbol below the line spans schTop–schBot
	schGround  = schBot + 18 // top of the ground symbols
	schHeight  = schGround + 20
	schFont    = 11.0
	schLineGap = 13.0 // between lines of words
	schInk     = "#1f2328"
	schWire    = "#3e4652"
)

// Width returns the width of the drawing of n parts.
func (s Schematic) Width(n int) float64 { return 2*schPort + float64(max(n, 1))*schCell }

// Height returns the height of the drawing.
func (s Schematic) Height() float64 { return schHeight }

// Render writes the schematic of parts, given from the load toward the
// source (the order of a network's parts), as one <svg> element. It
// returns the first error of w.
func (s Schematic) Render(w io.Writer, parts []SchematicPart) error {
	sw := getWriter(w)
	width := s.Width(len(parts))
	sw.s(`<svg xmlns="http://www.w3.org/2000/svg" class="schematic"`)
	sw.attr("id", s.IDPrefix+"schematic")
	sw.s(` viewBox="0 0 `)
	sw.num(width)
	sw.b(' ')
	sw.num(schHeight)
	sw.s(`" width="`)
	sw.num(width)
	sw.s(`" height="`)
	sw.num(schHeight)
	sw.s(`" font-family="`)
	sw.s(fontFamily)
	sw.s(`" font-size="`)
	sw.num(schFont)
	sw.s(`" role="img">`)
	if s.Title != "" {
		sw.s("<title>")
		sw.text(s.Title)
		sw.s("</title>")
	}
	sw.s(`<rect width="100%" height="100%" fill="#ffffff"/>`)

	// The source at the left: a generator from the line to ground.
	src := s.Source
	if len(src) == 0 {
		src = []string{"Source"}
	}
	x := schPort / 2
	sw.wire(x, schRail, schPort, schRail)
	sw.wire(x, schRail, x, schTop+10)
	sw.s(`<circle`)
	sw.numAttr("cx", x)
	sw.numAttr("cy", schTop+26)
	sw.s(` r="16" fill="#ffffff" stroke="` + schInk + `" stroke-width="1.5"/>`)
	sw.s(`<path fill="none" stroke="` + schInk + `" stroke-width="1.3" d="M`)
	sw.xy(tenths(x-9), tenths(schTop+26))
	sw.s("c")
	sw.xy(30, -110)
	sw.pair(60, -110)
	sw.pair(90, 0)
	sw.s("s")
	sw.xy(60, 110)
	sw.pair(90, 0)
	sw.s(`"/>`)
	sw.wire(x, schTop+42, x, schGround)
	sw.ground(x, schGround)
	sw.words(x, schTextY, "middle", src[0], src[1:]...)
	sw.dot(schPort, schRail)

	// The parts, source side first.
	for k := len(parts) - 1; k >= 0; k-- {
		i := len(parts) - 1 - k
		x0 := schPort + float64(i)*schCell
		sw.s(`<g`)
		sw.attr("id", s.IDPrefix+"sp-"+strconv.Itoa(k))
		sw.attr("data-designator", parts[k].Designator)
		sw.b('>')
		sw.part(parts[k], x0)
		sw.s(`</g>`)
		sw.maybeFlush()
	}

	// The load at the right: a box from the line to ground.
	xl := schPort + float64(max(len(parts), 1))*schCell
	if len(parts) == 0 {
		sw.wire(schPort, schRail, xl, schRail) // no parts: a through line
	}
	ld := s.Load
	if len(ld) == 0 {
		ld = []string{"Load"}
	}
	cx := xl + schPort/2
	sw.wire(xl, schRail, cx, schRail)
	sw.wire(cx, schRail, cx, schTop)
	sw.rect(cx-11, schTop, 22, 52)
	sw.s(`<path fill="none" stroke="` + schInk + `" stroke-width="1.2" d="M`)
	sw.xy(tenths(cx-7), tenths(schTop+40))
	sw.s("l")
	sw.xy(140, -280)
	sw.s(`"/>`)
	sw.wire(cx, schBot, cx, schGround)
	sw.ground(cx, schGround)
	sw.dot(xl, schRail)
	sw.words(cx, schTextY, "middle", ld[0], ld[1:]...)
	sw.s(`</svg>`)
	return sw.done()
}

// part draws one part in the column starting at x0.
func (sw *writer) part(p SchematicPart, x0 float64) {
	cx := x0 + schCell/2
	x1 := x0 + schCell
	switch {
	case p.Symbol == SymTransformer:
		// Two windings facing each other across a core, each from the line
		// to ground; the line is broken between them.
		a, b := cx-16, cx+16
		sw.wire(x0, schRail, a, schRail)
		sw.wire(b, schRail, x1, schRail)
		for _, side := range []struct{ x, bulge float64 }{{a, 1}, {b, -1}} {
			sw.wire(side.x, schRail, side.x, schTop)
			sw.coil(side.x, schTop, false, side.bulge)
			sw.wire(side.x, schBot, side.x, schGround)
			sw.ground(side.x, schGround)
		}
		for _, dx := range []float64{-2.5, 2.5} {
			sw.wire(cx+dx, schTop-2, cx+dx, schBot+2)
		}
	case p.Symbol == SymStubOpen || p.Symbol == SymStubShort || p.Shunt:
		sw.wire(x0, schRail, x1, schRail)
		sw.dot(cx, schRail)
		sw.wire(cx, schRail, cx, schTop)
		switch p.Symbol {
		case SymInductor:
			sw.coil(cx, schTop, false, 1)
		case SymCapacitor:
			mid := (schTop + schBot) / 2
			sw.wire(cx, schTop, cx, mid-4)
			sw.plates(cx, mid, false)
			sw.wire(cx, mid+4, cx, schBot)
		case SymResistor:
			sw.rect(cx-6, schTop+4, 12, 44)
			sw.wire(cx, schTop, cx, schTop+4)
			sw.wire(cx, schBot-4, cx, schBot)
		default: // a stub: a sleeve downward
			sw.sleeve(cx, schTop, false)
		}
		if p.Symbol == SymStubOpen {
			sw.s(`<circle`)
			sw.numAttr("cx", cx)
			sw.numAttr("cy", schBot+4)
			sw.s(` r="3.5" fill="#ffffff" stroke="` + schInk + `" stroke-width="1.4"/>`)
		} else {
			sw.wire(cx, schBot, cx, schGround)
			sw.ground(cx, schGround)
		}
	default:
		// In series: the symbol on the line.
		a, b := cx-26, cx+26
		sw.wire(x0, schRail, a, schRail)
		sw.wire(b, schRail, x1, schRail)
		switch p.Symbol {
		case SymInductor:
			sw.coil(a, schRail, true, 1)
		case SymCapacitor:
			sw.wire(a, schRail, cx-4, schRail)
			sw.plates(cx, schRail, true)
			sw.wire(cx+4, schRail, b, schRail)
		case SymResistor:
			sw.rect(a+4, schRail-6, 44, 12)
			sw.wire(a, schRail, a+4, schRail)
			sw.wire(b-4, schRail, b, schRail)
		default: // a line
			sw.sleeve(a, schRail, true)
		}
	}
	sw.label(p, cx)
}

// label writes a part's designator, value and notes above its column,
// centred on cx.
func (sw *writer) label(p SchematicPart, cx float64) {
	if p.Color != "" {
		// A mark of the part's colour before the designator (about 7 units
		// a character, bold).
		sw.s(`<circle`)
		sw.numAttr("cx", cx-float64(len([]rune(p.Designator)))*3.8-8)
		sw.numAttr("cy", schTextY-4)
		sw.s(` r="3.5"`)
		sw.attr("fill", p.Color)
		sw.s(`/>`)
	}
	sw.words(cx, schTextY, "middle", p.Designator, append([]string{p.Value}, p.Notes...)...)
}

// words writes a bold first line at (x, y) and the others below it.
func (sw *writer) words(x, y float64, anchor, first string, rest ...string) {
	sw.s(`<text fill="` + schInk + `"`)
	sw.numAttr("x", x)
	sw.numAttr("y", y)
	sw.attr("text-anchor", anchor)
	sw.s(`><tspan font-weight="bold">`)
	sw.text(first)
	sw.s(`</tspan>`)
	for _, l := range rest {
		if l == "" {
			continue
		}
		sw.s(`<tspan`)
		sw.numAttr("x", x)
		sw.numAttr("dy", schLineGap)
		sw.b('>')
		sw.text(l)
		sw.s(`</tspan>`)
	}
	sw.s(`</text>`)
}

// wire draws a connection from (x0, y0) to (x1, y1).
func (sw *writer) wire(x0, y0, x1, y1 float64) {
	sw.s(`<path stroke="` + schWire + `" stroke-width="1.5" d="M`)
	sw.xy(tenths(x0), tenths(y0))
	sw.s("L")
	sw.xy(tenths(x1), tenths(y1))
	sw.s(`"/>`)
}

// dot marks a junction.
func (sw *writer) dot(x, y float64) {
	sw.s(`<circle`)
	sw.numAttr("cx", x)
	sw.numAttr("cy", y)
	sw.s(` r="2.6" fill="` + schWire + `"/>`)
}

// rect draws a box (a resistor, the load).
func (sw *writer) rect(x, y, w, h float64) {
	sw.s(`<rect fill="#ffffff" stroke="` + schInk + `" stroke-width="1.5"`)
	sw.numAttr("x", x)
	sw.numAttr("y", y)
	sw.numAttr("width", w)
	sw.numAttr("height", h)
	sw.s(`/>`)
}

// coil draws four turns, 52 units long, from (x, y) along x when
// horizontal, else downward; the turns bulge up (horizontal) or to the
// right (vertical) when bulge > 0, the other way when bulge < 0.
func (sw *writer) coil(x, y float64, horizontal bool, bulge float64) {
	const turns, r = 4, 6.5
	sw.s(`<path fill="none" stroke="` + schInk + `" stroke-width="1.6" d="M`)
	sw.xy(tenths(x), tenths(y))
	// Along +x, the clockwise arc (sweep 1) rises; along +y it bulges to
	// the right (SVG's y points down).
	flag := " 0 0 1 "
	if bulge < 0 {
		flag = " 0 0 0 "
	}
	for range turns {
		sw.s("a")
		sw.xy(tenths(r), tenths(r))
		sw.s(flag)
		if horizontal {
			sw.xy(tenths(2*r), 0)
		} else {
			sw.xy(0, tenths(2*r))
		}
	}
	sw.s(`"/>`)
}

// plates draws a capacitor's two plates centred at (x, y), across a
// horizontal line when horizontal, else across a vertical one.
func (sw *writer) plates(x, y float64, horizontal bool) {
	const gap, half = 4.0, 13.0
	for _, d := range []float64{-gap, gap} {
		sw.s(`<path stroke="` + schInk + `" stroke-width="2.4" d="M`)
		if horizontal {
			sw.xy(tenths(x+d), tenths(y-half))
			sw.s("v")
		} else {
			sw.xy(tenths(x-half), tenths(y+d))
			sw.s("h")
		}
		sw.buf = appendTenths(sw.buf, tenths(2*half))
		sw.s(`"/>`)
	}
}

// sleeve draws a section of line 52 long from (x, y): the outer conductor
// as a rounded sleeve with the centre conductor through it.
func (sw *writer) sleeve(x, y float64, horizontal bool) {
	const l, h = 52.0, 14.0
	sw.s(`<rect fill="#eef1f4" stroke="` + schInk + `" stroke-width="1.4" rx="4"`)
	if horizontal {
		sw.numAttr("x", x)
		sw.numAttr("y", y-h/2)
		sw.numAttr("width", l)
		sw.numAttr("height", h)
	} else {
		sw.numAttr("x", x-h/2)
		sw.numAttr("y", y)
		sw.numAttr("width", h)
		sw.numAttr("height", l)
	}
	sw.s(`/>`)
	if horizontal {
		sw.wire(x, y, x+l, y)
	} else {
		sw.wire(x, y, x, y+l)
	}
}

// ground draws the ground symbol with its top at (x, y).
func (sw *writer) ground(x, y float64) {
	sw.s(`<path stroke="` + schInk + `" stroke-width="1.5" d="`)
	for i, half := range []float64{11, 7, 3} {
		sw.s("M")
		sw.xy(tenths(x-half), tenths(y+float64(i)*4.5))
		sw.s("h")
		sw.buf = appendTenths(sw.buf, tenths(2*half))
	}
	sw.s(`"/>`)
}
