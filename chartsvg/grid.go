package chartsvg

import (
	"math"
	"math/cmplx"
	"unicode/utf8"
)

// gridLine is one line of a grid family: the circle of constant value v
// (r or g for circles, |x| or |b| for arcs), drawn up to the line of the
// other family whose value is ext (+Inf: all the way).
type gridLine struct {
	v, ext float64
	major  bool // heavier stroke and a label
}

var inf = math.Inf(1)

// The graded grids. Lines are denser near the centre and sparser toward the
// rim and toward z = ∞, where the bilinear map crowds them: the spacing of
// lines a step Δ apart near z is 2Δ·K/|z + 1|² user units, so each grade of
// step stops at a line of a coarser grade before its lines come closer than
// about 8 units on a chart of 700 units. Every ext is itself a line of the
// other family, so each line ends on a crossing.
var (
	// Resistance (and conductance) circles: ext bounds |x| (|b|).
	rLinesMedium = []gridLine{
		{0.1, 2, false}, {0.2, 5, true}, {0.3, 2, false}, {0.4, 2, false},
		{0.5, 10, true}, {0.6, 2, false}, {0.7, 2, false}, {0.8, 2, false},
		{0.9, 2, false}, {1, 20, true}, {1.2, 2, false}, {1.4, 2, false},
		{1.6, 2, false}, {1.8, 2, false}, {2, 10, true}, {3, 5, false},
		{4, 5, false}, {5, 20, true}, {10, 20, true}, {20, inf, true},
	}
	// Reactance (and susceptance) arcs, for each sign: ext bounds r (g).
	xLinesMedium = []gridLine{
		{0.1, 1, false}, {0.2, 2, true}, {0.3, 1, false}, {0.4, 1, false},
		{0.5, 5, true}, {0.6, 1, false}, {0.7, 1, false}, {0.8, 1, false},
		{0.9, 1, false}, {1, 10, true}, {1.2, 2, false}, {1.4, 2, false},
		{1.6, 2, false}, {1.8, 2, false}, {2, 10, true}, {3, 5, false},
		{4, 5, false}, {5, 20, true}, {10, 20, true}, {20, 20, true},
	}
	// Small charts (K < 200 units).
	rLinesCoarse = []gridLine{
		{0.2, 5, true}, {0.5, 5, true}, {1, 5, true}, {2, 5, true}, {5, inf, true},
	}
	xLinesCoarse = []gridLine{
		{0.2, 2, true}, {0.5, 5, true}, {1, 5, true}, {2, 5, true}, {5, 5, true},
	}
	// Zoomed-in charts (K ≥ 700 units) add lines between the medium ones
	// near the centre.
	// The same values join both families.
	fineExtra = []gridLine{
		{0.05, 0.5, false}, {0.15, 1, false}, {0.25, 1, false},
		{0.35, 1, false}, {0.45, 1, false}, {0.55, 1, false},
		{0.65, 1, false}, {0.75, 1, false}, {0.85, 1, false},
		{0.95, 1, false}, {1.1, 1, false}, {1.3, 1, false},
		{1.5, 2, false}, {1.7, 1, false}, {1.9, 1, false},
		{2.5, 2, false},
	}
	rLinesFine = append(append([]gridLine{}, rLinesMedium...), fineExtra...)
	xLinesFine = append(append([]gridLine{}, xLinesMedium...), fineExtra...)
)

// gridTables returns the grid grades suited to the scale K.
func gridTables(k float64) (rl, xl []gridLine) {
	switch {
	case k < 200:
		return rLinesCoarse, xLinesCoarse
	case k >= 700:
		return rLinesFine, xLinesFine
	}
	return rLinesMedium, xLinesMedium
}

