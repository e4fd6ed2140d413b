package sessions

import (
	"archive/zip"
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"reflect"
	"slices"
	"strings"
	"testing"

	"matchbench/rfmath"
	"matchbench/rfmath/touchstone"
)

// touchstoneRaw writes sw as a Touchstone file, the raw bytes of an upload.
func touchstoneRaw(t *testing.T, sw *rfmath.Sweep) []byte {
	t.Helper()
	var b bytes.Buffer
	if err := touchstone.Write(&b, sw, touchstone.WriteOptions{Comments: []string{" written by the archive test"}}); err != nil {
		t.Fatal(err)
	}
	return b.Bytes()
}

// parseTouchstone reads an archived file as the server reads an upload.
func parseTouchstone(name string, raw []byte) (*rfmath.Sweep, error) {
	f, err := touchstone.Read(bytes.NewReader(raw), name, touchstone.Limits{})
	if err != nil {
		return nil, err
	}
	return f.Sweep, nil
}

// richSession builds a session that uses every part of the state (the
// figures are invented for the test): sweeps with a reference plane,
// markers, bands, the chart, the time domain, a load set, networks (one
// judged across the set and built on a board), a search, a round of bench
// tuning with its chosen swap, the amplifier view with both terminations
// and a transistor stage with its requirement and search.
// TestArchiveCarriesEveryField checks that it leaves no field of the
// state empty.
func richSession(t *testing.T, st *Store) string {
	t.Helper()
	s := create(t, st, "Fieldnode bench")
	// Each sweep is stored as an upload is: the numbers read from the file.
	upload := func(sw *rfmath.Sweep, name string) ([]byte, *rfmath.Sweep) {
		raw := touchstoneRaw(t, sw)
		parsed, err := parseTouchstone(name, raw)
		if err != nil {
			t.Fatal(err)
		}
		return raw, parsed
	}
	rawA, load := upload(testSweep(201, 1, 0.5e9, 1.5e9), "via cable.s1p")
	rawF, fix := upload(testSweep(201, 2, 0.5e9, 1.5e9), "cable.s2p")
	rawW, wrist := upload(testSweep(101, 1, 0.5e9, 1.5e9), "on wrist.s1p")
	a := apply(t, st, s.ID, Change{Op: OpSweepAdd, Name: "antenna via cable", FileName: "via cable.s1p", Raw: rawA, Sweep: load}).SweepID
	f := apply(t, st, s.ID, Change{Op: OpSweepAdd, Name: "cable", FileName: "cable.s2p", Raw: rawF, Sweep: fix, Color: "#123456"}).SweepID
	w := apply(t, st, s.ID, Change{Op: OpSweepAdd, Name: "on wrist", FileName: "on wrist.s1p", Raw: rawW, Sweep: wrist}).SweepID
	apply(t, st, s.ID, Change{Op: OpSweepVisible, SweepID: f, Visible: false})
	apply(t, st, s.ID, Change{Op: OpSweepRefPlane, SweepID: a, RefPlane: &RefPlane{FixtureSweepID: f, FixturePortFacingAnalyser: 2, DelayS: 1.2e-10, LossDB: 0.2, LossRefHz: 1e9, FlatLossDB: 0.1, RenormOhm: 75}})
	apply(t, st, s.ID, Change{Op: OpMarkerAdd, SweepID: a, FreqHz: 868e6, Label: "=EU band"})
	apply(t, st, s.ID, Change{Op: OpMarkerAdd, SweepID: f, Port: 2, FreqHz: 915e6})
	eu := apply(t, st, s.ID, Change{Op: OpBandSet, Name: "EU", LoHz: 863e6, HiHz: 870e6, MinReturnLossDB: 10}).BandID
	apply(t, st, s.ID, Change{Op: OpBandSet, Name: "US", LoHz: 902e6, HiHz: 928e6, MinPowerToLoad: 0.8})
	yes := true
	zoom, vswr, rl := 2.0, 2.0, 15.0
	arcs := []float64{1, 3}
	apply(t, st, s.ID, Change{Op: OpChartSet, Chart: &ChartPatch{AdmittanceGrid: &yes, Zoom: &zoom, VSWRCircle: &vswr, ReturnLossCircleDB: &rl,
		QArcs: &arcs, ShowAngleScale: &yes, ShowWavelengthScale: &yes}})
	apply(t, st, s.ID, Change{Op: OpTDRSet, TimeDomain: &TimeDomain{SweepID: a, Mode: "impulse", Window: "kaiser", Beta: 4, VF: 0.66, GateCentreS: 1e-9, GateSpanS: 0.5e-9}})
	set := apply(t, st, s.ID, Change{Op: OpSetSave, Name: "conditions", SetKind: SetConditions, Members: []SetMember{{SweepID: a, Port: 1, Weight: 2}, {SweepID: w, Advisory: true}}}).SetID
	board := &Layout{Footprint: "0402", PadCF: 0.12e-12, Traces: []Trace{{Gap: 1, LengthM: 0.003, Z0Ohm: 52, EpsEff: 3.2}}}
	two := []Part{
		{Kind: PartShuntC, Value: 2.2e-12, Model: "0402", ESeries: "E24"},
		{Kind: PartSeriesL, Value: 12e-9, Model: "0402", ESeries: "E24", Params: map[string]float64{"q": 20, "maxA": 0.3}},
	}
	n1 := apply(t, st, s.ID, Change{Op: OpNetworkAdd, Name: "Search 1", SweepID: a, Port: 1, DesignHz: 915e6, Parts: two, SetID: set, Layout: board}).NetworkID
	power := 0.5
	apply(t, st, s.ID, Change{Op: OpNetworkSet, NetworkID: n1, PowerW: &power, YieldBuilds: 300, ChuRadiusM: 0.012})
	apply(t, st, s.ID, Change{Op: OpNetworkAdd, Name: "B", SweepID: a, Parts: []Part{{Kind: PartLine, Value: 0.02, Params: map[string]float64{"z0Ohm": 60, "vf": 0.7}}}})
	apply(t, st, s.ID, Change{Op: OpSearchStore, Search: &SearchResult{SweepID: a, SetID: set, Port: 1, Settings: "up to 2 parts", Exact: true, Objective: "power",
		Designs: []Design{{Parts: []Part{{Kind: PartSeriesC, Value: 1e-12}}, WorstRLdB: 12, MarginDB: 2, WorstPowerToLoad: 0.7,
			Bands: []BandFigures{{LoHz: 863e6, HiHz: 870e6, WorstRLdB: 12, MeanRLdB: 14}}}},
		Note: "Bode–Fano allows 14 dB", Layout: board, StageSide: "source"}})
	swap := func(c float64) []Part {
		ps := []Part{two[0], two[1]}
		ps[0].Value = c
		return ps
	}
	apply(t, st, s.ID, Change{Op: OpTuneStore, Tune: &TuneRound{NetworkID: n1, NetworkName: "Search 1", LoadSweepID: a, Port: 1, BuiltSweepID: w, BuiltName: "on wrist",
		Parts: two, Layout: board, Bands: "EU, US",
		Fit: TuneFit{Points: 101, LoHz: 0.8e9, HiHz: 1e9, RMSResidual: 0.01, NominalRMSResidual: 0.05, Condition: 40,
			Params: []TuneParam{
				{Name: "C1", Kind: "part", Unit: "F", Nominal: 2.2e-12, Value: 2.3e-12, Sigma: 0.05e-12},
				{Name: "pads", Kind: "pads", Unit: "F", Nominal: 0.12e-12, Value: 0.2e-12, Unknown: true, Held: true, Undetermined: true, AtBound: true},
			},
			Warnings: []string{"the trace and the pads trade off"}},
		AsBuilt: TuneFigs{WorstRLdB: 8, WorstPowerToLoad: 0.6, MarginDB: -2, Meets: false},
		Suggestions: []TuneSwap{
			{Change: "C1 2.2 pF → 2.0 pF", Parts: swap(2.0e-12), Figs: TuneFigs{WorstRLdB: 11, WorstPowerToLoad: 0.7, MarginDB: 1, Meets: true}, Yield: 0.9},
			{Change: "C1 2.2 pF → 1.8 pF", Parts: swap(1.8e-12), Figs: TuneFigs{WorstRLdB: 10.5, WorstPowerToLoad: 0.68, MarginDB: 0.5, Meets: true}, Yield: -1},
		},
		Best: 1}})
	rounds, _ := state(t, st, s.ID)
	one := 1
	apply(t, st, s.ID, Change{Op: OpTuneUse, TuneID: rounds.Tuning[0].ID, Index: &one})
	gs, ns := []float64{1, 2}, []float64{0.5}
	apply(t, st, s.ID, Change{Op: OpAmpSet, SweepID: f, FreqHz: 900e6, AmpChange: AmpChange{GainStepsDB: &gs, NFStepsDB: &ns}})
	apply(t, st, s.ID, Change{Op: OpAmpPoint, Gamma: &Point{Re: 0.3, Im: -0.2}, AmpChange: AmpChange{Plane: "source"}})
	apply(t, st, s.ID, Change{Op: OpAmpPoint, Gamma: &Point{Re: -0.1, Im: 0.4}, AmpChange: AmpChange{Plane: "load"}})
	apply(t, st, s.ID, Change{Op: OpStageSet, SweepID: f, AmpChange: AmpChange{StageReqs: []StageReq{{BandID: eu, MinGainDB: 12, MaxNFdB: 1.5, MinInputRLdB: 8, MinOutputRLdB: 15}}}})
	apply(t, st, s.ID, Change{Op: OpStageStore, AmpChange: AmpChange{StageSearch: &StageSearchResult{Settings: "2 parts a side", SidesExact: true, Note: "best found",
		Designs: []StageDesign{{Source: []Part{{Kind: PartSeriesL, Value: 3.3e-9}}, Load: []Part{{Kind: PartShuntC, Value: 1e-12}}, MarginDB: 1.2}}}}})
	apply(t, st, s.ID, Change{Op: OpNetworkSelect, NetworkID: n1})
	return s.ID
}

