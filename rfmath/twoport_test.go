package rfmath

import (
	"fmt"
	"math"
	"math/cmplx"
	"math/rand/v2"
	"testing"
)

// TestABCDToSReferenceChecks checks REFERENCE-CHECKS §11: resistors and the
// T pad as two-ports, in 50 Ω and 75 Ω.
func TestABCDToSReferenceChecks(t *testing.T) {
	t.Parallel()
	tpad := func(r1, r2 float64) ABCD {
		return SeriesZ(complex(r1, 0)).Mul(ShuntY(complex(1/r2, 0))).Mul(SeriesZ(complex(r1, 0)))
	}
	tests := []struct {
		name     string
		a        ABCD
		z01, z02 float64
		want     [4]complex128
		tol      float64
	}{
		{"series 50 Ω in 50 Ω", SeriesZ(50), 50, 50, [4]complex128{1.0 / 3, 2.0 / 3, 2.0 / 3, 1.0 / 3}, 1e-14},
		{"series 50 Ω in 75 Ω", SeriesZ(50), 75, 75, [4]complex128{0.25, 0.75, 0.75, 0.25}, 1e-14},
		{"shunt 50 Ω in 50 Ω", ShuntY(0.02), 50, 50, [4]complex128{-1.0 / 3, 2.0 / 3, 2.0 / 3, -1.0 / 3}, 1e-14},
		// §11 prints −0.428571 and 0.571429, that is −3/7 and 4/7.
		{"shunt 50 Ω in 75 Ω", ShuntY(0.02), 75, 75, [4]complex128{-3.0 / 7, 4.0 / 7, 4.0 / 7, -3.0 / 7}, 1e-14},
		// Pozar Example 4.4 (number and values from memory), C values:
		// S11 = 4.4e-5 ≈ 0, S21 = 0.70769.
		{"Pozar 4.4 T pad", tpad(8.56, 141.8), 50, 50, [4]complex128{4.4e-5, 0.70769, 0.70769, 4.4e-5}, 1e-5},
		// The exact 3 dB T pad (C): S11 = 0, S21 = 10^(−3/20).
		{"exact 3 dB T pad", tpad(8.54987, 141.926), 50, 50, [4]complex128{0, complex(math.Pow(10, -3.0/20), 0), complex(math.Pow(10, -3.0/20), 0), 0}, 2e-6},
		// Series 50 Ω between 50 Ω and 75 Ω ports (circuit arithmetic, see
		// TestRenormalizeReferenceChecks).
		{"series 50 Ω, 50/75 Ω", SeriesZ(50), 50, 75, [4]complex128{3.0 / 7, complex(2*math.Sqrt(3750)/175, 0), complex(2*math.Sqrt(3750)/175, 0), 1.0 / 7}, 1e-14},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			got := ABCDToS(tc.a, tc.z01, tc.z02)
			checkMatrix(t, "S", got[:], tc.want[:], tc.tol)
			back := SToABCD(got, tc.z01, tc.z02)
			checkMatrix(t, "ABCD", back[:], tc.a[:], 1e-12)
		})
	}
	// Pozar 4.4 T pad: S21 = −3.0031 dB (C).
	s := ABCDToS(tpad(8.56, 141.8), 50, 50)
	if db := 20 * math.Log10(cmplx.Abs(s[2])); math.Abs(db+3.0031) > 1e-4 {
		t.Errorf("T pad S21 = %.5f dB, want −3.0031", db)
	}
}

// TestTwoPortAgainstNPort compares the two-port formulas with the general
// N-port conversions of nport.go for random passive networks and unequal
// port references.
func TestTwoPortAgainstNPort(t *testing.T) {
	t.Parallel()
	rnd := rand.New(rand.NewPCG(1, 1))
	for i := range 200 {
		refs := randRefs(rnd, 2)
		s := randPassiveS(rnd, 2)
		var s4 [4]complex128
		copy(s4[:], s)
		a := SToABCD(s4, refs[0], refs[1])
		// S → ABCD → S.
		back := ABCDToS(a, refs[0], refs[1])
		checkMatrix(t, fmt.Sprintf("%d S→ABCD→S", i), back[:], s, 1e-9)
		// ABCD → Z against SToZ.
		z, err := SToZ(nil, s, 2, refs)
		if err != nil {
			t.Fatal(err)
		}
		zz := ABCDToZ(a)
		checkMatrix(t, fmt.Sprintf("%d Z", i), zz[:], z, 1e-9)
		az := ZToABCD(zz)
		checkMatrix(t, fmt.Sprintf("%d Z→ABCD", i), az[:], a[:], 1e-9)
		// ABCD → Y against SToY.
		y, err := SToY(nil, s, 2, refs)
		if err != nil {
			t.Fatal(err)
		}
		yy := ABCDToY(a)
		checkMatrix(t, fmt.Sprintf("%d Y", i), yy[:], y, 1e-9)
		ay := YToABCD(yy)
		checkMatrix(t, fmt.Sprintf("%d Y→ABCD", i), ay[:], a[:], 1e-9)
		// Equal references: ABCDToS against renormalising from the other
		// reference.
		s2 := ABCDToS(a, 75, 75)
		want, err := Renormalize(nil, s, 2, refs, []float64{75, 75})
		if err != nil {
			t.Fatal(err)
		}
		checkMatrix(t, fmt.Sprintf("%d renormalised", i), s2[:], want, 1e-9)
	}
}

