package sessions

import (
	"strings"
	"testing"
)

// A network's layout is set, checked, follows its parts and goes with
// undo.
func TestNetworkLayoutOp(t *testing.T) {
	t.Parallel()
	st := openStore(t, Options{})
	s := create(t, st, "board")
	addSweep(t, st, s.ID, testSweep(101, 1, 0.5e9, 1.5e9), "load")
	apply(t, st, s.ID, Change{Op: OpNetworkAdd, Parts: []Part{{Kind: PartShuntL, Value: 2e-9}, {Kind: PartSeriesL, Value: 2e-9}, {Kind: PartShuntC, Value: 7e-12}}})
	lay := &Layout{Footprint: "0402", Traces: []Trace{{Gap: 2, LengthM: 0.5e-3, Z0Ohm: 53, EpsEff: 3.2}, {Gap: 3, LengthM: 1e-3, Z0Ohm: 50, EpsEff: 3.2}}}
	apply(t, st, s.ID, Change{Op: OpNetworkLayout, Layout: lay})
	cur, _ := state(t, st, s.ID)
	got := cur.Active().Layout
	if got == nil || got.Footprint != "0402" || len(got.Traces) != 2 {
		t.Fatalf("layout %+v", got)
	}
	// Removing L1 (index 0): the trace between L2 and C1 (gap 2) is now in
	// gap 1, the one before the source in gap 2.
	apply(t, st, s.ID, Change{Op: OpPartRemove, PartID: cur.Active().Parts[0].ID})
	cur, _ = state(t, st, s.ID)
	if tr := cur.Active().Layout.Traces; len(tr) != 2 || tr[0].Gap != 1 || tr[1].Gap != 2 {
		t.Errorf("traces after removing the first part: %+v", tr)
	}
	// Adding a part at the load end moves every trace one gap on.
	apply(t, st, s.ID, Change{Op: OpPartAdd, Kind: PartShuntC, Value: fptr(1e-12), Index: iptr(0)})
	cur, _ = state(t, st, s.ID)
	if tr := cur.Active().Layout.Traces; len(tr) != 2 || tr[0].Gap != 2 || tr[1].Gap != 3 {
		t.Errorf("traces after adding a part at the load: %+v", tr)
	}
	apply(t, st, s.ID, Change{Op: OpUndo})
	apply(t, st, s.ID, Change{Op: OpUndo})
	apply(t, st, s.ID, Change{Op: OpUndo})
	cur, _ = state(t, st, s.ID)
	if cur.Active().Layout != nil {
		t.Errorf("after undo: %+v", cur.Active().Layout)
	}
	// An empty layout is none.
	apply(t, st, s.ID, Change{Op: OpNetworkLayout, Layout: &Layout{Footprint: "none"}})
	cur, _ = state(t, st, s.ID)
	if cur.Active().Layout != nil {
		t.Errorf("empty layout kept: %+v", cur.Active().Layout)
	}
	for _, tc := range []struct {
		lay   *Layout
		field string
		words string
	}{
		{&Layout{Footprint: "1206"}, "layout", "unknown footprint"},
		{&Layout{Traces: []Trace{{Gap: 4, LengthM: 1e-3, Z0Ohm: 50, EpsEff: 3}}}, "layout", "gap 4"},
		{&Layout{Traces: []Trace{{Gap: 1, LengthM: 1e-3, Z0Ohm: 0, EpsEff: 3}}}, "layout", "Z0"},
		{&Layout{PadCF: -1e-12}, "layout", "pad capacitance"},
	} {
		_, err := st.Apply(t.Context(), s.ID, Change{Op: OpNetworkLayout, Layout: tc.lay})
		wantErr(t, err, ErrInvalid, tc.field)
		if err == nil || !strings.Contains(err.Error(), tc.words) {
			t.Errorf("layout %+v: %v, want %q", tc.lay, err, tc.words)
		}
	}
}

