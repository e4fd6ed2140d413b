package server

import (
	"context"
	"fmt"
	"math"
	"math/cmplx"
	"net/url"
	"sort"
	"strconv"
	"strings"

	"matchbench/rfmath"
	"matchbench/rfmath/units"
	"matchbench/sessions"
)

// pageView is how one page looks at its session: the chart's reference,
// parameter, zoom and centre, the frequency span of the plots, what each
// plot shows and its y range, and the return-loss threshold of the
// resonance table. It belongs to the page, not to the session: a page
// (an editor's or a viewer's) changes it without changing the session or
// its history, and the server draws each page's chart and plots for its
// own view. The zero value is the default view.
type pageView struct {
	ID       string  // the page's tag for this view, echoed as data-view on the chart
	Z0       float64 // the chart's reference impedance in ohms; 0 means 50 Ω
	Chart    string  // the chart's traces: "S11", "S22" or "" (both)
	Zoom     float64 // magnification of the chart, ≥ 1; 0 means 1
	Centre   complex128
	SpanLo   float64 // the plots' span in Hz; both 0: the whole sweep
	SpanHi   float64
	SpanFit  bool                  // the span follows the bands (with a margin)
	Plots    map[string]plotChoice // by slot
	RLdB     float64               // threshold of the resonance table; 0 means 10 dB
	Aperture int                   // group-delay aperture in points either side; 0 means 1
}

// plotChoice is what one plot slot shows: a quantity (see quantities) and
// an optional fixed y range.
type plotChoice struct {
	Q          string
	Fixed      bool
	YMin, YMax float64
}

// defaultChartZ0 is the chart's reference when the page names none.
const defaultChartZ0 = 50

func (v *pageView) z0() float64 {
	if v == nil || !(v.Z0 > 0) {
		return defaultChartZ0
	}
	return v.Z0
}

func (v *pageView) zoom() float64 {
	if v == nil || !(v.Zoom > 1) {
		return 1
	}
	return v.Zoom
}

func (v *pageView) rlThreshold() float64 {
	if v == nil || !(v.RLdB > 0) {
		return 10
	}
	return v.RLdB
}

func (v *pageView) aperture() int {
	if v == nil || v.Aperture < 1 {
		return 1
	}
	return v.Aperture
}

// choice returns what slot shows in this view, or the slot's default.
func (v *pageView) choice(slot, def string) plotChoice {
	if v != nil {
		if c, ok := v.Plots[slot]; ok && c.Q != "" {
			return c
		}
	}
	return plotChoice{Q: def}
}

// key identifies the view for sharing rendered bytes between pages: two
// pages with equal keys see the same chart and plots.
func (v *pageView) key() string {
	if v == nil {
		return ""
	}
	var b strings.Builder
	fmt.Fprintf(&b, "%s|%g|%s|%g|%g|%g|%g|%g|%t|%g|%d", v.ID, v.z0(), v.Chart, v.zoom(), real(v.Centre), imag(v.Centre),
		v.SpanLo, v.SpanHi, v.SpanFit, v.rlThreshold(), v.aperture())
	slots := make([]string, 0, len(v.Plots))
	for s := range v.Plots {
		slots = append(slots, s)
	}
	sort.Strings(slots)
	for _, s := range slots {
		c := v.Plots[s]
		fmt.Fprintf(&b, "|%s=%s,%t,%g,%g", s, c.Q, c.Fixed, c.YMin, c.YMax)
	}
	return b.String()
}

// Limits of a view, so that a page cannot ask for a drawing that means
// nothing.
const (
	maxChartZoom = 200
	maxAperture  = 50
	maxPlotSlots = 8
)

