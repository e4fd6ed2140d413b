package tdr

import (
	"errors"
	"math"
	"math/cmplx"
	"strings"
	"testing"

	"matchbench/rfmath"
)

// harmonicSweep returns f_k = k·df for k = k0 … kN and Γ = gl·e^(−j2π·f·2τ),
// a load gl at the end of a matched line of one-way delay tau.
func harmonicSweep(df float64, k0, kN int, gl complex128, tau float64) ([]float64, []complex128) {
	var f []float64
	var g []complex128
	for k := k0; k <= kN; k++ {
		fk := float64(k) * df
		f = append(f, fk)
		g = append(g, gl*cmplx.Exp(complex(0, -2*math.Pi*fk*2*tau)))
	}
	return f, g
}

// TestReferenceCase checks the exact discrete case of REFERENCE-CHECKS §12
// (values C): Δf = 10 MHz, f = 0 … 1000 MHz, M = 200, no window, a line of
// one-way delay 1 ns, so bins are 0.5 ns wide and the reflection falls on
// t = 2.0 ns (DFT bin 4).
func TestReferenceCase(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name   string
		gl     complex128
		peak   float64
		zAfter float64
	}{
		{"short", -1, -1, 0},
		{"100 Ω in 50 Ω", 1.0 / 3, 1.0 / 3, 100},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			f, g := harmonicSweep(10e6, 0, 100, tc.gl, 1e-9)
			r, err := Transform(f, g, nil)
			if err != nil {
				t.Fatal(err)
			}
			if len(r.TimeS) != 200 || r.Bins != 101 || r.DCExtrapolated || r.Resampled {
				t.Fatalf("record %d, bins %d, extrapolated %v, resampled %v", len(r.TimeS), r.Bins, r.DCExtrapolated, r.Resampled)
			}
			i := r.Index(2e-9)
			if math.Abs(r.TimeS[i]-2e-9) > 1e-21 || math.Abs(r.TimeS[1]-r.TimeS[0]-0.5e-9) > 1e-21 {
				t.Fatalf("t[%d] = %v, step %v", i, r.TimeS[i], r.TimeS[1]-r.TimeS[0])
			}
			for n, h := range r.Impulse {
				want := 0.0
				if n == i {
					want = tc.peak
				}
				if math.Abs(h-want) > 1e-12 {
					t.Errorf("h(%.2f ns) = %.3g, want %g", r.TimeS[n]*1e9, h, want)
				}
			}
			for n, s := range r.Step {
				want := 0.0
				if n >= i {
					want = tc.peak
				}
				if math.Abs(s-want) > 1e-12 {
					t.Fatalf("s(%.2f ns) = %.3g, want %g", r.TimeS[n]*1e9, s, want)
				}
			}
			z := r.ImpedanceTo(nil, 50)
			if math.Abs(z[i+10]-tc.zAfter) > 1e-9 || math.Abs(z[i-1]-50) > 1e-9 {
				t.Errorf("Z after the step %v Ω, before %v Ω; want %v and 50", z[i+10], z[i-1], tc.zAfter)
			}
			// §12: the range is 1/Δf = 100 ns round trip, 15 m one way in air
			// and 9.9 m in VF 0.66 coax.
			if r.RangeS() != 100e-9 || math.Abs(Distance(r.RangeS(), 1)-14.99) > 0.005 || math.Abs(Distance(r.RangeS(), 0.66)-9.89) > 0.005 {
				t.Errorf("range %v s, %v m, %v m", r.RangeS(), Distance(r.RangeS(), 1), Distance(r.RangeS(), 0.66))
			}
		})
	}
}

