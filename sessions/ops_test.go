package sessions

import (
	"context"
	"encoding/json"
	"math"
	"slices"
	"strings"
	"testing"

	"matchbench/rfmath"
)

func TestOpsSession(t *testing.T) {
	t.Parallel()
	st := openStore(t, Options{})
	s := create(t, st, "  Antenna A  ")
	if s.Name != "Antenna A" || s.Version != 0 || len(s.ID) == 0 {
		t.Fatalf("Create = %+v", s)
	}
	ev := apply(t, st, s.ID, Change{Op: OpSessionRename, Name: "Antenna B"})
	if ev.Version != 1 || ev.State.Name != "Antenna B" || ev.Op != OpSessionRename || ev.SessionID != s.ID {
		t.Fatalf("event = %+v", ev)
	}
	got, err := st.Get(context.Background(), s.ID)
	if err != nil || got.Name != "Antenna B" || got.Version != 1 || got.EditToken != "" {
		t.Fatalf("Get = %+v, %v", got, err)
	}
	list, err := st.List(context.Background())
	if err != nil || len(list) != 1 || list[0].ID != s.ID || list[0].Name != "Antenna B" {
		t.Fatalf("List = %+v, %v", list, err)
	}
	// Renaming to the same name changes nothing: no commit, no version.
	ev = apply(t, st, s.ID, Change{Op: OpSessionRename, Name: "Antenna B"})
	if !ev.Unchanged || ev.Version != 1 {
		t.Fatalf("same-name rename = %+v, want unchanged at version 1", ev)
	}
	if u := create(t, st, ""); u.Name != "Untitled session" {
		t.Errorf("empty name became %q", u.Name)
	}
}

func TestOpsSweeps(t *testing.T) {
	t.Parallel()
	st := openStore(t, Options{})
	sid := create(t, st, "s").ID
	sw := testSweep(101, 2, 0.5e9, 1.5e9)
	raw := []byte("# GHz S RI R 50\n0.5 ...")
	ev := apply(t, st, sid, Change{Op: OpSweepAdd, FileName: "dut_a.s2p", Raw: raw, Sweep: sw})
	id := ev.SweepID
	ref := ev.State.Sweeps[0]
	want := SweepRef{ID: id, Name: "dut_a", FileName: "dut_a.s2p", Color: Palette[0], Visible: true,
		Ports: 2, Points: 101, FminHz: 0.5e9, FmaxHz: 1.5e9}
	if ref != want {
		t.Fatalf("sweep ref = %+v, want %+v", ref, want)
	}
	// The store keeps its own copy: changing the caller's sweep or bytes
	// afterwards changes nothing stored.
	sw.Data[0], raw[0] = 99, 'X'
	got, err := st.Sweep(sid, id)
	if err != nil {
		t.Fatal(err)
	}
	if got.Data[0] != rlcGamma(0.5e9) || got.Len() != 101 || got.Ports != 2 {
		t.Fatalf("stored sweep changed with the caller's copy: S11[0] = %v", got.Data[0])
	}
	r, fn, err := st.Raw(context.Background(), sid, id)
	if err != nil || string(r) != "# GHz S RI R 50\n0.5 ..." || fn != "dut_a.s2p" {
		t.Fatalf("Raw = %q, %q, %v", r, fn, err)
	}

	// The second sweep takes the next palette colour; an explicit colour is
	// kept in lower case; no file name gives "Sweep n".
	ev = apply(t, st, sid, Change{Op: OpSweepAdd, Sweep: testSweep(11, 1, 1e9, 2e9)})
	if c := ev.State.Sweeps[1]; c.Color != Palette[1] || c.Name != "Sweep 2" {
		t.Errorf("second sweep = %+v", c)
	}
	ev = apply(t, st, sid, Change{Op: OpSweepAdd, Color: "#ABCDEF", Name: "ref", Sweep: testSweep(11, 1, 1e9, 2e9)})
	if c := ev.State.Sweeps[2]; c.Color != "#abcdef" || c.Name != "ref" {
		t.Errorf("third sweep = %+v", c)
	}

	ev = apply(t, st, sid, Change{Op: OpSweepRename, SweepID: id, Name: "DUT A, tuned"})
	if ev.State.Sweeps[0].Name != "DUT A, tuned" || ev.SweepID != id {
		t.Errorf("rename: %+v", ev.State.Sweeps[0])
	}
	ev = apply(t, st, sid, Change{Op: OpSweepColor, SweepID: id, Color: "#102030"})
	if ev.State.Sweeps[0].Color != "#102030" {
		t.Errorf("color: %+v", ev.State.Sweeps[0])
	}
	ev = apply(t, st, sid, Change{Op: OpSweepVisible, SweepID: id, Visible: false})
	if ev.State.Sweeps[0].Visible {
		t.Errorf("visible: %+v", ev.State.Sweeps[0])
	}
	apply(t, st, sid, Change{Op: OpMarkerAdd, SweepID: id, FreqHz: 1e9})
	ev = apply(t, st, sid, Change{Op: OpSweepRemove, SweepID: id})
	if len(ev.State.Sweeps) != 2 || ev.State.SweepIndex(id) >= 0 || len(ev.State.Markers) != 0 || ev.SweepID != id {
		t.Errorf("remove left %+v", ev.State)
	}
	// A removed sweep stays readable (undo may bring it back).
	if _, err := st.Sweep(sid, id); err != nil {
		t.Errorf("removed sweep unreadable: %v", err)
	}
}

