package deembed

import (
	"errors"
	"math"
	"math/cmplx"
	"math/rand/v2"
	"strings"
	"testing"

	"matchbench/rfmath"
)

// randomFixture returns a 2-port sweep on f whose S-parameters are random
// but smooth: a lossy line with a series L and shunt C, mismatched, made
// non-reciprocal by scaling S21 and S12 differently. ref is the reference
// of both ports.
func randomFixture(f []float64, rnd *rand.Rand, ref float64) *rfmath.Sweep {
	l := rfmath.Line{Z0Ohm: 35 + 40*rnd.Float64(), LengthM: 0.05 + 0.3*rnd.Float64(), VelocityFactor: 0.66, LossDBPerM: 1 + rnd.Float64(), LossRefHz: 1e9}
	lh, cf := 2e-9*rnd.Float64(), 1e-12*rnd.Float64()
	g21, g12 := 0.8+0.2*rnd.Float64(), 0.6+0.2*rnd.Float64()
	s := rfmath.NewSweep(len(f), 2, ref)
	copy(s.FreqHz, f)
	for k, fk := range f {
		a := rfmath.SeriesZ(rfmath.ImpedanceOfL(lh, fk)).Mul(l.ABCD(fk)).Mul(rfmath.ShuntY(rfmath.AdmittanceOfC(cf, fk)))
		m := rfmath.ABCDToS(a, ref, ref)
		m[1] *= complex(g12, 0)
		m[2] *= complex(g21, 0)
		copy(s.Matrix(k), m[:])
	}
	return s
}

// flip turns a 2-port matrix end for end.
func flip(m [4]complex128) [4]complex128 { return [4]complex128{m[3], m[2], m[1], m[0]} }

func mat4(m []complex128) [4]complex128 { return [4]complex128{m[0], m[1], m[2], m[3]} }

// TestRemoveRoundTrip embeds a device in fixtures by routes independent of
// this package (rfmath.CascadeS for 2-ports; the fixture's ABCD matrix and
// rfmath.ABCD.InputGamma for 1-ports; rfmath.Renormalize where the fixture
// has another reference), removes the fixtures with Remove, and wants the
// device back to 1e-9. Embed must agree with the independent route too.
func TestRemoveRoundTrip(t *testing.T) {
	t.Parallel()
	f := grid(10e6, 10e6, 200)
	tests := []struct {
		name      string
		ports     int
		at        []int // AnalyserPort of the fixture at each port; −1 means none
		fixRef    float64
		noThrough bool // a device with S21 = S12 = 0
	}{
		{name: "1-port, fixture port 1 at the analyser", ports: 1, at: []int{1}, fixRef: 50},
		{name: "1-port, fixture port 2 at the analyser", ports: 1, at: []int{2}, fixRef: 50},
		{name: "1-port, 75 Ω fixture", ports: 1, at: []int{0}, fixRef: 75},
		{name: "2-port, fixture at port 1", ports: 2, at: []int{1, -1}, fixRef: 50},
		{name: "2-port, fixture at port 2", ports: 2, at: []int{-1, 1}, fixRef: 50},
		{name: "2-port, both, turned", ports: 2, at: []int{2, 2}, fixRef: 50},
		{name: "2-port, both, 75 Ω", ports: 2, at: []int{1, 2}, fixRef: 75},
		{name: "2-port device that transmits nothing", ports: 2, at: []int{1, 1}, fixRef: 50, noThrough: true},
	}
	for i, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			rnd := rand.New(rand.NewPCG(uint64(i+1), 3))
			dev := rfmath.NewSweep(len(f), tc.ports, 50)
			copy(dev.FreqHz, f)
			for n := range dev.Data {
				dev.Data[n] = randomC(rnd, 0.6)
			}
			if tc.noThrough {
				for k := range f {
					dev.Set(k, 0, 1, 0)
					dev.Set(k, 1, 0, 0)
				}
			}
			fix := make([]Fixture, tc.ports)
			for p, ap := range tc.at {
				if ap >= 0 {
					fix[p] = Fixture{S: randomFixture(f, rnd, tc.fixRef), AnalyserPort: ap}
				}
			}
			// The independent route.
			meas := dev.Clone()
			for k := range f {
				m := meas.Matrix(k)
				for p, fx := range fix {
					if fx.S == nil {
						continue
					}
					x := mat4(fx.S.Matrix(k))
					if tc.fixRef != 50 {
						if _, err := rfmath.Renormalize(x[:], x[:], 2, []float64{tc.fixRef, tc.fixRef}, []float64{50, 50}); err != nil {
							t.Fatal(err)
						}
					}
					if fx.AnalyserPort == 2 {
						x = flip(x)
					}
					switch {
					case tc.ports == 1:
						m[0] = rfmath.SToABCD(x, 50, 50).InputGamma(m[0], 50)
					case p == 0:
						c := rfmath.CascadeS(x, mat4(m), 50)
						copy(m, c[:])
					default:
						c := rfmath.CascadeS(mat4(m), flip(x), 50)
						copy(m, c[:])
					}
				}
			}
			emb, err := Embed(dev, fix)
			if err != nil {
				t.Fatal(err)
			}
			for n := range meas.Data {
				if !closeC(emb.Data[n], meas.Data[n], 1e-12) {
					t.Fatalf("Embed: value %d = %v, independent route %v", n, emb.Data[n], meas.Data[n])
				}
			}
			raw := meas.Clone()
			got, err := Remove(meas, fix)
			if err != nil {
				t.Fatal(err)
			}
			var worst float64
			for n := range dev.Data {
				worst = math.Max(worst, cmplx.Abs(got.Data[n]-dev.Data[n]))
			}
			if worst > 1e-9 {
				t.Errorf("de-embedded device differs from the original by %.3g", worst)
			}
			for n := range meas.Data {
				if meas.Data[n] != raw.Data[n] {
					t.Fatal("Remove modified the measurement")
				}
			}
		})
	}
}

