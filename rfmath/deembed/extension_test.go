package deembed

import (
	"math"
	"math/cmplx"
	"testing"

	"matchbench/rfmath"
)

// TestExtensionReferenceChecks checks the rows of REFERENCE-CHECKS §10
// (values C).
func TestExtensionReferenceChecks(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name     string
		ext      Extension
		meas     complex128
		refl     bool // a reflection term, else a transmission term
		wantMag  float64
		wantDeg  float64
		magTol   float64
		angleTol float64
	}{
		{"open 1∠−72° at τ 0.1 ns", Extension{DelayS: 0.1e-9}, cmplx.Rect(1, -72*math.Pi/180), true, 1, 0, 1e-12, 1e-9},
		{"lossy open 0.891251∠−72°, 0.5 dB", Extension{DelayS: 0.1e-9, LossDB: 0.5, LossRefHz: 1e9}, cmplx.Rect(0.891251, -72*math.Pi/180), true, 1, 0, 1e-6, 1e-9},
		{"same loss as a flat term", Extension{DelayS: 0.1e-9, FlatLossDB: 0.5}, cmplx.Rect(0.891251, -72*math.Pi/180), true, 1, 0, 1e-6, 1e-9},
		{"same loss, no reference frequency", Extension{DelayS: 0.1e-9, LossDB: 0.5}, cmplx.Rect(0.891251, -72*math.Pi/180), true, 1, 0, 1e-6, 1e-9},
		{"S21 1∠−36°", Extension{DelayS: 0.1e-9}, cmplx.Rect(1, -36*math.Pi/180), false, 1, 0, 1e-12, 1e-9},
		// 1 ns of delay turns a reflection by −720°/GHz: at 1.25 GHz, 900°.
		{"reflection slope 720°/GHz", Extension{DelayS: 1e-9}, cmplx.Rect(1, -900*math.Pi/180), true, 1, 0, 1e-12, 1e-9},
		// Adding line (negative delay) goes the other way.
		{"add line", Extension{DelayS: -0.1e-9}, 1, true, 1, -72, 1e-12, 1e-9},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			f := 1e9
			if tc.name == "reflection slope 720°/GHz" {
				f = 1.25e9
			}
			var got complex128
			if tc.refl {
				got = tc.meas * tc.ext.Reflection(f)
			} else {
				got = tc.meas * tc.ext.Transmission(f)
			}
			if math.Abs(cmplx.Abs(got)-tc.wantMag) > tc.magTol || math.Abs(wrapDeg(deg(got)-tc.wantDeg)) > tc.angleTol {
				t.Errorf("corrected = %.7f ∠ %.7f°, want %g ∠ %g°", cmplx.Abs(got), deg(got), tc.wantMag, tc.wantDeg)
			}
		})
	}
}

func TestFromLength(t *testing.T) {
	t.Parallel()
	// REFERENCE-CHECKS §10 (C): 10 cm of coax at VF 0.66 is 0.50540 ns, at
	// VF 0.695 0.47995 ns; §15 gives the velocity factors (PE, PTFE).
	for _, tc := range []struct{ vf, ns float64 }{{0.66, 0.50540}, {0.695, 0.47995}, {0, 0.1 / 0.299792458}} {
		if got := FromLength(0.1, tc.vf).DelayS * 1e9; math.Abs(got-tc.ns) > 0.5e-5 {
			t.Errorf("FromLength(0.1, %g) = %.6f ns, want %.5f", tc.vf, got, tc.ns)
		}
	}
	l := rfmath.Line{Z0Ohm: 50, LengthM: 0.25, VelocityFactor: 0.66, LossDBPerM: 0.9, LossRefHz: 1e9}
	e := FromLine(l)
	// The demo cable: 0.25/(0.66·c) = 1.2635 ns, 0.9 dB/m · 0.25 m = 0.225 dB.
	if math.Abs(e.DelayS-1.2635e-9) > 0.0001e-9 || math.Abs(e.LossDB-0.225) > 1e-12 || e.LossRefHz != 1e9 {
		t.Errorf("FromLine = %+v", e)
	}
	if got, want := e.OneWayLossDB(4e9), 0.45; math.Abs(got-want) > 1e-12 {
		t.Errorf("loss at 4 GHz = %v, want %v (√f scaling)", got, want)
	}
}