// grid writes the grid layer.
func (c *Chart) grid(sw *writer, l layout) {
	sw.s(`<g`)
	c.id(sw, "grid")
	sw.s(`>`)
	if l.zoom < 1 {
		sw.s(`<defs><clipPath`)
		c.id(sw, "clip")
		sw.s(`><circle r="`)
		sw.num(l.rpx)
		sw.s(`"/></clipPath></defs>`)
	}
	o := l.o()
	if l.centred() {
		sw.s(`<circle r="`)
		sw.num(l.rpx)
		sw.s(`" fill="` + colDisc + `"/>`)
	} else {
		// The unit disc, off centre: only the part inside the shown
		// disc is tinted.
		sw.s(`<g`)
		c.clipAttr(sw, l)
		sw.s(`><circle`)
		sw.numAttr("cx", o.x)
		sw.numAttr("cy", o.y)
		sw.numAttr("r", l.k)
		sw.s(` fill="` + colDisc + `"/></g>`)
	}

	sw.s(`<g fill="none"`)
	c.clipAttr(sw, l)
	sw.s(`>`)
	if c.AdmittanceGrid {
		c.family(sw, l, -1, colYMinor, colYMajor)
	}
	if c.ImpedanceGrid {
		c.family(sw, l, 1, colZMinor, colZMajor)
	}
	// The real axis, common to both grids.
	sw.s(`<path stroke="` + colZMajor + `" stroke-width=".8" d="M`)
	if l.centred() {
		sw.pair(tenths(-l.rpx), 0)
		sw.s(`H`)
		sw.num(l.rpx)
	} else {
		a, b := l.xy(-1), l.xy(1)
		sw.pair(tenths(a.x), tenths(a.y))
		sw.s(`H`)
		sw.num(b.x)
	}
	sw.s(`"/>`)
	c.overlays(sw, l)
	if !l.centred() {
		// The unit circle, where it crosses the shown disc.
		sw.s(`<circle`)
		sw.numAttr("cx", o.x)
		sw.numAttr("cy", o.y)
		sw.numAttr("r", l.k)
		sw.s(` stroke="` + colRim + `" stroke-width="1.4"/>`)
	}
	sw.s(`</g>`)

	// The rim: the unit circle, or the edge of the zoomed disc.
	sw.s(`<circle r="`)
	sw.num(l.rpx)
	sw.s(`" fill="none" stroke="` + colRim + `" stroke-width="1.4"/>`)

	var placed []labelSpot
	if c.ImpedanceGrid {
		c.labels(sw, l, 1, colZLabel, &placed)
	}
	if c.AdmittanceGrid {
		c.labels(sw, l, -1, colYLabel, &placed)
	}
	c.overlayLabels(sw, l)
	if c.AngleScale && l.centred() {
		c.angleScale(sw, l)
	}
	if c.WavelengthScale && l.centred() {
		c.wavelengthScale(sw, l)
	}
	c.caption(sw, l)
	sw.s(`</g>`)
	sw.maybeFlush()
}

// family writes one grid family: sign = 1 for impedance (r circles, x arcs),
// −1 for admittance (g circles, b arcs), which is the same drawing turned
// through 180° about the centre.
func (c *Chart) family(sw *writer, l layout, sign float64, minor, major string) {
	rl, xl := gridTables(l.k)
	s := complex(sign, 0)
	for _, maj := range [...]bool{false, true} {
		if maj {
			sw.s(`<path stroke="` + major + `" stroke-width=".9"`)
		} else {
			sw.s(`<path stroke="` + minor + `" stroke-width=".6"`)
		}
		if sign > 0 {
			sw.s(` data-grid="z" d="`)
		} else {
			sw.s(` data-grid="y" d="`)
		}
		for _, g := range rl {
			if g.major != maj || !l.visible(rCircle(g.v)) {
				continue
			}
			cr := rCircle(g.v)
			if math.IsInf(g.ext, 1) {
				right, left := s*(cr.c+complex(cr.r, 0)), s*(cr.c-complex(cr.r, 0))
				arcPath(sw, l, cr.r, right, left, right, s*cr.c)
				continue
			}
			p0 := s * ZToGamma(complex(g.v, -g.ext))
			pm := s * ZToGamma(complex(g.v, 0))
			p1 := s * ZToGamma(complex(g.v, g.ext))
			arcPath(sw, l, cr.r, p0, pm, p1, s*cr.c)
		}
		for _, g := range xl {
			if g.major != maj {
				continue
			}
			for _, x := range [...]float64{g.v, -g.v} {
				cx := xCircle(x)
				if !l.visible(cx) {
					continue
				}
				p0 := s * ZToGamma(complex(0, x))
				var pm, p1 complex128
				if math.IsInf(g.ext, 1) {
					pm, p1 = s*ZToGamma(complex(1, x)), s
				} else {
					pm, p1 = s*ZToGamma(complex(g.ext/2, x)), s*ZToGamma(complex(g.ext, x))
				}
				arcPath(sw, l, cx.r, p0, pm, p1, s*cx.c)
			}
		}
		sw.s(`"/>`)
	}
}