// normalised returns s as JSON values with every id replaced by its place
// (sweep0, band1, net2, set0, tune0; the parts of each list by their
// index), wherever the id appears, so that two sessions with the same
// content compare equal.
func normalised(s *State) any {
	js, _ := json.Marshal(s)
	var v map[string]any
	json.Unmarshal(js, &v)
	ids := map[string]string{}
	for _, l := range []struct{ key, name string }{
		{"sweeps", "sweep"}, {"markers", "marker"}, {"bands", "band"}, {"networks", "net"}, {"loadSets", "set"}, {"tuning", "tune"},
	} {
		list, _ := v[l.key].([]any)
		for i, e := range list {
			o := e.(map[string]any)
			id, _ := o["id"].(string)
			ids[id] = fmt.Sprintf("%s%d", l.name, i)
		}
	}
	var walk func(x any, key string) any
	walk = func(x any, key string) any {
		switch x := x.(type) {
		case map[string]any:
			for k, e := range x {
				x[k] = walk(e, k)
			}
		case []any:
			for i, e := range x {
				if o, ok := e.(map[string]any); ok && (key == "parts" || key == "source" || key == "load") {
					if _, has := o["id"]; has {
						o["id"] = fmt.Sprintf("part%d", i)
					}
				}
				x[i] = walk(e, key)
			}
		case string:
			if n, ok := ids[x]; ok {
				return n
			}
		}
		return x
	}
	return walk(v, "")
}