// TestReferenceSection: a 75 Ω section (2 ns one way) 1 ns down a 50 Ω
// line and ended in 50 Ω. The step sits at ρ = (75 − 50)/(75 + 50) = 0.2
// from t = 2 ns until the far end's reflection returns at 6 ns (§12: Z =
// 75 Ω). Without a window the plateau is exact; with a Kaiser window §12
// asks for the edge within ±1 bin (0.5 ns) and the plateau within ±2 %.
func TestReferenceSection(t *testing.T) {
	t.Parallel()
	c := float64(rfmath.SpeedOfLight)
	feed := rfmath.Line{Z0Ohm: 50, LengthM: 1e-9 * c}
	sec := rfmath.Line{Z0Ohm: 75, LengthM: 2e-9 * c}
	var f []float64
	var g []complex128
	for k := 0; k <= 100; k++ {
		fk := 10e6 * float64(k)
		f = append(f, fk)
		g = append(g, feed.ABCD(fk).Mul(sec.ABCD(fk)).InputGamma(0, 50))
	}
	tests := []struct {
		name     string
		set      *Settings
		plateau  float64 // tolerance on the plateau
		edgeTolS float64
	}{
		{"no window", nil, 1e-9, 0},
		{"kaiser 6, padded", &Settings{Window: Window{Kind: Kaiser, Beta: 6}, Pad: 8}, 0.02 * 0.2, 0.5e-9},
		{"hann, padded", &Settings{Window: Window{Kind: Hann}, Pad: 8}, 0.02 * 0.2, 0.5e-9},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			r, err := Transform(f, g, tc.set)
			if err != nil {
				t.Fatal(err)
			}
			// Plateau in the middle of the section, at 4 ns.
			s := r.Step[r.Index(4e-9)]
			if math.Abs(s-0.2) > tc.plateau {
				t.Errorf("plateau %.6f, want 0.2 ± %g", s, tc.plateau)
			}
			if z := Impedance(s, 50); math.Abs(z-75) > 75*tc.plateau/0.2*1.6 {
				t.Errorf("Z = %.3f Ω, want 75", z)
			}
			// The edge: where the step first reaches half the plateau.
			var edge float64
			for i, v := range r.Step {
				if r.TimeS[i] > 0 && v >= 0.1 {
					edge = r.TimeS[i]
					break
				}
			}
			if tc.edgeTolS > 0 && math.Abs(edge-2e-9) > tc.edgeTolS {
				t.Errorf("edge at %.3f ns, want 2 ns ± %g", edge*1e9, tc.edgeTolS*1e9)
			}
			if tc.edgeTolS == 0 && edge != 2e-9 {
				t.Errorf("edge at %v, want exactly 2 ns", edge)
			}
		})
	}
}

// TestDCExtrapolation drops the DC point of the §12 sweeps. For Γ =
// gl·e^(−j4πfτ) the even parabola through Δf and 2Δf misses Re Γ(0) = gl by
// about |gl|·(4πτ)⁴·Δf²·(2Δf)²/24·… ≈ 4e-5 for the short (computed:
// (4·cos 0.1257 − cos 0.2513)/3 = 0.999958).
func TestDCExtrapolation(t *testing.T) {
	t.Parallel()
	for _, gl := range []complex128{-1, 1.0 / 3, 1} {
		f, g := harmonicSweep(10e6, 1, 100, gl, 1e-9)
		r, err := Transform(f, g, nil)
		if err != nil {
			t.Fatal(err)
		}
		if !r.DCExtrapolated || r.Resampled || r.Bins != 101 {
			t.Fatalf("extrapolated %v, resampled %v, bins %d", r.DCExtrapolated, r.Resampled, r.Bins)
		}
		want := (4*math.Cos(2*math.Pi*10e6*2e-9) - math.Cos(2*math.Pi*20e6*2e-9)) / 3 * real(gl)
		if math.Abs(r.DC-want) > 1e-15 || math.Abs(r.DC-real(gl)) > 5e-5 {
			t.Errorf("DC = %.8f, want %.8f (≈ %g)", r.DC, want, real(gl))
		}
		i := r.Index(2e-9)
		if math.Abs(r.Impulse[i]-real(gl)) > 1e-6 {
			t.Errorf("Γ %v: h(2 ns) = %.8f", gl, r.Impulse[i])
		}
	}
	// An active-looking extrapolation is clamped to |Γ(0)| ≤ 1.
	if v := extrapolateDC(1, 0.5); v != 1 {
		t.Errorf("clamp: %v", v)
	}
}

