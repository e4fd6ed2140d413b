package chartsvg

import (
	"io"
	"math"
	"slices"
	"sort"
	"strconv"
	"unicode/utf8"
)

// Default plot size in pixels (and SVG user units).
const (
	DefaultPlotWidth  = 640
	DefaultPlotHeight = 300
)

// Plot holds the options of a rectangular plot of values against frequency:
// return loss or |S11| in dB, VSWR, R and X in ohms, phase, group delay, |S21|.
// The caller computes the values; Plot only draws them. Its zero value is a
// 640 × 300 plot with automatic ranges.
type Plot struct {
	// Width and Height are the size in pixels and SVG user units; zero
	// means DefaultPlotWidth and DefaultPlotHeight.
	Width, Height int
	// Title is written at the top left. XLabel names the x axis (empty
	// means "Frequency"); YLabel and YUnit name the y axis, written
	// "YLabel (YUnit)".
	Title, XLabel, YLabel, YUnit string
	// XMin and XMax (Hz) fix the x range; when they are equal the range is
	// the span of the data. YMin and YMax do the same for y; an automatic y
	// range is widened to whole tick steps.
	XMin, XMax, YMin, YMax float64
	// LogY draws y on a base-10 logarithmic scale (values ≤ 0 are left out).
	LogY bool
	// Robust makes an automatic y range ignore a few extreme points that
	// lie far beyond the rest (see [Plot.Resolve]); they are then drawn cut
	// at the frame with a mark. Use it for quantities whose extremes are
	// artefacts (R and X of a sweep that starts near DC, noisy group
	// delay), not for those whose extremes are the feature (a dip in dB).
	Robust bool
	// XUnit, when set, makes x a quantity in that unit ("m", "s") rather
	// than a frequency: tick labels take an SI prefix and that unit. The
	// fields and data attributes named for Hz then hold that quantity.
	XUnit string
	// IDPrefix is put before every element id, so that several plots can
	// share a page.
	IDPrefix string
	// NoLegend leaves out the series names at the top right.
	NoLegend bool
}

// Series is one curve of a plot.
type Series struct {
	// ID names the series; its group is written with id "series-ID".
	ID string
	// Name is its legend text; empty means ID.
	Name string
	// Color is any SVG colour; empty takes its place in Palette.
	Color string
	// FreqHz (increasing) and Y hold the points; they must have equal
	// lengths. Non-finite values break the curve.
	FreqHz, Y []float64
	Dashed    bool
	// NoLegend leaves the series out of the legend (the X of an R and X
	// pair, whose dashing the title explains).
	NoLegend bool
}

// Band is a frequency band of interest, shaded, with an optional limit drawn
// as a level line across it (for example a return-loss requirement).
// Adjacent bands' limit lines join into one step line.
type Band struct {
	Name       string
	LoHz, HiHz float64
	Limit      float64
	HasLimit   bool
}

// PlotMarker is a marker shown on a plot as a vertical line at its frequency,
// with its number and, on each series, its shape at the series' value.
// Give it the ID, number and shape of the matching chart Marker.
type PlotMarker struct {
	// ID names the marker; its group is written with id "pmk-ID".
	ID     string
	Num    int
	Label  string
	FreqHz float64
	Color  string
	Shape  Shape
	// Anchor places the marker's number above the plot: 0 centred on its
	// line, −1 ending just left of it, +1 starting just right of it (see
	// [Plot.SpreadLabels]).
	Anchor int
}

const badSeriesLength = "chartsvg: series FreqHz and Y lengths differ"

// plotLayout is the resolved geometry of a plot.
type plotLayout struct {
	w, h                   float64 // whole drawing
	x0, y0, x1, y1         float64 // plot area (y0 top)
	xmin, xmax, ymin, ymax float64 // data ranges (log10 of y when LogY)
	log                    bool
}

