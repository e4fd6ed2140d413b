package match

import (
	"errors"
	"math"
	"math/cmplx"
	"math/rand/v2"
	"testing"

	"matchbench/rfmath"
)

func closeF(a, b, tol float64) bool {
	return math.Abs(a-b) <= tol*math.Max(1, math.Abs(b))
}

func relClose(a, b, tol float64) bool {
	return math.Abs(a-b) <= tol*math.Abs(b)
}

// inputZ returns the input impedance of n (ideal parts) on zLoad at fHz,
// computed by rfmath's ABCD cascade: independent of the synthesis formulas.
func inputZ(n Network, zLoad complex128, fHz float64) complex128 {
	l, err := n.Ladder()
	if err != nil {
		panic(err)
	}
	return l.InputZ(fHz, zLoad)
}

// findL returns the solution of the given orientation whose shunt
// susceptance has the sign s.
func findL(t *testing.T, sols []LNetwork, o Orientation, s float64) LNetwork {
	t.Helper()
	for _, l := range sols {
		if l.Orientation == o && math.Signbit(l.BS) == math.Signbit(s) {
			return l
		}
	}
	t.Fatalf("no %s solution with B of sign %v in %+v", o, s, sols)
	return LNetwork{}
}

// TestLNetworkPozar51 checks Pozar, Microwave Engineering, Example 5.1
// (REFERENCE-CHECKS §6a; inputs V, book answers M): ZL = 200 − j100 Ω,
// Z0 = 100 Ω, 500 MHz. Three oracles: the sheet's closed form evaluated
// here (1e-9), the sheet's C values as printed (half a unit in the last
// digit), and the book's rounded values (about 1 %).
func TestLNetworkPozar51(t *testing.T) {
	t.Parallel()
	const f, z0 = 500e6, 100.0
	zl := complex(200, -100)
	sols, no, err := LNetworks(zl, z0, f)
	if err != nil {
		t.Fatal(err)
	}
	// Only the shunt-at-load orientation: RL > Z0.
	if len(no) != 1 || no[0].Orientation != SeriesAtLoad || len(sols) != 2 {
		t.Fatalf("solutions %+v, none %+v", sols, no)
	}
	// The sheet's formulas (RL > Z0 branch), evaluated independently.
	rl, xl := real(zl), imag(zl)
	w := 2 * math.Pi * f
	for _, sign := range []float64{1, -1} {
		b := (xl + sign*math.Sqrt(rl/z0)*math.Sqrt(rl*rl+xl*xl-z0*rl)) / (rl*rl + xl*xl)
		x := 1/b + xl*z0/rl - z0/(b*rl)
		got := findL(t, sols, ShuntAtLoad, b)
		if !relClose(got.BS, b, 1e-9) || !relClose(got.XOhm, x, 1e-9) {
			t.Errorf("B, X = %v, %v; formula %v, %v", got.BS, got.XOhm, b, x)
		}
		if z := inputZ(got.Parts, zl, f); cmplx.Abs(z-z0) > 1e-9*z0 {
			t.Errorf("Zin = %v, want %v", z, z0)
		}
		// The parts from B and X by ω = 2π·f.
		if c := got.Parts[0].Value; got.Parts[0].Kind == ShuntC && !relClose(c, b/w, 1e-9) {
			t.Errorf("C = %v, want B/ω = %v", c, b/w)
		}
	}
	type want struct {
		kind  Kind
		value float64 // as printed
		ulp   float64 // half a unit in the last printed digit
		book  float64 // Pozar's printed value (M)
	}
	for _, tc := range []struct {
		sign  float64
		b, x  float64 // sheet C values, printed
		parts [2]want
	}{
		// The sheet prints C = 0.92282 pF, but its own B gives
		// B/ω = 0.0028990/(2π·500 MHz) = 0.922774 pF: the sheet's fifth
		// digit is off, so that one value is held to 1e-4 pF.
		{+1, 0.0028990, 122.474, [2]want{{ShuntC, 0.92282e-12, 0.0001e-12, 0.92e-12}, {SeriesL, 38.985e-9, 0.0005e-9, 38.8e-9}}},
		{-1, -0.0068990, -122.474, [2]want{{ShuntL, 46.139e-9, 0.0005e-9, 46.1e-9}, {SeriesC, 2.5990e-12, 0.00005e-12, 2.61e-12}}},
	} {
		got := findL(t, sols, ShuntAtLoad, tc.sign)
		if math.Abs(got.BS-tc.b) > 0.00000005 || math.Abs(got.XOhm-tc.x) > 0.0005 {
			t.Errorf("B, X = %v, %v; sheet %v, %v", got.BS, got.XOhm, tc.b, tc.x)
		}
		if len(got.Parts) != 2 {
			t.Fatalf("parts %v", got.Parts)
		}
		for i, p := range got.Parts {
			w := tc.parts[i]
			if p.Kind != w.kind || math.Abs(p.Value-w.value) > w.ulp {
				t.Errorf("part %d = %v, sheet %v %v", i, p, w.kind, w.value)
			}
			if !relClose(p.Value, w.book, 0.01) {
				t.Errorf("part %d = %v, book %v (1 %%)", i, p, w.book)
			}
		}
	}
}

