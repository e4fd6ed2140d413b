package rfmath

import (
	"errors"
	"fmt"
	"math"
	"math/cmplx"
	"math/rand/v2"
	"testing"
)

// seriesRLCEdges returns where a series R, L, C seen by a real z0 has
// |Γ| = g, in closed form (arithmetic): |Γ|² = ((R − Z0)² + X²)/((R + Z0)² +
// X²) = g² gives X = ±x with x² = (g²(R + Z0)² − (R − Z0)²)/(1 − g²), and
// L·ω² ∓ x·ω − 1/C = 0 gives the frequencies (rlcEdges).
func seriesRLCEdges(r, l, c, z0, g float64) (lo, hi float64) {
	x := math.Sqrt((g*g*(r+z0)*(r+z0) - (r-z0)*(r-z0)) / (1 - g*g))
	return rlcEdges(l, c, x)
}

// chordCrossing returns the fraction t of the chord from a to b at which
// |a + t·(b − a)| = g, by bisection (brute force, independent of the
// quadratic the package solves); |a| and |b| must lie on either side of g.
func chordCrossing(a, b complex128, g float64) float64 {
	lo, hi := 0.0, 1.0
	below := cmplx.Abs(a) < g
	for range 200 {
		m := (lo + hi) / 2
		if (cmplx.Abs(a+complex(m, 0)*(b-a)) < g) == below {
			lo = m
		} else {
			hi = m
		}
	}
	return (lo + hi) / 2
}

// TestDipsCoarseSeriesRLC is the coarse-sweep example of a series RLC of
// 49.5 Ω, 30 nH and 1 pF in 50 Ω, sampled at 7 points 150 MHz apart centred
// on its resonance f0 = 1/(2π√(LC)) = 918.88 MHz, with a 10 dB threshold.
// The true edges (closed form of the series RLC) are 835.12 and
// 1011.05 MHz; on the complex-linear interpolation between the samples,
// which every readout uses, they are 828.96 and 1020.64 MHz (brute force
// on the chord). Interpolating in dB instead would give 785.47 and
// 1055.96 MHz, where a readout reads 6.55 dB, not 10.
func TestDipsCoarseSeriesRLC(t *testing.T) {
	t.Parallel()
	const r, l, c, z0, thr = 49.5, 30e-9, 1e-12, 50.0, 10.0
	f0 := 1 / (2 * math.Pi * math.Sqrt(l*c))
	freq := make([]float64, 7)
	for k := range freq {
		freq[k] = f0 + 150e6*float64(k-3)
	}
	g := gammas(seriesRLC(freq, r, l, c), z0)
	gt := math.Pow(10, -thr/20)

	exactLo, exactHi := seriesRLCEdges(r, l, c, z0, gt)
	if math.Abs(exactLo-835.12e6) > 0.01e6 || math.Abs(exactHi-1011.05e6) > 0.01e6 {
		t.Fatalf("closed-form edges %v, %v; want 835.12, 1011.05 MHz", exactLo, exactHi)
	}
	wantLo := freq[2] + chordCrossing(g[2], g[3], gt)*150e6
	wantHi := freq[3] + chordCrossing(g[3], g[4], gt)*150e6
	if math.Abs(wantLo-828.96e6) > 0.01e6 || math.Abs(wantHi-1020.64e6) > 0.01e6 {
		t.Fatalf("chord edges %v, %v; want 828.96, 1020.64 MHz", wantLo, wantHi)
	}

	ds := Dips(freq, g, thr)
	if len(ds) != 1 {
		t.Fatalf("dips %+v, want one", ds)
	}
	d := ds[0]
	if math.Abs(d.LoHz-wantLo) > 1e-3 || math.Abs(d.HiHz-wantHi) > 1e-3 || d.LoOpen || d.HiOpen || d.Index != 3 {
		t.Errorf("dip %+v; want edges %v, %v and Index 3", d, wantLo, wantHi)
	}
	// A readout at each edge reads the threshold.
	tr := ReflectionOf(freq, g, z0)
	for _, f := range []float64{d.LoHz, d.HiHz} {
		ro, err := tr.Readout(f)
		if err != nil || math.Abs(ro.ReturnLossDB-thr) > 1e-9 {
			t.Errorf("readout at the edge %v Hz: %v dB (%v), want %v", f, ro.ReturnLossDB, err, thr)
		}
	}
	// And at the edge dB interpolation would give, the 6.55 dB of the
	// chord (brute force above, same chord).
	if ro, _ := tr.Readout(785.47e6); math.Abs(ro.ReturnLossDB-6.55) > 0.005 {
		t.Errorf("readout at 785.47 MHz: %v dB, want 6.55", ro.ReturnLossDB)
	}
}