// Resolve returns a copy of p with its automatic ranges fixed from the data,
// so that layers rendered one at a time (RenderSeries, RenderMarker) line up
// with a whole Render. It reads every point once (sorting the values in
// range when Robust is set).
//
// An automatic y range is that of the points whose x lies within the x
// range (fixed or automatic) and of the bands' limits. With Robust set (and
// at least 20 points in range), the values are sorted and the m-th lowest
// and highest found, p1 and p99, with m the larger of 3 and 2 % of the
// points; a tail whose extreme lies more than (p99 − p1) beyond its
// percentile is cut at that percentile plus 5 % of (p99 − p1), so that a
// handful of points (the first points of a sweep from near DC, say) cannot
// squeeze the rest into a line, while a tail that merely continues the
// curve is kept.
func (p *Plot) Resolve(series []Series, bands []Band) Plot {
	q := *p
	if q.XMin == q.XMax {
		lo, hi := math.Inf(1), math.Inf(-1)
		for i := range series {
			if f := series[i].FreqHz; len(f) > 0 {
				lo, hi = math.Min(lo, f[0]), math.Max(hi, f[len(f)-1])
			}
		}
		for _, b := range bands {
			lo, hi = math.Min(lo, b.LoHz), math.Max(hi, b.HiHz)
		}
		if !(hi > lo) {
			lo, hi = 0, 1
		}
		q.XMin, q.XMax = lo, hi
	}
	if q.YMin == q.YMax {
		lo, hi := math.Inf(1), math.Inf(-1)
		var vals []float64
		xlo, xhi := math.Min(q.XMin, q.XMax), math.Max(q.XMin, q.XMax)
		for i := range series {
			s := &series[i]
			for k, v := range s.Y {
				if math.IsNaN(v) || math.IsInf(v, 0) || q.LogY && v <= 0 {
					continue
				}
				if k < len(s.FreqHz) && (s.FreqHz[k] < xlo || s.FreqHz[k] > xhi) {
					continue
				}
				lo, hi = math.Min(lo, v), math.Max(hi, v)
				if q.Robust {
					vals = append(vals, v)
				}
			}
		}
		if q.Robust && len(vals) >= 20 {
			lo, hi = robustRange(vals, lo, hi)
		}
		for _, b := range bands {
			if b.HasLimit && !(q.LogY && b.Limit <= 0) {
				lo, hi = math.Min(lo, b.Limit), math.Max(hi, b.Limit)
			}
		}
		switch {
		case q.LogY && !(hi >= lo):
			lo, hi = 1, 10
		case q.LogY:
			lo, hi = math.Pow(10, math.Floor(math.Log10(lo))), math.Pow(10, math.Ceil(math.Log10(hi)))
			if hi == lo {
				hi = lo * 10
			}
		case !(hi >= lo):
			lo, hi = 0, 1
		default:
			// A constant series (within rounding, such as a line's group
			// delay) gets a range of ±10 % about its value, ±1 about 0.
			mag := math.Max(math.Abs(lo), math.Abs(hi))
			switch {
			case mag == 0:
				lo, hi = -1, 1
			case hi-lo <= 1e-9*mag:
				mid := (lo + hi) / 2
				lo, hi = mid-0.1*mag, mid+0.1*mag
			}
			step := niceStep(hi-lo, 5)
			lo, hi = math.Floor(lo/step+1e-9)*step, math.Ceil(hi/step-1e-9)*step
		}
		q.YMin, q.YMax = lo, hi
	}
	return q
}

// robustRange returns the range of vals with far outlying tails cut (see
// [Plot.Resolve]); lo and hi are the full range. vals is sorted in place.
func robustRange(vals []float64, lo, hi float64) (float64, float64) {
	sort.Float64s(vals)
	n := len(vals)
	m := max(3, n/50)
	p1, p99 := vals[m], vals[n-1-m]
	w := p99 - p1
	if !(w > 0) {
		return lo, hi
	}
	if hi-p99 > w {
		hi = p99 + 0.05*w
	}
	if p1-lo > w {
		lo = p1 - 0.05*w
	}
	return lo, hi
}

// Plot layout, top to bottom: the title row, the legend rows, a row for the
// markers' numbers, the plot area, the tick labels and the x-axis name.
const (
	plotRowPx    = 16.0
	plotLeftPx   = 62.0
	plotRightPx  = 18.0
	plotBottomPx = 42.0
	plotFontPx   = 11.0
)

func (p *Plot) layout(series []Series) plotLayout {
	w, h := float64(p.Width), float64(p.Height)
	if p.Width <= 0 {
		w = DefaultPlotWidth
	}
	if p.Height <= 0 {
		h = DefaultPlotHeight
	}
	l := plotLayout{w: w, h: h, x0: plotLeftPx, x1: w - plotRightPx, y1: h - plotBottomPx,
		xmin: p.XMin, xmax: p.XMax, ymin: p.YMin, ymax: p.YMax, log: p.LogY}
	top := 6.0
	if p.Title != "" {
		top += plotRowPx + 2
	}
	if !p.NoLegend && legendCount(series) > 1 {
		rows := p.placeLegend(&l, series, nil)
		top += plotRowPx * float64(rows)
		// Beyond two rows the drawing grows instead of the plot area
		// shrinking, so that many traces keep a readable plot.
		if rows > 2 {
			l.h += plotRowPx * float64(rows-2)
			l.y1 = l.h - plotBottomPx
		}
	}
	l.y0 = top + plotRowPx + 4 // the markers' numbers
	if l.y1-l.y0 < 40 {
		l.y1 = l.y0 + 40
	}
	if l.log {
		l.ymin, l.ymax = math.Log10(math.Max(l.ymin, 1e-300)), math.Log10(math.Max(l.ymax, 1e-300))
	}
	if !(l.xmax > l.xmin) {
		l.xmin, l.xmax = l.xmin-0.5, l.xmin+0.5
	}
	if !(l.ymax > l.ymin) {
		l.ymin, l.ymax = l.ymin-0.5, l.ymin+0.5
	}
	// The left margin holds the widest y tick label and the rotated axis
	// name beside it, so that neither is cut.
	wide := 0.0
	for _, s := range p.yTicks(&l).labels {
		wide = math.Max(wide, textWidth(s, plotFontPx))
	}
	if need := 28 + 6 + wide; need > l.x0 {
		l.x0 = need
	}
	return l
}

// textWidth estimates the width of s in user units at a font size of px
// (the mean advance of Liberation Sans, as the legends use).
func textWidth(s string, px float64) float64 {
	return float64(utf8.RuneCountInString(s)) * 0.56 * px
}

