package amp

import (
	"errors"
	"math"
	"math/cmplx"
	"math/rand/v2"
	"strings"
	"testing"

	"matchbench/rfmath"
)

// pozarConjugate is the GaAs FET of the conjugate-matched design worked in
// Pozar's amplifier chapter (4 GHz, 50 Ω; inputs from memory).
var pozarConjugate = [4]complex128{polar(0.72, -116), polar(0.03, 57), polar(2.60, 76), polar(0.73, -54)}

// TestPozarConjugateMatchExample: C values from the closed forms and again
// from testdata/pozar_check.py, which iterates Γs = Γin(ΓL)*,
// ΓL = Γout(Γs)* to its fixed point and checks that G_T has its maximum
// there. Book values (from memory): Δ = 0.488∠−162°, K = 1.195,
// Γs = 0.872∠123°, ΓL = 0.876∠61°, G_T,max = 16.7 dB.
func TestPozarConjugateMatchExample(t *testing.T) {
	t.Parallel()
	s := pozarConjugate
	st := StabilityOf(s)
	checkC(t, "Δ", st.Delta, complex(-0.464419083, -0.148315071), 1e-8)
	checkF(t, "K", st.K, 1.194759, 1e-6)
	checkPolar(t, "Δ", st.Delta, 0.488, -162, 0.001, 0.5)
	checkF(t, "K (book)", st.K, 1.195, 0.0005)
	gs, gl, err := ConjugateMatch(s)
	if err != nil {
		t.Fatal(err)
	}
	checkC(t, "Γs", gs, complex(-0.479978126, 0.727726293), 1e-8)
	checkC(t, "ΓL", gl, complex(0.424484442, 0.766614955), 1e-8)
	checkPolar(t, "Γs", gs, 0.872, 123, 0.001, 0.5)
	checkPolar(t, "ΓL", gl, 0.876, 61, 0.001, 0.5)
	m, err := MAG(s)
	if err != nil {
		t.Fatal(err)
	}
	checkF(t, "MAG (dB)", DB(m), 16.710196, 1e-6)
	checkF(t, "G_T at the match (dB)", DB(TransducerGain(s, gs, gl)), 16.710196, 1e-6)
	if math.Abs(DB(m)-16.7) > 0.05 {
		t.Errorf("MAG %.3f dB; the book (from memory) prints 16.7 dB", DB(m))
	}
}

// On random unconditionally stable devices (seeded), the conjugate match
// is one: Γin(ΓL) = Γs*, Γout(Γs) = ΓL*, both inside the unit circle, and
// G_T there equals MAG, as do G_A(Γs) and G_P(ΓL). MAG also equals
// Rollett's form |S21/S12|·(K − √(K² − 1)) and lies below MSG.
func TestConjugateMatchProperties(t *testing.T) {
	t.Parallel()
	rnd := rand.New(rand.NewPCG(18, 10))
	done := 0
	for n := 0; done < 500 && n < 100000; n++ {
		s := random2Port(rnd, 0.95)
		st := StabilityOf(s)
		if !st.Unconditional || st.K < 1+1e-6 {
			continue
		}
		done++
		gs, gl, err := ConjugateMatch(s)
		if err != nil {
			t.Fatal(err)
		}
		if cmplx.Abs(gs) >= 1 || cmplx.Abs(gl) >= 1 {
			t.Fatalf("device %v: |Γs| %g, |ΓL| %g", s, cmplx.Abs(gs), cmplx.Abs(gl))
		}
		checkC(t, "Γin(ΓL)", GammaIn(s, gl), cmplx.Conj(gs), 1e-9)
		checkC(t, "Γout(Γs)", GammaOut(s, gs), cmplx.Conj(gl), 1e-9)
		m, err := MAG(s)
		if err != nil {
			t.Fatal(err)
		}
		rollett := MSG(s) * (st.K - math.Sqrt(st.K*st.K-1))
		checkF(t, "MAG vs Rollett's form", m, rollett, 1e-6)
		checkF(t, "G_T at the match", TransducerGain(s, gs, gl), m, 1e-9)
		checkF(t, "G_A at Γs", AvailableGain(s, gs), m, 1e-9)
		checkF(t, "G_P at ΓL", OperatingGain(s, gl), m, 1e-9)
		if m > MSG(s) {
			t.Fatalf("device %v: MAG %g above MSG %g", s, m, MSG(s))
		}
		// No passive termination nearby does better (brute force).
		for range 20 {
			ds, dl := randomDisc(rnd, 0.01), randomDisc(rnd, 0.01)
			if cmplx.Abs(gs+ds) < 1 && cmplx.Abs(gl+dl) < 1 && TransducerGain(s, gs+ds, gl+dl) > m*(1+1e-12) {
				t.Fatalf("device %v: G_T(%v, %v) above MAG", s, gs+ds, gl+dl)
			}
		}
	}
	if done < 500 {
		t.Fatalf("only %d unconditionally stable devices drawn", done)
	}
}

