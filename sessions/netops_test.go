package sessions

import (
	"context"
	"errors"
	"math"
	"strings"
	"testing"
)

func fptr(v float64) *float64 { return &v }
func sptr(s string) *string   { return &s }
func iptr(i int) *int         { return &i }

func TestNetworkOps(t *testing.T) {
	t.Parallel()
	st := openStore(t, Options{})
	s := create(t, st, "net")
	sw := addSweep(t, st, s.ID, testSweep(201, 1, 0.5e9, 1.5e9), "load")
	apply(t, st, s.ID, Change{Op: OpBandSet, Name: "b", LoHz: 0.9e9, HiHz: 1.1e9, MinReturnLossDB: 10})

	ev := apply(t, st, s.ID, Change{Op: OpNetworkAdd})
	cur, _ := state(t, st, s.ID)
	n := cur.Active()
	if n == nil || n.SweepID != sw || n.Port != 1 || n.DesignHz != math.Sqrt(0.9e9*1.1e9) || ev.NetworkID != n.ID {
		t.Fatalf("network.add: %+v, event %+v; want on the sweep, design at the band's geometric centre √(0.9 · 1.1) GHz", n, ev)
	}
	l := apply(t, st, s.ID, Change{Op: OpPartAdd, Kind: PartShuntC, Value: fptr(1e-12), Model: sptr("0402")})
	c := apply(t, st, s.ID, Change{Op: OpPartAdd, Kind: PartSeriesL, Value: fptr(10e-9), ESeries: sptr("e24"), Index: iptr(0)})
	cur, _ = state(t, st, s.ID)
	ps := cur.Active().Parts
	if len(ps) != 2 || ps[0].ID != c.PartID || ps[1].ID != l.PartID || ps[0].ESeries != "E24" || ps[1].Model != "0402" {
		t.Fatalf("parts after two adds: %+v", ps)
	}
	apply(t, st, s.ID, Change{Op: OpPartMove, PartID: c.PartID, Index: iptr(1)})
	apply(t, st, s.ID, Change{Op: OpPartSet, PartID: l.PartID, Value: fptr(1.5e-12), Params: map[string]float64{"q": 200}})
	cur, _ = state(t, st, s.ID)
	ps = cur.Active().Parts
	if ps[0].ID != l.PartID || ps[0].Value != 1.5e-12 || ps[0].Params["q"] != 200 || ps[1].ID != c.PartID {
		t.Fatalf("after move and set: %+v", ps)
	}
	apply(t, st, s.ID, Change{Op: OpPartSet, PartID: l.PartID, Params: map[string]float64{"q": math.NaN()}})
	cur, _ = state(t, st, s.ID)
	if _, ok := cur.Active().Parts[0].Params["q"]; ok {
		t.Errorf("NaN did not clear a parameter: %+v", cur.Active().Parts[0].Params)
	}

	// A drag of a part's value is one undo step.
	_, v0 := state(t, st, s.ID)
	for i := range 5 {
		apply(t, st, s.ID, Change{Op: OpPartSet, PartID: c.PartID, Value: fptr(11e-9 + float64(i)*1e-9), Gesture: "drag1"})
	}
	_, v1 := state(t, st, s.ID)
	apply(t, st, s.ID, Change{Op: OpUndo})
	cur, _ = state(t, st, s.ID)
	if v1 != v0+5 || cur.Active().Parts[1].Value != 10e-9 {
		t.Errorf("drag: versions %d → %d; after one undo value %g, want 10 nH", v0, v1, cur.Active().Parts[1].Value)
	}

	b := apply(t, st, s.ID, Change{Op: OpNetworkAdd, Name: "B", Parts: []Part{{Kind: PartSeriesC, Value: 2e-12}}})
	cur, _ = state(t, st, s.ID)
	if len(cur.Networks) != 2 || cur.ActiveNetwork != b.NetworkID || cur.Active().Name != "B" || len(cur.Active().Parts) != 1 {
		t.Fatalf("second network: %+v", cur.Networks)
	}
	apply(t, st, s.ID, Change{Op: OpNetworkSelect, NetworkID: n.ID})
	apply(t, st, s.ID, Change{Op: OpNetworkSet, NetworkID: n.ID, DesignHz: 1.05e9, PowerW: fptr(2), Name: "A"})
	apply(t, st, s.ID, Change{Op: OpNetworkRemove, NetworkID: b.NetworkID})
	cur, _ = state(t, st, s.ID)
	a := cur.Active()
	if len(cur.Networks) != 1 || a.ID != n.ID || a.DesignHz != 1.05e9 || a.PowerW != 2 || a.Name != "A" {
		t.Fatalf("after set and remove: %+v", cur.Networks)
	}
	apply(t, st, s.ID, Change{Op: OpPartRemove, PartID: c.PartID})
	cur, _ = state(t, st, s.ID)
	if len(cur.Active().Parts) != 1 {
		t.Errorf("part.remove left %d parts", len(cur.Active().Parts))
	}
}