// visible reports whether the circle meets the shown disc
// |Γ − centre| ≤ zoom.
func (l layout) visible(cr circle) bool {
	d := cmplx.Abs(cr.c - l.c)
	return d-cr.r <= l.zoom && cr.r-d <= l.zoom
}

// inside reports whether the user-unit point q lies within r of the middle
// of the shown disc.
func inside(q pt, r float64) bool { return q.x*q.x+q.y*q.y <= r*r }

// arcPath appends "M p0 A … p1": the arc of radius rad (in Γ units) centred
// at o from p0 through pm to p1; p1 = p0 gives the full circle. The arc is
// written in pieces of at most 120°, whose ends are computed on the circle:
// an SVG renderer recovers each piece's centre from its rounded ends and
// radius, which is ill-conditioned for pieces near 180°.
func arcPath(sw *writer, l layout, rad float64, p0, pm, p1, o complex128) {
	a0 := cmplx.Phase(p0 - o)
	d1 := wrap2pi(cmplx.Phase(p1-o) - a0)
	dm := wrap2pi(cmplx.Phase(pm-o) - a0)
	span := d1 // counter-clockwise in the Γ plane
	if dm >= d1 {
		span = d1 - 2*math.Pi // clockwise
	}
	n := int(math.Ceil(math.Abs(span) / (2*math.Pi/3 + 1e-9)))
	if n < 1 {
		n = 1
	}
	a := l.xy(p0)
	sw.b('M')
	sw.xy(tenths(a.x), tenths(a.y))
	r := tenths(rad * l.k)
	for i := 1; i <= n; i++ {
		q := p1
		if i < n {
			q = o + cmplx.Rect(rad, a0+span*float64(i)/float64(n))
		}
		// Counter-clockwise in the Γ plane is counter-clockwise on the
		// screen too (y is flipped), which is SVG's sweep flag 0.
		sw.b('A')
		sw.buf = appendTenths(sw.buf, r)
		sw.pair(r, 0)
		if span < 0 {
			sw.s(" 0 1")
		} else {
			sw.s(" 0 0")
		}
		b := l.xy(q)
		sw.pair(tenths(b.x), tenths(b.y))
	}
}

// haloStyle gives text a white halo so that it reads over lines;
// labelStyle also centres it.
const (
	haloStyle  = ` stroke="#fff" stroke-width="2.8" stroke-linejoin="round" paint-order="stroke"`
	labelStyle = haloStyle + ` text-anchor="middle"`
)

