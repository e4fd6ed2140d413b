package rfmath

import (
	"fmt"
	"math"
	"math/cmplx"
	"math/rand/v2"
	"testing"
)

// TestLineInputImpedance checks REFERENCE-CHECKS §4 (C, tolerance 1e-9
// relative) and N-5.
func TestLineInputImpedance(t *testing.T) {
	t.Parallel()
	const (
		eighth  = math.Pi / 4 // βl of λ/8
		quarter = math.Pi / 2
		half    = math.Pi
	)
	tests := []struct {
		name string
		zl   complex128
		z0   complex128
		bl   float64
		want complex128
		tol  float64
	}{
		{"100 Ω, λ/8", 100, 50, eighth, 40 - 30i, 1e-9},
		{"100 Ω, λ/4", 100, 50, quarter, 25, 1e-9},
		{"short, λ/8", 0, 50, eighth, 50i, 1e-9},
		{"open, λ/8", cmplx.Inf(), 50, eighth, -50i, 1e-9},
		{"25 + j25, λ/4", 25 + 25i, 50, quarter, 50 - 50i, 1e-9},
		{"λ/2, 100 Ω", 100, 50, half, 100, 1e-9},
		{"λ/2, 25 + j25", 25 + 25i, 50, half, 25 + 25i, 1e-9},
		{"λ/2, 3 − j400", 3 - 400i, 75, half, 3 - 400i, 1e-9},
		// N-5 / §4 (C): Pozar Example 2.3 (inputs from memory).
		{"N-5 0.3λ", 40 + 70i, 100, 0.3 * 2 * math.Pi, 36.534 - 61.119i, 2e-5},
		// §5 Q-1 (C): 100 Ω through a 70.7107 Ω λ/4 section is 50 Ω.
		{"Q-1 λ/4", 100, complex(math.Sqrt(5000), 0), quarter, 50, 1e-9},
		// §5 Q-3 (C): 300 Ω through 150 Ω λ/4 is 75 Ω.
		{"Q-3 300→75", 300, 150, quarter, 75, 1e-9},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			got := LineInputImpedance(tc.zl, tc.z0, tc.bl)
			if !closeC(got, tc.want, tc.tol) {
				t.Errorf("Zin = %v, want %v", got, tc.want)
			}
			// The same through Line.ABCD (lossless, VF 1): l = βl·c/(2πf).
			const f = 1e8
			l := Line{Z0Ohm: real(tc.z0), LengthM: tc.bl * SpeedOfLight / (2 * math.Pi * f)}
			if imag(tc.z0) == 0 {
				if got := l.InputImpedance(tc.zl, f); !closeC(got, tc.want, tc.tol) {
					t.Errorf("Line.InputImpedance = %v, want %v", got, tc.want)
				}
			}
		})
	}
	// A short at λ/4 is an open: |Zin| is huge (cos(π/2) is 6e-17, not 0).
	if z := LineInputImpedance(0, 50, math.Pi/2); cmplx.Abs(z) < 1e15 {
		t.Errorf("short at λ/4: Zin = %v, want ≥ 1e15 Ω", z)
	}
	// An exact zero denominator: open at βl = 0.
	if z := LineInputImpedance(cmplx.Inf(), 50, 0); !cmplx.IsInf(z) {
		t.Errorf("open at βl = 0: Zin = %v, want ∞", z)
	}
	// N-5 (C): Γin = 0.58902 ∠ −111.964°: the load's Γ rotated by −2βl.
	zin := LineInputImpedance(40+70i, 100, 0.3*2*math.Pi)
	gin := GammaFromZ(zin, 100)
	if math.Abs(cmplx.Abs(gin)-0.58902) > 1e-5 || math.Abs(AngleDeg(gin)+111.964) > 1e-3 {
		t.Errorf("N-5 Γin = %.5f ∠ %.3f°", cmplx.Abs(gin), AngleDeg(gin))
	}
}