func (l *plotLayout) px(f float64) float64 {
	return l.x0 + (f-l.xmin)/(l.xmax-l.xmin)*(l.x1-l.x0)
}

func (l *plotLayout) py(v float64) float64 {
	if l.log {
		if !(v > 0) {
			return math.NaN()
		}
		v = math.Log10(v)
	}
	return l.y1 - (v-l.ymin)/(l.ymax-l.ymin)*(l.y1-l.y0)
}

// Render writes the whole plot as one <svg> document: axes, bands, series,
// markers and legend. Automatic ranges are resolved from the data first.
func (p *Plot) Render(w io.Writer, series []Series, bands []Band, markers []PlotMarker) error {
	q := p.Resolve(series, bands)
	l := q.layout(series)
	sw := getWriter(w)
	sw.s(`<svg xmlns="http://www.w3.org/2000/svg" viewBox="0 0 `)
	sw.num(l.w)
	sw.b(' ')
	sw.num(l.h)
	sw.b('"')
	sw.numAttr("width", l.w)
	sw.numAttr("height", l.h)
	sw.attr("font-family", fontFamily)
	sw.s(` font-size="11" role="img"`)
	title := q.Title
	if title == "" {
		title = q.YLabel
	}
	sw.attr("aria-label", title)
	// The frequency axis for a page's pointer: x in user units from
	// data-x0 to data-x1 spans data-f0 to data-f1 Hz, linearly.
	sw.numAttr("data-x0", l.x0)
	sw.numAttr("data-x1", l.x1)
	sw.s(` data-f0="`)
	sw.s(strconv.FormatFloat(l.xmin, 'g', 12, 64))
	sw.s(`" data-f1="`)
	sw.s(strconv.FormatFloat(l.xmax, 'g', 12, 64))
	sw.b('"')
	if q.IDPrefix != "" {
		sw.attr("data-id-prefix", q.IDPrefix)
	}
	sw.s(`><title>`)
	sw.text(title)
	sw.s(`</title><rect width="`)
	sw.num(l.w)
	sw.s(`" height="`)
	sw.num(l.h)
	sw.s(`" fill="#fff"/><defs><clipPath`)
	q.id(sw, "area", "")
	sw.s(`><rect`)
	sw.numAttr("x", l.x0)
	sw.numAttr("y", l.y0)
	sw.numAttr("width", l.x1-l.x0)
	sw.numAttr("height", l.y1-l.y0)
	sw.s(`/></clipPath></defs>`)
	q.bands(sw, &l, bands)
	q.axes(sw, &l)
	q.series(sw, &l, series)
	q.markers(sw, &l, markers, series)
	q.bandLabels(sw, &l, bands, markers)
	if !q.NoLegend {
		q.legend(sw, &l, series)
	}
	sw.s("</svg>\n")
	return sw.done()
}

// RenderSeries writes the series layer alone: <g id="series"> holding one
// <g id="series-ID"> per series. Call it on a resolved Plot (see Resolve).
func (p *Plot) RenderSeries(w io.Writer, series []Series) error {
	sw := getWriter(w)
	l := p.layout(series)
	p.series(sw, &l, series)
	return sw.done()
}

// RenderMarkers writes the marker layer alone: <g id="pmarkers"> holding one
// <g id="pmk-ID"> per marker. Each marker costs one binary search per series.
// Call it on a resolved Plot (see Resolve).
func (p *Plot) RenderMarkers(w io.Writer, markers []PlotMarker, series []Series) error {
	sw := getWriter(w)
	l := p.layout(series)
	p.markers(sw, &l, markers, series)
	return sw.done()
}

// RenderBandLabels writes the layer of the bands' names and limit labels
// alone, <g id="bandnames">, placed clear of the markers given (all the
// plot draws), to replace that element when markers move. Call it on a
// resolved Plot.
func (p *Plot) RenderBandLabels(w io.Writer, bands []Band, markers []PlotMarker, series []Series) error {
	sw := getWriter(w)
	l := p.layout(series)
	p.bandLabels(sw, &l, bands, markers)
	return sw.done()
}

// RenderMarker writes one marker's group, <g id="pmk-ID">, to replace that
// element inside the marker layer. Call it on a resolved Plot.
func (p *Plot) RenderMarker(w io.Writer, m PlotMarker, series []Series) error {
	sw := getWriter(w)
	l := p.layout(series)
	p.marker(sw, &l, &m, series)
	return sw.done()
}

func (p *Plot) id(sw *writer, name, suffix string) {
	sw.s(` id="`)
	sw.text(p.IDPrefix)
	sw.text(name)
	sw.text(suffix)
	sw.b('"')
}

