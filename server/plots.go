package server

import (
	"bytes"
	"math"
	"math/cmplx"
	"slices"
	"strconv"

	"matchbench/chartsvg"
	"matchbench/rfmath"
	"matchbench/rfmath/amp"
	"matchbench/web"
)

// quantity is one thing a plot can show: a figure of one S-parameter of
// every visible sweep that has it, or the power that reaches the load.
type quantity struct {
	param  string // "S11", "S22" (reflections), "S21", "S12" (transmissions), "K" (a 2-port's stability), "power"
	kind   string // "db", "rl", "vswr", "rx", "zmag", "zphase", "phase", "gd", "kmu", "pct", "pdb"
	label  string // the choice in the plot's selector
	title  string // the plot's title
	ylabel string
	yunit  string
	robust bool // extremes are artefacts: autoscale cuts them (chartsvg.Plot.Robust)
}

// quantities by key ("S11:db", "power:pct").
var quantities = map[string]quantity{}

// quantityOrder is the order of the selector's choices.
var quantityOrder []string

func init() {
	add := func(q quantity) {
		k := q.param + ":" + q.kind
		quantities[k] = q
		quantityOrder = append(quantityOrder, k)
	}
	for _, p := range []string{"S11", "S22"} {
		add(quantity{p, "db", "magnitude in dB", "Reflection |" + p + "| in dB", "|" + p + "|", "dB", false})
		add(quantity{p, "rl", "return loss", "Return loss from " + p, "Return loss", "dB", false})
		add(quantity{p, "vswr", "VSWR", "VSWR from " + p, "VSWR", "", true})
		add(quantity{p, "rx", "R and X", "Impedance from " + p + ": R solid, X dashed", "R, X", "Ω", true})
		add(quantity{p, "zmag", "|Z|", "|Z| from " + p, "|Z|", "Ω", true})
		add(quantity{p, "zphase", "phase of Z", "Phase of Z from " + p, "∠Z", "°", false})
		add(quantity{p, "phase", "phase of Γ", "Phase of " + p + " (Γ)", "∠" + p, "°", false})
		add(quantity{p, "gd", "group delay", "Group delay of " + p + " (reflection, round trip)", "Group delay", "ns", true})
	}
	for _, p := range []string{"S21", "S12"} {
		add(quantity{p, "db", "magnitude in dB", "Transmission |" + p + "| in dB", "|" + p + "|", "dB", false})
		add(quantity{p, "phase", "phase", "Phase of " + p, "∠" + p, "°", false})
		add(quantity{p, "gd", "group delay", "Group delay of " + p, "Group delay", "ns", true})
	}
	add(quantity{"K", "kmu", "Rollett K and μ", "Stability of a 2-port: Rollett K solid, μ dashed (unconditionally stable where μ > 1)", "K, μ", "", true})
	add(quantity{"power", "pct", "in % of the available power", "Power to the load, % of the available power", "to the load", "%", false})
	add(quantity{"power", "pdb", "in dB of the available power", "Power to the load, dB of the available power", "to the load", "dB", false})
}

// A scene keeps its plots for at most maxViewsKept page views and its
// series for at most maxSeriesKept quantities and spans (each page's view
// has its own, and a page that zooms or pans sends many): beyond that it
// starts afresh, so a room's scene stays within a bounded memory however
// its pages look at it.
const (
	maxViewsKept  = 32
	maxSeriesKept = 48
)

// thinSpan thins series s for a plot of the span lo–hi: the points inside
// the span and one either side (the curve runs to the frame), thinned as
// thinSeries does, so that a narrow span keeps a column a pixel.
func thinSpan(s chartsvg.Series, lo, hi float64) chartsvg.Series {
	n := len(s.FreqHz)
	if n == 0 {
		return s
	}
	a, _ := slices.BinarySearch(s.FreqHz, lo) // the first point at or above lo
	b, at := slices.BinarySearch(s.FreqHz, hi)
	if at {
		b++ // the first point above hi
	}
	a, b = max(a-1, 0), min(b, n-1)
	if a > 0 || b < n-1 {
		s.FreqHz, s.Y = s.FreqHz[a:b+1], s.Y[a:b+1]
		if len(s.FreqHz) <= 4*plotWidth {
			// Copies, so that the scene does not hold the whole series.
			s.FreqHz, s.Y = slices.Clone(s.FreqHz), slices.Clone(s.Y)
			return s
		}
	}
	return thinSeries(s)
}

