package match

import (
	"context"
	"math"
	"math/cmplx"
	"testing"

	"gonum.org/v1/gonum/integrate/quad"

	"matchbench/rfmath"
)

// integral0Inf returns ∫₀^∞ f(ω) dω by ω = s·tan θ and a 4000-point
// Gauss–Legendre rule on θ ∈ [0, π/2] (gonum/integrate/quad).
func integral0Inf(f func(float64) float64, s float64) float64 {
	g := func(th float64) float64 {
		c := math.Cos(th)
		return f(s*math.Tan(th)) * s / (c * c)
	}
	return quad.Fixed(g, 0, math.Pi/2, 4000, quad.Legendre{}, 0)
}

// TestBodeFanoIntegralTight checks the constants of the Bode–Fano bounds
// against a case where they hold with equality: a parallel RC (or series
// RL) connected straight to a source of its own R has
// |Γ|² = x²/(4 + x²), x = ωRC (or ωL/R), and ∫₀^∞ ½·ln(1 + 4/x²) dx = π
// (the standard integral ∫₀^∞ ln(1 + a²/x²) dx = π·a, from memory), so
// the integral of ln(1/|Γ|) is exactly π/(RC) (or π·R/L). Computed here by
// quadrature, independently of BodeFano.
func TestBodeFanoIntegralTight(t *testing.T) {
	t.Parallel()
	for _, tc := range []struct {
		name string
		m    RLC
	}{
		{"parallel RC", RLC{Parallel: true, ROhm: 50, CF: 2e-12}},
		{"series RL", RLC{ROhm: 25, LH: 8e-9}},
	} {
		r := tc.m.ROhm
		got := integral0Inf(func(w float64) float64 {
			g := rfmath.GammaFromZ(tc.m.Z(w/(2*math.Pi)), complex(r, 0))
			return -math.Log(cmplx.Abs(g))
		}, 1e10)
		lim := BodeFano(tc.m, []Band{{1e9, 2e9, 10, 0}})
		if math.Abs(got-lim.Integral) > 1e-3*lim.Integral {
			t.Errorf("%s: ∫ln(1/|Γ|)dω = %.6g, bound %.6g", tc.name, got, lim.Integral)
		}
		if !math.IsInf(lim.IntegralInv, 1) {
			t.Errorf("%s: a bound on ∫ω⁻²… without the element that sets it", tc.name)
		}
	}
}

// TestBodeFanoBands checks the best constant reflection over bands
// against the textbook forms (Pozar, Microwave Engineering, Section 5.9,
// from memory; values computed here): Γm = exp(−π/(Δω·RC)) for a parallel
// RC; Γm = exp(−π/(Q·B)) for a series RLC of Q = ω0L/R over a fractional
// bandwidth B centred on ω0 (REFERENCE-CHECKS §9 R-1 values: Q = 20 at
// 159.155 MHz); and the margin against requirements.
func TestBodeFanoBands(t *testing.T) {
	t.Parallel()
	const dbPerNeper = 20 / math.Ln10
	rc := RLC{Parallel: true, ROhm: 200, CF: 2e-12}
	band := Band{2.0e9, 2.5e9, 10, 0}
	lim := BodeFano(rc, []Band{band})
	want := math.Exp(-math.Pi / (2 * math.Pi * 0.5e9 * 200 * 2e-12)) // e^−2.5
	if math.Abs(lim.GammaMin-want) > 1e-12 || math.Abs(lim.BestRLdB-21.7147241) > 1e-6 {
		t.Errorf("parallel RC: Γm %v (want %v), %v dB (want 21.7147)", lim.GammaMin, want, lim.BestRLdB)
	}
	if math.Abs(lim.MaxMarginDB-(lim.BestRLdB-10)) > 1e-9 || !lim.Feasible() {
		t.Errorf("margin %v, want %v", lim.MaxMarginDB, lim.BestRLdB-10)
	}

	// Series RLC, R-1: R 5 Ω, L 100 nH, C 10 pF; band f0 ± 4 MHz.
	s := RLC{ROhm: 5, LH: 100e-9, CF: 10e-12}
	f0 := s.ResonanceHz()
	b := Band{f0 - 4e6, f0 + 4e6, 0, 0}
	lim = BodeFano(s, []Band{b})
	q := 2 * math.Pi * f0 * s.LH / s.ROhm
	if math.Abs(q-20) > 1e-9 {
		t.Fatalf("Q = %v", q)
	}
	rhoL := math.Pi / (q * (b.HiHz - b.LoHz) / f0)
	w1, w2 := 2*math.Pi*b.LoHz, 2*math.Pi*b.HiHz
	rhoC := math.Pi * s.ROhm * s.CF / (1/w1 - 1/w2)
	if math.Abs(lim.BestRLdB-math.Min(rhoL, rhoC)*dbPerNeper) > 1e-9 {
		t.Errorf("series RLC: %v dB, want %v", lim.BestRLdB, math.Min(rhoL, rhoC)*dbPerNeper)
	}

	// Two bands share the bound: Σ Δω·ρ = π/(RC); a requirement of
	// BestRLdB in both has zero margin, 1 dB more is infeasible.
	two := []Band{{2.0e9, 2.1e9, 0, 0}, {2.4e9, 2.6e9, 0, 0}}
	lim = BodeFano(rc, two)
	rho := math.Pi / (200 * 2e-12) / (2 * math.Pi * 0.3e9)
	if math.Abs(lim.BestRLdB-rho*dbPerNeper) > 1e-9 {
		t.Errorf("two bands: %v dB, want %v", lim.BestRLdB, rho*dbPerNeper)
	}
	two[0].MinReturnLossDB, two[1].MinReturnLossDB = lim.BestRLdB+1, lim.BestRLdB+1
	if l := BodeFano(rc, two); math.Abs(l.MaxMarginDB+1) > 1e-9 || l.Feasible() {
		t.Errorf("over the limit by 1 dB: margin %v", l.MaxMarginDB)
	}
	// Nothing reactive, nothing limits.
	if l := BodeFano(RLC{ROhm: 30}, two); !math.IsInf(l.BestRLdB, 1) {
		t.Errorf("resistor: %v dB", l.BestRLdB)
	}
}