func TestNetworkValidation(t *testing.T) {
	t.Parallel()
	st := openStore(t, Options{Limits: Limits{PartsPerNetwork: 2, Networks: 1}})
	s := create(t, st, "v")
	ctx := context.Background()
	_, err := st.Apply(ctx, s.ID, Change{Op: OpNetworkAdd})
	wantErr(t, err, ErrInvalid, "sweepId")
	_, err = st.Apply(ctx, s.ID, Change{Op: OpPartAdd, Kind: PartSeriesL, Value: fptr(1e-9)})
	wantErr(t, err, ErrInvalid, "networkId")
	addSweep(t, st, s.ID, testSweep(11, 1, 1e9, 2e9), "load")
	_, err = st.Apply(ctx, s.ID, Change{Op: OpNetworkAdd, DesignHz: 3e9})
	wantErr(t, err, ErrInvalid, "designHz")
	apply(t, st, s.ID, Change{Op: OpNetworkAdd})
	_, err = st.Apply(ctx, s.ID, Change{Op: OpNetworkAdd})
	wantErr(t, err, ErrInvalid, "")
	_, v0 := state(t, st, s.ID)
	cases := []struct {
		name  string
		ch    Change
		field string
	}{
		{"kind", Change{Op: OpPartAdd, Kind: "series_X", Value: fptr(1)}, "kind"},
		{"zero value", Change{Op: OpPartAdd, Kind: PartSeriesL, Value: fptr(0)}, "value"},
		{"NaN value", Change{Op: OpPartAdd, Kind: PartSeriesL, Value: fptr(math.NaN())}, "value"},
		{"no value", Change{Op: OpPartAdd, Kind: PartSeriesL}, "value"},
		{"model", Change{Op: OpPartAdd, Kind: PartSeriesL, Value: fptr(1e-9), Model: sptr("1206")}, "model"},
		{"model on a line", Change{Op: OpPartAdd, Kind: PartLine, Value: fptr(0.01), Model: sptr("0402")}, "model"},
		{"series", Change{Op: OpPartAdd, Kind: PartShuntC, Value: fptr(1e-12), ESeries: sptr("E7")}, "series"},
		{"param", Change{Op: OpPartAdd, Kind: PartLine, Value: fptr(0.01), Params: map[string]float64{"vf": 1.5}}, "params.vf"},
		{"unknown param", Change{Op: OpPartAdd, Kind: PartLine, Value: fptr(0.01), Params: map[string]float64{"colour": 1}}, "params.colour"},
		{"index", Change{Op: OpPartAdd, Kind: PartSeriesL, Value: fptr(1e-9), Index: iptr(3)}, "index"},
		{"part id", Change{Op: OpPartSet, PartID: "nope", Value: fptr(1)}, "partId"},
		{"power", Change{Op: OpNetworkSet, PowerW: fptr(-1)}, "powerW"},
	}
	for _, tc := range cases {
		_, err := st.Apply(ctx, s.ID, tc.ch)
		if tc.field == "partId" {
			wantErr(t, err, ErrNotFound, tc.field)
		} else {
			wantErr(t, err, ErrInvalid, tc.field)
		}
	}
	apply(t, st, s.ID, Change{Op: OpPartAdd, Kind: PartSeriesL, Value: fptr(1e-9)})
	apply(t, st, s.ID, Change{Op: OpPartAdd, Kind: PartSeriesL, Value: fptr(1e-9)})
	_, err = st.Apply(ctx, s.ID, Change{Op: OpPartAdd, Kind: PartSeriesL, Value: fptr(1e-9)})
	wantErr(t, err, ErrInvalid, "")
	if _, v := state(t, st, s.ID); v != v0+2 {
		t.Errorf("refused changes moved the version: %d → %d", v0, v)
	}
}

