package deembed

import (
	"errors"
	"math"
	"math/cmplx"
	"math/rand/v2"
	"testing"

	"matchbench/rfmath"
)

// TestRenormalizeReferenceChecks checks the rows of REFERENCE-CHECKS §11
// (values C) on one-point sweeps.
func TestRenormalizeReferenceChecks(t *testing.T) {
	t.Parallel()
	third := complex(1.0/3, 0)
	tests := []struct {
		name string
		s    []complex128 // in 50 Ω
		want []complex128 // in 75 Ω
		tol  float64
	}{
		{"75 Ω load", []complex128{0.2}, []complex128{0}, 1e-15},
		{"100 Ω load", []complex128{third}, []complex128{25.0 / 175}, 1e-15},
		{"series 50 Ω", []complex128{third, 2 * third, 2 * third, third}, []complex128{0.25, 0.75, 0.75, 0.25}, 1e-15},
		{"shunt 50 Ω", []complex128{-third, 2 * third, 2 * third, -third}, []complex128{-0.428571, 0.571429, 0.571429, -0.428571}, 1e-6},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			ports := 1
			if len(tc.s) == 4 {
				ports = 2
			}
			s := rfmath.NewSweep(1, ports, 50)
			s.FreqHz[0] = 1e9
			copy(s.Data, tc.s)
			got, err := RenormalizeAll(s, 75)
			if err != nil {
				t.Fatal(err)
			}
			for i := range tc.want {
				if !closeC(got.Data[i], tc.want[i], tc.tol) {
					t.Errorf("S[%d] = %v, want %v", i, got.Data[i], tc.want[i])
				}
			}
			for _, z := range got.Z0 {
				if z != 75 {
					t.Errorf("Z0 = %v", got.Z0)
				}
			}
			if s.Z0[0] != 50 || s.Data[0] != tc.s[0] {
				t.Error("input modified")
			}
		})
	}
}

// TestRenormalizeRoundTrip: 50 → 75 → 50 Ω is the identity (§11 property),
// reciprocity survives, and a mixed reference per port goes there and back.
func TestRenormalizeRoundTrip(t *testing.T) {
	t.Parallel()
	rnd := rand.New(rand.NewPCG(11, 12))
	s := rfmath.NewSweep(100, 2, 50)
	for k := range 100 {
		s.FreqHz[k] = 1e6 * float64(k+1)
		a, b, c := randomC(rnd, 0.5), randomC(rnd, 0.5), randomC(rnd, 0.5)
		copy(s.Matrix(k), []complex128{a, b, b, c})
	}
	for _, to := range [][]float64{{75, 75}, {75, 25}, {1e-3, 1e4}} {
		mid, err := Renormalize(s, to)
		if err != nil {
			t.Fatal(err)
		}
		back, err := Renormalize(mid, []float64{50, 50})
		if err != nil {
			t.Fatal(err)
		}
		for n := range s.Data {
			if !closeC(back.Data[n], s.Data[n], 1e-9) {
				t.Fatalf("to %v and back: %v, want %v", to, back.Data[n], s.Data[n])
			}
		}
		for k := range 100 {
			m := mid.Matrix(k)
			if !closeC(m[1], m[2], 1e-12) {
				t.Fatalf("reciprocity lost in %v: %v", to, m)
			}
		}
	}
	if _, err := RenormalizeAll(s, -5); !errors.Is(err, rfmath.ErrReference) {
		t.Errorf("err = %v, want rfmath.ErrReference", err)
	}
	if !panics(func() { Renormalize(s, []float64{50}) }) {
		t.Error("one reference for two ports did not panic")
	}
}

// TestComplexRef checks the power-wave reflection against hand-computed
// values and against the available-power fraction 4·Rs·RL/|Zs + ZL|², a
// formula independent of Γ (Kurokawa 1965; common practice for the
// maximum-power-transfer theorem).
func TestComplexRef(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name string
		z    complex128 // load in ohms
		zs   complex128
		want complex128
	}{
		// (50 − (25 − j25))/(50 + 25 + j25) = (25 + j25)/(75 + j25)
		// = (25 + j25)(75 − j25)/6250 = (2500 + j1250)/6250 = 0.4 + j0.2.
		{"50 Ω from 25 + j25", 50, complex(25, 25), complex(0.4, 0.2)},
		{"conjugate match", complex(30, -40), complex(30, 40), 0},
		// (30 − j40 − 30 + j40)… and the load not conjugate:
		// (30 + j40 − 30 + j40)/(60 + j80) = j80/(60 + j80) = 0.64 + j0.48.
		{"same, not conjugate", complex(30, 40), complex(30, 40), complex(0.64, 0.48)},
		{"open", cmplx.Inf(), complex(12, -7), 1},
		{"short", 0, complex(30, 40), complex(-30, 40) / complex(30, 40)},
		{"real reference", 100, 75, complex(25.0/175, 0)},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			g := []complex128{rfmath.GammaFromZ(tc.z, 50)}
			got, err := ComplexRefTo(nil, g, 50, tc.zs)
			if err != nil {
				t.Fatal(err)
			}
			if !closeC(got[0], tc.want, 1e-12) {
				t.Errorf("Γ' = %v, want %v", got[0], tc.want)
			}
			if cmplx.IsInf(tc.z) {
				return
			}
			pa := 4 * real(tc.zs) * real(tc.z) / math.Pow(cmplx.Abs(tc.zs+tc.z), 2)
			if p := 1 - math.Pow(cmplx.Abs(got[0]), 2); math.Abs(p-pa) > 1e-12 {
				t.Errorf("1 − |Γ'|² = %v, available-power fraction %v", p, pa)
			}
		})
	}
	// In place, and a bad reference.
	g := []complex128{0.2, -0.5}
	if _, err := ComplexRefTo(g, g, 50, 75); err != nil || !closeC(g[0], 0, 1e-15) {
		t.Errorf("in place: %v, %v", g, err)
	}
	for _, zs := range []complex128{complex(0, 50), complex(-1, 0), cmplx.Inf(), complex(50, math.NaN())} {
		if _, err := ComplexRefTo(nil, g, 50, zs); !errors.Is(err, ErrReference) {
			t.Errorf("Zs %v: err = %v, want ErrReference", zs, err)
		}
	}
	if _, err := ComplexRefTo(nil, g, 0, 50); !errors.Is(err, ErrReference) {
		t.Errorf("Z0 0: err = %v", err)
	}
	if !panics(func() { ComplexRefTo(make([]complex128, 1), g, 50, 50) }) {
		t.Error("short dst did not panic")
	}
}