// plotSlot is one plot of the page and what it shows by default.
type plotSlot struct{ id, def string }

// slots returns the page's plot slots: three for the sweeps and, while a
// matching network is active, one for the power to the load.
func (sc *scene) slots() []plotSlot {
	third := "S11:vswr"
	if sc.has2Port() {
		third = "S21:db"
	}
	s := []plotSlot{{"refl", "S11:db"}, {"zx", "S11:rx"}, {"p3", third}}
	if sc.hasNetResponse() {
		s = append(s, plotSlot{"power", "power:pct"})
	}
	return s
}

// has2Port reports whether a visible sweep has two ports.
func (sc *scene) has2Port() bool {
	for _, t := range sc.traces {
		if t.port == 2 {
			return true
		}
	}
	return false
}

func (sc *scene) hasNetResponse() bool {
	ne := sc.net
	return ne != nil && ne.err == nil && len(ne.n.Parts) > 0
}

// span returns the plots' frequency span in view v: the page's own, the
// bands with a quarter of their width either side, or the whole of the
// visible sweeps; always within the sweeps.
func (sc *scene) span(v *pageView) (lo, hi float64) {
	lo, hi = sc.fmin, sc.fmax
	if len(sc.traces) == 0 {
		return 0, 0
	}
	switch {
	case v != nil && v.SpanFit && len(sc.st.Bands) > 0:
		a, b := math.Inf(1), math.Inf(-1)
		for _, bd := range sc.st.Bands {
			a, b = math.Min(a, bd.LoHz), math.Max(b, bd.HiHz)
		}
		m := 0.25 * math.Max(b-a, 0.01*b)
		a, b = math.Max(a-m, lo), math.Min(b+m, hi)
		if b > a {
			return a, b
		}
	case v != nil && v.SpanHi > v.SpanLo:
		a, b := math.Max(v.SpanLo, lo), math.Min(v.SpanHi, hi)
		if b > a {
			return a, b
		}
	}
	return lo, hi
}

// plotsFor returns the page's plots as view v shows them (nil: the default
// view): the slots with their quantities over the span, then the
// time-domain view when it is set. Plots are kept per view while the
// scene's structure stands (see room.sceneFor).
func (sc *scene) plotsFor(v *pageView) []plot {
	key := v.key()
	if p, ok := sc.plotsC[key]; ok {
		return p
	}
	lo, hi := sc.span(v)
	var out []plot
	for _, s := range sc.slots() {
		c := v.choice(s.id, s.def)
		q := quantities[c.Q]
		series, bands, note := sc.quantitySeries(c.Q, v, lo, hi)
		title := q.title
		if note != "" {
			title += " (" + note + ")"
		}
		p := chartsvg.Plot{Width: plotWidth, Height: plotHeight, Title: title, YLabel: q.ylabel, YUnit: q.yunit,
			IDPrefix: s.id + "-", XMin: lo, XMax: hi, Robust: q.robust, LogY: q.kind == "vswr"}
		if c.Fixed {
			p.YMin, p.YMax = c.YMin, c.YMax
		}
		rp := p.Resolve(series, bands)
		out = append(out, plot{id: s.id, title: title, p: rp, series: series, bands: bands, choice: c, def: s.def})
	}
	if p, _ := sc.tdrPlot(); p != nil {
		out = append(out, *p)
	}
	if sc.plotsC == nil || len(sc.plotsC) >= maxViewsKept {
		sc.plotsC = map[string][]plot{}
	}
	sc.plotsC[key] = out
	return out
}