// TestLNetworkCases checks REFERENCE-CHECKS §6b (Pozar Problem 5.1, V) and
// §6c (L-1 Bowick, book M; L-2 baltic-lab.com, V; L-3 a public worked
// example, V; L-4 arithmetic): the reactances, the parts, and Zin = Z0.
func TestLNetworkCases(t *testing.T) {
	t.Parallel()
	type part struct {
		kind  Kind
		value float64
		tol   float64 // relative
	}
	for _, tc := range []struct {
		name  string
		zl    complex128
		z0, f float64
		o     Orientation
		bs    []float64 // shunt susceptances of the solutions, S
		xs    []float64 // series reactances, Ω
		btol  float64
		parts [][]part // per solution, from the load
	}{
		{"Pozar P5.1", complex(150, -200), 100, 3e9, ShuntAtLoad,
			[]float64{0.001070831, -0.007470831}, []float64{177.9513, -177.9513}, 1e-6,
			[][]part{
				{{ShuntC, 0.05681e-12, 1e-3}, {SeriesL, 9.4406e-9, 1e-4}},
				{{ShuntL, 7.1012e-9, 1e-4}, {SeriesC, 0.29812e-12, 1e-4}},
			}},
		{"L-1 100 Ω to 1 kΩ", 1000, 100, 100e6, ShuntAtLoad,
			[]float64{1 / 333.333333, -1 / 333.333333}, []float64{300, -300}, 1e-6,
			[][]part{{{ShuntC, 4.775e-12, 2e-4}, {SeriesL, 477.46e-9, 2e-5}}, nil}},
		{"L-2 75 Ω to 1 kΩ", 1000, 75, 100e6, ShuntAtLoad,
			[]float64{1 / 284.75, -1 / 284.75}, []float64{263.39, -263.39}, 2e-5, nil},
		{"L-3 50 Ω to 200 Ω", 200, 50, 100e6, ShuntAtLoad,
			[]float64{1 / 115.47, -1 / 115.47}, []float64{86.6, -86.6}, 1e-4,
			[][]part{
				{{ShuntC, 13.783e-12, 1e-4}, {SeriesL, 137.83e-9, 1e-4}},
				{{ShuntL, 183.78e-9, 1e-4}, {SeriesC, 18.378e-12, 1e-4}},
			}},
		{"L-4 25 Ω to 50 Ω", 25, 50, 100e6, SeriesAtLoad,
			[]float64{0.02, -0.02}, []float64{25, -25}, 1e-12, nil},
	} {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			sols, no, err := LNetworks(tc.zl, complex(tc.z0, 0), tc.f)
			if err != nil {
				t.Fatal(err)
			}
			if len(sols) != 2 || len(no) != 1 || no[0].Orientation == tc.o {
				t.Fatalf("solutions %+v, none %+v", sols, no)
			}
			for i, b := range tc.bs {
				got := findL(t, sols, tc.o, b)
				if !relClose(got.BS, b, tc.btol) || !relClose(got.XOhm, tc.xs[i], tc.btol) {
					t.Errorf("B, X = %.10g, %.10g; want %.10g, %.10g", got.BS, got.XOhm, b, tc.xs[i])
				}
				if z := inputZ(got.Parts, tc.zl, tc.f); cmplx.Abs(z-complex(tc.z0, 0)) > 1e-9*tc.z0 {
					t.Errorf("Zin = %v", z)
				}
				if i < len(tc.parts) && tc.parts[i] != nil {
					for j, p := range tc.parts[i] {
						if got.Parts[j].Kind != p.kind || !relClose(got.Parts[j].Value, p.value, p.tol) {
							t.Errorf("part %d = %v, want %v %v", j, got.Parts[j], p.kind, p.value)
						}
					}
				}
			}
		})
	}
}

