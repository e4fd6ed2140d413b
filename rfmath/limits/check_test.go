package limits

import (
	"math"
	"math/cmplx"
	"testing"
)

// seriesRLC returns Γ (50 Ω) of R + j(ωL − 1/(ωC)) on f: the series
// resonance of REFERENCE-CHECKS §9 R-1 scaled to 100 MHz … 250 MHz.
func seriesRLC(f []float64, r, l, c float64) []complex128 {
	g := make([]complex128, len(f))
	for k, fk := range f {
		w := 2 * math.Pi * fk
		z := complex(r, w*l-1/(w*c))
		g[k] = (z - 50) / (z + 50)
	}
	return g
}

func TestCheck(t *testing.T) {
	t.Parallel()
	// 50 Ω, 100 nH, 10 pF: resonance at 1/(2π√(LC)) = 159.155 MHz where
	// Γ = 0. Off resonance |Γ| = |X|/|100 + jX| (R = 50), so RL ≥ 10 dB
	// (|Γ| ≤ 0.316228) while |X| ≤ 100·0.316228/√(1 − 0.1) = 33.33 Ω.
	f := make([]float64, 151)
	for k := range f {
		f[k] = 100e6 + 1e6*float64(k)
	}
	g := seriesRLC(f, 50, 100e-9, 10e-12)
	rlAt := func(fHz float64) float64 {
		w := 2 * math.Pi * fHz
		x := w*100e-9 - 1/(w*10e-12)
		return -20 * math.Log10(math.Abs(x)/math.Hypot(100, x))
	}
	bands := []Band{
		{LoHz: 150e6, HiHz: 170e6, Kind: ReturnLoss, Value: 10}, // passes
		{LoHz: 120e6, HiHz: 130e6, Kind: ReturnLoss, Value: 10}, // fails
		{LoHz: 150.5e6, HiHz: 160.5e6, Kind: VSWR, Value: 2},    // edges between points
		{LoHz: 90e6, HiHz: 110e6, Kind: ReturnLoss, Value: 3},   // not covered
		{LoHz: 159e6, HiHz: 159e6, Kind: ReturnLoss, Value: 20}, // one frequency, on a point
		{LoHz: 159.5e6, HiHz: 159.5e6, Kind: ReturnLoss, Value: 20},
	}
	res := Check(f, g, bands)
	if len(res) != len(bands) {
		t.Fatalf("%d results", len(res))
	}
	// Band 0: the worst point is an edge; 170 MHz is further from
	// resonance (in X) than 150 MHz: X(150) = −11.84, X(170) = +13.18 Ω.
	r := res[0]
	if !r.Covered || !r.Pass || r.WorstHz != 170e6 || r.Points != 21 || math.Abs(r.WorstReturnLossDB-rlAt(170e6)) > 1e-9 || math.Abs(r.MarginDB-(rlAt(170e6)-10)) > 1e-9 {
		t.Errorf("band 0: %+v (RL at 170 MHz %v)", r, rlAt(170e6))
	}
	r = res[1]
	if !r.Covered || r.Pass || r.WorstHz != 120e6 || math.Abs(r.MarginDB-(rlAt(120e6)-10)) > 1e-9 || r.MarginDB >= 0 {
		t.Errorf("band 1: %+v", r)
	}
	// Band 2: VSWR 2 is RL 9.5424 dB; the edges are interpolated (10 points
	// inside, plus 150.5 and 160.5 MHz).
	r = res[2]
	if !r.Covered || !r.Pass || r.Points != 12 || r.WorstHz != 150.5e6 {
		t.Errorf("band 2: %+v", r)
	}
	k := 50 // 150 MHz
	gi := g[k] + 0.5*(g[k+1]-g[k])
	if want := -20*math.Log10(cmplx.Abs(gi)) - 9.542425094; math.Abs(r.MarginDB-want) > 1e-8 {
		t.Errorf("band 2 margin %v, want %v (interpolated Γ)", r.MarginDB, want)
	}
	r = res[3]
	if r.Covered || r.Pass || !math.IsNaN(r.MarginDB) || r.Points != 0 {
		t.Errorf("band 3: %+v", r)
	}
	if r := res[4]; !r.Covered || r.Points != 1 || r.WorstHz != 159e6 {
		t.Errorf("band 4: %+v", r)
	}
	if r := res[5]; !r.Covered || r.Points != 1 || r.WorstHz != 159.5e6 {
		t.Errorf("band 5: %+v", r)
	}
	if w := Worst(res); w != 3 {
		t.Errorf("Worst = %d, want the band not covered (3)", w)
	}
	if w := Worst(res[:3]); w != 1 {
		t.Errorf("Worst of the first three = %d, want 1", w)
	}
	if Worst(nil) != -1 {
		t.Error("Worst(nil)")
	}
	// A NaN point fails with −Inf.
	g[55] = cmplx.NaN()
	if r := Check(f, g, bands[:1])[0]; r.Pass || !math.IsInf(r.MarginDB, -1) || r.WorstHz != 155e6 {
		t.Errorf("NaN point: %+v", r)
	}
	// An exact match at the limit passes: |Γ| = 1/3 against VSWR 2.
	if r := Check([]float64{1e6}, []complex128{1.0 / 3}, []Band{{LoHz: 1e6, HiHz: 1e6, Kind: VSWR, Value: 2}})[0]; !r.Pass {
		t.Errorf("at the limit: %+v", r)
	}
	if r := Check(nil, nil, bands[:1])[0]; r.Covered {
		t.Error("empty sweep covered")
	}
	defer func() {
		if recover() == nil {
			t.Error("length mismatch did not panic")
		}
	}()
	Check(f, g[:3], bands)
}

// TestCheckPower checks a power limit on a measured load: the share of the
// available power a load of reflection Γ takes is 1 − |Γ|² (REFERENCE-CHECKS
// §2a: VSWR 2 delivers 88.889 %), so with the series RLC of TestCheck a
// limit of 88.889 % is the VSWR-2 limit, and the margin is
// 10·log10(share/least) dB.
func TestCheckPower(t *testing.T) {
	t.Parallel()
	f := make([]float64, 151)
	for k := range f {
		f[k] = 100e6 + 1e6*float64(k)
	}
	g := seriesRLC(f, 50, 100e-9, 10e-12)
	least := 1 - 1.0/9 // VSWR 2: |Γ| = 1/3
	res := Check(f, g, []Band{
		{LoHz: 150.5e6, HiHz: 160.5e6, Kind: Power, Value: least},
		{LoHz: 150.5e6, HiHz: 160.5e6, Kind: VSWR, Value: 2},
	})
	p, v := res[0], res[1]
	if p.Pass != v.Pass || p.WorstHz != v.WorstHz || p.Points != v.Points {
		t.Errorf("power %+v, VSWR %+v", p, v)
	}
	gw := math.Pow(10, -p.WorstReturnLossDB/20)
	if share := 1 - gw*gw; math.Abs(p.WorstPowerToLoad-share) > 1e-12 || math.Abs(p.MarginDB-10*math.Log10(share/least)) > 1e-12 {
		t.Errorf("power margin %v at %v of the power, want %v", p.MarginDB, p.WorstPowerToLoad, 10*math.Log10(share/least))
	}
}