// A device that is not unconditionally stable has no conjugate match and
// no MAG, and the error says which test failed: K ≤ 1 for Pozar's
// stability example, |Δ| ≥ 1 for S11 = S22 = 0 with |S12·S21| = 1.5 (K =
// (1 + 1.5²)/3 = 1.0833 > 1, |Δ| = 1.5; a case built for the test).
func TestConjugateMatchRefused(t *testing.T) {
	t.Parallel()
	for _, tc := range []struct {
		name   string
		s      [4]complex128
		reason string
	}{
		{"Pozar stability example", pozarStability, "K = 0.6071 ≤ 1"},
		{"|Δ| > 1", [4]complex128{0, 0.5, 3, 0}, "|Δ| = 1.5 ≥ 1"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			_, _, err := ConjugateMatch(tc.s)
			var se *StabilityError
			if !errors.As(err, &se) || se.Reason() != tc.reason || !strings.Contains(err.Error(), "simultaneous conjugate match") {
				t.Fatalf("error %v, want a StabilityError with reason %q", err, tc.reason)
			}
			if _, err := MAG(tc.s); !errors.As(err, &se) || se.What != "MAG" {
				t.Errorf("MAG error %v", err)
			}
			if g, isMAG := MaxGain(tc.s); isMAG || g != MSG(tc.s) {
				t.Errorf("MaxGain = %g, %v; want MSG", g, isMAG)
			}
		})
	}
}

// pozarUnilateral is the device of the unilateral constant-gain-circle
// example in Pozar's amplifier chapter (4 GHz, S12 = 0; inputs from
// memory).
var pozarUnilateral = [4]complex128{polar(0.75, -120), 0, polar(2.5, 80), polar(0.6, -70)}

// TestPozarUnilateralGainCircles: the bilateral circles of this package,
// for S12 = 0, must be the unilateral circles of the example. The source
// circle of G_S is the available-gain circle of G_A = G_S·|S21|²/(1 −
// |S22|²); the load circle of G_L is the operating-gain circle of
// G_P = G_L·|S21|²/(1 − |S11|²). C values: testdata/pozar_check.py, by
// bisection on G_S(Γs) = (1 − |Γs|²)/|1 − S11·Γs|² and G_L likewise. Book
// values (from memory): G_S = 3 dB: 0.706∠120°, R 0.166; 2 dB: 0.627∠120°,
// R 0.294; G_L = 0 dB: 0.440∠70°, R 0.440; 1 dB: 0.520∠70°, R 0.303.
func TestPozarUnilateralGainCircles(t *testing.T) {
	t.Parallel()
	s := pozarUnilateral
	g0DB := DB(abs2(s[2]))
	glMaxDB, gsMaxDB := -DB(1-abs2(s[3])), -DB(1-abs2(s[0]))
	checkF(t, "G0", g0DB, 7.958800, 1e-6)
	checkF(t, "G_S,max", gsMaxDB, 3.590219, 1e-6)
	checkF(t, "G_L,max", glMaxDB, 1.938200, 1e-6)
	for _, tc := range []struct {
		name      string
		source    bool
		db        float64
		center    complex128
		r         float64
		bm, bdeg  float64
		br, btolR float64
	}{
		{"G_S 3 dB", true, 3, complex(-0.352547241, 0.610629734), 0.167962467, 0.706, 120, 0.166, 0.002},
		{"G_S 2 dB", true, 2, complex(-0.314213157, 0.544233152), 0.292742454, 0.627, 120, 0.294, 0.0015},
		{"G_L 0 dB", false, 0, complex(0.150891240, 0.414570274), 0.441176471, 0.440, 70, 0.440, 0.0015},
		{"G_L 1 dB", false, 1, complex(0.177776199, 0.488436093), 0.303314642, 0.520, 70, 0.303, 0.0005},
	} {
		var c Circle
		var err error
		if tc.source {
			c, err = AvailableGainCircle(s, tc.db+g0DB+glMaxDB)
		} else {
			c, err = OperatingGainCircle(s, tc.db+g0DB+gsMaxDB)
		}
		if err != nil {
			t.Fatalf("%s: %v", tc.name, err)
		}
		checkC(t, tc.name+" centre", c.Center, tc.center, 1e-8)
		checkF(t, tc.name+" radius", c.Radius, tc.r, 1e-8)
		checkPolar(t, tc.name+" centre", c.Center, tc.bm, tc.bdeg, 0.0015, 0.5)
		checkF(t, tc.name+" radius (book)", c.Radius, tc.br, tc.btolR)
	}
}

