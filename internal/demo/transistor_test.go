package demo

import (
	"errors"
	"math"
	"math/cmplx"
	"math/rand/v2"
	"path/filepath"
	"testing"

	"matchbench/rfmath"
	"matchbench/rfmath/amp"
	"matchbench/rfmath/touchstone"
)

// noiseFactorDirect is the noise factor of c driven from a source of
// admittance ys, found without the chain representation: the source
// admittance is added to the circuit, the nodal equations are solved again,
// and the noise powers at the open output from every noisy branch and from
// the source's own thermal current (spectral density Gs in units of
// 4k_B·T0) are summed: F = (total)/(source's share) (the IRE definition of
// noise factor, common practice).
func noiseFactorDirect(t *testing.T, c circuit, ys complex128) float64 {
	t.Helper()
	withSource := c
	withSource.branches = append(append([]branch(nil), c.branches...), branch{nGate, 0, ys, 0})
	zm, ok := withSource.impedance()
	if !ok {
		t.Fatal("singular")
	}
	n := c.nodes
	z2 := func(node int) complex128 {
		if node == 0 {
			return 0
		}
		return zm[n+node-1]
	}
	src := real(ys) * abs2(z2(nGate))
	total := src
	for _, b := range c.branches {
		if b.tempK == 0 {
			continue
		}
		total += b.tempK / t0K * real(b.y) * abs2(z2(b.a)-z2(b.b))
	}
	return total / src
}

func abs2(c complex128) float64 { return real(c)*real(c) + imag(c)*imag(c) }

// The committed device files must be what the model generates, network
// and noise data alike, to the 10 significant digits they are written with.
func TestCommittedDevicesMatchModel(t *testing.T) {
	t.Parallel()
	for _, d := range Devices() {
		got, err := touchstone.ReadFile(filepath.Join("..", "..", "testdata", "demo", d.Name), touchstone.DefaultLimits)
		if err != nil {
			t.Fatalf("%v (remake with: go run . demo testdata/demo)", err)
		}
		s := got.Sweep
		if s.Len() != d.Sweep.Len() || s.Ports != d.Sweep.Ports {
			t.Fatalf("%s: file has %d points, %d ports; model has %d, %d", d.Name, s.Len(), s.Ports, d.Sweep.Len(), d.Sweep.Ports)
		}
		for k := range s.FreqHz {
			if math.Abs(s.FreqHz[k]-d.Sweep.FreqHz[k]) > 1e-6 {
				t.Fatalf("%s point %d: frequency %g, model %g", d.Name, k, s.FreqHz[k], d.Sweep.FreqHz[k])
			}
		}
		for n := range s.Data {
			if cmplx.Abs(s.Data[n]-d.Sweep.Data[n]) > 1e-9 {
				t.Fatalf("%s value %d: %v, model %v (remake with: go run . demo testdata/demo)", d.Name, n, s.Data[n], d.Sweep.Data[n])
			}
		}
		if len(got.Noise) != len(d.Noise) {
			t.Fatalf("%s: file has %d noise points, model %d (remake with: go run . demo testdata/demo)", d.Name, len(got.Noise), len(d.Noise))
		}
		for k, p := range got.Noise {
			m := d.Noise[k]
			if math.Abs(p.FreqHz-m.FreqHz) > 1e-6 || math.Abs(p.NFminDB-m.NFminDB) > 1e-9 || math.Abs(p.GammaOptMag-m.GammaOptMag) > 1e-9 ||
				math.Abs(p.GammaOptDeg-m.GammaOptDeg) > 1e-7 || math.Abs(p.RnOhm-m.RnOhm) > 1e-8 {
				t.Fatalf("%s noise point %d: %+v, model %+v (remake with: go run . demo testdata/demo)", d.Name, k, p, m)
			}
		}
	}
}

// The noise parameters the model writes describe its noise: at random
// source admittances (seeded) the noise factor found by a direct nodal
// solve equals Fmin + (Rn/Gs)·|Ys − Yopt|², and through amp's Γ form the
// same. They also obey the physical bounds Fmin ≥ 1 and
// Fmin − 1 ≤ 4·Rn·Gopt (the latter from Gu ≥ 0, Rothe and Dahlke 1956,
// from memory).
func TestTransistorNoiseParameters(t *testing.T) {
	t.Parallel()
	rnd := rand.New(rand.NewPCG(18, 40))
	for _, f := range []float64{1e9, 2.4e9, 4.5e9, 6e9} {
		c := lnaFET.circuit(f)
		_, np, ok := c.twoPort(f, 50)
		if !ok {
			t.Fatal("singular")
		}
		fmin := math.Pow(10, np.NFminDB/10)
		gopt := amp.GammaOpt(np)
		yopt := rfmath.YFromGamma(gopt, 50)
		if fmin < 1 || fmin-1 > 4*np.RnOhm*real(yopt)*(1+1e-12) {
			t.Errorf("%g Hz: Fmin %g, Rn %g, Gopt %g break the bounds", f, fmin, np.RnOhm, real(yopt))
		}
		for range 20 {
			gs := cmplx.Rect(0.9*math.Sqrt(rnd.Float64()), 2*math.Pi*rnd.Float64())
			ys := rfmath.YFromGamma(gs, 50)
			direct := noiseFactorDirect(t, c, ys)
			form := fmin + np.RnOhm/real(ys)*abs2(ys-yopt)
			if math.Abs(direct-form) > 1e-9*direct {
				t.Fatalf("%g Hz, Γs %v: direct F %.12g, from the noise parameters %.12g", f, gs, direct, form)
			}
			if got := amp.NoiseFigureDB(np, 50, gs); math.Abs(got-10*math.Log10(direct)) > 1e-9 {
				t.Fatalf("%g Hz, Γs %v: amp.NoiseFigureDB %.12g, direct %.12g dB", f, gs, got, 10*math.Log10(direct))
			}
		}
	}
}

