package amp

import (
	"errors"
	"math"
	"math/cmplx"
	"math/rand/v2"
	"testing"

	"matchbench/rfmath"
)

// pozarStability is the transistor of the stability-circle worked example
// in Pozar's Microwave Engineering amplifier chapter (a bipolar device at
// 1.9 GHz, 50 Ω; inputs from memory).
var pozarStability = [4]complex128{polar(0.894, -60.6), polar(0.020, 62.4), polar(3.122, 123.6), polar(0.781, -27.6)}

// TestPozarStabilityExample checks K, |Δ| and both stability circles.
// C values: the closed forms, and again by testdata/pozar_check.py, which
// finds points with |Γin| = 1 (|Γout| = 1) by bisection and fits the circle
// through three of them (agreement to 1e-6 at least). Book values (from
// memory): |Δ| = 0.696, K = 0.607, C_L = 1.361∠47°, R_L = 0.50,
// C_S = 1.132∠68°, R_S = 0.199.
func TestPozarStabilityExample(t *testing.T) {
	t.Parallel()
	s := pozarStability
	st := StabilityOf(s)
	checkF(t, "|Δ|", st.DeltaMag, 0.696431, 1e-6)
	checkF(t, "K", st.K, 0.607132, 1e-6)
	if math.Abs(st.DeltaMag-0.696) > 0.0005 || math.Abs(st.K-0.607) > 0.0005 {
		t.Errorf("|Δ| %.4f, K %.4f: the book (from memory) prints 0.696 and 0.607", st.DeltaMag, st.K)
	}
	if st.Unconditional || st.Mu > 1 {
		t.Errorf("μ = %g: the example is potentially unstable", st.Mu)
	}

	out := OutputStabilityCircle(s)
	checkC(t, "C_L", out.Center, complex(0.934684505, 0.991422497), 1e-6)
	checkF(t, "R_L", out.Radius, 0.499738637, 1e-6)
	checkPolar(t, "C_L", out.Center, 1.361, 47, 0.002, 0.5)
	checkF(t, "R_L (book)", out.Radius, 0.50, 0.001)
	in := InputStabilityCircle(s)
	checkC(t, "C_S", in.Center, complex(0.415497268, 1.052682667), 1e-6)
	checkF(t, "R_S", in.Radius, 0.198714079, 1e-6)
	checkPolar(t, "C_S", in.Center, 1.132, 68, 0.001, 0.5)
	checkF(t, "R_S (book)", in.Radius, 0.199, 0.0005)

	// |S11|, |S22| < 1 and neither circle contains the centre of the chart:
	// the stable terminations lie outside both, and some passive ones are
	// unstable because both circles cut |Γ| = 1.
	for _, c := range []struct {
		name string
		c    StabilityCircle
	}{{"output", out}, {"input", in}} {
		if c.c.Stable != Outside || !c.c.IsStable(0) || c.c.DiscStable() {
			t.Errorf("%s circle: stable %v, centre stable %v, disc stable %v; want outside, true, false", c.name, c.c.Stable, c.c.IsStable(0), c.c.DiscStable())
		}
	}
}

// Points on the stability circles give |Γin| = 1 (load plane) and
// |Γout| = 1 (source plane), and the stable side agrees with |Γin| < 1 and
// |Γout| < 1 at random points (seeded), for random devices of every kind.
func TestStabilityCirclesSampled(t *testing.T) {
	t.Parallel()
	rnd := rand.New(rand.NewPCG(18, 1))
	for n := range 300 {
		s := random2Port(rnd, 1.3)
		for _, c := range []struct {
			name  string
			c     StabilityCircle
			other func(complex128) complex128
		}{
			{"output", OutputStabilityCircle(s), func(g complex128) complex128 { return GammaIn(s, g) }},
			{"input", InputStabilityCircle(s), func(g complex128) complex128 { return GammaOut(s, g) }},
		} {
			for k := range 16 {
				g := c.c.Point(2 * math.Pi * float64(k) / 16)
				if m := cmplx.Abs(c.other(g)); math.Abs(m-1) > 1e-8*math.Max(1, cmplx.Abs(g)) {
					t.Fatalf("device %d %v, %s circle %+v: |Γ| = %.12g at %v on it, want 1", n, s, c.name, c.c, m, g)
				}
			}
			for range 40 {
				g := randomDisc(rnd, 3)
				m := cmplx.Abs(c.other(g))
				if math.Abs(m-1) < 1e-6 {
					continue // too near the boundary to judge
				}
				if got, want := c.c.IsStable(g), m < 1; got != want {
					t.Fatalf("device %d %v, %s circle %+v: IsStable(%v) = %v but |Γ| = %g", n, s, c.name, c.c, g, got, m)
				}
			}
		}
	}
}

