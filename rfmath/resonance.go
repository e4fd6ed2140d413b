package rfmath

import (
	"errors"
	"fmt"
	"math"
	"math/cmplx"
)

// ErrNoEdge reports that a half-power edge of a resonance lies outside the
// sweep, so its bandwidth and Q cannot be measured.
var ErrNoEdge = errors.New("rfmath: half-power edge outside the sweep")

// Dip is a band of a reflection sweep in which the return loss stays at or
// above a threshold: the load takes most of the power there.
type Dip struct {
	// Index is the measured point of highest return loss in the band. For
	// a band that lies wholly between two measured points (the trace dips
	// below the threshold only between them) it is the one of the two
	// nearer the deepest point.
	Index int
	// FreqHz and ReturnLossDB are the deepest point of the band: the least
	// |Γ| of the interpolated trace, which may lie between measured points.
	FreqHz, ReturnLossDB float64
	// LoHz and HiHz are the band edges, where the return loss of the
	// interpolated trace crosses the threshold.
	LoHz, HiHz float64
	// LoOpen and HiOpen report that the band runs off the start or the
	// end of the sweep, or up to a point whose Γ is NaN: the edge is then
	// the band's first or last frequency and the true edge lies beyond it.
	LoOpen, HiOpen bool
	// Ridges is the number of ridges below the threshold inside the band
	// that the hysteresis bridged, joining stretches at or above the
	// threshold into one band (see [DipsHysteresis]); zero when the return
	// loss never falls below the threshold between LoHz and HiHz.
	Ridges int
	// RidgeHz and RidgeReturnLossDB are the lowest measured point of those
	// ridges, when Ridges > 0.
	RidgeHz, RidgeReturnLossDB float64
}

// BandwidthHz returns HiHz − LoHz.
func (d Dip) BandwidthHz() float64 { return d.HiHz - d.LoHz }

// DipHysteresisDB is the default hysteresis of [Dips]: measurement noise of
// a few hundredths of a dB makes a return loss that runs close to the
// threshold cross it many times, and without hysteresis one band falls
// apart into slivers. A quarter of a dB is several times the chatter of a
// clean analyser sweep (σ ≈ 0.002 on |Γ| ≈ 0.3 gives about 0.06 dB; common
// practice, not a standard) and small beside the margins a requirement is
// judged by.
const DipHysteresisDB = 0.25

// Dips returns every band of the sweep in which the return loss
// −20·log10|Γ| is at or above thresholdDB, in order of frequency, with the
// default hysteresis [DipHysteresisDB]; see [DipsHysteresis].
func Dips(freqHz []float64, gamma []complex128, thresholdDB float64) []Dip {
	return DipsHysteresis(freqHz, gamma, thresholdDB, DipHysteresisDB)
}

// DipsHysteresis returns every band of the sweep in which the return loss
// −20·log10|Γ| is at or above thresholdDB, in order of frequency. gamma[k]
// is the reflection coefficient at freqHz[k], and freqHz increases. Between
// points Γ is interpolated linearly in the complex plane ([Lerp]), the
// interpolation of every readout, and the bands are the stretches of that
// interpolated trace at or above the threshold. A point whose Γ is NaN
// counts as outside any band and ends one. It is [Reflection.Dips] of
// [ReflectionOf].
//
// Each edge is where the interpolated |Γ| equals g = 10^(−thresholdDB/20):
// on the segment from Γa to Γb, |Γa + t·(Γb − Γa)|² = g² is a quadratic in
// t, solved exactly, so a readout at an edge reads the threshold. A band
// that lies wholly between two measured points (a deep, narrow dip sampled
// coarsely, whose chord passes inside the threshold circle) is found too.
//
// The hysteresis joins stretches as a Schmitt trigger does: two stretches
// at or above the threshold are one band when the return loss of every
// measured point between them is at or above thresholdDB − hysteresisDB
// (between points the interpolated |Γ| is largest at a point, so the
// interpolated trace never falls lower than those points). The band still
// ends at the outermost crossings of thresholdDB itself, not of the lower
// level, and its Ridges, RidgeHz and RidgeReturnLossDB say what was
// bridged. A hysteresisDB of zero (or less, or NaN) splits the band at
// every crossing.
//
// The deepest point of a band is the least |Γ| of the interpolated trace in
// it, in closed form on each segment (see [Reflection]), so a readout there
// reads the band's ReturnLossDB. It is usually between two points: the
// chord across a resonance passes closer to the centre of the chart than
// the points do.
//
// A gamma whose length differs from freqHz panics. The result is nil if no
// point reaches the threshold.
func DipsHysteresis(freqHz []float64, gamma []complex128, thresholdDB, hysteresisDB float64) []Dip {
	return ReflectionOf(freqHz, gamma, 0).Dips(thresholdDB, hysteresisDB)
}

