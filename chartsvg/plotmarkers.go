package chartsvg

import (
	"math"
	"sort"
	"strconv"
	"unicode/utf8"
)

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
