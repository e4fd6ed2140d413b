package server

import (
	"bytes"
	"context"
	"fmt"
	"io"
	"math"
	"math/cmplx"
	"net/http"
	"slices"
	"strconv"
	"strings"

	"matchbench/chartsvg"
	"matchbench/rfmath"
	"matchbench/rfmath/match"
	"matchbench/rfmath/units"
	"matchbench/sessions"
	"matchbench/web"
)

// Sizes of the drawings in the page, in SVG user units (= CSS pixels at
// 100 %; the page scales them to its columns).
const (
	chartSizePx = 640
	plotWidth   = 640
	plotHeight  = 260
)

// trace is one reflection trace of a visible sweep: S(port,port).
type trace struct {
	id    string // "<sweepID>-p<port>"; app.js parses it
	ref   sessions.SweepRef
	port  int
	sweep *rfmath.Sweep
	z0    float64
	gamma []complex128
}

// viewCaches are the caches a scene fills as it is drawn, kept while only
// markers change (room.sceneFor copies them with the scene): plots by
// view, plot series by quantity, traces renormalised for a chart's
// reference. Each is bounded (maxViewsKept, maxSeriesKept, maxDispRefs).
type viewCaches struct {
	plotsC     map[string][]plot
	seriesC    map[string][]chartsvg.Series
	seriesNote map[string]string
	disp       map[string][]complex128
}

// netFigures are the active network's figures, computed once per scene:
// the band figures (metrics), the Monte Carlo (yield) and, filled by
// fillDerived (derivedscene.go) from the derived-results cache, whether
// the yield is still computing and the limits.
type netFigures struct {
	metricsDone bool // metricsRes, metricsIdx and metricsErr hold the network's band figures
	metricsRes  match.Metrics
	metricsIdx  []int
	metricsErr  error
	setRes      *match.SetMetrics // the figures on each member, when the network is judged across a set

	yieldDone bool // yieldRes and yieldMsg hold the network's Monte Carlo
	yieldRes  *match.YieldResult
	yieldMsg  string

	yieldPending bool            // the Monte Carlo is computing
	limitsV      *web.LimitsView // the limits, or "computing…"
	jobCtx       context.Context // a derived job's context (jobContext)
}

// tdrView is the time-domain view of a scene, computed once.
type tdrView struct {
	tdrDone bool // tdrP and tdrNote hold the time-domain view
	tdrP    *plot
	tdrNote string
}

// scene is what one state of a session draws: its visible traces and the
// derived data the chart, the plots and the panels need.
type scene struct {
	sid    string
	st     *sessions.State
	traces []*trace
	all    map[string]*rfmath.Sweep // every listed sweep, visible or not
	chart  chartsvg.Chart           // the session's chart settings; chartFor adds a page's view
	fmin   float64
	fmax   float64
	net    *netEval // the active matching network, or nil

	viewCaches // drawings by page view, kept while only markers change

	raw  map[string]*rfmath.Sweep // sweeps as measured, where a plane corrects them
	errs map[string]string        // sweeps whose plane could not be applied

	netFigures        // the active network's band figures, yield and limits
	tdrView           // the time-domain view
	prev       *scene // the scene before, while a room renders an event

	amp   *ampEval   // the amplifier view, or nil (amp.go)
	stage *stageEval // the transistor stage, or nil (amp.go)
}

