package chartsvg

import "unicode/utf8"

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