// TestExtendLine checks that the extension of a line, removed from the
// line's own S-parameters (computed with rfmath's ABCD model, an
// independent route), leaves a through connection.
func TestExtendLine(t *testing.T) {
	t.Parallel()
	l := rfmath.Line{Z0Ohm: 50, LengthM: 0.4, VelocityFactor: 0.7, LossDBPerM: 1.5, LossRefHz: 1e9}
	f := grid(10e6, 10e6, 300)
	s := twoPortSweep(f, l.ABCD)
	raw := s.Clone()

	half := FromLine(rfmath.Line{LengthM: 0.2, VelocityFactor: 0.7, LossDBPerM: 1.5, LossRefHz: 1e9})
	tests := []struct {
		name string
		ext  []Extension
	}{
		{"whole line at port 1", []Extension{FromLine(l), {}}},
		{"whole line at port 2", []Extension{{}, FromLine(l)}},
		{"half at each port", []Extension{half, half}},
	}
	for _, tc := range tests {
		out := Extend(s, tc.ext)
		for k := range f {
			m := out.Matrix(k)
			if !closeC(m[1], 1, 1e-12) || !closeC(m[2], 1, 1e-12) || cmplx.Abs(m[0]) > 1e-12 || cmplx.Abs(m[3]) > 1e-12 {
				t.Fatalf("%s: S at %g Hz = %v, want a through", tc.name, f[k], m)
			}
		}
	}
	for i := range s.Data {
		if s.Data[i] != raw.Data[i] {
			t.Fatal("Extend modified its input")
		}
	}
}

// TestExtendReflection checks a 1-port: an open at the end of a lossy line
// (rfmath.Line.ABCD, InputGamma) becomes Γ = 1 at every frequency; Neg puts
// the line back.
func TestExtendReflection(t *testing.T) {
	t.Parallel()
	l := rfmath.Line{Z0Ohm: 50, LengthM: 1.3, VelocityFactor: 0.66, LossDBPerM: 0.4, LossRefHz: 100e6}
	f := grid(1e6, 7e6, 400)
	s := rfmath.NewSweep(len(f), 1, 50)
	copy(s.FreqHz, f)
	for k, fk := range f {
		s.Data[k] = l.ABCD(fk).InputGamma(1, 50)
	}
	e := FromLine(l)
	out := ExtendAll(s, e)
	for k := range f {
		if !closeC(out.Data[k], 1, 1e-11) {
			t.Fatalf("open at %g Hz = %v, want 1", f[k], out.Data[k])
		}
	}
	back := ExtendAll(out, e.Neg())
	for k := range f {
		if !closeC(back.Data[k], s.Data[k], 1e-12) {
			t.Fatalf("round trip at %g Hz: %v, want %v", f[k], back.Data[k], s.Data[k])
		}
	}
	g := e.GammaTo(nil, s.Data, s.FreqHz)
	for k := range g {
		if !closeC(g[k], out.Data[k], 1e-15) {
			t.Fatalf("GammaTo and ExtendAll differ at %d: %v, %v", k, g[k], out.Data[k])
		}
	}
}

func TestExtendPanics(t *testing.T) {
	t.Parallel()
	s := rfmath.NewSweep(3, 2, 50)
	if !panics(func() { Extend(s, []Extension{{}}) }) {
		t.Error("Extend with one extension for two ports did not panic")
	}
	if !panics(func() { Extension{}.GammaTo(make([]complex128, 2), make([]complex128, 3), make([]float64, 3)) }) {
		t.Error("GammaTo with a short dst did not panic")
	}
	if !panics(func() { Extension{}.GammaTo(nil, make([]complex128, 2), make([]float64, 3)) }) {
		t.Error("GammaTo with a short gamma did not panic")
	}
}

// TestGammaToAllocs: with dst given, the sweep loop does not allocate.
func TestGammaToAllocs(t *testing.T) {
	f := grid(1e6, 1e6, 1000)
	g := make([]complex128, len(f))
	dst := make([]complex128, len(f))
	e := Extension{DelayS: 1e-9, LossDB: 0.3, LossRefHz: 1e9, FlatLossDB: 0.1}
	if n := testing.AllocsPerRun(10, func() { e.GammaTo(dst, g, f) }); n != 0 {
		t.Errorf("GammaTo allocates %v times", n)
	}
}