// scene builds the scene of state st. Sweeps that cannot be read are left
// out and logged.
func (s *Server) scene(sid string, st *sessions.State) *scene {
	sc := &scene{sid: sid, st: st, all: map[string]*rfmath.Sweep{}, raw: map[string]*rfmath.Sweep{}, errs: map[string]string{}, fmin: math.Inf(1), fmax: math.Inf(-1)}
	for _, ref := range st.Sweeps {
		sw, err := s.store.Sweep(sid, ref.ID)
		if err != nil {
			s.log.Error("read sweep", "sweep", ref.ID, "err", err)
			continue
		}
		if ref.RefPlane != nil {
			c, err := s.corrected(sid, ref, sw)
			if err != nil {
				sc.errs[ref.ID] = "the reference plane cannot be applied: " + err.Error()
			} else {
				sc.raw[ref.ID] = sw
				sw = c
			}
		}
		sc.all[ref.ID] = sw
		if !ref.Visible {
			continue
		}
		ports := 1
		if sw.Ports >= 2 {
			ports = 2
		}
		for p := 1; p <= ports; p++ {
			sc.traces = append(sc.traces, &trace{
				id: fmt.Sprintf("%s-p%d", ref.ID, p), ref: ref, port: p, sweep: sw,
				z0: sw.Z0[p-1], gamma: reflection(sw, p-1),
			})
		}
		sc.fmin = math.Min(sc.fmin, sw.FreqHz[0])
		sc.fmax = math.Max(sc.fmax, sw.FreqHz[sw.Len()-1])
	}
	cs := st.Chart
	sc.chart = chartsvg.Chart{
		SizePx:          chartSizePx,
		ImpedanceGrid:   cs.ImpedanceGrid,
		AdmittanceGrid:  cs.AdmittanceGrid,
		AngleScale:      cs.ShowAngleScale,
		WavelengthScale: cs.ShowWavelengthScale,
		QArcs:           cs.QArcs,
		Z0Ohm:           defaultChartZ0,
	}
	if cs.Zoom > 1 {
		sc.chart.Zoom = 1 / cs.Zoom
	}
	if cs.VSWRCircle > 1 {
		sc.chart.VSWRCircles = []float64{cs.VSWRCircle}
	}
	if cs.ReturnLossCircleDB > 0 {
		sc.chart.ReturnLossCircleDB = []float64{cs.ReturnLossCircleDB}
	}
	if n := st.Active(); n != nil {
		sc.net = sc.evalNetwork(n)
	}
	s.fillDerived(sc)
	s.evalAmp(sc)
	return sc
}

func (sc *scene) traceByMarker(m sessions.Marker) *trace {
	for _, t := range sc.traces {
		if t.ref.ID == m.SweepID && t.port == max(m.Port, 1) {
			return t
		}
	}
	return nil
}

// chartFor returns the chart as view v draws it: the session's grids and
// overlays at the page's reference, zoom and centre (the session's own
// zoom while the page has not zoomed).
func (sc *scene) chartFor(v *pageView) chartsvg.Chart {
	c := sc.chart
	c.Z0Ohm = v.z0()
	if z := v.zoom(); z > 1 {
		c.Zoom, c.Centre = 1/z, v.Centre
	}
	return c
}

// onChart reports whether view v's chart shows trace t's port.
func onChart(v *pageView, t *trace) bool {
	switch {
	case v == nil || v.Chart == "":
		return true
	case v.Chart == "S22":
		return t.port == 2
	}
	return t.port == 1
}