// fieldPaths adds to all every field of the types that type t holds
// ("Trace.gap"), and to set those that v holds a value other than zero in,
// anywhere (a type used in several places, such as Part, counts once: the
// archive copies each whole).
func fieldPaths(t reflect.Type, v reflect.Value, all, set map[string]bool) {
	switch t.Kind() {
	case reflect.Pointer:
		var e reflect.Value
		if v.IsValid() && !v.IsNil() {
			e = v.Elem()
		}
		fieldPaths(t.Elem(), e, all, set)
	case reflect.Slice:
		if t.Elem().Kind() == reflect.Struct || t.Elem().Kind() == reflect.Pointer {
			fieldPaths(t.Elem(), reflect.Value{}, all, set)
			if v.IsValid() {
				for i := range v.Len() {
					fieldPaths(t.Elem(), v.Index(i), all, set)
				}
			}
		}
	case reflect.Struct:
		for i := range t.NumField() {
			f := t.Field(i)
			name, _, _ := strings.Cut(f.Tag.Get("json"), ",")
			if !f.IsExported() || name == "-" {
				continue
			}
			p := t.Name() + "." + name
			var fv reflect.Value
			if v.IsValid() {
				fv = v.Field(i)
			}
			all[p] = true
			if fv.IsValid() && !fv.IsZero() && !(fv.Kind() == reflect.Slice && fv.Len() == 0) {
				set[p] = true
			}
			fieldPaths(f.Type, fv, all, set)
		}
	}
}

