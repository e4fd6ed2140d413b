package match

import (
	"context"
	"errors"
	"math"
	"strings"
	"testing"

	"matchbench/rfmath"
	"matchbench/rfmath/parts"
)

// detuned returns lowBandAntenna with its resonator's inductance scaled by
// lScale and its loss resistance raised by dR ohms: the same antenna in
// another condition (invented for the tests).
func detuned(lScale, dR float64) func(float64) complex128 {
	return func(f float64) complex128 {
		w := 2 * math.Pi * f
		const c, pad = 1.0e-12, 0.5e-12
		r := 3 + dR + 10*(f/950e6)*(f/950e6)
		z := complex(r, w*30e-9*lScale-1/(w*c))
		return 1 / (1/z + complex(0, w*pad))
	}
}

// threeConditions are three members on three different grids.
func threeConditions() []Member {
	return []Member{
		{Name: "free", Load: loadOf(grid(800e6, 1000e6, 101), 50, detuned(1, 0))},
		{Name: "hand", Load: loadOf(grid(780e6, 990e6, 43), 50, detuned(1.03, 2))},
		{Name: "table", Load: loadOf(grid(850e6, 950e6, 67), 50, detuned(0.985, 0.5))},
	}
}

// TestSearchSetBruteForce checks the search across three members on three
// grids against the test's own brute force: every network of every shape,
// each judged on each member by Evaluate, the worst over the members taken
// here, ranked by the objective as Search's doc defines it.
func TestSearchSetBruteForce(t *testing.T) {
	t.Parallel()
	ms := threeConditions()
	bands := []Band{{863e6, 870e6, 8, 0}, {902e6, 928e6, 8, 0}}
	for _, obj := range []Objective{PowerToLoad, ReturnLoss} {
		set := Settings{LSeries: "E12", CSeries: "E12", MinParts: 2, MaxParts: 3, Model: parts.Typical0402, Objective: obj,
			LRange: [2]float64{1e-9, 47e-9}, CRange: [2]float64{0.5e-12, 33e-12}, Top: 1000, Window: -1}
		res, err := SearchSet(context.Background(), ms, bands, &set)
		if err != nil {
			t.Fatal(err)
		}
		if !res.Exact {
			t.Errorf("not exact")
		}
		want := bruteForceSet(t, ms, bands, &set)
		if len(res.Designs) != len(want) {
			t.Fatalf("%v: %d designs, %d shapes", obj, len(res.Designs), len(want))
		}
		for _, d := range res.Designs {
			b := want[shapeKey(d.Network)]
			got, exp := objValue(d.Metrics, obj), objValue(b.m, obj)
			if math.Abs(got-exp) > 1e-9 {
				t.Errorf("%v %s: search %v (%.12g), brute force %v (%.12g)", obj, shapeKey(d.Network), d.Network, got, b.net, exp)
			}
			if len(d.Members) != 3 {
				t.Errorf("%v %v: %d members' figures", obj, d.Network, len(d.Members))
			}
			if w := d.Members[d.WorstMember].Bands[d.WorstBand].MarginDB; w != d.MarginDB {
				t.Errorf("worst member %d band %d has %v, the design %v", d.WorstMember, d.WorstBand, w, d.MarginDB)
			}
		}
	}
}

func seriesValues(t *testing.T, name string, r [2]float64) []float64 {
	t.Helper()
	s, err := parts.Lookup(name)
	if err != nil {
		t.Fatal(err)
	}
	a, b := s.Span(r[0], r[1])
	var v []float64
	for n := a; n <= b; n++ {
		v = append(v, s.Value(n))
	}
	return v
}

// TestSetOfOne: a set of one member is the single load, exactly.
func TestSetOfOne(t *testing.T) {
	t.Parallel()
	l := loadOf(grid(800e6, 1000e6, 101), 50, lowBandAntenna)
	bands := []Band{{863e6, 870e6, 10, 0}, {902e6, 928e6, 10, 0}}
	set := &Settings{MaxParts: 3, Model: parts.Typical0402}
	a, err := Search(context.Background(), l, bands, set)
	if err != nil {
		t.Fatal(err)
	}
	b, err := SearchSet(context.Background(), []Member{{Name: "only", Load: l, Weight: 2}}, bands, set)
	if err != nil {
		t.Fatal(err)
	}
	for i := range a.Designs {
		if a.Designs[i].Network.String() != b.Designs[i].Network.String() || a.Designs[i].MarginDB != b.Designs[i].MarginDB ||
			a.Designs[i].WorstPowerToLoad != b.Designs[i].WorstPowerToLoad {
			t.Errorf("design %d: %v vs %v", i, a.Designs[i].Network, b.Designs[i].Network)
		}
	}
	m, _ := Evaluate(l, bands, a.Designs[0].Network)
	sm, err := EvaluateSet([]Member{{Load: l}}, bands, a.Designs[0].Network)
	if err != nil || sm.MarginDB != m.MarginDB || sm.WorstRLdB != m.WorstRLdB || sm.WorstPowerToLoad != m.WorstPowerToLoad || sm.Bands[1].MeanRLdB != m.Bands[1].MeanRLdB {
		t.Errorf("EvaluateSet %+v, Evaluate %+v, %v", sm.Metrics, m, err)
	}
}

