package rfmath

import (
	"fmt"
	"math"
	"sort"
)

// # Judging a band
//
// A band [LO, HI] is judged at its points: LO, every measured frequency
// strictly between LO and HI, and HI (one point when LO = HI). Where LO or
// HI falls between measured points, the load there is interpolated
// linearly in the complex plane, as [Sweep.InterpAt] does. A band that the
// sweep does not cover from end to end cannot be judged: it is never
// extrapolated. Every figure of a band in matchbench (the search, the
// network panel, the report, `check` and the command line's JSON) is
// taken at these points by [BandSummary].

// BandFreqs appends to dst the points of the band [loHz, hiHz] on the
// increasing grid freqHz (see above) and returns it. A band that is not
// covered by the grid, or that does not run upward, returns an error
// wrapping [ErrOutOfRange].
func BandFreqs(dst []float64, freqHz []float64, loHz, hiHz float64) ([]float64, error) {
	n := len(freqHz)
	if n == 0 || math.IsNaN(loHz) || math.IsNaN(hiHz) || !(hiHz >= loHz) || loHz < freqHz[0] || hiHz > freqHz[n-1] {
		if n == 0 {
			return dst, ErrEmptySweep
		}
		return dst, fmt.Errorf("%w: band %g–%g Hz is not within the sweep's %g–%g Hz", ErrOutOfRange, loHz, hiHz, freqHz[0], freqHz[n-1])
	}
	dst = append(dst, loHz)
	for k := sort.SearchFloat64s(freqHz, loHz); k < n && freqHz[k] < hiHz; k++ {
		if freqHz[k] > loHz {
			dst = append(dst, freqHz[k])
		}
	}
	if hiHz > loHz {
		dst = append(dst, hiHz)
	}
	return dst, nil
}

// InterpGamma returns the trace gamma (at the increasing frequencies
// freqHz) at fHz, interpolated linearly in the complex plane between the
// measured points as [Sweep.InterpAt] does, and whether fHz lies within the
// trace. A gamma whose length differs from freqHz panics.
func InterpGamma(freqHz []float64, gamma []complex128, fHz float64) (complex128, bool) {
	if len(gamma) != len(freqHz) {
		panic(badSweepLength)
	}
	n := len(freqHz)
	if n == 0 || !(fHz >= freqHz[0] && fHz <= freqHz[n-1]) {
		return 0, false
	}
	k := sort.SearchFloat64s(freqHz, fHz)
	if freqHz[k] == fHz {
		return gamma[k], true
	}
	t := (fHz - freqHz[k-1]) / (freqHz[k] - freqHz[k-1])
	return Lerp(gamma[k-1], gamma[k], t), true
}

// BandSummary gathers the figures of a response over the points of one
// band. Its zero value is empty and ready; [BandSummary.Add] each point,
// then read [BandSummary.Figures]. It does not allocate.
type BandSummary struct {
	n                      int
	worstRefl, worstReflHz float64 // largest |Γ|²
	sumRefl                float64
	worstLoad, worstLoadHz float64 // least G_T
	worstLoadAccepted      float64
	sumLoad, sumAccepted   float64
	worstNetLoss           float64 // largest −10·log10(η)
}

// Add adds a point at fHz where the reflection seen from the source is
// gammaIn and the share of the available power that reaches the load is
// toLoad (the transducer gain G_T; for a load with no network, 1 − |Γ|²).
// A point whose figures are not numbers counts as the worst possible.
func (s *BandSummary) Add(fHz float64, gammaIn complex128, toLoad float64) {
	refl := abs2(gammaIn)
	accepted := 1 - refl
	if math.IsNaN(refl) {
		refl, accepted = math.Inf(1), math.Inf(-1)
	}
	if math.IsNaN(toLoad) {
		toLoad = math.Inf(-1)
	}
	if s.n == 0 || refl > s.worstRefl {
		s.worstRefl, s.worstReflHz = refl, fHz
	}
	if s.n == 0 || toLoad < s.worstLoad {
		s.worstLoad, s.worstLoadHz, s.worstLoadAccepted = toLoad, fHz, accepted
	}
	// The network's own loss at the point; none where it accepts nothing.
	nl := 0.0
	if accepted > 0 {
		nl = -10 * math.Log10(toLoad/accepted)
	}
	if math.IsNaN(nl) {
		nl = math.Inf(1)
	}
	if s.n == 0 || nl > s.worstNetLoss {
		s.worstNetLoss = nl
	}
	s.sumRefl += refl
	s.sumLoad += toLoad
	s.sumAccepted += accepted
	s.n++
}

