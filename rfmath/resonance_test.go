package rfmath

import (
	"errors"
	"math"
	"math/cmplx"
	"testing"
)

// grid returns n frequencies evenly spaced from lo to hi.
func grid(lo, hi float64, n int) []float64 {
	f := make([]float64, n)
	for k := range f {
		f[k] = lo + (hi-lo)*float64(k)/float64(n-1)
	}
	return f
}

// seriesRLC returns the impedance of R + jωL + 1/(jωC) at each frequency.
func seriesRLC(freq []float64, r, l, c float64) []complex128 {
	z := make([]complex128, len(freq))
	for k, f := range freq {
		z[k] = complex(r, 0) + ImpedanceOfL(l, f) + ImpedanceOfC(c, f)
	}
	return z
}

// parallelRLC returns the impedance of R ∥ L ∥ C at each frequency.
func parallelRLC(freq []float64, r, l, c float64) []complex128 {
	z := make([]complex128, len(freq))
	for k, f := range freq {
		z[k] = 1 / (complex(1/r, 0) + AdmittanceOfL(l, f) + AdmittanceOfC(c, f))
	}
	return z
}

// gammas returns Γ of each impedance in z0.
func gammas(z []complex128, z0 float64) []complex128 {
	g := make([]complex128, len(z))
	for k := range z {
		g[k] = GammaFromZ(z[k], complex(z0, 0))
	}
	return g
}

// rlcEdges returns the frequencies where the reactance of a series L, C
// equals ∓x, the roots of L·ω² ∓ x·ω − 1/C = 0 (arithmetic).
func rlcEdges(l, c, x float64) (lo, hi float64) {
	d := math.Sqrt(x*x + 4*l/c)
	return (-x + d) / (2 * l) / (2 * math.Pi), (x + d) / (2 * l) / (2 * math.Pi)
}

// TestResonanceSeriesRLC checks REFERENCE-CHECKS §9: R = 5 Ω,
// L = 100 nH, C = 10 pF swept 100–250 MHz.
func TestResonanceSeriesRLC(t *testing.T) {
	t.Parallel()
	freq := grid(100e6, 250e6, 15001) // 10 kHz steps
	z := seriesRLC(freq, 5, 100e-9, 10e-12)
	cs := ReactanceZeroCrossings(freq, z)
	if len(cs) != 1 {
		t.Fatalf("crossings = %+v, want one", cs)
	}
	c := cs[0]
	// R-6 (C): X crosses − → + at 159.155 MHz; exact f0 = 1e9/(2π).
	if !c.Rising || math.Abs(c.FreqHz-159.1549e6) > 0.5e3 {
		t.Errorf("crossing = %+v, want rising at 159.1549 MHz", c)
	}
	if !(freq[c.Index] <= c.FreqHz && c.FreqHz < freq[c.Index+1]) {
		t.Errorf("Index %d does not bracket %v", c.Index, c.FreqHz)
	}
	r, err := ResonanceQ(freq, z, c)
	if err != nil {
		t.Fatal(err)
	}
	// R-1 (C): Q = 20, BW = 7.957747 MHz, edges 155.2258 and 163.1835 MHz,
	// Z(f0) = 5 Ω.
	if !r.Series || math.Abs(r.ROhm-5) > 1e-9 {
		t.Errorf("resonance = %+v, want series, 5 Ω", r)
	}
	if math.Abs(r.Q-20) > 1e-4 || math.Abs(r.HiHz-r.LoHz-7.957747e6) > 20 {
		t.Errorf("Q = %v, BW = %v; want 20, 7.957747 MHz", r.Q, r.HiHz-r.LoHz)
	}
	if math.Abs(r.LoHz-155.2258e6) > 50 || math.Abs(r.HiHz-163.1835e6) > 50 {
		t.Errorf("edges %v, %v; want 155.2258, 163.1835 MHz", r.LoHz, r.HiHz)
	}
}

// TestResonanceParallelRLC checks REFERENCE-CHECKS §9 R-3: R = 1 kΩ,
// L = 100 nH, C = 10 pF in parallel: Q = 10, BW = 15.9155 MHz.
func TestResonanceParallelRLC(t *testing.T) {
	t.Parallel()
	freq := grid(100e6, 250e6, 15001)
	z := parallelRLC(freq, 1000, 100e-9, 10e-12)
	cs := ReactanceZeroCrossings(freq, z)
	if len(cs) != 1 || cs[0].Rising {
		t.Fatalf("crossings = %+v, want one falling", cs)
	}
	if math.Abs(cs[0].FreqHz-1e9/(2*math.Pi)) > 1e3 {
		t.Errorf("f0 = %v, want 159.1549 MHz", cs[0].FreqHz)
	}
	r, err := ResonanceQ(freq, z, cs[0])
	if err != nil {
		t.Fatal(err)
	}
	if r.Series || math.Abs(r.ROhm-1000) > 1e-6 || math.Abs(r.Q-10) > 1e-4 || math.Abs(r.HiHz-r.LoHz-15.9155e6) > 100 {
		t.Errorf("resonance = %+v, want parallel, 1 kΩ, Q 10, BW 15.9155 MHz", r)
	}
}

