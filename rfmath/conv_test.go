package rfmath

import (
	"fmt"
	"math"
	"math/cmplx"
	"math/rand/v2"
	"testing"
)

// TestVSWRTable checks the VSWR rows of REFERENCE-CHECKS §2a (C, printed to
// the digits shown; the tolerance is half a unit in the last printed digit).
func TestVSWRTable(t *testing.T) {
	t.Parallel()
	tests := []struct {
		vswr, gamma, rl, ml, reflPct, delivPct float64
	}{
		{1.0, 0, math.Inf(1), 0, 0, 100},
		{1.1, 0.047619, 26.4444, 0.0099, 0.227, 99.773},
		{1.2, 0.090909, 20.8279, 0.0360, 0.826, 99.174},
		{1.25, 0.111111, 19.0849, 0.0540, 1.235, 98.765},
		// V: a public worked example gives Γ = 0.2, RL 13.979 dB, ML 0.1773 dB, 4 %.
		{1.5, 0.200000, 13.9794, 0.1773, 4.000, 96.000},
		// V: a public worked example gives ML 0.51 dB, 89 % / 11 %.
		{2.0, 0.333333, 9.5424, 0.5115, 11.111, 88.889},
		{3.0, 0.500000, 6.0206, 1.2494, 25.000, 75.000},
		{5.0, 0.666667, 3.5218, 2.5527, 44.444, 55.556},
		{10.0, 0.818182, 1.7430, 4.8073, 66.942, 33.058},
	}
	for _, tc := range tests {
		t.Run(fmt.Sprintf("VSWR %g", tc.vswr), func(t *testing.T) {
			t.Parallel()
			g := GammaMagFromVSWR(tc.vswr)
			if math.Abs(g-tc.gamma) > 0.5e-6 {
				t.Errorf("VSWR %g: |Γ| = %.7f, want %.6f", tc.vswr, g, tc.gamma)
			}
			if v := VSWR(g); math.Abs(v-tc.vswr) > 1e-12*tc.vswr {
				t.Errorf("VSWR(GammaMagFromVSWR(%g)) = %.15g", tc.vswr, v)
			}
			if rl := ReturnLossDB(g); !(math.IsInf(tc.rl, 1) && math.IsInf(rl, 1)) && math.Abs(rl-tc.rl) > 0.5e-4 {
				t.Errorf("VSWR %g: RL = %.5f, want %.4f", tc.vswr, rl, tc.rl)
			}
			if ml := MismatchLossDB(g); math.Abs(ml-tc.ml) > 0.5e-4 {
				t.Errorf("VSWR %g: ML = %.5f, want %.4f", tc.vswr, ml, tc.ml)
			}
			if p := 100 * (1 - PowerDeliveredFraction(g)); math.Abs(p-tc.reflPct) > 0.5e-3 {
				t.Errorf("VSWR %g: reflected %.4f %%, want %.3f", tc.vswr, p, tc.reflPct)
			}
			if p := 100 * PowerDeliveredFraction(g); math.Abs(p-tc.delivPct) > 0.5e-3 {
				t.Errorf("VSWR %g: delivered %.4f %%, want %.3f", tc.vswr, p, tc.delivPct)
			}
		})
	}
}

