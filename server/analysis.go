package server

import (
	"context"
	"fmt"
	"math"
	"time"

	"matchbench/chartsvg"
	"matchbench/rfmath/match"
	"matchbench/rfmath/units"
	"matchbench/sessions"
	"matchbench/web"
)

// cloudTraces is how many Monte Carlo builds are drawn on the chart.
const cloudTraces = 24

// matchLoad returns the active network's load and the session's bands that
// carry a requirement, as rfmath/match wants them.
func (ne *netEval) matchLoad(st *sessions.State) (match.Load, []match.Band) {
	bands, _ := ne.netBands(st, true)
	return ne.load, bands
}

// limitsView gives the Bode–Fano limit across the bands and, with a sphere
// radius, the Chu limit on the antenna's Q.
func (sc *scene) limitsView() web.LimitsView {
	var v web.LimitsView
	ne := sc.net
	if ne == nil || ne.err != nil {
		return v
	}
	l, bands := ne.matchLoad(sc.st)
	var chuFit *match.Fit // the Bode–Fano model, for the Chu comparison's fallback
	if len(bands) > 0 {
		members := []match.Member{{Load: l}}
		if ne.set != nil {
			members = ne.set.members
		}
		lim, fit, err := match.BodeFanoOfSet(members, bands)
		if err != nil {
			v.BodeFano = "Bode–Fano: " + plainDetail(err.Error())
		} else {
			chuFit = &fit
			kind := "series"
			if fit.Parallel {
				kind = "parallel"
			}
			best := "no limit"
			if !math.IsInf(lim.BestRLdB, 1) {
				best = fmt.Sprintf("%.1f dB", lim.BestRLdB)
			}
			v.BodeFano = fmt.Sprintf("Bode–Fano: near the bands the load behaves as a %s RLC (%s; fit error %.3f in Γ). No lossless network of any order can hold more than %s across all the bands at once; the largest common margin over the requirements is %+.1f dB.",
				kind, fit.RLC, fit.RMSGammaError, best, lim.MaxMarginDB)
			v.Feasible = lim.Feasible()
			if !fit.Trusted() {
				v.FitPoor = fmt.Sprintf("The RLC misses the load by %.3f in Γ (RMS), more than the %.2g this page trusts: the limit describes the model, not the load, so read it as a rough guide only. A narrower band, or one band at a time, fits better.",
					fit.RMSGammaError, match.FitTrustRMSGamma)
			}
		}
	}
	if r := ne.n.ChuRadiusM; r > 0 {
		// The resonance nearest the middle of the bands, as the command
		// line's match --radius finds it (match.ChuForBands); without
		// bands, the design frequency.
		c, err := match.ChuForBands(l, bands, ne.n.DesignHz, r, chuFit)
		if err != nil {
			v.Chu = "Chu limit: no comparison, because " + plainDetail(err.Error()) + "."
		} else {
			how, shows := "", "the sweep shows"
			switch {
			case c.SlopeQ:
				how = ", from the slope of its impedance (a half-power edge lies beyond the sweep)"
			case c.FromFit:
				shows = "the RLC fitted near the bands shows"
				how = " (the sweep's own Q cannot be measured: " + plainDetail(c.Why.Error()) + ")"
			}
			v.Chu = fmt.Sprintf("Chu limit for a sphere of radius %s: ka = %.3f at the resonance at %s, so Q ≥ %.1f; %s Q = %.1f%s: %.2f × the limit%s.",
				units.Format(r, "m", 3), c.KA, fmtF(c.Measured.FreqHz), c.ChuQ, shows, c.Measured.Q, how, c.Ratio,
				map[bool]string{true: "; below 1 means loss, or a radiator larger than the sphere such as the ground plane", false: ""}[c.Ratio < 1])
		}
		v.Radius = units.Format(r, "m", 3)
	}
	return v
}