// TestResonanceNoEdge checks that a sweep too narrow for the half-power
// band reports ErrNoEdge.
func TestResonanceNoEdge(t *testing.T) {
	t.Parallel()
	freq := grid(158e6, 161e6, 301)
	z := seriesRLC(freq, 5, 100e-9, 10e-12)
	cs := ReactanceZeroCrossings(freq, z)
	if len(cs) != 1 {
		t.Fatalf("crossings = %+v", cs)
	}
	if _, err := ResonanceQ(freq, z, cs[0]); !errors.Is(err, ErrNoEdge) {
		t.Errorf("err = %v, want ErrNoEdge", err)
	}
	freq = grid(150e6, 161e6, 1101)
	z = seriesRLC(freq, 5, 100e-9, 10e-12)
	cs = ReactanceZeroCrossings(freq, z)
	if _, err := ResonanceQ(freq, z, cs[0]); !errors.Is(err, ErrNoEdge) {
		t.Errorf("upper edge missing: err = %v, want ErrNoEdge", err)
	}
}

// TestReactanceCrossingsPole checks the pole rule: a lossless parallel LC
// passes through infinity, not zero; with a series inductor added it also
// has a true series resonance at ω² = (L + L2)/(L·L2·C) (arithmetic).
func TestReactanceCrossingsPole(t *testing.T) {
	t.Parallel()
	const l, c, l2 = 100e-9, 10e-12, 50e-9
	freq := grid(100e6, 400e6, 3001) // f0 = 159.15 MHz falls between points
	z := make([]complex128, len(freq))
	for k, f := range freq {
		z[k] = 1 / (AdmittanceOfL(l, f) + AdmittanceOfC(c, f))
	}
	if cs := ReactanceZeroCrossings(freq, z); len(cs) != 0 {
		t.Errorf("lossless parallel LC: crossings = %+v, want none", cs)
	}
	for k, f := range freq {
		z[k] += ImpedanceOfL(l2, f)
	}
	cs := ReactanceZeroCrossings(freq, z)
	want := math.Sqrt((l+l2)/(l*l2*c)) / (2 * math.Pi)
	if len(cs) != 1 || !cs[0].Rising || math.Abs(cs[0].FreqHz-want) > 0.01*(freq[1]-freq[0]) {
		t.Errorf("crossings = %+v, want one rising at %v Hz", cs, want)
	}
}

func TestReactanceCrossingsEdgeCases(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name string
		f    []float64
		z    []complex128
		want []Crossing
	}{
		{"empty", nil, nil, nil},
		{"two points", []float64{1, 2}, []complex128{1 - 1i, 1 + 3i}, []Crossing{{0, 1.25, true}}},
		{"run of zeros", []float64{1, 2, 3, 4}, []complex128{1 + 1i, 1, 1, 1 - 1i}, []Crossing{{1, 2.5, false}}},
		{"zero at the end", []float64{1, 2}, []complex128{1 + 1i, 1}, nil},
		{"NaN breaks", []float64{1, 2, 3}, []complex128{1 - 1i, complex(1, math.NaN()), 1 + 1i}, nil},
		{"no change", []float64{1, 2, 3}, []complex128{1 + 1i, 1 + 2i, 1 + 1i}, nil},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			got := ReactanceZeroCrossings(tc.f, tc.z)
			if len(got) != len(tc.want) {
				t.Fatalf("got %+v, want %+v", got, tc.want)
			}
			for i := range got {
				if got[i] != tc.want[i] {
					t.Errorf("got %+v, want %+v", got[i], tc.want[i])
				}
			}
		})
	}
}

