package rfmath

import (
	"errors"
	"math/cmplx"
	"testing"
)

func TestRenormalizeSeriesShunt(t *testing.T) {
	t.Parallel()
	const tol = 1e-12
	tests := []struct {
		name     string
		s        []complex128
		from, to []float64
		want     []complex128
	}{
		// REFERENCE-CHECKS §11 (C): series 50 Ω resistor, 50 Ω → 75 Ω.
		{"series 50 Ω to 75 Ω", []complex128{1.0 / 3, 2.0 / 3, 2.0 / 3, 1.0 / 3}, []float64{50, 50}, []float64{75, 75}, []complex128{0.25, 0.75, 0.75, 0.25}},
		// REFERENCE-CHECKS §11 (C): shunt 50 Ω resistor, 50 Ω → 75 Ω.
		{"shunt 50 Ω to 75 Ω", []complex128{-1.0 / 3, 2.0 / 3, 2.0 / 3, -1.0 / 3}, []float64{50, 50}, []float64{75, 75}, []complex128{-0.428571428571428571, 0.571428571428571429, 0.571428571428571429, -0.428571428571428571}},
		// REFERENCE-CHECKS §11 (C): 75 Ω load, Γ = 0.2 in 50 Ω is 0 in 75 Ω.
		{"75 Ω load", []complex128{0.2}, []float64{50}, []float64{75}, []complex128{0}},
		// REFERENCE-CHECKS §11 (C): 100 Ω load, Γ = 1/3 in 50 Ω is 25/175 in 75 Ω.
		{"100 Ω load", []complex128{1.0 / 3}, []float64{50}, []float64{75}, []complex128{25.0 / 175}},
		// An open stays an open in any reference (Γ = 1), where the route
		// through Z would fail.
		{"open", []complex128{1}, []float64{50}, []float64{75}, []complex128{1}},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			got, err := Renormalize(nil, tc.s, len(tc.from), tc.from, tc.to)
			if err != nil {
				t.Fatal(err)
			}
			for k := range got {
				if cmplx.Abs(got[k]-tc.want[k]) > tol {
					t.Errorf("S[%d] = %v, want %v", k, got[k], tc.want[k])
				}
			}
		})
	}
}

func TestSToZOpenIsSingular(t *testing.T) {
	t.Parallel()
	_, err := SToZ(nil, []complex128{1}, 1, []float64{50})
	if !errors.Is(err, ErrSingular) {
		t.Fatalf("err = %v, want ErrSingular", err)
	}
	z, err := SToZ(nil, []complex128{0.2}, 1, []float64{50})
	if err != nil || cmplx.Abs(z[0]-75) > 1e-12 {
		t.Fatalf("SToZ(0.2) = %v, %v; want 75 Ω (REFERENCE-CHECKS §1 TS-4)", z, err)
	}
}