// TestRemoveInterpolates removes a lossless matched line sampled every
// 25 MHz from a measurement every 1 MHz. Between its points the fixture's
// S21 = e^(−jωτ) is interpolated in magnitude and phase, which is exact for
// such a line, so the device comes back to 1e-9; interpolating real and
// imaginary parts would shrink |S21| by up to 1 − cos(Δφ/2) ≈ 1 % here.
func TestRemoveInterpolates(t *testing.T) {
	t.Parallel()
	l := rfmath.Line{Z0Ohm: 50, LengthM: 0.5, VelocityFactor: 0.66} // 2.53 ns, 22.7° per 25 MHz
	fix := twoPortSweep(grid(0, 25e6, 81), l.ABCD)
	f := grid(3e6, 1e6, 1995)
	zl := complex(20, 35)
	meas := rfmath.NewSweep(len(f), 1, 50)
	copy(meas.FreqHz, f)
	for k, fk := range f {
		meas.Data[k] = l.ABCD(fk).InputGamma(rfmath.GammaFromZ(zl, 50), 50)
	}
	got, err := Remove(meas, []Fixture{{S: fix}})
	if err != nil {
		t.Fatal(err)
	}
	want := rfmath.GammaFromZ(zl, 50)
	for k := range f {
		if !closeC(got.Data[k], want, 1e-9) {
			t.Fatalf("at %g Hz: %v, want %v", f[k], got.Data[k], want)
		}
	}
}

// TestRemoveDemoCable removes testdata/demo/cable-fixture.s2p from
// fieldnode-via-cable.s1p and compares the result with fieldnode-antenna.s1p
// (the same antenna model measured at its pad) where the two overlap,
// 702–1098 MHz on the 3 MHz grid, which lies on the antenna file's 1 MHz
// grid. Both files carry independent noise of σ = 0.002 on each part of Γ
// (internal/demo). Removing the cable scales the via-cable noise by
// 1/|S21|² ≈ 10^(0.45/20) = 1.05 at 1 GHz (0.45 dB round trip), so the
// difference has σ ≈ √(0.0021² + 0.002²) = 0.0029 per part: an rms |ΔΓ| of
// σ·√2 = 0.0041. The test allows an rms of 0.0055, a mean (bias) of 0.0015
// and a largest |ΔΓ| of 0.015 (the Rayleigh tail exceeds it at one of 133
// points with probability under 1 %).
func TestRemoveDemoCable(t *testing.T) {
	t.Parallel()
	fix := readDemo(t, "cable-fixture.s2p")
	meas := readDemo(t, "fieldnode-via-cable.s1p")
	ant := readDemo(t, "fieldnode-antenna.s1p")
	dev, err := Remove(meas, []Fixture{{S: fix, AnalyserPort: 1}})
	if err != nil {
		t.Fatal(err)
	}
	m := make([]complex128, 1)
	var n int
	var sum complex128
	var ss, worst float64
	for k, f := range dev.FreqHz {
		if f < ant.FreqHz[0] || f > ant.FreqHz[ant.Len()-1] {
			continue
		}
		if _, err := ant.InterpAt(m, f); err != nil {
			t.Fatal(err)
		}
		d := dev.Data[k] - m[0]
		sum += d
		ss += real(d)*real(d) + imag(d)*imag(d)
		worst = math.Max(worst, cmplx.Abs(d))
		n++
	}
	rms := math.Sqrt(ss / float64(n))
	mean := cmplx.Abs(sum / complex(float64(n), 0))
	t.Logf("%d points: rms |ΔΓ| %.4f, mean %.4f, largest %.4f", n, rms, mean, worst)
	if n != 133 {
		t.Errorf("%d overlapping points, want 133", n)
	}
	if rms > 0.0055 || mean > 0.0015 || worst > 0.015 {
		t.Errorf("de-embedded antenna differs from the pad measurement: rms %.4f, mean %.4f, largest %.4f", rms, mean, worst)
	}
	// Removing the fixture turned the wrong way round is not the same.
	wrong, err := Remove(meas, []Fixture{{S: fix, AnalyserPort: 2}})
	if err != nil {
		t.Fatal(err)
	}
	var diff float64
	for k := range wrong.Data {
		diff = math.Max(diff, cmplx.Abs(wrong.Data[k]-dev.Data[k]))
	}
	if diff < 0.01 {
		t.Errorf("turning the fixture changed the result by only %.3g", diff)
	}
}

