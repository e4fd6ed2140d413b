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

// richSession builds a session that uses every part of the state.
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
	a := apply(t, st, s.ID, Change{Op: OpSweepAdd, Name: "antenna via cable", FileName: "via cable.s1p", Raw: rawA, Sweep: load}).SweepID
	f := apply(t, st, s.ID, Change{Op: OpSweepAdd, Name: "cable", FileName: "cable.s2p", Raw: rawF, Sweep: fix, Color: "#123456"}).SweepID
	apply(t, st, s.ID, Change{Op: OpSweepVisible, SweepID: f, Visible: false})
	apply(t, st, s.ID, Change{Op: OpSweepRefPlane, SweepID: a, RefPlane: &RefPlane{FixtureSweepID: f, FixturePortFacingAnalyser: 2, DelayS: 1.2e-10, LossDB: 0.2, LossRefHz: 1e9, RenormOhm: 75}})
	apply(t, st, s.ID, Change{Op: OpMarkerAdd, SweepID: a, FreqHz: 868e6, Label: "=EU band"})
	apply(t, st, s.ID, Change{Op: OpMarkerAdd, SweepID: f, Port: 2, FreqHz: 915e6})
	apply(t, st, s.ID, Change{Op: OpBandSet, Name: "EU", LoHz: 863e6, HiHz: 870e6, MinReturnLossDB: 10})
	apply(t, st, s.ID, Change{Op: OpBandSet, Name: "US", LoHz: 902e6, HiHz: 928e6, MinPowerToLoad: 0.8})
	yes := true
	zoom, vswr := 2.0, 2.0
	arcs := []float64{1, 3}
	apply(t, st, s.ID, Change{Op: OpChartSet, Chart: &ChartPatch{AdmittanceGrid: &yes, Zoom: &zoom, VSWRCircle: &vswr, QArcs: &arcs, ShowAngleScale: &yes}})
	apply(t, st, s.ID, Change{Op: OpTDRSet, TimeDomain: &TimeDomain{SweepID: a, Mode: "impulse", Window: "hann", VF: 0.66, GateCentreS: 1e-9, GateSpanS: 0.5e-9}})
	n1 := apply(t, st, s.ID, Change{Op: OpNetworkAdd, Name: "Search 1", SweepID: a, DesignHz: 915e6, Parts: []Part{
		{Kind: PartShuntC, Value: 2.2e-12, Model: "0402", ESeries: "E24"},
		{Kind: PartSeriesL, Value: 12e-9, Model: "0402", ESeries: "E24", Params: map[string]float64{"q": 20, "maxA": 0.3}},
	}}).NetworkID
	power := 0.5
	apply(t, st, s.ID, Change{Op: OpNetworkSet, NetworkID: n1, PowerW: &power, YieldBuilds: 300, ChuRadiusM: 0.012})
	apply(t, st, s.ID, Change{Op: OpNetworkAdd, Name: "B", SweepID: a, Parts: []Part{{Kind: PartLine, Value: 0.02, Params: map[string]float64{"z0Ohm": 60, "vf": 0.7}}}})
	apply(t, st, s.ID, Change{Op: OpNetworkSelect, NetworkID: n1})
	apply(t, st, s.ID, Change{Op: OpSearchStore, Search: &SearchResult{SweepID: a, Port: 1, Settings: "up to 2 parts", Exact: true, Objective: "power",
		Designs: []Design{{Parts: []Part{{Kind: PartSeriesC, Value: 1e-12}}, WorstRLdB: 12, MarginDB: 2, Bands: []BandFigures{{LoHz: 863e6, HiHz: 870e6, WorstRLdB: 12, MeanRLdB: 14}}}}}})
	return s.ID
}

// normalised returns a copy of s with every id replaced by its place, so
// that two sessions with the same content compare equal.
func normalised(s *State) *State {
	js, _ := json.Marshal(s)
	c := new(State)
	json.Unmarshal(js, c)
	ids := map[string]string{}
	name := func(kind string, i int, id string) string {
		n := fmt.Sprintf("%s%d", kind, i)
		ids[id] = n
		return n
	}
	for i := range c.Sweeps {
		c.Sweeps[i].ID = name("sweep", i, c.Sweeps[i].ID)
	}
	for i := range c.Markers {
		c.Markers[i].ID = name("marker", i, c.Markers[i].ID)
		c.Markers[i].SweepID = ids[c.Markers[i].SweepID]
	}
	for i := range c.Bands {
		c.Bands[i].ID = name("band", i, c.Bands[i].ID)
	}
	for i := range c.Sweeps {
		if rp := c.Sweeps[i].RefPlane; rp != nil && rp.FixtureSweepID != "" {
			rp.FixtureSweepID = ids[rp.FixtureSweepID]
		}
	}
	for i := range c.Networks {
		n := &c.Networks[i]
		n.ID = name("net", i, n.ID)
		n.SweepID = ids[n.SweepID]
		for j := range n.Parts {
			n.Parts[j].ID = fmt.Sprintf("part%d", j)
		}
	}
	c.ActiveNetwork = ids[c.ActiveNetwork]
	c.TimeDomain.SweepID = ids[c.TimeDomain.SweepID]
	if c.Search != nil {
		c.Search.SweepID = ids[c.Search.SweepID]
	}
	return c
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
	if zr.File[0].Name != "session.json" || len(zr.File) != 3 || zr.File[1].Name != "sweeps/01-via_cable.s1p" || zr.File[2].Name != "sweeps/02-cable.s2p" {
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