func (sc *scene) chartTraces(v *pageView) []chartsvg.Trace {
	out := make([]chartsvg.Trace, 0, len(sc.traces))
	z0 := v.z0()
	shown := 0
	for _, t := range sc.traces {
		if onChart(v, t) {
			shown++
		}
	}
	n := 0
	for _, t := range sc.traces {
		if !onChart(v, t) {
			continue
		}
		n++
		// Frequency labels along every trace crowd a chart of many: with
		// three or four, every other tick is labelled; with more, only
		// the first two traces' ticks are.
		every := 0
		switch {
		case shown > 4 && n > 2:
			every = 1 << 30
		case shown > 2:
			every = 2
		}
		name := t.ref.Name
		if t.sweep.Ports > 1 {
			name += fmt.Sprintf(" S%d%d", t.port, t.port)
		}
		if t.z0 != z0 {
			name += " (" + fmtOhms(t.z0) + " sweep, drawn at " + fmtOhms(z0) + ")"
		}
		var keep []float64
		for _, m := range sc.st.Markers {
			if m.SweepID == t.ref.ID && max(m.Port, 1) == t.port {
				keep = append(keep, m.FreqHz)
			}
		}
		out = append(out, chartsvg.Trace{
			ID: t.id, Name: name, Color: t.ref.Color, FreqHz: t.sweep.FreqHz, Gamma: sc.dispGamma(t, z0),
			Dashed: t.port == 2, KeepHz: keep, LabelEvery: every,
		})
		if raw := sc.raw[t.ref.ID]; raw != nil && t.port == 1 {
			out = append(out, chartsvg.Trace{
				ID: t.ref.ID + "-raw", Name: t.ref.Name + " (as measured)", Color: t.ref.Color, FreqHz: raw.FreqHz,
				Gamma: toChart(reflection(raw, 0), raw.Z0[0], z0), Dashed: true, Ticks: -1,
			})
		}
	}
	return out
}

// thinSeries keeps, of a long series, the first, lowest, highest and last
// point of each of plotWidth frequency columns: what the plot can show
// (chartsvg thins the same way to its pixels, and a series is cut to the
// plot's span first, thinSpan, so a column is at most a pixel wide), at a fraction of
// the memory that a room's cached scene holds between renders. A series of
// at most 4·plotWidth points is kept whole.
func thinSeries(s chartsvg.Series) chartsvg.Series {
	const cols = plotWidth
	n := len(s.FreqHz)
	if n <= 4*cols {
		return s
	}
	f0, f1 := s.FreqHz[0], s.FreqHz[n-1]
	fs := make([]float64, 0, 4*cols)
	ys := make([]float64, 0, 4*cols)
	for start := 0; start < n; {
		col := int(float64(cols) * (s.FreqHz[start] - f0) / (f1 - f0))
		end := start + 1
		for end < n && int(float64(cols)*(s.FreqHz[end]-f0)/(f1-f0)) == col {
			end++
		}
		lo, hi := start, start
		for k := start; k < end; k++ {
			if s.Y[k] < s.Y[lo] || math.IsNaN(s.Y[lo]) {
				lo = k
			}
			if s.Y[k] > s.Y[hi] || math.IsNaN(s.Y[hi]) {
				hi = k
			}
		}
		for _, k := range sortedUnique(start, min(lo, hi), max(lo, hi), end-1) {
			fs = append(fs, s.FreqHz[k])
			ys = append(ys, s.Y[k])
		}
		start = end
	}
	// Exact-size copies: the scratch above is sized for the worst case.
	s.FreqHz, s.Y = slices.Clone(fs), slices.Clone(ys)
	return s
}

// sortedUnique returns its increasing arguments without repeats.
func sortedUnique(a, b, c, d int) []int {
	out := []int{a}
	for _, v := range []int{b, c, d} {
		if v != out[len(out)-1] {
			out = append(out, v)
		}
	}
	return out
}

// markerNum is a marker's number: its place in the session's list, from 1.
func (sc *scene) markerNum(id string) int { return sc.st.MarkerIndex(id) + 1 }

// chartMarker returns marker i as view v's chart draws it, if it does.
func (sc *scene) chartMarker(i int, v *pageView) (chartsvg.Marker, bool) {
	m := sc.st.Markers[i]
	t := sc.traceByMarker(m)
	if t == nil || !onChart(v, t) {
		return chartsvg.Marker{}, false
	}
	g, ok := t.at(m.FreqHz)
	if !ok {
		return chartsvg.Marker{}, false
	}
	g = pointToChart(g, t.z0, v.z0())
	return chartsvg.Marker{ID: m.ID, Num: i + 1, Label: m.Label, Gamma: g, FreqHz: m.FreqHz, Trace: t.id, Color: t.ref.Color}, true
}

