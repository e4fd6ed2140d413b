package sessions

import (
	"bytes"
	"encoding/json"
	"errors"
	"math"
	"strings"
	"testing"
	"unicode"
	"unicode/utf8"
)

// FuzzChange decodes a websocket payload (a JSON array of up to eight
// changes, or one change) and computes each in turn on a fixed session
// state, as Apply does before it commits, without the database. In the
// input, $S1 and $S2 stand for the ids of a 1-port and a 2-port sweep, $M
// for a marker and $B for a band. It checks that nothing panics, that a
// refusal is an error of a documented kind naming its op, that the state
// computed from is never modified, and that every state computed keeps
// the session's invariants (markers on existing traces within the sweep's
// range, valid bands, text within limits, finite numbers throughout).
func FuzzChange(f *testing.F) {
	for _, s := range []string{
		`{"op":"marker.move","markerId":"$M","gamma":{"re":-0.2,"im":0.3},"gesture":"g"}`,
		`{"op":"marker.move","markerId":"$M","freqHz":1e99}`,
		`[{"op":"marker.add","sweepId":"$S2","port":2,"gamma":{"re":0,"im":0.5}},{"op":"marker.step","markerId":"$M","steps":-3}]`,
		`{"op":"marker.to_dip","markerId":"$M","loHz":9e8,"hiHz":1.1e9}`,
		`{"op":"marker.label","markerId":"$M","label":"<script>"}`,
		`[{"op":"band.set","name":"ISM","loHz":9e8,"hiHz":9.3e8,"minReturnLossDB":10},{"op":"band.set","bandId":"$B","loHz":1,"hiHz":2}]`,
		`{"op":"band.remove","bandId":"$B"}`,
		`{"op":"chart.set","chart":{"zoom":3,"vswrCircle":2,"qArcs":[1,2,3],"returnLossCircleDB":10}}`,
		`[{"op":"sweep.remove","sweepId":"$S1"},{"op":"marker.move","markerId":"$M","freqHz":1e9}]`,
		`{"op":"sweep.color","sweepId":"$S2","color":"#A0b0C0"}`,
		`{"op":"sweep.rename","sweepId":"$S1","name":" antenna "}`,
		`{"op":"session.rename","name":"bench"}`,
		`{"op":"sweep.visible","sweepId":"$S2","visible":true}`,
		`{"op":"marker.remove","markerId":"$M"}`,
		`{"op":"nonsense"}`,
	} {
		f.Add([]byte(s))
	}
	st := openStore(f, Options{})
	se := create(f, st, "fuzz")
	s1 := addSweep(f, st, se.ID, testSweep(201, 1, 0.8e9, 1.2e9), "one")
	s2 := addSweep(f, st, se.ID, testSweep(101, 2, 0.5e9, 1.5e9), "two")
	mk := apply(f, st, se.ID, Change{Op: OpMarkerAdd, SweepID: s1, FreqHz: 1e9}).MarkerID
	bd := apply(f, st, se.ID, Change{Op: OpBandSet, Name: "b", LoHz: 0.9e9, HiHz: 1.1e9}).BandID
	base, _ := state(f, st, se.ID)
	repl := strings.NewReplacer("$S1", s1, "$S2", s2, "$M", mk, "$B", bd)
	lim := st.lim

	f.Fuzz(func(t *testing.T, data []byte) {
		data = []byte(repl.Replace(string(data)))
		var changes []Change
		if err := json.Unmarshal(data, &changes); err != nil {
			var one Change
			if json.Unmarshal(data, &one) != nil {
				return // the server refuses it as not JSON of the expected shape
			}
			changes = []Change{one}
		}
		if len(changes) > 8 {
			changes = changes[:8]
		}
		cur := base
		for _, ch := range changes {
			if ch.Op == OpUndo || ch.Op == OpRedo || ch.Op == OpSweepAdd {
				continue // undo and redo read the database; sweep.add needs an upload
			}
			before, err := json.Marshal(cur)
			if err != nil {
				t.Fatal(err)
			}
			r, err := st.compute(se.ID, cur, &ch)
			after, _ := json.Marshal(cur)
			if !bytes.Equal(before, after) {
				t.Fatalf("%s modified the state it was computed from", ch.Op)
			}
			if err != nil {
				if !errors.Is(err, ErrInvalid) && !errors.Is(err, ErrNotFound) && !errors.Is(err, ErrConflict) {
					t.Fatalf("%s refused with %v, of no documented kind", ch.Op, err)
				}
				op := ch.Op
				if op == "" {
					op = "(no op)"
				}
				if !strings.HasPrefix(err.Error(), op+": ") {
					t.Fatalf("refusal %q does not name the op %q", err, op)
				}
				continue
			}
			checkState(t, st, se.ID, r.next, lim)
			if ch.Op == OpMarkerStep {
				// A step goes the way its sign says, however large.
				was, now := cur.Markers[cur.MarkerIndex(ch.MarkerID)].FreqHz, r.next.Markers[r.next.MarkerIndex(ch.MarkerID)].FreqHz
				if (ch.Steps > 0 && now < was) || (ch.Steps < 0 && now > was) {
					t.Fatalf("marker.step %d moved the marker from %g to %g Hz", ch.Steps, was, now)
				}
			}
			cur = r.next
		}
	})
}

