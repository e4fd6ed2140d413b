package amp

import (
	"errors"
	"math"
	"math/cmplx"
	"math/rand/v2"
	"path/filepath"
	"strings"
	"testing"

	"matchbench/rfmath"
	"matchbench/rfmath/touchstone"
)

// pozarNoise is the noise data of the low-noise design example in Pozar's
// amplifier chapter (from memory): Fmin = 1.6 dB, Γopt = 0.62∠100°,
// Rn = 20 Ω, Z0 = 50 Ω.
var pozarNoise = touchstone.NoisePoint{FreqHz: 4e9, NFminDB: 1.6, GammaOptMag: 0.62, GammaOptDeg: 100, RnOhm: 20}

// TestPozarNoiseCircle: the 2 dB circle. C values: the closed form, and
// again by testdata/pozar_check.py, which finds points with F = 2 dB by
// bisection along rays from Γopt and fits the circle through three. Book
// values (from memory): C_F = 0.56∠100°, R_F = 0.24.
func TestPozarNoiseCircle(t *testing.T) {
	t.Parallel()
	c, err := NoiseCircle(pozarNoise, 50, 2)
	if err != nil {
		t.Fatal(err)
	}
	checkC(t, "C_F", c.Center, complex(-0.097706124, 0.554118964), 1e-8)
	checkF(t, "R_F", c.Radius, 0.245383446, 1e-8)
	checkPolar(t, "C_F", c.Center, 0.56, 100, 0.005, 0.5)
	checkF(t, "R_F (book)", c.Radius, 0.24, 0.006)
	checkF(t, "NF at Γopt", NoiseFigureDB(pozarNoise, 50, GammaOpt(pozarNoise)), 1.6, 1e-12)
}

// The noise figure of a series resistor R ahead of a noiseless amplifier,
// in a 50 Ω system: F = 1 + R/Rs (common practice; the thermal noise of R
// against that of the source), so with R = Rs = 50 Ω, F = 2 = 3.0103 dB.
// Its noise parameters are Rn = R, Γopt = 1 (an open source: no current
// through R) and Fmin = 1 (C from the definitions).
func TestNoiseFigureSeriesResistor(t *testing.T) {
	t.Parallel()
	p := touchstone.NoisePoint{NFminDB: 0, GammaOptMag: 1, GammaOptDeg: 0, RnOhm: 50}
	checkF(t, "NF, 50 Ω source", NoiseFigureDB(p, 50, 0), 10*math.Log10(2), 1e-12)
	// A 25 Ω source (Γs = −1/3): F = 1 + 50/25 = 3.
	checkF(t, "NF, 25 Ω source", NoiseFigureDB(p, 50, -1.0/3), 10*math.Log10(3), 1e-12)
}

// Points on noise circles have the circle's noise figure, for random noise
// parameters (seeded) and figures up to 3 dB above NFmin; every circle lies
// inside the unit circle.
func TestNoiseCirclesSampled(t *testing.T) {
	t.Parallel()
	rnd := rand.New(rand.NewPCG(18, 20))
	for range 500 {
		p := touchstone.NoisePoint{
			NFminDB:     3 * rnd.Float64(),
			GammaOptMag: 0.95 * rnd.Float64(),
			GammaOptDeg: 360*rnd.Float64() - 180,
			RnOhm:       1 + 99*rnd.Float64(),
		}
		nf := p.NFminDB + 3*rnd.Float64()
		c, err := NoiseCircle(p, 50, nf)
		if err != nil {
			t.Fatal(err)
		}
		if cmplx.Abs(c.Center)+c.Radius >= 1 {
			t.Fatalf("%+v: circle %+v leaves the unit circle", p, c)
		}
		for k := range 12 {
			g := c.Point(2 * math.Pi * float64(k) / 12)
			checkF(t, "NF on the circle", NoiseFigureDB(p, 50, g), nf, 1e-9)
		}
		// Inside is quieter, outside noisier.
		if NoiseFigureDB(p, 50, c.Center) > nf || NoiseFigureDB(p, 50, c.Center+complex(c.Radius*1.01, 0)) < nf {
			t.Fatalf("%+v: the circle of %g dB does not separate quieter from noisier sources", p, nf)
		}
	}
}