func (sc *scene) chartMarkers(v *pageView) []chartsvg.Marker {
	var out []chartsvg.Marker
	for i := range sc.st.Markers {
		if cm, ok := sc.chartMarker(i, v); ok {
			out = append(out, cm)
		}
	}
	return out
}

// reflection returns S(p+1,p+1) of sw for reading only: a 1-port sweep's
// data are that trace already, so they are not copied.
func reflection(sw *rfmath.Sweep, p int) []complex128 {
	if sw.Ports == 1 {
		return sw.Data
	}
	return sw.Param(nil, p, p)
}

// at interpolates the trace's Γ at fHz.
func (t *trace) at(fHz float64) (complex128, bool) {
	k, u, err := t.sweep.Locate(fHz)
	if err != nil {
		return 0, false
	}
	if k+1 >= len(t.gamma) {
		return t.gamma[k], true
	}
	return t.gamma[k] + complex(u, 0)*(t.gamma[k+1]-t.gamma[k]), true
}

// renderChart draws the chart as the default view shows it.
func (sc *scene) renderChart(w io.Writer) error { return sc.renderChartView(w, nil) }

// renderChartView draws the chart as view v shows it.
func (sc *scene) renderChartView(w io.Writer, v *pageView) error {
	z0 := v.z0()
	traces := append(sc.cloudTraces(z0), sc.chartTraces(v)...)
	traces = append(traces, sc.netTracesAt(z0)...)
	traces = append(traces, sc.setTraces(z0)...)
	markers := sc.chartMarkers(v)
	var path []chartsvg.PathSegment
	if sc.net != nil {
		var handles []chartsvg.Marker
		path, handles = sc.net.pathAt(-1, 0, 1, z0)
		markers = append(markers, handles...)
	}
	c := sc.chartFor(v)
	if v != nil {
		c.Tag = v.ID
	}
	return c.Render(w, traces, markers, path)
}

// plot is one rectangular plot of the page.
type plot struct {
	id, title string
	p         chartsvg.Plot // resolved
	series    []chartsvg.Series
	bands     []chartsvg.Band
	choice    plotChoice // what the slot shows; Q is "" for the time-domain plot
	def       string     // the slot's default quantity
}

func (p *plot) render(w io.Writer, markers []chartsvg.PlotMarker) error {
	if len(markers) > 1 {
		p.p.SpreadLabels(markers, p.series)
	}
	return p.p.Render(w, p.series, p.bands, markers)
}

// plots returns the page's plots as the default view shows them.
func (sc *scene) plots() []plot { return sc.plotsFor(nil) }

func (sc *scene) plotMarkers() []chartsvg.PlotMarker {
	var out []chartsvg.PlotMarker
	for i, m := range sc.st.Markers {
		if t := sc.traceByMarker(m); t != nil {
			out = append(out, chartsvg.PlotMarker{ID: m.ID, Num: i + 1, Label: m.Label, FreqHz: m.FreqHz, Color: t.ref.Color})
		}
	}
	return out
}

// markersOf returns the markers as plot p draws them, their numbers
// spread so that none covers another (chartsvg.Plot.SpreadLabels).
func (sc *scene) markersOf(p *plot) []chartsvg.PlotMarker {
	ms := sc.plotMarkers()
	p.p.SpreadLabels(ms, p.series)
	return ms
}

// readout is one marker's figures.
type readout struct {
	id, label, sweepName, color string
	num, port                   int
	ro                          rfmath.Readout
}

func (sc *scene) readouts() []readout {
	var out []readout
	for i, m := range sc.st.Markers {
		t := sc.traceByMarker(m)
		if t == nil {
			continue
		}
		g, ok := t.at(m.FreqHz)
		if !ok {
			continue
		}
		out = append(out, readout{
			id: m.ID, label: m.Label, sweepName: t.ref.Name, color: t.ref.Color, num: i + 1, port: t.port,
			ro: rfmath.NewReadout(m.FreqHz, g, t.z0),
		})
	}
	return out
}

