package rfmath

import (
	"math"
	"math/cmplx"
	"math/rand/v2"
	"testing"
)

// lMatchPozar51 returns the shunt susceptance B (S) and series reactance X
// (Ω) of the first solution of the L-section formulas for RL > Z0
// (REFERENCE-CHECKS §6a, Pozar Section 5.1).
func lMatchPozar51(zl complex128, z0 float64) (b, x float64) {
	rl, xl := real(zl), imag(zl)
	b = (xl + math.Sqrt(rl/z0)*math.Sqrt(rl*rl+xl*xl-z0*rl)) / (rl*rl + xl*xl)
	x = 1/b + xl*z0/rl - z0/(b*rl)
	return b, x
}

// TestLadderLMatch checks a ladder against REFERENCE-CHECKS §6: the matched
// network must give Zin = Z0, which also fixes the order of the elements.
func TestLadderLMatch(t *testing.T) {
	t.Parallel()
	const f = 500e6
	w := 2 * math.Pi * f
	// §6a (C): Pozar Example 5.1, solution 1: shunt C = 0.92282 pF next
	// to the load, series L = 38.985 nH toward the line.
	b, x := lMatchPozar51(200-100i, 100)
	if math.Abs(b-0.0028990) > 1e-7 || math.Abs(x-122.474) > 1e-3 {
		t.Fatalf("formula gives B = %v, X = %v; want 0.0028990 S, 122.474 Ω", b, x)
	}
	exact := Ladder{ShuntC{CF: b / w}, SeriesL{LH: x / w}}
	if z := exact.InputZ(f, 200-100i); !closeC(z, 100, 1e-9) {
		t.Errorf("Pozar 5.1 exact: Zin = %v, want 100", z)
	}
	table := Ladder{ShuntC{CF: 0.92282e-12}, SeriesL{LH: 38.985e-9}}
	if z := table.InputZ(f, 200-100i); !closeC(z, 100, 1e-4) {
		t.Errorf("Pozar 5.1 table values: Zin = %v, want 100", z)
	}
	// The order matters: the series L against the load does not match.
	reversed := Ladder{SeriesL{LH: x / w}, ShuntC{CF: b / w}}
	if z := reversed.InputZ(f, 200-100i); closeC(z, 100, 1e-2) {
		t.Errorf("reversed ladder matched too: %v", z)
	}
	// §6a (C) solution 2: shunt L = 46.139 nH, series C = 2.5990 pF.
	sol2 := Ladder{ShuntL{LH: 46.139e-9}, SeriesC{CF: 2.5990e-12}}
	if z := sol2.InputZ(f, 200-100i); !closeC(z, 100, 1e-4) {
		t.Errorf("Pozar 5.1 solution 2: Zin = %v, want 100", z)
	}
	// §6c L-1 (C; Bowick Example 4-1 from memory): 1000 Ω load to 100 Ω,
	// series L 477.46 nH, shunt C 4.775 pF across the load, 100 MHz;
	// exactly Xs = 300 Ω and Xp = 1000/3 Ω.
	const f1 = 100e6
	w1 := 2 * math.Pi * f1
	bowick := Ladder{ShuntC{CF: 3 / (1000 * w1)}, SeriesL{LH: 300 / w1}}
	if z := bowick.InputZ(f1, 1000); !closeC(z, 100, 1e-12) {
		t.Errorf("L-1: Zin = %v, want 100", z)
	}
	if l, c := 300/w1, 3/(1000*w1); math.Abs(l-477.46e-9) > 0.005e-9 || math.Abs(c-4.775e-12) > 0.0005e-12 {
		t.Errorf("L-1 parts %v H, %v F; want 477.46 nH, 4.775 pF", l, c)
	}
	// §6c L-3 (C): 200 Ω to 50 Ω at 100 MHz, low-pass L = 137.83 nH,
	// C = 13.783 pF; high-pass C = 18.378 pF, L = 183.78 nH.
	lp := Ladder{ShuntC{CF: 13.783e-12}, SeriesL{LH: 137.83e-9}}
	hp := Ladder{ShuntL{LH: 183.78e-9}, SeriesC{CF: 18.378e-12}}
	for name, l := range map[string]Ladder{"low-pass": lp, "high-pass": hp} {
		if z := l.InputZ(f1, 200); !closeC(z, 50, 1e-4) {
			t.Errorf("L-3 %s: Zin = %v, want 50", name, z)
		}
	}
	// §7 PI-1 (C): 200 Ω to 50 Ω, shunt −j40 at 200 Ω, series +j56.502,
	// shunt −j21.320 at 50 Ω.
	pi := Ladder{ShuntC{CF: 1 / (40 * w1)}, SeriesL{LH: 56.502 / w1}, ShuntC{CF: 1 / (21.320 * w1)}}
	if z := pi.InputZ(f1, 200); !closeC(z, 50, 1e-4) {
		t.Errorf("PI-1: Zin = %v, want 50", z)
	}
	// §7 T-1 (C): 200 Ω to 50 Ω, series 469.042 Ω at 200 Ω, shunt
	// 176.986 Ω of opposite sign, series 250.0 Ω at 50 Ω.
	tee := Ladder{SeriesL{LH: 469.042 / w1}, ShuntC{CF: 1 / (176.986 * w1)}, SeriesL{LH: 250 / w1}}
	if z := tee.InputZ(f1, 200); !closeC(z, 50, 1e-4) {
		t.Errorf("T-1: Zin = %v, want 50", z)
	}
}