func TestOpsMarkers(t *testing.T) {
	t.Parallel()
	st := openStore(t, Options{})
	sid := create(t, st, "s").ID
	const n = 201
	sw := testSweep(n, 2, 0.5e9, 1.5e9) // 5 MHz steps
	id := addSweep(t, st, sid, sw, "dut")
	step := 1e9 / (n - 1)

	// By frequency, between measured points: kept as given.
	ev := apply(t, st, sid, Change{Op: OpMarkerAdd, SweepID: id, FreqHz: 0.8e9 + 1e6, Label: "low"})
	m := ev.State.Markers[0]
	if m.SweepID != id || m.Port != 1 || m.FreqHz != 0.8e9+1e6 || m.Label != "low" || ev.MarkerID != m.ID {
		t.Fatalf("marker.add = %+v", m)
	}
	mid := m.ID
	// Pinned into the sweep's range.
	ev = apply(t, st, sid, Change{Op: OpMarkerAdd, SweepID: id, Port: 2, FreqHz: 9e9})
	if m2 := ev.State.Markers[1]; m2.FreqHz != 1.5e9 || m2.Port != 2 {
		t.Fatalf("pinned marker = %+v", m2)
	}
	ev = apply(t, st, sid, Change{Op: OpMarkerMove, MarkerID: ev.MarkerID, FreqHz: -5})
	if ev.State.Markers[1].FreqHz != 0.5e9 {
		t.Fatalf("marker pinned to the bottom at %g", ev.State.Markers[1].FreqHz)
	}

	// By Γ point: the exact Γ of measured point 70 snaps to its frequency.
	k := 70
	g := sw.At(k, 0, 0)
	ev = apply(t, st, sid, Change{Op: OpMarkerMove, MarkerID: mid, Gamma: &Point{real(g), imag(g)}})
	if f := ev.State.Markers[0].FreqHz; !near(f, sw.FreqHz[k], 1e-12) {
		t.Fatalf("snap to point %d gave %g Hz, want %g", k, f, sw.FreqHz[k])
	}
	// Halfway between points 72 and 73 in the Γ plane: halfway in frequency
	// (linear interpolation, as rfmath.Sweep.InterpAt).
	g = (sw.At(72, 0, 0) + sw.At(73, 0, 0)) / 2
	ev = apply(t, st, sid, Change{Op: OpMarkerMove, MarkerID: mid, Gamma: &Point{real(g), imag(g)}, Gesture: "g1"})
	wantF := (sw.FreqHz[72] + sw.FreqHz[73]) / 2
	if f := ev.State.Markers[0].FreqHz; !near(f, wantF, 1e-9) {
		t.Fatalf("snap between points gave %g Hz, want %g", f, wantF)
	}
	if ev.Gesture != "g1" || ev.MarkerID != mid || ev.SweepID != id {
		t.Errorf("move event ids = %+v", ev)
	}
	v, err := sw.InterpAt(nil, ev.State.Markers[0].FreqHz)
	if err != nil || !cnear(v[0], g, 1e-9) {
		t.Errorf("InterpAt at the snapped frequency = %v, want the dragged point %v", v[0], g)
	}
	// The marker on port 2 snaps on S22, not S11.
	m2 := ev.State.Markers[1].ID
	g = sw.At(150, 1, 1)
	ev = apply(t, st, sid, Change{Op: OpMarkerMove, MarkerID: m2, Gamma: &Point{real(g), imag(g)}, Window: n})
	if f := ev.State.Markers[1].FreqHz; !near(f, sw.FreqHz[150], 1e-12) {
		t.Fatalf("S22 snap gave %g Hz, want %g", f, sw.FreqHz[150])
	}

	// marker.step from between points 72 and 73: +1 → 73, then +2 → 75;
	// −1 from 75 → 74; far beyond the ends pins to them.
	for _, c := range []struct {
		steps int
		want  float64
	}{{1, sw.FreqHz[73]}, {2, sw.FreqHz[75]}, {-1, sw.FreqHz[74]}, {-1000, sw.FreqHz[0]}, {1000, sw.FreqHz[n-1]}} {
		ev = apply(t, st, sid, Change{Op: OpMarkerStep, MarkerID: mid, Steps: c.steps})
		if f := ev.State.Markers[0].FreqHz; f != c.want {
			t.Fatalf("step %+d: %g Hz, want %g", c.steps, f, c.want)
		}
	}
	ev = apply(t, st, sid, Change{Op: OpMarkerMove, MarkerID: mid, FreqHz: sw.FreqHz[40] + step/4})
	ev = apply(t, st, sid, Change{Op: OpMarkerStep, MarkerID: mid, Steps: -1})
	if f := ev.State.Markers[0].FreqHz; f != sw.FreqHz[40] {
		t.Fatalf("step −1 from between 40 and 41: %g, want %g", f, sw.FreqHz[40])
	}

	// marker.to_dip over the whole sweep: the measured point nearest the
	// series resonance f0 (Γ = 0 there), found here by its formula.
	f0 := rlcF0()
	kf0 := int(math.Round((f0 - 0.5e9) / step))
	ev = apply(t, st, sid, Change{Op: OpMarkerToDip, MarkerID: mid})
	if f := ev.State.Markers[0].FreqHz; f != sw.FreqHz[kf0] {
		t.Fatalf("to_dip = %g Hz, want %g (nearest to f0 = %g)", f, sw.FreqHz[kf0], f0)
	}
	// Within 0.6–0.7 GHz |Γ| falls towards f0, so the deepest point is the
	// top of the range.
	ev = apply(t, st, sid, Change{Op: OpMarkerToDip, MarkerID: mid, LoHz: 0.6e9, HiHz: 0.7e9})
	if f := ev.State.Markers[0].FreqHz; f != 0.7e9 {
		t.Fatalf("to_dip in 0.6–0.7 GHz = %g Hz, want 0.7 GHz", f)
	}

	ev = apply(t, st, sid, Change{Op: OpMarkerLabel, MarkerID: mid, Label: "dip"})
	if ev.State.Markers[0].Label != "dip" {
		t.Errorf("label = %q", ev.State.Markers[0].Label)
	}
	ev = apply(t, st, sid, Change{Op: OpMarkerRemove, MarkerID: mid})
	if len(ev.State.Markers) != 1 || ev.State.MarkerIndex(mid) >= 0 || ev.MarkerID != mid {
		t.Errorf("remove left %+v", ev.State.Markers)
	}
}