// TestFitRLC fits models to sweeps made from them (exact recovery), on
// the networks of REFERENCE-CHECKS §9 and on an RC.
func TestFitRLC(t *testing.T) {
	t.Parallel()
	for _, tc := range []struct {
		name string
		m    RLC
		lo   float64
		hi   float64
	}{
		{"series RLC (R-1)", RLC{ROhm: 5, LH: 100e-9, CF: 10e-12}, 140e6, 180e6},
		{"parallel RLC (R-3)", RLC{Parallel: true, ROhm: 1000, LH: 100e-9, CF: 10e-12}, 140e6, 180e6},
		{"series RC", RLC{ROhm: 20, CF: 5e-12}, 1e9, 2e9},
		{"parallel RC", RLC{Parallel: true, ROhm: 200, CF: 2e-12}, 1e9, 2e9},
	} {
		l := loadOf(grid(tc.lo, tc.hi, 81), 50, tc.m.Z)
		fit, err := FitRLC(l, tc.lo, tc.hi)
		if err != nil {
			t.Fatalf("%s: %v", tc.name, err)
		}
		g := fit.RLC
		if g.Parallel != tc.m.Parallel || !closeF(g.ROhm, tc.m.ROhm, 1e-9) ||
			!closeF(g.LH*1e9, tc.m.LH*1e9, 1e-9) || !closeF(g.CF*1e12, tc.m.CF*1e12, 1e-9) || fit.RMSGammaError > 1e-9 {
			t.Errorf("%s: fit %v (error %g), want %v", tc.name, g, fit.RMSGammaError, tc.m)
		}
	}
	// Q of the models (REFERENCE-CHECKS §9: R-1 Q = 20, R-3 Q = 10).
	for _, c := range []struct {
		m RLC
		q float64
	}{{RLC{ROhm: 5, LH: 100e-9, CF: 10e-12}, 20}, {RLC{Parallel: true, ROhm: 1000, LH: 100e-9, CF: 10e-12}, 10}} {
		if got := c.m.Q(); math.Abs(got-c.q) > 1e-9 {
			t.Errorf("%v: Q = %v, want %v", c.m, got, c.q)
		}
	}
	if !math.IsNaN((RLC{ROhm: 5, CF: 1e-12}).Q()) {
		t.Errorf("RC has a Q")
	}
	if _, err := FitRLC(loadOf(grid(1e9, 2e9, 5), 50, func(float64) complex128 { return 30 }), 1e9, 1.1e9); err == nil {
		t.Errorf("fit of 1 point accepted")
	}
}

