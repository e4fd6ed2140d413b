package demo

import (
	"math"
	"math/rand/v2"

	"matchbench/rfmath"
	"matchbench/rfmath/parts"
)

// # The Fieldnode's first build (invented for the demo)
//
// The team solders the matching network that the loss-aware search chose
// for the Fieldnode antenna (the first design of the demo session: a shunt
// 1.8 nH inductor L1 at the antenna, a series 1.8 nH inductor L2, a shunt
// 7.5 pF capacitor C1 toward the radio; E24 values, typical 0402 parts)
// onto the first prototype board, and measures the board at the radio's
// end of the network with the radio lifted off. The board differs from the
// design in the ways boards do, and nobody knows by how much until the fit
// says:
//
//   - every 0402 pad has 0.12 pF to the ground plane beneath, where the
//     typical figure the engineer declares is 0.08 pF;
//   - the layout put C1 at the end of a trace between L2 and C1, 0.36 mm
//     wide on 0.2 mm of εr 4.2 prepreg (53.13 Ω, effective permittivity
//     3.178 by Hammerstad's microstrip formulas), that the engineer reads
//     off the layout as 0.5 mm but that is 0.6 mm long;
//   - the parts are within their tolerances but not on their nominal
//     values: L1 is 1.76 nH, L2 1.85 nH and C1 7.42 pF.
//
// The board is measured on the antenna sweep's grid (700 to 1100 MHz in
// 1 MHz steps) with the demo's analyser noise. The model is written out
// here with rfmath's own elements, from the antenna toward the radio:
//
//	antenna ─ pads of L1 and L2 to ground (0.24 pF) ─ L1 to ground ─ L2 in series
//	        ─ pad of L2 to ground (0.12 pF) ─ 0.6 mm of trace ─ pad of C1 to ground (0.12 pF)
//	        ─ C1 to ground ─ radio
//
// These numbers are invented.

// DesignPart is one part of a demo design network, from the load: its
// kind and nominal value (E24, typical 0402 part models).
type DesignPart struct {
	Kind  rfmath.PartKind
	Value float64
}

// FieldnodeDesign is the demo's design network for the Fieldnode, from the
// antenna: the first design of the demo session's loss-aware search.
var FieldnodeDesign = []DesignPart{
	{rfmath.PartShuntL, 1.8e-9},
	{rfmath.PartSeriesL, 1.8e-9},
	{rfmath.PartShuntC, 7.5e-12},
}

// The Fieldnode board's trace: 0.36 mm wide on 0.2 mm of εr 4.2 (its
// characteristic impedance and effective permittivity by Hammerstad's
// closed forms, checked against package match's Microstrip).
const (
	FieldnodeTraceWidthM  = 0.36e-3
	FieldnodeTraceHeightM = 0.2e-3
	FieldnodeTraceEpsR    = 4.2
	FieldnodeTraceZ0Ohm   = 53.13
	FieldnodeTraceEpsEff  = 3.178
)

// The layout as the engineer declares it for the fit: typical 0402 pads
// (0.08 pF each, from memory) and 0.5 mm of trace in gap 2, between L2
// and C1.
const (
	FieldnodeDeclaredPadCF         = 0.08e-12
	FieldnodeTraceGap              = 2
	FieldnodeDeclaredTraceM        = 0.5e-3
	firstBuildPadCF                = 0.12e-12
	firstBuildTraceM               = 0.6e-3
	firstBuildSeed          uint64 = 5
)

// FirstBuildValues are the actual values of L1, L2 and C1 on the first
// board.
var FirstBuildValues = []float64{1.76e-9, 1.85e-9, 7.42e-12}

// FirstBuildPadCF and FirstBuildTraceM are the first board's pad
// capacitance (per pad) and trace length as built.
const (
	FirstBuildPadCF  = firstBuildPadCF
	FirstBuildTraceM = firstBuildTraceM
)

// fieldnodeTrace returns the board's trace of length lengthM.
func fieldnodeTrace(lengthM float64) rfmath.Line {
	return rfmath.Line{Z0Ohm: FieldnodeTraceZ0Ohm, LengthM: lengthM, VelocityFactor: 1 / math.Sqrt(FieldnodeTraceEpsEff)}
}

// FirstBoard returns the Fieldnode board as a ladder from the antenna (see
// above), with the parts at values (L1, L2, C1) and each pad of padCF
// farads; the trace is traceM long. FirstBoard(FirstBuildValues,
// FirstBuildPadCF, FirstBuildTraceM) is the first build.
func FirstBoard(values []float64, padCF, traceM float64) rfmath.Ladder {
	m := parts.Typical0402
	l1 := m.Part(parts.KindL, values[0])
	l2 := m.Part(parts.KindL, values[1])
	c1 := m.Part(parts.KindC, values[2])
	return rfmath.Ladder{
		rfmath.ShuntC{CF: 2 * padCF},
		rfmath.Shunt{Part: l1},
		rfmath.Series{Part: l2},
		rfmath.ShuntC{CF: padCF},
		fieldnodeTrace(traceM),
		rfmath.ShuntC{CF: padCF},
		rfmath.Shunt{Part: c1},
	}
}

// FieldnodeAntennaGamma returns the Fieldnode antenna model's reflection
// against 50 Ω at fHz, without noise.
func FieldnodeAntennaGamma(fHz float64) complex128 {
	return rfmath.GammaFromZ(fieldnode.z(fHz), 50)
}

// AntennaGrid returns the frequencies of the Fieldnode antenna's demo
// sweep.
func AntennaGrid() []float64 { return grid(700e6, 1100e6, 401) }

// firstBuild returns the sweep of the first board (see above).
func firstBuild() *rfmath.Sweep {
	c := FirstBoard(FirstBuildValues, firstBuildPadCF, firstBuildTraceM).Circuit()
	freq := AntennaGrid()
	s := rfmath.NewSweep(len(freq), 1, 50)
	copy(s.FreqHz, freq)
	rnd := rand.New(rand.NewPCG(firstBuildSeed, 1))
	for k, f := range freq {
		s.Data[k] = c.GammaAt(f, FieldnodeAntennaGamma(f), 50) + noise(rnd)
	}
	return s
}
