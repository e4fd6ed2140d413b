package rfmath

import (
	"fmt"
	"math"
	"math/cmplx"
	"testing"

	"pgregory.net/rapid"
)

// TestPropPassiveGamma: a passive load (Re Z ≥ 0) against a reference with
// Re Z0 > 0 has |Γ| ≤ 1, since |Z − Z0*|² − |Z + Z0|² = −4·Re Z·Re Z0
// (power waves, Kurokawa 1965).
func TestPropPassiveGamma(t *testing.T) {
	t.Parallel()
	rapid.Check(t, func(t *rapid.T) {
		z := complex(rapid.Float64Range(0, 1e6).Draw(t, "R"), rapid.Float64Range(-1e6, 1e6).Draw(t, "X"))
		z0 := complex(rapid.Float64Range(1e-3, 1e4).Draw(t, "R0"), rapid.Float64Range(-1e3, 1e3).Draw(t, "X0"))
		if m := cmplx.Abs(GammaFromZ(z, z0)); m > 1+1e-12 {
			t.Fatalf("|Γ(%v; %v)| = %v > 1", z, z0, m)
		}
		if m := cmplx.Abs(GammaFromY(1/z, z0)); z != 0 && m > 1+1e-12 {
			t.Fatalf("|Γ(Y = 1/%v; %v)| = %v > 1", z, z0, m)
		}
	})
}

// drawLosslessElement draws a lossless reciprocal element with reactances
// between 1 Ω and 1 kΩ at fHz.
func drawLosslessElement(t *rapid.T, fHz float64, i int) Element {
	w := 2 * math.Pi * fHz
	x := rapid.Float64Range(1, 1000).Draw(t, fmt.Sprintf("x%d", i))
	switch rapid.IntRange(0, 7).Draw(t, fmt.Sprintf("kind%d", i)) {
	case 0:
		return SeriesL{LH: x / w}
	case 1:
		return SeriesC{CF: 1 / (w * x)}
	case 2:
		return ShuntL{LH: x / w}
	case 3:
		return ShuntC{CF: 1 / (w * x)}
	case 4:
		return LineFromDegrees(x/5+5, rapid.Float64Range(1, 179).Draw(t, fmt.Sprintf("deg%d", i)), fHz, 0.7)
	case 5:
		return ShuntStub{Line: LineFromDegrees(x/5+5, rapid.Float64Range(5, 85).Draw(t, fmt.Sprintf("deg%d", i)), fHz, 0.7), Open: rapid.Bool().Draw(t, fmt.Sprintf("open%d", i))}
	case 6:
		return Transformer{Ratio: rapid.Float64Range(0.2, 5).Draw(t, fmt.Sprintf("n%d", i))}
	default:
		return Series{Part: capPart(1 / (w * x))}
	}
}

// TestPropLosslessUnitary: a lossless reciprocal two-port has a unitary,
// symmetric S-matrix in any pair of real references, S†·S = I (Pozar
// Section 4.3, from memory).
func TestPropLosslessUnitary(t *testing.T) {
	t.Parallel()
	rapid.Check(t, func(t *rapid.T) {
		f := rapid.Float64Range(1e6, 1e10).Draw(t, "f")
		n := rapid.IntRange(1, 5).Draw(t, "n")
		var l Ladder
		for i := range n {
			l = append(l, drawLosslessElement(t, f, i))
		}
		z01 := rapid.Float64Range(5, 200).Draw(t, "z01")
		z02 := rapid.Float64Range(5, 200).Draw(t, "z02")
		m := l.ABCD(f)
		// Tolerances scale with the size of the ABCD entries: AD − BC of
		// entries of size N loses about N²·ε to rounding.
		var norm float64
		for _, v := range m {
			norm = math.Max(norm, cmplx.Abs(v))
		}
		if d := m.Det(); !closeC(d, 1, 1e-12*math.Max(1e3, norm*norm)) {
			t.Fatalf("Det = %v, want 1 (entries up to %g)", d, norm)
		}
		s := ABCDToS(m, z01, z02)
		// S†S − I.
		tol := 1e-12 * math.Max(1, norm*norm) * math.Max(z01/z02, z02/z01)
		for i := range 2 {
			for j := range 2 {
				v := cmplx.Conj(s[i])*s[j] + cmplx.Conj(s[i+2])*s[j+2]
				if i == j {
					v--
				}
				if cmplx.Abs(v) > tol {
					t.Fatalf("(S†S − I)[%d,%d] = %v (tol %g), S = %v", i, j, v, tol, s)
				}
			}
		}
		if cmplx.Abs(s[1]-s[2]) > tol {
			t.Fatalf("S12 = %v, S21 = %v", s[1], s[2])
		}
	})
}

// TestPropRenormalizeIdentity: renormalising 50 → 75 → 50 Ω is the
// identity, and a reciprocal S stays reciprocal (REFERENCE-CHECKS §11
// property tests).
func TestPropRenormalizeIdentity(t *testing.T) {
	t.Parallel()
	rapid.Check(t, func(t *rapid.T) {
		n := rapid.IntRange(1, 4).Draw(t, "n")
		s := make([]complex128, n*n)
		r := 0.9 / float64(n)
		for i := range n {
			for j := i; j < n; j++ {
				v := complex(rapid.Float64Range(-r, r).Draw(t, "re"), rapid.Float64Range(-r, r).Draw(t, "im"))
				s[i*n+j], s[j*n+i] = v, v
			}
		}
		r50, r75 := make([]float64, n), make([]float64, n)
		for i := range n {
			r50[i], r75[i] = 50, 75
		}
		s75, err := Renormalize(nil, s, n, r50, r75)
		if err != nil {
			t.Fatal(err)
		}
		for i := range n {
			for j := range n {
				if cmplx.Abs(s75[i*n+j]-s75[j*n+i]) > 1e-12 {
					t.Fatalf("not reciprocal in 75 Ω: %v", s75)
				}
			}
		}
		back, err := Renormalize(nil, s75, n, r75, r50)
		if err != nil {
			t.Fatal(err)
		}
		for k := range s {
			if cmplx.Abs(back[k]-s[k]) > 1e-12 {
				t.Fatalf("50 → 75 → 50: %v, want %v", back, s)
			}
		}
	})
}

// TestPropLineKeepsMagnitude: a lossless line of the reference impedance
// only rotates Γ: |Γin| = |ΓL| and ∠Γin = ∠ΓL − 2βl (REFERENCE-CHECKS §3
// N-5, §10).
func TestPropLineKeepsMagnitude(t *testing.T) {
	t.Parallel()
	rapid.Check(t, func(t *rapid.T) {
		gl := cmplx.Rect(rapid.Float64Range(0, 1).Draw(t, "|Γ|"), rapid.Float64Range(-math.Pi, math.Pi).Draw(t, "∠Γ"))
		deg := rapid.Float64Range(0, 720).Draw(t, "deg")
		l := LineFromDegrees(50, deg, 1e9, 0.66)
		got := l.ABCD(1e9).InputGamma(gl, 50)
		want := gl * cmplx.Rect(1, -2*deg*math.Pi/180)
		if cmplx.Abs(got-want) > 1e-12 {
			t.Fatalf("Γin = %v, want %v", got, want)
		}
	})
}