// TestReturnLossTable checks REFERENCE-CHECKS §2b: the radio-electronics.com
// table (V, 3 decimals) and the C columns (4 decimals).
func TestReturnLossTable(t *testing.T) {
	t.Parallel()
	tests := []struct {
		rl, vswrTable, gammaTable, vswrC, mlC float64
	}{
		{1, 17.391, 0.891, 17.3910, 6.8683},
		{3, 5.848, 0.708, 5.8480, 3.0206},
		{6, 3.010, 0.501, 3.0095, 1.2563},
		{10, 1.925, 0.316, 1.9250, 0.4576},
		{14, 1.499, 0.200, 1.4985, 0.1764},
		{15, 1.433, 0.178, 1.4326, 0.1396},
		{20, 1.222, 0.100, 1.2222, 0.0436},
		{30, 1.065, 0.032, 1.0653, 0.0043},
	}
	for _, tc := range tests {
		for _, sign := range []float64{1, -1} { // a negative entry means the same (see GammaMagFromReturnLossDB)
			g := GammaMagFromReturnLossDB(sign * tc.rl)
			v := VSWR(g)
			if math.Abs(v-tc.vswrTable) > 0.5e-3 || math.Abs(g-tc.gammaTable) > 0.5e-3 {
				t.Errorf("RL %g: VSWR %.4f |Γ| %.4f, table %.3f %.3f", sign*tc.rl, v, g, tc.vswrTable, tc.gammaTable)
			}
			if math.Abs(v-tc.vswrC) > 0.5e-4 {
				t.Errorf("RL %g: VSWR %.5f, want %.4f", sign*tc.rl, v, tc.vswrC)
			}
			if ml := MismatchLossDB(g); math.Abs(ml-tc.mlC) > 0.5e-4 {
				t.Errorf("RL %g: ML %.5f, want %.4f", sign*tc.rl, ml, tc.mlC)
			}
			if rl := ReturnLossDB(g); math.Abs(rl-tc.rl) > 1e-12 {
				t.Errorf("RL round trip %g → %g", tc.rl, rl)
			}
		}
	}
}

// TestScalarEdgeCases checks the edge cases listed at the end of
// REFERENCE-CHECKS §2.
func TestScalarEdgeCases(t *testing.T) {
	t.Parallel()
	inf, nan := math.Inf(1), math.NaN()
	tests := []struct {
		name string
		got  float64
		want float64
	}{
		{"VSWR(0)", VSWR(0), 1},
		{"VSWR(1)", VSWR(1), inf},
		{"VSWR(1.2) active", VSWR(1.2), nan},
		{"VSWR(−0.1)", VSWR(-0.1), nan},
		{"VSWR(NaN)", VSWR(nan), nan},
		{"RL(0)", ReturnLossDB(0), inf},
		{"RL(1)", ReturnLossDB(1), 0},
		{"RL(2) negative", ReturnLossDB(2), -20 * math.Log10(2)},
		{"RL(−1)", ReturnLossDB(-1), nan},
		{"ML(0)", MismatchLossDB(0), 0},
		{"ML(1)", MismatchLossDB(1), inf},
		{"ML(1.1)", MismatchLossDB(1.1), nan},
		{"ML(−0.5)", MismatchLossDB(-0.5), nan},
		{"|Γ|(VSWR 1)", GammaMagFromVSWR(1), 0},
		{"|Γ|(VSWR ∞)", GammaMagFromVSWR(inf), 1},
		{"|Γ|(VSWR 0.5)", GammaMagFromVSWR(0.5), nan},
		{"|Γ|(VSWR NaN)", GammaMagFromVSWR(nan), nan},
		{"|Γ|(RL ∞)", GammaMagFromReturnLossDB(inf), 0},
		{"|Γ|(RL −∞)", GammaMagFromReturnLossDB(math.Inf(-1)), 0},
		{"|Γ|(RL 0)", GammaMagFromReturnLossDB(0), 1},
		{"|Γ|(RL −6.0206)", GammaMagFromReturnLossDB(-20 * math.Log10(0.5)), 0.5},
		{"delivered(1)", PowerDeliveredFraction(1), 0},
		{"delivered(2)", PowerDeliveredFraction(2), -3},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			if math.IsNaN(tc.want) {
				if !math.IsNaN(tc.got) {
					t.Errorf("got %v, want NaN", tc.got)
				}
				return
			}
			if !closeF(tc.got, tc.want, 1e-12) {
				t.Errorf("got %v, want %v", tc.got, tc.want)
			}
		})
	}
}

