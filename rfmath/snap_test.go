package rfmath

import (
	"math"
	"math/cmplx"
	"math/rand/v2"
	"testing"
)

func TestSnapToTrace(t *testing.T) {
	t.Parallel()
	line := make([]complex128, 10) // 0, 1, …, 9 on the real axis
	for i := range line {
		line[i] = complex(float64(i), 0)
	}
	// Every expected value below is worked by hand from the projection
	// formula in the doc comment (plane geometry, no other source).
	tests := []struct {
		name   string
		gamma  []complex128
		target complex128
		near   int
		window int
		index  int
		t      float64
	}{
		// Foot of the perpendicular from (0.3, 0.4) to the real axis is 0.3.
		{"interior projection", []complex128{0, 1}, 0.3 + 0.4i, 0, 1, 0, 0.3},
		{"clamped below the start", []complex128{0, 1}, -0.5 + 0.1i, 0, 1, 0, 0},
		{"clamped beyond the end", []complex128{0, 1}, 2, 0, 1, 0, 1},
		// Segment 1 runs from 1 to 1+1i; (1.2, 0.25) is 0.2 from it at
		// height 0.25, and √(0.2² + 0.25²) ≈ 0.32 from segment 0's end.
		{"second segment wins", []complex128{0, 1, 1 + 1i}, 1.2 + 0.25i, 0, 2, 1, 0.25},
		// Both segments reach 0.5 at distance 0.2: the tie goes to the
		// segment touching nearIndex 0.
		{"zero-length segment, tie to near", []complex128{0.5, 0.5, 1}, 0.5 + 0.2i, 0, 2, 0, 0},
		{"tie to near from the other side", []complex128{0.5, 0.5, 1}, 0.5 + 0.2i, 2, 2, 1, 0},
		// Only points 0…4 are searched; the nearest of them to 8.5 is 4.
		{"window stops the search", line, 8.5, 2, 2, 3, 1},
		{"negative window searches all", line, 8.5 + 1i, 2, -1, 8, 0.5},
		{"window 0 returns near", line, 8.5, 3, 0, 3, 0},
		{"window 0 at the last point", line, 0, 9, 0, 8, 1},
		{"one point", []complex128{0.2i}, 5, 0, 4, 0, 0},
		{"exact measured point", line, 6, 5, 3, 5, 1},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			i, s := SnapToTrace(tc.gamma, tc.target, tc.near, tc.window)
			if i != tc.index || math.Abs(s-tc.t) > 1e-12 {
				t.Errorf("SnapToTrace = (%d, %g), want (%d, %g)", i, s, tc.index, tc.t)
			}
		})
	}
}

// TestSnapToTraceBruteForce checks the closed-form projection against an
// independent dense sampling of every searched segment: the snapped point
// must be on the trace, no sampled point may be nearer to the target, and at
// an interior t the miss vector must be perpendicular to the segment.
func TestSnapToTraceBruteForce(t *testing.T) {
	t.Parallel()
	rng := rand.New(rand.NewPCG(1, 1))
	const samples = 400
	for trial := range 300 {
		n := 2 + rng.IntN(30)
		gamma := make([]complex128, n)
		for i := range gamma {
			gamma[i] = complex(2*rng.Float64()-1, 2*rng.Float64()-1)
		}
		target := complex(3*rng.Float64()-1.5, 3*rng.Float64()-1.5)
		near := rng.IntN(n)
		window := rng.IntN(n+1) - 1 // −1 … n−1
		i, s := SnapToTrace(gamma, target, near, window)
		if i < 0 || i > n-2 || !(s >= 0 && s <= 1) {
			t.Fatalf("trial %d: result (%d, %g) out of range for %d points", trial, i, s, n)
		}
		lo, hi := 0, n-1
		if window >= 0 {
			lo, hi = max(0, near-window), min(n-1, near+window)
		}
		if window == 0 {
			continue // nothing searched; covered by the table test
		}
		if i < lo || i >= hi {
			t.Fatalf("trial %d: segment %d outside the window %d…%d", trial, i, lo, hi)
		}
		a, b := gamma[i], gamma[i+1]
		p := a + complex(s, 0)*(b-a)
		got := cmplx.Abs(target - p)
		for j := lo; j < hi; j++ {
			for k := 0; k <= samples; k++ {
				q := gamma[j] + complex(float64(k)/samples, 0)*(gamma[j+1]-gamma[j])
				if d := cmplx.Abs(target - q); d < got-1e-12 {
					t.Fatalf("trial %d: sampled point %v on segment %d is %g from target, snapped point %v is %g",
						trial, q, j, d, p, got)
				}
			}
		}
		if s > 0 && s < 1 {
			d := b - a
			w := target - p
			if dot := real(w)*real(d) + imag(w)*imag(d); math.Abs(dot) > 1e-12*(1+cmplx.Abs(d)*cmplx.Abs(w)) {
				t.Fatalf("trial %d: miss vector not perpendicular, dot = %g", trial, dot)
			}
		}
	}
}

