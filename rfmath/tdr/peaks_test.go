package tdr

import (
	"math"
	"slices"
	"testing"
)

// TestPeaks builds the exact discrete case of REFERENCE-CHECKS §12 (Δf =
// 10 MHz, 0 … 1000 MHz, no window: 0.5 ns bins, each reflection on one
// bin, closed form) with three reflections: −0.5 at 1 ns one way (t = 2 ns),
// 0.2 at 3 ns (t = 6 ns) and 0.03 at 5 ns (t = 10 ns). Peaks lists them in
// time order, drops the one under the level, and keeps the largest when
// capped.
func TestPeaks(t *testing.T) {
	t.Parallel()
	f, g1 := harmonicSweep(10e6, 0, 100, -0.5, 1e-9)
	_, g2 := harmonicSweep(10e6, 0, 100, 0.2, 3e-9)
	_, g3 := harmonicSweep(10e6, 0, 100, 0.03, 5e-9)
	g := make([]complex128, len(f))
	for k := range g {
		g[k] = g1[k] + g2[k] + g3[k]
	}
	r, err := Transform(f, g, nil)
	if err != nil {
		t.Fatal(err)
	}
	at := func(idx []int) []float64 {
		var ts []float64
		for _, i := range idx {
			ts = append(ts, math.Round(r.TimeS[i]*1e12)/1e3) // ns
		}
		return ts
	}
	for _, tc := range []struct {
		level float64
		max   int
		want  []float64
	}{
		{0.02, 0, []float64{2, 6, 10}},
		{0.05, 0, []float64{2, 6}},
		{0.02, 1, []float64{2}},
		{0.02, 2, []float64{2, 6}},
		{0.6, 0, nil},
	} {
		if got := at(r.Peaks(tc.level, tc.max)); !slices.Equal(got, tc.want) {
			t.Errorf("Peaks(%g, %d) at %v ns, want %v ns", tc.level, tc.max, got, tc.want)
		}
	}
}