// The noise engine on a passive network at T0: a matched 3 dB resistive T
// pad (series 8.54987 Ω, shunt 141.926 Ω, series 8.54987 Ω; REFERENCE-CHECKS
// §11) has NF = 3.000 dB from a 50 Ω source, its loss (Pozar, the noise
// chapter: a lossy network at T0 has F equal to its loss, from memory for
// the section), and for every source F = 1/G_A (the same fact for any
// passive network at T0, common practice), with G_A from amp.AvailableGain.
func TestNoiseEnginePassivePad(t *testing.T) {
	t.Parallel()
	const rs, rp = 8.54987, 141.926
	// Nodes: 1 and 2 the ports, 3 the middle.
	c := circuit{nodes: 3, branches: []branch{
		{1, 3, 1 / complex(rs, 0), t0K},
		{3, 0, 1 / complex(rp, 0), t0K},
		{3, 2, 1 / complex(rs, 0), t0K},
	}}
	s, np, ok := c.twoPort(1e9, 50)
	if !ok {
		t.Fatal("singular")
	}
	if math.Abs(20*math.Log10(cmplx.Abs(s[2]))+3) > 1e-4 || cmplx.Abs(s[0]) > 1e-5 {
		t.Fatalf("pad S11 %v, S21 %v: not a matched 3 dB pad", s[0], s[2])
	}
	if nf := amp.NoiseFigureDB(np, 50, 0); math.Abs(nf-10*math.Log10(1/abs2(s[2]))) > 1e-9 || math.Abs(nf-3) > 1e-4 {
		t.Errorf("NF from 50 Ω = %.6f dB, want the loss, 3.000 dB", nf)
	}
	rnd := rand.New(rand.NewPCG(18, 41))
	for range 50 {
		gs := cmplx.Rect(0.95*math.Sqrt(rnd.Float64()), 2*math.Pi*rnd.Float64())
		f := math.Pow(10, amp.NoiseFigureDB(np, 50, gs)/10)
		if ga := amp.AvailableGain(s, gs); math.Abs(f*ga-1) > 1e-9 {
			t.Fatalf("Γs %v: F·G_A = %.12g, want 1", gs, f*ga)
		}
	}
}

// The demo transistor shows what the demo is for: read back from its
// committed file, it is potentially unstable at low frequency (μ < 1 from
// 0.5 to 1.5 GHz), unconditionally stable across the LNA band and above
// (one stable range, starting between 1.6 and 1.9 GHz and running to the
// top of the sweep at 6 GHz), has MAG between 14 and 17 dB and NFmin below
// 1 dB in the band, and no noise data below 1 GHz (so matchbench refuses
// to extrapolate there).
func TestTransistorScenario(t *testing.T) {
	t.Parallel()
	tf, err := touchstone.ReadFile(filepath.Join("..", "..", "testdata", "demo", "wristtag-lna-transistor.s2p"), touchstone.DefaultLimits)
	if err != nil {
		t.Fatal(err)
	}
	sw := tf.Sweep
	st := amp.StabilityTo(nil, sw)
	for k, f := range sw.FreqHz {
		if f <= 1.5e9 && st[k].Unconditional {
			t.Errorf("%g Hz: μ = %g; the demo wants a potentially unstable device here", f, st[k].Mu)
		}
	}
	r := amp.UnconditionalRanges(sw.FreqHz, st)
	if len(r) != 1 || r[0][0] < 1.6e9 || r[0][0] > 1.9e9 || r[0][1] != 6e9 {
		t.Fatalf("unconditionally stable ranges %v, want one from 1.6–1.9 GHz to 6 GHz", r)
	}
	for _, f := range []float64{LNABand.LoHz, 2.44e9, LNABand.HiHz} {
		s, err := amp.SAt(sw, f)
		if err != nil {
			t.Fatal(err)
		}
		m, err := amp.MAG(s)
		if err != nil || amp.DB(m) < 14 || amp.DB(m) > 17 {
			t.Errorf("%g Hz: MAG %g dB, %v", f, amp.DB(m), err)
		}
		np, err := amp.NoiseAt(tf.Noise, f)
		if err != nil || np.NFminDB > 1 || np.NFminDB < 0.5 {
			t.Errorf("%g Hz: NFmin %g dB, %v", f, np.NFminDB, err)
		}
	}
	var re *amp.NoiseRangeError
	if _, err := amp.NoiseAt(tf.Noise, 0.75e9); !errors.As(err, &re) {
		t.Errorf("0.75 GHz: %v, want a NoiseRangeError", err)
	}
}
