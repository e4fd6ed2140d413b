package chartsvg

import (
	"bytes"
	"math"
	"math/cmplx"
	"math/rand/v2"
	"testing"
)

// segDist returns the distance from p to the segment ab.
func segDist(p, a, b pt) float64 {
	dx, dy := b.x-a.x, b.y-a.y
	l2 := dx*dx + dy*dy
	u := 0.0
	if l2 > 0 {
		u = math.Max(0, math.Min(1, ((p.x-a.x)*dx+(p.y-a.y)*dy)/l2))
	}
	return math.Hypot(p.x-a.x-u*dx, p.y-a.y-u*dy)
}

// polyDist returns the distance from p to the nearest segment of poly.
func polyDist(p pt, poly []pt) float64 {
	best := math.Inf(1)
	if len(poly) == 1 {
		return math.Hypot(p.x-poly[0].x, p.y-poly[0].y)
	}
	for i := 1; i < len(poly); i++ {
		best = math.Min(best, segDist(p, poly[i-1], poly[i]))
	}
	return best
}

func hasVertex(poly []pt, p pt, tol float64) bool {
	for _, q := range poly {
		if math.Hypot(p.x-q.x, p.y-q.y) <= tol {
			return true
		}
	}
	return false
}

// drawnTrace renders one trace and reads its curve back from the SVG.
func drawnTrace(t *testing.T, c *Chart, tr Trace) []pt {
	t.Helper()
	var buf bytes.Buffer
	if err := c.RenderTraces(&buf, []Trace{tr}); err != nil {
		t.Fatal(err)
	}
	g := parseSVG(t, buf.String()).byID("trace-" + tr.ID)
	subs := parsePolyline(t, g.children[0].attr["d"])
	if len(subs) != 1 {
		t.Fatalf("%d subpaths, want 1", len(subs))
	}
	return subs[0]
}

func TestTraceThinningKeepsWhatTheEyeSees(t *testing.T) {
	t.Parallel()
	rng := rand.New(rand.NewPCG(1, 1))
	noisy := func(g []complex128, a float64) []complex128 {
		out := make([]complex128, len(g))
		for i, v := range g {
			out[i] = v + complex(a*rng.NormFloat64(), a*rng.NormFloat64())
		}
		return out
	}
	sharpF, sharpG := synth{2.45e9, 50, 60, 0, 50}.sweep(2.0e9, 2.9e9, 10001) // matched, narrow dip
	cableF, cableG := synth{2.41e9, 30, 9, 4.9e-9, 50}.sweep(2.0e9, 2.9e9, 10001)
	for _, tc := range []struct {
		name    string
		f       []float64
		g       []complex128
		keep    []float64
		maxPts  int
		tolUser float64
	}{
		{"narrow dip", sharpF, sharpG, []float64{2.2e9, 2.61234e9}, 100, 0},
		{"cable loops", cableF, cableG, nil, 700, 0},
		// Noise of 0.001 in Γ (about −60 dB, a third of a unit here).
		{"noisy", sharpF, noisy(sharpG, 0.001), nil, 4000, 0},
		{"fine tolerance", cableF, cableG, nil, 1500, 0.1},
		{"coarse tolerance", cableF, cableG, nil, 450, 1},
	} {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			c := Chart{TolerancePx: tc.tolUser}
			tol := tc.tolUser
			if tol == 0 {
				tol = DefaultTolerancePx
			}
			drawn := drawnTrace(t, &c, Trace{ID: "t", FreqHz: tc.f, Gamma: tc.g, KeepHz: tc.keep, Ticks: -1})
			t.Logf("%d points drawn", len(drawn))
			if len(drawn) > tc.maxPts {
				t.Errorf("%d points drawn for %d, want at most %d", len(drawn), len(tc.g), tc.maxPts)
			}
			// Rounding to a tenth moves each drawn point by up to √2/20.
			const round = 0.0708
			pts := make([]pt, len(tc.g))
			for i, g := range tc.g {
				x, y := c.GammaToXY(g)
				pts[i] = pt{x, y}
			}
			worst := 0.0
			for _, p := range pts {
				worst = math.Max(worst, polyDist(p, drawn))
			}
			if worst > tol+round {
				t.Errorf("a point lies %.3f from the drawn curve, want ≤ %.3f", worst, tol+round)
			}
			// The extremes: the dip (nearest the centre) and the bounding
			// box are drawn as vertices.
			dip, minX, maxX, minY, maxY := 0, 0, 0, 0, 0
			for i, p := range pts {
				if cmplx.Abs(tc.g[i]) < cmplx.Abs(tc.g[dip]) {
					dip = i
				}
				if p.x < pts[minX].x {
					minX = i
				}
				if p.x > pts[maxX].x {
					maxX = i
				}
				if p.y < pts[minY].y {
					minY = i
				}
				if p.y > pts[maxY].y {
					maxY = i
				}
			}
			for name, i := range map[string]int{"dip": dip, "min x": minX, "max x": maxX, "min y": minY, "max y": maxY} {
				if !hasVertex(drawn, pts[i], round) {
					t.Errorf("%s point %v is not a drawn vertex", name, pts[i])
				}
			}
			for _, f := range tc.keep {
				if i := nearest(tc.f, f); !hasVertex(drawn, pts[i], round) {
					t.Errorf("KeepHz %g: point %v is not a drawn vertex", f, pts[i])
				}
			}
		})
	}
}

