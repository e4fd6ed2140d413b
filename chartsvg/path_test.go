package chartsvg

import (
	"bytes"
	"math"
	"math/cmplx"
	"strconv"
	"testing"
)

// drawnPath renders segs and returns, per segment, the points an SVG
// renderer draws for it (sampled from its arcs or its polyline), and the
// centre of the ring that marks the current end.
func drawnPath(t *testing.T, c *Chart, segs []PathSegment) ([][]complex128, complex128) {
	t.Helper()
	var buf bytes.Buffer
	if err := c.RenderPath(&buf, segs); err != nil {
		t.Fatal(err)
	}
	root := parseSVG(t, buf.String())
	var out [][]complex128
	var ring complex128
	for _, e := range root.children {
		switch e.name {
		case "path":
			var g []complex128
			toks := tokenize(t, e.attr["d"])
			if len(toks) > 3 && toks[3].cmd == 'A' {
				for _, a := range parseArcs(t, e.attr["d"]) {
					for _, p := range a.samples(7) {
						g = append(g, c.XYToGamma(p.x, p.y))
					}
				}
			} else {
				for _, sub := range parsePolyline(t, e.attr["d"]) {
					for _, p := range sub {
						g = append(g, c.XYToGamma(p.x, p.y))
					}
				}
			}
			out = append(out, g)
		case "circle":
			x, _ := strconv.ParseFloat(e.attr["cx"], 64)
			y, _ := strconv.ParseFloat(e.attr["cy"], 64)
			ring = c.XYToGamma(x, y)
		}
	}
	return out, ring
}

func TestPathSegmentsFollowTheirCircles(t *testing.T) {
	t.Parallel()
	c := Chart{}
	tol := 0.2 / c.Scale() // a fifth of a unit, in Γ
	deg := func(d float64) float64 { return d * math.Pi / 180 }
	for _, tc := range []struct {
		name string
		seg  PathSegment
		on   func(g complex128) float64 // distance from the locus, in Γ
		end  complex128
		// monotone returns the quantity that must change one way only.
		monotone func(g complex128) float64
	}{
		{
			// Series reactance from z = 0.4 + j0.6 to 0.4 − j0.49: the
			// path stays on r = 0.4 and x falls steadily, never passing
			// z = ∞ (Γ = +1).
			name: "series part along r",
			seg:  PathSegment{Kind: PathConstR, From: ZToGamma(0.4 + 0.6i), To: ZToGamma(0.4 - 0.49i)},
			on: func(g complex128) float64 {
				cr := rCircle(0.4)
				return math.Abs(cmplx.Abs(g-cr.c) - cr.r)
			},
			end:      ZToGamma(0.4 - 0.49i),
			monotone: func(g complex128) float64 { return imag(gammaToZ(g)) },
		},
		{
			// Shunt susceptance on g = 0.5 from y = 0.5 + j0.8 to 0.5 − j1:
			// stays on the conductance circle, never passing y = ∞ (Γ = −1).
			name: "shunt part along g",
			seg:  PathSegment{Kind: PathConstG, From: YToGamma(0.5 + 0.8i), To: YToGamma(0.5 - 1i)},
			on: func(g complex128) float64 {
				cr := rCircle(0.5)
				return math.Abs(cmplx.Abs(g+cr.c) - cr.r)
			},
			end:      YToGamma(0.5 - 1i),
			monotone: func(g complex128) float64 { return imag(gammaToZ(-g)) },
		},
		{
			// A line toward the generator turns Γ clockwise: from 30° to
			// −60° is a quarter turn.
			name:     "line, quarter turn",
			seg:      PathSegment{Kind: PathRotate, From: cmplx.Rect(0.5, deg(30)), To: cmplx.Rect(0.5, deg(-60))},
			on:       func(g complex128) float64 { return math.Abs(cmplx.Abs(g) - 0.5) },
			end:      cmplx.Rect(0.5, deg(-60)),
			monotone: nil,
		},
		{
			// From −60° to 30° clockwise is three quarters of a turn.
			name: "line, three quarters",
			seg:  PathSegment{Kind: PathRotate, From: cmplx.Rect(0.5, deg(-60)), To: cmplx.Rect(0.5, deg(30))},
			on:   func(g complex128) float64 { return math.Abs(cmplx.Abs(g) - 0.5) },
			end:  cmplx.Rect(0.5, deg(30)),
		},
		{
			// Half of the quarter turn ends at −15°.
			name: "line, half drawn",
			seg:  PathSegment{Kind: PathRotate, From: cmplx.Rect(0.5, deg(30)), To: cmplx.Rect(0.5, deg(-60)), Fraction: 0.5},
			on:   func(g complex128) float64 { return math.Abs(cmplx.Abs(g) - 0.5) },
			end:  cmplx.Rect(0.5, deg(-15)),
		},
		{
			// Three quarters of an L of total length 0.4 ends at (0.2, 0.1).
			name: "points, three quarters drawn",
			seg:  PathSegment{Kind: PathPoints, Points: []complex128{0, 0.2, 0.2 + 0.2i}, Fraction: 0.75},
			on: func(g complex128) float64 {
				if math.Abs(imag(g)) < 1e-9 {
					return 0
				}
				return math.Abs(real(g) - 0.2)
			},
			end: 0.2 + 0.1i,
		},
	} {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			segs, ring := drawnPath(t, &c, []PathSegment{tc.seg})
			if len(segs) != 1 {
				t.Fatalf("%d segment paths, want 1", len(segs))
			}
			g := segs[0]
			for _, p := range g {
				if d := tc.on(p); d > tol {
					t.Errorf("drawn point %v is %.2g off its locus", p, d)
				}
			}
			if d := cmplx.Abs(g[len(g)-1] - tc.end); d > tol {
				t.Errorf("drawn end %v, want %v", g[len(g)-1], tc.end)
			}
			if d := cmplx.Abs(ring - tc.end); d > tol {
				t.Errorf("end ring at %v, want %v", ring, tc.end)
			}
			if tc.monotone != nil {
				sign := 0.0
				for i := 1; i < len(g); i++ {
					d := tc.monotone(g[i]) - tc.monotone(g[i-1])
					if math.Abs(d) < 1e-3 {
						continue
					}
					if sign == 0 {
						sign = math.Copysign(1, d)
					} else if math.Copysign(1, d) != sign {
						t.Fatalf("path turns back between %v and %v", g[i-1], g[i])
					}
				}
			}
			if tc.seg.Kind == PathRotate {
				// Clockwise: each drawn point is at a smaller (unwrapped)
				// angle than the one before.
				prev := cmplx.Phase(g[0])
				for _, p := range g[1:] {
					a := cmplx.Phase(p)
					if d := math.Remainder(a-prev, 2*math.Pi); d > 1e-3 {
						t.Fatalf("rotation runs counter-clockwise at %v", p)
					}
					prev = a
				}
			}
		})
	}
}
