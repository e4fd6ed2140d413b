package deembed

import (
	"errors"
	"math"
	"math/cmplx"
	"math/rand/v2"
	"testing"

	"matchbench/rfmath"
)

// standardThroughLine returns the reflection of the standard std (open or
// short) at the end of the line l, on the grid f, computed with rfmath's
// ABCD model of the line, with complex Gaussian noise of sigma on Γ and a
// constant phase error of offsetDeg.
func standardThroughLine(f []float64, l rfmath.Line, std Standard, sigma, offsetDeg float64, seed uint64) *rfmath.Sweep {
	s := rfmath.NewSweep(len(f), 1, 50)
	copy(s.FreqHz, f)
	rnd := rand.New(rand.NewPCG(seed, 7))
	gl := complex(1, 0)
	if std == Short {
		gl = -1
	}
	rot := cmplx.Rect(1, offsetDeg*math.Pi/180)
	for k, fk := range f {
		n := complex(sigma*rnd.NormFloat64(), sigma*rnd.NormFloat64())
		s.Data[k] = l.ABCD(fk).InputGamma(gl, 50)*rot + n
	}
	return s
}

// TestFitSynthetic fits an ideal open or short through a known lossy line.
// The expected values are those of the line (its delay length/(VF·c) and its
// loss dB/m·m at the reference frequency); the tolerances are stated per
// case: exact data must come back to rounding, noisy data within four
// standard errors of the fit and within a stated absolute bound.
func TestFitSynthetic(t *testing.T) {
	t.Parallel()
	l := rfmath.Line{Z0Ohm: 50, LengthM: 0.6, VelocityFactor: 0.695, LossDBPerM: 0.75, LossRefHz: 1e9}
	wantTau := 0.6 / (0.695 * rfmath.SpeedOfLight) // 2.8797 ns
	wantLoss := 0.75 * 0.6                         // 0.45 dB at 1 GHz
	f := grid(5e6, 5e6, 600)                       // 5 MHz to 3 GHz
	tests := []struct {
		name      string
		std       Standard
		sigma     float64
		offsetDeg float64
		set       *FitSettings
		tauTol    float64 // s
		lossTol   float64 // dB at 1 GHz
		offsetTol float64 // degrees
		wantFlat  float64
		useSE     bool
		lossRefHz float64
		lossAtRef float64
	}{
		{name: "open, exact", std: Open, tauTol: 1e-18, lossTol: 1e-10, offsetTol: 1e-8},
		{name: "short, exact", std: Short, tauTol: 1e-18, lossTol: 1e-10, offsetTol: 1e-8},
		{name: "open, no flat term", std: Open, set: &FitSettings{NoFlatLoss: true}, tauTol: 1e-18, lossTol: 1e-10, offsetTol: 1e-8},
		{name: "open, loss quoted at 2 GHz", std: Open, set: &FitSettings{LossRefHz: 2e9}, tauTol: 1e-18, lossTol: 1e-10, offsetTol: 1e-8, lossRefHz: 2e9, lossAtRef: wantLoss * math.Sqrt2},
		{name: "open, part of the band", std: Open, set: &FitSettings{LoHz: 1e9, HiHz: 2e9}, tauTol: 1e-18, lossTol: 1e-9, offsetTol: 1e-7},
		// A standard that is not ideal: a constant 7° error goes to the
		// offset and leaves the delay alone.
		{name: "open with a 7° phase error", std: Open, offsetDeg: 7, tauTol: 1e-18, lossTol: 1e-10, offsetTol: 1e-8},
		// σ = 0.002 on Γ, as the demo files: 1 ps and 0.005 dB are well
		// over four standard errors here (about 0.02 ps and 0.001 dB).
		{name: "open, noisy", std: Open, sigma: 0.002, tauTol: 1e-12, lossTol: 0.005, offsetTol: 0.1, useSE: true},
		{name: "short, noisy", std: Short, sigma: 0.002, tauTol: 1e-12, lossTol: 0.005, offsetTol: 0.1, useSE: true},
	}
	for i, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			s := standardThroughLine(f, l, tc.std, tc.sigma, tc.offsetDeg, uint64(i+1))
			fit, err := FitExtension(s, tc.std, tc.set)
			if err != nil {
				t.Fatal(err)
			}
			e := fit.Extension
			if d := math.Abs(e.DelayS - wantTau); d > tc.tauTol || (tc.useSE && d > 4*fit.DelaySE) {
				t.Errorf("delay %.6f ns ± %.3g ps, want %.6f ns", e.DelayS*1e9, fit.DelaySE*1e12, wantTau*1e9)
			}
			ref, want := 1e9, wantLoss
			if tc.lossRefHz != 0 {
				ref, want = tc.lossRefHz, tc.lossAtRef
			}
			if e.LossRefHz != ref {
				t.Errorf("LossRefHz = %g, want %g", e.LossRefHz, ref)
			}
			// Compare the total one-way loss at the reference frequency, so
			// that the split between √f and flat terms does not matter.
			if d := math.Abs(e.OneWayLossDB(ref) - want); d > tc.lossTol {
				t.Errorf("loss at %g Hz = %.6f dB (%.6f √f + %.6f flat), want %.6f", ref, e.OneWayLossDB(ref), e.LossDB, e.FlatLossDB, want)
			}
			if tc.set != nil && tc.set.NoFlatLoss && e.FlatLossDB != 0 {
				t.Errorf("FlatLossDB = %g with NoFlatLoss", e.FlatLossDB)
			}
			if math.Abs(fit.OffsetDeg-tc.offsetDeg) > tc.offsetTol {
				t.Errorf("offset %.6f°, want %g°", fit.OffsetDeg, tc.offsetDeg)
			}
			if len(fit.PhaseResidualDeg) != len(fit.FreqHz) || len(fit.MagResidualDB) != len(fit.FreqHz) {
				t.Fatalf("%d residuals for %d points", len(fit.PhaseResidualDeg), len(fit.FreqHz))
			}
			if tc.set != nil && tc.set.LoHz > 0 && (fit.FreqHz[0] < tc.set.LoHz || fit.FreqHz[len(fit.FreqHz)-1] > tc.set.HiHz) {
				t.Errorf("fit range %g–%g Hz outside the settings", fit.FreqHz[0], fit.FreqHz[len(fit.FreqHz)-1])
			}
			// With exact data the residuals are rounding; with σ = 0.002 on
			// |Γ| ≥ 0.8 (1.6 dB of round-trip loss at 3 GHz) the phase
			// residual is about σ/|Γ| rad ≤ 0.14° rms and the magnitude one
			// 20·log10(e)·σ/|Γ| ≤ 0.022 dB rms; allow 50 % more.
			maxPh, maxMag := 1e-9, 1e-9
			if tc.sigma > 0 {
				maxPh, maxMag = 1.5*tc.sigma/0.8*180/math.Pi, 1.5*20*math.Log10(math.E)*tc.sigma/0.8
			}
			if fit.PhaseRMSDeg > maxPh || fit.MagRMSDB > maxMag {
				t.Errorf("residual rms %.3g° and %.3g dB, want ≤ %.3g° and %.3g dB", fit.PhaseRMSDeg, fit.MagRMSDB, maxPh, maxMag)
			}
			// Applying the fit turns the measurement into the standard.
			ideal := complex(1, 0)
			if tc.std == Short {
				ideal = -1
			}
			if tc.sigma == 0 {
				corr := cmplx.Rect(1, -tc.offsetDeg*math.Pi/180)
				out := ExtendAll(s, e)
				for k := range out.Data {
					if !closeC(out.Data[k]*corr, ideal, 1e-8) {
						t.Fatalf("corrected at %g Hz = %v, want %v", s.FreqHz[k], out.Data[k]*corr, ideal)
					}
				}
			}
		})
	}
}