// TestPartFiguresStayFinite: values and figures that would make a part's
// response infinite or NaN (and so every export of its network) are refused
// when they are set, naming the field; the network is left as it was.
func TestPartFiguresStayFinite(t *testing.T) {
	t.Parallel()
	st := openStore(t, Options{})
	s := create(t, st, "finite")
	ctx := context.Background()
	addSweep(t, st, s.ID, testSweep(11, 1, 1e9, 2e9), "load")
	apply(t, st, s.ID, Change{Op: OpNetworkAdd})
	l := apply(t, st, s.ID, Change{Op: OpPartAdd, Kind: PartSeriesL, Value: fptr(10e-9), Model: sptr("0402")})
	tl := apply(t, st, s.ID, Change{Op: OpPartAdd, Kind: PartLine, Value: fptr(0.05)})
	_, v0 := state(t, st, s.ID)
	for _, c := range []struct {
		name  string
		ch    Change
		field string
	}{
		{"a Q of 1e-300 at 1e300 Hz (R = +Inf)", Change{Op: OpPartSet, PartID: l.PartID, Params: map[string]float64{"q": 1e-300, "qRefHz": 1e300}}, "params."},
		{"a Q of 1e-300", Change{Op: OpPartSet, PartID: l.PartID, Params: map[string]float64{"q": 1e-300}}, "params.q"},
		{"a self-resonance of 1e-300 Hz (Cp = +Inf)", Change{Op: OpPartSet, PartID: l.PartID, Params: map[string]float64{"srfHz": 1e-300}}, "params.srfHz"},
		{"a capacitor of 1e-300 F", Change{Op: OpPartAdd, Kind: PartShuntC, Value: fptr(1e-300)}, "value"},
		{"an inductor of 1e9 H", Change{Op: OpPartAdd, Kind: PartSeriesL, Value: fptr(1e9)}, "value"},
		{"a line of 1e-300 Ω", Change{Op: OpPartSet, PartID: tl.PartID, Params: map[string]float64{"z0Ohm": 1e-300}}, "params.z0Ohm"},
		{"a loss growing from 1e-300 Hz", Change{Op: OpPartSet, PartID: tl.PartID, Params: map[string]float64{"lossDBPerM": 1, "lossRefHz": 1e-300}}, "params.lossRefHz"},
		{"a loss of 1e7 Np over the line (cosh = +Inf)", Change{Op: OpPartSet, PartID: tl.PartID, Value: fptr(1000), Params: map[string]float64{"lossDBPerM": 9999, "lossRefHz": 1e3}}, "params"},
		{"a tolerance wider than the value", Change{Op: OpPartSet, PartID: l.PartID, Params: map[string]float64{"tolAbs": 20e-9}}, "params.tolAbs"},
		{"a rating of 1e300 V", Change{Op: OpPartSet, PartID: l.PartID, Params: map[string]float64{"maxV": 1e300}}, "params.maxV"},
	} {
		_, err := st.Apply(ctx, s.ID, c.ch)
		var oe *OpError
		if !errors.Is(err, ErrInvalid) || !errors.As(err, &oe) || !strings.HasPrefix(oe.Field, c.field) {
			t.Errorf("%s: error %v, want ErrInvalid naming %s…", c.name, err, c.field)
		}
	}
	if _, v := state(t, st, s.ID); v != v0 {
		t.Errorf("refused changes moved the version %d → %d", v0, v)
	}
	// Figures in the ranges are taken.
	apply(t, st, s.ID, Change{Op: OpPartSet, PartID: l.PartID, Params: map[string]float64{"q": 0.5, "qRefHz": 1e9, "srfHz": 5e9, "tolAbs": 0.1e-9}})
	apply(t, st, s.ID, Change{Op: OpPartSet, PartID: tl.PartID, Params: map[string]float64{"lossDBPerM": 2, "lossRefHz": 1e9, "z0Ohm": 75}})
}