// TestOpsMarkerAddByGamma adds a marker by clicking near a trace: the whole
// trace is searched.
func TestOpsMarkerAddByGamma(t *testing.T) {
	t.Parallel()
	st := openStore(t, Options{})
	sid := create(t, st, "s").ID
	sw := loopSweep(1001)
	id := addSweep(t, st, sid, sw, "loop")
	g := sw.Data[900]
	ev := apply(t, st, sid, Change{Op: OpMarkerAdd, SweepID: id, Gamma: &Point{real(g), imag(g)}})
	if f := ev.State.Markers[0].FreqHz; !near(f, sw.FreqHz[900], 1e-12) {
		t.Fatalf("marker added at %g Hz, want %g", f, sw.FreqHz[900])
	}
}

// TestOpsMarkerDragStaysOnLoop drags a marker through the self-crossing of a
// trace: with the default window it stays on its branch, although the target
// beside the crossing is nearer the other branch (see
// rfmath.TestSnapToTraceSelfCrossing for the geometry).
func TestOpsMarkerDragStaysOnLoop(t *testing.T) {
	t.Parallel()
	st := openStore(t, Options{})
	sid := create(t, st, "s").ID
	sw := loopSweep(1001) // crossing at indices 250 and 750
	id := addSweep(t, st, sid, sw, "loop")
	mid := apply(t, st, sid, Change{Op: OpMarkerAdd, SweepID: id, FreqHz: sw.FreqHz[240]}).MarkerID
	ev := apply(t, st, sid, Change{Op: OpMarkerMove, MarkerID: mid, Gamma: &Point{0.05, 0.05}})
	k, _, _ := sw.Locate(ev.State.Markers[0].FreqHz)
	if k < 200 || k > 300 {
		t.Fatalf("drag jumped to point %d; want to stay near 250", k)
	}
	// A window that spans both branches lets it jump: the window is what
	// keeps it.
	ev = apply(t, st, sid, Change{Op: OpMarkerMove, MarkerID: mid, Gamma: &Point{0.05, 0.05}, Window: 1000})
	if k, _, _ = sw.Locate(ev.State.Markers[0].FreqHz); k < 700 || k > 800 {
		t.Fatalf("whole-trace move went to point %d; want near 750", k)
	}
}

