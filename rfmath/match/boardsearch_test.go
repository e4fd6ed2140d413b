package match

import (
	"context"
	"testing"

	"matchbench/rfmath/parts"
)

// SearchOnBoard judges its designs on the board: each one's figures are
// Evaluate's of the design placed on the board, they come ranked by the
// objective, and the best is no worse on the board than the best of the
// parts-alone search placed there (the descent only takes improvements).
// With no board it is Search.
func TestSearchOnBoard(t *testing.T) {
	t.Parallel()
	load := fitLoad()
	bands := []Band{{LoHz: 863e6, HiHz: 870e6, MinReturnLossDB: 10}, {LoHz: 902e6, HiHz: 928e6, MinReturnLossDB: 10}}
	set := &Settings{Model: parts.Typical0402, MaxParts: 2, Top: 3}
	// A trace in gap 2 fits the two-part designs only; one-part designs
	// are placed without it.
	lay := Layout{Footprint: Footprint0603, Traces: []Trace{{Gap: 2, LengthM: 3e-3, Z0Ohm: 70, EpsEff: 3}}}
	alone, err := Search(context.Background(), load, bands, set)
	if err != nil {
		t.Fatal(err)
	}
	plain, err := SearchOnBoard(context.Background(), load, bands, set, Layout{})
	if err != nil {
		t.Fatal(err)
	}
	if len(plain.Designs) != len(alone.Designs) || plain.Designs[0].MarginDB != alone.Designs[0].MarginDB || !plain.Exact {
		t.Errorf("with no board: %+v, Search %+v", plain.Designs[0].Metrics, alone.Designs[0].Metrics)
	}
	res, err := SearchOnBoard(context.Background(), load, bands, set, lay)
	if err != nil {
		t.Fatal(err)
	}
	if res.Exact || len(res.Designs) == 0 {
		t.Fatalf("exact %v, %d designs", res.Exact, len(res.Designs))
	}
	for i, d := range res.Designs {
		pl, err := lay.For(len(d.Network)).Place(d.Network)
		if err != nil {
			t.Fatal(err)
		}
		m, err := Evaluate(load, bands, pl.Network)
		if err != nil {
			t.Fatal(err)
		}
		if m.MarginDB != d.MarginDB || m.WorstPowerToLoad != d.WorstPowerToLoad {
			t.Errorf("design %d: %g dB, %g; Evaluate on the board %g dB, %g", i, d.MarginDB, d.WorstPowerToLoad, m.MarginDB, m.WorstPowerToLoad)
		}
		if i > 0 && objectiveKey(PowerToLoad, d.Metrics) < objectiveKey(PowerToLoad, res.Designs[i-1].Metrics) {
			t.Errorf("design %d ranks above design %d", i, i-1)
		}
	}
	pl, _ := lay.For(len(alone.Designs[0].Network)).Place(alone.Designs[0].Network)
	naive, _ := Evaluate(load, bands, pl.Network)
	if objectiveKey(PowerToLoad, res.Designs[0].Metrics) > objectiveKey(PowerToLoad, naive) {
		t.Errorf("on the board: best %g dB, %g; the parts-alone best placed there %g dB, %g", res.Designs[0].MarginDB, res.Designs[0].WorstPowerToLoad, naive.MarginDB, naive.WorstPowerToLoad)
	}
	t.Logf("parts-alone best on the board: %+.2f dB (%s); searched on the board: %+.2f dB (%s)", naive.MarginDB, alone.Designs[0].Network, res.Designs[0].MarginDB, res.Designs[0].Network)

	// A board that detunes the parts-alone best (70 Ω of trace between
	// its two parts): the search on the board does better than placing it.
	lay1 := Layout{Footprint: Footprint0603, Traces: []Trace{{Gap: 1, LengthM: 3e-3, Z0Ohm: 70, EpsEff: 3}}}
	res1, err := SearchOnBoard(context.Background(), load, bands, set, lay1)
	if err != nil {
		t.Fatal(err)
	}
	pl1, _ := lay1.For(len(alone.Designs[0].Network)).Place(alone.Designs[0].Network)
	naive1, _ := Evaluate(load, bands, pl1.Network)
	if !(res1.Designs[0].MarginDB > naive1.MarginDB+0.5) {
		t.Errorf("trace between the parts: searched on the board %+.2f dB, the parts-alone best placed there %+.2f dB", res1.Designs[0].MarginDB, naive1.MarginDB)
	}
	t.Logf("trace between the parts: parts-alone best on the board %+.2f dB; searched on the board %+.2f dB (%s)", naive1.MarginDB, res1.Designs[0].MarginDB, res1.Designs[0].Network)
}