// TestGammaChecks checks REFERENCE-CHECKS §3 N-1 … N-5 and §13 A-3.
func TestGammaChecks(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name           string
		z              complex128
		z0             float64
		mag, deg, vswr float64
		rl, ml         float64 // NaN: not given by the source
		tol            float64 // relative tolerance on mag, vswr, rl, ml; absolute on deg/100
	}{
		// N-1 (C): 75 + j40 in 50 Ω; z = 1.5 + j0.8.
		{"N-1", 75 + 40i, 50, 0.359406, 40.2499, 2.12210, 8.88829, 0.600680, 2e-6},
		// N-2 (V: URI ELE 541 answer; C values).
		{"N-2", 25 + 25i, 50, 0.447214, 116.5651, 2.618034, math.NaN(), math.NaN(), 2e-6},
		// N-3 (V: Georgia Tech ECE3025 tutorial; C values).
		{"N-3", 50 + 50i, 50, 0.447214, 63.4349, 2.618034, math.NaN(), math.NaN(), 2e-6},
		// N-4 (Ulaby Problem 2.19, C values; the book prints 0.57 ∠ −79.8°, S = 3.65).
		{"N-4", 30 - 50i, 50, 0.570826, -79.7960, 3.66012, math.NaN(), math.NaN(), 2e-6},
		// N-5 (Pozar Example 2.3, inputs from memory; C values).
		{"N-5", 40 + 70i, 100, 0.58902, 104.036, 3.8664, 4.5975, math.NaN(), 2e-5},
		// A-3 (C): half-wave dipole 73 + j42.5 Ω (Balanis) in 50 Ω and 75 Ω.
		{"A-3 dipole 50", 73 + 42.5i, 50, 0.3713, 42.52, 2.181, 8.60, math.NaN(), 2e-3},
		{"A-3 dipole 75", 73 + 42.5i, 75, 0.2763, 76.67, 1.764, math.NaN(), math.NaN(), 2e-3},
		// A-3 (C): quarter-wave monopole 36.5 + j21.25 Ω in 50 Ω.
		{"A-3 monopole 50", 36.5 + 21.25i, 50, 0.2826, 108.63, 1.788, 10.98, math.NaN(), 2e-3},
		// A-3 (C): shortened dipole, R = 73 Ω in 50 Ω: VSWR 1.460.
		{"A-3 resonant 73", 73, 50, 23.0 / 123, 0, 1.460, math.NaN(), math.NaN(), 1e-3},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			g := GammaFromZ(tc.z, complex(tc.z0, 0))
			m := cmplx.Abs(g)
			check := func(what string, got, want float64) {
				t.Helper()
				if !math.IsNaN(want) && math.Abs(got-want) > tc.tol*math.Abs(want) {
					t.Errorf("%s = %.7g, want %.7g", what, got, want)
				}
			}
			check("|Γ|", m, tc.mag)
			if d := AngleDeg(g); math.Abs(d-tc.deg) > 100*tc.tol {
				t.Errorf("∠Γ = %.6f°, want %.4f°", d, tc.deg)
			}
			check("VSWR", VSWR(m), tc.vswr)
			check("RL", ReturnLossDB(m), tc.rl)
			check("ML", MismatchLossDB(m), tc.ml)
		})
	}
	// N-1: the normalised impedance is 1.5 + j0.8.
	if z := Normalize(75+40i, 50); z != 1.5+0.8i {
		t.Errorf("Normalize(75 + j40, 50) = %v, want 1.5 + j0.8", z)
	}
	// N-1 (C): Γ = 0.274311 + j0.232221.
	if g := GammaFromZ(75+40i, 50); !closeC(g, 0.274311+0.232221i, 1e-6) {
		t.Errorf("N-1 Γ = %v", g)
	}
}

