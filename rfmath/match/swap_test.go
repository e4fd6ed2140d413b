package match

import (
	"context"
	"math"
	"sort"
	"testing"

	"matchbench/rfmath/parts"
)

// swapBands are two invented bands on the fit tests' antenna.
var swapBands = []Band{{LoHz: 863e6, HiHz: 870e6, MinReturnLossDB: 6}, {LoHz: 902e6, HiHz: 928e6, MinReturnLossDB: 6}}

// swapFit returns the fit of the first synthetic board on a clean sweep.
func swapFit(t *testing.T) (*BoardFit, fitCase) {
	t.Helper()
	c := fitCases()[0]
	clean := fitLoad()
	fit, err := FitBoard(clean, builtOf(t, clean, c.board(), c.trueLay), c.design, c.lay, nil)
	if err != nil {
		t.Fatal(err)
	}
	return fit, c
}

// NextSwaps against a plain enumeration: every single change within the
// steps, each judged by Evaluate on the board as fitted, ranked by the
// objective (meet every requirement, then the most power; else the least
// miss).
func TestNextSwapsAgainstEnumeration(t *testing.T) {
	t.Parallel()
	fit, c := swapFit(t)
	load := fitLoad()
	const steps = 3
	res, err := NextSwaps(context.Background(), load, swapBands, fit, &SwapSettings{Steps: steps, Top: 50, Builds: -1})
	if err != nil {
		t.Fatal(err)
	}
	type cand struct {
		part int
		to   float64
		m    Metrics
	}
	var all []cand
	for i, p := range c.design {
		ser, _ := parts.Lookup(p.Series)
		idx := ser.Index(p.Value)
		e := fit.Board.Element(RolePart, i)
		for d := -steps; d <= steps; d++ {
			if d == 0 {
				continue
			}
			b := fit.Board.Network.Clone()
			b[e].Value = ser.Value(idx + d)
			m, err := Evaluate(load, swapBands, b)
			if err != nil {
				t.Fatal(err)
			}
			all = append(all, cand{i, ser.Value(idx + d), m})
		}
	}
	better := func(a, b Metrics) bool {
		switch {
		case a.Meets() && !b.Meets():
			return true
		case a.Meets() && b.Meets():
			return a.WorstPowerToLoad > b.WorstPowerToLoad
		case !a.Meets() && !b.Meets():
			return a.MarginDB > b.MarginDB
		}
		return false
	}
	sort.SliceStable(all, func(a, b int) bool { return better(all[a].m, all[b].m) })
	if len(res.One) != len(all) {
		t.Fatalf("%d single changes, enumeration has %d", len(res.One), len(all))
	}
	for k, w := range res.One {
		e := all[k]
		if len(w.Changes) != 1 || w.Changes[0].Part != e.part || w.Changes[0].To != e.to {
			// Ties may order differently; the figures must still agree.
			if w.MarginDB != e.m.MarginDB || w.WorstPowerToLoad != e.m.WorstPowerToLoad {
				t.Errorf("rank %d: %v (%.4f dB, %.4f), enumeration part %d → %g (%.4f dB, %.4f)", k, w.Changes, w.MarginDB, w.WorstPowerToLoad, e.part, e.to, e.m.MarginDB, e.m.WorstPowerToLoad)
			}
			continue
		}
		if w.MarginDB != e.m.MarginDB || w.WorstPowerToLoad != e.m.WorstPowerToLoad {
			t.Errorf("rank %d: figures %.6f/%.6f, Evaluate %.6f/%.6f", k, w.MarginDB, w.WorstPowerToLoad, e.m.MarginDB, e.m.WorstPowerToLoad)
		}
		if w.Network[w.Changes[0].Part].Value != e.to || w.Network[w.Changes[0].Part].Series != "E24" {
			t.Errorf("rank %d: next network %v", k, w.Network)
		}
	}
	// Pairs: every pair of parts, each changed (3 pairs × 6 × 6).
	if res.Tried != len(all)+3*6*6 {
		t.Errorf("tried %d candidates, want %d", res.Tried, len(all)+3*6*6)
	}
	for _, w := range res.Two {
		if len(w.Changes) != 2 || w.Changes[0].Part == w.Changes[1].Part || w.Changes[0].Steps == 0 || w.Changes[1].Steps == 0 {
			t.Errorf("two-part change %v", w.Changes)
		}
	}
	if base, _ := Evaluate(load, swapBands, fit.Board.Network); base.MarginDB != res.AsBuilt.MarginDB {
		t.Errorf("as built %g, Evaluate %g", res.AsBuilt.MarginDB, base.MarginDB)
	}
}

