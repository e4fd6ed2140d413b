package chartsvg

import (
	"bytes"
	"fmt"
	"math"
	"math/cmplx"
	"sort"
	"strings"
	"testing"
)

func TestZToGammaKnownPoints(t *testing.T) {
	t.Parallel()
	cases := []struct {
		name string
		z    complex128 // normalised impedance
		want complex128
		tol  float64
	}{
		// Ends and centre of the chart: common practice; also listed as
		// round-trip properties in REFERENCE-CHECKS §3.
		{"short circuit z=0 at the left edge", 0, -1, 1e-15},
		{"open circuit z=∞ at the right edge", cmplx.Inf(), 1, 0},
		{"matched z=1 at the centre", 1, 0, 0},
		// REFERENCE-CHECKS N-3: Georgia Tech ECE3025 tutorial "Line with a
		// complex mismatch at the load", ZL = 50 + j50 Ω, Z0 = 50 Ω:
		// Γ = 0.2 + j0.4.
		{"z=1+j1 (N-3, Georgia Tech ECE3025)", 1 + 1i, 0.2 + 0.4i, 1e-15},
		// The conjugate load gives the conjugate Γ (Γ(z*) = Γ(z)*, from the
		// formula): 0.2 − j0.4.
		{"z=1−j1 (conjugate of N-3)", 1 - 1i, 0.2 - 0.4i, 1e-15},
		// REFERENCE-CHECKS N-2: University of Rhode Island ELE 541 exam
		// answer, ZL = 25 + j25, Z0 = 50: Γ = −0.2 + j0.4.
		{"z=0.5+j0.5 (N-2, URI ELE 541)", 0.5 + 0.5i, -0.2 + 0.4i, 1e-15},
		// REFERENCE-CHECKS N-1 (common practice, computed): 75 + j40 Ω in
		// 50 Ω is z = 1.5 + j0.8 and Γ = 0.274311 + j0.232221.
		{"75+j40 Ω in 50 Ω (N-1, common practice)", complex(75, 40) / 50, 0.274311 + 0.232221i, 7.1e-7},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			got := ZToGamma(tc.z)
			// The tolerance is on |Γ − want|: half a unit in the sixth
			// decimal of each part for the six-decimal reference.
			if cmplx.Abs(got-tc.want) > tc.tol {
				t.Errorf("ZToGamma(%v) = %v, want %v", tc.z, got, tc.want)
			}
			// The admittance map is the impedance map turned through 180°.
			if y := YToGamma(tc.z); y != -got {
				t.Errorf("YToGamma(%v) = %v, want %v", tc.z, y, -got)
			}
		})
	}
}

func TestNormalisation75j40(t *testing.T) {
	t.Parallel()
	// REFERENCE-CHECKS N-1 (common practice): 75 + j40 Ω in a 50 Ω system
	// normalises to 1.5 + j0.8, and Γ = 0.359406 ∠ 40.2499°.
	z := complex(75, 40) / complex(50, 0)
	if z != 1.5+0.8i {
		t.Fatalf("z = %v, want 1.5+0.8i", z)
	}
	g := ZToGamma(z)
	if m := cmplx.Abs(g); math.Abs(m-0.359406) > 5e-7 {
		t.Errorf("|Γ| = %.7f, want 0.359406", m)
	}
	if a := cmplx.Phase(g) * 180 / math.Pi; math.Abs(a-40.2499) > 5e-5 {
		t.Errorf("∠Γ = %.6f°, want 40.2499°", a)
	}
	// Drawn where its Γ says: a marker at it is translated to
	// (K·0.274311, −K·0.232221) to a tenth of a unit.
	c := Chart{ImpedanceGrid: true}
	var buf bytes.Buffer
	if err := c.RenderMarker(&buf, Marker{ID: "z", Num: 1, Gamma: g}); err != nil {
		t.Fatal(err)
	}
	e := parseSVG(t, buf.String())
	var x, y float64
	if _, err := fmt.Sscanf(e.attr["transform"], "translate(%g %g)", &x, &y); err != nil {
		t.Fatalf("transform %q: %v", e.attr["transform"], err)
	}
	k := c.Scale()
	if math.Abs(x-k*0.274311) > 0.05+1e-6 || math.Abs(y+k*0.232221) > 0.05+1e-6 {
		t.Errorf("marker for 75+j40 Ω at (%v, %v), want (%v, %v)", x, y, k*0.274311, -k*0.232221)
	}
}