// A tuning round is stored whole, and using a suggestion makes its parts
// (with the round's layout) the active network in one undo step.
func TestTuneOps(t *testing.T) {
	t.Parallel()
	st := openStore(t, Options{Limits: Limits{TuneRounds: 2}})
	s := create(t, st, "tune")
	load := addSweep(t, st, s.ID, testSweep(101, 1, 0.5e9, 1.5e9), "load")
	built := addSweep(t, st, s.ID, testSweep(101, 1, 0.5e9, 1.5e9), "built")
	ev := apply(t, st, s.ID, Change{Op: OpNetworkAdd, DesignHz: 1e9, Parts: []Part{{Kind: PartShuntL, Value: 2e-9, ESeries: "E24"}, {Kind: PartShuntC, Value: 7.5e-12, ESeries: "E24"}}})
	round := TuneRound{NetworkID: ev.NetworkID, NetworkName: "A", LoadSweepID: load, Port: 1, BuiltSweepID: built, BuiltName: "built",
		Parts:  []Part{{Kind: PartShuntL, Value: 2e-9, ESeries: "E24"}, {Kind: PartShuntC, Value: 7.5e-12, ESeries: "E24"}},
		Layout: &Layout{Footprint: "0402"},
		Fit:    TuneFit{Points: 101, LoHz: 0.5e9, HiHz: 1.5e9, RMSResidual: 0.003, Params: []TuneParam{{Name: "L1", Kind: "part", Unit: "H", Nominal: 2e-9, Value: 2.1e-9, Sigma: 1e-12}}},
		Suggestions: []TuneSwap{
			{Change: "C1 7.5 pF → 6.8 pF", Parts: []Part{{Kind: PartShuntL, Value: 2e-9, ESeries: "E24"}, {Kind: PartShuntC, Value: 6.8e-12, ESeries: "E24"}}, Figs: TuneFigs{MarginDB: 0.5, Meets: true}, Yield: 0.8},
		},
		Best: 0, Chosen: 5, ChosenNetworkID: "forged"}
	apply(t, st, s.ID, Change{Op: OpTuneStore, Tune: &round})
	cur, _ := state(t, st, s.ID)
	if len(cur.Tuning) != 1 || cur.Tuning[0].ID == "" || cur.Tuning[0].Chosen != -1 || cur.Tuning[0].ChosenNetworkID != "" {
		t.Fatalf("stored round %+v", cur.Tuning)
	}
	id := cur.Tuning[0].ID
	apply(t, st, s.ID, Change{Op: OpTuneUse, TuneID: id, Index: iptr(0)})
	cur, _ = state(t, st, s.ID)
	a := cur.Active()
	if len(cur.Networks) != 2 || a.Parts[1].Value != 6.8e-12 || a.Layout == nil || a.Layout.Footprint != "0402" || a.DesignHz != 1e9 ||
		!strings.HasPrefix(a.Name, "Round 1: C1") || cur.Tuning[0].Chosen != 0 || cur.Tuning[0].ChosenNetworkID != a.ID {
		t.Fatalf("after tune.use: network %+v, round %+v", a, cur.Tuning[0])
	}
	apply(t, st, s.ID, Change{Op: OpUndo})
	cur, _ = state(t, st, s.ID)
	if len(cur.Networks) != 1 || cur.Tuning[0].Chosen != -1 {
		t.Errorf("one undo: %d networks, chosen %d", len(cur.Networks), cur.Tuning[0].Chosen)
	}
	for _, tc := range []struct {
		ch       Change
		sentinel error
		field    string
	}{
		{Change{Op: OpTuneUse, TuneID: "nope", Index: iptr(0)}, ErrNotFound, "tuneId"},
		{Change{Op: OpTuneUse, TuneID: id, Index: iptr(1)}, ErrInvalid, "index"},
		{Change{Op: OpTuneUse, TuneID: id}, ErrInvalid, "index"},
		{Change{Op: OpTuneStore}, ErrInvalid, "tune"},
	} {
		_, err := st.Apply(t.Context(), s.ID, tc.ch)
		wantErr(t, err, tc.sentinel, tc.field)
	}
	bad := round
	bad.BuiltSweepID = "gone"
	_, err := st.Apply(t.Context(), s.ID, Change{Op: OpTuneStore, Tune: &bad})
	wantErr(t, err, ErrNotFound, "tune.builtSweepId")
	bad = round
	bad.Suggestions = []TuneSwap{{Parts: []Part{{Kind: "shunt_X", Value: 1}}}}
	_, err = st.Apply(t.Context(), s.ID, Change{Op: OpTuneStore, Tune: &bad})
	wantErr(t, err, ErrInvalid, "kind")
	bad = round
	bad.Best = 3
	_, err = st.Apply(t.Context(), s.ID, Change{Op: OpTuneStore, Tune: &bad})
	wantErr(t, err, ErrInvalid, "tune.best")
	apply(t, st, s.ID, Change{Op: OpTuneStore, Tune: &round})
	_, err = st.Apply(t.Context(), s.ID, Change{Op: OpTuneStore, Tune: &round})
	wantErr(t, err, ErrInvalid, "")
}