// BandFigures are a response's figures over the points of one band.
//
// Return loss and power are taken point by point; the means are means of
// power, not of decibels: MeanRLdB = −10·log10(mean |Γ|²) is the return loss
// of the mean reflected power, and MeanPowerToLoad the mean of G_T. Losses
// are positive dB. At any point the loss of the power that reaches the load,
// −10·log10(G_T), splits into the mismatch loss −10·log10(1 − |Γin|²) and the
// network's dissipative loss −10·log10(η), η = G_T/(1 − |Γin|²).
type BandFigures struct {
	Points int // number of points judged

	WorstRLdB float64 // least return loss over the points
	WorstRLHz float64 // where it falls
	MeanRLdB  float64 // return loss of the mean reflected power

	// WorstPowerToLoad is the least share of the available power that
	// reaches the load, WorstPowerHz where, and MismatchLossDB and
	// NetworkLossDB the split of its loss there.
	WorstPowerToLoad float64
	WorstPowerHz     float64
	MismatchLossDB   float64
	NetworkLossDB    float64
	// MeanPowerToLoad is the mean share; MeanMismatchLossDB and
	// MeanNetworkLossDB split its loss (of the mean accepted power and of
	// the mean power to the load against it).
	MeanPowerToLoad    float64
	MeanMismatchLossDB float64
	MeanNetworkLossDB  float64
	// WorstNetworkLossDB is the largest dissipative loss at any point.
	WorstNetworkLossDB float64
}

// Figures returns the figures of the points added. With no points every
// figure is NaN and Points is 0.
func (s BandSummary) Figures() BandFigures {
	if s.n == 0 {
		nan := math.NaN()
		return BandFigures{WorstRLdB: nan, WorstRLHz: nan, MeanRLdB: nan, WorstPowerToLoad: nan, WorstPowerHz: nan,
			MismatchLossDB: nan, NetworkLossDB: nan, MeanPowerToLoad: nan, MeanMismatchLossDB: nan, MeanNetworkLossDB: nan, WorstNetworkLossDB: nan}
	}
	n := float64(s.n)
	meanLoad, meanAcc := s.sumLoad/n, s.sumAccepted/n
	return BandFigures{
		Points:             s.n,
		WorstRLdB:          -10 * math.Log10(s.worstRefl),
		WorstRLHz:          s.worstReflHz,
		MeanRLdB:           -10 * math.Log10(s.sumRefl/n),
		WorstPowerToLoad:   s.worstLoad,
		WorstPowerHz:       s.worstLoadHz,
		MismatchLossDB:     -10 * math.Log10(s.worstLoadAccepted),
		NetworkLossDB:      -10 * math.Log10(s.worstLoad/s.worstLoadAccepted),
		MeanPowerToLoad:    meanLoad,
		MeanMismatchLossDB: -10 * math.Log10(meanAcc),
		MeanNetworkLossDB:  -10 * math.Log10(meanLoad/meanAcc),
		WorstNetworkLossDB: s.worstNetLoss,
	}
}

// PowerLossDB returns the loss in dB of a share of the available power,
// −10·log10(share): 0 dB when all of it arrives, +Inf when none does.
func PowerLossDB(share float64) float64 { return -10 * math.Log10(share) }

// Requirement is what a band must meet. A zero field asks nothing.
type Requirement struct {
	MinReturnLossDB float64 // least return loss, positive dB
	MinPowerToLoad  float64 // least share of the available power at the load, in (0, 1]
}

// Any reports whether the requirement asks anything.
func (r Requirement) Any() bool { return r.MinReturnLossDB > 0 || r.MinPowerToLoad > 0 }

// MarginDB returns the least margin of the figures f over the requirement
// r, in dB: the worst return loss less MinReturnLossDB, and the worst power
// to the load over MinPowerToLoad as 10·log10(worst/min), whichever is
// less. Negative misses; +Inf when r asks nothing.
func (r Requirement) MarginDB(f BandFigures) float64 {
	m := math.Inf(1)
	if r.MinReturnLossDB > 0 {
		m = math.Min(m, f.WorstRLdB-r.MinReturnLossDB)
	}
	if r.MinPowerToLoad > 0 {
		m = math.Min(m, 10*math.Log10(f.WorstPowerToLoad/r.MinPowerToLoad))
	}
	if math.IsNaN(f.WorstRLdB) || math.IsNaN(f.WorstPowerToLoad) {
		return math.Inf(-1)
	}
	return m
}

// TraceBandFigures returns the figures of a load measured as the trace
// gamma (at the increasing frequencies freqHz) over the band [loHz, hiHz],
// with no network: at each of the band's points ([BandFreqs]) the load takes
// 1 − |Γ|² of the available power. A band the trace does not cover returns
// an error wrapping [ErrOutOfRange]. A gamma whose length differs from
// freqHz panics.
func TraceBandFigures(freqHz []float64, gamma []complex128, loHz, hiHz float64) (BandFigures, error) {
	if len(gamma) != len(freqHz) {
		panic(badSweepLength)
	}
	var buf [64]float64
	fs, err := BandFreqs(buf[:0], freqHz, loHz, hiHz)
	if err != nil {
		return BandSummary{}.Figures(), err
	}
	var s BandSummary
	for _, f := range fs {
		g, _ := InterpGamma(freqHz, gamma, f)
		gin, toLoad := Circuit{}.PowerAt(f, g, 1)
		s.Add(f, gin, toLoad)
	}
	return s.Figures(), nil
}