// labels writes the values of one grid family: circle values on the real
// axis (above it for impedance, below for admittance) and arc values at the
// rim (or at the edge of the zoomed disc), turned along the rim.
//
// Labels are kept apart by their lengths, across both families (placed
// holds those already written): each is taken as a disc of half its width
// about its centre (a rim label is turned along the rim, so its width runs
// along it), and two may not come closer than their half-widths and a
// gap; a family's own labels still keep 26 units apart, and two level
// labels on the real axis collide only when their boxes do.
func (c *Chart) labels(sw *writer, l layout, sign float64, col string, placed *[]labelSpot) {
	rl, xl := gridTables(l.k)
	sw.s(`<g font-size="`)
	sw.num(chartFontPx - 1)
	sw.s(`" fill="` + col + `"` + labelStyle + `>`)
	dy := -3.5
	if sign < 0 {
		dy = 10.5
	}
	// Major lines are always labelled; on a zoomed-in chart (the fine grid)
	// minor lines are too where their labels do not crowd.
	fine := l.k >= 700
	charPx := 0.58 * (chartFontPx - 1)
	half := func(s string) float64 { return float64(utf8.RuneCountInString(s)) * charPx / 2 }
	free := func(q pt, s string, axis bool) bool {
		h := half(s)
		for _, p := range *placed {
			dx, dy := p.p.x-q.x, p.p.y-q.y
			switch {
			case axis && p.axis: // both level: boxes a line high
				if math.Abs(dx) < p.half+h+2 && math.Abs(dy) < chartFontPx {
					return false
				}
			case p.sign == sign: // the family's own labels: as before
				if math.Hypot(dx, dy) < math.Max(26, p.half+h+4) {
					return false
				}
			default:
				if math.Hypot(dx, dy) < p.half+h+1 {
					return false
				}
			}
		}
		return true
	}
	place := func(q pt, s string, axis bool) {
		*placed = append(*placed, labelSpot{p: q, half: half(s), sign: sign, axis: axis})
	}
	for pass := 0; pass < 2; pass++ {
		for _, g := range rl {
			if g.major != (pass == 0) || !g.major && !fine {
				continue
			}
			q := l.xy(complex(sign*real(ZToGamma(complex(g.v, 0))), 0))
			q.y += dy
			label := formatValue(g.v)
			if !inside(q, l.rpx-14) || !free(q, label, true) {
				continue
			}
			place(q, label, true)
			textAt(sw, q, 0, label)
		}
	}
	if l.zoom == 1 && l.centred() {
		// The short-circuit end of the real axis for impedance, the open
		// end for admittance: r = 0 or g = 0.
		textAt(sw, pt{-sign * (l.rpx - 9), dy}, 0, "0")
	}
	both := c.ImpedanceGrid && c.AdmittanceGrid
	for pass := 0; pass < 2; pass++ {
		for _, g := range xl {
			if g.major != (pass == 0) || !g.major && !fine {
				continue
			}
			for _, x := range [...]float64{g.v, -g.v} {
				p, ok := l.edgePoint(x, g.ext, sign)
				if !ok {
					continue
				}
				th := cmplx.Phase(p - l.c)
				rad := l.rpx - 9
				s := "j" + formatValue(g.v)
				if x < 0 {
					s = "−j" + formatValue(g.v)
				}
				if both && l.centred() && math.Abs(math.Abs(th)-math.Pi/2) < 0.05 {
					// An impedance arc and an admittance arc meet the rim
					// at mirrored angles, so only the labels near ±90°
					// collide: move the impedance one right and the
					// admittance one left, each by a little more than
					// half a label.
					shift := math.Max(0.05, (half(s)+2.5)/rad)
					th -= sign * shift * math.Copysign(1, th)
				}
				q := pt{rad * math.Cos(th), -rad * math.Sin(th)}
				if !free(q, s, false) {
					continue
				}
				place(q, s, false)
				textAt(sw, q, tangentDeg(th), s)
			}
		}
	}
	sw.s(`</g>`)
}

// labelSpot is a grid label already placed: its centre, half its width,
// its family (1 impedance, −1 admittance) and whether it is a level label
// on the real axis (else one turned along the rim).
type labelSpot struct {
	p    pt
	half float64
	sign float64
	axis bool
}

// edgePoint returns where the arc of value x of the family sign (1: the
// reactance arc of the impedance grid; −1: the susceptance arc of the
// admittance grid, the same drawing turned through 180°), drawn for r in
// [0, ext], meets the edge of the shown disc |Γ − centre| = zoom, nearest
// its rim end.
func (l layout) edgePoint(x, ext, sign float64) (complex128, bool) {
	if l.zoom == 1 && l.centred() {
		return complex(sign, 0) * ZToGamma(complex(0, x)), true
	}
	s := complex(sign, 0)
	// Work in the family's own plane, where the arc is that of x.
	p, q, ok := circleCrossings(xCircle(x), circle{s * l.c, l.zoom})
	if !ok {
		return 0, false
	}
	rp, rq := real(gammaToZ(p)), real(gammaToZ(q))
	if rq < rp {
		p, rp = q, rq
	}
	if rp < 0 || rp > ext {
		return 0, false
	}
	return s * p, true
}

// gammaToZ is the inverse of ZToGamma.
func gammaToZ(g complex128) complex128 { return (1 + g) / (1 - g) }

// tangentDeg returns the rotation, in degrees, that sets text along the
// rim at the angle th (radians, counter-clockwise), kept upright.
func tangentDeg(th float64) float64 {
	d := 90 - th*180/math.Pi
	for d > 90 {
		d -= 180
	}
	for d <= -90 {
		d += 180
	}
	return d
}

// textAt writes a <text> centred on p (vertically by a .35em shift),
// rotated by deg about p.
func textAt(sw *writer, p pt, deg float64, s string) {
	if s == "" {
		return
	}
	sw.s(`<text x="`)
	sw.num(p.x)
	sw.s(`" y="`)
	sw.num(p.y)
	sw.s(`" dy=".35em"`)
	if deg != 0 {
		sw.s(` transform="rotate(`)
		sw.num(deg)
		sw.b(' ')
		sw.num(p.x)
		sw.b(' ')
		sw.num(p.y)
		sw.s(`)"`)
	}
	sw.b('>')
	sw.text(s)
	sw.s(`</text>`)
}
