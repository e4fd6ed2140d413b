package rfmath

import "math"

const (
	badEmptyTrace = "rfmath: empty trace"
	badNearIndex  = "rfmath: near index out of range"
)

// SnapToTrace finds the point of a trace nearest to target, searching only
// near a given index, and returns where that point lies as a segment index
// and a fraction along the segment.
//
// The trace is the polyline through gamma[0], gamma[1], …, gamma[n−1]
// (typically one reflection parameter of a sweep, in the Γ plane), so the
// point returned is the nearest point of the straight segments between
// neighbouring measured points, not merely the nearest measured point. For
// each segment a = gamma[i], b = gamma[i+1] the target z is projected on the
// segment's line and the projection clamped to the segment:
//
//	d = b − a
//	t = clamp(Re((z − a)·conj(d)) / |d|², 0, 1)
//	p = a + t·d,   distance² = |z − p|²
//
// (a zero-length segment gives t = 0). The segment with the smallest
// distance wins; among equal distances the segment closest to nearIndex
// wins, so that at the crossing point of a trace that loops over itself the
// marker stays on the branch it came from.
//
// Only the segments between the points nearIndex−window … nearIndex+window
// (clipped to the trace) are searched. A trace that crosses itself can pass
// close to the target at two very different indices; the window keeps a
// dragged marker on the loop it was on, and it moves at most window points
// per call. A negative window searches the whole trace. A window of 0
// searches nothing and returns nearIndex itself.
//
// The result follows the convention of [Sweep.Locate]: for n ≥ 2 points,
// 0 ≤ index ≤ n−2 and t ∈ [0, 1], the point being
// gamma[index] + t·(gamma[index+1] − gamma[index]); the last point is
// (n−2, 1). A one-point trace gives (0, 0). Because [Sweep.InterpAt]
// interpolates linearly in the same plane, the frequency
//
//	f = FreqHz[index] + t·(FreqHz[index+1] − FreqHz[index])
//
// reproduces the snapped point exactly.
//
// SnapToTrace panics if gamma is empty or nearIndex is outside it. The target
// must be finite: a NaN target makes every distance NaN and the result is
// unspecified (but in range). It does not allocate.
func SnapToTrace(gamma []complex128, target complex128, nearIndex, window int) (index int, t float64) {
	n := len(gamma)
	if n == 0 {
		panic(badEmptyTrace)
	}
	if nearIndex < 0 || nearIndex >= n {
		panic(badNearIndex)
	}
	if n == 1 {
		return 0, 0
	}
	lo, hi := 0, n-1 // points; segments lo … hi−1
	if window >= 0 {
		lo = max(0, nearIndex-window)
		hi = min(n-1, nearIndex+window)
	}
	if lo == hi {
		if nearIndex == n-1 {
			return n - 2, 1
		}
		return nearIndex, 0
	}
	best := math.Inf(1)
	bestIndex, bestT, bestGap := lo, 0.0, math.MaxInt
	for i := lo; i < hi; i++ {
		a, b := gamma[i], gamma[i+1]
		d := b - a
		dd := real(d)*real(d) + imag(d)*imag(d)
		w := target - a
		var s float64
		if dd > 0 {
			s = (real(w)*real(d) + imag(w)*imag(d)) / dd
			s = min(max(s, 0), 1)
		}
		px := real(w) - s*real(d)
		py := imag(w) - s*imag(d)
		dist := px*px + py*py
		gap := segmentGap(i, nearIndex)
		if dist < best || (dist == best && gap < bestGap) {
			best, bestIndex, bestT, bestGap = dist, i, s, gap
		}
	}
	return bestIndex, bestT
}

// segmentGap is how many points segment i (between points i and i+1) lies
// from point k: 0 when k is one of its ends.
func segmentGap(i, k int) int {
	switch {
	case k < i:
		return i - k
	case k > i+1:
		return k - i - 1
	}
	return 0
}