// TestDipBetweenPoints checks a band that lies wholly between two points:
// Γ = 0.6 + j0.1 at f = 1 and −0.4 + j0.1 at f = 2. On the chord
// Γ(t) = (0.6 − t) + j0.1, |Γ|² = (0.6 − t)² + 0.01, which is 0.1 (20 dB)
// at t = 0.3 and 0.9 and least, 0.1 (20 dB), at t = 0.6 (arithmetic).
func TestDipBetweenPoints(t *testing.T) {
	t.Parallel()
	freq := []float64{1, 2}
	g := []complex128{0.6 + 0.1i, -0.4 + 0.1i}
	ds := Dips(freq, g, 10)
	if len(ds) != 1 {
		t.Fatalf("dips %+v, want one", ds)
	}
	d := ds[0]
	lo, hi := 1.3, 1.9
	if math.Abs(d.LoHz-lo) > 1e-12 || math.Abs(d.HiHz-hi) > 1e-12 || d.LoOpen || d.HiOpen {
		t.Errorf("edges %v, %v; want %v, %v", d.LoHz, d.HiHz, lo, hi)
	}
	if math.Abs(d.FreqHz-1.6) > 1e-6 || math.Abs(d.ReturnLossDB-20) > 1e-9 || d.Index != 1 {
		t.Errorf("deepest %v at %v dB, Index %d; want 1.6, 20 dB, 1", d.FreqHz, d.ReturnLossDB, d.Index)
	}
	if ds := Dips(freq, g, 20.001); ds != nil {
		t.Errorf("threshold above the least |Γ|: %+v, want none", ds)
	}
}

// TestDipsRidge checks what the hysteresis reports: two stretches at or
// above 10 dB, on real positive Γ, separated by one point at 9.9 dB are one
// band with the default 0.25 dB hysteresis, which says it bridged one
// ridge there; with no hysteresis they are two bands, whose inner edges lie
// where the chord reaches |Γ| = 10^(−1/2) (linear in |Γ|, arithmetic).
func TestDipsRidge(t *testing.T) {
	t.Parallel()
	freq := []float64{1, 2, 3, 4, 5, 6, 7}
	rl := []float64{3, 15, 20, 9.9, 18, 14, 3}
	g := make([]complex128, len(rl))
	for k, v := range rl {
		g[k] = complex(math.Pow(10, -v/20), 0)
	}
	gt := math.Pow(10, -0.5)
	cross := func(a, b int) float64 {
		return freq[a] + (gt-real(g[a]))/(real(g[b])-real(g[a]))*(freq[b]-freq[a])
	}
	ds := Dips(freq, g, 10)
	if len(ds) != 1 {
		t.Fatalf("dips %+v, want one", ds)
	}
	d := ds[0]
	if d.Ridges != 1 || d.RidgeHz != 4 || math.Abs(d.RidgeReturnLossDB-9.9) > 1e-12 {
		t.Errorf("ridges %d at %v Hz, %v dB; want 1 at 4 Hz, 9.9 dB", d.Ridges, d.RidgeHz, d.RidgeReturnLossDB)
	}
	if math.Abs(d.LoHz-cross(0, 1)) > 1e-12 || math.Abs(d.HiHz-cross(5, 6)) > 1e-12 || d.Index != 2 {
		t.Errorf("band %+v; want %v to %v, Index 2", d, cross(0, 1), cross(5, 6))
	}
	split := DipsHysteresis(freq, g, 10, 0)
	if len(split) != 2 || split[0].Ridges != 0 || split[1].Ridges != 0 {
		t.Fatalf("no hysteresis: %+v, want two plain bands", split)
	}
	if math.Abs(split[0].HiHz-cross(2, 3)) > 1e-12 || math.Abs(split[1].LoHz-cross(3, 4)) > 1e-12 {
		t.Errorf("inner edges %v, %v; want %v, %v", split[0].HiHz, split[1].LoHz, cross(2, 3), cross(3, 4))
	}
	// A ridge deeper than the hysteresis (9.7 dB < 10 − 0.25) splits.
	g[3] = complex(math.Pow(10, -9.7/20), 0)
	if ds := Dips(freq, g, 10); len(ds) != 2 {
		t.Errorf("9.7 dB ridge: %+v, want two bands", ds)
	}
}