func TestGammaToXY(t *testing.T) {
	t.Parallel()
	for _, tc := range []struct {
		name  string
		chart Chart
		k     float64 // expected units per unit Γ
	}{
		// 700/2 minus a 12-unit margin.
		{"bare 700", Chart{}, 338},
		// 700/2 minus 10 + 24 (angle scale) + 20 (wavelength scale).
		{"with scales", Chart{AngleScale: true, WavelengthScale: true}, 296},
		{"zoom 0.5", Chart{SizePx: 400, Zoom: 0.5}, (200 - 12) / 0.5},
	} {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			c := tc.chart
			if k := c.Scale(); math.Abs(k-tc.k) > 1e-12 {
				t.Fatalf("Scale() = %v, want %v", k, tc.k)
			}
			for _, z := range []struct {
				z    complex128
				x, y float64
			}{
				{0, -tc.k, 0},                     // z = 0: left edge
				{cmplx.Inf(), tc.k, 0},            // z = ∞: right edge
				{1, 0, 0},                         // z = 1: centre
				{1i, 0, -tc.k},                    // z = j: top of the rim
				{-1i, 0, tc.k},                    // z = −j: bottom of the rim
				{1 + 1i, 0.2 * tc.k, -0.4 * tc.k}, // N-3
			} {
				x, y := c.GammaToXY(ZToGamma(z.z))
				if math.Abs(x-z.x) > 1e-9 || math.Abs(y-z.y) > 1e-9 {
					t.Errorf("z=%v: GammaToXY = (%v, %v), want (%v, %v)", z.z, x, y, z.x, z.y)
				}
				if g := c.XYToGamma(x, y); cmplx.Abs(g-ZToGamma(z.z)) > 1e-12 {
					t.Errorf("z=%v: XYToGamma(GammaToXY) = %v", z.z, g)
				}
			}
		})
	}
}

func TestConstantLoci(t *testing.T) {
	t.Parallel()
	on := func(t *testing.T, what string, cr circle, g complex128) {
		t.Helper()
		if d := cmplx.Abs(g - cr.c); math.Abs(d-cr.r) > 1e-12*math.Max(1, cr.r) {
			t.Errorf("%s: Γ=%v is %v from the centre %v, want radius %v", what, g, d, cr.c, cr.r)
		}
	}
	xs := []float64{-50, -5, -1, -0.3, 0, 0.2, 1, 2, 7, 300}
	rs := []float64{0, 0.05, 0.2, 1, 3.7, 20, 1e3}
	for _, r := range rs {
		for _, x := range xs {
			on(t, fmt.Sprintf("r=%g circle", r), rCircle(r), ZToGamma(complex(r, x)))
		}
	}
	for _, x := range xs {
		if x == 0 {
			continue
		}
		for _, r := range rs {
			on(t, fmt.Sprintf("x=%g arc", x), xCircle(x), ZToGamma(complex(r, x)))
		}
	}
	// Constant Q = |X|/R: z = r(1 ± jQ).
	for _, q := range []float64{0.5, 1, 2, 10} {
		for _, r := range []float64{0.01, 0.3, 1, 4, 100} {
			on(t, fmt.Sprintf("Q=%g upper", q), qCircle(q, true), ZToGamma(complex(r, r*q)))
			on(t, fmt.Sprintf("Q=%g lower", q), qCircle(q, false), ZToGamma(complex(r, -r*q)))
		}
	}
	// The r = 1 circle passes through the centre.
	if cr := rCircle(1); cmplx.Abs(cr.c) != cr.r {
		t.Errorf("r=1 circle: centre %v radius %v does not pass through 0", cr.c, cr.r)
	}
}

// gridArcs renders the grid of c and returns the arcs of its paths whose
// data-grid attribute is family ("z" or "y").
func gridArcs(t *testing.T, c Chart, family string) []arcSeg {
	t.Helper()
	var buf bytes.Buffer
	if err := c.RenderGrid(&buf); err != nil {
		t.Fatal(err)
	}
	root := parseSVG(t, buf.String())
	var arcs []arcSeg
	root.walk(func(e *element) {
		if e.name == "path" && e.attr["data-grid"] == family {
			arcs = append(arcs, parseArcs(t, e.attr["d"])...)
		}
	})
	if len(arcs) == 0 {
		t.Fatalf("no %s-grid arcs", family)
	}
	return arcs
}

// samples returns n points along the arc as an SVG renderer draws it.
func (a arcSeg) samples(n int) []pt {
	o, _ := a.centre()
	r := math.Max(a.r, math.Hypot(a.p0.x-a.p1.x, a.p0.y-a.p1.y)/2)
	th0 := math.Atan2(a.p0.y-o.y, a.p0.x-o.x)
	th1 := math.Atan2(a.p1.y-o.y, a.p1.x-o.x)
	d := th1 - th0
	if a.sweep && d < 0 {
		d += 2 * math.Pi
	} else if !a.sweep && d > 0 {
		d -= 2 * math.Pi
	}
	out := make([]pt, n)
	for i := range out {
		th := th0 + d*float64(i)/float64(n-1)
		out[i] = pt{o.x + r*math.Cos(th), o.y + r*math.Sin(th)}
	}
	return out
}

// deviation returns the largest distance of the points from the circle
// centred at (cx, cy) with radius r.
func deviation(ps []pt, cx, cy, r float64) float64 {
	worst := 0.0
	for _, p := range ps {
		worst = math.Max(worst, math.Abs(math.Hypot(p.x-cx, p.y-cy)-r))
	}
	return worst
}