// TestCascadeS checks the star product against the ABCD product, and its
// behaviour when a network transmits nothing.
func TestCascadeS(t *testing.T) {
	t.Parallel()
	rnd := rand.New(rand.NewPCG(1, 1))
	for i := range 200 {
		var a, b [4]complex128
		copy(a[:], randPassiveS(rnd, 2))
		copy(b[:], randPassiveS(rnd, 2))
		got := CascadeS(a, b, 50)
		want := ABCDToS(SToABCD(a, 50, 50).Mul(SToABCD(b, 50, 50)), 50, 50)
		checkMatrix(t, fmt.Sprintf("%d cascade", i), got[:], want[:], 1e-9)
	}
	// A 3 dB pad then a short circuit plug with no transmission
	// (b = [−1, 0, 0, 0]): S11 = −S21² of the matched pad = −10^(−6/20).
	pad := ABCDToS(SeriesZ(8.54987).Mul(ShuntY(1/141.926)).Mul(SeriesZ(8.54987)), 50, 50)
	got := CascadeS(pad, [4]complex128{-1, 0, 0, 0}, 50)
	if !closeC(got[0], complex(-math.Pow(10, -6.0/20), 0), 1e-5) || got[2] != 0 || got[1] != 0 {
		t.Errorf("pad + short = %v, want S11 = −0.501187, S21 = S12 = 0", got)
	}
}

func TestABCDMethods(t *testing.T) {
	t.Parallel()
	// A reciprocal two-port has AD − BC = 1 (Pozar Section 4.4, from memory).
	a := SeriesZ(10 + 20i).Mul(ShuntY(0.01 - 0.02i)).Mul(Line{Z0Ohm: 75, LengthM: 0.3}.ABCD(100e6))
	if d := a.Det(); !closeC(d, 1, 1e-12) {
		t.Errorf("Det = %v, want 1", d)
	}
	// The thru leaves everything as it is.
	if m := Thru.Mul(a); m != a {
		t.Errorf("Thru·a = %v, want %v", m, a)
	}
	// Series 50 Ω into a 50 Ω load: 100 Ω; into an open: an open.
	if z := SeriesZ(50).InputImpedance(50); z != 100 {
		t.Errorf("Zin = %v, want 100", z)
	}
	if z := SeriesZ(50).InputImpedance(cmplx.Inf()); !cmplx.IsInf(z) {
		t.Errorf("series 50 Ω into open = %v, want ∞", z)
	}
	// Shunt 50 Ω with an open load: 50 Ω.
	if z := ShuntY(0.02).InputImpedance(cmplx.Inf()); z != 50 {
		t.Errorf("shunt 50 Ω into open = %v, want 50", z)
	}
	// InputGamma equals GammaFromZ(InputImpedance(ZL)) for random loads.
	rnd := rand.New(rand.NewPCG(1, 1))
	for range 200 {
		gl := randComplex(rnd, 0.7)
		zl := ZFromGamma(gl, 50)
		want := GammaFromZ(a.InputImpedance(zl), 50)
		if got := a.InputGamma(gl, 50); !closeC(got, want, 1e-9) {
			t.Fatalf("InputGamma(%v) = %v, want %v", gl, got, want)
		}
	}
	// An open load (Γ = 1) gives (A − C·z0)/(A + C·z0) without infinities:
	// a shunt 50 Ω across an open is 50 Ω, Γ = 0 in 50 Ω.
	if g := ShuntY(0.02).InputGamma(1, 50); g != 0 {
		t.Errorf("shunt 50 Ω + open: Γ = %v, want 0", g)
	}
	// Ideal transformer 2:1 shows 50 Ω as 200 Ω.
	if z := IdealTransformer(2).InputImpedance(50); !closeC(z, 200, 1e-15) {
		t.Errorf("transformer Zin = %v, want 200", z)
	}
}