// TestDipsBruteForce checks on seeded random coarse traces, in the file's
// reference and shown in 75 Ω, that the bands are exactly the stretches
// where the interpolated trace reads at or above the threshold: a readout
// at every edge reads the threshold, at 4000 frequencies a readout is at or
// above it exactly when the frequency lies in a band, and no readout in a
// band (or, for the deepest dip, anywhere) reads more than its deepest
// point, which reads its own return loss (brute force over the
// interpolation that readouts use).
func TestDipsBruteForce(t *testing.T) {
	t.Parallel()
	rng := rand.New(rand.NewPCG(19, 1))
	for trial := range 60 {
		n := 2 + rng.IntN(12)
		s := NewSweep(n, 1, 50)
		f := 0.0
		for k := range n {
			f += 0.2 + rng.Float64()
			s.FreqHz[k] = f
			s.Data[k] = cmplx.Rect(rng.Float64(), 2*math.Pi*rng.Float64())
		}
		var to []float64
		if trial%2 == 1 {
			to = []float64{75}
		}
		tr, err := NewReflection(s, 0, to)
		if err != nil {
			t.Fatal(err)
		}
		const thr = 6.0
		read := func(f float64) float64 {
			ro, err := tr.Readout(f)
			if err != nil {
				t.Fatal(err)
			}
			return ro.ReturnLossDB
		}
		ds := tr.Dips(thr, 0)
		for _, d := range ds {
			for _, e := range []struct {
				f    float64
				open bool
			}{{d.LoHz, d.LoOpen}, {d.HiHz, d.HiOpen}} {
				if !e.open && math.Abs(read(e.f)-thr) > 1e-9 {
					t.Errorf("trial %d: edge %v reads %v dB", trial, e.f, read(e.f))
				}
			}
			if rl := read(d.FreqHz); !closeF(rl, d.ReturnLossDB, 1e-9) {
				t.Errorf("trial %d: the deepest point %v reads %v dB, reported %v", trial, d.FreqHz, rl, d.ReturnLossDB)
			}
		}
		deep := tr.DeepestDip()
		if rl := read(deep.FreqHz); !closeF(rl, deep.ReturnLossDB, 1e-9) {
			t.Errorf("trial %d: the deepest dip %v reads %v dB, reported %v", trial, deep.FreqHz, rl, deep.ReturnLossDB)
		}
		for i := range 4000 {
			fq := min(s.FreqHz[0]+(s.FreqHz[n-1]-s.FreqHz[0])*float64(i)/3999, s.FreqHz[n-1])
			rl := read(fq)
			if rl > deep.ReturnLossDB+1e-9 {
				t.Fatalf("trial %d: %v reads %v dB, deeper than the deepest dip %+v", trial, fq, rl, deep)
			}
			inside, near := false, false
			for _, d := range ds {
				if fq >= d.LoHz && fq <= d.HiHz {
					inside = true
					if rl > d.ReturnLossDB+1e-9 {
						t.Fatalf("trial %d: %v reads %v dB, deeper than its band %+v", trial, fq, rl, d)
					}
				}
				near = near || math.Abs(fq-d.LoHz) < 1e-9 || math.Abs(fq-d.HiHz) < 1e-9
			}
			if !near && (rl >= thr) != inside {
				t.Fatalf("trial %d: at %v reads %v dB but inside a band = %v (bands %+v)", trial, fq, rl, inside, ds)
			}
		}
	}
}

// TestReflectionRenormalizedOnePort checks the fixed order of a 1-port
// shown in another reference: interpolate in the file's reference, then
// renormalise. Z = 20 + j60 Ω at 1 GHz and 140 − j30 Ω at 1.2 GHz in a
// 50 Ω file read at 1.07 GHz as Z(Γ) of Γ = Γ1 + 0.35·(Γ2 − Γ1), Γ in 50 Ω:
// 52.65 + j61.80 Ω (arithmetic), shown in 50 Ω or in 75 Ω alike.
// Renormalising first would read 53.96 + j56.97 Ω in 75 Ω.
func TestReflectionRenormalizedOnePort(t *testing.T) {
	t.Parallel()
	s := NewSweep(2, 1, 50)
	s.FreqHz[0], s.FreqHz[1] = 1e9, 1.2e9
	s.Data[0], s.Data[1] = GammaFromZ(20+60i, 50), GammaFromZ(140-30i, 50)
	ga := s.Data[0] + complex(0.35, 0)*(s.Data[1]-s.Data[0])
	want := 50 * (1 + ga) / (1 - ga)
	if !closeC(want, 52.65+61.80i, 0.005/52) {
		t.Fatalf("reference %v, want 52.65 + j61.80", want)
	}
	for _, z0 := range [][]float64{nil, {50}, {75}, {12.5}} {
		tr, err := NewReflection(s, 0, z0)
		if err != nil {
			t.Fatal(err)
		}
		ro, err := tr.Readout(1.07e9)
		if err != nil || !closeC(ro.Z, want, 1e-12) {
			t.Errorf("z0 %v: Z at 1.07 GHz = %v (%v), want %v", z0, ro.Z, err, want)
		}
		if len(z0) == 1 && ro.Z0Ohm != z0[0] {
			t.Errorf("z0 %v: readout in %v Ω", z0, ro.Z0Ohm)
		}
	}
}

