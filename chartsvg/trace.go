package chartsvg

import (
	"math"
	"slices"
	"sort"
	"strconv"
	"unicode/utf8"
)

// Trace is one curve on the chart: a sweep, or a computed result.
type Trace struct {
	// ID names the trace; its group is written with id "trace-ID". IDs
	// should be unique within a chart and are best kept to letters,
	// digits, '-' and '_'.
	ID string
	// Name is the text of the trace's legend entry; empty means ID.
	Name string
	// Color is any SVG colour; empty takes the trace's place in Palette.
	Color string
	// FreqHz holds the frequency of each point in Hz, increasing. It may be
	// nil (no ticks, no span in the legend); otherwise it must have the
	// length of Gamma.
	FreqHz []float64
	// Gamma holds the reflection coefficient of each point. Non-finite
	// points break the curve.
	Gamma []complex128
	// Dashed draws the curve dashed.
	Dashed bool
	// Ticks is the number of frequency ticks wanted along the curve, placed
	// at round frequencies (1, 2, 5 steps); 0 means 8, negative means none.
	Ticks int
	// LabelEvery labels every n-th tick with its frequency (0 means 1);
	// a label that would crowd an earlier one is left out.
	LabelEvery int
	// KeepHz lists frequencies whose nearest points always stay in the
	// drawn curve however it is thinned (e.g. the markers' frequencies).
	KeepHz []float64
	// NoLegend leaves the trace out of the legend (for example all but one
	// of a cloud of similar traces).
	NoLegend bool
}

const badTraceLength = "chartsvg: trace FreqHz and Gamma lengths differ"

// DefaultTolerancePx is the thinning tolerance used when Chart.TolerancePx is
// zero: every point of a trace lies within it of the drawn curve. Half a unit
// keeps every dropped point inside the painted stroke (1.9 units wide), so
// nothing the eye would see is lost, while a noisy sweep stays small.
const DefaultTolerancePx = 0.5

// traces writes the trace layer.
func (c *Chart) traces(sw *writer, l layout, traces []Trace) {
	sw.s(`<g`)
	c.id(sw, "traces")
	c.clipAttr(sw, l)
	sw.s(` fill="none" stroke-linejoin="round" stroke-linecap="round">`)
	sw.lbl = sw.lbl[:0]
	for i := range traces {
		c.trace(sw, l, &traces[i], traceColour(traces[i].Color, i))
		sw.maybeFlush()
	}
	sw.s(`</g>`)
}

// trace writes one trace group.
func (c *Chart) trace(sw *writer, l layout, t *Trace, col string) {
	n := len(t.Gamma)
	if t.FreqHz != nil && len(t.FreqHz) != n {
		panic(badTraceLength)
	}
	sw.s(`<g`)
	c.id2(sw, "trace-", t.ID)
	sw.s(` stroke="`)
	sw.text(col)
	sw.s(`"><path stroke-width="1.9"`)
	if t.Dashed {
		sw.s(` stroke-dasharray="8 5"`)
	}
	sw.s(` d="`)
	pts, keep := sw.scratch(n)
	for i, g := range t.Gamma {
		if finite(g) {
			pts[i] = l.xy(g)
		} else {
			pts[i] = pt{math.NaN(), math.NaN()}
		}
	}
	for a := 0; a < n; {
		if math.IsNaN(pts[a].x) {
			a++
			continue
		}
		b := a + 1
		for b < n && !math.IsNaN(pts[b].x) {
			b++
		}
		c.run(sw, t, pts, keep, a, b)
		a = b
	}
	sw.s(`"/>`)
	if n > 0 {
		c.ticks(sw, l, t, col)
		c.ends(sw, pts, col)
	}
	sw.s(`</g>`)
}

// run thins and writes the finite points pts[a:b] as one subpath.
func (c *Chart) run(sw *writer, t *Trace, pts []pt, keep []bool, a, b int) {
	p, k := pts[a:b], keep[a:b]
	markExtremes(p, k)
	// The dip: the point nearest Γ = 0, where the match is best.
	best, at := math.Inf(1), 0
	o := c.layout().o()
	for i, q := range p {
		if d := (q.x-o.x)*(q.x-o.x) + (q.y-o.y)*(q.y-o.y); d < best {
			best, at = d, i
		}
	}
	k[at] = true
	if t.FreqHz != nil {
		for _, f := range t.KeepHz {
			if i := nearest(t.FreqHz, f); i >= a && i < b {
				k[i-a] = true
			}
		}
	}
	tol := c.TolerancePx
	if tol == 0 {
		tol = DefaultTolerancePx
	}
	if tol > 0 {
		sw.idx = simplify(p, k, tol, sw.idx)
	} else {
		for i := range k {
			k[i] = true
		}
	}
	emitKept(sw, p, k)
}

// nearest returns the index of the value of the increasing slice f nearest v.
func nearest(f []float64, v float64) int {
	i := sort.SearchFloat64s(f, v)
	switch {
	case i == 0:
		return 0
	case i == len(f):
		return len(f) - 1
	case v-f[i-1] <= f[i]-v:
		return i - 1
	}
	return i
}