// The suggestion predicted on the board as fitted is what the true board
// does with the change (the new part at its nominal value), to 0.1 dB of
// margin and half a percent of power from a noisy fit (the fit's own
// uncertainty; changes of four steps and more are furthest out).
func TestNextSwapsPredictTheTrueBoard(t *testing.T) {
	t.Parallel()
	c := fitCases()[0]
	clean := fitLoad()
	fit, err := FitBoard(noisy(clean, fitNoise, 7), noisy(builtOf(t, clean, c.board(), c.trueLay), fitNoise, 8), c.design, c.lay, nil)
	if err != nil {
		t.Fatal(err)
	}
	res, err := NextSwaps(context.Background(), clean, swapBands, fit, &SwapSettings{Builds: 200})
	if err != nil {
		t.Fatal(err)
	}
	for _, list := range [][]Swap{res.One, res.Two} {
		for _, w := range list {
			truth := c.board()
			for _, ch := range w.Changes {
				truth[ch.Part].Value = ch.To
			}
			pl, err := c.trueLay.Place(truth)
			if err != nil {
				t.Fatal(err)
			}
			m, err := Evaluate(clean, swapBands, pl.Network)
			if err != nil {
				t.Fatal(err)
			}
			if math.Abs(m.MarginDB-w.MarginDB) > 0.1 || math.Abs(m.WorstPowerToLoad-w.WorstPowerToLoad) > 0.005 {
				t.Errorf("%v: predicted %.3f dB, %.4f; true board %.3f dB, %.4f", w.Changes, w.MarginDB, w.WorstPowerToLoad, m.MarginDB, m.WorstPowerToLoad)
			}
			if !(w.Yield >= 0 && w.Yield <= 1) {
				t.Errorf("%v: yield %g", w.Changes, w.Yield)
			}
		}
	}
	best, ok := res.Best()
	if !ok {
		t.Fatal("no suggestion")
	}
	if res.One[0].Meets() && len(best.Changes) != 1 {
		t.Errorf("best %v though a single change meets", best.Changes)
	}
}

// A suggestion's yield is the Monte Carlo of its new parts alone: the
// same as Yield with only those parts' tolerances.
func TestNextSwapsYield(t *testing.T) {
	t.Parallel()
	fit, c := swapFit(t)
	load := fitLoad()
	res, err := NextSwaps(context.Background(), load, swapBands, fit, &SwapSettings{Builds: 300, Top: 1})
	if err != nil {
		t.Fatal(err)
	}
	w := res.One[0]
	tol := make([]parts.Tolerance, len(w.Board))
	e := fit.Board.Element(RolePart, w.Changes[0].Part)
	tol[e] = c.design[w.Changes[0].Part].Tolerance()
	y, err := Yield(context.Background(), load, swapBands, w.Board, &YieldSettings{Builds: 300, Tolerances: tol})
	if err != nil {
		t.Fatal(err)
	}
	if y.Yield != w.Yield {
		t.Errorf("yield %g, Yield of the new part alone %g", w.Yield, y.Yield)
	}
	none, err := NextSwaps(context.Background(), load, swapBands, fit, &SwapSettings{Builds: -1, Top: 1})
	if err != nil {
		t.Fatal(err)
	}
	if !math.IsNaN(none.One[0].Yield) {
		t.Errorf("yield %g with no builds", none.One[0].Yield)
	}
}

// CarryOffset keeps the old part's offset from nominal on the new part.
func TestNextSwapsCarry(t *testing.T) {
	t.Parallel()
	fit, c := swapFit(t)
	load := fitLoad()
	for _, carry := range []Carry{CarryNone, CarryOffset} {
		res, err := NextSwaps(context.Background(), load, swapBands, fit, &SwapSettings{Carry: carry, Builds: -1, Top: 1})
		if err != nil {
			t.Fatal(err)
		}
		w := res.One[0]
		i := w.Changes[0].Part
		e := fit.Board.Element(RolePart, i)
		want := w.Changes[0].To
		if carry == CarryOffset {
			want += fit.Board.Network[e].Value - c.design[i].Value
		}
		if got := w.Board[e].Value; math.Abs(got-want) > 1e-9*want {
			t.Errorf("carry %d: new part on the board %g, want %g", carry, got, want)
		}
	}
}

// Bad settings are refused.
func TestNextSwapsErrors(t *testing.T) {
	t.Parallel()
	fit, _ := swapFit(t)
	load := fitLoad()
	for _, s := range []*SwapSettings{{Steps: 30}, {Steps: -1}, {Top: -1}, {Series: "E7"}} {
		if _, err := NextSwaps(context.Background(), load, swapBands, fit, s); err == nil {
			t.Errorf("settings %+v accepted", *s)
		}
	}
	if _, err := NextSwaps(context.Background(), load, []Band{{LoHz: 2e9, HiHz: 3e9}}, fit, nil); err == nil {
		t.Error("band outside the sweep accepted")
	}
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	if _, err := NextSwaps(ctx, load, swapBands, fit, nil); err == nil {
		t.Error("cancelled context not reported")
	}
}