// TestLNetworkSpecial checks the cases REFERENCE-CHECKS §6 asks for: one
// part when the load already has R = Z0, no solution for a pure reactance,
// a matched load, and the errors.
func TestLNetworkSpecial(t *testing.T) {
	t.Parallel()
	const f = 1e9
	// R = Z0 with reactance: the series-at-load orientation needs one part.
	sols, _, err := LNetworks(complex(50, 30), 50, f)
	if err != nil {
		t.Fatal(err)
	}
	one := 0
	for _, s := range sols {
		if s.Orientation == SeriesAtLoad {
			one++
			if len(s.Parts) != 1 || s.Parts[0].Kind != SeriesC {
				t.Errorf("R = Z0: %v, want one series C", s.Parts)
			}
		}
		if z := inputZ(s.Parts, complex(50, 30), f); cmplx.Abs(z-50) > 1e-9*50 {
			t.Errorf("%v: Zin = %v", s.Parts, z)
		}
	}
	if one != 1 {
		t.Errorf("R = Z0: %d series-at-load solutions, want 1 (a double root)", one)
	}
	// A matched load needs nothing.
	sols, no, _ := LNetworks(50, 50, f)
	if len(no) != 0 || len(sols) != 2 || len(sols[0].Parts) != 0 || len(sols[1].Parts) != 0 {
		t.Errorf("matched: %+v, %+v", sols, no)
	}
	for _, z := range []complex128{complex(0, 30), complex(0, -30), complex(-5, 10)} {
		sols, no, err := LNetworks(z, 50, f)
		if err != nil || len(sols) != 0 || len(no) != 2 || no[0].Reason == "" {
			t.Errorf("load %v: %+v, %+v, %v", z, sols, no, err)
		}
	}
	for _, tc := range []struct {
		zs   complex128
		f    float64
		want error
	}{
		{0, f, ErrSource}, {complex(-50, 0), f, ErrSource}, {50, 0, ErrFrequency}, {50, math.Inf(1), ErrFrequency},
	} {
		if _, _, err := LNetworks(100, tc.zs, tc.f); !errors.Is(err, tc.want) {
			t.Errorf("source %v at %v: %v, want %v", tc.zs, tc.f, err, tc.want)
		}
	}
}

// TestLNetworkRandom checks every solution for random loads and random
// real and complex sources: the input impedance, computed by rfmath's ABCD
// cascade, is the source's conjugate to 1e-9; each orientation has
// solutions or a reason, never both.
func TestLNetworkRandom(t *testing.T) {
	t.Parallel()
	rnd := rand.New(rand.NewPCG(1, 2))
	for n := range 2000 {
		zl := complex(0.5+500*rnd.Float64(), 1000*(rnd.Float64()-0.5))
		zs := complex(1+200*rnd.Float64(), 0)
		if n%2 == 1 {
			zs += complex(0, 400*(rnd.Float64()-0.5))
		}
		f := math.Pow(10, 6+4*rnd.Float64())
		sols, no, err := LNetworks(zl, zs, f)
		if err != nil {
			t.Fatal(err)
		}
		count := map[Orientation]int{}
		for _, s := range sols {
			count[s.Orientation]++
			z := inputZ(s.Parts, zl, f)
			if want := cmplx.Conj(zs); cmplx.Abs(z-want) > 1e-9*cmplx.Abs(want) {
				t.Fatalf("load %v, source %v, %v: Zin = %v, want %v", zl, zs, s.Parts, z, want)
			}
		}
		for _, r := range no {
			if count[r.Orientation] != 0 {
				t.Fatalf("%s has solutions and a reason", r.Orientation)
			}
			count[r.Orientation] = -1
		}
		if count[ShuntAtLoad] == 0 || count[SeriesAtLoad] == 0 {
			t.Fatalf("an orientation has neither solutions nor a reason: %+v %+v", sols, no)
		}
	}
}

// stubInputY returns the normalised admittance Yin·Z0 of a line of d
// wavelengths on zLoad with a shunt stub of l wavelengths at its input, by
// rfmath's ladder of lines: independent of the stub formulas.
func stubInputY(zl complex128, z0 float64, s Stub) complex128 {
	const f = 1e9
	l := rfmath.Ladder{
		rfmath.LineFromDegrees(z0, 360*s.DWavelengths, f, 1),
		rfmath.ShuntStub{Line: rfmath.LineFromDegrees(z0, 360*s.LWavelengths, f, 1), Open: s.Type == OpenStub},
	}
	return complex(z0, 0) / l.InputZ(f, zl)
}