// quantitySeries returns the series and bands of quantity key over every
// visible sweep that has its parameter (and the active network's response
// for its load's reflection), with a note when none has it. The series are
// thinned for the span lo–hi (thinSpan): a span narrower than the sweeps
// keeps its own, finer, series.
func (sc *scene) quantitySeries(key string, v *pageView, lo, hi float64) ([]chartsvg.Series, []chartsvg.Band, string) {
	q := quantities[key]
	ck := key
	if q.kind == "gd" {
		ck += ":" + strconv.Itoa(v.aperture())
	}
	whole := lo <= sc.fmin && hi >= sc.fmax
	if !whole {
		ck += "@" + strconv.FormatFloat(lo, 'g', -1, 64) + "-" + strconv.FormatFloat(hi, 'g', -1, 64)
	}
	bands := sc.quantityBands(q)
	if s, ok := sc.seriesC[ck]; ok {
		return s, bands, sc.seriesNote[ck]
	}
	var out []chartsvg.Series
	note := ""
	switch q.param {
	case "S11", "S22":
		out, note = sc.reflQuantitySeries(q, v)
	case "S21", "S12":
		out, note = sc.transferSeries(q, v)
	case "K":
		out, note = sc.stabilitySeries()
	case "power":
		out, note = sc.powerSeries(q)
	}
	for i := range out {
		out[i] = thinSpan(out[i], lo, hi)
	}
	if sc.seriesC == nil || len(sc.seriesC) >= maxSeriesKept {
		sc.seriesC, sc.seriesNote = map[string][]chartsvg.Series{}, map[string]string{}
	}
	sc.seriesC[ck], sc.seriesNote[ck] = out, note
	return out, bands, note
}

// reflQuantitySeries is quantity q of the reflection at port 1 (S11) or
// port 2 (S22) of every trace shown, and of the network's response at its
// port; a trace's reference is named when the traces' references differ.
func (sc *scene) reflQuantitySeries(q quantity, v *pageView) ([]chartsvg.Series, string) {
	port := 1
	if q.param == "S22" {
		port = 2
	}
	mixed := sc.mixedRefs()
	var out []chartsvg.Series
	for _, t := range sc.traces {
		if t.port != port {
			continue
		}
		name := t.ref.Name
		if mixed {
			name += " (" + fmtOhms(t.z0) + ")"
		}
		out = append(out, reflSeries(q, t.id, name, t.ref.Color, t.sweep.FreqHz, t.gamma, t.z0, port == 2, v.aperture())...)
	}
	if ne := sc.net; sc.hasNetResponse() && ne.port == port {
		out = append(out, reflSeries(q, "net-"+ne.n.ID, ne.n.Name, netColour, ne.sweep.FreqHz, ne.result(), ne.z0, false, v.aperture())...)
	}
	if len(out) == 0 && port == 2 {
		return nil, "no 2-port sweep is shown"
	}
	return out, ""
}

// transferSeries is quantity q (dB, phase or group delay in ns) of S21 or
// S12 of every 2-port sweep shown.
func (sc *scene) transferSeries(q quantity, v *pageView) ([]chartsvg.Series, string) {
	i, j := 1, 0
	if q.param == "S12" {
		i, j = 0, 1
	}
	var out []chartsvg.Series
	for _, t := range sc.traces {
		if t.port != 1 || t.sweep.Ports < 2 {
			continue
		}
		s := t.sweep.Param(nil, i, j)
		y := make([]float64, len(s))
		switch q.kind {
		case "db":
			for k, g := range s {
				y[k] = 20 * math.Log10(cmplx.Abs(g))
			}
		case "phase":
			for k, g := range s {
				y[k] = rfmath.AngleDeg(g)
			}
		case "gd":
			rfmath.GroupDelayTo(y, t.sweep.FreqHz, s, v.aperture())
			for k := range y {
				y[k] *= 1e9
			}
		}
		out = append(out, chartsvg.Series{ID: t.ref.ID + "-" + q.param, Name: t.ref.Name + " " + q.param, Color: t.ref.Color, FreqHz: t.sweep.FreqHz, Y: y})
	}
	if len(out) == 0 {
		return nil, "no 2-port sweep is shown"
	}
	return out, ""
}

// stabilitySeries is the figures of the amplifier panel's stability plot
// (amp.StabilityTo) for every 2-port sweep shown: Rollett K solid,
// Edwards–Sinsky μ dashed, and the line at 1.
func (sc *scene) stabilitySeries() ([]chartsvg.Series, string) {
	var out []chartsvg.Series
	var f []float64
	for _, t := range sc.traces {
		if t.port != 1 || t.sweep.Ports != 2 {
			continue
		}
		st := amp.StabilityTo(nil, t.sweep)
		k, mu := make([]float64, len(st)), make([]float64, len(st))
		for i, x := range st {
			k[i], mu[i] = x.K, x.Mu
		}
		out = append(out, chartsvg.Series{ID: t.ref.ID + "-k", Name: t.ref.Name, Color: t.ref.Color, FreqHz: t.sweep.FreqHz, Y: k},
			chartsvg.Series{ID: t.ref.ID + "-mu", Name: t.ref.Name + " μ", Color: t.ref.Color, FreqHz: t.sweep.FreqHz, Y: mu, Dashed: true, NoLegend: true})
		if len(t.sweep.FreqHz) > len(f) {
			f = t.sweep.FreqHz
		}
	}
	if len(out) == 0 {
		return nil, "no 2-port sweep is shown"
	}
	one := make([]float64, len(f))
	for i := range one {
		one[i] = 1
	}
	return append(out, chartsvg.Series{ID: "k-one", Name: "1: unconditionally stable above (μ)", Color: "#8a8a8a", FreqHz: f, Y: one, Dashed: true}), ""
}