// TestSnapToTraceSelfCrossing builds a trace that crosses itself, the nodal
// cubic x = s² − c, y = s³ − c·s, which passes through the origin twice
// (at s = −√c and s = +√c) with different slopes. A target just beside the
// crossing is nearer to the second branch; a marker coming from the first
// branch must stay on it when the search window is small, and jumps when the
// whole trace is searched.
func TestSnapToTraceSelfCrossing(t *testing.T) {
	t.Parallel()
	const (
		n = 1001
		c = 0.25
	)
	sAt := func(k int) float64 { return -1 + 2*float64(k)/(n-1) }
	gamma := make([]complex128, n)
	for k := range gamma {
		s := sAt(k)
		gamma[k] = complex(s*s-c, s*s*s-c*s)
	}
	// Index of s = −0.5 is 250 and of s = +0.5 is 750.
	// At the crossing the branch from s = −0.5 has direction (−1, 0.5) and
	// the branch from s = +0.5 has direction (1, 0.5). The point (0.05, 0.05)
	// is |0.05·0.5 + 0.05|/√1.25 ≈ 0.067 from the first branch's tangent and
	// |0.05·0.5 − 0.05|/√1.25 ≈ 0.022 from the second's.
	target := complex(0.05, 0.05)

	i, s := SnapToTrace(gamma, target, 255, 50)
	if i < 200 || i > 305 {
		t.Fatalf("windowed snap jumped to index %d (s = %g); want the near branch around 250", i, sAt(i))
	}
	// The snapped point is close to the crossing, on the first branch.
	p := gamma[i] + complex(s, 0)*(gamma[i+1]-gamma[i])
	if d := cmplx.Abs(p - target); d > 0.08 {
		t.Errorf("windowed snap point %v is %g from the target; want about 0.067", p, d)
	}

	j, _ := SnapToTrace(gamma, target, 255, -1)
	if j < 700 || j > 800 {
		t.Fatalf("whole-trace snap chose index %d (s = %g); want the far branch around 750", j, sAt(j))
	}
	if d := cmplx.Abs(gamma[j] - target); d > 0.03 {
		t.Errorf("whole-trace snap point %v is %g from the target; want about 0.022", gamma[j], d)
	}
}

func TestSnapToTracePanics(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name  string
		gamma []complex128
		near  int
		want  string
	}{
		{"empty", nil, 0, badEmptyTrace},
		{"near below", []complex128{0, 1}, -1, badNearIndex},
		{"near above", []complex128{0, 1}, 2, badNearIndex},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			defer func() {
				if r := recover(); r != tc.want {
					t.Errorf("panic = %v, want %q", r, tc.want)
				}
			}()
			SnapToTrace(tc.gamma, 0, tc.near, 1)
		})
	}
}

func TestSnapToTraceAllocs(t *testing.T) {
	gamma := spiral(10001)
	if a := testing.AllocsPerRun(100, func() { SnapToTrace(gamma, 0.1+0.2i, 5000, 200) }); a != 0 {
		t.Errorf("SnapToTrace allocates %v times per call, want 0", a)
	}
}

// spiral returns an n-point trace spiralling inwards, a stand-in for the
// reflection of a load seen through a lossy line.
func spiral(n int) []complex128 {
	g := make([]complex128, n)
	for k := range g {
		r := 0.9 * math.Exp(-2*float64(k)/float64(n))
		g[k] = cmplx.Rect(r, -20*math.Pi*float64(k)/float64(n))
	}
	return g
}

func BenchmarkSnapToTrace(b *testing.B) {
	gamma := spiral(10001)
	for _, w := range []int{50, 200, -1} {
		name := "window=" + map[int]string{50: "50", 200: "200", -1: "all"}[w]
		b.Run(name, func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				SnapToTrace(gamma, 0.1+0.2i, 5000, w)
			}
		})
	}
}