// checkState fails t unless s keeps the invariants every stored state must.
func checkState(t *testing.T, st *Store, sid string, s *State, lim Limits) {
	t.Helper()
	if _, err := json.Marshal(s); err != nil {
		t.Fatalf("the state does not encode (a NaN or Inf got in?): %v", err)
	}
	okText := func(what, v string) {
		if !utf8.ValidString(v) || utf8.RuneCountInString(v) > lim.TextRunes || strings.IndexFunc(v, unicode.IsControl) >= 0 || strings.TrimSpace(v) != v {
			t.Fatalf("%s %q breaks the text rules", what, v)
		}
	}
	finite := func(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }
	okText("session name", s.Name)
	if s.Name == "" {
		t.Fatal("empty session name")
	}
	ids := map[string]bool{}
	unique := func(kind, id string) {
		if id == "" || ids[kind+id] {
			t.Fatalf("%s id %q empty or not unique", kind, id)
		}
		ids[kind+id] = true
	}
	if len(s.Sweeps) > lim.SweepsPerSession {
		t.Fatalf("%d sweeps", len(s.Sweeps))
	}
	for _, sw := range s.Sweeps {
		unique("sweep", sw.ID)
		okText("sweep name", sw.Name)
		if len(sw.Color) != 7 || sw.Color[0] != '#' || strings.ToLower(sw.Color) != sw.Color {
			t.Fatalf("sweep colour %q", sw.Color)
		}
	}
	type trace struct {
		sweep string
		port  int
	}
	perTrace := map[trace]int{}
	for _, m := range s.Markers {
		unique("marker", m.ID)
		okText("marker label", m.Label)
		i := s.SweepIndex(m.SweepID)
		if i < 0 {
			t.Fatalf("marker %s on sweep %q, which the session does not list", m.ID, m.SweepID)
		}
		ref := s.Sweeps[i]
		if m.Port < 1 || m.Port > ref.Ports {
			t.Fatalf("marker %s on port %d of a %d-port sweep", m.ID, m.Port, ref.Ports)
		}
		if !finite(m.FreqHz) || m.FreqHz < ref.FminHz || m.FreqHz > ref.FmaxHz {
			t.Fatalf("marker %s at %g Hz, outside %g–%g Hz", m.ID, m.FreqHz, ref.FminHz, ref.FmaxHz)
		}
		k := trace{m.SweepID, m.Port}
		if perTrace[k]++; perTrace[k] > lim.MarkersPerTrace {
			t.Fatalf("%d markers on one trace", perTrace[k])
		}
	}
	if len(s.Bands) > lim.Bands {
		t.Fatalf("%d bands", len(s.Bands))
	}
	for _, b := range s.Bands {
		unique("band", b.ID)
		okText("band name", b.Name)
		if !finite(b.LoHz) || !finite(b.HiHz) || b.LoHz < 0 || b.LoHz >= b.HiHz || !(b.MinReturnLossDB >= 0 && b.MinReturnLossDB <= 200) {
			t.Fatalf("band %+v", b)
		}
	}
	c := s.Chart
	if !(c.Zoom >= 1 && c.Zoom <= MaxZoom) || !(c.VSWRCircle == 0 || c.VSWRCircle > 1) || !(c.ReturnLossCircleDB >= 0) || len(c.QArcs) > lim.QArcs {
		t.Fatalf("chart %+v", c)
	}
	for _, q := range c.QArcs {
		if !(q > 0) || !finite(q) {
			t.Fatalf("Q arc %g", q)
		}
	}
}
