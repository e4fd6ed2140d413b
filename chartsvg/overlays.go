package chartsvg

import (
	"math"
	"math/cmplx"
	"strconv"
)

// vswrRadius returns |Γ| = (S − 1)/(S + 1) for VSWR S.
func vswrRadius(s float64) float64 { return (s - 1) / (s + 1) }

// rlRadius returns |Γ| = 10^(−RL/20) for a return loss RL in dB.
func rlRadius(db float64) float64 { return math.Pow(10, -db/20) }

// overlays writes the circles of constant VSWR and return loss and the arcs
// of constant Q (inside the clipped grid group).
func (c *Chart) overlays(sw *writer, l layout) {
	if len(c.VSWRCircles)+len(c.ReturnLossCircleDB) > 0 {
		sw.s(`<path stroke="` + colOverlay + `" stroke-width="1.1" stroke-dasharray="7 4" d="`)
		for _, s := range c.VSWRCircles {
			if s > 1 {
				ringPath(sw, l, vswrRadius(s))
			}
		}
		for _, db := range c.ReturnLossCircleDB {
			if db > 0 {
				ringPath(sw, l, rlRadius(db))
			}
		}
		sw.s(`"/>`)
	}
	if len(c.QArcs) > 0 {
		sw.s(`<path stroke="` + colQ + `" stroke-width="1" stroke-dasharray="2 3" d="`)
		for _, q := range c.QArcs {
			if !(q > 0) || math.IsInf(q, 1) {
				continue
			}
			for _, up := range [...]bool{true, false} {
				cr := qCircle(q, up)
				top := cr.c + complex(0, math.Copysign(cr.r, -imag(cr.c)))
				arcPath(sw, l, cr.r, -1, top, 1, cr.c)
			}
		}
		sw.s(`"/>`)
	}
}

// ringPath appends a full circle about Γ = 0 of radius rho (Γ units).
func ringPath(sw *writer, l layout, rho float64) {
	if !(rho > 0) || !l.visible(circle{0, rho}) {
		return
	}
	arcPath(sw, l, rho, complex(-rho, 0), complex(rho, 0), complex(-rho, 0), 0)
}

// labelInside reports whether the point ρ·e^(jθ) is drawn well inside the
// shown disc, so that a label there is not cut at its edge.
func (l layout) labelInside(rho, th float64) bool {
	return inside(l.xy(cmplx.Rect(rho, th)), l.rpx-20)
}

// overlayLabels writes the names of the overlay circles and arcs.
func (c *Chart) overlayLabels(sw *writer, l layout) {
	if len(c.VSWRCircles)+len(c.ReturnLossCircleDB)+len(c.QArcs) == 0 {
		return
	}
	sw.s(`<g font-size="`)
	sw.num(chartFontPx)
	sw.s(`"` + labelStyle + `>`)
	// Circle labels sit on the circle at −120°, below and left of centre,
	// where the grid is sparsest and traces seldom run.
	th := -2 * math.Pi / 3
	for _, s := range c.VSWRCircles {
		if rho := vswrRadius(s); s > 1 && l.labelInside(rho, th) {
			p := l.xy(cmplx.Rect(rho, th))
			sw.s(`<g fill="` + colOverlay + `">`)
			textAt(sw, p, tangentDeg(th), "VSWR "+strconv.FormatFloat(s, 'g', 3, 64))
			sw.s(`</g>`)
		}
	}
	th = -math.Pi / 3
	for _, db := range c.ReturnLossCircleDB {
		if rho := rlRadius(db); db > 0 && l.labelInside(rho, th) {
			p := l.xy(cmplx.Rect(rho, th))
			sw.s(`<g fill="` + colOverlay + `">`)
			textAt(sw, p, tangentDeg(th), "RL "+strconv.FormatFloat(db, 'g', 3, 64)+" dB")
			sw.s(`</g>`)
		}
	}
	for _, q := range c.QArcs {
		if !(q > 0) || math.IsInf(q, 1) {
			continue
		}
		cr := qCircle(q, true)
		top := imag(cr.c) + cr.r // where the arc crosses the imaginary axis
		p := l.xy(complex(0, top))
		p.x, p.y = p.x+14, p.y-7
		if !inside(p, l.rpx-8) {
			continue
		}
		sw.s(`<g fill="` + colQ + `">`)
		textAt(sw, p, 0, "Q "+strconv.FormatFloat(q, 'g', 3, 64))
		sw.s(`</g>`)
	}
	sw.s(`</g>`)
}

// angleScale writes the angle of Γ in degrees outside the rim: a tick each
// 5°, a longer one each 10°, a label each 30°.
func (c *Chart) angleScale(sw *writer, l layout) {
	r0 := l.rpx
	sw.s(`<g stroke="` + colScale + `" stroke-width=".7"><path d="`)
	for d := 0; d < 360; d += 5 {
		th := float64(d) * math.Pi / 180
		n := 4.0
		if d%10 == 0 {
			n = 7
		}
		radialTick(sw, th, r0, r0+n)
	}
	sw.s(`"/></g><g font-size="`)
	sw.num(chartFontPx - 0.5)
	sw.s(`" fill="` + colScale + `" text-anchor="middle">`)
	for d := -150; d <= 180; d += 30 {
		th := float64(d) * math.Pi / 180
		rr := r0 + 15
		s := strconv.Itoa(d) + "°"
		if d < 0 {
			s = "−" + strconv.Itoa(-d) + "°"
		}
		textAt(sw, pt{rr * math.Cos(th), -rr * math.Sin(th)}, tangentDeg(th), s)
	}
	sw.s(`</g>`)
}

