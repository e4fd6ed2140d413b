package chartsvg

import (
	"math"
	"slices"
	"strconv"
)

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