// TestShuntStubs checks REFERENCE-CHECKS §8: Pozar Example 5.2 (inputs and
// book answers M; C values to 1e-6, book ±0.002 λ), the positions of Pozar
// Problems 5.4 and 5.12 (V) with the sheet's computed lengths (C), and for
// every stub Yin·Z0 = 1 to 1e-9 through rfmath lines.
func TestShuntStubs(t *testing.T) {
	t.Parallel()
	for _, tc := range []struct {
		name   string
		zl     complex128
		z0     float64
		d      [2]float64
		short  [2]float64 // NaN: not given
		open   [2]float64
		book   [4]float64 // d1, l1, d2, l2 (short), or zeros
		dTolV  float64
		lenTol float64
	}{
		{"Pozar Ex 5.2", complex(60, -80), 50, [2]float64{0.110423, 0.259445},
			[2]float64{0.094975, 0.405025}, [2]float64{0.344975, 0.155025},
			[4]float64{0.110, 0.095, 0.260, 0.405}, 1e-6, 1e-6},
		{"Pozar P5.4", complex(100, 80), 75, [2]float64{0.227641, 0.405911},
			[2]float64{0.127603, 0.372397}, [2]float64{0.377603, 0.122397},
			[4]float64{}, 1e-6, 1e-6},
		{"Pozar P5.12", 200, 100, [2]float64{0.152043, 0.347957},
			[2]float64{math.NaN(), math.NaN()}, [2]float64{math.NaN(), math.NaN()},
			[4]float64{}, 1e-6, 1e-6},
	} {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			st := ShuntStubs(tc.zl, tc.z0)
			if len(st) != 4 {
				t.Fatalf("stubs %+v", st)
			}
			for i := range 2 {
				o, s := st[2*i], st[2*i+1]
				if o.Type != OpenStub || s.Type != ShortStub || o.DWavelengths != s.DWavelengths {
					t.Fatalf("pair %d: %+v %+v", i, o, s)
				}
				if math.Abs(o.DWavelengths-tc.d[i]) > tc.dTolV {
					t.Errorf("d%d = %.6f, want %.6f", i+1, o.DWavelengths, tc.d[i])
				}
				if !math.IsNaN(tc.short[i]) && (math.Abs(s.LWavelengths-tc.short[i]) > tc.lenTol || math.Abs(o.LWavelengths-tc.open[i]) > tc.lenTol) {
					t.Errorf("l%d short %.6f open %.6f, want %.6f %.6f", i+1, s.LWavelengths, o.LWavelengths, tc.short[i], tc.open[i])
				}
				if tc.book != [4]float64{} && (math.Abs(s.DWavelengths-tc.book[2*i]) > 0.002 || math.Abs(s.LWavelengths-tc.book[2*i+1]) > 0.002) {
					t.Errorf("book: d%d, l%d = %.4f, %.4f; want %.3f, %.3f", i+1, i+1, s.DWavelengths, s.LWavelengths, tc.book[2*i], tc.book[2*i+1])
				}
				for _, x := range []Stub{o, s} {
					if y := stubInputY(tc.zl, tc.z0, x); cmplx.Abs(y-1) > 1e-9 {
						t.Errorf("%+v: Yin·Z0 = %v", x, y)
					}
				}
			}
		})
	}
	// Random loads: every stub matches.
	rnd := rand.New(rand.NewPCG(3, 4))
	for range 500 {
		zl := complex(1+300*rnd.Float64(), 600*(rnd.Float64()-0.5))
		z0 := 25 + 100*rnd.Float64()
		for _, s := range ShuntStubs(zl, z0) {
			if s.DWavelengths < 0 || s.DWavelengths >= 0.5 || s.LWavelengths < 0 || s.LWavelengths >= 0.5 {
				t.Fatalf("%+v not reduced modulo λ/2", s)
			}
			if y := stubInputY(zl, z0, s); cmplx.Abs(y-1) > 1e-9 {
				t.Fatalf("load %v, Z0 %v, %+v: Yin·Z0 = %v", zl, z0, s, y)
			}
		}
	}
	if st := ShuntStubs(complex(0, 50), 50); st != nil {
		t.Errorf("reactive load: %+v", st)
	}
	if st := ShuntStubs(50, 50); len(st) != 2 || st[0].DWavelengths != 0 || st[0].LWavelengths != 0 || st[1].LWavelengths != 0.25 {
		t.Errorf("matched load: %+v", st)
	}
	// R = Z0 with reactance: the second position is λ/4.
	st := ShuntStubs(complex(50, 40), 50)
	if len(st) != 4 || st[2].DWavelengths != 0.25 {
		t.Errorf("R = Z0: %+v", st)
	}
	for _, s := range st {
		if y := stubInputY(complex(50, 40), 50, s); cmplx.Abs(y-1) > 1e-9 {
			t.Errorf("R = Z0, %+v: Yin·Z0 = %v", s, y)
		}
	}
}