// DeepestDip returns the point of highest return loss over the whole sweep,
// the least |Γ| of the interpolated trace as in [DipsHysteresis], with the
// band edges where the power the load takes, 1 − |Γ|², has fallen to half
// its value there:
//
//	threshold = −10·log10((1 + |Γmin|²)/2) dB
//
// found on the interpolated trace as the edges of [DipsHysteresis] are.
// Index is the measured point of highest return loss. For
// a single resonator at the end of a short lossless line matched to the
// reference, these are the points where its reactance equals ±(R + Z0), so
// FreqHz/BandwidthHz() is its loaded Q (REFERENCE-CHECKS §9 R-2).
//
// For an empty sweep, or one whose Γ are all NaN, Index is −1 and the other
// fields are zero. If |Γ| > 1 at the deepest point (active data) there is no
// half-power band, and LoHz = HiHz = FreqHz. A gamma whose length differs
// from freqHz panics.
func DeepestDip(freqHz []float64, gamma []complex128) Dip {
	return ReflectionOf(freqHz, gamma, 0).DeepestDip()
}

// returnLoss returns −20·log10|g|.
func returnLoss(g complex128) float64 { return ReturnLossDB(cmplx.Abs(g)) }

// crossAt returns the x at which the straight line through (x0, y0) and
// (x1, y1) takes the value y. If y0 = y1 it returns the midpoint.
func crossAt(x0, x1, y0, y1, y float64) float64 {
	if y0 == y1 {
		return (x0 + x1) / 2
	}
	return x0 + (y-y0)/(y1-y0)*(x1-x0)
}

// Crossing is a frequency at which the reactance of an impedance sweep
// passes through zero.
type Crossing struct {
	// Index is the last measured point before the crossing (or at it, if
	// the reactance is zero there): the crossing lies in
	// [freqHz[Index], freqHz[Index+1]).
	Index int
	// FreqHz is the crossing, interpolated linearly in X by
	// [ReactanceZeroCrossings] and on the interpolated trace by
	// [Reflection.ZeroCrossings].
	FreqHz float64
	// Rising is true when X goes from − to + with frequency, a series-type
	// resonance (as of a series LC), and false when it goes from + to −, a
	// parallel-type resonance (as of a lossy parallel LC).
	Rising bool
}

// ReactanceZeroCrossings returns the frequencies at which the reactance
// X = Im z of the impedance sweep z (ohms at freqHz, increasing) changes
// sign by passing through zero, in order of frequency.
//
// Between two points X can also change sign by passing through infinity: a
// pole, as at the resonance of a lossless parallel LC seen between
// samples. The rule that tells them apart: a sign change between points k
// and k+1 is a pole, and is skipped, when |X| grows toward it from both
// sides, that is |X[k]| > |X[k−1]| and |X[k+1]| > |X[k+2]| (a side with no
// further point does not vote; with neither, the change counts as a
// crossing). At a true zero |X| shrinks toward the crossing. A lossy
// parallel resonance sampled so coarsely that both neighbours lie outside
// its half-power band looks like a pole and is skipped too.
//
// Points where X is exactly zero are joined to the run of zeros they belong
// to; the crossing is the middle of the run if X changes sign across it.
// Points with NaN reactance break the sweep: no crossing is reported across
// them. Between two points the crossing is interpolated linearly in X; the
// crossings of a reflection trace, on its own interpolation, are those of
// [Reflection.ZeroCrossings]. A z whose length differs from freqHz panics.
func ReactanceZeroCrossings(freqHz []float64, z []complex128) []Crossing {
	if len(z) != len(freqHz) {
		panic(badSweepLength)
	}
	return zeroCrossings(freqHz, z, func(k int) float64 {
		return crossAt(freqHz[k], freqHz[k+1], imag(z[k]), imag(z[k+1]), 0)
	})
}

// zeroCrossings is [ReactanceZeroCrossings] with the crossing between
// points k and k+1 placed by at(k).
func zeroCrossings(freqHz []float64, z []complex128, at func(k int) float64) []Crossing {
	n := len(z)
	var out []Crossing
	prev := -1 // last point with a finite, non-zero X
	for k := range n {
		x := imag(z[k])
		if math.IsNaN(x) {
			prev = -1
			continue
		}
		if x == 0 {
			continue
		}
		if prev >= 0 && (imag(z[prev]) < 0) != (x < 0) {
			if k == prev+1 {
				if !isPole(z, prev, k) {
					out = append(out, Crossing{
						Index:  prev,
						FreqHz: at(prev),
						Rising: x > 0,
					})
				}
			} else {
				// A run of exact zeros between prev and k.
				out = append(out, Crossing{
					Index:  (prev + k) / 2,
					FreqHz: (freqHz[prev+1] + freqHz[k-1]) / 2,
					Rising: x > 0,
				})
			}
		}
		prev = k
	}
	return out
}

