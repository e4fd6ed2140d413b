package server

import (
	"math"

	"matchbench/rfmath/deembed"
)

// The chart draws every trace against its own reference impedance, the
// page's (50 Ω unless the page chooses another): a sweep measured or shown
// against another reference is renormalised for the drawing alone,
//
//	Γ' = (Γ − ρ)/(1 − ρ·Γ),  ρ = (Z0' − Z0)/(Z0' + Z0)
//
// (REFERENCE-CHECKS §11, [deembed.ComplexRefTo] with a real reference), so
// that one impedance lands on one point whatever the file's reference, and
// a sweep's own display reference never moves another sweep. Readouts,
// plots and band figures keep each sweep's own reference.

// toChart returns gamma, against z0Ohm, as the chart at chartZ0 draws it:
// gamma itself when the references agree (not copied), else a new slice.
func toChart(gamma []complex128, z0Ohm, chartZ0 float64) []complex128 {
	if z0Ohm == chartZ0 || !(z0Ohm > 0) {
		return gamma
	}
	out, err := deembed.ComplexRefTo(nil, gamma, z0Ohm, complex(chartZ0, 0))
	if err != nil {
		return gamma // a reference that is not positive: drawn as it is
	}
	return out
}

// pointToChart renormalises one Γ from the reference from to the reference
// to (both ohms); used both ways, chart to sweep and sweep to chart.
func pointToChart(g complex128, from, to float64) complex128 {
	if from == to || !(from > 0) || !(to > 0) || math.IsInf(from, 0) || math.IsInf(to, 0) {
		return g
	}
	var one [1]complex128
	in := [1]complex128{g}
	if _, err := deembed.ComplexRefTo(one[:], in[:], from, complex(to, 0)); err != nil {
		return g
	}
	return one[0]
}

// maxDispRefs is how many chart references a scene keeps its renormalised
// traces for.
const maxDispRefs = 4

// dispGamma returns the trace as the chart at chartZ0 draws it, computed
// once per scene and reference (for at most maxDispRefs references at a
// time).
func (sc *scene) dispGamma(t *trace, chartZ0 float64) []complex128 {
	if t.z0 == chartZ0 {
		return t.gamma
	}
	key := t.id + "@" + fmtOhms(chartZ0)
	if g, ok := sc.disp[key]; ok {
		return g
	}
	g := toChart(t.gamma, t.z0, chartZ0)
	if sc.disp == nil || len(sc.disp) >= maxDispRefs*max(len(sc.traces), 1) {
		// Pages may type one reference after another: the scene keeps
		// the traces of a few references, not of every one asked for.
		sc.disp = map[string][]complex128{}
	}
	sc.disp[key] = g
	return g
}