// TestFitDemoOpen fits the demo's open-ended cable (testdata/demo/
// cable-open-end.s1p). The demo model (internal/demo) is 250 mm of PE coax,
// VF 0.66, 0.9 dB/m at 1 GHz: one-way delay 0.25/(0.66·c) = 1.2635 ns and
// 0.225 dB at 1 GHz, with 0.12 pF at the analyser connector, 0.02 pF of
// fringing at the open end and σ = 0.002 of noise on Γ.
//
// Expected bias of the delay (computed here, not measured):
//   - fringing Cf at the open: Γ ≈ e^(−j·2ωCf·Z0), i.e. Cf·Z0 = 1.0 ps more
//     one-way delay;
//   - the shunt Cc at the connector: to first order its two passes turn the
//     phase by −ωCc·Z0 on average, Cc·Z0/2 = 3 ps, plus a ripple that a
//     least-squares line over 3 MHz–1.5 GHz does not average away; the
//     fit of a noise-free model of this feed (built below from rfmath.Line
//     and rfmath.ShuntY, independently of internal/demo) takes 2.3 ps.
//
// So the fit should read about 1.2635 + 0.0034 = 1.2669 ns. The test
// checks the fringing term analytically, the noise-free fit against the
// stated bias, and the demo file's fit against the noise-free fit within
// 0.6 ps (about three standard errors of the noisy fit).
func TestFitDemoOpen(t *testing.T) {
	t.Parallel()
	cable := rfmath.Line{Z0Ohm: 50, LengthM: 0.25, VelocityFactor: 0.66, LossDBPerM: 0.9, LossRefHz: 1e9}
	const cc, cf = 0.12e-12, 0.02e-12
	model := func(conn, fring float64) *rfmath.Sweep {
		s := rfmath.NewSweep(500, 1, 50)
		for k := range 500 {
			f := 3e6 * float64(k+1)
			w := 2 * math.Pi * f
			s.FreqHz[k] = f
			gl := complex(1, 0)
			if fring > 0 {
				gl = rfmath.GammaFromZ(1/complex(0, w*fring), 50)
			}
			s.Data[k] = rfmath.ShuntY(complex(0, w*conn)).Mul(cable.ABCD(f)).InputGamma(gl, 50)
		}
		return s
	}
	fitOf := func(s *rfmath.Sweep) *Fit {
		fit, err := FitExtension(s, Open, nil)
		if err != nil {
			t.Fatal(err)
		}
		return fit
	}
	tau0 := cable.DelayS()
	if math.Abs(tau0-1.2635e-9) > 0.00005e-9 {
		t.Fatalf("model delay %v", tau0)
	}
	// Fringing alone: Cf·Z0 = 1 ps (first order in ωCf·Z0 ≤ 0.01 here).
	if b := fitOf(model(0, cf)).Extension.DelayS - tau0; math.Abs(b-cf*50) > 0.01e-12 {
		t.Errorf("fringing bias %.4g ps, want Cf·Z0 = %.4g ps", b*1e12, cf*50*1e12)
	}
	clean := fitOf(model(cc, cf))
	bias := clean.Extension.DelayS - tau0
	if bias < 2e-12 || bias > cf*50+cc*50/2+0.5e-12 {
		t.Errorf("noise-free bias %.4g ps, want between 2 ps and Cf·Z0 + Cc·Z0/2 = 4 ps", bias*1e12)
	}
	demo := fitOf(readDemo(t, "cable-open-end.s1p"))
	got := demo.Extension
	t.Logf("demo open: delay %.5f ns (model 1.26350, noise-free fit %.5f), loss %.4f dB √f + %.4f dB flat at 1 GHz (model 0.225), offset %.3f°, rms %.2f° / %.3f dB",
		got.DelayS*1e9, clean.Extension.DelayS*1e9, got.LossDB, got.FlatLossDB, demo.OffsetDeg, demo.PhaseRMSDeg, demo.MagRMSDB)
	if d := got.DelayS - clean.Extension.DelayS; math.Abs(d) > 0.6e-12 {
		t.Errorf("demo delay %.5f ns, noise-free fit %.5f ns: differ by %.3g ps", got.DelayS*1e9, clean.Extension.DelayS*1e9, d*1e12)
	}
	// Loss: 0.225 dB at 1 GHz; the connector's ripple and the noise move it
	// by a few thousandths of a dB.
	if l := got.OneWayLossDB(1e9); math.Abs(l-0.225) > 0.005 {
		t.Errorf("demo loss at 1 GHz %.4f dB, want 0.225 ± 0.005", l)
	}
	// The connector's ripple: the phase residual is about ωCc·Z0/2 rad at
	// the top, 1.6° at 1.5 GHz; its rms is over 0.5° and under 3°.
	if demo.PhaseRMSDeg < 0.5 || demo.PhaseRMSDeg > 3 || math.Abs(demo.OffsetDeg) > 1 {
		t.Errorf("demo residual rms %.3g°, offset %.3g°", demo.PhaseRMSDeg, demo.OffsetDeg)
	}
}