func TestNegativeToleranceKeepsEveryPoint(t *testing.T) {
	t.Parallel()
	f, g := synth{2.45e9, 38, 6, 0, 50}.sweep(2.0e9, 2.9e9, 301)
	c := Chart{TolerancePx: -1}
	if drawn := drawnTrace(t, &c, Trace{ID: "t", FreqHz: f, Gamma: g, Ticks: -1}); len(drawn) != 301 {
		t.Errorf("%d points drawn, want all 301", len(drawn))
	}
}

func TestNonFiniteBreaksTrace(t *testing.T) {
	t.Parallel()
	g := []complex128{0.1, 0.2, cmplx.NaN(), 0.3, 0.4i, complex(math.Inf(1), 0), 0.5}
	c := Chart{}
	var buf bytes.Buffer
	if err := c.RenderTraces(&buf, []Trace{{ID: "t", Gamma: g}}); err != nil {
		t.Fatal(err)
	}
	e := parseSVG(t, buf.String()).byID("trace-t")
	subs := parsePolyline(t, e.children[0].attr["d"])
	if len(subs) != 3 || len(subs[0]) != 2 || len(subs[1]) != 2 || len(subs[2]) != 1 {
		t.Errorf("subpaths %v, want runs of 2, 2 and 1 points", subs)
	}
}

func TestColumnThinKeepsColumnExtremes(t *testing.T) {
	t.Parallel()
	rng := rand.New(rand.NewPCG(2, 3))
	orig := make([]pt, 5000)
	for i := range orig {
		orig[i] = pt{float64(i) / 50, rng.NormFloat64()}
	}
	pts := append([]pt(nil), orig...)
	n := columnThin(pts)
	kept := pts[:n]
	if n > 4*100 {
		t.Errorf("kept %d points over 100 columns, want at most 400", n)
	}
	// Per column: the lowest and highest value survive, in order.
	for col := 0; col < 100; col++ {
		lo, hi := math.Inf(1), math.Inf(-1)
		for _, p := range orig[col*50 : col*50+50] {
			lo, hi = math.Min(lo, p.y), math.Max(hi, p.y)
		}
		klo, khi := math.Inf(1), math.Inf(-1)
		for _, p := range kept {
			if math.Floor(p.x) == float64(col) {
				klo, khi = math.Min(klo, p.y), math.Max(khi, p.y)
			}
		}
		if klo != lo || khi != hi {
			t.Fatalf("column %d: kept range [%v, %v], want [%v, %v]", col, klo, khi, lo, hi)
		}
	}
	for i := 1; i < n; i++ {
		if kept[i].x < kept[i-1].x {
			t.Fatalf("order lost at %d", i)
		}
	}
}