// TestDeepestDipLoadedQ checks REFERENCE-CHECKS §9 R-2: the R-1 network in
// 50 Ω has Γ(f0) = −0.818182, VSWR 10, RL 1.7430 dB and loaded Q 1.81818.
func TestDeepestDipLoadedQ(t *testing.T) {
	t.Parallel()
	const l, c = 100e-9, 10e-12
	freq := grid(100e6, 250e6, 15001)
	g := gammas(seriesRLC(freq, 5, l, c), 50)
	d := DeepestDip(freq, g)
	f0 := 1e9 / (2 * math.Pi)
	if math.Abs(d.FreqHz-f0) > 100 || math.Abs(d.ReturnLossDB-1.7430) > 0.5e-4 {
		t.Errorf("dip at %v Hz, %v dB; want %v Hz, 1.7430 dB", d.FreqHz, d.ReturnLossDB, f0)
	}
	if v := VSWR(GammaMagFromReturnLossDB(d.ReturnLossDB)); math.Abs(v-10) > 1e-4 {
		t.Errorf("VSWR at the dip = %v, want 10", v)
	}
	if cmplx.Abs(g[d.Index]+0.818182) > 1e-3 {
		t.Errorf("Γ at the dip's point = %v, want −0.818182", g[d.Index])
	}
	// The half-power edges are where X = ∓(R + Z0) = ∓55 Ω.
	lo, hi := rlcEdges(l, c, 55)
	if math.Abs(d.LoHz-lo) > 2e3 || math.Abs(d.HiHz-hi) > 2e3 || d.LoOpen || d.HiOpen {
		t.Errorf("edges %v, %v; want %v, %v", d.LoHz, d.HiHz, lo, hi)
	}
	if q := d.FreqHz / d.BandwidthHz(); math.Abs(q-1.81818) > 1e-4 {
		t.Errorf("loaded Q = %v, want 1.81818", q)
	}
}

// TestDips checks bands of a trace with two matched series resonators
// (R = Z0 = 50 Ω). For Γ = jX/(2·Z0 + jX), RL ≥ T dB where
// |X| ≤ 2·Z0·g/√(1 − g²), g = 10^(−T/20) (arithmetic).
func TestDips(t *testing.T) {
	t.Parallel()
	const l1, c1 = 100e-9, 10e-12 // 159.15 MHz
	const l2, c2 = 100e-9, 4e-12  // 251.65 MHz
	freq := grid(100e6, 300e6, 20001)
	g := make([]complex128, len(freq))
	for k, f := range freq {
		x1 := ReactanceOfL(l1, f) + ReactanceOfC(c1, f)
		x2 := ReactanceOfL(l2, f) + ReactanceOfC(c2, f)
		// The two resonators in parallel would interact; instead build a
		// trace that follows the first below 205 MHz and the second above,
		// broken by a NaN where it jumps from one to the other (the chord
		// across the jump passes 12 dB inside the threshold circle, and an
		// unbroken trace would rightly read a band there).
		x := x1
		if f > 205e6 {
			x = x2
		}
		g[k] = GammaFromZ(complex(50, x), 50)
		if f > 205e6 && freq[k-1] <= 205e6 {
			g[k] = cmplx.NaN()
		}
	}
	const thr = 10.0
	gt := math.Pow(10, -thr/20)
	xt := 100 * gt / math.Sqrt(1-gt*gt)
	dips := Dips(freq, g, thr)
	if len(dips) != 2 {
		t.Fatalf("dips = %+v, want two", dips)
	}
	for i, lc := range [][2]float64{{l1, c1}, {l2, c2}} {
		d := dips[i]
		lo, hi := rlcEdges(lc[0], lc[1], xt)
		f0 := 1 / (2 * math.Pi * math.Sqrt(lc[0]*lc[1]))
		if math.Abs(d.LoHz-lo) > 2e3 || math.Abs(d.HiHz-hi) > 2e3 || d.LoOpen || d.HiOpen {
			t.Errorf("dip %d: edges %v, %v; want %v, %v", i, d.LoHz, d.HiHz, lo, hi)
		}
		// f0 falls between grid points; the refinement lands within a
		// fraction of the 10 kHz step.
		if math.Abs(d.FreqHz-f0) > 2e3 || d.ReturnLossDB < 40 {
			t.Errorf("dip %d at %v Hz, %v dB; want %v Hz, deep", i, d.FreqHz, d.ReturnLossDB, f0)
		}
		if math.Abs(freq[d.Index]-f0) > freq[1]-freq[0] {
			t.Errorf("dip %d: Index %d at %v Hz", i, d.Index, freq[d.Index])
		}
	}
	if ds := Dips(freq, g, 200); ds != nil {
		t.Errorf("threshold 200 dB: %+v, want none", ds)
	}
}