// axes writes the frame, grid lines, tick labels, axis names and title.
func (p *Plot) axes(sw *writer, l *plotLayout) {
	sw.s(`<g`)
	p.id(sw, "axes", "")
	sw.s(`>`)
	// Grid lines.
	sw.s(`<path fill="none" stroke="` + colPlotGrid + `" stroke-width="1" d="`)
	xstep := niceStep(l.xmax-l.xmin, max(2, int((l.x1-l.x0)/95)))
	xfirst := math.Ceil(l.xmin/xstep-1e-9) * xstep
	nx := int(math.Floor((l.xmax-xfirst)/xstep+1e-9)) + 1
	for i := 0; i < nx; i++ {
		x := tenths(l.px(xfirst + float64(i)*xstep))
		sw.b('M')
		sw.xy(x, tenths(l.y0))
		sw.s(`V`)
		sw.num(l.y1)
	}
	yt := p.yTicks(l)
	for _, v := range yt.vals {
		y := tenths(l.py(v))
		sw.b('M')
		sw.xy(tenths(l.x0), y)
		sw.s(`H`)
		sw.num(l.x1)
	}
	sw.s(`"/>`)
	// Frame.
	sw.s(`<rect fill="none" stroke="` + colPlotFrame + `" stroke-width="1"`)
	sw.numAttr("x", l.x0)
	sw.numAttr("y", l.y0)
	sw.numAttr("width", l.x1-l.x0)
	sw.numAttr("height", l.y1-l.y0)
	sw.s(`/>`)
	// Tick labels.
	div, unit := siHz(math.Max(math.Abs(l.xmin), math.Abs(l.xmax)))
	if p.XUnit != "" {
		div, unit = siPrefix(math.Max(math.Abs(l.xmin), math.Abs(l.xmax)), p.XUnit)
	}
	sw.s(`<g fill="` + colMuted + `" text-anchor="middle">`)
	for i := 0; i < nx; i++ {
		f := xfirst + float64(i)*xstep
		label := formatHzStep(f, xstep, div, unit)
		x, half := l.px(f), textWidth(label, plotFontPx)/2
		sw.s(`<text`)
		// A label at the end of the axis that would run off the drawing
		// is set to end at its edge instead.
		switch {
		case x+half > l.w-2:
			sw.s(` text-anchor="end"`)
			x = l.w - 2
		case x-half < 2:
			sw.s(` text-anchor="start"`)
			x = 2
		}
		sw.numAttr("x", x)
		sw.numAttr("y", l.y1+15)
		sw.b('>')
		sw.text(label)
		sw.s(`</text>`)
	}
	sw.s(`</g><g fill="` + colMuted + `" text-anchor="end">`)
	for i, v := range yt.vals {
		sw.s(`<text`)
		sw.numAttr("x", l.x0-6)
		sw.numAttr("y", l.py(v))
		sw.s(` dy=".35em">`)
		sw.text(yt.labels[i])
		sw.s(`</text>`)
	}
	sw.s(`</g>`)
	// Axis names and title.
	xl := p.XLabel
	if xl == "" {
		xl = "Frequency"
	}
	sw.s(`<text fill="` + colInk + `" text-anchor="middle"`)
	sw.numAttr("x", (l.x0+l.x1)/2)
	sw.numAttr("y", l.h-8)
	sw.s(`>`)
	sw.text(xl)
	sw.s(`</text>`)
	if yl := p.yName(); yl != "" {
		cy := (l.y0 + l.y1) / 2
		sw.s(`<text fill="` + colInk + `" text-anchor="middle" transform="rotate(-90 `)
		sw.num(16)
		sw.b(' ')
		sw.num(cy)
		sw.s(`)" x="16"`)
		sw.numAttr("y", cy)
		sw.s(`>`)
		sw.text(yl)
		sw.s(`</text>`)
	}
	if p.Title != "" {
		sw.s(`<text fill="` + colInk + `" font-size="13" font-weight="bold"`)
		sw.numAttr("x", l.x0)
		sw.numAttr("y", 6+plotRowPx-2)
		sw.s(`>`)
		sw.text(p.Title)
		sw.s(`</text>`)
	}
	sw.s(`</g>`)
}

func (p *Plot) yName() string {
	switch {
	case p.YLabel != "" && p.YUnit != "":
		return p.YLabel + " (" + p.YUnit + ")"
	case p.YLabel != "":
		return p.YLabel
	}
	return p.YUnit
}

// yTicks are the y values with grid lines and their labels.
type yTicks struct {
	vals   []float64
	labels []string
}

func (p *Plot) yTicks(l *plotLayout) yTicks {
	var t yTicks
	if l.log {
		d0, d1 := int(math.Floor(l.ymin+1e-9)), int(math.Ceil(l.ymax-1e-9))
		mults := []float64{1, 2, 5}
		if d1-d0 > 3 {
			mults = mults[:1]
		}
		for d := d0; d <= d1; d++ {
			for _, m := range mults {
				v := m * math.Pow(10, float64(d))
				if lv := math.Log10(v); lv < l.ymin-1e-9 || lv > l.ymax+1e-9 {
					continue
				}
				t.vals = append(t.vals, v)
				lab := strconv.FormatFloat(v, 'g', 3, 64)
				if v >= 1e-3 && v < 1e6 {
					lab = strconv.FormatFloat(v, 'f', -1, 64)
				}
				t.labels = append(t.labels, lab)
			}
		}
		return t
	}
	step := niceStep(l.ymax-l.ymin, max(2, int((l.y1-l.y0)/42)))
	first := math.Ceil(l.ymin/step-1e-9) * step
	n := int(math.Floor((l.ymax-first)/step+1e-9)) + 1
	for i := 0; i < n; i++ {
		v := first + float64(i)*step
		t.vals = append(t.vals, v)
		t.labels = append(t.labels, formatNum(v, step))
	}
	return t
}