// Rollett's pair and Edwards–Sinsky's single tests agree: K > 1 and
// |Δ| < 1 ⇔ μ > 1 ⇔ μ′ > 1 (Edwards and Sinsky 1992), on random 2-ports
// (seeded) away from the boundary. The sample must contain both verdicts.
func TestStabilityTestsAgree(t *testing.T) {
	t.Parallel()
	rnd := rand.New(rand.NewPCG(18, 2))
	stable, unstable := 0, 0
	for n := range 20000 {
		s := random2Port(rnd, 1.1)
		st := StabilityOf(s)
		if math.Abs(st.K-1) < 1e-9 || math.Abs(st.DeltaMag-1) < 1e-9 || math.Abs(st.Mu-1) < 1e-9 || math.Abs(st.MuPrime-1) < 1e-9 {
			continue
		}
		rollett := st.K > 1 && st.DeltaMag < 1
		if rollett != (st.Mu > 1) || rollett != (st.MuPrime > 1) || rollett != st.Unconditional {
			t.Fatalf("device %d %v: K %g, |Δ| %g, μ %g, μ′ %g disagree", n, s, st.K, st.DeltaMag, st.Mu, st.MuPrime)
		}
		if rollett {
			stable++
		} else {
			unstable++
		}
	}
	if stable < 1000 || unstable < 1000 {
		t.Fatalf("%d stable, %d unstable devices: the sample does not test both sides", stable, unstable)
	}
}

// Unconditional stability means every passive source and load is stable:
// each stability circle leaves the unit disc on its stable side (the
// geometric meaning of μ, Edwards and Sinsky 1992), and a potentially
// unstable device has an unstable passive termination on one side.
func TestUnconditionalMeansDiscStable(t *testing.T) {
	t.Parallel()
	rnd := rand.New(rand.NewPCG(18, 3))
	for n := range 3000 {
		s := random2Port(rnd, 1.1)
		st := StabilityOf(s)
		if math.Abs(st.Mu-1) < 1e-6 {
			continue
		}
		in, out := InputStabilityCircle(s), OutputStabilityCircle(s)
		if got := in.DiscStable() && out.DiscStable(); got != st.Unconditional {
			t.Fatalf("device %d %v: μ = %g but disc stable input %v, output %v", n, s, st.Mu, in.DiscStable(), out.DiscStable())
		}
	}
}

// A unilateral device (S12 = 0): K = +∞, μ = 1/|S22|, μ′ = 1/|S11|, and
// each stability circle shrinks to the pole of the other port's reflection
// (1/S22 in the load plane, 1/S11 in the source plane) with every other
// termination stable.
func TestUnilateralStability(t *testing.T) {
	t.Parallel()
	s := [4]complex128{polar(0.75, -120), 0, polar(2.5, 80), polar(0.6, -70)}
	st := StabilityOf(s)
	if !math.IsInf(st.K, 1) || !st.Unconditional {
		t.Errorf("K = %g, unconditional %v; want +∞, true", st.K, st.Unconditional)
	}
	checkF(t, "μ", st.Mu, 1/0.6, 1e-12)
	checkF(t, "μ′", st.MuPrime, 1/0.75, 1e-12)
	out, in := OutputStabilityCircle(s), InputStabilityCircle(s)
	checkC(t, "output centre", out.Center, 1/s[3], 1e-12)
	checkC(t, "input centre", in.Center, 1/s[0], 1e-12)
	if out.Radius != 0 || in.Radius != 0 || out.Stable != Outside || in.Stable != Outside || !out.DiscStable() || !in.DiscStable() {
		t.Errorf("output %+v, input %+v: want radius 0, stable outside, disc stable", out, in)
	}
}

// When |S22| = |Δ| the output stability circle is a straight line: its
// points give |Γin| = 1, and its stable side agrees with |Γin| < 1. Device:
// S11 = S22 = 0.5, S12·S21 = −0.25 (so Δ = 0.5), a case built for the test.
func TestStabilityLine(t *testing.T) {
	t.Parallel()
	s := [4]complex128{0.5, 0.5i, 0.5i, 0.5}
	c := OutputStabilityCircle(s)
	if !c.Line || c.Stable != NormalSide || !math.IsInf(c.Radius, 1) || math.Abs(cmplx.Abs(c.Normal)-1) > 1e-15 {
		t.Fatalf("circle %+v: want a line with a unit normal", c)
	}
	for _, th := range []float64{-2.5, -1, 0, 0.7, 2.9} {
		g := c.Point(th)
		checkF(t, "|Γin| on the line", cmplx.Abs(GammaIn(s, g)), 1, 1e-12)
	}
	rnd := rand.New(rand.NewPCG(18, 4))
	for range 200 {
		g := randomDisc(rnd, 4)
		m := cmplx.Abs(GammaIn(s, g))
		if math.Abs(m-1) < 1e-9 {
			continue
		}
		if c.IsStable(g) != (m < 1) {
			t.Fatalf("IsStable(%v) = %v, |Γin| = %g", g, c.IsStable(g), m)
		}
	}
	// By hand (C): C2 = S22 − Δ·S11* = 0.25 and 1 − |S11|² = 0.75, so
	// f(Γ) = −2·Re(0.25·Γ) + 0.75: the line is Re Γ = 1.5, stable to its
	// left.
	checkC(t, "line point", c.Center, 1.5, 1e-12)
	checkC(t, "normal", c.Normal, -1, 1e-12)
	if c.DiscStable() != true {
		t.Errorf("the line Re Γ = 1.5 leaves the unit disc on its stable side")
	}
}