// TestLossyLineInputImpedance compares with the textbook tanh form
// computed here independently with cmplx.Tanh (Pozar Section 2.7, from
// memory).
func TestLossyLineInputImpedance(t *testing.T) {
	t.Parallel()
	rnd := rand.New(rand.NewPCG(1, 1))
	for range 500 {
		zl := complex(200*rnd.Float64(), 400*(rnd.Float64()-0.5))
		z0 := complex(20+100*rnd.Float64(), 0)
		al := 2 * rnd.Float64()
		bl := 10 * rnd.Float64()
		th := cmplx.Tanh(complex(al, bl))
		want := z0 * (zl + z0*th) / (z0 + zl*th)
		if got := LossyLineInputImpedance(zl, z0, al, bl); !closeC(got, want, 1e-9) {
			t.Fatalf("Zin(%v, %v, %v, %v) = %v, want %v", zl, z0, al, bl, got, want)
		}
	}
	// A long lossy line looks like Z0 whatever the load.
	if z := LossyLineInputImpedance(cmplx.Inf(), 50, 20, 1); !closeC(z, 50, 1e-12) {
		t.Errorf("long lossy line: Zin = %v, want 50", z)
	}
}

// TestPortExtension checks REFERENCE-CHECKS §10: a matched line of delay
// τ rotates S11 by −2ωτ and S21 by −ωτ; its one-way loss A dB scales them by
// 10^(−2A/20) and 10^(−A/20).
func TestPortExtension(t *testing.T) {
	t.Parallel()
	const tau = 0.1e-9
	l := Line{Z0Ohm: 50, LengthM: tau * SpeedOfLight}
	if d := l.DelayS(); math.Abs(d-tau) > 1e-22 {
		t.Errorf("DelayS = %v, want %v", d, tau)
	}
	// An open behind 0.1 ns reads 1 ∠ −72° at 1 GHz.
	g := l.ABCD(1e9).InputGamma(1, 50)
	if math.Abs(cmplx.Abs(g)-1) > 1e-12 || math.Abs(AngleDeg(g)+72) > 1e-9 {
		t.Errorf("open behind 0.1 ns: %v ∠ %v°", cmplx.Abs(g), AngleDeg(g))
	}
	// S21 of the line reads 1 ∠ −36°.
	s := ABCDToS(l.ABCD(1e9), 50, 50)
	if math.Abs(cmplx.Abs(s[2])-1) > 1e-12 || math.Abs(AngleDeg(s[2])+36) > 1e-9 || cmplx.Abs(s[0]) > 1e-12 {
		t.Errorf("line S = %v", s)
	}
	// With 0.5 dB one-way loss, the open reads 0.891251 ∠ −72°.
	l.LossDBPerM, l.LossRefHz = 0.5/l.LengthM, 1e9
	g = l.ABCD(1e9).InputGamma(1, 50)
	if math.Abs(cmplx.Abs(g)-0.891251) > 1e-6 || math.Abs(AngleDeg(g)+72) > 1e-9 {
		t.Errorf("lossy open: %v ∠ %v°", cmplx.Abs(g), AngleDeg(g))
	}
	if db := l.LossDB(1e9); math.Abs(db-0.5) > 1e-12 {
		t.Errorf("LossDB(1 GHz) = %v, want 0.5", db)
	}
	// Loss grows as √f: 1 dB at 4 GHz.
	if db := l.LossDB(4e9); math.Abs(db-1) > 1e-12 {
		t.Errorf("LossDB(4 GHz) = %v, want 1", db)
	}
	// Without a reference frequency the loss is flat.
	l.LossRefHz = 0
	if db := l.LossDB(4e9); math.Abs(db-0.5) > 1e-12 {
		t.Errorf("flat LossDB(4 GHz) = %v, want 0.5", db)
	}
	// §10 (C): 10 cm of coax at VF 0.66 is 0.50540 ns; at VF 0.695, 0.47995 ns.
	for _, tc := range []struct{ vf, ns float64 }{{0.66, 0.50540}, {0.695, 0.47995}} {
		d := Line{LengthM: 0.1, VelocityFactor: tc.vf}.DelayS() * 1e9
		if math.Abs(d-tc.ns) > 0.5e-5 {
			t.Errorf("10 cm at VF %g: %.6f ns, want %.5f", tc.vf, d, tc.ns)
		}
	}
	// §10 (C): the phase slope of a 1 ns delay is −360°/GHz in
	// transmission.
	l1 := Line{Z0Ohm: 50, LengthM: 1e-9 * SpeedOfLight}
	if deg := l1.ElectricalDeg(1e9); math.Abs(deg-360) > 1e-9 {
		t.Errorf("1 ns at 1 GHz = %v°, want 360°", deg)
	}
}