// TestGammaSpecialCases checks REFERENCE-CHECKS §3: Γ(Z0) = 0, Γ(0) = −1,
// Γ(∞) = +1, |Γ(jX)| = 1, and the admittance forms.
func TestGammaSpecialCases(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name string
		got  complex128
		want complex128
	}{
		{"Γ(Z0)", GammaFromZ(50, 50), 0},
		{"Γ(0)", GammaFromZ(0, 50), -1},
		{"Γ(∞)", GammaFromZ(cmplx.Inf(), 50), 1},
		{"Γ(∞) complex Z0", GammaFromZ(cmplx.Inf(), 30+20i), 1},
		// Power waves: the conjugate of Z0 is the match (Kurokawa 1965).
		{"Γ(Z0*) complex Z0", GammaFromZ(30-20i, 30+20i), 0},
		{"Z(1)", ZFromGamma(1, 50), cmplx.Inf()},
		{"Z(−1)", ZFromGamma(-1, 50), 0},
		{"Z(0) complex Z0", ZFromGamma(0, 30+20i), 30 - 20i},
		{"Γ(Y = 0)", GammaFromY(0, 50), 1},
		{"Γ(Y = ∞)", GammaFromY(cmplx.Inf(), 50), -1},
		{"Γ(Y = 1/Z0)", GammaFromY(0.02, 50), 0},
		// N-3 as an admittance: Y = 1/(50 + j50).
		{"Γ(Y) N-3", GammaFromY(1/(50+50i), 50), 0.2 + 0.4i},
		{"Y(−1)", YFromGamma(-1, 50), cmplx.Inf()},
		{"Y(1)", YFromGamma(1, 50), 0},
		{"Y(0.2 + j0.4)", YFromGamma(0.2+0.4i, 50), 1 / (50 + 50i)},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			if cmplx.IsInf(tc.want) {
				if !cmplx.IsInf(tc.got) {
					t.Errorf("got %v, want ∞", tc.got)
				}
				return
			}
			if !closeC(tc.got, tc.want, 1e-14) {
				t.Errorf("got %v, want %v", tc.got, tc.want)
			}
		})
	}
	for _, x := range []float64{-1e6, -50, -1, 1e-3, 7, 50, 1e6} {
		if m := cmplx.Abs(GammaFromZ(complex(0, x), 50)); math.Abs(m-1) > 1e-12 {
			t.Errorf("|Γ(j%g)| = %v, want 1", x, m)
		}
	}
}

// TestGammaRoundTrip checks Z → Γ → Z and Y → Γ → Y on random passive
// impedances and random (complex) references (REFERENCE-CHECKS §3).
func TestGammaRoundTrip(t *testing.T) {
	t.Parallel()
	rnd := rand.New(rand.NewPCG(1, 1))
	for range 1000 {
		z := complex(1000*rnd.Float64(), 2000*(rnd.Float64()-0.5))
		z0 := complex(10+190*rnd.Float64(), 100*(rnd.Float64()-0.5))
		g := GammaFromZ(z, z0)
		if z2 := ZFromGamma(g, z0); !closeC(z2, z, 1e-9) {
			t.Fatalf("Z(Γ(%v; %v)) = %v", z, z0, z2)
		}
		y := 1 / z
		if g2 := GammaFromY(y, z0); !closeC(g2, g, 1e-9) {
			t.Fatalf("Γ(Y) = %v, Γ(Z) = %v for Z = %v", g2, g, z)
		}
		if y2 := YFromGamma(g, z0); !closeC(y2, y, 1e-9) {
			t.Fatalf("Y(Γ) = %v, want %v", y2, y)
		}
	}
}