// TestArchiveCarriesEveryField: the session of the round trip holds a
// value in every field of the state, so that a field the archive drops
// (one added to the state later and forgotten in the import, say) fails
// TestArchiveRoundTrip. The Monte Carlo's seed, which no change sets, is
// checked by an archive that carries one.
func TestArchiveCarriesEveryField(t *testing.T) {
	t.Parallel()
	ctx := context.Background()
	src := openStore(t, Options{})
	sid := richSession(t, src)
	s, _ := state(t, src, sid)
	all, set := map[string]bool{}, map[string]bool{}
	fieldPaths(reflect.TypeOf(*s), reflect.ValueOf(*s), all, set)
	unset := []string{}
	for p := range all {
		if !set[p] && p != "Network.yieldSeed" {
			unset = append(unset, p)
		}
	}
	slices.Sort(unset)
	if len(unset) > 0 {
		t.Errorf("the round trip's session leaves fields of the state empty, so their import goes unchecked: %v", unset)
	}
	if len(all) < 100 {
		t.Errorf("only %d field paths found: the walk of the state is broken", len(all))
	}
	// The seed: an archive that carries one imports it.
	var arch bytes.Buffer
	if err := src.ExportArchive(ctx, sid, &arch); err != nil {
		t.Fatal(err)
	}
	seeded := rezip(t, arch.Bytes(), func(name string, b []byte) []byte {
		if name != "session.json" {
			return b
		}
		var m map[string]any
		json.Unmarshal(b, &m)
		m["state"].(map[string]any)["networks"].([]any)[0].(map[string]any)["yieldSeed"] = 77
		out, _ := json.Marshal(m)
		return out
	})
	dst := openStore(t, Options{})
	se, err := dst.ImportArchive(ctx, bytes.NewReader(seeded), int64(len(seeded)), 1<<20, parseTouchstone)
	if err != nil {
		t.Fatal(err)
	}
	if got, _ := state(t, dst, se.ID); got.Networks[0].YieldSeed != 77 {
		t.Errorf("yield seed %d, want 77", got.Networks[0].YieldSeed)
	}
}