// TestResampleLowPass: a sweep from 300 kHz in 201 points is not harmonic;
// it is resampled to K = 200 steps of 5 MHz (linear interpolation, whose
// error for a phase step of 4π·Δf·τ = 0.063 rad is about 0.063²/8 = 5e-4
// of |Γ|). The 100 Ω load 1 ns away must still show at 2 ns with 1/3.
func TestResampleLowPass(t *testing.T) {
	t.Parallel()
	n := 201
	f := make([]float64, n)
	g := make([]complex128, n)
	for k := range f {
		f[k] = 0.3e6 + (1000e6-0.3e6)*float64(k)/float64(n-1)
		g[k] = complex(1.0/3, 0) * cmplx.Exp(complex(0, -2*math.Pi*f[k]*2e-9))
	}
	r, err := Transform(f, g, nil)
	if err != nil {
		t.Fatal(err)
	}
	if !r.Resampled || r.DeltaFHz != 5e6 || r.Bins != 201 {
		t.Fatalf("resampled %v, Δf %v, bins %d", r.Resampled, r.DeltaFHz, r.Bins)
	}
	i := r.Index(2e-9)
	if math.Abs(r.TimeS[i]-2e-9) > 1e-20 || math.Abs(r.Impulse[i]-1.0/3) > 1e-3 {
		t.Errorf("h(%v) = %v, want 1/3", r.TimeS[i], r.Impulse[i])
	}
}

func TestGridErrors(t *testing.T) {
	t.Parallel()
	f20, g20 := harmonicSweep(10e6, 2, 100, 1, 1e-9)
	fBand, gBand := harmonicSweep(1e6, 700, 1100, 1, 1e-9)
	tests := []struct {
		name string
		f    []float64
		g    []complex128
		want string
	}{
		{"start two steps up", f20, g20, "starts at 20 MHz, more than one step (Δf = 10 MHz) above DC, so 2 points"},
		{"a band far from DC", fBand, gBand, "starts at 700 MHz"},
		{"one point", []float64{1e6}, []complex128{1}, "at least 2"},
		{"decreasing", []float64{2e6, 1e6}, []complex128{1, 1}, "increasing"},
		{"only one step", []float64{0.3e6, 1e6}, []complex128{1, 1}, "2 steps"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			_, err := Transform(tc.f, tc.g, nil)
			if !errors.Is(err, ErrGrid) || !strings.Contains(err.Error(), tc.want) {
				t.Errorf("err = %v, want ErrGrid saying %q", err, tc.want)
			}
		})
	}
	// Band-pass takes the far band.
	if _, err := Transform(fBand, gBand, &Settings{Mode: BandPass}); err != nil {
		t.Errorf("band-pass: %v", err)
	}
	f, g := harmonicSweep(10e6, 0, 100, 1, 1e-9)
	for _, set := range []*Settings{{Lead: 0.5}, {Lead: -0.1}, {Pad: -1}, {Window: Window{Kind: Kaiser, Beta: -1}}, {Mode: 5}} {
		if _, err := Transform(f, g, set); err == nil {
			t.Errorf("settings %+v: no error", set)
		}
	}
	if !panicked(func() { Transform(f, g[:3], nil) }) {
		t.Error("short gamma did not panic")
	}
}

