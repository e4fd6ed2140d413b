package chartsvg

import (
	"math"
	"sort"
	"strconv"
)

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
	lp := newLabelPlacer(l, markers)
	lp.bandNames(sw, bands)
	lp.limitLabels(sw, bands, p.YUnit)
	sw.s(`</g>`)
}

// labelFontPx is the size of the band and limit labels.
const labelFontPx = 10.5

// labelPlacer keeps what the labels of a plot must not cover: the labels
// already placed and the marker lines (with their shapes).
type labelPlacer struct {
	l      *plotLayout
	placed []box
	lines  []box
	mxs    []float64 // the marker lines' x, in order
}

func newLabelPlacer(l *plotLayout, markers []PlotMarker) *labelPlacer {
	lp := &labelPlacer{l: l}
	for i := range markers {
		if x := l.px(markers[i].FreqHz); x >= l.x0 && x <= l.x1 {
			lp.lines = append(lp.lines, box{x - 6, l.y0, x + 6, l.y1})
			lp.mxs = append(lp.mxs, x)
		}
	}
	sort.Float64s(lp.mxs)
	return lp
}

// clampX is the x of frequency f, kept within the plot area.
func (lp *labelPlacer) clampX(f float64) float64 {
	return math.Max(lp.l.x0, math.Min(lp.l.x1, lp.l.px(f)))
}

// fits reports whether b lies inside the plot area clear of every label
// placed and every marker line.
func (lp *labelPlacer) fits(b box) bool {
	l := lp.l
	return b.x0 >= l.x0+1 && b.x1 <= l.x1-1 && b.y0 >= l.y0+1 && b.y1 <= l.y1-1 && !b.hits(lp.placed) && !b.hits(lp.lines)
}

// starts returns where a label of width w may start: at x, else just right
// of each marker line from x on.
func (lp *labelPlacer) starts(x, w float64) []float64 {
	out := []float64{x}
	for _, m := range lp.mxs {
		if m+8 > x && m-8 < x+w+8*float64(len(lp.mxs)) {
			out = append(out, m+8)
		}
	}
	return out
}

// ends returns where a label of width w may end: at x, else just left of
// each marker line from x back.
func (lp *labelPlacer) ends(x, w float64) []float64 {
	out := []float64{x}
	for i := len(lp.mxs) - 1; i >= 0; i-- {
		if m := lp.mxs[i]; m-8 < x && m+8 > x-w-8*float64(len(lp.mxs)) {
			out = append(out, m-8)
		}
	}
	return out
}

// bandNames writes each band's name on the first of two rows at the top of
// the plot where it fits within the band's reach.
func (lp *labelPlacer) bandNames(sw *writer, bands []Band) {
	const fh = labelFontPx
	for _, b := range bands {
		x0, x1 := lp.clampX(b.LoHz), lp.clampX(b.HiHz)
		if !(x1 > x0) || b.Name == "" {
			continue
		}
		w := textWidth(b.Name, fh) + 2
	name:
		for r := 0; r < 2; r++ {
			y := lp.l.y0 + 13 + 14*float64(r)
			for _, x := range lp.starts(x0+4, w) {
				bx := box{x, y - fh + 1, x + w, y + 2}
				if !lp.fits(bx) {
					continue
				}
				lp.placed = append(lp.placed, bx)
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
}

// limitSpot is a candidate place of a limit label: its anchor and whether
// the label ends there (rather than starts).
type limitSpot struct {
	x, y float64
	end  bool
}

// limitLabels writes each limit's label ("limit 10 dB") above its line at
// the band's start, else below it, else at the band's end; a level that
// goes on from the band before, or repeats a label just to its left, gets
// none.
func (lp *labelPlacer) limitLabels(sw *writer, bands []Band, unit string) {
	const fh = labelFontPx
	prevHi, prevLimit := math.NaN(), math.NaN()
	lastLimit, lastLabelX := math.NaN(), math.Inf(-1)
	for _, i := range limitOrder(lp.l, bands) {
		b := bands[i]
		joined := b.LoHz == prevHi && b.Limit == prevLimit
		prevHi, prevLimit = b.HiHz, b.Limit
		if joined {
			continue // the same level goes on
		}
		label := "limit " + strconv.FormatFloat(b.Limit, 'g', 4, 64)
		if unit != "" {
			label += " " + unit
		}
		w := textWidth(label, fh) + 2
		// The same level labelled just before, a little to the left, says
		// it already.
		if b.Limit == lastLimit && lp.clampX(b.LoHz)-lastLabelX < 3*w {
			continue
		}
		for _, c := range lp.limitSpots(b, w) {
			bx := box{c.x, c.y - fh + 1, c.x + w, c.y + 2}
			if c.end {
				bx.x0, bx.x1 = c.x-w, c.x
			}
			if !lp.fits(bx) {
				continue
			}
			lp.placed = append(lp.placed, bx)
			lastLimit, lastLabelX = b.Limit, lp.clampX(b.LoHz)
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
}

// limitSpots returns the places a limit label of width w may take, in order
// of preference: above, then below the line at the band's start (and just
// right of marker lines there), then the same at the band's end.
func (lp *labelPlacer) limitSpots(b Band, w float64) []limitSpot {
	const fh = labelFontPx
	y := lp.l.py(b.Limit)
	xs, xe := lp.clampX(b.LoHz)+3, lp.clampX(b.HiHz)-3
	var cands []limitSpot
	for _, yy := range []float64{y - 4, y + fh + 2} {
		for _, x := range lp.starts(xs, w) {
			cands = append(cands, limitSpot{x, yy, false})
		}
	}
	for _, yy := range []float64{y - 4, y + fh + 2} {
		for _, x := range lp.ends(xe, w) {
			cands = append(cands, limitSpot{x, yy, true})
		}
	}
	return cands
}