// scratch returns the writer's point and flag buffers sized n, flags false.
func (sw *writer) scratch(n int) ([]pt, []bool) {
	if cap(sw.pts) < n {
		sw.pts = make([]pt, n)
		sw.keep = make([]bool, n)
	}
	pts, keep := sw.pts[:n], sw.keep[:n]
	clear(keep)
	return pts, keep
}

// at returns the point of the trace at frequency f, interpolated linearly in
// Γ between the two measured points around it, and the direction of the
// trace there, in user units.
func (t *Trace) at(l layout, f float64) (p, dir pt, ok bool) {
	n := len(t.FreqHz)
	i := sort.SearchFloat64s(t.FreqHz, f)
	if i == 0 {
		i = 1
	}
	if i >= n {
		i = n - 1
	}
	f0, f1 := t.FreqHz[i-1], t.FreqHz[i]
	g0, g1 := t.Gamma[i-1], t.Gamma[i]
	if !(f1 > f0) || !finite(g0) || !finite(g1) {
		return pt{}, pt{}, false
	}
	u := (f - f0) / (f1 - f0)
	g := g0 + (g1-g0)*complex(u, 0)
	d := l.xy(g1 - g0)
	return l.xy(g), d, true
}

// ticks writes the frequency ticks along a trace and their labels.
func (c *Chart) ticks(sw *writer, l layout, t *Trace, col string) {
	n := len(t.FreqHz)
	if n < 2 || t.Ticks < 0 {
		return
	}
	f0, f1 := t.FreqHz[0], t.FreqHz[n-1]
	target := t.Ticks
	if target == 0 {
		target = 8
	}
	step := niceStep(f1-f0, target)
	if step == 0 {
		return
	}
	first := math.Ceil(f0/step-1e-9) * step
	count := int(math.Floor((f1-first)/step+1e-9)) + 1
	sw.s(`<path stroke-width="1.3" d="`)
	for k := 0; k < count; k++ {
		p, d, ok := t.at(l, first+float64(k)*step)
		if !ok {
			continue
		}
		nx, ny := normal(p, d)
		x0, y0 := tenths(p.x-4*nx), tenths(p.y-4*ny)
		sw.b('M')
		sw.xy(x0, y0)
		sw.b('l')
		sw.xy(tenths(p.x+4*nx)-x0, tenths(p.y+4*ny)-y0)
	}
	sw.s(`"/>`)

	every := t.LabelEvery
	if every <= 0 {
		every = 1
	}
	div, unit := siHz(math.Max(math.Abs(f0), math.Abs(f1)))
	sw.s(`<g font-size="`)
	sw.num(chartFontPx)
	sw.s(`" fill="`)
	sw.text(col)
	sw.s(`"` + haloStyle + `>`)
	for k := 0; k < count; k++ {
		f := first + float64(k)*step
		if int(math.Round(f/step))%every != 0 {
			continue
		}
		p, d, ok := t.at(l, f)
		if !ok {
			continue
		}
		nx, ny := normal(p, d)
		q := pt{p.x + 8*nx, p.y + 8*ny + 3*ny}
		label := formatHzStep(f, step, div, unit)
		w := float64(utf8.RuneCountInString(label)) * 0.55 * chartFontPx
		bx := box{q.x - w/2, q.y - chartFontPx/2, q.x + w/2, q.y + chartFontPx/2}
		switch {
		case nx > 0.4:
			bx.x0, bx.x1 = q.x, q.x+w
		case nx < -0.4:
			bx.x0, bx.x1 = q.x-w, q.x
		}
		if bx.hits(sw.lbl) || q.x*q.x+q.y*q.y > (l.rpx-4)*(l.rpx-4) {
			continue
		}
		sw.lbl = append(sw.lbl, bx)
		sw.s(`<text x="`)
		sw.num(q.x)
		sw.s(`" y="`)
		sw.num(q.y)
		sw.s(`" dy=".35em"`)
		switch {
		case nx > 0.4:
		case nx < -0.4:
			sw.s(` text-anchor="end"`)
		default:
			sw.s(` text-anchor="middle"`)
		}
		sw.b('>')
		sw.text(label)
		sw.s(`</text>`)
	}
	sw.s(`</g>`)
}

// normal returns the unit normal to the direction d at p, on the side away
// from the chart's centre.
func normal(p, d pt) (float64, float64) {
	l := math.Hypot(d.x, d.y)
	if l == 0 {
		l = math.Hypot(p.x, p.y)
		if l == 0 {
			return 0, -1
		}
		return p.x / l, p.y / l
	}
	nx, ny := -d.y/l, d.x/l
	if nx*p.x+ny*p.y < 0 {
		nx, ny = -nx, -ny
	}
	return nx, ny
}

// box is an axis-aligned rectangle in user units, used to keep labels apart.
type box struct{ x0, y0, x1, y1 float64 }

// hits reports whether b overlaps any of the placed boxes, with a small gap.
func (b box) hits(placed []box) bool {
	const gap = 2
	for _, o := range placed {
		if b.x0 < o.x1+gap && o.x0 < b.x1+gap && b.y0 < o.y1+gap && o.y0 < b.y1+gap {
			return true
		}
	}
	return false
}