// TestArchiveRoundTrip exports a session that uses every part of the state
// and imports it into another store: the new session has the same state
// (ids apart), the same files byte for byte and the same numbers.
func TestArchiveRoundTrip(t *testing.T) {
	t.Parallel()
	ctx := context.Background()
	src := openStore(t, Options{})
	sid := richSession(t, src)
	var arch bytes.Buffer
	if err := src.ExportArchive(ctx, sid, &arch); err != nil {
		t.Fatal(err)
	}
	dst := openStore(t, Options{})
	se, err := dst.ImportArchive(ctx, bytes.NewReader(arch.Bytes()), int64(arch.Len()), 1<<20, parseTouchstone)
	if err != nil {
		t.Fatal(err)
	}
	if se.EditToken == "" || se.ViewToken == "" || se.Name != "Fieldnode bench" {
		t.Errorf("imported session %+v", se)
	}
	want, _ := state(t, src, sid)
	got, v := state(t, dst, se.ID)
	if v != 0 {
		t.Errorf("imported at version %d, want 0 (a new session)", v)
	}
	if a, b := normalised(want), normalised(got); !reflect.DeepEqual(a, b) {
		ja, _ := json.MarshalIndent(a, "", " ")
		jb, _ := json.MarshalIndent(b, "", " ")
		t.Errorf("state differs:\nexported %s\nimported %s", ja, jb)
	}
	for i := range want.Sweeps {
		r0, n0, _ := src.Raw(ctx, sid, want.Sweeps[i].ID)
		r1, n1, err := dst.Raw(ctx, se.ID, got.Sweeps[i].ID)
		if err != nil || !bytes.Equal(r0, r1) || n0 != n1 {
			t.Errorf("sweep %d: file %q (%d bytes) became %q (%d bytes), %v", i, n0, len(r0), n1, len(r1), err)
		}
		s0, _ := src.Sweep(sid, want.Sweeps[i].ID)
		s1, err := dst.Sweep(se.ID, got.Sweeps[i].ID)
		if err != nil || !reflect.DeepEqual(s0, s1) {
			t.Errorf("sweep %d numbers differ: %v", i, err)
		}
	}
	// The new session works: it takes a change and its view link is a
	// view link.
	apply(t, dst, se.ID, Change{Op: OpMarkerAdd, SweepID: got.Sweeps[0].ID, FreqHz: 900e6})
	if _, c, err := dst.ByToken(ctx, se.ViewToken); err != nil || c.CanEdit() {
		t.Errorf("view token: %v, can edit %v", err, c.CanEdit())
	}
	// The manifest is the documented one.
	zr, err := zip.NewReader(bytes.NewReader(arch.Bytes()), int64(arch.Len()))
	if err != nil {
		t.Fatal(err)
	}
	if zr.File[0].Name != "session.json" || len(zr.File) != 4 || zr.File[1].Name != "sweeps/01-via_cable.s1p" || zr.File[2].Name != "sweeps/02-cable.s2p" {
		t.Errorf("archive files: %v", names(zr.File))
	}
}

func names(fs []*zip.File) []string {
	var out []string
	for _, f := range fs {
		out = append(out, f.Name)
	}
	return out
}

// rezip rewrites an archive with change applied to each file's bytes.
func rezip(t *testing.T, arch []byte, change func(name string, b []byte) []byte) []byte {
	t.Helper()
	zr, err := zip.NewReader(bytes.NewReader(arch), int64(len(arch)))
	if err != nil {
		t.Fatal(err)
	}
	var out bytes.Buffer
	zw := zip.NewWriter(&out)
	for _, f := range zr.File {
		rc, _ := f.Open()
		b, _ := io.ReadAll(rc)
		rc.Close()
		if b = change(f.Name, b); b == nil {
			continue
		}
		w, _ := zw.Create(f.Name)
		w.Write(b)
	}
	zw.Close()
	return out.Bytes()
}