// TestQuarterWaves checks REFERENCE-CHECKS §5: Q-1 (Pozar Ch. 2, number M)
// 100 Ω to 50 Ω gives 70.7107 Ω and |Γ| = 0.242536 at f/f0 = 0.5 and 1.5,
// 1/3 at 2·f0; Q-2 10 Ω to 50 Ω gives 22.3607 Ω; Q-3 300 Ω to 75 Ω gives
// 150 Ω and 75 Ω to 50 Ω gives 61.2372 Ω (arithmetic). Every transformer,
// for real and random complex loads, gives Zin = Z0 through rfmath lines.
func TestQuarterWaves(t *testing.T) {
	t.Parallel()
	const f0 = 1e9
	ladder := func(q QuarterWave, z0 float64) rfmath.Ladder {
		return rfmath.Ladder{
			rfmath.LineFromDegrees(z0, 360*q.DWavelengths, f0, 1),
			rfmath.LineFromDegrees(q.Z1Ohm, 90, f0, 1),
		}
	}
	for _, tc := range []struct {
		rl, z0, z1 float64
	}{{100, 50, 70.7107}, {10, 50, 22.3607}, {300, 75, 150}, {75, 50, 61.2372}} {
		qs := QuarterWaves(complex(tc.rl, 0), tc.z0)
		if len(qs) != 2 || qs[0].DWavelengths != 0 || qs[1].DWavelengths != 0.25 {
			t.Fatalf("%v to %v: %+v", tc.rl, tc.z0, qs)
		}
		if !closeF(qs[0].Z1Ohm, tc.z1, 1e-6) || !closeF(qs[0].ROhm, tc.rl, 1e-12) {
			t.Errorf("%v to %v: Z1 = %v, want %v", tc.rl, tc.z0, qs[0].Z1Ohm, tc.z1)
		}
		for _, q := range qs {
			if z := ladder(q, tc.z0).InputZ(f0, complex(tc.rl, 0)); cmplx.Abs(z-complex(tc.z0, 0)) > 1e-9*tc.z0 {
				t.Errorf("%+v: Zin = %v", q, z)
			}
		}
	}
	q := QuarterWaves(100, 50)[0]
	for _, c := range []struct{ ratio, gamma float64 }{{0.5, 0.242536}, {1.5, 0.242536}, {2, 1.0 / 3}} {
		g := ladder(q, 50).InputGamma(c.ratio*f0, rfmath.GammaFromZ(100, 50), 50)
		if math.Abs(cmplx.Abs(g)-c.gamma) > 1e-6 {
			t.Errorf("|Γ| at %v·f0 = %v, want %v", c.ratio, cmplx.Abs(g), c.gamma)
		}
	}
	rnd := rand.New(rand.NewPCG(5, 6))
	for range 500 {
		zl := complex(1+300*rnd.Float64(), 600*(rnd.Float64()-0.5))
		for _, q := range QuarterWaves(zl, 50) {
			if z := ladder(q, 50).InputZ(f0, zl); cmplx.Abs(z-50) > 1e-9*50 {
				t.Fatalf("load %v, %+v: Zin = %v", zl, q, z)
			}
		}
	}
	for _, z := range []complex128{50, complex(0, 20)} {
		if qs := QuarterWaves(z, 50); qs != nil {
			t.Errorf("load %v: %+v, want none", z, qs)
		}
	}
}

func TestSynthesize(t *testing.T) {
	t.Parallel()
	s, err := Synthesize(complex(60, -80), 50, 2e9)
	if err != nil {
		t.Fatal(err)
	}
	// R = 60 Ω > 50 Ω: only the shunt-at-load orientation.
	if len(s.LNetworks) != 2 || len(s.NoL) != 1 || len(s.Stubs) != 4 || len(s.QuarterWaves) != 2 {
		t.Errorf("60 − j80 in 50 Ω: %d L, %d none, %d stubs, %d transformers", len(s.LNetworks), len(s.NoL), len(s.Stubs), len(s.QuarterWaves))
	}
	s, err = Synthesize(complex(60, -80), complex(50, 10), 2e9)
	if err != nil || s.Stubs != nil || s.QuarterWaves != nil || len(s.Notes) != 1 {
		t.Errorf("complex source: %+v, %v", s, err)
	}
}