// TestStepAtDistance: a 50 Ω cable of PE dielectric (VF 0.66, §15) 1.5 m
// long, then a matched 75 Ω line (one impedance step, no other
// reflection), swept 2 MHz … 3 GHz in 2 MHz steps. The step must show at
// 1.5 m within one resolution cell v/(2·span) = 0.66·c/(2·3 GHz) = 3.3 cm
// (common practice), at the level 75 Ω (±2 % as §12 allows for a window).
func TestStepAtDistance(t *testing.T) {
	t.Parallel()
	const vf, length = 0.66, 1.5
	cable := rfmath.Line{Z0Ohm: 50, LengthM: length, VelocityFactor: vf}
	gl := rfmath.GammaFromZ(75, 50)
	var f []float64
	var g []complex128
	for k := 1; k <= 1500; k++ {
		fk := 2e6 * float64(k)
		f = append(f, fk)
		g = append(g, cable.ABCD(fk).InputGamma(gl, 50))
	}
	for _, w := range []Window{{}, {Kind: Hann}, {Kind: Kaiser, Beta: 6}, {Kind: Kaiser, Beta: 13}} {
		r, err := Transform(f, g, &Settings{Window: w, Pad: 4})
		if err != nil {
			t.Fatal(err)
		}
		cell := Distance(r.ResolutionS(), vf)
		if math.Abs(cell-0.033) > 0.0005 {
			t.Fatalf("resolution cell %v m", cell)
		}
		d := r.DistanceTo(nil, vf)
		z := r.ImpedanceTo(nil, 50)
		var edge float64
		for i := range d {
			if d[i] > 0 && r.Step[i] >= 0.1 { // half of ρ = 0.2
				edge = d[i]
				break
			}
		}
		if math.Abs(edge-length) > cell {
			t.Errorf("%v: step at %.4f m, want %.2f m ± %.3f", w, edge, length, cell)
		}
		// Ten cells beyond the edge the profile reads 75 Ω.
		if zi := z[r.Index(2*(length+10*cell)/(vf*rfmath.SpeedOfLight))]; math.Abs(zi-75) > 1.5 {
			t.Errorf("%v: Z beyond the step %.2f Ω, want 75 ± 1.5", w, zi)
		}
		if zi := z[r.Index(2*(length-10*cell)/(vf*rfmath.SpeedOfLight))]; math.Abs(zi-50) > 1 {
			t.Errorf("%v: Z before the step %.2f Ω, want 50 ± 1", w, zi)
		}
	}
}

// TestParseval checks the energy identity of the package doc for the
// scaling chosen, in both modes, with windows and padding, on the response
// of a lossy mismatched line (any spectrum would do).
func TestParseval(t *testing.T) {
	t.Parallel()
	l := rfmath.Line{Z0Ohm: 60, LengthM: 0.8, VelocityFactor: 0.7, LossDBPerM: 3, LossRefHz: 1e9}
	var f []float64
	var g []complex128
	for k := 1; k <= 300; k++ {
		fk := 5e6 * float64(k)
		f = append(f, fk)
		g = append(g, l.ABCD(fk).InputGamma(complex(0.4, -0.3), 50))
	}
	for _, set := range []Settings{
		{Window: Window{Kind: Hann}, Pad: 3},
		{Window: Window{Kind: Kaiser, Beta: 6}, Pad: 1},
		{Pad: 2},
		{Mode: BandPass, Window: Window{Kind: Kaiser, Beta: 6}, Pad: 2},
		{Mode: BandPass, Pad: 1},
	} {
		r, err := Transform(f, g, &set)
		if err != nil {
			t.Fatal(err)
		}
		M := float64(len(r.TimeS))
		var et float64
		for _, h := range r.Impulse {
			et += h * h
		}
		var ef, m0 float64
		if set.Mode == LowPass {
			K := r.Bins - 1
			m0 = float64(2 * K)
			half := float64(K) + 0.5
			ef = r.DC * r.DC
			for k := 1; k <= K; k++ {
				x := complex(set.Window.At(float64(k)/half), 0) * g[k-1]
				a := cmplx.Abs(x)
				switch {
				case k < K:
					ef += 2 * a * a
				case int(M) > 2*K:
					ef += a * a / 2 // split between ±K
				default:
					ef += real(x) * real(x) // the Nyquist bin of M = 2K is real
				}
			}
		} else {
			N := len(g)
			m0 = float64(N)
			for k := range g {
				x := set.Window.At((float64(k)-float64(N-1)/2)/(float64(N)/2)) * cmplx.Abs(g[k])
				ef += x * x
			}
		}
		lhs, rhs := m0/M*et, ef/m0
		if math.Abs(lhs-rhs) > 1e-12*rhs {
			t.Errorf("%+v: (M0/M)·Σ|h|² = %.15g, (1/M0)·Σ|X|² = %.15g", set, lhs, rhs)
		}
	}
}