func fmtF(f float64) string { return units.FormatFrequency(f, 7) }

// fmtZ writes an impedance as "R ± jX Ω" with a true minus sign, each part
// in strconv's format fmt at precision prec.
func fmtZ(z complex128, fmt byte, prec int) string {
	sign := "+"
	if imag(z) < 0 {
		sign = "−"
	}
	return strconv.FormatFloat(real(z), fmt, prec, 64) + " " + sign + " j" + strconv.FormatFloat(math.Abs(imag(z)), fmt, prec, 64) + " Ω"
}

func fmtDB(v float64) string { return units.FormatDB(v) }

// fmtNum writes a unitless figure with prec decimals (units.FormatFixed,
// as the command line writes it).
func fmtNum(v float64, prec int) string { return units.FormatFixed(v, prec) }

func (sc *scene) readoutRows() []web.ReadoutRow {
	var rows []web.ReadoutRow
	for _, r := range sc.readouts() {
		ro := r.ro
		z := "open"
		if !cmplx.IsInf(ro.Z) {
			z = fmtZ(ro.Z, 'f', 2)
		}
		eq := "—"
		switch kind := ro.Equiv.Kind; {
		case ro.Q < 0.01: // X is noise around a resonance: no part to name
		case kind == rfmath.KindL:
			eq = units.Format(ro.Equiv.Value, "H", 4)
		case kind == rfmath.KindC:
			eq = units.Format(ro.Equiv.Value, "F", 4)
		}
		row := web.ReadoutRow{
			MarkerID: r.id, Num: r.num, Label: r.label, Color: r.color,
			Trace: fmt.Sprintf("%s · S%d%d", r.sweepName, r.port, r.port),
			Freq:  fmtF(ro.FreqHz), FreqHz: ro.FreqHz, Z: z,
			Gamma: fmt.Sprintf("%.4f ∠ %.1f°", ro.GammaMag, ro.GammaDeg),
			RL:    fmtDB(ro.ReturnLossDB), VSWR: fmtNum(ro.VSWR, 3), ML: fmtDB(ro.MismatchLossDB),
			Q: fmtNum(ro.Q, 2), Equiv: eq,
		}
		if len(ro.Warnings) > 0 {
			row.Warning = strings.Join(ro.Warnings, "; ")
		}
		rows = append(rows, row)
	}
	return rows
}

func (sc *scene) bandRows() []web.BandRow {
	var rows []web.BandRow
	for _, b := range sc.st.Bands {
		row := web.BandRow{ID: b.ID, Name: b.Name, Lo: fmtF(b.LoHz), Hi: fmtF(b.HiHz), LoHz: b.LoHz, HiHz: b.HiHz, MinRL: "—", MinPower: "—"}
		if b.MinReturnLossDB > 0 {
			row.MinRL = fmtNum(b.MinReturnLossDB, 1) + " dB"
			row.MinRLValue = strconv.FormatFloat(b.MinReturnLossDB, 'g', -1, 64)
		}
		if b.MinPowerToLoad > 0 {
			row.MinPower = strconv.FormatFloat(100*b.MinPowerToLoad, 'g', 4, 64) + " %"
			row.MinPowerValue = strconv.FormatFloat(100*b.MinPowerToLoad, 'g', -1, 64) + "%"
		}
		req := rfmath.Requirement{MinReturnLossDB: b.MinReturnLossDB, MinPowerToLoad: b.MinPowerToLoad}
		for _, t := range sc.traces {
			fig, err := rfmath.TraceBandFigures(t.sweep.FreqHz, t.gamma, b.LoHz, b.HiHz)
			if err != nil {
				continue
			}
			row.Worst = append(row.Worst, web.BandResult{
				Sweep: t.ref.Name, Color: t.ref.Color, Worst: fmtDB(fig.WorstRLdB), Power: units.FormatPercent(fig.WorstPowerToLoad, 1),
				Has: req.Any(), Pass: req.MarginDB(fig) >= 0,
			})
		}
		rows = append(rows, row)
	}
	return rows
}