// For random unilateral devices (seeded) the circles are the textbook
// unilateral forms (Pozar, the amplifier chapter's unilateral design):
// with g_s = G_S·(1 − |S11|²),
//
//	C_S = g_s·S11*/(1 − (1 − g_s)·|S11|²),  R_S = √(1 − g_s)·(1 − |S11|²)/(1 − (1 − g_s)·|S11|²)
//
// and the same for the load with S22.
func TestUnilateralCirclesReduce(t *testing.T) {
	t.Parallel()
	rnd := rand.New(rand.NewPCG(18, 11))
	uni := func(sii complex128, frac float64) (complex128, float64) {
		m2 := abs2(sii)
		den := 1 - (1-frac)*m2
		return complex(frac, 0) * cmplx.Conj(sii) / complex(den, 0), math.Sqrt(1-frac) * (1 - m2) / den
	}
	for range 300 {
		s := random2Port(rnd, 0.95)
		s[1] = 0
		frac := rnd.Float64() // G_S/G_S,max
		g0, gsMax, glMax := abs2(s[2]), 1/(1-abs2(s[0])), 1/(1-abs2(s[3]))
		c, err := AvailableGainCircle(s, DB(g0*glMax*gsMax*frac))
		if err != nil {
			t.Fatal(err)
		}
		wc, wr := uni(s[0], frac)
		checkC(t, "source centre", c.Center, wc, 1e-9)
		checkF(t, "source radius", c.Radius, wr, 1e-9)
		c, err = OperatingGainCircle(s, DB(g0*gsMax*glMax*frac))
		if err != nil {
			t.Fatal(err)
		}
		wc, wr = uni(s[3], frac)
		checkC(t, "load centre", c.Center, wc, 1e-9)
		checkF(t, "load radius", c.Radius, wr, 1e-9)
	}
}

// Points on a gain circle have the circle's gain, on random devices of
// every kind (seeded) and gains from 15 dB below the maximum to the
// maximum.
func TestGainCirclesSampled(t *testing.T) {
	t.Parallel()
	rnd := rand.New(rand.NewPCG(18, 12))
	for n := range 400 {
		s := random2Port(rnd, 1.05)
		top, _ := MaxGain(s)
		if math.IsInf(top, 0) {
			continue
		}
		gainDB := DB(top) - 15*rnd.Float64()
		for _, c := range []struct {
			name string
			f    func(s [4]complex128, db float64) (Circle, error)
			gain func(g complex128) float64
		}{
			{"available", AvailableGainCircle, func(g complex128) float64 { return AvailableGain(s, g) }},
			{"operating", OperatingGainCircle, func(g complex128) float64 { return OperatingGain(s, g) }},
		} {
			circ, err := c.f(s, gainDB)
			var ge *GainCircleError
			if errors.As(err, &ge) {
				continue // K > 1, |Δ| > 1 devices have gains with no circle
			}
			if err != nil {
				t.Fatal(err)
			}
			for k := range 12 {
				g := circ.Point(2*math.Pi*float64(k)/12 + 0.1)
				if got := c.gain(g); !near(DB(got), gainDB, 1e-7*math.Max(1, cmplx.Abs(g))) {
					t.Fatalf("device %d %v, %s circle %+v of %.6g dB: %.9g dB at %v", n, s, c.name, circ, gainDB, DB(got), g)
				}
			}
		}
	}
}