func TestFitErrors(t *testing.T) {
	t.Parallel()
	l := rfmath.Line{Z0Ohm: 50, LengthM: 2, VelocityFactor: 0.66}
	tests := []struct {
		name string
		s    *rfmath.Sweep
		set  *FitSettings
	}{
		{"two points", standardThroughLine(grid(1e6, 1e6, 2), l, Open, 0, 0, 1), nil},
		{"range holds two points", standardThroughLine(grid(1e6, 1e6, 50), l, Open, 0, 0, 1), &FitSettings{LoHz: 10e6, HiHz: 11e6}},
		// 10.1 ns one way: 4π·f·τ turns 1.23 turns per 30 MHz step, which
		// aliases to steps of 80°… 180°.
		{"undersampled", standardThroughLine(grid(30e6, 30e6, 60), rfmath.Line{Z0Ohm: 50, LengthM: 2, VelocityFactor: 0.66}, Open, 0, 0, 1), nil},
		{"zero magnitude", func() *rfmath.Sweep {
			s := standardThroughLine(grid(1e6, 1e6, 10), l, Open, 0, 0, 1)
			s.Data[4] = 0
			return s
		}(), nil},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			if _, err := FitExtension(tc.s, Open, tc.set); !errors.Is(err, ErrFit) {
				t.Errorf("err = %v, want ErrFit", err)
			}
		})
	}
	if !panics(func() { FitExtension(rfmath.NewSweep(5, 1, 50), Open, &FitSettings{Port: 2}) }) {
		t.Error("port 2 of a 1-port did not panic")
	}
	if Open.String() != "open" || Short.String() != "short" || Standard(9).String() != "Standard(9)" {
		t.Error("Standard.String")
	}
}