func TestOpsBandsAndChart(t *testing.T) {
	t.Parallel()
	st := openStore(t, Options{})
	sid := create(t, st, "s").ID
	ev := apply(t, st, sid, Change{Op: OpBandSet, LoHz: 2.4e9, HiHz: 2.5e9, MinReturnLossDB: 10})
	b := ev.State.Bands[0]
	if (b != Band{ID: ev.BandID, Name: "Band 1", LoHz: 2.4e9, HiHz: 2.5e9, MinReturnLossDB: 10}) {
		t.Fatalf("band = %+v", b)
	}
	ev = apply(t, st, sid, Change{Op: OpBandSet, BandID: b.ID, Name: "ISM", LoHz: 2.4e9, HiHz: 2.4835e9, MinReturnLossDB: 14})
	if got := ev.State.Bands[0]; (got != Band{ID: b.ID, Name: "ISM", LoHz: 2.4e9, HiHz: 2.4835e9, MinReturnLossDB: 14}) || len(ev.State.Bands) != 1 {
		t.Fatalf("edited band = %+v", ev.State.Bands)
	}
	ev = apply(t, st, sid, Change{Op: OpBandRemove, BandID: b.ID})
	if len(ev.State.Bands) != 0 || ev.BandID != b.ID {
		t.Fatalf("band.remove left %+v", ev.State.Bands)
	}

	// chart.set from JSON, as a websocket payload would come: absent fields
	// keep their values.
	var ch Change
	if err := json.Unmarshal([]byte(`{"op":"chart.set","chart":{"admittanceGrid":true,"zoom":2.5,"qArcs":[1,5]}}`), &ch); err != nil {
		t.Fatal(err)
	}
	ev = apply(t, st, sid, ch)
	want := ChartSettings{ImpedanceGrid: true, AdmittanceGrid: true, Zoom: 2.5, QArcs: []float64{1, 5}}
	if c := ev.State.Chart; c.ImpedanceGrid != want.ImpedanceGrid || c.AdmittanceGrid != want.AdmittanceGrid ||
		c.Zoom != want.Zoom || !slices.Equal(c.QArcs, want.QArcs) || c.VSWRCircle != 0 {
		t.Fatalf("chart = %+v, want %+v", c, want)
	}
	f := false
	vswr, rl := 2.0, 10.0
	ev = apply(t, st, sid, Change{Op: OpChartSet, Chart: &ChartPatch{ImpedanceGrid: &f, VSWRCircle: &vswr, ReturnLossCircleDB: &rl}})
	if c := ev.State.Chart; c.ImpedanceGrid || !c.AdmittanceGrid || c.VSWRCircle != 2 || c.ReturnLossCircleDB != 10 || c.Zoom != 2.5 {
		t.Fatalf("chart after patch = %+v", c)
	}
}