func TestNoiseCircleEdges(t *testing.T) {
	t.Parallel()
	c, err := NoiseCircle(pozarNoise, 50, 1.6)
	if err != nil || c.Radius != 0 || c.Center != GammaOpt(pozarNoise) {
		t.Errorf("at NFmin: %+v, %v; want the point Γopt", c, err)
	}
	_, err = NoiseCircle(pozarNoise, 50, 1.5)
	var ne *NoiseCircleError
	if !errors.As(err, &ne) || !strings.Contains(err.Error(), "below NFmin = 1.6 dB") {
		t.Errorf("below NFmin: %v", err)
	}
	p := pozarNoise
	p.RnOhm = 0
	if _, err := NoiseCircle(p, 50, 2); !errors.As(err, &ne) || !strings.Contains(err.Error(), "Rn is 0 Ω") {
		t.Errorf("Rn = 0: %v", err)
	}
	if nf := NoiseFigureDB(pozarNoise, 50, 1); !math.IsInf(nf, 1) {
		t.Errorf("|Γs| = 1: NF %g, want +∞", nf)
	}
}

// NoiseAt on the reader's fixtures. ts15_noise.s2p (version 1, R 50) has
// noise lines at 70, 75 and 85 GHz with Rn normalised: 0.4, 0.5, 0.6, so
// the reader gives 20, 25, 30 Ω; ts20_noise_v2.ts (version 2.0) gives Rn in
// ohms: 12.5 at 0.5 GHz and 15 at 3 GHz. Between points: NFmin and Rn
// linear in frequency, Γopt linear in the complex plane (C: at 72.5 GHz,
// halfway between 1.2 dB, 0.3∠45°, 20 Ω and 1.3 dB, 0.25∠60°, 25 Ω).
func TestNoiseAtFixtures(t *testing.T) {
	t.Parallel()
	read := func(name string) []touchstone.NoisePoint {
		f, err := touchstone.ReadFile(filepath.Join("..", "..", "testdata", "touchstone", name), touchstone.DefaultLimits)
		if err != nil {
			t.Fatal(err)
		}
		return f.Noise
	}
	v1 := read("ts15_noise.s2p")
	p, err := NoiseAt(v1, 70e9)
	if err != nil || p != v1[0] {
		t.Errorf("at 70 GHz: %+v, %v; want the first point %+v", p, err, v1[0])
	}
	checkF(t, "Rn at 70 GHz (v1, normalised 0.4 × 50 Ω)", p.RnOhm, 20, 1e-12)
	p, err = NoiseAt(v1, 72.5e9)
	if err != nil {
		t.Fatal(err)
	}
	checkF(t, "NFmin at 72.5 GHz", p.NFminDB, 1.25, 1e-12)
	checkF(t, "Rn at 72.5 GHz", p.RnOhm, 22.5, 1e-12)
	checkC(t, "Γopt at 72.5 GHz", GammaOpt(p), (polar(0.3, 45)+polar(0.25, 60))/2, 1e-12)
	p, err = NoiseAt(v1, 85e9)
	if err != nil || p.RnOhm != 30 {
		t.Errorf("at 85 GHz: %+v, %v", p, err)
	}
	for _, f := range []float64{69.99e9, 85.01e9, math.NaN()} {
		_, err := NoiseAt(v1, f)
		var re *NoiseRangeError
		if !errors.As(err, &re) || !errors.Is(err, rfmath.ErrOutOfRange) || re.LoHz != 70e9 || re.HiHz != 85e9 {
			t.Errorf("%g Hz: error %v, want a NoiseRangeError for 70–85 GHz", f, err)
		}
	}
	_, err = NoiseAt(v1, 90e9)
	if want := "amp: 90 GHz is outside the noise data (70 GHz to 85 GHz); noise parameters are not extrapolated"; err == nil || err.Error() != want {
		t.Errorf("error %q, want %q", err, want)
	}

	v2 := read("ts20_noise_v2.ts")
	p, err = NoiseAt(v2, 1.75e9)
	if err != nil {
		t.Fatal(err)
	}
	checkF(t, "Rn at 1.75 GHz (v2, ohms)", p.RnOhm, 13.75, 1e-12)

	if _, err := NoiseAt(nil, 1e9); !errors.Is(err, ErrNoNoise) {
		t.Errorf("no points: %v", err)
	}
	if _, err := NoiseAt([]touchstone.NoisePoint{{FreqHz: 2e9}, {FreqHz: 1e9}}, 1.5e9); err == nil || !strings.Contains(err.Error(), "do not increase at point 2") {
		t.Errorf("decreasing points: %v", err)
	}
	if _, err := NoiseAt(v2[:1], 1e9); err == nil || !strings.Contains(err.Error(), "given only at 500 MHz") {
		t.Errorf("one point: %v", err)
	}
}