// twoPortRLC returns a 2-port sweep of a series R, L, C between the ports
// (ABCD [1, Z; 0, 1]; D. M. Pozar, Microwave Engineering, Section 4.4,
// table of ABCD matrices, from memory), with a shunt capacitor at port 2
// so that S11 ≠ S22.
func twoPortRLC(freq []float64, r, l, c, cp float64) *Sweep {
	s := NewSweep(len(freq), 2, 50)
	copy(s.FreqHz, freq)
	for k, f := range freq {
		z := complex(r, 0) + ImpedanceOfL(l, f) + ImpedanceOfC(c, f)
		a := ABCD{1, z, 0, 1}.Mul(ABCD{1, 0, AdmittanceOfC(cp, f), 1})
		m := ABCDToS(a, 50, 50)
		copy(s.Matrix(k), m[:])
	}
	return s
}

// TestReflectionRenormalizedTwoPort checks a 2-port shown in 75 Ω against
// its definition, Renormalize of InterpAt: at 500 frequencies the two agree
// to rounding, every band edge (found by bisection for a multi-port) reads
// the threshold, and at every zero crossing X reads zero.
func TestReflectionRenormalizedTwoPort(t *testing.T) {
	t.Parallel()
	freq := grid(600e6, 1300e6, 15)
	s := twoPortRLC(freq, 10, 30e-9, 1e-12, 0.5e-12)
	to := []float64{75, 75}
	for port := range 2 {
		tr, err := NewReflection(s, port, to)
		if err != nil {
			t.Fatal(err)
		}
		m, w := make([]complex128, 4), make([]complex128, 4)
		for i := range 500 {
			f := 600e6 + 700e6*float64(i)/499
			if _, err := s.InterpAt(m, f); err != nil {
				t.Fatal(err)
			}
			if _, err := Renormalize(w, m, 2, s.Z0, to); err != nil {
				t.Fatal(err)
			}
			g, err := tr.At(f)
			if err != nil || !closeC(g, w[port*2+port], 1e-12) {
				t.Fatalf("port %d at %v Hz: %v, want %v", port+1, f, g, w[port*2+port])
			}
		}
		ds := tr.Dips(6, 0)
		if len(ds) == 0 {
			t.Errorf("port %d: no band at 6 dB", port+1)
		}
		for _, d := range ds {
			for _, f := range []float64{d.LoHz, d.HiHz} {
				if ro, _ := tr.Readout(f); math.Abs(ro.ReturnLossDB-6) > 1e-9 && f != freq[0] && f != freq[len(freq)-1] {
					t.Errorf("port %d: edge %v Hz reads %v dB", port+1, f, ro.ReturnLossDB)
				}
			}
		}
		cs := tr.ZeroCrossings()
		if len(cs) == 0 {
			t.Errorf("port %d: no zero crossing", port+1)
		}
		for _, c := range cs {
			if ro, _ := tr.Readout(c.FreqHz); math.Abs(imag(ro.Z)) > 1e-6 {
				t.Errorf("port %d: X at the crossing %v Hz is %v Ω", port+1, c.FreqHz, imag(ro.Z))
			}
		}
	}
}