// TestArchiveRefused: a damaged, foreign or newer archive, and one whose
// state breaks a rule, are refused with an error that says why, and the
// store holds no trace of them.
func TestArchiveRefused(t *testing.T) {
	t.Parallel()
	ctx := context.Background()
	src := openStore(t, Options{})
	sid := richSession(t, src)
	var good bytes.Buffer
	if err := src.ExportArchive(ctx, sid, &good); err != nil {
		t.Fatal(err)
	}
	manifest := func(edit func(m map[string]any)) func(string, []byte) []byte {
		return func(name string, b []byte) []byte {
			if name != "session.json" {
				return b
			}
			var m map[string]any
			json.Unmarshal(b, &m)
			edit(m)
			out, _ := json.Marshal(m)
			return out
		}
	}
	// A byte flipped in the compressed data of a sweep file: the zip
	// checksum fails on reading.
	flipped := bytes.Clone(good.Bytes())
	zr, _ := zip.NewReader(bytes.NewReader(flipped), int64(len(flipped)))
	off, _ := zr.File[1].DataOffset()
	flipped[off+10] ^= 0xff

	var foreign bytes.Buffer
	zw := zip.NewWriter(&foreign)
	w, _ := zw.Create("readme.txt")
	w.Write([]byte("not a session"))
	zw.Close()

	cases := []struct {
		name string
		data []byte
		want error
		msg  string
	}{
		{"not a zip", []byte("PK? this is not a zip file at all"), ErrArchive, "not a zip file"},
		{"a foreign zip", foreign.Bytes(), ErrArchive, "no session.json"},
		{"a damaged sweep file", flipped, ErrArchive, "sweeps/01-via_cable.s1p"},
		{"a file changed after export", rezip(t, good.Bytes(), func(name string, b []byte) []byte {
			if strings.HasPrefix(name, "sweeps/02") {
				return append(b, '\n')
			}
			return b
		}), ErrArchive, "SHA-256"},
		{"a file missing", rezip(t, good.Bytes(), func(name string, b []byte) []byte {
			if strings.HasPrefix(name, "sweeps/02") {
				return nil
			}
			return b
		}), ErrArchive, "missing"},
		{"another format", rezip(t, good.Bytes(), manifest(func(m map[string]any) { m["format"] = "something else" })), ErrArchive, "format"},
		{"a newer version", rezip(t, good.Bytes(), manifest(func(m map[string]any) { m["version"] = 99 })), ErrArchive, "newer matchbench"},
		{"an unknown field", rezip(t, good.Bytes(), manifest(func(m map[string]any) { m["extra"] = 1 })), ErrArchive, "extra"},
		{"a band that breaks a rule", rezip(t, good.Bytes(), manifest(func(m map[string]any) {
			m["state"].(map[string]any)["bands"].([]any)[1].(map[string]any)["loHz"] = 1e12
		})), ErrInvalid, "band 2"},
		{"a part out of range", rezip(t, good.Bytes(), manifest(func(m map[string]any) {
			p := m["state"].(map[string]any)["networks"].([]any)[0].(map[string]any)["parts"].([]any)[1].(map[string]any)
			p["params"].(map[string]any)["q"] = 1e-300
		})), ErrInvalid, "params.q"},
		{"a marker on a sweep not in the archive", rezip(t, good.Bytes(), manifest(func(m map[string]any) {
			m["state"].(map[string]any)["markers"].([]any)[0].(map[string]any)["sweepId"] = "nosuch"
		})), ErrArchive, "nosuch"},
	}
	dst := openStore(t, Options{})
	keep := create(t, dst, "already here")
	for _, c := range cases {
		_, err := dst.ImportArchive(ctx, bytes.NewReader(c.data), int64(len(c.data)), 1<<20, parseTouchstone)
		if !errors.Is(err, c.want) || !strings.Contains(err.Error(), c.msg) {
			t.Errorf("%s: error %v, want %v saying %q", c.name, err, c.want, c.msg)
		}
	}
	list, err := dst.List(ctx)
	if err != nil || len(list) != 1 || list[0].ID != keep.ID {
		t.Errorf("after refused imports the store lists %+v (%v), want only %q", list, err, keep.Name)
	}
	var n int
	if err := dst.rdb.QueryRow(`SELECT count(*) FROM sweeps`).Scan(&n); err != nil || n != 0 {
		t.Errorf("%d sweep rows kept (%v), want 0", n, err)
	}
	// A file over the size limit.
	if _, err := dst.ImportArchive(ctx, bytes.NewReader(good.Bytes()), int64(good.Len()), 100, parseTouchstone); !errors.Is(err, ErrArchive) || !strings.Contains(err.Error(), "limit") {
		t.Errorf("size limit: %v", err)
	}
}
