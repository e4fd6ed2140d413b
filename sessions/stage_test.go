package sessions

import (
	"context"
	"encoding/json"
	"math"
	"testing"
)

// The amplifier view: opened on a 2-port sweep at the band centre,
// circles set and sorted, terminations placed and held inside the disc,
// a drag one undo step, another sweep resets the terminations, and the
// view goes with its sweep.
func TestAmpView(t *testing.T) {
	t.Parallel()
	st := openStore(t, Options{})
	sid := create(t, st, "amp").ID
	one := addSweep(t, st, sid, testSweep(11, 1, 0.5e9, 1.5e9), "antenna")
	dev := addSweep(t, st, sid, testSweep(11, 2, 0.5e9, 1.5e9), "transistor")
	apply(t, st, sid, Change{Op: OpBandSet, Name: "b", LoHz: 0.9e9, HiHz: 1.1e9})

	_, err := st.Apply(context.Background(), sid, Change{Op: OpAmpSet, SweepID: one})
	wantErr(t, err, ErrInvalid, "sweepId")
	_, err = st.Apply(context.Background(), sid, Change{Op: OpAmpPoint, AmpChange: AmpChange{Plane: "source"}, Gamma: &Point{0.1, 0}})
	wantErr(t, err, ErrInvalid, "")

	steps := []float64{2, 1, 2}
	ev := apply(t, st, sid, Change{Op: OpAmpSet, SweepID: dev, AmpChange: AmpChange{GainStepsDB: &steps}})
	a := ev.State.Amp
	if a == nil || a.SweepID != dev || a.FreqHz != math.Sqrt(0.9e9*1.1e9) || len(a.GainStepsDB) != 2 || a.GainStepsDB[0] != 1 || a.GainStepsDB[1] != 2 {
		t.Fatalf("amp view %+v: want the band's geometric centre √(0.9 · 1.1) GHz and steps [1 2]", a)
	}
	for _, bad := range []Change{
		{Op: OpAmpSet, FreqHz: 3e9},
		{Op: OpAmpSet, AmpChange: AmpChange{NFStepsDB: &[]float64{-1}}},
		{Op: OpAmpSet, AmpChange: AmpChange{GainStepsDB: &[]float64{1, 2, 3, 4, 5, 6, 7, 8, 9}}},
		{Op: OpAmpPoint, AmpChange: AmpChange{Plane: "middle"}, Gamma: &Point{0.1, 0}},
		{Op: OpAmpPoint, AmpChange: AmpChange{Plane: "source"}, Gamma: &Point{math.NaN(), 0}},
	} {
		if _, err := st.Apply(context.Background(), sid, bad); err == nil {
			t.Errorf("%s %+v accepted", bad.Op, bad.AmpChange)
		}
	}
	// A drag of the source termination: one undo step, the last point kept,
	// a point beyond the rim pulled onto it.
	_, v0 := state(t, st, sid)
	for _, g := range []Point{{0.1, 0.2}, {0.3, 0.4}, {2, 0}} {
		apply(t, st, sid, Change{Op: OpAmpPoint, AmpChange: AmpChange{Plane: "source"}, Gamma: &g, Gesture: "d1"})
	}
	s, v := state(t, st, sid)
	if v != v0+3 || s.Amp.GammaS == nil || !cnear(complex(s.Amp.GammaS.Re, s.Amp.GammaS.Im), maxTermination, 1e-12) {
		t.Fatalf("after the drag: version %d (from %d), Γs %+v", v, v0, s.Amp.GammaS)
	}
	ev = apply(t, st, sid, Change{Op: OpUndo})
	if ev.State.Amp.GammaS != nil || len(ev.State.Amp.GainStepsDB) != 2 {
		t.Errorf("one undo leaves Γs %+v", ev.State.Amp.GammaS)
	}
	apply(t, st, sid, Change{Op: OpAmpPoint, AmpChange: AmpChange{Plane: "load"}, Gamma: &Point{0, 0.5}})
	// Another 2-port forgets the terminations, keeps the circles.
	dev2 := addSweep(t, st, sid, testSweep(11, 2, 0.5e9, 1.5e9), "transistor 2")
	ev = apply(t, st, sid, Change{Op: OpAmpSet, SweepID: dev2})
	if a := ev.State.Amp; a.GammaL != nil || a.SweepID != dev2 || len(a.GainStepsDB) != 2 {
		t.Errorf("on another sweep: %+v", a)
	}
	ev = apply(t, st, sid, Change{Op: OpSweepRemove, SweepID: dev2})
	if ev.State.Amp != nil {
		t.Errorf("the view outlives its sweep: %+v", ev.State.Amp)
	}
}