// bands writes the shaded bands and their limit lines; their names and
// the limits' labels are written on top of everything by bandLabels.
func (p *Plot) bands(sw *writer, l *plotLayout, bands []Band) {
	sw.s(`<g`)
	p.id(sw, "bands", "")
	sw.s(`>`)
	clampX := func(f float64) float64 { return math.Max(l.x0, math.Min(l.x1, l.px(f))) }
	for _, b := range bands {
		x0, x1 := clampX(b.LoHz), clampX(b.HiHz)
		if !(x1 > x0) {
			continue
		}
		sw.s(`<rect fill="` + colBandFill + `"`)
		sw.numAttr("x", x0)
		sw.numAttr("y", l.y0)
		sw.numAttr("width", x1-x0)
		sw.numAttr("height", l.y1-l.y0)
		sw.s(`/>`)
	}
	// Limit lines: bands in order of frequency; a band that starts where
	// the previous one ends continues the same step line.
	order := limitOrder(l, bands)
	if len(order) > 0 {
		sw.s(`<path fill="none" stroke="` + colLimit + `" stroke-width="1.8"`)
		sw.s(` clip-path="url(#`)
		sw.text(p.IDPrefix)
		sw.s(`area)" d="`)
		prevHi := math.NaN()
		for _, i := range order {
			b := bands[i]
			x0, x1, y := tenths(clampX(b.LoHz)), tenths(clampX(b.HiHz)), tenths(l.py(b.Limit))
			if b.LoHz == prevHi {
				sw.s(`V`)
				sw.buf = appendTenths(sw.buf, y)
			} else {
				sw.b('M')
				sw.xy(x0, y)
			}
			sw.s(`H`)
			sw.buf = appendTenths(sw.buf, x1)
			prevHi = b.HiHz
		}
		sw.s(`"/>`)
	}
	sw.s(`</g>`)
}

// limitOrder returns the indices of the bands with a limit line inside the
// y range, in order of frequency.
func limitOrder(l *plotLayout, bands []Band) []int {
	order := make([]int, 0, len(bands))
	for i, b := range bands {
		if y := l.py(b.Limit); b.HasLimit && b.HiHz > b.LoHz && !math.IsNaN(y) && y >= l.y0-0.5 && y <= l.y1+0.5 {
			order = append(order, i)
		}
	}
	sort.Slice(order, func(i, j int) bool { return bands[order[i]].LoHz < bands[order[j]].LoHz })
	return order
}

// bandLabels writes the bands' names and the limits' labels, last so that
// no line or marker covers them (they carry a white halo), each placed
// where it meets no other: band names on the first of two rows at the top
// of the plot area where they fit within their band's reach, a limit label
// above its line at the band's start, else below it, else at the band's
// end; a label with no free place is left out, as is one that repeats
// the level of a label just to its left. No label crosses a marker's line
// (or its shapes on it): where one would, the label moves just right (or,
// at a band's end, left) of the line.
func (p *Plot) bandLabels(sw *writer, l *plotLayout, bands []Band, markers []PlotMarker) {
	sw.s(`<g`)
	p.id(sw, "bandnames", "")
	sw.s(` font-size="10.5"` + haloStyle + `>`)
	clampX := func(f float64) float64 { return math.Max(l.x0, math.Min(l.x1, l.px(f))) }
	var placed, lines []box
	var mxs []float64
	for i := range markers {
		if x := l.px(markers[i].FreqHz); x >= l.x0 && x <= l.x1 {
			lines = append(lines, box{x - 6, l.y0, x + 6, l.y1})
			mxs = append(mxs, x)
		}
	}
	sort.Float64s(mxs)
	const fh = 10.5
	fits := func(b box) bool {
		return b.x0 >= l.x0+1 && b.x1 <= l.x1-1 && b.y0 >= l.y0+1 && b.y1 <= l.y1-1 && !b.hits(placed) && !b.hits(lines)
	}
	// starts returns where a label of width w may start: at x, else just
	// right of each marker line from x on; ends the same leftward.
	starts := func(x, w float64) []float64 {
		out := []float64{x}
		for _, m := range mxs {
			if m+8 > x && m-8 < x+w+8*float64(len(mxs)) {
				out = append(out, m+8)
			}
		}
		return out
	}
	ends := func(x, w float64) []float64 {
		out := []float64{x}
		for i := len(mxs) - 1; i >= 0; i-- {
			if m := mxs[i]; m-8 < x && m+8 > x-w-8*float64(len(mxs)) {
				out = append(out, m-8)
			}
		}
		return out
	}
	for _, b := range bands {
		x0, x1 := clampX(b.LoHz), clampX(b.HiHz)
		if !(x1 > x0) || b.Name == "" {
			continue
		}
		w := textWidth(b.Name, fh) + 2
	name:
		for r := 0; r < 2; r++ {
			y := l.y0 + 13 + 14*float64(r)
			for _, x := range starts(x0+4, w) {
				bx := box{x, y - fh + 1, x + w, y + 2}
				if !fits(bx) {
					continue
				}
				placed = append(placed, bx)
				sw.s(`<text fill="#3b6b52"`)
				sw.numAttr("x", x)
				sw.numAttr("y", y)
				sw.s(`>`)
				sw.text(b.Name)
				sw.s(`</text>`)
				break name
			}
		}
	}
	prevHi, prevLimit := math.NaN(), math.NaN()
	lastLimit, lastLabelX := math.NaN(), math.Inf(-1)
	for _, i := range limitOrder(l, bands) {
		b := bands[i]
		joined := b.LoHz == prevHi && b.Limit == prevLimit
		prevHi, prevLimit = b.HiHz, b.Limit
		if joined {
			continue // the same level goes on
		}
		label := "limit " + strconv.FormatFloat(b.Limit, 'g', 4, 64)
		if p.YUnit != "" {
			label += " " + p.YUnit
		}
		w := textWidth(label, fh) + 2
		y := l.py(b.Limit)
		// The same level labelled just before, a little to the left, says
		// it already.
		if b.Limit == lastLimit && clampX(b.LoHz)-lastLabelX < 3*w {
			continue
		}
		xs, xe := clampX(b.LoHz)+3, clampX(b.HiHz)-3
		type spot struct {
			x, y float64
			end  bool
		}
		var cands []spot
		for _, yy := range []float64{y - 4, y + fh + 2} {
			for _, x := range starts(xs, w) {
				cands = append(cands, spot{x, yy, false})
			}
		}
		for _, yy := range []float64{y - 4, y + fh + 2} {
			for _, x := range ends(xe, w) {
				cands = append(cands, spot{x, yy, true})
			}
		}
		for _, c := range cands {
			bx := box{c.x, c.y - fh + 1, c.x + w, c.y + 2}
			if c.end {
				bx.x0, bx.x1 = c.x-w, c.x
			}
			if !fits(bx) {
				continue
			}
			placed = append(placed, bx)
			lastLimit, lastLabelX = b.Limit, clampX(b.LoHz)
			sw.s(`<text fill="` + colLimit + `"`)
			if c.end {
				sw.s(` text-anchor="end"`)
			}
			sw.numAttr("x", c.x)
			sw.numAttr("y", c.y)
			sw.s(`>`)
			sw.text(label)
			sw.s(`</text>`)
			break
		}
	}
	sw.s(`</g>`)
}