// isPole reports whether |X| grows toward the sign change between points k
// and k+1 = j from both sides.
func isPole(z []complex128, k, j int) bool {
	votes, pole := 0, 0
	if k > 0 && !math.IsNaN(imag(z[k-1])) {
		votes++
		if math.Abs(imag(z[k])) > math.Abs(imag(z[k-1])) {
			pole++
		}
	}
	if j < len(z)-1 && !math.IsNaN(imag(z[j+1])) {
		votes++
		if math.Abs(imag(z[j])) > math.Abs(imag(z[j+1])) {
			pole++
		}
	}
	return votes > 0 && pole == votes
}

// Resonance describes a resonance of an impedance sweep found from a
// reactance zero crossing.
type Resonance struct {
	// FreqHz is the resonant frequency, where X = 0.
	FreqHz float64
	// Series is true for a series-type resonance (X rising through zero)
	// and false for a parallel-type one.
	Series bool
	// ROhm is the resistance at resonance: R of Z for a series-type
	// resonance, 1/G of Y = 1/Z for a parallel-type one.
	ROhm float64
	// LoHz and HiHz are the half-power edges: where |X| = R for a series
	// type, or |B| = G of Y = 1/Z for a parallel type.
	LoHz, HiHz float64
	// Q is FreqHz/(HiHz − LoHz).
	Q float64
}

// ResonanceQ measures the half-power bandwidth and Q of the resonance at
// the crossing c of the impedance sweep z (ohms at freqHz), as found by
// [ReactanceZeroCrossings].
//
// For a series-type resonance the edges are where |X| = R, for a
// parallel-type one where |B| = G of Y = 1/Z; there the magnitude of the
// impedance (or admittance) is √2 times its resonant value, and
// Q = f0/(f+ − f−) (Pozar, Microwave Engineering, Section 6.1, from
// memory; REFERENCE-CHECKS §9 ). R, X (or G, B) are interpolated
// linearly between points. The Q is that of the impedance at the sweep's
// reference plane: the unloaded Q of a resonator measured right at its
// terminals.
//
// It returns an error wrapping [ErrNoEdge] if an edge lies beyond the
// sweep. A c.Index outside the sweep, or a z whose length differs from
// freqHz, panics.
func ResonanceQ(freqHz []float64, z []complex128, c Crossing) (Resonance, error) {
	if len(z) != len(freqHz) {
		panic(badSweepLength)
	}
	if c.Index < 0 || c.Index >= len(z)-1 {
		panic("rfmath: crossing index outside the sweep")
	}
	// p is the resistive part and q the reactive part that rises through
	// zero: (R, X) for a series type, (G, B) for a parallel type.
	pq := func(k int) (p, q float64) {
		v := z[k]
		if !c.Rising {
			v = 1 / v
		}
		return real(v), imag(v)
	}
	f0 := c.FreqHz
	k := c.Index
	p1, _ := pq(k)
	p2, _ := pq(k + 1)
	p0 := p1 + (p2-p1)*(f0-freqHz[k])/(freqHz[k+1]-freqHz[k])
	r := Resonance{FreqHz: f0, Series: c.Rising, ROhm: p0}
	if !c.Rising {
		r.ROhm = 1 / p0
	}
	// Below f0 the edge is where q + p falls through zero; above, where
	// q − p rises through zero. Both equal ±p0 at f0.
	lo, okLo := edge(freqHz, f0, p0, k, -1, pq)
	hi, okHi := edge(freqHz, f0, -p0, k+1, +1, pq)
	if !okLo {
		return r, fmt.Errorf("%w: below %g Hz", ErrNoEdge, f0)
	}
	if !okHi {
		return r, fmt.Errorf("%w: above %g Hz", ErrNoEdge, f0)
	}
	r.LoHz, r.HiHz = lo, hi
	r.Q = f0 / (hi - lo)
	return r, nil
}

// edge walks from point k in direction dir (−1 or +1) away from f0, where
// h = q − dir·p is h0, and returns the frequency at which h changes sign.
func edge(freqHz []float64, f0, h0 float64, k, dir int, pq func(int) (float64, float64)) (float64, bool) {
	fPrev, hPrev := f0, h0
	for ; k >= 0 && k < len(freqHz); k += dir {
		p, q := pq(k)
		h := q - float64(dir)*p
		if (h <= 0) != (hPrev <= 0) || h == 0 {
			return crossAt(fPrev, freqHz[k], hPrev, h, 0), true
		}
		fPrev, hPrev = freqHz[k], h
	}
	return 0, false
}