// powerSeries is the power to the load across the network's sweep, in % or
// dB, through the network and of the load alone.
func (sc *scene) powerSeries(q quantity) ([]chartsvg.Series, string) {
	ne := sc.net
	if !sc.hasNetResponse() {
		return nil, "start a matching network to see it"
	}
	with := make([]float64, len(ne.toLoad))
	alone := make([]float64, len(ne.gLoad))
	for k := range with {
		w, a := ne.toLoad[k], rfmath.PowerDeliveredFraction(cmplx.Abs(ne.gLoad[k]))
		if q.kind == "pct" {
			with[k], alone[k] = 100*w, 100*a
		} else {
			with[k], alone[k] = -rfmath.PowerLossDB(w), -rfmath.PowerLossDB(a)
		}
	}
	return []chartsvg.Series{
		{ID: "pw-alone", Name: sweepName(sc.st, ne.n.SweepID) + " alone", Color: "#8a8a8a", FreqHz: ne.sweep.FreqHz, Y: alone, Dashed: true},
		{ID: "pw-net", Name: "through " + ne.n.Name, Color: netColour, FreqHz: ne.sweep.FreqHz, Y: with},
	}, ""
}

// reflSeries returns the series of reflection quantity q for one trace of
// reflection coefficients gamma against z0Ohm, not thinned.
func reflSeries(q quantity, id, name, color string, freq []float64, gamma []complex128, z0Ohm float64, dashed bool, aperture int) []chartsvg.Series {
	n := len(gamma)
	y := make([]float64, n)
	mk := func(suffix, nameSuffix string, y []float64, dashed bool) chartsvg.Series {
		return chartsvg.Series{ID: id + suffix, Name: name + nameSuffix, Color: color, FreqHz: freq, Y: y, Dashed: dashed}
	}
	z := func(g complex128) complex128 { return rfmath.ZFromGamma(g, complex(z0Ohm, 0)) }
	switch q.kind {
	case "db":
		for k, g := range gamma {
			y[k] = 20 * math.Log10(cmplx.Abs(g))
		}
	case "rl":
		for k, g := range gamma {
			y[k] = rfmath.ReturnLossDB(cmplx.Abs(g))
		}
	case "vswr":
		for k, g := range gamma {
			y[k] = rfmath.VSWR(cmplx.Abs(g))
		}
	case "rx":
		x := make([]float64, n)
		for k, g := range gamma {
			zk := z(g)
			y[k], x[k] = real(zk), imag(zk)
		}
		// One legend entry per trace: the title says R solid, X dashed.
		xs := mk("-x", " X", x, true)
		xs.NoLegend = true
		return []chartsvg.Series{mk("-r", "", y, false), xs}
	case "zmag":
		for k, g := range gamma {
			y[k] = cmplx.Abs(z(g))
		}
	case "zphase":
		for k, g := range gamma {
			y[k] = rfmath.AngleDeg(z(g))
		}
	case "phase":
		for k, g := range gamma {
			y[k] = rfmath.AngleDeg(g)
		}
	case "gd":
		rfmath.GroupDelayTo(y, freq, gamma, aperture)
		for k := range y {
			y[k] *= 1e9
		}
	}
	return []chartsvg.Series{mk("", "", y, dashed)}
}