// series writes the series layer, each series thinned to what the pixels
// show: within each pixel column the first, lowest, highest and last points
// stay (so every extreme is drawn), and the rest are reduced to within
// DefaultTolerancePx of the curve (the series stroke is 1.8 units wide).
//
// The curves are clipped to the plot area. Where a curve leaves it above or
// below, a small triangle of the series' colour at the frame marks the
// most extreme point of each such stretch (stretches closer than 8 units
// share one), and the series' group carries data-clipped, the number of
// its points beyond the y range; a note at the bottom right explains the
// marks.
func (p *Plot) series(sw *writer, l *plotLayout, series []Series) {
	sw.s(`<g`)
	p.id(sw, "series", "")
	sw.s(` fill="none" stroke-width="1.8" stroke-linejoin="round">`)
	anyClipped := false
	for i := range series {
		s := &series[i]
		if len(s.FreqHz) != len(s.Y) {
			panic(badSeriesLength)
		}
		n := len(s.Y)
		pts, _ := sw.scratch(n)
		clipped := 0
		for j := range n {
			pts[j] = pt{l.px(s.FreqHz[j]), l.py(s.Y[j])}
			if q := pts[j]; q.x >= l.x0 && q.x <= l.x1 && (q.y < l.y0-0.5 || q.y > l.y1+0.5) {
				clipped++
			}
		}
		col := traceColour(s.Color, i)
		sw.s(`<g`)
		p.id(sw, "series-", s.ID)
		sw.s(` stroke="`)
		sw.text(col)
		sw.b('"')
		if clipped > 0 {
			sw.s(` data-clipped="`)
			sw.buf = strconv.AppendInt(sw.buf, int64(clipped), 10)
			sw.b('"')
			anyClipped = true
		}
		sw.s(`>`)
		if clipped > 0 {
			clipMarks(sw, l, pts, col)
		}
		sw.s(`<path clip-path="url(#`)
		sw.text(p.IDPrefix)
		sw.s(`area)"`)
		if s.Dashed {
			sw.s(` stroke-dasharray="7 4"`)
		}
		sw.s(` d="`)
		for a := 0; a < n; {
			if !finitePt(pts[a]) {
				a++
				continue
			}
			b := a + 1
			for b < n && finitePt(pts[b]) {
				b++
			}
			m := columnThin(pts[a:b])
			keep := sw.keep[:m]
			clear(keep)
			sw.idx = simplify(pts[a:a+m], keep, DefaultTolerancePx, sw.idx)
			emitKept(sw, pts[a:a+m], keep)
			a = b
		}
		sw.s(`"/></g>`)
		sw.maybeFlush()
	}
	if anyClipped {
		sw.s(`<text stroke="none" fill="` + colMuted + `" font-size="10" text-anchor="end"`)
		sw.numAttr("x", l.x1)
		sw.numAttr("y", l.h-8)
		sw.s(`>▲▼ beyond the scale</text>`)
	}
	sw.s(`</g>`)
}