// StabilityTo and UnconditionalRanges over a sweep whose device turns from
// potentially unstable to unconditionally stable: a unilateral device with
// |S22| rising linearly through 1 gives μ = 1/|S22|, so the crossing is
// found by linear interpolation of μ between the two points around it
// (C: μ = 1/0.9 = 1.1111 at 2 GHz, 1/1.1 = 0.90909 at 3 GHz; t = 0.1111/
// 0.20202 = 0.55 → 2.55 GHz).
func TestUnconditionalRanges(t *testing.T) {
	t.Parallel()
	sw := rfmath.NewSweep(4, 2, 50)
	for k, v := range []struct{ f, s22 float64 }{{1e9, 0.7}, {2e9, 0.9}, {3e9, 1.1}, {4e9, 1.2}} {
		sw.FreqHz[k] = v.f
		sw.Set(k, 0, 0, 0.3)
		sw.Set(k, 1, 0, 2)
		sw.Set(k, 1, 1, complex(v.s22, 0))
	}
	st := StabilityTo(nil, sw)
	checkF(t, "μ at 2 GHz", st[1].Mu, 1/0.9, 1e-12)
	r := UnconditionalRanges(sw.FreqHz, st)
	if len(r) != 1 || r[0][0] != 1e9 || math.Abs(r[0][1]-2.55e9) > 1 {
		t.Errorf("ranges %v, want [[1e9 2.55e9]]", r)
	}
	// A second stable stretch at the top of the sweep runs to its end.
	sw.Set(3, 1, 1, 0.5)
	r = UnconditionalRanges(sw.FreqHz, StabilityTo(st, sw))
	// μ: 2 at 4 GHz, 0.90909 at 3 GHz → crossing at t = 1/1.0909 = 0.91667 from 4 GHz down.
	if len(r) != 2 || math.Abs(r[1][0]-(4e9-0.9166667e9)) > 1e3 || r[1][1] != 4e9 {
		t.Errorf("ranges %v, want a second one from 3.0833 GHz to 4 GHz", r)
	}
	defer func() {
		if recover() == nil {
			t.Error("StabilityTo with a short dst did not panic")
		}
	}()
	StabilityTo(make([]Stability, 3), sw)
}

func TestSAt(t *testing.T) {
	t.Parallel()
	sw := rfmath.NewSweep(2, 2, 50)
	sw.FreqHz[0], sw.FreqHz[1] = 1e9, 2e9
	sw.Set(0, 1, 0, 2)
	sw.Set(1, 1, 0, 4i)
	s, err := SAt(sw, 1.25e9)
	if err != nil {
		t.Fatal(err)
	}
	checkC(t, "S21 at 1.25 GHz", s[2], complex(1.5, 1), 1e-15) // a quarter of the way, complex-linear
	if _, err := SAt(sw, 3e9); !errors.Is(err, rfmath.ErrOutOfRange) {
		t.Errorf("3 GHz: error %v, want ErrOutOfRange", err)
	}
	if _, err := SAt(rfmath.NewSweep(2, 1, 50), 1e9); !errors.Is(err, ErrNotTwoPort) {
		t.Errorf("1-port: error %v, want ErrNotTwoPort", err)
	}
}

// StabilityTo into a sized destination allocates nothing.
func TestStabilityToAllocs(t *testing.T) {
	sw := rfmath.NewSweep(101, 2, 50)
	for k := range sw.FreqHz {
		sw.FreqHz[k] = 1e9 + 1e7*float64(k)
		copy(sw.Matrix(k), pozarConjugate[:])
	}
	dst := make([]Stability, sw.Len())
	if n := testing.AllocsPerRun(10, func() { StabilityTo(dst, sw) }); n != 0 {
		t.Errorf("StabilityTo: %g allocations per run, want 0", n)
	}
}