// TestSearchRespectsBodeFano checks that no design the search returns
// beats the limit: on a parallel RC load every design's worst return loss
// over the band is below the Bode–Fano figure, and the best design's
// ∫ln(1/|Γ|)dω over all frequencies (by quadrature, on the exact load)
// stays below π/(RC).
func TestSearchRespectsBodeFano(t *testing.T) {
	t.Parallel()
	rc := RLC{Parallel: true, ROhm: 200, CF: 2e-12}
	l := loadOf(grid(1.9e9, 2.6e9, 141), 50, rc.Z)
	bands := []Band{{2.0e9, 2.5e9, 10, 0}}
	lim, fit, err := BodeFanoOf(l, bands)
	if err != nil {
		t.Fatal(err)
	}
	if !fit.Parallel || !closeF(fit.CF*1e12, 2, 1e-9) || !closeF(fit.ROhm, 200, 1e-9) {
		t.Fatalf("fit %v", fit)
	}
	res, err := Search(context.Background(), l, bands, &Settings{MaxParts: 4, Top: 10})
	if err != nil {
		t.Fatal(err)
	}
	for _, d := range res.Designs {
		if d.WorstRLdB > lim.BestRLdB {
			t.Errorf("%v: %v dB beats the Bode–Fano limit %v dB", d.Network, d.WorstRLdB, lim.BestRLdB)
		}
	}
	c := compiled(t, res.Designs[0].Network, nil)
	got := integral0Inf(func(w float64) float64 {
		f := w / (2 * math.Pi)
		g := c.GammaAt(f, rfmath.GammaFromZ(rc.Z(f), 50), 50)
		return -math.Log(cmplx.Abs(g))
	}, 1.4e10)
	if got > lim.Integral*(1+1e-3) {
		t.Errorf("∫ln(1/|Γ|)dω = %v > π/(RC) = %v", got, lim.Integral)
	}
	t.Logf("best %v: worst %.2f dB; limit %.2f dB; integral %.3g of %.3g", res.Designs[0].Network, res.Designs[0].WorstRLdB, lim.BestRLdB, got, lim.Integral)
}

// TestChu checks McLean's form of the Chu limit, Q = 1/(ka)³ + 1/(ka)
// (J. S. McLean, IEEE Trans. AP-44(5), 1996): Q = 2 at ka = 1 and 10 at
// ka = 0.5 (arithmetic), ka of a 5 cm sphere at 868 MHz (arithmetic,
// c = 299 792 458 m/s), and the comparison with the Q of the R-1 series
// RLC (Q = 20, REFERENCE-CHECKS §9) in a sphere with ka = 0.5.
func TestChu(t *testing.T) {
	t.Parallel()
	for _, c := range []struct{ ka, q float64 }{{1, 2}, {0.5, 10}, {0.1, 1010}} {
		if got := ChuQ(c.ka); math.Abs(got-c.q) > 1e-9*c.q {
			t.Errorf("ChuQ(%v) = %v, want %v", c.ka, got, c.q)
		}
	}
	if !math.IsNaN(ChuQ(0)) || !math.IsNaN(ChuQ(-1)) {
		t.Errorf("ChuQ of a non-positive ka is not NaN")
	}
	if ka := KA(0.05, 868e6); math.Abs(ka-0.909597) > 1e-6 {
		t.Errorf("KA = %v, want 0.909597", ka)
	}
	m := RLC{ROhm: 5, LH: 100e-9, CF: 10e-12}
	l := loadOf(grid(100e6, 250e6, 3001), 50, m.Z)
	f0 := m.ResonanceHz()
	a := 0.5 * rfmath.SpeedOfLight / (2 * math.Pi * f0)
	c, err := ChuCompare(l, 160e6, a)
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(c.Measured.Q-20) > 0.05 || math.Abs(c.KA-0.5) > 1e-4 || math.Abs(c.Ratio-2) > 0.01 {
		t.Errorf("Chu compare %+v", c)
	}
	if _, err := ChuCompare(loadOf(grid(1e9, 2e9, 11), 50, func(float64) complex128 { return 30 + 5i }), 1.5e9, 0.01); err == nil {
		t.Errorf("no resonance accepted")
	}
	if c.SlopeQ {
		t.Errorf("the half-power edges lie inside the sweep, yet the slope Q was used")
	}

	// The same RLC swept only 150–170 MHz: the half-power edges (155.2258
	// and 163.1835 MHz, R-1) lie inside, but cut it to 157–170 MHz and the
	// lower one is beyond it; the slope Q is then ω0·L/R = 20 too.
	cut := loadOf(grid(157e6, 170e6, 261), 50, m.Z)
	c, err = ChuCompare(cut, 160e6, a)
	if err != nil {
		t.Fatal(err)
	}
	if !c.SlopeQ || math.Abs(c.Measured.Q-20) > 0.01 || c.Measured.LoHz != 0 {
		t.Errorf("Chu compare with an edge beyond the sweep: %+v", c)
	}
}