func TestRemoveCoverage(t *testing.T) {
	t.Parallel()
	l := rfmath.Line{Z0Ohm: 50, LengthM: 0.1}
	fix := twoPortSweep(grid(10e6, 10e6, 100), l.ABCD) // 10 MHz – 1 GHz
	meas := rfmath.NewSweep(0, 1, 50)
	meas.FreqHz = append(grid(5e6, 1e6, 3), grid(500e6, 250e6, 4)...) // 5, 6, 7 MHz; 500 MHz … 1.25 GHz
	meas.Data = make([]complex128, len(meas.FreqHz))
	for _, fn := range []func() error{
		func() error { _, err := Remove(meas, []Fixture{{S: fix}}); return err },
		func() error { _, err := Embed(meas, []Fixture{{S: fix}}); return err },
	} {
		err := fn()
		var ce *CoverageError
		if !errors.As(err, &ce) || !errors.Is(err, ErrCoverage) {
			t.Fatalf("err = %v, want a *CoverageError", err)
		}
		if len(ce.Below) != 3 || len(ce.Above) != 1 || ce.Above[0] != 1.25e9 || ce.FixtureLoHz != 10e6 || ce.FixtureHiHz != 1e9 || ce.Port != 1 {
			t.Errorf("CoverageError = %+v", ce)
		}
		msg := err.Error()
		for _, want := range []string{"10 MHz to 1 GHz", "3 points below it (5 MHz, 6 MHz, 7 MHz)", "1 point above it (1.25 GHz)", "never extrapolated"} {
			if !strings.Contains(msg, want) {
				t.Errorf("message %q does not say %q", msg, want)
			}
		}
	}
	// Many points: the message lists the ends.
	meas2 := rfmath.NewSweep(0, 1, 50)
	meas2.FreqHz = grid(1e9, 1e6, 20)
	meas2.Data = make([]complex128, 20)
	_, err := Remove(meas2, []Fixture{{S: fix}})
	if err == nil || !strings.Contains(err.Error(), "19 points above it (1.001 GHz, 1.002 GHz, 1.003 GHz … 1.017 GHz, 1.018 GHz, 1.019 GHz)") {
		t.Errorf("err = %v", err)
	}
}

func TestRemoveErrors(t *testing.T) {
	t.Parallel()
	f := grid(1e6, 1e6, 5)
	fix := twoPortSweep(f, rfmath.Line{Z0Ohm: 50, LengthM: 0.1}.ABCD)
	dead := fix.Clone()
	dead.Set(2, 1, 0, 0) // S21 = 0 at 3 MHz
	one := rfmath.NewSweep(5, 1, 50)
	copy(one.FreqHz, f)
	two := rfmath.NewSweep(5, 2, 50)
	copy(two.FreqHz, f)
	three := rfmath.NewSweep(5, 3, 50)
	copy(three.FreqHz, f)
	tests := []struct {
		name string
		meas *rfmath.Sweep
		fix  []Fixture
		want error
	}{
		{"3-port measurement", three, []Fixture{{S: fix}, {}, {}}, ErrPorts},
		{"1-port fixture", one, []Fixture{{S: one}}, ErrPorts},
		{"dead fixture, 1-port", one, []Fixture{{S: dead}}, ErrSingular},
		{"dead fixture, 2-port", two, []Fixture{{S: dead}, {}}, ErrSingular},
		{"empty fixture", one, []Fixture{{S: rfmath.NewSweep(0, 2, 50)}}, ErrCoverage},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			if _, err := Remove(tc.meas, tc.fix); !errors.Is(err, tc.want) {
				t.Errorf("err = %v, want %v", err, tc.want)
			}
		})
	}
	if !panics(func() { Remove(one, nil) }) {
		t.Error("Remove with no fixture slice did not panic")
	}
	if !panics(func() { Remove(one, []Fixture{{S: fix, AnalyserPort: 3}}) }) {
		t.Error("AnalyserPort 3 did not panic")
	}
	if !panics(func() { Embed(one, []Fixture{{}, {}}) }) {
		t.Error("Embed with two fixtures for one port did not panic")
	}
}