// quantityBands returns the session's bands as quantity q draws them, with
// each band's requirement as a limit line where q can show it.
func (sc *scene) quantityBands(q quantity) []chartsvg.Band {
	var out []chartsvg.Band
	for _, b := range sc.st.Bands {
		cb := chartsvg.Band{Name: b.Name, LoHz: b.LoHz, HiHz: b.HiHz}
		rl, pw := b.MinReturnLossDB, b.MinPowerToLoad
		switch {
		case q.param == "S21" || q.param == "S12" || q.param == "K":
		case q.kind == "db" && rl > 0:
			cb.Limit, cb.HasLimit = -rl, true
		case q.kind == "rl" && rl > 0:
			cb.Limit, cb.HasLimit = rl, true
		case q.kind == "vswr" && rl > 0:
			cb.Limit, cb.HasLimit = math.Round(1e4*rfmath.VSWR(rfmath.GammaMagFromReturnLossDB(rl)))/1e4, true
		case q.kind == "pct" && pw > 0:
			cb.Limit, cb.HasLimit = 100*pw, true
		case q.kind == "pdb" && pw > 0:
			cb.Limit, cb.HasLimit = math.Round(-100*rfmath.PowerLossDB(pw))/100, true
		}
		out = append(out, cb)
	}
	return out
}

// mixedRefs reports whether the visible traces are not all against one
// reference impedance: their plots and legends then say each one's.
func (sc *scene) mixedRefs() bool {
	for _, t := range sc.traces {
		if t.z0 != sc.traces[0].z0 {
			return true
		}
	}
	return false
}

// fmtOhms writes an impedance such as 75 Ω or 12.5 Ω.
func fmtOhms(z float64) string { return strconv.FormatFloat(z, 'g', 4, 64) + " Ω" }

// plotViews draws the page's plots for view v, with each plot's selector.
func (sc *scene) plotViews(v *pageView) []web.PlotView {
	var out []web.PlotView
	for _, p := range sc.plotsFor(v) {
		var b bytes.Buffer
		p.render(&b, sc.plotMarkers())
		pv := web.PlotView{ID: p.id, Title: p.title, SVG: b.String(), Selectable: p.choice.Q != ""}
		if pv.Selectable {
			pv.Groups = sc.quantityGroups(p.choice.Q)
			pv.Fixed = p.choice.Fixed
			if p.choice.Fixed {
				pv.YMin, pv.YMax = fmtRange(p.choice.YMin), fmtRange(p.choice.YMax)
			} else {
				pv.YMin, pv.YMax = fmtRange(p.p.YMin), fmtRange(p.p.YMax)
			}
			pv.GD = quantities[p.choice.Q].kind == "gd"
		}
		out = append(out, pv)
	}
	return out
}

// fmtRange writes a y range's end for its input ("0", never "-0").
func fmtRange(v float64) string { return strconv.FormatFloat(v+0, 'g', 5, 64) }

// quantityGroups are the choices of a plot's selector: the reflections of
// S11 (and S22 with a 2-port sweep shown), the transmissions with a 2-port
// sweep, and the power to the load with a network.
func (sc *scene) quantityGroups(current string) []web.OptGroup {
	groups := map[string]*web.OptGroup{}
	var order []string
	two, net := sc.has2Port(), sc.hasNetResponse()
	for _, k := range quantityOrder {
		q := quantities[k]
		switch {
		case k == current:
		case q.param != "S11" && q.param != "power" && !two:
			continue
		case q.param == "power" && !net:
			continue
		}
		g := groups[q.param]
		if g == nil {
			label := q.param
			switch q.param {
			case "S11":
				label = "S11, reflection at port 1"
			case "S22":
				label = "S22, reflection at port 2"
			case "S21":
				label = "S21, transmission 1 → 2"
			case "S12":
				label = "S12, transmission 2 → 1"
			case "K":
				label = "Stability of a 2-port"
			case "power":
				label = "Power to the load"
			}
			g = &web.OptGroup{Label: label}
			groups[q.param] = g
			order = append(order, q.param)
		}
		label := q.param + ": " + q.label
		switch q.param {
		case "power":
			label = "power to the load " + q.label
		case "K":
			label = q.label
		}
		g.Options = append(g.Options, web.Option{Value: k, Label: label, Selected: k == current})
	}
	out := make([]web.OptGroup, 0, len(order))
	for _, p := range order {
		out = append(out, *groups[p])
	}
	return out
}

// spanView shows the plots' span in view v.
func (sc *scene) spanView(v *pageView) web.SpanView {
	lo, hi := sc.span(v)
	sv := web.SpanView{HasBands: len(sc.st.Bands) > 0, Fit: v != nil && v.SpanFit}
	if hi > lo {
		sv.Lo, sv.Hi = fmtF(lo), fmtF(hi)
		sv.Zoomed = lo > sc.fmin || hi < sc.fmax
	}
	return sv
}