// TestFitTrusted checks the threshold of a trusted RLC fit: the R-1 RLC
// fits itself (error ≈ 0), while the same RLC in series with a parallel
// tank (50 Ω, resonant at 165 MHz, Q 20) has two resonances in the band,
// which no single RLC describes (the best one misses by about 0.26 in Γ).
func TestFitTrusted(t *testing.T) {
	t.Parallel()
	m := RLC{ROhm: 5, LH: 100e-9, CF: 10e-12}
	l := loadOf(grid(150e6, 170e6, 81), 50, m.Z)
	fit, err := FitRLC(l, 150e6, 170e6)
	if err != nil || !fit.Trusted() || fit.RMSGammaError > 1e-9 {
		t.Fatalf("fit of the RLC itself: %+v, %v", fit, err)
	}
	tank := RLC{ROhm: 50, LH: 50 / (20 * 2 * math.Pi * 165e6), Parallel: true}
	tank.CF = 1 / (math.Pow(2*math.Pi*165e6, 2) * tank.LH)
	two := loadOf(grid(150e6, 170e6, 81), 50, func(f float64) complex128 { return m.Z(f) + tank.Z(f) })
	fit, err = FitRLC(two, 150e6, 170e6)
	if err != nil {
		t.Fatal(err)
	}
	if fit.Trusted() || fit.RMSGammaError <= FitTrustRMSGamma {
		t.Errorf("two resonances fitted by one RLC with error %.3g: trusted %v", fit.RMSGammaError, fit.Trusted())
	}
}

// TestChuForBands checks the comparison the page and the command line show:
// at the resonance nearest the geometric centre of the bands' span (two
// resonances, REFERENCE-CHECKS §9 R-1 at 159.15 MHz with Q 20 and a second
// series RLC at 225 MHz; bands 150–152 and 165–170 MHz have their span's
// centre √(150·170) = 159.69 MHz), and, on a sweep with no resonance, the
// fallback to the fitted RLC (Q = ω0·L/R = 20 for R-1, closed form; ka 0.5
// so Q_Chu = 10, McLean 1996): FromFit, the sweep's reason kept in Why.
func TestChuForBands(t *testing.T) {
	t.Parallel()
	m := RLC{ROhm: 5, LH: 100e-9, CF: 10e-12}
	m2 := RLC{ROhm: 5, LH: 100e-9, CF: 1 / (math.Pow(2*math.Pi*225e6, 2) * 100e-9)}
	f0 := m.ResonanceHz()
	a := 0.5 * rfmath.SpeedOfLight / (2 * math.Pi * f0)
	// Two series resonators in parallel: each dominates near its own
	// resonance.
	two := loadOf(grid(100e6, 300e6, 4001), 50, func(f float64) complex128 {
		z1, z2 := m.Z(f), m2.Z(f)
		return z1 * z2 / (z1 + z2)
	})
	bands := []Band{{LoHz: 150e6, HiHz: 152e6}, {LoHz: 165e6, HiHz: 170e6}}
	c, err := ChuForBands(two, bands, 240e6, a, nil)
	if err != nil {
		t.Fatal(err)
	}
	want, err := ChuCompare(two, math.Sqrt(150e6*170e6), a)
	if err != nil {
		t.Fatal(err)
	}
	if c != want || c.FromFit || math.Abs(c.Measured.FreqHz-f0) > 0.5e6 {
		t.Errorf("ChuForBands %+v, want ChuCompare at the span's centre %+v (near %g Hz)", c, want, f0)
	}
	// No bands: nearest fHz (the second resonance).
	if c, err := ChuForBands(two, nil, 240e6, a, nil); err != nil || math.Abs(c.Measured.FreqHz-225e6) > 2e6 {
		t.Errorf("ChuForBands without bands near 240 MHz: %+v, %v", c, err)
	}
	flat := loadOf(grid(150e6, 170e6, 81), 50, func(float64) complex128 { return 30 + 5i })
	if _, err := ChuForBands(flat, bands, 0, a, nil); err == nil {
		t.Error("no resonance and no fit: accepted")
	}
	c, err = ChuForBands(flat, bands, 0, a, &Fit{RLC: m})
	if err != nil || !c.FromFit || c.Why == nil || math.Abs(c.Measured.Q-20) > 1e-9 || math.Abs(c.KA-0.5) > 1e-9 || math.Abs(c.Ratio-2) > 1e-6 {
		t.Errorf("fallback to the fit: %+v, %v; want Q 20, ka 0.5, ratio 2", c, err)
	}
}
