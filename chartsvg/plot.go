package chartsvg

import (
	"io"
	"math"
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