// TestSetMembers: a member whose sweep does not reach a band is named in
// the error; an advisory member is judged but does not bind; a member in
// 75 Ω is renormalised to the set's 50 Ω (REFERENCE-CHECKS §11: the same
// impedance in either reference is the same load).
func TestSetMembers(t *testing.T) {
	t.Parallel()
	ms := threeConditions()
	bands := []Band{{863e6, 870e6, 10, 0}, {902e6, 928e6, 10, 0}}
	short := Member{Name: "narrow-sweep", Load: loadOf(grid(880e6, 1000e6, 50), 50, detuned(1, 0))}
	if _, err := SearchSet(context.Background(), append(ms, short), bands, nil); err == nil || !strings.Contains(err.Error(), "narrow-sweep") {
		t.Errorf("uncovered member: %v", err)
	}
	n := Network{{Kind: ShuntL, Value: 2.2e-9, Series: "E24"}, {Kind: SeriesL, Value: 1.8e-9, Series: "E24"}, {Kind: ShuntC, Value: 6.8e-12, Series: "E24"}}.WithModel(parts.Typical0402)
	bad := Member{Name: "pole", Load: loadOf(grid(800e6, 1000e6, 101), 50, detuned(1.2, 20)), Advisory: true}
	s, err := EvaluateSet(append(ms, bad), bands, n)
	if err != nil {
		t.Fatal(err)
	}
	s3, _ := EvaluateSet(ms, bands, n)
	if s.MarginDB != s3.MarginDB || len(s.Members) != 4 || s.Members[3].MarginDB >= s.MarginDB {
		t.Errorf("advisory member binds: %v vs %v (its own %v)", s.MarginDB, s3.MarginDB, s.Members[3].MarginDB)
	}
	l50 := ms[0].Load
	g75 := make([]complex128, len(l50.Gamma))
	for k, g := range l50.Gamma {
		g75[k] = rfmath.GammaFromZ(rfmath.ZFromGamma(g, 50), 75)
	}
	r50, _ := EvaluateSet([]Member{ms[1], {Load: l50}}, bands, n)
	r75, _ := EvaluateSet([]Member{ms[1], {Load: Load{FreqHz: l50.FreqHz, Gamma: g75, Z0Ohm: 75}}}, bands, n)
	if math.Abs(r50.Members[1].MarginDB-r75.Members[1].MarginDB) > 1e-9 {
		t.Errorf("50 Ω member %v, the same in 75 Ω %v", r50.Members[1].MarginDB, r75.Members[1].MarginDB)
	}
	if _, err := SearchSet(context.Background(), []Member{{Load: l50, Advisory: true}}, bands, nil); !errors.Is(err, ErrNoLoad) {
		t.Errorf("all advisory: %v", err)
	}
}

// TestYieldSet: a lot of two members, one that always passes and one that
// always fails with zero tolerances, weighted 3 to 1, passes in about 75 %
// of the builds (binomial: 2000 builds, σ ≈ 1 %); judged as conditions it
// never passes; a lot of identical members has the single load's yield.
func TestYieldSet(t *testing.T) {
	t.Parallel()
	l, bands, n := yieldCase(t)
	nom, err := Evaluate(l, bands, n)
	if err != nil || !nom.Meets() {
		t.Fatalf("the yield case's nominal must pass: %v %v", nom.MarginDB, err)
	}
	off := make([]complex128, len(l.Gamma))
	for k := range off {
		off[k] = 0.9 // a load no network here matches
	}
	fail := Load{FreqHz: l.FreqHz, Gamma: off, Z0Ohm: l.Z0Ohm}
	zero := make([]parts.Tolerance, len(n))
	set := []Member{{Name: "good", Load: l, Weight: 3}, {Name: "bad", Load: fail, Weight: 1}}
	r, err := YieldSet(context.Background(), set, Lot, bands, n, &YieldSettings{Builds: 2000, Tolerances: zero})
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(r.Yield-0.75) > 0.04 {
		t.Errorf("lot yield %v, want about 0.75", r.Yield)
	}
	c, _ := YieldSet(context.Background(), set, Conditions, bands, n, &YieldSettings{Builds: 200, Tolerances: zero})
	if c.Yield != 0 {
		t.Errorf("conditions yield %v with a failing member", c.Yield)
	}
	one, _ := Yield(context.Background(), l, bands, n, &YieldSettings{Builds: 500})
	same, _ := YieldSet(context.Background(), []Member{{Load: l}, {Load: l}}, Lot, bands, n, &YieldSettings{Builds: 500})
	if same.Passed != one.Passed {
		t.Errorf("lot of identical members: %d passed, single load %d", same.Passed, one.Passed)
	}
}
