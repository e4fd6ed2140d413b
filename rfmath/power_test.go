package rfmath

import (
	"math"
	"math/cmplx"
	"testing"
)

// A series inductor of X = 50 Ω before a 50 Ω load, driven by a 50 Ω source
// of 1 W available: Vs = √(8·1·50) = 20 V peak, I = 20/(100 + j50) A,
// |I| = 0.178885 A, V across L = 50·|I| = 8.94427 V. The load then takes
// |I|²·50/2 = 0.8 W (hand computation; the same circuit solved by Ohm's law).
func TestStressSeries(t *testing.T) {
	t.Parallel()
	f := 1e9
	l := Ladder{SeriesL{50 / (2 * math.Pi * f)}}
	s := l.StressTo(nil, f, 50, 50, 1)
	if math.Abs(s[0].IPeakA-0.178885) > 1e-6 || math.Abs(s[0].VPeakV-8.94427) > 1e-5 {
		t.Errorf("stress %+v, want I 0.178885 A, V 8.94427 V", s[0])
	}
}

// The L-section of REFERENCE-CHECKS §6c L-3 (200 Ω load to 50 Ω at 100 MHz:
// shunt C 13.783 pF across the load, series L 137.83 nH) matched, 1 W
// available: all of it reaches the load, so the load voltage is
// √(2·P·R) = √(2·1·200) = 20 V peak, which is also across the shunt C;
// the series L carries the input current √(2P/50) = 0.2 A peak.
func TestStressMatchedL(t *testing.T) {
	t.Parallel()
	l := Ladder{ShuntC{13.783e-12}, SeriesL{137.83e-9}}
	s := l.StressTo(nil, 100e6, 200, 50, 1)
	if math.Abs(s[0].VPeakV-20) > 0.01 || math.Abs(s[1].IPeakA-0.2) > 1e-4 {
		t.Errorf("stress %+v: want 20 V across C1, 0.2 A through L1", s)
	}
	// Current into the shunt C is V·ωC (independent: Ohm's law on the part).
	if want := 20 * 2 * math.Pi * 100e6 * 13.783e-12; math.Abs(s[0].IPeakA-want) > 1e-4 {
		t.Errorf("C1 current %g, want %g", s[0].IPeakA, want)
	}
	// Energy check: power into the load equals the 1 W available.
	zin := l.InputZ(100e6, 200)
	if cmplx.Abs(zin-50) > 0.01 {
		t.Fatalf("not matched: %v", zin)
	}
}