// Load sets: saved, validated with the field named, followed by the
// networks judged across them, emptied of a removed sweep and removed with
// their last sweep that must pass, and undone as one step.
func TestLoadSets(t *testing.T) {
	t.Parallel()
	st := openStore(t, Options{})
	s := create(t, st, "sets")
	ctx := context.Background()
	a := addSweep(t, st, s.ID, testSweep(201, 1, 0.5e9, 1.5e9), "a")
	b := addSweep(t, st, s.ID, testSweep(101, 1, 0.6e9, 1.4e9), "b")
	c := addSweep(t, st, s.ID, testSweep(51, 1, 0.5e9, 1.5e9), "c")
	ev := apply(t, st, s.ID, Change{Op: OpSetSave, Name: "conditions", Members: []SetMember{{SweepID: a}, {SweepID: b, Weight: 2}, {SweepID: c, Advisory: true}}})
	cur, _ := state(t, st, s.ID)
	if len(cur.LoadSets) != 1 || cur.LoadSets[0].ID != ev.SetID || cur.LoadSets[0].Kind != SetConditions || cur.LoadSets[0].Members[1].Weight != 2 {
		t.Fatalf("sets %+v", cur.LoadSets)
	}
	for _, tc := range []struct {
		name  string
		ch    Change
		field string
	}{
		{"kind", Change{Op: OpSetSave, SetKind: "bag", Members: []SetMember{{SweepID: a}}}, "setKind"},
		{"empty", Change{Op: OpSetSave}, "members"},
		{"twice", Change{Op: OpSetSave, Members: []SetMember{{SweepID: a}, {SweepID: a}}}, "members"},
		{"weight", Change{Op: OpSetSave, Members: []SetMember{{SweepID: a, Weight: math.Inf(1)}}}, "members.weight"},
		{"all advisory", Change{Op: OpSetSave, Members: []SetMember{{SweepID: a, Advisory: true}}}, "members"},
		{"port", Change{Op: OpSetSave, Members: []SetMember{{SweepID: a, Port: 3}}}, "members.port"},
	} {
		_, err := st.Apply(ctx, s.ID, tc.ch)
		wantErr(t, err, ErrInvalid, tc.field)
	}
	_, err := st.Apply(ctx, s.ID, Change{Op: OpSetSave, Members: []SetMember{{SweepID: "nope"}}})
	wantErr(t, err, ErrNotFound, "members.sweepId")
	// A network on a sweep outside the set, judged across it, moves to the
	// set's first member that must pass; one on a member stays.
	d := addSweep(t, st, s.ID, testSweep(51, 1, 0.5e9, 1.5e9), "d")
	apply(t, st, s.ID, Change{Op: OpNetworkAdd, SweepID: d})
	apply(t, st, s.ID, Change{Op: OpNetworkSet, SetID: ev.SetID})
	cur, _ = state(t, st, s.ID)
	if n := cur.Active(); n.SetID != ev.SetID || n.SweepID != a {
		t.Errorf("network %+v", n)
	}
	apply(t, st, s.ID, Change{Op: OpNetworkAdd, SweepID: c, SetID: ev.SetID})
	cur, _ = state(t, st, s.ID)
	if n := cur.Active(); n.SetID != ev.SetID || n.SweepID != c {
		t.Errorf("network on an advisory member %+v", n)
	}
	_, err = st.Apply(ctx, s.ID, Change{Op: OpNetworkAdd, SweepID: d, SetID: ev.SetID})
	wantErr(t, err, ErrInvalid, "sweepId")
	apply(t, st, s.ID, Change{Op: OpSweepRemove, SweepID: b})
	cur, _ = state(t, st, s.ID)
	if len(cur.LoadSets[0].Members) != 2 {
		t.Errorf("after removing b: %+v", cur.LoadSets[0].Members)
	}
	apply(t, st, s.ID, Change{Op: OpSweepRemove, SweepID: a})
	cur, _ = state(t, st, s.ID)
	if len(cur.LoadSets) != 0 || len(cur.Networks) > 0 && cur.Networks[0].SetID != "" {
		t.Errorf("a set with only an advisory sweep left: %+v, networks %+v", cur.LoadSets, cur.Networks)
	}
	apply(t, st, s.ID, Change{Op: OpUndo})
	cur, _ = state(t, st, s.ID)
	if len(cur.LoadSets) != 1 {
		t.Errorf("undo did not bring the set back")
	}
}
