package rfmath

import (
	"math"
	"math/cmplx"
)

// GroupDelayTo fills dst with the group delay in seconds of the complex
// response s (a reflection or a transmission coefficient) measured at
// freqHz, increasing, and returns dst:
//
//	τ = −dφ/dω,  φ = arg s
//
// The phase is unwrapped from point to point (each step is the angle of
// s[k]·s*[k−1], so it must stay within ±180°: a delay below 1/(2Δf) for a
// spacing Δf), and the derivative at point k is the difference quotient
// over the aperture of points k−aperture … k+aperture, cut short at the
// ends of the sweep (one-sided at the first and last point):
//
//	τ[k] = −(φ[k+a] − φ[k−a]) / (2π·(f[k+a] − f[k−a]))
//
// An aperture below 1 is taken as 1 (neighbouring points); a wider one
// smooths the noise of a measured phase at the cost of detail, as an
// analyser's group-delay aperture does. The quotient is exact for a phase
// linear in frequency: a matched line of one-way delay T gives T for its
// transmission and, shorted, 2T for its reflection. A point whose s is zero
// or not finite, or a window that reaches one, gives NaN there.
//
// A nil dst is allocated; a dst or s whose length differs from freqHz
// panics. A sweep of one point gives NaN.
func GroupDelayTo(dst []float64, freqHz []float64, s []complex128, aperture int) []float64 {
	n := len(freqHz)
	if len(s) != n {
		panic(badSweepLength)
	}
	if dst == nil {
		dst = make([]float64, n)
	} else if len(dst) != n {
		panic(badLength)
	}
	if aperture < 1 {
		aperture = 1
	}
	// phi holds the unwrapped phase; bad[k] counts the unusable points up
	// to k, so a window is clean when the count does not change across it.
	phi := make([]float64, n)
	bad := make([]int, n+1)
	for k := range n {
		v := s[k]
		ok := v != 0 && !cmplx.IsNaN(v) && !cmplx.IsInf(v)
		bad[k+1] = bad[k]
		if !ok {
			bad[k+1]++
			phi[k] = math.NaN()
			continue
		}
		if k > 0 && !math.IsNaN(phi[k-1]) {
			phi[k] = phi[k-1] + cmplx.Phase(v*cmplx.Conj(s[k-1]))
		} else {
			phi[k] = cmplx.Phase(v)
		}
	}
	for k := range n {
		lo, hi := max(k-aperture, 0), min(k+aperture, n-1)
		if hi == lo || bad[hi+1] != bad[lo] {
			dst[k] = math.NaN()
			continue
		}
		dst[k] = -(phi[hi] - phi[lo]) / (2 * math.Pi * (freqHz[hi] - freqHz[lo]))
	}
	return dst
}
