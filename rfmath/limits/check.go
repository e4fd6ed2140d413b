package limits

import (
	"math"
	"math/cmplx"
	"sort"

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
	// return loss measured there and MarginDB that return loss less the
	// band's MinReturnLossDB (negative fails). A point whose Γ is NaN has
	// a margin of −Inf.
	WorstHz           float64
	WorstReturnLossDB float64
	MarginDB          float64
	// Points is the number of values checked: the measured points in the
	// band and the interpolated values at LO and HI where they fall
	// between points.
	Points int
}

// Check checks the reflection sweep gamma at freqHz (increasing) against
// each band and returns one Result per band, in order. Between measured
// points, at a band's LO and HI, Γ is interpolated linearly in the complex
// plane ([rfmath.Lerp]), as [rfmath.Sweep.InterpAt] does. A gamma whose length differs from
// freqHz panics.
func Check(freqHz []float64, gamma []complex128, bands []Band) []Result {
	if len(gamma) != len(freqHz) {
		panic("limits: gamma and frequency lengths differ")
	}
	out := make([]Result, len(bands))
	n := len(freqHz)
	for i, b := range bands {
		r := Result{Band: b, MarginDB: math.NaN()}
		if n == 0 || b.LoHz < freqHz[0] || b.HiHz > freqHz[n-1] {
			out[i] = r
			continue
		}
		r.Covered = true
		need := b.MinReturnLossDB()
		r.MarginDB = math.Inf(1)
		consider := func(f float64, g complex128) {
			r.Points++
			rl := rfmath.ReturnLossDB(cmplx.Abs(g))
			m := rl - need
			if math.IsNaN(m) {
				m = math.Inf(-1)
			}
			if r.Points == 1 || m < r.MarginDB {
				r.WorstHz, r.WorstReturnLossDB, r.MarginDB = f, rl, m
			}
		}
		k := sort.SearchFloat64s(freqHz, b.LoHz) // first point ≥ LO
		if freqHz[k] != b.LoHz {
			consider(b.LoHz, interp(freqHz, gamma, k-1, b.LoHz))
		}
		for ; k < n && freqHz[k] <= b.HiHz; k++ {
			consider(freqHz[k], gamma[k])
		}
		if freqHz[k-1] != b.HiHz && b.HiHz != b.LoHz {
			consider(b.HiHz, interp(freqHz, gamma, k-1, b.HiHz))
		}
		r.Pass = r.MarginDB >= 0
		out[i] = r
	}
	return out
}

// interp interpolates between points k and k+1 at f with [rfmath.Lerp].
func interp(freqHz []float64, gamma []complex128, k int, f float64) complex128 {
	t := (f - freqHz[k]) / (freqHz[k+1] - freqHz[k])
	return rfmath.Lerp(gamma[k], gamma[k+1], t)
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