// TestBandPassPeak: in band-pass mode a reflection Γ0 on a sample shows as
// a peak |Γ0| there with the rectangular window, whatever the band's start
// and the padding.
func TestBandPassPeak(t *testing.T) {
	t.Parallel()
	// 2–3 GHz in 4 MHz steps: T = 250 ns, bins 250 ns/M.
	var f []float64
	var g []complex128
	for k := range 250 {
		fk := 2e9 + 4e6*float64(k)
		f = append(f, fk)
		g = append(g, complex(-0.25, 0)*cmplx.Exp(complex(0, -2*math.Pi*fk*10e-9)))
	}
	for _, pad := range []int{1, 2, 5} {
		r, err := Transform(f, g, &Settings{Mode: BandPass, Pad: pad})
		if err != nil {
			t.Fatal(err)
		}
		if r.Step != nil || r.Mode != BandPass || r.LoHz != 2e9 || math.Abs(r.HiHz-2.996e9) > 1 {
			t.Fatalf("response %v %v %v %v", r.Step != nil, r.Mode, r.LoHz, r.HiHz)
		}
		i := r.Index(10e-9)
		if math.Abs(r.TimeS[i]-10e-9) > 1e-20 || math.Abs(r.Impulse[i]-0.25) > 1e-12 {
			t.Errorf("pad %d: |h(%v)| = %v, want 0.25", pad, r.TimeS[i], r.Impulse[i])
		}
		for n, h := range r.Impulse {
			if h > r.Impulse[i]+1e-12 {
				t.Errorf("pad %d: larger value %v at %v", pad, h, r.TimeS[n])
			}
		}
	}
	r, _ := Transform(f, g, &Settings{Mode: BandPass})
	if !panicked(func() { r.ImpedanceTo(nil, 50) }) {
		t.Error("ImpedanceTo of a band-pass response did not panic")
	}
	if !panicked(func() { r.DistanceTo(make([]float64, 3), 1) }) {
		t.Error("DistanceTo with a short dst did not panic")
	}
	if LowPass.String() != "low-pass" || BandPass.String() != "band-pass" || Mode(4).String() != "Mode(4)" {
		t.Error("Mode.String")
	}
	if !math.IsInf(Impedance(1, 50), 1) || Impedance(0, 50) != 50 || Impedance(-1, 50) != 0 {
		t.Error("Impedance special cases")
	}
	if math.Abs(Distance(1e-9, 0)-0.149896229) > 1e-9 {
		t.Error("Distance with VF 0")
	}
}

func panicked(f func()) (ok bool) {
	defer func() { ok = recover() != nil }()
	f()
	return false
}

func TestSmoothAtLeast(t *testing.T) {
	t.Parallel()
	for _, c := range [][2]int{{0, 1}, {1, 1}, {7, 8}, {200, 200}, {20002, 20250}, {19946, 20000}, {97, 100}} {
		if got := smoothAtLeast(c[0]); got != c[1] {
			t.Errorf("smoothAtLeast(%d) = %d, want %d", c[0], got, c[1])
		}
	}
}

func benchmarkTransform(b *testing.B, n int, set *Settings) {
	f := make([]float64, n)
	g := make([]complex128, n)
	l := rfmath.Line{Z0Ohm: 50, LengthM: 2, VelocityFactor: 0.66, LossDBPerM: 0.5, LossRefHz: 1e9}
	for k := range f {
		f[k] = 1e6 * float64(k+1)
		g[k] = l.ABCD(f[k]).InputGamma(0.3, 50)
	}
	b.ReportAllocs()
	b.ResetTimer()
	for b.Loop() {
		if _, err := Transform(f, g, set); err != nil {
			b.Fatal(err)
		}
	}
}

// The brief's benchmark: a 10,001-point sweep.
func BenchmarkTransform10001LowPass(b *testing.B) {
	benchmarkTransform(b, 10001, &Settings{Window: Window{Kind: Kaiser, Beta: 6}})
}

func BenchmarkTransform10001LowPassPad4(b *testing.B) {
	benchmarkTransform(b, 10001, &Settings{Window: Window{Kind: Kaiser, Beta: 6}, Pad: 4})
}

func BenchmarkTransform10001BandPass(b *testing.B) {
	benchmarkTransform(b, 10001, &Settings{Mode: BandPass, Window: Window{Kind: Kaiser, Beta: 6}})
}
