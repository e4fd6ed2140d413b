package limits

import (
	"math"

	"matchbench/rfmath"
)

// Result is the outcome of checking one band.
type Result struct {
	Band Band
	// Covered reports that the sweep reaches from the band's LO to its HI.
	// A band that is not covered fails, and its other fields are zero
	// except MarginDB, which is NaN.
	Covered bool
	// Pass reports that the band is covered and its margin is not negative.
	Pass bool
	// WorstHz is the frequency of least margin, WorstReturnLossDB the
	// return loss measured there, WorstPowerToLoad the share of the
	// available power the load takes there (1 − |Γ|²), and MarginDB the
	// margin over the band's limit in dB (negative fails): the return loss
	// less the required one, or for a power limit 10·log10(share/least).
	// A point whose Γ is NaN has a margin of −Inf.
	WorstHz           float64
	WorstReturnLossDB float64
	WorstPowerToLoad  float64
	MarginDB          float64
	// Points is the number of values checked: the band's points as
	// [rfmath.BandFreqs] gives them.
	Points int
}

// Check checks the reflection sweep gamma at freqHz (increasing) against
// each band and returns one Result per band, in order. A band is judged at
// its points ([rfmath.BandFreqs]: the measured points in it and its edges,
// where Γ is interpolated linearly in the complex plane) by
// [rfmath.TraceBandFigures] ([rfmath.BandSummary]), the evaluator every
// band figure of matchbench comes from; the load's share of the power is
// 1 − |Γ|². A gamma whose
// length differs from freqHz panics.
func Check(freqHz []float64, gamma []complex128, bands []Band) []Result {
	if len(gamma) != len(freqHz) {
		panic("limits: gamma and frequency lengths differ")
	}
	out := make([]Result, len(bands))
	for i, b := range bands {
		r := Result{Band: b, MarginDB: math.NaN()}
		fig, err := rfmath.TraceBandFigures(freqHz, gamma, b.LoHz, b.HiHz)
		if err != nil {
			out[i] = r
			continue
		}
		r.Covered = true
		r.Points = fig.Points
		r.MarginDB = b.Requirement().MarginDB(fig)
		r.WorstHz, r.WorstReturnLossDB, r.WorstPowerToLoad = fig.WorstRLHz, fig.WorstRLdB, fig.WorstPowerToLoad
		if math.IsNaN(r.MarginDB) {
			r.MarginDB = math.Inf(-1)
		}
		r.Pass = r.MarginDB >= 0
		out[i] = r
	}
	return out
}

// Worst returns the index of the result of least margin, a band that is
// not covered counting below any margin; −1 for no results. Ties go to the
// first.
func Worst(results []Result) int {
	best := -1
	for i, r := range results {
		if best < 0 || rank(r) < rank(results[best]) {
			best = i
		}
	}
	return best
}

func rank(r Result) float64 {
	if !r.Covered {
		return math.Inf(-1)
	}
	return r.MarginDB
}
