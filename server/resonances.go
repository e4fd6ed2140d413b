package server

import (
	"errors"
	"fmt"
	"math"
	"strconv"

	"matchbench/rfmath"
	"matchbench/rfmath/units"
	"matchbench/web"
)

// maxResonanceRows bounds each kind of row per trace, so that a noisy
// sweep cannot fill the page.
const maxResonanceRows = 12

// resonanceView lists, for every visible trace, what `matchbench inspect`
// finds in it: the deepest dip with its half-power band, each band where
// the return loss is at least the view's threshold (rfmath.Dips) with its
// edges and its usable bandwidth, absolute and as a share of its centre
// (rfmath.FractionalBandwidth), and each zero crossing of the reactance
// (rfmath.ReactanceZeroCrossings) with its type, resistance and Q
// (rfmath.ResonanceQ, or rfmath.ResonanceSlopeQ when a half-power edge lies
// beyond the sweep). Figures are against each sweep's own reference.
func (sc *scene) resonanceView(v *pageView) web.ResonanceView {
	thr := v.rlThreshold()
	out := web.ResonanceView{Threshold: strconv.FormatFloat(thr, 'g', 4, 64)}
	for _, t := range sc.traces {
		name := t.ref.Name
		if t.sweep.Ports > 1 {
			name += fmt.Sprintf(" S%d%d", t.port, t.port)
		}
		rt := web.ResonanceTrace{Name: name, Color: t.ref.Color}
		row := func(kind, what string, f float64) web.ResonanceRow {
			return web.ResonanceRow{Kind: kind, What: what, Freq: fmtF6(f), FreqHz: f, SweepID: t.ref.ID, Port: t.port}
		}
		freq := t.sweep.FreqHz
		if d := rfmath.DeepestDip(freq, t.gamma); d.Index >= 0 {
			r := row("deepest", "deepest dip", d.FreqHz)
			r.RL = fmtDB(d.ReturnLossDB)
			r.Lo, r.Hi = edgeText(d.LoHz, d.LoOpen, "≤ "), edgeText(d.HiHz, d.HiOpen, "≥ ")
			r.BW = units.FormatFrequency(d.BandwidthHz(), 4)
			if !d.LoOpen && !d.HiOpen && d.BandwidthHz() > 0 {
				r.Q = fmtNum(d.FreqHz/d.BandwidthHz(), 1) + " loaded"
			}
			r.Note = "half-power edges: where the load takes half the power it takes at the dip"
			rt.Rows = append(rt.Rows, r)
		}
		dips := rfmath.Dips(freq, t.gamma, thr)
		for i, d := range dips {
			if i == maxResonanceRows {
				rt.More = append(rt.More, fmt.Sprintf("%d more bands above %s dB not listed", len(dips)-i, out.Threshold))
				break
			}
			r := row("band", "band ≥ "+out.Threshold+" dB", d.FreqHz)
			r.RL = fmtDB(d.ReturnLossDB)
			r.Lo, r.Hi = edgeText(d.LoHz, d.LoOpen, "≤ "), edgeText(d.HiHz, d.HiOpen, "≥ ")
			bw := units.FormatFrequency(d.BandwidthHz(), 4)
			frac := units.FormatPercent(rfmath.FractionalBandwidth(d.LoHz, d.HiHz), 2)
			if d.LoOpen || d.HiOpen {
				bw, frac = "≥ "+bw, "≥ "+frac // the band runs off the sweep
			}
			r.BW, r.Frac = bw, frac
			rt.Rows = append(rt.Rows, r)
		}
		if len(dips) == 0 {
			rt.More = append(rt.More, fmt.Sprintf("the return loss never reaches %s dB", out.Threshold))
		}
		z := make([]complex128, len(t.gamma))
		for k, g := range t.gamma {
			z[k] = rfmath.ZFromGamma(g, complex(t.z0, 0))
		}
		cs := rfmath.ReactanceZeroCrossings(freq, z)
		for i, c := range cs {
			if i == maxResonanceRows {
				rt.More = append(rt.More, fmt.Sprintf("%d more zero crossings of the reactance not listed", len(cs)-i))
				break
			}
			kind, what := "parallel", "parallel-type resonance (X falls through 0)"
			if c.Rising {
				kind, what = "series", "series-type resonance (X rises through 0)"
			}
			r := row(kind, what, c.FreqHz)
			res, err := rfmath.ResonanceQ(freq, z, c)
			switch {
			case err == nil:
				r.Lo, r.Hi = fmtF6(res.LoHz), fmtF6(res.HiHz)
				r.BW = units.FormatFrequency(res.HiHz-res.LoHz, 4)
				r.Q = fmtNum(res.Q, 1)
			case errors.Is(err, rfmath.ErrNoEdge):
				if q := rfmath.ResonanceSlopeQ(freq, z, c); !math.IsNaN(q) {
					r.Q = fmtNum(q, 1) + " (slope)"
					r.Note = "a half-power edge lies beyond the sweep: Q from the slope of the impedance"
				}
			}
			if res.ROhm > 0 {
				r.R = units.Format(res.ROhm, "Ω", 4)
			}
			if g, ok := t.at(c.FreqHz); ok {
				r.RL = fmtDB(rfmath.ReturnLossDB(cmplxAbs(g)))
			}
			rt.Rows = append(rt.Rows, r)
		}
		if len(cs) == 0 {
			rt.More = append(rt.More, "the reactance does not cross zero in the sweep")
		}
		out.Traces = append(out.Traces, rt)
	}
	return out
}

// edgeText writes a band edge, with prefix when the band runs off the
// sweep there (the true edge lies beyond).
func edgeText(f float64, open bool, prefix string) string {
	if open {
		return prefix + fmtF6(f)
	}
	return fmtF6(f)
}

// fmtF6 writes a frequency found between points to six figures.
func fmtF6(f float64) string { return units.FormatFrequency(f, 6) }

func cmplxAbs(g complex128) float64 { return math.Hypot(real(g), imag(g)) }
