package rfmath

import (
	"math"
	"math/cmplx"
	"testing"
)

// REFERENCE-CHECKS N-1 (C, arithmetic; common practice): Z = 75 + j40 Ω in
// 50 Ω gives Γ = 0.359406 ∠ 40.2499°, VSWR 2.12210, RL 8.88829 dB,
// ML 0.600680 dB. At 1 GHz, X = +40 Ω is L = 40/(2π·1e9) = 6.3662 nH (R-4's
// rule), and Q = 40/75 = 0.53333.
func TestNewReadoutN1(t *testing.T) {
	t.Parallel()
	g := GammaFromZ(75+40i, 50)
	r := NewReadout(1e9, g, 50)
	checks := []struct {
		name      string
		got, want float64
		tol       float64
	}{
		{"R", real(r.Z), 75, 1e-9},
		{"X", imag(r.Z), 40, 1e-9},
		{"|Γ|", r.GammaMag, 0.359406, 1e-6},
		{"∠Γ", r.GammaDeg, 40.2499, 1e-4},
		{"VSWR", r.VSWR, 2.12210, 1e-5},
		{"RL", r.ReturnLossDB, 8.88829, 1e-5},
		{"ML", r.MismatchLossDB, 0.600680, 1e-6},
		{"Q", r.Q, 40.0 / 75, 1e-12},
		{"L", r.Equiv.Value, 6.3662e-9, 1e-13},
		{"G", real(r.Y), real(1 / (75 + 40i)), 1e-12},
	}
	for _, c := range checks {
		if math.Abs(c.got-c.want) > c.tol {
			t.Errorf("%s = %.8g, want %.8g", c.name, c.got, c.want)
		}
	}
	if r.Equiv.Kind != "L" || len(r.Warnings) != 0 {
		t.Errorf("equivalent kind %q, warnings %v", r.Equiv.Kind, r.Warnings)
	}
}

// Edge cases (REFERENCE-CHECKS §2): a perfect match has infinite return
// loss and VSWR 1; an open (Γ = 1) has infinite VSWR and Z; |Γ| > 1 from
// active or noisy data is flagged.
func TestNewReadoutEdges(t *testing.T) {
	t.Parallel()
	m := NewReadout(1e9, 0, 50)
	if !math.IsInf(m.ReturnLossDB, 1) || m.VSWR != 1 || m.MismatchLossDB != 0 || m.Q != 0 {
		t.Errorf("match: RL %g, VSWR %g, ML %g, Q %g", m.ReturnLossDB, m.VSWR, m.MismatchLossDB, m.Q)
	}
	o := NewReadout(1e9, 1, 50)
	if !math.IsInf(o.VSWR, 1) || !cmplx.IsInf(o.Z) || !math.IsInf(o.Q, 1) {
		t.Errorf("open: VSWR %g, Z %v, Q %g", o.VSWR, o.Z, o.Q)
	}
	a := NewReadout(1e9, 1.2, 50)
	if len(a.Warnings) == 0 || a.ReturnLossDB >= 0 {
		t.Errorf("|Γ| = 1.2: warnings %v, RL %g", a.Warnings, a.ReturnLossDB)
	}
}