// At MAG each circle shrinks to the conjugate-match termination, and
// above it there is none.
func TestGainCircleAtAndAboveMAG(t *testing.T) {
	t.Parallel()
	s := pozarConjugate
	m, _ := MAG(s)
	gs, gl, _ := ConjugateMatch(s)
	c, err := AvailableGainCircle(s, DB(m))
	if err != nil || c.Radius > 1e-5 {
		t.Fatalf("circle at MAG %+v, %v; want radius 0", c, err)
	}
	checkC(t, "available circle at MAG", c.Center, gs, 1e-6)
	c, err = OperatingGainCircle(s, DB(m))
	if err != nil || c.Radius > 1e-5 {
		t.Fatalf("circle at MAG %+v, %v", c, err)
	}
	checkC(t, "operating circle at MAG", c.Center, gl, 1e-6)
	_, err = AvailableGainCircle(s, 17)
	var ge *GainCircleError
	if !errors.As(err, &ge) || ge.Plane != "source" || !strings.Contains(err.Error(), "above MAG = 16.71 dB") {
		t.Errorf("17 dB: error %v", err)
	}
	if _, err := OperatingGainCircle([4]complex128{0.5, 0.1, 0, 0.5}, 3); !errors.Is(err, ErrNoTransmission) {
		t.Errorf("S21 = 0: error %v", err)
	}
}

// pozarLowNoise is the GaAs FET of the low-noise design example in Pozar's
// amplifier chapter (4 GHz; inputs from memory).
var pozarLowNoise = [4]complex128{polar(0.6, -60), polar(0.05, 26), polar(1.9, 81), polar(0.5, -60)}

// The 8 dB available- and operating-gain circles of the low-noise example's
// device. C values only (the book's gain circles are not checked here):
// testdata/pozar_check.py finds points with G_A = 8 dB (G_P = 8 dB) by
// bisection along rays from the conjugate match.
func TestLowNoiseExampleGainCircles(t *testing.T) {
	t.Parallel()
	s := pozarLowNoise
	m, err := MAG(s)
	if err != nil {
		t.Fatal(err)
	}
	checkF(t, "K", RollettK(s), 2.778415, 1e-6)
	checkF(t, "MAG", DB(m), 8.497581, 1e-6)
	checkF(t, "G_A(Γopt)", DB(AvailableGain(s, polar(0.62, 100))), 7.329582, 1e-6)
	c, err := AvailableGainCircle(s, 8)
	if err != nil {
		t.Fatal(err)
	}
	checkC(t, "G_A 8 dB centre", c.Center, complex(0.225014764, 0.477214268), 1e-8)
	checkF(t, "G_A 8 dB radius", c.Radius, 0.233319500, 1e-8)
	c, err = OperatingGainCircle(s, 8)
	if err != nil {
		t.Fatal(err)
	}
	checkC(t, "G_P 8 dB centre", c.Center, complex(0.152665374, 0.386272373), 1e-8)
	checkF(t, "G_P 8 dB radius", c.Radius, 0.270828068, 1e-8)
}