// ends writes the start mark (an open ring) and the end mark (an arrowhead
// along the last stretch of the trace) of the mapped points pts.
func (c *Chart) ends(sw *writer, pts []pt, col string) {
	s, e := -1, -1
	for i := range pts {
		if !math.IsNaN(pts[i].x) {
			s = i
			break
		}
	}
	for i := len(pts) - 1; i >= 0; i-- {
		if !math.IsNaN(pts[i].x) {
			e = i
			break
		}
	}
	if s < 0 {
		return
	}
	sw.s(`<circle cx="`)
	sw.num(pts[s].x)
	sw.s(`" cy="`)
	sw.num(pts[s].y)
	sw.s(`" r="3.4" fill="#fff" stroke-width="1.6"/>`)
	// Direction of the end: back along the trace to a point 3 units away.
	tip := pts[e]
	var ux, uy float64
	for i := e - 1; i >= s; i-- {
		if q := pts[i]; !math.IsNaN(q.x) {
			if d := math.Hypot(tip.x-q.x, tip.y-q.y); d >= 3 {
				ux, uy = (tip.x-q.x)/d, (tip.y-q.y)/d
				break
			}
		}
	}
	if ux == 0 && uy == 0 {
		return
	}
	bx, by := tip.x-9*ux, tip.y-9*uy
	x0, y0 := tenths(tip.x), tenths(tip.y)
	x1, y1 := tenths(bx-4*uy), tenths(by+4*ux)
	x2, y2 := tenths(bx+4*uy), tenths(by-4*ux)
	sw.s(`<path stroke="none" fill="`)
	sw.text(col)
	sw.s(`" d="M`)
	sw.xy(x0, y0)
	sw.b('l')
	sw.xy(x1-x0, y1-y0)
	sw.pair(x2-x1, y2-y1)
	sw.s(`z"/>`)
}

// legendSpan returns the frequency span of a trace for its legend entry,
// "2.2–2.7 GHz", or "" when it has no frequencies.
func legendSpan(t *Trace) string {
	n := len(t.FreqHz)
	if n == 0 {
		return ""
	}
	f0, f1 := t.FreqHz[0], t.FreqHz[n-1]
	div, unit := siHz(math.Max(math.Abs(f0), math.Abs(f1)))
	short := func(f float64) string { return strconv.FormatFloat(f/div, 'g', 6, 64) }
	if f1 == f0 {
		return short(f0) + " " + unit
	}
	return short(f0) + "–" + short(f1) + " " + unit
}

func legendName(t *Trace) string {
	if t.Name != "" {
		return t.Name
	}
	return t.ID
}

// legendWidth estimates the width of an entry in user units.
func legendWidth(t *Trace) float64 {
	chars := utf8.RuneCountInString(legendName(t)) + utf8.RuneCountInString(legendSpan(t)) + 2
	return legendSwatch + 6 + float64(chars)*legendCharPx + legendColGap
}

// placeLegend calls put with the top-left corner of each entry, flowing
// entries left to right in rows across the width, and returns the height.
func placeLegend(traces []Trace, size float64, put func(i int, x, y float64)) float64 {
	if !slices.ContainsFunc(traces, func(t Trace) bool { return !t.NoLegend }) {
		return 0
	}
	left := -size/2 + 14
	x, y := left, size/2
	for i := range traces {
		if traces[i].NoLegend {
			continue
		}
		w := legendWidth(&traces[i])
		if x > left && x+w > size/2-8 {
			x, y = left, y+legendRowPx
		}
		if put != nil {
			put(i, x, y)
		}
		x += w
	}
	return y + legendRowPx + legendPadPx - size/2
}

// legend writes the legend layer.
func (c *Chart) legend(sw *writer, l layout, traces []Trace) {
	sw.s(`<g`)
	c.id(sw, "legend")
	sw.s(` font-size="`)
	sw.num(legendFontPx)
	sw.s(`" fill="` + colInk + `">`)
	placeLegend(traces, l.size, func(i int, x, y float64) {
		t := &traces[i]
		col := traceColour(t.Color, i)
		ym := y + legendRowPx/2
		sw.s(`<path fill="none" stroke-width="2.4" stroke="`)
		sw.text(col)
		if t.Dashed {
			sw.s(`" stroke-dasharray="6 3`)
		}
		sw.s(`" d="M`)
		sw.xy(tenths(x), tenths(ym))
		sw.s(`h`)
		sw.num(legendSwatch)
		sw.s(`"/><text x="`)
		sw.num(x + legendSwatch + 6)
		sw.s(`" y="`)
		sw.num(ym)
		sw.s(`" dy=".35em">`)
		sw.text(legendName(t))
		if span := legendSpan(t); span != "" {
			sw.s(`<tspan fill="` + colMuted + `"> `)
			sw.text(span)
			sw.s(`</tspan>`)
		}
		sw.s(`</text>`)
	})
	sw.s(`</g>`)
}