// parseView reads a view from a page's fields, as typed (frequencies and
// impedances take SI prefixes):
//
//	vid               the page's tag for this view
//	z0                the chart's reference impedance ("50", "75 Ω")
//	chart             "S11", "S22" or "both"
//	zoom, cre, cim    the chart's magnification (≥ 1) and the Γ at its middle
//	spanLo, spanHi    the plots' span ("860M", "0.95 GHz"); both empty: the whole sweep
//	span              "bands" to fit the span to the bands
//	plot.SLOT         what plot slot SLOT shows ("S11:db", "S21:gd", "power:pct", …)
//	ymin.SLOT, ymax.SLOT  a fixed y range for that slot (both, or neither)
//	rl                the resonance table's return-loss threshold in dB
//	aperture          the group delay's aperture, in points either side
//
// An error names the field that cannot be read.
func parseView(f map[string]string) (pageView, error) {
	var v pageView
	fe := func(field, label string, err error) error { return &FieldError{"view", field, label, err} }
	v.ID = strings.TrimSpace(f["vid"])
	if len(v.ID) > 40 {
		v.ID = v.ID[:40]
	}
	if s := strings.TrimSpace(f["z0"]); s != "" {
		z, err := units.ParseValue(s, "Ω")
		if err != nil || !(z > 0) || z > 1e6 {
			return v, fe("z0", "Chart reference", fmt.Errorf("%q is not a reference impedance (a positive number of ohms)", s))
		}
		v.Z0 = z
	}
	switch c := strings.ToUpper(strings.TrimSpace(f["chart"])); c {
	case "S11", "S22":
		v.Chart = c
	case "", "BOTH":
	default:
		return v, fe("chart", "Chart shows", fmt.Errorf("%q: choose S11, S22 or both", f["chart"]))
	}
	num := func(field, label string) (float64, error) {
		s := strings.TrimSpace(f[field])
		if s == "" {
			return 0, nil
		}
		x, err := strconv.ParseFloat(s, 64)
		if err != nil || math.IsNaN(x) || math.IsInf(x, 0) {
			return 0, fe(field, label, fmt.Errorf("%q is not a number", s))
		}
		return x, nil
	}
	var err error
	if v.Zoom, err = num("zoom", "Zoom"); err != nil {
		return v, err
	}
	v.Zoom = math.Min(math.Max(v.Zoom, 1), maxChartZoom)
	cre, err := num("cre", "Chart centre")
	if err != nil {
		return v, err
	}
	cim, err := num("cim", "Chart centre")
	if err != nil {
		return v, err
	}
	v.Centre = clampCentre(complex(cre, cim))
	if v.Zoom <= 1 {
		v.Centre = 0
	}
	lo, hi := strings.TrimSpace(f["spanLo"]), strings.TrimSpace(f["spanHi"])
	switch {
	case strings.TrimSpace(f["span"]) == "bands":
		v.SpanFit = true
	case lo != "" || hi != "":
		if lo == "" || hi == "" {
			return v, fe("spanLo", "Span", fmt.Errorf("give both a start and a stop frequency, or neither for the whole sweep"))
		}
		if v.SpanLo, err = units.ParseFrequency(lo); err != nil {
			return v, fe("spanLo", "Span start", err)
		}
		if v.SpanHi, err = units.ParseFrequency(hi); err != nil {
			return v, fe("spanHi", "Span stop", err)
		}
		if !(v.SpanHi > v.SpanLo) {
			return v, fe("spanHi", "Span stop", fmt.Errorf("%s is not above the start, %s", fmtF(v.SpanHi), fmtF(v.SpanLo)))
		}
	}
	for k, s := range f {
		slot, ok := strings.CutPrefix(k, "plot.")
		if !ok {
			continue
		}
		if len(v.Plots) >= maxPlotSlots {
			return v, fe(k, "Plot", fmt.Errorf("too many plots"))
		}
		q := strings.TrimSpace(s)
		if _, ok := quantities[q]; !ok {
			return v, fe(k, "Plot", fmt.Errorf("%q is not something a plot shows", q))
		}
		c := plotChoice{Q: q}
		ylo, yhi := strings.TrimSpace(f["ymin."+slot]), strings.TrimSpace(f["ymax."+slot])
		if ylo != "" || yhi != "" {
			if ylo == "" || yhi == "" {
				return v, fe("ymin."+slot, "Fixed range", fmt.Errorf("give both ends of the range, or neither to scale it to the data"))
			}
			a, err1 := units.ParseValue(ylo, "")
			b, err2 := units.ParseValue(yhi, "")
			if err1 != nil || err2 != nil || !(b > a) {
				return v, fe("ymin."+slot, "Fixed range", fmt.Errorf("%q to %q is not a range (two numbers, the second larger)", ylo, yhi))
			}
			c.Fixed, c.YMin, c.YMax = true, a, b
		}
		if v.Plots == nil {
			v.Plots = map[string]plotChoice{}
		}
		v.Plots[slot] = c
	}
	if v.RLdB, err = num("rl", "Return-loss threshold"); err != nil {
		return v, err
	}
	v.RLdB = math.Abs(v.RLdB)
	if v.RLdB > 100 {
		return v, fe("rl", "Return-loss threshold", fmt.Errorf("%g dB is more than any sweep can show; at most 100 dB", v.RLdB))
	}
	if s := strings.TrimSpace(f["aperture"]); s != "" {
		n, err := strconv.Atoi(s)
		if err != nil || n < 1 || n > maxAperture {
			return v, fe("aperture", "Group-delay aperture", fmt.Errorf("%q: a whole number of points from 1 to %d", s, maxAperture))
		}
		v.Aperture = n
	}
	return v, nil
}

// viewFromQuery reads a view from a URL's query (the export links carry
// the page's view); a query that does not read gives the default view.
func viewFromQuery(q url.Values) *pageView {
	f := map[string]string{}
	for k, vs := range q {
		if len(vs) > 0 {
			f[k] = vs[0]
		}
	}
	v, err := parseView(f)
	if err != nil {
		return nil
	}
	return &v
}