// lossyInductor is a Part for the test of Series and Shunt.
type lossyInductor struct{ lH, rOhm float64 }

func (p lossyInductor) ImpedanceAt(fHz float64) complex128 {
	return complex(p.rOhm, 0) + ImpedanceOfL(p.lH, fHz)
}

func TestLadderElements(t *testing.T) {
	t.Parallel()
	const f = 300e6
	part := lossyInductor{lH: 20e-9, rOhm: 2}
	tests := []struct {
		name string
		got  Ladder
		want Ladder
	}{
		{"Series part", Ladder{Series{part}}, Ladder{SeriesL{20e-9}, SeriesR{2}}},
		{"ShuntR", Ladder{ShuntR{50}}, Ladder{Shunt{lossyInductor{rOhm: 50}}}},
		{"SeriesC", Ladder{SeriesC{10e-12}}, Ladder{Series{capPart(10e-12)}}},
		{"ShuntC", Ladder{ShuntC{10e-12}}, Ladder{Shunt{capPart(10e-12)}}},
		{"ShuntL", Ladder{ShuntL{20e-9}}, Ladder{Shunt{lossyInductor{lH: 20e-9}}}},
		{"Transformer", Ladder{Transformer{2}}, Ladder{Transformer{4}, Transformer{0.5}}},
		{"empty", Ladder{}, Ladder{SeriesR{0}}},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			rnd := rand.New(rand.NewPCG(1, 1)) // one per subtest: they run in parallel
			for range 10 {
				zl := complex(100*rnd.Float64()+1, 100*(rnd.Float64()-0.5))
				got, want := tc.got.InputZ(f, zl), tc.want.InputZ(f, zl)
				if !closeC(got, want, 1e-12) {
					t.Errorf("Zin = %v, want %v", got, want)
				}
			}
			if got, want := tc.got.InputZ(f, cmplx.Inf()), tc.want.InputZ(f, cmplx.Inf()); !(cmplx.IsInf(got) && cmplx.IsInf(want)) && !closeC(got, want, 1e-12) {
				t.Errorf("open: Zin = %v, want %v", got, want)
			}
		})
	}
}