func TestGridArcsAreExactLoci(t *testing.T) {
	t.Parallel()
	for _, c := range []Chart{
		{ImpedanceGrid: true},
		{ImpedanceGrid: true, SizePx: 300},
		{ImpedanceGrid: true, AngleScale: true, WavelengthScale: true, SizePx: 900},
		{ImpedanceGrid: true, Zoom: 0.3},
		{ImpedanceGrid: true, Zoom: 0.3, Centre: 0.4 - 0.3i},
	} {
		t.Run(fmt.Sprintf("size %d zoom %g centre %v", c.SizePx, c.Zoom, c.Centre), func(t *testing.T) {
			t.Parallel()
			k := c.Scale()
			o := c.layout().o() // where Γ = 0 is drawn
			rl, xl := gridTables(k)
			// Each arc, as drawn, lies within this of its exact locus: a
			// rounding of a tenth of a unit, seen through the renderer's
			// recovery of the centre from the rounded ends.
			const tol = 0.2
			rFound, xFound := map[float64]bool{}, map[float64]bool{}
			rOne := false
			for _, a := range gridArcs(t, c, "z") {
				ps := a.samples(9)
				for i := range ps {
					ps[i].x, ps[i].y = ps[i].x-o.x, ps[i].y-o.y
				}
				// Every arc lies in the unit disc: the ends are computed
				// where the line meets its neighbour or the rim, and the
				// inner arc is the one drawn.
				for _, p := range ps {
					if math.Hypot(p.x, p.y) > k+tol {
						t.Errorf("arc %+v: point %v outside the rim", a, p)
					}
				}
				// The locus the radius names, from the bilinear map:
				// r circle: centre (r/(1+r), 0), radius 1/(1+r), so
				// r = K/radius − 1; x arc: centre (1, 1/x), radius 1/|x|,
				// so |x| = K/radius (y is down on the screen).
				r := k/a.r - 1
				x := k / a.r
				dr := deviation(ps, k-a.r, 0, a.r)
				dxUp, dxDown := deviation(ps, k, -a.r, a.r), deviation(ps, k, a.r, a.r)
				switch {
				case dr <= tol:
					rFound[math.Round(r*1e3)/1e3] = true
					if math.Abs(r-1) < 1e-3 && math.Abs(k-a.r-a.r) < tol {
						rOne = true // centre (K/2, 0), radius K/2: through 0
					}
				case dxUp <= tol:
					xFound[math.Round(x*1e3)/1e3] = true
				case dxDown <= tol:
					xFound[-math.Round(x*1e3)/1e3] = true
				default:
					t.Errorf("arc %+v is off every locus its radius names (r=%g: %.2f; x=±%g: %.2f, %.2f)",
						a, r, dr, x, dxUp, dxDown)
				}
			}
			if !rOne {
				t.Error("no r = 1 circle through the centre")
			}
			for _, g := range rl {
				if c.layout().visible(rCircle(g.v)) && !nearKey(rFound, g.v) {
					t.Errorf("r = %g circle missing", g.v)
				}
			}
			for _, g := range xl {
				for _, v := range []float64{g.v, -g.v} {
					if c.layout().visible(xCircle(v)) && !nearKey(xFound, v) {
						t.Errorf("x = %g arc missing", v)
					}
				}
			}
		})
	}
}

// nearKey reports whether m has a key within 0.5 % of v.
func nearKey(m map[float64]bool, v float64) bool {
	for x := range m {
		if math.Abs(x-v) <= 5e-3*math.Abs(v) {
			return true
		}
	}
	return false
}

func containsApprox(s []float64, v, tol float64) bool {
	for _, x := range s {
		if math.Abs(x-v) <= tol {
			return true
		}
	}
	return false
}

func TestAdmittanceGridMirrorsImpedanceGrid(t *testing.T) {
	t.Parallel()
	key := func(a arcSeg) string {
		f := func(v float64) float64 { return math.Round(v*10)/10 + 0 } // + 0 turns −0 into 0
		return fmt.Sprintf("%g %g %g %g %g %v %v", f(a.p0.x), f(a.p0.y), f(a.p1.x), f(a.p1.y), f(a.r), a.large, a.sweep)
	}
	z := gridArcs(t, Chart{ImpedanceGrid: true}, "z")
	y := gridArcs(t, Chart{AdmittanceGrid: true}, "y")
	var zk, yk []string
	for _, a := range z {
		// Turned through 180° about the centre: ends negated; the turn keeps
		// the arc's orientation, so both flags stay.
		a.p0, a.p1 = pt{-a.p0.x, -a.p0.y}, pt{-a.p1.x, -a.p1.y}
		zk = append(zk, key(a))
	}
	for _, a := range y {
		yk = append(yk, key(a))
	}
	if len(zk) != len(yk) {
		t.Errorf("%d impedance arcs, %d admittance arcs", len(zk), len(yk))
	}
	count := map[string]int{}
	for _, k := range zk {
		count[k]++
	}
	for _, k := range yk {
		count[k]--
	}
	var diff []string
	for k, n := range count {
		if n != 0 {
			diff = append(diff, fmt.Sprintf("%+d  %s", n, k))
		}
	}
	sort.Strings(diff)
	if len(diff) > 0 {
		t.Errorf("admittance grid is not the impedance grid turned through 180° (+: turned impedance arc with no admittance twin, −: the reverse):\n%s",
			strings.Join(diff, "\n"))
	}
}