// clampCentre keeps the chart's centre within the unit disc, where there is
// something to see.
func clampCentre(c complex128) complex128 {
	if r := math.Hypot(real(c), imag(c)); r > 1 {
		return c / complex(r, 0)
	}
	return c
}

// currentView returns the page's view (nil: the default).
func (c *conn) currentView() *pageView {
	c.viewMu.Lock()
	defer c.viewMu.Unlock()
	return c.view
}

// setView takes a page's new view: it holds from now on for every update
// the page receives, and the page gets its chart, plots and resonance table
// drawn for it (by the applier, in order with the page's changes).
func (c *conn) setView(m inMsg) {
	v, err := parseView(m.Fields)
	if err != nil {
		c.reply(outMsg{Type: "error", ID: m.ID, Msg: err.Error()})
		return
	}
	c.viewMu.Lock()
	c.view = &v
	c.viewMu.Unlock()
	if !c.push(inMsg{Type: "view", ID: m.ID}) {
		c.reply(outMsg{Type: "error", ID: m.ID, Msg: "too many changes waiting: slow down"})
	}
}

// sendView draws the page's view-dependent fragments and sends them.
func (c *conn) sendView(ctx context.Context, id int64) {
	st, ver, err := c.s.store.State(ctx, c.sid)
	if err != nil {
		c.reply(outMsg{Type: "error", ID: id, Msg: "the session could not be read"})
		return
	}
	// Drawn in the session's drawing slot, as every other drawing of its
	// pages (limits.go sessionShare): a page flooding view changes keeps
	// one core at most.
	if !c.share.drawing(ctx) {
		return
	}
	defer c.share.done()
	pv := c.currentView()
	sc := c.s.scene(c.sid, st)
	v := c.s.panelsView(access{SessionID: c.sid, Cap: c.cap, Token: c.token}, sc, ver, pv)
	c.reply(outMsg{Type: "view", ID: id, Frags: c.s.viewFrags(sc, v, pv)})
}

// snapToShown turns a marker.add or marker.move by a chart point into one
// by frequency: the point is taken on the trace as the page's chart shows
// it (the sweep corrected by its reference plane, at the chart's
// reference), snapped to the nearest point of the trace as sessions would
// (the whole trace for a new marker, near the marker's point for a move;
// rfmath.SnapToTrace). Other changes are left alone, as are those whose
// sweep or marker cannot be found (the store then says why).
func (c *conn) snapToShown(ctx context.Context, ch *sessions.Change) error {
	if ch.Gamma == nil || (ch.Op != sessions.OpMarkerAdd && ch.Op != sessions.OpMarkerMove) {
		return nil
	}
	g := complex(ch.Gamma.Re, ch.Gamma.Im)
	if cmplx.IsNaN(g) || cmplx.IsInf(g) {
		return fmt.Errorf("the chart point (%g, %g) is not a finite point", ch.Gamma.Re, ch.Gamma.Im)
	}
	st, _, err := c.s.store.State(ctx, c.sid)
	if err != nil {
		return nil
	}
	sweepID, port, fromHz, window := ch.SweepID, ch.Port, 0.0, -1
	if ch.Op == sessions.OpMarkerMove {
		i := st.MarkerIndex(ch.MarkerID)
		if i < 0 {
			return nil
		}
		m := st.Markers[i]
		sweepID, port, fromHz, window = m.SweepID, m.Port, m.FreqHz, ch.Window
		if window < 0 {
			return nil // the store refuses it with its reason
		}
	}
	j := st.SweepIndex(sweepID)
	if j < 0 {
		return nil
	}
	sw, err := c.s.store.Sweep(c.sid, sweepID)
	if err != nil {
		return nil
	}
	if cs, err := c.s.corrected(c.sid, st.Sweeps[j], sw); err == nil {
		sw = cs
	}
	port = max(port, 1)
	if port > sw.Ports || sw.Len() == 0 {
		return nil
	}
	trace := reflection(sw, port-1)
	target := pointToChart(g, c.currentView().z0(), sw.Z0[port-1])
	n := sw.Len()
	near := 0
	if window >= 0 {
		k, t, err := sw.Locate(min(max(fromHz, sw.FreqHz[0]), sw.FreqHz[n-1]))
		if err != nil {
			return nil
		}
		near = k
		if t >= 0.5 && k+1 < n {
			near = k + 1
		}
		if window == 0 {
			window = max(sessions.MinSnapWindow, n/sessions.SnapWindowDivisor)
		}
	}
	k, t := rfmath.SnapToTrace(trace, target, near, window)
	f := sw.FreqHz[0]
	if n > 1 {
		f = sw.FreqHz[k] + t*(sw.FreqHz[k+1]-sw.FreqHz[k])
	}
	ch.FreqHz, ch.Gamma, ch.Window = f, nil, 0
	return nil
}