// TestShuntPart checks a shunt part against the parallel-impedance rule
// ZL·Zp/(ZL + Zp) (arithmetic).
func TestShuntPart(t *testing.T) {
	t.Parallel()
	const f = 300e6
	part := lossyInductor{lH: 20e-9, rOhm: 2}
	zp := part.ImpedanceAt(f)
	for _, zl := range []complex128{50, 10 - 30i, 1e3 + 1e3i} {
		want := zl * zp / (zl + zp)
		if got := (Ladder{Shunt{part}}).InputZ(f, zl); !closeC(got, want, 1e-12) {
			t.Errorf("ZL = %v: Zin = %v, want %v", zl, got, want)
		}
	}
	if got := (Ladder{Shunt{part}}).InputZ(f, cmplx.Inf()); !closeC(got, zp, 1e-12) {
		t.Errorf("open load: Zin = %v, want %v", got, zp)
	}
}

type capPart float64

func (c capPart) ImpedanceAt(fHz float64) complex128 { return ImpedanceOfC(float64(c), fHz) }

// TestLadderInputGammaTo checks the sweep form against the per-point
// impedance route, including an open and a short load.
func TestLadderInputGammaTo(t *testing.T) {
	t.Parallel()
	l := Ladder{ShuntC{2e-12}, Line{Z0Ohm: 75, LengthM: 0.2, VelocityFactor: 0.66, LossDBPerM: 0.3, LossRefHz: 1e9}, SeriesL{30e-9}}
	rnd := rand.New(rand.NewPCG(1, 1))
	n := 101
	freq := make([]float64, n)
	load := make([]complex128, n)
	for k := range freq {
		freq[k] = 100e6 + float64(k)*10e6
		load[k] = randComplex(rnd, 0.7)
	}
	load[0], load[1] = 1, -1
	got := l.InputGammaTo(nil, freq, load, 50)
	zl := make([]complex128, n)
	for k := range zl {
		zl[k] = ZFromGamma(load[k], 50)
	}
	zin := l.InputZTo(nil, freq, zl)
	for k := range got {
		want := GammaFromZ(zin[k], 50)
		if !closeC(got[k], want, 1e-9) {
			t.Errorf("point %d: Γin = %v, want %v", k, got[k], want)
		}
		if g := l.InputGamma(freq[k], load[k], 50); g != got[k] {
			t.Errorf("point %d: InputGamma = %v, InputGammaTo = %v", k, g, got[k])
		}
	}
}

func TestLadderPanics(t *testing.T) {
	t.Parallel()
	l := Ladder{SeriesR{10}}
	f := []float64{1, 2}
	tests := []struct {
		name string
		f    func()
	}{
		{"InputGammaTo load length", func() { l.InputGammaTo(nil, f, []complex128{0}, 50) }},
		{"InputGammaTo dst length", func() { l.InputGammaTo(make([]complex128, 3), f, []complex128{0, 0}, 50) }},
		{"InputZTo load length", func() { l.InputZTo(nil, f, []complex128{0}) }},
		{"InputZTo dst length", func() { l.InputZTo(make([]complex128, 1), f, []complex128{0, 0}) }},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			if !panics(tc.f) {
				t.Error("did not panic")
			}
		})
	}
}

// benchLadder returns a 3-part ladder, a 10,001-point grid and a load.
func benchLadder() (Ladder, []float64, []complex128) {
	l := Ladder{ShuntC{CF: 1e-12}, SeriesL{LH: 40e-9}, ShuntC{CF: 2e-12}}
	const n = 10001
	freq := make([]float64, n)
	load := make([]complex128, n)
	for k := range freq {
		freq[k] = 100e6 + float64(k)*100e3
		load[k] = GammaFromZ(200-100i, 50)
	}
	return l, freq, load
}

func TestLadderZeroAllocs(t *testing.T) {
	l, freq, load := benchLadder()
	dst := make([]complex128, len(freq))
	if allocs := testing.AllocsPerRun(5, func() { l.InputGammaTo(dst, freq, load, 50) }); allocs != 0 {
		t.Errorf("%v allocations per call, want 0", allocs)
	}
}

func BenchmarkLadderInputGammaTo(b *testing.B) {
	l, freq, load := benchLadder()
	dst := make([]complex128, len(freq))
	b.ReportAllocs()
	b.ResetTimer()
	for b.Loop() {
		l.InputGammaTo(dst, freq, load, 50)
	}
}