// clipMarks writes, for each stretch of pts above or below the plot area
// (within its x range), a triangle at the frame at the stretch's most
// extreme point, pointing out of the area.
func clipMarks(sw *writer, l *plotLayout, pts []pt, col string) {
	sw.s(`<path stroke="none" fill="`)
	sw.text(col)
	sw.s(`" d="`)
	lastUp, lastDown := math.Inf(-1), math.Inf(-1)
	mark := func(x float64, up bool) {
		if up {
			if x-lastUp < 8 {
				return
			}
			lastUp = x
			sw.b('M')
			sw.xy(tenths(x), tenths(l.y0+1))
			sw.s(`l4 7h-8z`)
			return
		}
		if x-lastDown < 8 {
			return
		}
		lastDown = x
		sw.b('M')
		sw.xy(tenths(x), tenths(l.y1-1))
		sw.s(`l4-7h-8z`)
	}
	for a := 0; a < len(pts); {
		q := pts[a]
		up, down := q.y < l.y0-0.5, q.y > l.y1+0.5
		if !(q.x >= l.x0 && q.x <= l.x1) || !up && !down {
			a++
			continue
		}
		ext := a
		b := a + 1
		for b < len(pts) && pts[b].x <= l.x1 && (up && pts[b].y < l.y0-0.5 || down && pts[b].y > l.y1+0.5) {
			if up && pts[b].y < pts[ext].y || down && pts[b].y > pts[ext].y {
				ext = b
			}
			b++
		}
		mark(pts[ext].x, up)
		a = b
	}
	sw.s(`"/>`)
}

func finitePt(q pt) bool {
	return !math.IsNaN(q.x) && !math.IsNaN(q.y) && !math.IsInf(q.x, 0) && !math.IsInf(q.y, 0)
}

// columnThin keeps, for each run of consecutive points in the same pixel
// column, the first, lowest, highest and last of them, in their order, moving
// them to the front of pts. It returns how many it kept.
func columnThin(pts []pt) int {
	out := 0
	for a := 0; a < len(pts); {
		col := math.Floor(pts[a].x)
		b := a + 1
		lo, hi := a, a
		for b < len(pts) && math.Floor(pts[b].x) == col {
			if pts[b].y < pts[lo].y {
				lo = b
			}
			if pts[b].y > pts[hi].y {
				hi = b
			}
			b++
		}
		idx := [4]int{a, lo, hi, b - 1}
		slices.Sort(idx[:])
		last := -1
		for _, i := range idx {
			if i != last {
				pts[out] = pts[i]
				out++
				last = i
			}
		}
		a = b
	}
	return out
}

// emitKept appends the kept points as one subpath: "M x y", then "l" and
// the moves from each point to the next, leaving out moves that round to
// nothing.
func emitKept(sw *writer, pts []pt, keep []bool) {
	first, rel := true, false
	var px, py int
	for i, q := range pts {
		if !keep[i] {
			continue
		}
		x, y := tenths(q.x), tenths(q.y)
		switch {
		case first:
			sw.b('M')
			sw.xy(x, y)
			first = false
		case x != px || y != py:
			if !rel {
				sw.b('l')
				rel = true
			}
			sw.pair(x-px, y-py)
		}
		px, py = x, y
	}
}

// markers writes the plot's marker layer.
func (p *Plot) markers(sw *writer, l *plotLayout, markers []PlotMarker, series []Series) {
	sw.s(`<g`)
	p.id(sw, "pmarkers", "")
	sw.s(` stroke-width="1.4" font-size="11.5" font-weight="bold">`)
	for i := range markers {
		p.marker(sw, l, &markers[i], series)
	}
	sw.s(`</g>`)
}

func (p *Plot) marker(sw *writer, l *plotLayout, m *PlotMarker, series []Series) {
	col := m.Color
	if col == "" {
		col = colInk
	}
	x := l.px(m.FreqHz)
	sw.s(`<g`)
	p.id(sw, "pmk-", m.ID)
	sw.s(` stroke="`)
	sw.text(col)
	sw.b('"')
	if m.FreqHz > 0 {
		sw.s(` data-f="`)
		sw.g(m.FreqHz, 10)
		sw.b('"')
	}
	if !(x >= l.x0 && x <= l.x1) {
		sw.s(`/>`)
		return
	}
	sw.s(`><path stroke-dasharray="4 3" d="M`)
	sw.xy(tenths(x), tenths(l.y0))
	sw.s(`V`)
	sw.num(l.y1)
	sw.s(`"/>`)
	shape := shapePaths[shapeFor(m.Shape, m.Num)]
	for i := range series {
		v, ok := seriesAt(&series[i], m.FreqHz)
		y := l.py(v)
		if !ok || math.IsNaN(y) || y < l.y0 || y > l.y1 {
			continue
		}
		sw.s(`<path fill="#fff" fill-opacity=".8" transform="translate(`)
		sw.num(x)
		sw.b(' ')
		sw.num(y)
		sw.s(`)" d="`)
		sw.s(shape)
		sw.s(centreDot)
		sw.s(`"/>`)
	}
	sw.s(`<text stroke="#fff" stroke-width="3" paint-order="stroke" fill="`)
	sw.text(col)
	lx := x
	switch {
	case m.Anchor < 0:
		sw.s(`" text-anchor="end"`)
		lx -= 3
	case m.Anchor > 0:
		sw.s(`" text-anchor="start"`)
		lx += 3
	default:
		sw.s(`" text-anchor="middle"`)
	}
	sw.numAttr("x", lx)
	sw.numAttr("y", l.y0-5)
	sw.s(`>`)
	sw.buf = strconv.AppendInt(sw.buf, int64(m.Num), 10)
	if m.Label != "" {
		sw.b(' ')
		sw.text(m.Label)
	}
	sw.s(`</text></g>`)
}