// The stage: set up on the amplifier view's sweep with two new networks on
// ports 1 and 2 (the source one active), requirements per band checked,
// designs stored and used in both networks at once (one undo step), and
// the stage tidied when its networks, bands or sweep go.
func TestStage(t *testing.T) {
	t.Parallel()
	st := openStore(t, Options{})
	sid := create(t, st, "stage").ID
	dev := addSweep(t, st, sid, testSweep(11, 2, 0.5e9, 1.5e9), "transistor")
	band := apply(t, st, sid, Change{Op: OpBandSet, Name: "b", LoHz: 0.9e9, HiHz: 1.1e9}).BandID
	_, err := st.Apply(context.Background(), sid, Change{Op: OpStageSet})
	wantErr(t, err, ErrInvalid, "sweepId")
	apply(t, st, sid, Change{Op: OpAmpSet, SweepID: dev})
	reqs := []StageReq{{BandID: band, MinGainDB: 12, MaxNFdB: 1.5, MinInputRLdB: 8, MinOutputRLdB: 10}}
	ev := apply(t, st, sid, Change{Op: OpStageSet, AmpChange: AmpChange{StageReqs: reqs}})
	s := ev.State.Stage
	if s == nil || s.SweepID != dev || len(s.Reqs) != 1 || s.Reqs[0] != reqs[0] {
		t.Fatalf("stage %+v", s)
	}
	src, load := ev.State.Networks[ev.State.NetworkIndex(s.SourceNetworkID)], ev.State.Networks[ev.State.NetworkIndex(s.LoadNetworkID)]
	if src.Port != 1 || load.Port != 2 || src.SweepID != dev || load.SweepID != dev || ev.State.ActiveNetwork != src.ID {
		t.Fatalf("stage networks: source %+v, load %+v, active %q", src, load, ev.State.ActiveNetwork)
	}
	// Setting it again keeps its networks.
	ev = apply(t, st, sid, Change{Op: OpStageSet})
	if ev.State.Stage.SourceNetworkID != src.ID || len(ev.State.Networks) != 2 {
		t.Errorf("stage.set again made new networks: %+v", ev.State.Stage)
	}
	for _, bad := range []Change{
		{Op: OpStageSet, AmpChange: AmpChange{StageReqs: []StageReq{{BandID: "nope"}}}},
		{Op: OpStageSet, AmpChange: AmpChange{StageReqs: []StageReq{{BandID: band, MaxNFdB: -1}}}},
		{Op: OpStageSet, AmpChange: AmpChange{StageReqs: []StageReq{{BandID: band}, {BandID: band}}}},
		{Op: OpStageSet, AmpChange: AmpChange{SourceNetworkID: load.ID}},
		{Op: OpStageUse, Index: new(int)},
		{Op: OpStageStore},
	} {
		if _, err := st.Apply(context.Background(), sid, bad); err == nil {
			t.Errorf("%s %+v accepted", bad.Op, bad.AmpChange)
		}
	}
	d := StageDesign{
		Source:   []Part{{Kind: PartSeriesL, Value: 1.8e-9, ESeries: "E24", Model: "0402"}, {Kind: PartShuntL, Value: 3e-9, ESeries: "E24", Model: "0402"}},
		Load:     []Part{{Kind: PartSeriesL, Value: 1.6e-9, ESeries: "E24", Model: "0402"}},
		MarginDB: math.Inf(1),
	}
	ev = apply(t, st, sid, Change{Op: OpStageStore, AmpChange: AmpChange{StageSearch: &StageSearchResult{Settings: "test", Designs: []StageDesign{d}}}})
	if got := ev.State.Stage.Search; got == nil || got.Designs[0].MarginDB != 999 {
		t.Fatalf("stored %+v (an infinite margin is stored as 999)", got)
	}
	if _, err := json.Marshal(ev.State); err != nil {
		t.Fatalf("the state does not encode: %v", err)
	}
	_, v0 := state(t, st, sid)
	ev = apply(t, st, sid, Change{Op: OpStageUse, Index: new(int)})
	n1, n2 := ev.State.Networks[ev.State.NetworkIndex(src.ID)], ev.State.Networks[ev.State.NetworkIndex(load.ID)]
	if len(n1.Parts) != 2 || n1.Parts[1].Kind != PartShuntL || len(n2.Parts) != 1 || n2.Parts[0].Value != 1.6e-9 || n1.Parts[0].ID == "" {
		t.Fatalf("after stage.use: source %+v, load %+v", n1.Parts, n2.Parts)
	}
	if ev.Version != v0+1 {
		t.Errorf("stage.use took %d versions", ev.Version-v0)
	}
	ev = apply(t, st, sid, Change{Op: OpUndo})
	if len(ev.State.Networks[0].Parts)+len(ev.State.Networks[1].Parts) != 0 {
		t.Errorf("one undo leaves parts %+v", ev.State.Networks)
	}
	// A network removed is a through connection; a band removed takes its
	// requirement; the sweep removed takes the stage.
	ev = apply(t, st, sid, Change{Op: OpNetworkRemove, NetworkID: load.ID})
	if ev.State.Stage.LoadNetworkID != "" || ev.State.Stage.SourceNetworkID != src.ID {
		t.Errorf("after the load network went: %+v", ev.State.Stage)
	}
	ev = apply(t, st, sid, Change{Op: OpBandRemove, BandID: band})
	if len(ev.State.Stage.Reqs) != 0 {
		t.Errorf("a requirement outlives its band: %+v", ev.State.Stage.Reqs)
	}
	// stage.set makes a new load network for the missing side.
	ev = apply(t, st, sid, Change{Op: OpStageSet})
	if i := ev.State.NetworkIndex(ev.State.Stage.LoadNetworkID); i < 0 || ev.State.Networks[i].Port != 2 {
		t.Errorf("stage.set did not make a new load network: %+v", ev.State.Stage)
	}
	ev = apply(t, st, sid, Change{Op: OpSweepRemove, SweepID: dev})
	if ev.State.Stage != nil || ev.State.Amp != nil {
		t.Errorf("stage %+v and view %+v outlive their sweep", ev.State.Stage, ev.State.Amp)
	}
	ev = apply(t, st, sid, Change{Op: OpUndo})
	if ev.State.Stage == nil || ev.State.Amp == nil {
		t.Error("undo does not bring the stage back with its sweep")
	}
}