// TestLineFromDegrees checks REFERENCE-CHECKS §15: λ/4 at 100 MHz is
// 0.74948 m in air and 0.49466 m in VF 0.66 coax (C).
func TestLineFromDegrees(t *testing.T) {
	t.Parallel()
	tests := []struct {
		vf, want float64
	}{
		{0, 0.74948},
		{1, 0.74948},
		{0.66, 0.49466},
	}
	for _, tc := range tests {
		t.Run(fmt.Sprintf("vf %g", tc.vf), func(t *testing.T) {
			t.Parallel()
			l := LineFromDegrees(50, 90, 100e6, tc.vf)
			if math.Abs(l.LengthM-tc.want) > 0.5e-5 {
				t.Errorf("LengthM = %.6f, want %.5f", l.LengthM, tc.want)
			}
			if d := l.ElectricalDeg(100e6); math.Abs(d-90) > 1e-9 {
				t.Errorf("ElectricalDeg = %v, want 90", d)
			}
			if l.Z0Ohm != 50 || l.LossDBPerM != 0 {
				t.Errorf("line = %+v", l)
			}
		})
	}
}

// TestQuarterWaveTransformer checks REFERENCE-CHECKS §5 Q-1 (C): a
// 70.7107 Ω λ/4 section from 100 Ω to 50 Ω, across frequency.
func TestQuarterWaveTransformer(t *testing.T) {
	t.Parallel()
	const f0 = 1e9
	l := LineFromDegrees(math.Sqrt(50*100), 90, f0, 0.66)
	tests := []struct {
		ratio float64
		gamma float64
		zin   complex128
	}{
		{0.5, 0.242536, 66.667 - 23.570i},
		{1, 0, 50},
		{1.5, 0.242536, 66.667 + 23.570i},
		{2, 0.333333, 100},
	}
	for _, tc := range tests {
		zin := l.InputImpedance(100, tc.ratio*f0)
		if g := cmplx.Abs(GammaFromZ(zin, 50)); math.Abs(g-tc.gamma) > 1e-6 {
			t.Errorf("f/f0 = %g: |Γ| = %.7f, want %.6f", tc.ratio, g, tc.gamma)
		}
		if !closeC(zin, tc.zin, 1e-5) {
			t.Errorf("f/f0 = %g: Zin = %v, want %v", tc.ratio, zin, tc.zin)
		}
	}
}

// TestStubAdmittance checks REFERENCE-CHECKS §4 and §8: the short gives
// −jY0·cot βl, the open +jY0·tan βl; at λ/8 in 50 Ω they are ∓j0.02 S.
func TestStubAdmittance(t *testing.T) {
	t.Parallel()
	if y := OpenStubAdmittance(50, math.Pi/4); !closeC(y, 0.02i, 1e-12) {
		t.Errorf("open λ/8 = %v, want j0.02", y)
	}
	if y := ShortStubAdmittance(50, math.Pi/4); !closeC(y, -0.02i, 1e-12) {
		t.Errorf("short λ/8 = %v, want −j0.02", y)
	}
	if y := ShortStubAdmittance(50, 0); !math.IsInf(imag(y), -1) {
		t.Errorf("short of no length = %v, want −j∞", y)
	}
	if y := OpenStubAdmittance(50, 0); y != 0 {
		t.Errorf("open of no length = %v, want 0", y)
	}
	// §8a (C): Pozar Example 5.2 solution 1, short stub 0.094975 λ must
	// cancel b = +1.47196 at d: −cot(2π·0.094975) = −1.47196.
	if y := ShortStubAdmittance(50, 2*math.Pi*0.094975); math.Abs(imag(y)*50+1.47196) > 1e-4 {
		t.Errorf("Pozar 5.2 short stub: b = %v, want −1.47196", imag(y)*50)
	}
	// §8a (C): the open-stub alternative 0.344975 λ gives the same.
	if y := OpenStubAdmittance(50, 2*math.Pi*0.344975); math.Abs(imag(y)*50+1.47196) > 1e-4 {
		t.Errorf("Pozar 5.2 open stub: b = %v, want −1.47196", imag(y)*50)
	}
	// The stub element agrees with the closed forms, via its line's ABCD.
	for _, open := range []bool{true, false} {
		st := ShuntStub{Line: LineFromDegrees(50, 30, 1e9, 0.7), Open: open}
		want := ShortStubAdmittance(50, math.Pi/6)
		if open {
			want = OpenStubAdmittance(50, math.Pi/6)
		}
		if m := st.ABCD(1e9); !closeC(m[2], want, 1e-12) || m[0] != 1 || m[1] != 0 || m[3] != 1 {
			t.Errorf("ShuntStub open=%v: %v, want Y = %v", open, m, want)
		}
	}
}