// TestEquivalents checks REFERENCE-CHECKS §9.
func TestEquivalents(t *testing.T) {
	t.Parallel()
	const w1e9 = 1e9 / (2 * math.Pi) // the frequency for ω = 1e9 rad/s
	tests := []struct {
		name string
		got  Equivalent
		want Equivalent
		tol  float64
	}{
		{"R-4 +31.4159265 Ω @ 100 MHz", SeriesEquivalent(complex(10, 31.4159265), 100e6), Equivalent{KindL, 50.000e-9}, 1e-8},
		{"R-4 −159.154943 Ω @ 100 MHz", SeriesEquivalent(complex(3, -159.154943), 100e6), Equivalent{KindC, 10.000e-12}, 1e-8},
		{"R-4 +50 Ω @ 100 MHz", SeriesEquivalent(50i, 100e6), Equivalent{KindL, 79.5775e-9}, 1e-6},
		{"R-4 −50 Ω @ 100 MHz", SeriesEquivalent(-50i, 100e6), Equivalent{KindC, 31.8310e-12}, 1e-5},
		{"R-4 +100 Ω @ ω = 1e9", SeriesEquivalent(100i, w1e9), Equivalent{KindL, 100e-9}, 1e-12},
		{"R-4 −100 Ω @ ω = 1e9", SeriesEquivalent(-100i, w1e9), Equivalent{KindC, 10e-12}, 1e-12},
		{"X = 0", SeriesEquivalent(50, 100e6), Equivalent{KindNone, 0}, 0},
		// Parallel model, by construction: Y = 1/50 − j/(ωL), L = 100 nH,
		// ω = 1e9 rad/s, so B = −0.01 S (arithmetic).
		{"parallel L", ParallelEquivalent(1/complex(0.02, -0.01), w1e9), Equivalent{KindL, 100e-9}, 1e-12},
		// Y = 1/50 + jωC, C = 10 pF at ω = 1e9: B = +0.01 S.
		{"parallel C", ParallelEquivalent(1/complex(0.02, 0.01), w1e9), Equivalent{KindC, 10e-12}, 1e-12},
		{"parallel B = 0", ParallelEquivalent(50, w1e9), Equivalent{KindNone, 0}, 0},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			if tc.got.Kind != tc.want.Kind || math.Abs(tc.got.Value-tc.want.Value) > tc.tol*tc.want.Value {
				t.Errorf("got %+v, want %+v", tc.got, tc.want)
			}
		})
	}
	// No element: an open has no series model (Z = ∞, either an infinite
	// L or a zero C), a short no parallel one; no frequency, no element.
	for _, e := range []Equivalent{ParallelEquivalent(0, 1e6), SeriesEquivalent(cmplx.Inf(), 1e6), SeriesEquivalent(1i, 0), SeriesEquivalent(1i, -1), ParallelEquivalent(1i, 0)} {
		if e.Kind != KindNone || !math.IsNaN(e.Value) {
			t.Errorf("undefined equivalent = %+v, want KindNone and NaN", e)
		}
	}
	// R-4 (C): 50 nH at 100 MHz is +31.4159265 Ω; 10 pF is −159.154943 Ω.
	if x := ReactanceOfL(50e-9, 100e6); math.Abs(x-31.4159265) > 1e-7 {
		t.Errorf("ReactanceOfL = %v", x)
	}
	if x := ReactanceOfC(10e-12, 100e6); math.Abs(x+159.154943) > 1e-6 {
		t.Errorf("ReactanceOfC = %v", x)
	}
	if x := ReactanceOfC(0, 100e6); !math.IsInf(x, -1) {
		t.Errorf("ReactanceOfC(0) = %v, want −Inf", x)
	}
}

// TestQ checks REFERENCE-CHECKS §9 R-5 and the documented special cases.
func TestQ(t *testing.T) {
	t.Parallel()
	tests := []struct {
		z    complex128
		want float64
	}{
		{2 + 100i, 50}, // R-5 (C)
		{2 - 100i, 50},
		{50, 0},
		{100i, math.Inf(1)},
		{0, math.Inf(1)},
		{-5 + 1i, math.Inf(1)},
	}
	for _, tc := range tests {
		if got := Q(tc.z); !closeF(got, tc.want, 1e-15) {
			t.Errorf("Q(%v) = %v, want %v", tc.z, got, tc.want)
		}
	}
	if q := Q(complex(math.NaN(), 1)); !math.IsNaN(q) {
		t.Errorf("Q(NaN) = %v, want NaN", q)
	}
}
