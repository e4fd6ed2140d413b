package server

import (
	"encoding/json"
	"errors"
	"math"
	"slices"
	"strings"
	"testing"

	"matchbench/rfmath/touchstone"
	"matchbench/sessions"
)

// FuzzMessage feeds a websocket message through what the server does with
// it before the store: decoding, the form reader for forms, the drag
// queue. It checks that nothing panics, that a form either gives a change
// of a known op with finite numbers or an error naming the field, and that
// every change survives a JSON round trip unchanged (so what the page
// sends is what the store gets).
func FuzzMessage(f *testing.F) {
	for _, s := range []string{
		`{"type":"hello","v":3}`,
		`{"type":"ping"}`,
		`{"type":"change","id":1,"v":2,"change":{"op":"marker.move","markerId":"abc","gamma":{"re":-0.5,"im":0.1},"gesture":"g","window":16}}`,
		`{"type":"change","id":2,"change":{"op":"marker.add","sweepId":"s1","port":1,"freqHz":868e6,"label":"<b>x</b>"}}`,
		`{"type":"change","id":3,"change":{"op":"chart.set","chart":{"zoom":2,"qArcs":[1,3],"impedanceGrid":true}}}`,
		`{"type":"change","id":4,"change":{"op":"band.set","name":"ISM","loHz":2.4e9,"hiHz":2.4835e9,"minReturnLossDB":10,"ifVersion":7}}`,
		`{"type":"form","id":5,"form":"band.set","fields":{"lo":"2.4G","hi":"2.4835 GHz","rl":"-10","name":"ISM"}}`,
		`{"type":"form","id":6,"form":"marker.add","fields":{"trace":"s1:1","freq":"868M","label":"a"}}`,
		`{"type":"form","id":7,"form":"chart.set","fields":{"impedanceGrid":"on","vswrCircle":"2","returnLossCircleDB":"-10","qArcs":"1; 3 5","zoom":""}}`,
		`{"type":"form","id":8,"form":"session.rename","fields":{"name":"  bench  "}}`,
		`{"type":"form","id":9,"form":"band.set","fields":{"lo":"NaN","hi":"1e400"}}`,
		`{"type":"change","id":10,"change":{"op":"undo"}}`,
	} {
		f.Add([]byte(s))
	}
	known := map[string]bool{}
	for _, op := range sessions.Ops {
		known[op] = true
	}
	f.Fuzz(func(t *testing.T, data []byte) {
		var m inMsg
		if err := json.Unmarshal(data, &m); err != nil {
			return // the reader answers "not JSON of the expected shape"
		}
		var ch sessions.Change
		switch {
		case m.Type == "form":
			var err error
			ch, err = formChange(m.Form, m.Fields)
			if err != nil {
				var fe *FieldError
				if errors.As(err, &fe) {
					if fe.Label == "" || fe.Field == "" || !strings.HasPrefix(err.Error(), fe.Label+": ") {
						t.Fatalf("field error %q does not name its field", err)
					}
				} else if !strings.HasPrefix(err.Error(), "unknown form") {
					t.Fatalf("form %q: error %q is neither a field error nor an unknown form", m.Form, err)
				}
				return
			}
			if !known[ch.Op] {
				t.Fatalf("form %q gave op %q", m.Form, ch.Op)
			}
			for _, v := range []float64{ch.FreqHz, ch.LoHz, ch.HiHz, ch.MinReturnLossDB} {
				if math.IsNaN(v) || math.IsInf(v, 0) || v < 0 {
					t.Fatalf("form %q gave a bad number %g: %+v", m.Form, v, ch)
				}
			}
			if p := ch.Chart; p != nil {
				if _, sent := m.Fields["zoom"]; sent != (p.Zoom != nil) {
					t.Fatalf("chart form with zoom sent %v gave zoom %v", sent, p.Zoom)
				}
				for _, v := range []*float64{p.Zoom, p.VSWRCircle, p.ReturnLossCircleDB} {
					if v == nil && v == p.Zoom {
						continue // zoom left as it is
					}
					if v == nil || math.IsNaN(*v) || math.IsInf(*v, 0) {
						t.Fatalf("chart form gave %+v", p)
					}
				}
				if p.QArcs == nil || slices.ContainsFunc(*p.QArcs, func(q float64) bool { return !(q > 0) || math.IsInf(q, 0) }) {
					t.Fatalf("chart form gave Q arcs %v", p.QArcs)
				}
			}
		case m.Type == "change" && m.Change != nil:
			ch = *m.Change
		default:
			return
		}
		b, err := json.Marshal(ch)
		if err != nil {
			t.Fatalf("a decoded change does not encode: %v", err)
		}
		var back sessions.Change
		if err := json.Unmarshal(b, &back); err != nil {
			t.Fatalf("an encoded change does not decode: %v\n%s", err, b)
		}
		if b2, _ := json.Marshal(back); string(b2) != string(b) {
			t.Fatalf("change round trip:\n%s\n%s", b, b2)
		}

		// The drag queue keeps at most one pending drag per marker.
		c := &conn{wake: make(chan struct{}, 1)}
		in := inMsg{Type: "change", ID: m.ID, Change: &ch}
		for range 3 {
			c.push(in)
		}
		want := 3
		if isDrag(in) {
			want = 1
		}
		if len(c.ops) != want {
			t.Fatalf("%d queued after 3 pushes of %s, want %d", len(c.ops), ch.Op, want)
		}
	})
}

// FuzzUploadFile feeds the upload's file reader any name and bytes. A file
// it accepts is a valid sweep whose port count the name allows; a file it
// refuses gets an error that starts with the file's name (and, for a
// Touchstone or CSV error, its line), never a panic.
func FuzzUploadFile(f *testing.F) {
	f.Add("a.s1p", []byte("# GHz S RI R 50\n1 0.5 0\n2 0.4 0.1\n"))
	f.Add("b.s2p", []byte("# MHz S MA R 50\n100 0.5 10 0.9 -5 0.9 -5 0.4 20\n"))
	f.Add("c.csv", []byte("freq_hz,re,im\n1e9,0.1,0\n2e9,0.2,0\n"))
	f.Add("d.ts", []byte("[Version] 2.0\n# GHz S RI R 50\n[Number of Ports] 1\n[Network Data]\n1 0 0\n[End]\n"))
	f.Add("e.txt", []byte("1 2 3\n"))
	f.Add("<b>.s1p", []byte("! <script>\n# Hz S DB R 75\n1 -3 45\n"))
	lim := touchstone.Limits{MaxBytes: 1 << 20, MaxPorts: 4, MaxPoints: 5000}
	f.Fuzz(func(t *testing.T, name string, data []byte) {
		sw, err := parseSweep(name, data, lim)
		if err != nil {
			if sw != nil {
				t.Fatal("a sweep came with an error")
			}
			if name != "" && !strings.HasPrefix(err.Error(), name) {
				t.Fatalf("error %q does not start with the file name %q", err, name)
			}
			return
		}
		if err := sw.Validate(); err != nil {
			t.Fatalf("accepted an invalid sweep: %v", err)
		}
		if n, ok := touchstone.PortsFromName(name); ok && n != sw.Ports {
			t.Fatalf("%s read as %d ports", name, sw.Ports)
		}
		if sw.Ports > lim.MaxPorts || sw.Len() > lim.MaxPoints {
			t.Fatalf("accepted %d ports × %d points beyond the limits", sw.Ports, sw.Len())
		}
	})
}