// TestChangeJSON decodes every op's payload as a client would send it.
func TestChangeJSON(t *testing.T) {
	t.Parallel()
	var ch Change
	msg := `{"op":"marker.move","ifVersion":7,"markerId":"abc","gamma":{"re":0.25,"im":-0.5},"gesture":"d1","window":40}`
	if err := json.Unmarshal([]byte(msg), &ch); err != nil {
		t.Fatal(err)
	}
	want := Change{Op: OpMarkerMove, IfVersion: 7, MarkerID: "abc", Gamma: &Point{0.25, -0.5}, Gesture: "d1", Window: 40}
	if ch.Op != want.Op || ch.IfVersion != 7 || ch.MarkerID != "abc" || *ch.Gamma != *want.Gamma || ch.Gesture != "d1" || ch.Window != 40 {
		t.Fatalf("decoded %+v", ch)
	}
	// sweep.add's numbers never come from JSON.
	if err := json.Unmarshal([]byte(`{"op":"sweep.add","Raw":"AAAA","Sweep":{"Ports":1}}`), &ch); err != nil {
		t.Fatal(err)
	}
	if ch.Sweep != nil {
		t.Errorf("sweep decoded from JSON: %+v", ch.Sweep)
	}
	if len(Ops) != 42 { // set.save, set.remove, network.layout, tune.store, tune.use and the 8 amplifier and stage ops added to the 29
		t.Errorf("Ops lists %d ops, want 42", len(Ops))
	}
}