// TestDipDeepestOnTrace checks the deepest point on a trace of real,
// positive Γ, unevenly sampled, with RL = 30 − 4·(f − 3.3)² dB: between
// points Γ is interpolated linearly in the complex plane, which for a real
// positive Γ is linear in |Γ|, so the least |Γ| of the interpolated trace is
// at a measured point, f = 3 with 30 − 4·0.09 = 29.64 dB (arithmetic).
func TestDipDeepestOnTrace(t *testing.T) {
	t.Parallel()
	freq := []float64{0, 1, 2, 2.5, 3, 4.5, 5, 7}
	g := make([]complex128, len(freq))
	for k, f := range freq {
		rl := 30 - 4*(f-3.3)*(f-3.3)
		g[k] = complex(math.Pow(10, -rl/20), 0) // |Γ| > 1 where rl < 0
	}
	d := DeepestDip(freq, g)
	if d.FreqHz != 3 || math.Abs(d.ReturnLossDB-29.64) > 1e-9 || d.Index != 4 {
		t.Errorf("dip = %+v, want 3, 29.64 dB at index 4", d)
	}
	ds := Dips(freq, g, 20)
	if len(ds) != 1 {
		t.Fatalf("dips = %+v", ds)
	}
	mag := func(f float64) float64 { return math.Pow(10, -(30-4*(f-3.3)*(f-3.3))/20) }
	wantLo := 1 + (0.1-mag(1))/(mag(2)-mag(1))
	wantHi := 4.5 + (0.1-mag(4.5))/(mag(5)-mag(4.5))*0.5
	if math.Abs(ds[0].LoHz-wantLo) > 1e-9 || math.Abs(ds[0].HiHz-wantHi) > 1e-9 {
		t.Errorf("edges %v, %v; want %v, %v", ds[0].LoHz, ds[0].HiHz, wantLo, wantHi)
	}
}

func TestDipsEdgeCases(t *testing.T) {
	t.Parallel()
	f := []float64{1, 2, 3, 4, 5}
	// Open at both ends, a NaN splitting the band, a perfect match.
	g := []complex128{0.01, 0.02, complex(math.NaN(), 0), 0, 0.5}
	ds := Dips(f, g, 20)
	if len(ds) != 2 {
		t.Fatalf("dips = %+v, want two", ds)
	}
	if !ds[0].LoOpen || ds[0].LoHz != 1 || !ds[0].HiOpen || ds[0].HiHz != 2 || ds[0].Index != 0 || ds[0].FreqHz != 1 {
		t.Errorf("first dip = %+v", ds[0])
	}
	// Γ = 0 at f = 4: RL = +Inf, not refined; between Γ = 0 and 0.5 the
	// interpolated |Γ| reaches 0.1 (20 dB) a fifth of the way: 4.2.
	d := ds[1]
	wantHi := 4.2
	if d.Index != 3 || d.FreqHz != 4 || !math.IsInf(d.ReturnLossDB, 1) || math.Abs(d.HiHz-wantHi) > 1e-12 || d.LoHz != 4 || !d.LoOpen {
		t.Errorf("second dip = %+v, want HiHz %v, LoHz 4 open (beside the NaN)", d, wantHi)
	}
	if d := DeepestDip(nil, nil); d.Index != -1 {
		t.Errorf("empty DeepestDip = %+v", d)
	}
	if d := DeepestDip([]float64{1}, []complex128{complex(math.NaN(), 0)}); d.Index != -1 {
		t.Errorf("NaN DeepestDip = %+v", d)
	}
	if ds := Dips(nil, nil, 10); ds != nil {
		t.Errorf("empty Dips = %+v", ds)
	}
	// An open everywhere: RL 0 at every frequency, so the half-power
	// threshold is 0 dB and the band is the whole sweep, both ends open.
	d = DeepestDip(f, []complex128{1, 1, 1, 1, 1})
	if !d.LoOpen || !d.HiOpen || d.ReturnLossDB != 0 || d.LoHz != 1 || d.HiHz != 5 {
		t.Errorf("open: %+v", d)
	}
	// A lossless trace round the edge of the chart in 10° steps: the chord
	// between two points passes inside it, closest at its middle, where
	// |Γ| = cos 5° and RL = −20·log10(cos 5°) = 0.033115 dB (arithmetic).
	g = make([]complex128, 5)
	for k := range g {
		g[k] = cmplx.Rect(1, float64(k)*10*math.Pi/180)
	}
	d = DeepestDip(f, g)
	if want := -20 * math.Log10(math.Cos(5*math.Pi/180)); math.Abs(d.ReturnLossDB-want) > 1e-12 || math.Abs(d.FreqHz-math.Floor(d.FreqHz)-0.5) > 1e-9 {
		t.Errorf("lossless trace: %+v, want %v dB midway between points", d, want)
	}
}