// The payload decodes from JSON as a page sends it.
func TestAmpChangeJSON(t *testing.T) {
	t.Parallel()
	var ch Change
	msg := `{"op":"amp.point","plane":"source","gamma":{"re":0.2,"im":0.5},"gesture":"g1","gainStepsDB":[1,2],"stageReqs":[{"bandId":"b","maxNFdB":1.2}]}`
	if err := json.Unmarshal([]byte(msg), &ch); err != nil {
		t.Fatal(err)
	}
	if ch.Plane != "source" || ch.Gamma == nil || ch.Gamma.Im != 0.5 || ch.GainStepsDB == nil || (*ch.GainStepsDB)[1] != 2 || ch.StageReqs[0].MaxNFdB != 1.2 {
		t.Fatalf("decoded %+v", ch)
	}
}

// stage.parts replaces one side's parts (a network search's design for
// that side), makes that network active, and is one undo step.
func TestStageParts(t *testing.T) {
	t.Parallel()
	st := openStore(t, Options{})
	sid := create(t, st, "stage parts").ID
	dev := addSweep(t, st, sid, testSweep(11, 2, 0.5e9, 1.5e9), "transistor")
	ps := []Part{{Kind: PartSeriesC, Value: 1e-12}, {Kind: PartShuntL, Value: 5e-9}}
	_, err := st.Apply(context.Background(), sid, Change{Op: OpStageParts, AmpChange: AmpChange{Plane: "load"}, Parts: ps})
	wantErr(t, err, ErrInvalid, "")
	ev := apply(t, st, sid, Change{Op: OpStageSet, SweepID: dev})
	load := ev.State.Stage.LoadNetworkID
	_, err = st.Apply(context.Background(), sid, Change{Op: OpStageParts, AmpChange: AmpChange{Plane: "both"}, Parts: ps})
	wantErr(t, err, ErrInvalid, "plane")
	_, err = st.Apply(context.Background(), sid, Change{Op: OpStageParts, AmpChange: AmpChange{Plane: "load"}, Parts: []Part{{Kind: PartSeriesC, Value: -1}}})
	wantErr(t, err, ErrInvalid, "value")
	ev = apply(t, st, sid, Change{Op: OpStageParts, AmpChange: AmpChange{Plane: "load"}, Parts: ps})
	n := ev.State.Networks[ev.State.NetworkIndex(load)]
	if len(n.Parts) != 2 || n.Parts[1].Kind != PartShuntL || ev.State.ActiveNetwork != load || len(ev.State.Networks) != 2 {
		t.Fatalf("after stage.parts: %+v, active %q", n, ev.State.ActiveNetwork)
	}
	ev = apply(t, st, sid, Change{Op: OpUndo})
	if len(ev.State.Networks[ev.State.NetworkIndex(load)].Parts) != 0 {
		t.Error("undo leaves the parts")
	}
}