// TestValidation refuses each bad change with the sentinel and field named,
// and leaves the session's version and state as they were.
func TestValidation(t *testing.T) {
	t.Parallel()
	st := openStore(t, Options{Limits: Limits{SweepsPerSession: 2, MarkersPerTrace: 2, Bands: 1, TextRunes: 10, QArcs: 2}})
	nan, inf, half, big := math.NaN(), math.Inf(1), 0.5, 5000.0
	bad := &rfmath.Sweep{FreqHz: []float64{2, 1}, Ports: 1, Z0: []float64{50}, Data: []complex128{0, 0}}

	type fixture struct{ sid, sweep, marker, band string }
	setup := func(t *testing.T) fixture {
		sid := create(t, st, "v").ID
		sw := addSweep(t, st, sid, testSweep(51, 1, 1e9, 2e9), "a")
		mid := apply(t, st, sid, Change{Op: OpMarkerAdd, SweepID: sw, FreqHz: 1.5e9}).MarkerID
		bid := apply(t, st, sid, Change{Op: OpBandSet, LoHz: 1e9, HiHz: 2e9}).BandID
		return fixture{sid, sw, mid, bid}
	}
	tests := []struct {
		name     string
		ch       func(f fixture) Change
		prep     func(t *testing.T, f fixture)
		sentinel error
		field    string
	}{
		{"no op", func(f fixture) Change { return Change{} }, nil, ErrInvalid, "op"},
		{"unknown op", func(f fixture) Change { return Change{Op: "marker.teleport"} }, nil, ErrInvalid, "op"},
		{"empty session name", func(f fixture) Change { return Change{Op: OpSessionRename, Name: "  "} }, nil, ErrInvalid, "name"},
		{"name too long", func(f fixture) Change { return Change{Op: OpSessionRename, Name: "abcdefghijk"} }, nil, ErrInvalid, "name"},
		{"name with control char", func(f fixture) Change { return Change{Op: OpSessionRename, Name: "a\x07b"} }, nil, ErrInvalid, "name"},
		{"name not UTF-8", func(f fixture) Change { return Change{Op: OpSessionRename, Name: "a\xffb"} }, nil, ErrInvalid, "name"},
		{"sweep.add without sweep", func(f fixture) Change { return Change{Op: OpSweepAdd} }, nil, ErrInvalid, "sweep"},
		{"sweep.add decreasing frequency", func(f fixture) Change { return Change{Op: OpSweepAdd, Sweep: bad} }, nil, ErrInvalid, "sweep"},
		{"sweep.add bad colour", func(f fixture) Change {
			return Change{Op: OpSweepAdd, Color: "red", Sweep: testSweep(3, 1, 1, 3)}
		}, nil, ErrInvalid, "color"},
		{"too many sweeps", func(f fixture) Change { return Change{Op: OpSweepAdd, Sweep: testSweep(3, 1, 1, 3)} },
			func(t *testing.T, f fixture) { addSweep(t, st, f.sid, testSweep(3, 1, 1, 3), "b") }, ErrInvalid, ""},
		{"unknown sweep", func(f fixture) Change { return Change{Op: OpSweepRename, SweepID: "nope", Name: "x"} }, nil, ErrNotFound, "sweepId"},
		{"missing sweep id", func(f fixture) Change { return Change{Op: OpSweepRemove} }, nil, ErrInvalid, "sweepId"},
		{"sweep colour without #", func(f fixture) Change { return Change{Op: OpSweepColor, SweepID: f.sweep, Color: "1234567"} }, nil, ErrInvalid, "color"},
		{"sweep colour not hex", func(f fixture) Change { return Change{Op: OpSweepColor, SweepID: f.sweep, Color: "#12345g"} }, nil, ErrInvalid, "color"},
		{"marker on missing port", func(f fixture) Change { return Change{Op: OpMarkerAdd, SweepID: f.sweep, Port: 2, FreqHz: 1e9} }, nil, ErrInvalid, "port"},
		{"marker NaN frequency", func(f fixture) Change { return Change{Op: OpMarkerAdd, SweepID: f.sweep, FreqHz: nan} }, nil, ErrInvalid, "freqHz"},
		{"marker Inf frequency", func(f fixture) Change { return Change{Op: OpMarkerMove, MarkerID: f.marker, FreqHz: inf} }, nil, ErrInvalid, "freqHz"},
		{"marker NaN gamma", func(f fixture) Change { return Change{Op: OpMarkerMove, MarkerID: f.marker, Gamma: &Point{nan, 0}} }, nil, ErrInvalid, "gamma"},
		{"marker negative window", func(f fixture) Change {
			return Change{Op: OpMarkerMove, MarkerID: f.marker, Gamma: &Point{0, 0}, Window: -1}
		}, nil, ErrInvalid, "window"},
		{"too many markers on a trace", func(f fixture) Change { return Change{Op: OpMarkerAdd, SweepID: f.sweep, FreqHz: 1e9} },
			func(t *testing.T, f fixture) {
				apply(t, st, f.sid, Change{Op: OpMarkerAdd, SweepID: f.sweep, FreqHz: 1e9})
			}, ErrInvalid, ""},
		{"unknown marker", func(f fixture) Change { return Change{Op: OpMarkerMove, MarkerID: "nope", FreqHz: 1e9} }, nil, ErrNotFound, "markerId"},
		{"step zero", func(f fixture) Change { return Change{Op: OpMarkerStep, MarkerID: f.marker} }, nil, ErrInvalid, "steps"},
		{"label too long", func(f fixture) Change {
			return Change{Op: OpMarkerLabel, MarkerID: f.marker, Label: strings.Repeat("é", 11)}
		}, nil, ErrInvalid, "label"},
		{"dip range outside sweep", func(f fixture) Change {
			return Change{Op: OpMarkerToDip, MarkerID: f.marker, LoHz: 3e9, HiHz: 4e9}
		}, nil, ErrInvalid, "loHz"},
		{"dip range between two measured points", func(f fixture) Change {
			return Change{Op: OpMarkerToDip, MarkerID: f.marker, LoHz: 1.001e9, HiHz: 1.002e9}
		}, nil, ErrInvalid, "loHz"},
		{"dip range reversed", func(f fixture) Change {
			return Change{Op: OpMarkerToDip, MarkerID: f.marker, LoHz: 2e9, HiHz: 1e9}
		}, nil, ErrInvalid, "hiHz"},
		{"band lo = hi", func(f fixture) Change { return Change{Op: OpBandSet, BandID: f.band, LoHz: 1e9, HiHz: 1e9} }, nil, ErrInvalid, "hiHz"},
		{"band lo NaN", func(f fixture) Change { return Change{Op: OpBandSet, BandID: f.band, LoHz: nan, HiHz: 1e9} }, nil, ErrInvalid, "loHz"},
		{"band negative lo", func(f fixture) Change { return Change{Op: OpBandSet, BandID: f.band, LoHz: -1, HiHz: 1e9} }, nil, ErrInvalid, "loHz"},
		{"band negative RL", func(f fixture) Change {
			return Change{Op: OpBandSet, BandID: f.band, LoHz: 1, HiHz: 2, MinReturnLossDB: -3}
		}, nil, ErrInvalid, "minReturnLossDB"},
		{"too many bands", func(f fixture) Change { return Change{Op: OpBandSet, LoHz: 1, HiHz: 2} }, nil, ErrInvalid, ""},
		{"unknown band", func(f fixture) Change { return Change{Op: OpBandSet, BandID: "nope", LoHz: 1, HiHz: 2} }, nil, ErrNotFound, "bandId"},
		{"remove unknown band", func(f fixture) Change { return Change{Op: OpBandRemove, BandID: "nope"} }, nil, ErrNotFound, "bandId"},
		{"chart missing", func(f fixture) Change { return Change{Op: OpChartSet} }, nil, ErrInvalid, "chart"},
		{"chart zoom below 1", func(f fixture) Change { return Change{Op: OpChartSet, Chart: &ChartPatch{Zoom: &half}} }, nil, ErrInvalid, "chart.zoom"},
		{"chart zoom too big", func(f fixture) Change { return Change{Op: OpChartSet, Chart: &ChartPatch{Zoom: &big}} }, nil, ErrInvalid, "chart.zoom"},
		{"chart VSWR 0.5", func(f fixture) Change { return Change{Op: OpChartSet, Chart: &ChartPatch{VSWRCircle: &half}} }, nil, ErrInvalid, "chart.vswrCircle"},
		{"chart RL NaN", func(f fixture) Change { return Change{Op: OpChartSet, Chart: &ChartPatch{ReturnLossCircleDB: &nan}} }, nil, ErrInvalid, "chart.returnLossCircleDB"},
		{"chart Q arcs too many", func(f fixture) Change {
			return Change{Op: OpChartSet, Chart: &ChartPatch{QArcs: &[]float64{1, 2, 3}}}
		}, nil, ErrInvalid, "chart.qArcs"},
		{"chart Q negative", func(f fixture) Change {
			return Change{Op: OpChartSet, Chart: &ChartPatch{QArcs: &[]float64{-1}}}
		}, nil, ErrInvalid, "chart.qArcs"},
		{"stale ifVersion", func(f fixture) Change { return Change{Op: OpSessionRename, Name: "x", IfVersion: 1} }, nil, ErrConflict, "ifVersion"},
		{"nothing to redo", func(f fixture) Change { return Change{Op: OpRedo} }, nil, ErrInvalid, ""},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			f := setup(t)
			if tc.prep != nil {
				tc.prep(t, f)
			}
			before, v := state(t, st, f.sid)
			beforeJS, _ := json.Marshal(before)
			_, err := st.Apply(context.Background(), f.sid, tc.ch(f))
			wantErr(t, err, tc.sentinel, tc.field)
			after, v2 := state(t, st, f.sid)
			afterJS, _ := json.Marshal(after)
			if v2 != v || string(afterJS) != string(beforeJS) {
				t.Errorf("refused change moved the session from version %d to %d", v, v2)
			}
		})
	}

	t.Run("unknown session", func(t *testing.T) {
		t.Parallel()
		_, err := st.Apply(context.Background(), "nosuchsession", Change{Op: OpUndo})
		wantErr(t, err, ErrNotFound, "")
	})
	t.Run("nothing to undo", func(t *testing.T) {
		t.Parallel()
		sid := create(t, st, "fresh").ID
		_, err := st.Apply(context.Background(), sid, Change{Op: OpUndo})
		wantErr(t, err, ErrInvalid, "")
	})
}