// The gains against circuit theory: the 2-port as its ABCD matrix
// (rfmath.SToABCD) between a source of EMF 1 V and impedance Zs and a load
// ZL. With peak phasors, P_avs = 1/(8·Re Zs), P_L = ½·|I2|²·Re ZL,
// P_in = ½·Re(V1·I1*), and the power available at port 2 is
// |V_th|²/(8·Re Z_th) of its Thévenin equivalent (REFERENCE-CHECKS LS-1,
// Pozar's definitions of the gains). Then G_T = P_L/P_avs, G_P = P_L/P_in,
// G_A = P_avn/P_avs, on random devices and passive terminations (seeded),
// with different references on the two ports.
func TestGainsAgainstCircuit(t *testing.T) {
	t.Parallel()
	rnd := rand.New(rand.NewPCG(18, 13))
	z01, z02 := 50.0, 25.0
	for range 300 {
		s := random2Port(rnd, 0.95)
		gs, gl := randomDisc(rnd, 0.9), randomDisc(rnd, 0.9)
		zs := rfmath.ZFromGamma(gs, complex(z01, 0))
		zl := rfmath.ZFromGamma(gl, complex(z02, 0))
		a := rfmath.SToABCD(s, z01, z02)
		// V1 = A·V2 + B·I2, I1 = C·V2 + D·I2, V2 = ZL·I2, 1 = Zs·I1 + V1.
		i2 := 1 / (a[0]*zl + a[1] + zs*(a[2]*zl+a[3]))
		v2 := zl * i2
		v1, i1 := a[0]*v2+a[1]*i2, a[2]*v2+a[3]*i2
		pavs := 1 / (8 * real(zs))
		pl := 0.5 * abs2(i2) * real(zl)
		pin := 0.5 * real(v1*cmplx.Conj(i1))
		// Thévenin at port 2: open-circuit voltage (I2 = 0) and the
		// impedance looking back, Zout = (D·Zs + B)/(C·Zs + A).
		vth := 1 / (a[0] + zs*a[2])
		zth := (a[3]*zs + a[1]) / (a[2]*zs + a[0])
		pavn := abs2(vth) / (8 * real(zth))
		checkF(t, "G_T", TransducerGain(s, gs, gl), pl/pavs, 1e-9)
		checkF(t, "G_P", OperatingGain(s, gl), pl/pin, 1e-9)
		checkF(t, "G_A", AvailableGain(s, gs), pavn/pavs, 1e-9)
		checkC(t, "Γin", GammaIn(s, gl), rfmath.GammaFromZ(v1/i1, complex(z01, 0)), 1e-9)
		checkC(t, "Γout", GammaOut(s, gs), rfmath.GammaFromZ(zth, complex(z02, 0)), 1e-9)
	}
}

// The unilateral figure of merit bounds G_T/G_TU at Γs = S11*, ΓL = S22*,
// where G_T/G_TU = 1/|1 − X|² with |X| = U; turning the phase of S21
// moves X round its circle, and the bounds are reached at X = ±U (C). On
// random devices (seeded) every phase stays within the bounds and the
// extremes over 3600 phases meet them to 1e-5.
func TestUnilateralBounds(t *testing.T) {
	t.Parallel()
	rnd := rand.New(rand.NewPCG(18, 14))
	for range 50 {
		s := random2Port(rnd, 0.9)
		u := UnilateralFigure(s)
		if u >= 0.9 {
			continue
		}
		lo, hi := UnilateralBounds(u)
		minR, maxR := math.Inf(1), 0.0
		for k := range 3600 {
			sk := s
			sk[2] = s[2] * cmplx.Rect(1, 2*math.Pi*float64(k)/3600)
			gtu := UnilateralMaxGain(sk)
			r := TransducerGain(sk, cmplx.Conj(s[0]), cmplx.Conj(s[3])) / gtu
			if r < lo*(1-1e-12) || r > hi*(1+1e-12) {
				t.Fatalf("device %v: G_T/G_TU = %g outside [%g, %g]", sk, r, lo, hi)
			}
			minR, maxR = math.Min(minR, r), math.Max(maxR, r)
		}
		if math.Abs(minR/lo-1) > 1e-5 || math.Abs(maxR/hi-1) > 1e-5 {
			t.Fatalf("U = %g: extremes %g, %g; bounds %g, %g", u, minR, maxR, lo, hi)
		}
	}
	if _, hi := UnilateralBounds(1); !math.IsInf(hi, 1) {
		t.Errorf("U = 1: upper bound %g, want +∞", hi)
	}
}

// MSG and K of a unilateral device are infinite, MAG is the unilateral
// maximum G_TU,max = |S21|²/((1 − |S11|²)(1 − |S22|²)) (Pozar's unilateral
// example: 7.9588 + 3.5902 + 1.9382 = 13.4872 dB, C).
func TestUnilateralMAG(t *testing.T) {
	t.Parallel()
	s := pozarUnilateral
	m, err := MAG(s)
	if err != nil {
		t.Fatal(err)
	}
	checkF(t, "MAG", DB(m), 7.958800+3.590219+1.938200, 1e-5)
	checkF(t, "G_TU,max", UnilateralMaxGain(s), m, 1e-12)
	if !math.IsInf(MSG(s), 1) {
		t.Errorf("MSG %g, want +∞", MSG(s))
	}
	gs, gl, err := ConjugateMatch(s)
	if err != nil {
		t.Fatal(err)
	}
	checkC(t, "Γs", gs, cmplx.Conj(s[0]), 1e-12)
	checkC(t, "ΓL", gl, cmplx.Conj(s[3]), 1e-12)
}
