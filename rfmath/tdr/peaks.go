package tdr

import (
	"math"
	"sort"
)

// Peaks returns the indices of the reflections of r: the local maxima of
// the impulse magnitude |h| that reach minLevel, at or after one
// resolution before t = 0 (a reflection at the reference plane, smeared by
// the window, starts there) and before half the range (beyond it the
// response is the alias of negative time). At most max are returned, the
// largest, in time order; max ≤ 0 means all. A plateau's first point
// counts as its peak.
func (r *Response) Peaks(minLevel float64, max int) []int {
	h := r.Impulse
	var idx []int
	for i := 1; i < len(h)-1; i++ {
		a := math.Abs(h[i])
		if a >= minLevel && a >= math.Abs(h[i-1]) && a > math.Abs(h[i+1]) && r.TimeS[i] >= -r.ResolutionS() && r.TimeS[i] < r.RangeS()/2 {
			idx = append(idx, i)
		}
	}
	sort.Slice(idx, func(a, b int) bool { return math.Abs(h[idx[a]]) > math.Abs(h[idx[b]]) })
	if max > 0 && len(idx) > max {
		idx = idx[:max]
	}
	sort.Ints(idx)
	return idx
}
