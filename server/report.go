package server

import (
	"fmt"
	"math"
	"net/http"
	"strings"
	"time"

	"matchbench/chartsvg"
	"matchbench/rfmath/units"
	"matchbench/web"
)

// reportBuilds is how many builds the report's Monte Carlo draws when the
// network has none of its own.
const reportBuilds = 1000

// reportView builds the design-review report of the active network. Every
// figure comes from the function the panel uses: the band table
// (metricRow via networkView), the stress (powerRows), the yield
// (yieldViewOf), the parts list (bom), the netlist (netlist).
//
// The charts are drawn as the page draws its chart for view pv (nil: the
// default view): at the page's chart reference, every trace renormalised
// to it for the drawing (display.go), the whole chart; the plots show
// |S11| and the power to the load across the whole sweep.
func (sc *scene) reportView(now time.Time, pv *pageView) (web.ReportView, error) {
	ne := sc.net
	nv := sc.networkView()
	v := web.ReportView{
		Title: ne.n.Name + " · design review · matchbench", Session: sc.st.Name, Network: ne.n.Name,
		Load:   fmt.Sprintf("%s, S%d%d", sweepName(sc.st, ne.n.SweepID), ne.port, ne.port),
		Design: fmtF(ne.n.DesignHz), Generated: now.Format("2006-01-02 15:04 MST"), Z0: units.Format(ne.z0, "Ω", 6),
		Metrics: nv.Metrics, HasBuy: nv.HasBuy, Power: nv.Power, PowerW: nv.PowerW, PowerNote: nv.PowerNote,
		Set: nv.Set, StageNote: nv.StageNote,
	}
	if !ne.lay.IsZero() {
		v.Board = ne.lay.Describe(ne.built)
	}
	if ne.boardErr != "" {
		v.Board = ne.boardErr
	}
	// The reference plane of the load, and captions that say which it is.
	i := sc.st.SweepIndex(ne.n.SweepID)
	raw := sc.raw[ne.n.SweepID]
	if i >= 0 && sc.st.Sweeps[i].RefPlane != nil {
		v.Plane = planeSteps(sc.st, sc.st.Sweeps[i].RefPlane)
		v.PlaneError = sc.errs[ne.n.SweepID]
	}
	name := sweepName(sc.st, ne.n.SweepID)
	view := &pageView{Z0: pv.z0()}
	z0 := view.z0()
	load := chartsvg.Trace{ID: "load", Name: name, Color: "#1f5fa8", FreqHz: ne.sweep.FreqHz, Gamma: toChart(ne.gLoad, ne.z0, z0)}
	traces := []chartsvg.Trace{load}
	if raw != nil {
		v.CaptionBefore = fmt.Sprintf("The load at the corrected reference plane (%s), solid; as the analyser measured it, dashed.", strings.Join(v.Plane, "; "))
		traces = append(traces, chartsvg.Trace{ID: "load-raw", Name: name + " (as measured)", Color: "#1f5fa8", FreqHz: raw.FreqHz,
			Gamma: toChart(reflection(raw, ne.port-1), raw.Z0[ne.port-1], z0), Dashed: true, Ticks: -1})
	} else {
		v.CaptionBefore = "The load as measured."
	}
	v.CaptionAfter = "Through the network as built, with its matching path at the design frequency; the load alone in blue."
	if raw != nil {
		v.CaptionAfter = "Through the network as built, with its matching path at the design frequency; the load at the corrected plane in blue."
	}
	if ne.set != nil {
		v.CaptionAfter += " The other sweeps of its load set through the network, dashed."
	}
	ref := " The chart's reference is " + units.Format(z0, "Ω", 4) + "."
	if z0 != ne.z0 {
		ref = " The chart's reference is " + units.Format(z0, "Ω", 4) + ", the load's " + units.Format(ne.z0, "Ω", 4) + ": the traces are renormalised for the drawing; the figures keep the load's reference."
	}
	v.CaptionBefore += ref
	v.CaptionAfter += ref
	ch := sc.chartFor(view)
	ch.SizePx = 420
	var before, after, refl, power strings.Builder
	ch.IDPrefix = "before-"
	if err := ch.Render(&before, traces, nil, nil); err != nil {
		return v, err
	}
	path, handles := ne.pathAt(-1, 0, 1, z0)
	ch.IDPrefix = "after-"
	afterTraces := append([]chartsvg.Trace{load}, sc.netTracesAt(z0)...)
	afterTraces = append(afterTraces, sc.setTraces(z0)...)
	if err := ch.Render(&after, afterTraces, handles, path); err != nil {
		return v, err
	}
	for _, p := range sc.plotsFor(view) {
		switch p.id {
		case "refl":
			p.render(&refl, nil)
		case "power":
			p.render(&power, nil)
		}
	}
	v.ChartBefore, v.ChartAfter, v.Plot, v.PowerPlot = before.String(), after.String(), refl.String(), power.String()
	var err error
	if v.Schematic, err = sc.schematicSVG("rep-"); err != nil {
		return v, err
	}
	// The yield: the network's own Monte Carlo, or one for the report.
	if ne.n.YieldBuilds > 0 {
		v.Yield = sc.yieldView()
	} else if len(ne.n.Parts) > 0 {
		res, msg := sc.runYield(reportBuilds)
		v.Yield = sc.yieldViewOf(res, msg)
		if res != nil {
			v.Yield.Note = fmt.Sprintf("A Monte Carlo of %d builds made for this report (the panel's is off), each part drawn within its tolerance.", reportBuilds)
		}
	}
	v.PartsHeader, v.Parts = bomView(bom(ne))
	if _, sums, err := sc.netlist(); err == nil {
		worst, worstBands := 0.0, 0.0
		for _, s := range sums {
			worst, worstBands = math.Max(worst, s.MaxDS21), math.Max(worstBands, s.MaxDS21Bands)
		}
		if worst > 0 {
			v.Netlist = fmt.Sprintf("The SPICE netlist stands for each lossy part by a fitted R-L-C equivalent: the worst error in a part's transmission |ΔS21| is %.2g within the bands and %.2g across the sweep.", worstBands, worst)
		} else {
			v.Netlist = "The SPICE netlist holds each part's model exactly (constant elements, ideal lines and transformers)."
		}
	} else {
		v.Netlist = "The SPICE netlist cannot be made: " + err.Error()
	}
	return v, nil
}

func (s *Server) report(w http.ResponseWriter, r *http.Request) {
	sc, _, ok := s.activeNet(w, r)
	if !ok {
		return
	}
	v, err := sc.reportView(time.Now(), viewFromQuery(r.URL.Query()))
	if err != nil {
		s.exportFailed(w, "report", err)
		return
	}
	s.render(w, r, http.StatusOK, web.ReportPage(v))
}