// markerLabelWidth estimates the width of a marker's number and label.
func markerLabelWidth(m *PlotMarker) float64 {
	n := len(strconv.Itoa(m.Num))
	if m.Label != "" {
		n += 1 + utf8.RuneCountInString(m.Label)
	}
	return float64(n) * 0.62 * 11.5
}

// SpreadLabels sets the Anchor of each marker so that the numbers written
// above the plot do not overlap: in order of frequency, a number is
// centred on its line where it clears the one before; else, when the one
// before is centred and the two fit side by side, that one ends left of
// its line and this one starts right of it; else this one starts right of
// its line where that clears; a number that still overlaps keeps its place
// (three or more markers closer than their numbers). Call it on a resolved
// Plot with all the markers it draws.
func (p *Plot) SpreadLabels(markers []PlotMarker, series []Series) {
	l := p.layout(series)
	idx := make([]int, 0, len(markers))
	for i := range markers {
		markers[i].Anchor = 0
		if x := l.px(markers[i].FreqHz); x >= l.x0 && x <= l.x1 {
			idx = append(idx, i)
		}
	}
	sort.SliceStable(idx, func(a, b int) bool { return markers[idx[a]].FreqHz < markers[idx[b]].FreqHz })
	span := func(m *PlotMarker) (float64, float64) {
		x, w := l.px(m.FreqHz), markerLabelWidth(m)
		switch {
		case m.Anchor < 0:
			return x - 3 - w, x - 3
		case m.Anchor > 0:
			return x + 3, x + 3 + w
		}
		return x - w/2, x + w/2
	}
	const gap = 3
	for k := 1; k < len(idx); k++ {
		prev, cur := &markers[idx[k-1]], &markers[idx[k]]
		_, pe := span(prev)
		if cs, _ := span(cur); cs >= pe+gap {
			continue
		}
		if prev.Anchor == 0 {
			prev.Anchor, cur.Anchor = -1, 1
			_, pe = span(prev)
			if cs, _ := span(cur); cs >= pe+gap {
				continue
			}
			prev.Anchor = 0
		}
		cur.Anchor = 1
	}
}

// seriesAt interpolates a series linearly at frequency f.
func seriesAt(s *Series, f float64) (float64, bool) {
	n := len(s.FreqHz)
	if n == 0 || f < s.FreqHz[0] || f > s.FreqHz[n-1] {
		return 0, false
	}
	i := sort.SearchFloat64s(s.FreqHz, f)
	if i == 0 {
		return s.Y[0], true
	}
	f0, f1 := s.FreqHz[i-1], s.FreqHz[i]
	if !(f1 > f0) {
		return s.Y[i], true
	}
	u := (f - f0) / (f1 - f0)
	return s.Y[i-1] + (s.Y[i]-s.Y[i-1])*u, true
}

// placeLegend flows the legend entries left to right in rows from the left
// edge of the plot area, calling put (if not nil) with each entry's left end
// and row, and returns the number of rows.
func (p *Plot) placeLegend(l *plotLayout, series []Series, put func(i int, x float64, row int)) int {
	x, row := l.x0, 0
	for i := range series {
		if series[i].NoLegend {
			continue
		}
		w := 24 + float64(utf8.RuneCountInString(seriesName(&series[i])))*0.56*plotFontPx + 16
		if x > l.x0 && x+w > l.x1 {
			x, row = l.x0, row+1
		}
		if put != nil {
			put(i, x, row)
		}
		x += w
	}
	return row + 1
}

// legendCount is the number of series in the legend.
func legendCount(series []Series) int {
	n := 0
	for i := range series {
		if !series[i].NoLegend {
			n++
		}
	}
	return n
}

func seriesName(s *Series) string {
	if s.Name != "" {
		return s.Name
	}
	return s.ID
}

// legend writes the series names under the title, when there are two or more.
func (p *Plot) legend(sw *writer, l *plotLayout, series []Series) {
	if legendCount(series) < 2 {
		return
	}
	sw.s(`<g`)
	p.id(sw, "plegend", "")
	sw.s(` fill="` + colInk + `">`)
	top := 6.0
	if p.Title != "" {
		top += plotRowPx + 2
	}
	p.placeLegend(l, series, func(i int, x float64, row int) {
		s := &series[i]
		y := top + plotRowPx*float64(row) + plotRowPx/2
		sw.s(`<path fill="none" stroke-width="2.2" stroke="`)
		sw.text(traceColour(s.Color, i))
		if s.Dashed {
			sw.s(`" stroke-dasharray="6 3`)
		}
		sw.s(`" d="M`)
		sw.xy(tenths(x), tenths(y))
		sw.s(`h18"/><text`)
		sw.numAttr("x", x+24)
		sw.numAttr("y", y)
		sw.s(` dy=".35em">`)
		sw.text(seriesName(s))
		sw.s(`</text>`)
	})
	sw.s(`</g>`)
}