func TestResonancePanics(t *testing.T) {
	t.Parallel()
	f := []float64{1, 2, 3}
	z := []complex128{1 - 1i, 1, 1 + 1i}
	tests := []struct {
		name string
		f    func()
	}{
		{"Dips length", func() { Dips(f, z[:2], 10) }},
		{"DeepestDip length", func() { DeepestDip(f[:1], z) }},
		{"ReactanceZeroCrossings length", func() { ReactanceZeroCrossings(f, nil) }},
		{"ResonanceQ length", func() { _, _ = ResonanceQ(f, z[:2], Crossing{}) }},
		{"ResonanceQ index", func() { _, _ = ResonanceQ(f, z, Crossing{Index: 2}) }},
		{"ResonanceQ negative index", func() { _, _ = ResonanceQ(f, z, Crossing{Index: -1}) }},
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

func TestInterpolationHelpers(t *testing.T) {
	t.Parallel()
	if x := crossAt(1, 3, 5, 5, 5); x != 2 {
		t.Errorf("crossAt flat = %v, want the midpoint 2", x)
	}
	if x := crossAt(1, 3, 0, 10, 5); x != 2 {
		t.Errorf("crossAt = %v, want 2", x)
	}
}

// TestDipsChatter checks the hysteresis of Dips on a smooth dip with a
// deterministic wiggle that makes the return loss cross the threshold
// several times near each edge: RL = 12 − 2·(f − 5)² + 0.12·sin(2π·f/0.03)
// dB (arithmetic; the wiggle stands in for measurement noise of about
// 0.1 dB). The edges must be the outermost crossings of the threshold,
// interpolated linearly in |Γ| (Γ is real and positive) as in
// TestDipRefinement.
func TestDipsChatter(t *testing.T) {
	t.Parallel()
	freq := grid(3, 7, 801)
	rl := make([]float64, len(freq))
	g := make([]complex128, len(freq))
	for k, f := range freq {
		rl[k] = 12 - 2*(f-5)*(f-5) + 0.12*math.Sin(2*math.Pi*f/0.03)
		g[k] = complex(math.Pow(10, -rl[k]/20), 0)
	}
	const thr = 10.0
	// Without hysteresis the band falls apart: the trace is made so.
	if ds := DipsHysteresis(freq, g, thr, 0); len(ds) < 3 {
		t.Fatalf("no hysteresis: %d bands, want the chatter to split the band", len(ds))
	}
	first, last := -1, -1
	for k := range rl {
		if rl[k] >= thr {
			if first < 0 {
				first = k
			}
			last = k
		}
	}
	gt := math.Pow(10, -thr/20)
	cross := func(a, b int) float64 {
		ga, gb := real(g[a]), real(g[b])
		return freq[a] + (gt-ga)/(gb-ga)*(freq[b]-freq[a])
	}
	wantLo, wantHi := cross(first-1, first), cross(last, last+1)
	ds := Dips(freq, g, thr)
	if len(ds) != 1 {
		t.Fatalf("Dips = %+v, want one band", ds)
	}
	d := ds[0]
	if math.Abs(d.LoHz-wantLo) > 1e-12 || math.Abs(d.HiHz-wantHi) > 1e-12 || d.LoOpen || d.HiOpen {
		t.Errorf("edges %v, %v; want %v, %v", d.LoHz, d.HiHz, wantLo, wantHi)
	}
	// The smooth part crosses 10 dB at 5 ± 1; the wiggle moves the
	// outermost crossings out by at most 0.12/|slope| = 0.12/4 = 0.03.
	if d.LoHz < 4-0.035 || d.LoHz > 4 || d.HiHz < 6 || d.HiHz > 6+0.035 {
		t.Errorf("edges %v, %v not near 4 and 6", d.LoHz, d.HiHz)
	}
	if math.Abs(d.FreqHz-5) > 0.05 {
		t.Errorf("deepest point at %v, want near 5", d.FreqHz)
	}

	// Two dips whose gap falls 1 dB below the threshold stay two bands.
	for k, f := range freq {
		rl := 11 - 8*(f-4.5)*(f-4.5) // 9 dB at f = 5
		if f > 5 {
			rl = 11 - 8*(f-5.5)*(f-5.5)
		}
		g[k] = complex(math.Pow(10, -rl/20), 0)
	}
	if ds := Dips(freq, g, thr); len(ds) != 2 {
		t.Errorf("two dips with a 1 dB gap: %+v, want two bands", ds)
	}
}