// wavelengthScale writes wavelengths toward the generator outside the angle
// scale. Moving a distance d toward the generator turns Γ clockwise by
// 4π·d/λ, and the scale starts at 0 at Γ = −1 (the short circuit), so the
// value d/λ sits at the angle 180° − 720°·d/λ.
func (c *Chart) wavelengthScale(sw *writer, l layout) {
	r0 := l.rpx + 4
	if c.AngleScale {
		r0 += 24
	}
	sw.s(`<g stroke="` + colScale + `" stroke-width=".7" fill="none"><circle r="`)
	sw.num(r0)
	sw.s(`"/><path d="`)
	for i := 0; i < 50; i++ {
		th := (180 - 7.2*float64(i)) * math.Pi / 180
		n := 3.0
		if i%5 == 0 {
			n = 6
		}
		radialTick(sw, th, r0, r0+n)
	}
	sw.s(`"/></g><g font-size="`)
	sw.num(chartFontPx - 1.5)
	sw.s(`" fill="` + colScale + `" text-anchor="middle">`)
	for i := 0; i < 50; i += 5 {
		th := (180 - 7.2*float64(i)) * math.Pi / 180
		rr := r0 + 12
		s := strconv.FormatFloat(float64(i)/100, 'f', -1, 64)
		textAt(sw, pt{rr * math.Cos(th), -rr * math.Sin(th)}, tangentDeg(th), s)
	}
	sw.s(`</g>`)
}

// radialTick appends "M… L…" for a tick along the radius at angle th from
// radius a to radius b.
func radialTick(sw *writer, th, a, b float64) {
	cs, sn := math.Cos(th), -math.Sin(th)
	x0, y0 := tenths(a*cs), tenths(a*sn)
	x1, y1 := tenths(b*cs), tenths(b*sn)
	sw.b('M')
	sw.xy(x0, y0)
	sw.b('l')
	sw.xy(x1-x0, y1-y0)
}

// caption writes the reference impedance, the zoom and, with both grids on,
// a key to their colours, in the top corners.
func (c *Chart) caption(sw *writer, l layout) {
	h := l.size / 2
	sw.s(`<g font-size="`)
	sw.num(captionFontPx)
	sw.s(`" fill="` + colMuted + `">`)
	y := -h + 18
	if c.Z0Ohm > 0 {
		sw.s(`<text x="`)
		sw.num(-h + 10)
		sw.s(`" y="`)
		sw.num(y)
		sw.s(`">Z₀ = `)
		sw.text(strconv.FormatFloat(c.Z0Ohm, 'g', 6, 64))
		sw.s(` Ω</text>`)
		y += 16
	}
	if l.zoom < 1 {
		sw.s(`<text x="`)
		sw.num(-h + 10)
		sw.s(`" y="`)
		sw.num(y)
		if l.centred() {
			sw.s(`">|Γ| ≤ `)
			sw.text(strconv.FormatFloat(l.zoom, 'g', 3, 64))
			sw.s(` shown</text>`)
		} else {
			sw.s(`">×`)
			sw.text(strconv.FormatFloat(1/l.zoom, 'g', 3, 64))
			sw.s(` about Γ = `)
			sw.text(formatGamma(l.c))
			sw.s(`</text>`)
		}
	}
	y = -h + 18
	if c.ImpedanceGrid && c.AdmittanceGrid {
		for _, k := range [...]struct{ col, name string }{{colZMajor, "impedance z"}, {colYMajor, "admittance y"}} {
			sw.s(`<path stroke="` + k.col + `" stroke-width="2" d="M`)
			sw.pair(tenths(h-112), tenths(y-4))
			sw.s(`h16"/><text x="`)
			sw.num(h - 90)
			sw.s(`" y="`)
			sw.num(y)
			sw.s(`">` + k.name + `</text>`)
			y += 16
		}
	}
	if c.WavelengthScale {
		sw.s(`<text x="`)
		sw.num(h - 10)
		sw.s(`" y="`)
		sw.num(h - 10)
		sw.s(`" text-anchor="end">outer scale: λ toward generator</text>`)
	}
	sw.s(`</g>`)
}

// formatGamma writes Γ as "0.12 − j0.34".
func formatGamma(g complex128) string {
	sign := " + j"
	if imag(g) < 0 {
		sign = " − j"
	}
	re := strconv.FormatFloat(real(g), 'f', 2, 64)
	if real(g) < 0 {
		re = "−" + re[1:]
	}
	return re + sign + strconv.FormatFloat(math.Abs(imag(g)), 'f', 2, 64)
}
