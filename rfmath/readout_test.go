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

// TestNewReadoutZeros checks the figures that are exactly zero at the
// edges of the chart: RL = −20·log10|Γ| is 0 at |Γ| = 1 and ML is 0 at
// Γ = 0 (the definitions, REFERENCE-CHECKS §2), and they must be +0, so that
// they print as 0.00 and not −0.00; a negative real Γ lies at 180°, the
// (−180°, 180°] convention, whatever the sign of its zero imaginary part.
// X = 0 needs no element (KindNone, 0); an open has no series model
// (KindNone, NaN).
func TestNewReadoutZeros(t *testing.T) {
	t.Parallel()
	for _, g := range []complex128{1, -1, 1i, -1i, complex(-1, math.Copysign(0, -1))} {
		r := NewReadout(1e9, g, 50)
		if r.ReturnLossDB != 0 || math.Signbit(r.ReturnLossDB) {
			t.Errorf("Γ = %v: RL %g (sign bit %v), want +0", g, r.ReturnLossDB, math.Signbit(r.ReturnLossDB))
		}
	}
	if m := NewReadout(1e9, 0, 50); m.MismatchLossDB != 0 || math.Signbit(m.MismatchLossDB) {
		t.Errorf("Γ = 0: ML %g, want +0", m.MismatchLossDB)
	}
	if d := NewReadout(1e9, complex(-0.5, math.Copysign(0, -1)), 50).GammaDeg; d != 180 {
		t.Errorf("Γ = −0.5 − j0: angle %g°, want 180°", d)
	}
	if e := NewReadout(1e9, 0, 50).Equiv; e.Kind != KindNone || e.Value != 0 {
		t.Errorf("Γ = 0 (Z = 50 Ω): equivalent %+v, want none, 0", e)
	}
	if e := NewReadout(1e9, 1, 50).Equiv; e.Kind != KindNone || !math.IsNaN(e.Value) {
		t.Errorf("open: equivalent %+v, want none, NaN", e)
	}
}