// TestReflectionCrossingsReadZero checks that a zero crossing of a coarse
// trace is where the interpolated readout reads X = 0, for a series RLC
// 5 Ω, 100 nH, 10 pF) in 50 Ω swept in 10 MHz steps, and that shown
// in 75 Ω it is at the same frequency (a real reference does not move the
// frequency where Z is real). Interpolating X linearly between the points
// puts it elsewhere, where the readout does not read zero.
func TestReflectionCrossingsReadZero(t *testing.T) {
	t.Parallel()
	freq := grid(100e6, 250e6, 16)
	s := NewSweep(len(freq), 1, 50)
	copy(s.FreqHz, freq)
	copy(s.Data, gammas(seriesRLC(freq, 5, 100e-9, 10e-12), 50))
	var at []float64
	for _, z0 := range [][]float64{nil, {75}} {
		tr, err := NewReflection(s, 0, z0)
		if err != nil {
			t.Fatal(err)
		}
		cs := tr.ZeroCrossings()
		if len(cs) != 1 || !cs[0].Rising {
			t.Fatalf("z0 %v: crossings %+v, want one rising", z0, cs)
		}
		ro, _ := tr.Readout(cs[0].FreqHz)
		if math.Abs(imag(ro.Z)) > 1e-9 {
			t.Errorf("z0 %v: X at the crossing = %v Ω, want 0", z0, imag(ro.Z))
		}
		at = append(at, cs[0].FreqHz)
	}
	if math.Abs(at[0]-at[1]) > 1e-6 {
		t.Errorf("crossing at %v Hz in 50 Ω but %v Hz in 75 Ω", at[0], at[1])
	}
	z := seriesRLC(freq, 5, 100e-9, 10e-12)
	x := ReactanceZeroCrossings(freq, z)[0].FreqHz
	ro, _ := ReflectionOf(freq, s.Data, 50).Readout(x)
	if math.Abs(imag(ro.Z)) < 1e-3 {
		t.Errorf("the X-linear crossing %v Hz reads X = %v Ω; the coarse grid should show the difference", x, imag(ro.Z))
	}
}

func TestQuadRoots01(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name    string
		a, b, c float64
		want    []float64
	}{
		// (t − 0.25)(t − 0.75) = t² − t + 0.1875 (arithmetic)
		{"two roots", 1, -1, 0.1875, []float64{0.25, 0.75}},
		{"one inside", 1, -1.25, 0.25, []float64{0.25}}, // roots 0.25 and 1
		{"none real", 1, 0, 1, nil},
		{"linear", 0, 2, -1, []float64{0.5}},
		{"constant", 0, 0, 1, nil},
		{"double root", 4, -4, 1, []float64{0.5}},
		// (t − 1e-9)(t − 0.5): the small root would cancel in the
		// textbook formula.
		{"small root", 1, -(0.5 + 1e-9), 0.5e-9, []float64{1e-9, 0.5}},
		{"concave", -1, 1, -0.1875, []float64{0.25, 0.75}},
	}
	for _, tc := range tests {
		r, n := quadRoots01(tc.a, tc.b, tc.c)
		if n != len(tc.want) {
			t.Errorf("%s: %d roots %v, want %v", tc.name, n, r[:n], tc.want)
			continue
		}
		for i, w := range tc.want {
			if math.Abs(r[i]-w) > 1e-15*math.Max(1, w)+1e-24 && math.Abs(r[i]-w)/w > 1e-12 {
				t.Errorf("%s: root %d = %v, want %v", tc.name, i, r[i], w)
			}
		}
	}
}

func TestNewReflectionErrors(t *testing.T) {
	t.Parallel()
	s := NewSweep(2, 1, 50)
	s.FreqHz[0], s.FreqHz[1] = 1, 2
	if _, err := NewReflection(s, 0, []float64{-5}); err == nil {
		t.Error("negative reference: no error")
	}
	bad := s.Clone()
	bad.FreqHz[1] = 1
	if _, err := NewReflection(bad, 0, nil); err == nil {
		t.Error("non-increasing sweep: no error")
	}
	tr, _ := NewReflection(s, 0, nil)
	if _, err := tr.At(3); !errors.Is(err, ErrOutOfRange) {
		t.Errorf("At outside: %v, want ErrOutOfRange", err)
	}
	if !panics(func() { NewReflection(s, 1, nil) }) || !panics(func() { NewReflection(s, 0, []float64{50, 50}) }) {
		t.Error("bad port or reference count did not panic")
	}
}

// BenchmarkDips measures the band search on a dense series RLC trace
// (R-1's network, 100–250 MHz) of 1k and 100k points, in the file's
// reference and shown in 75 Ω.
func BenchmarkDips(b *testing.B) {
	for _, n := range []int{1000, 100000} {
		freq := grid(100e6, 250e6, n)
		s := NewSweep(n, 1, 50)
		copy(s.FreqHz, freq)
		copy(s.Data, gammas(seriesRLC(freq, 40, 100e-9, 10e-12), 50))
		for _, to := range [][]float64{nil, {75}} {
			tr, err := NewReflection(s, 0, to)
			if err != nil {
				b.Fatal(err)
			}
			name := fmt.Sprintf("points=%d/z0=%v", n, to)
			b.Run(name, func(b *testing.B) {
				b.ReportAllocs()
				for b.Loop() {
					tr.Dips(10, DipHysteresisDB)
					tr.DeepestDip()
				}
			})
		}
	}
}