func (sc *scene) sweepRows(token string) []web.SweepRow {
	var rows []web.SweepRow
	for _, ref := range sc.st.Sweeps {
		rows = append(rows, web.SweepRow{
			ID: ref.ID, Name: ref.Name, FileName: ref.FileName, Color: ref.Color, Visible: ref.Visible,
			Summary: fmt.Sprintf("%d-port, %d points, %s – %s", ref.Ports, ref.Points, fmtF(ref.FminHz), fmtF(ref.FmaxHz)),
			RawHref: "/s/" + token + "/sweeps/" + ref.ID + "/file",
			Plane:   sc.planeSummary(ref),
		})
	}
	return rows
}

func chartOptions(cs sessions.ChartSettings) web.ChartOptions {
	o := web.ChartOptions{
		ImpedanceGrid: cs.ImpedanceGrid, AdmittanceGrid: cs.AdmittanceGrid,
		AngleScale: cs.ShowAngleScale, WavelengthScale: cs.ShowWavelengthScale,
		Zoom: fmtNum(math.Max(cs.Zoom, 1), 2),
	}
	o.Zoom = strings.TrimSuffix(strings.TrimRight(o.Zoom, "0"), ".")
	if cs.VSWRCircle > 1 {
		o.VSWRCircle = strconv.FormatFloat(cs.VSWRCircle, 'g', 4, 64)
	}
	if cs.ReturnLossCircleDB > 0 {
		o.ReturnLossCircleDB = strconv.FormatFloat(cs.ReturnLossCircleDB, 'g', 4, 64)
	}
	q := make([]string, len(cs.QArcs))
	for i, v := range cs.QArcs {
		q[i] = strconv.FormatFloat(v, 'g', 4, 64)
	}
	o.QArcs = strings.Join(q, ", ")
	return o
}

// sessionView builds the whole page's view model.
func (s *Server) sessionView(r *http.Request, a access, sc *scene, ver int64) web.SessionView {
	v := s.panelsView(a, sc, ver, nil)
	var b bytes.Buffer
	if err := sc.renderChart(&b); err != nil {
		s.log.Error("render chart", "err", err)
	}
	v.Chart.SVG = b.String()
	v.Plots = sc.plotViews(nil)
	if a.Cap == sessions.Edit {
		v.Share = s.shareLinks(r, a.SessionID)
	}
	return v
}

// panelsView fills the parts of the page that do not need drawing, as
// view v shows them.
func (s *Server) panelsView(a access, sc *scene, ver int64, v *pageView) web.SessionView {
	return web.SessionView{
		ID: a.SessionID, Name: sc.st.Name, Version: ver, CanEdit: a.Cap == sessions.Edit, Token: a.Token,
		Sweeps: sc.sweepRows(a.Token), Markers: sc.readoutRows(), Bands: sc.bandRows(),
		Options: chartOptions(sc.st.Chart), MaxUploadMB: int(s.cfg.MaxUploadBytes >> 20),
		Network:    sc.networkView(),
		Sets:       sc.setsView(),
		Tuning:     sc.tuningView(),
		RefPlane:   sc.refPlaneView(),
		Amp:        sc.ampView(),
		Span:       sc.spanView(v),
		ChartBar:   sc.chartBar(v),
		Resonances: sc.resonanceView(v),
	}
}

// chartBar shows the chart's view controls as view v has them.
func (sc *scene) chartBar(v *pageView) web.ChartBar {
	b := web.ChartBar{Z0: strconv.FormatFloat(v.z0(), 'g', 6, 64), Has2Port: sc.has2Port(), Zoomed: v.zoom() > 1}
	if v != nil {
		b.Param = v.Chart
	}
	return b
}