// yield runs the network's Monte Carlo when one is asked for, on the
// network as built (every part with its own model and figures; only the
// values spread within each part's tolerance).
func (sc *scene) yield() (*match.YieldResult, string) {
	if sc.yieldDone {
		return sc.yieldRes, sc.yieldMsg
	}
	sc.yieldDone = true
	ne := sc.net
	if ne == nil || ne.err != nil || ne.n.YieldBuilds <= 0 || len(ne.n.Parts) == 0 {
		return nil, ""
	}
	sc.yieldRes, sc.yieldMsg = sc.runYield(ne.n.YieldBuilds)
	return sc.yieldRes, sc.yieldMsg
}

// runYield runs a Monte Carlo of builds builds of the active network.
func (sc *scene) runYield(builds int) (*match.YieldResult, string) {
	ne := sc.net
	l, bands := ne.matchLoad(sc.st)
	if len(bands) == 0 {
		return nil, "Yield needs a band with a requirement (return loss or power to the load)."
	}
	ctx, cancel := context.WithTimeout(sc.jobContext(), 20*time.Second)
	defer cancel()
	ys := &match.YieldSettings{Builds: builds, Seed: ne.n.YieldSeed, Traces: cloudTraces, Tolerances: ne.board.Tolerances()}
	var res *match.YieldResult
	var err error
	if ne.set != nil {
		res, err = match.YieldSet(ctx, ne.set.members, ne.set.kind(), bands, ne.board.Network, ys)
	} else {
		res, err = match.Yield(ctx, l, bands, ne.board.Network, ys)
	}
	if err != nil {
		return nil, "Yield: " + plainDetail(err.Error())
	}
	return res, ""
}

// yieldView summarises the Monte Carlo for the panel.
func (sc *scene) yieldView() web.YieldView {
	ne := sc.net
	if ne == nil || ne.err != nil {
		return web.YieldView{}
	}
	res, msg := sc.yield()
	v := sc.yieldViewOf(res, msg)
	v.On = ne.n.YieldBuilds > 0
	return v
}

// yieldViewOf words a Monte Carlo's result as the panel and the report
// show it.
func (sc *scene) yieldViewOf(res *match.YieldResult, msg string) web.YieldView {
	ne := sc.net
	v := web.YieldView{Note: msg}
	if res == nil {
		return v
	}
	v.Summary = fmt.Sprintf("%d builds (seed %d): %s meet every requirement of every band (return loss and power to the load). Margin: median %s, 5th percentile %s, worst build %s; worst corner %s.",
		res.Builds, max(ne.n.YieldSeed, 1), units.FormatPercent(res.Yield, 1), signedDB(res.MedianMarginDB), signedDB(res.P5MarginDB), signedDB(res.WorstMarginDB), signedDB(res.WorstCorner.MarginDB))
	for j, s := range res.Sensitivity {
		o := ne.board.Origins[j]
		if o.Role != match.RolePart {
			continue // the board's pads and traces have no tolerance drawn
		}
		i := o.Index
		u := ne.n.Parts[i].Kind.Unit()
		v.Parts = append(v.Parts, web.SensRow{
			Designator: designator(ne.n.Parts, i), Tol: "±" + units.Format(s.Tolerance, u, 3),
			Low: signedDB(s.LowDB), High: signedDB(s.HighDB),
			Share: fmt.Sprintf("%.0f %%", 100*s.Importance), Most: j == res.MostSensitive,
		})
	}
	return v
}

// cloudTraces are the first Monte Carlo builds, drawn thin and grey, as a
// chart at reference chartZ0 draws them.
func (sc *scene) cloudTraces(chartZ0 float64) []chartsvg.Trace {
	res, _ := sc.yield()
	if res == nil {
		return nil
	}
	out := make([]chartsvg.Trace, 0, len(res.Traces))
	for i, g := range res.Traces {
		freq, z0 := sc.net.sweep.FreqHz, sc.net.z0
		if sc.net.set != nil {
			m := sc.net.set.members[res.TraceMembers[i]].Load
			freq, z0 = m.FreqHz, m.Z0Ohm
		}
		out = append(out, chartsvg.Trace{ID: fmt.Sprintf("mc-%d", i), Name: "builds within tolerance", Color: "#b0b0b0", FreqHz: freq, Gamma: toChart(g, z0, chartZ0), Ticks: -1, NoLegend: i > 0})
	}
	return out
}
