package server

import (
	"bytes"
	"context"
	"encoding/json"
	"encoding/xml"
	"fmt"
	"io"
	"log/slog"
	"math"
	"mime/multipart"
	"net"
	"net/http"
	"net/http/httptest"
	"strings"
	"testing"
	"time"

	"github.com/gorilla/websocket"

	"matchbench/rfmath"
	"matchbench/rfmath/touchstone"
	"matchbench/sessions"
)

// rlcSweep is the series RLC of REFERENCE-CHECKS R-1 (R = 5 Ω, L = 100 nH,
// C = 10 pF, f0 = 159.155 MHz) seen in 50 Ω, swept 100–250 MHz.
func rlcSweep(n int) *rfmath.Sweep {
	s := rfmath.NewSweep(n, 1, 50)
	for k := range n {
		f := 100e6 + 150e6*float64(k)/float64(n-1)
		w := 2 * math.Pi * f
		s.FreqHz[k] = f
		s.Data[k] = rfmath.GammaFromZ(complex(5, w*100e-9-1/(w*10e-12)), 50)
	}
	return s
}

func touchstoneBytes(t testing.TB, s *rfmath.Sweep, comments ...string) []byte {
	t.Helper()
	var b bytes.Buffer
	if err := touchstone.Write(&b, s, touchstone.WriteOptions{Comments: comments}); err != nil {
		t.Fatal(err)
	}
	return b.Bytes()
}

type fixture struct {
	store *sessions.Store
	srv   *Server
	ts    *httptest.Server
	sess  *sessions.Session
	sweep string
	mk    string
}

// newFixture starts a server on a real SQLite file with one session that
// holds the RLC sweep and one marker.
func newFixture(t testing.TB, points int) *fixture {
	t.Helper()
	st, err := sessions.Open(t.TempDir())
	if err != nil {
		t.Fatal(err)
	}
	ctx := context.Background()
	se, err := st.Create(ctx, "bench test")
	if err != nil {
		t.Fatal(err)
	}
	sw := rlcSweep(points)
	ev, err := st.Apply(ctx, se.ID, sessions.Change{Op: sessions.OpSweepAdd, Name: "rlc", FileName: "rlc.s1p", Raw: touchstoneBytes(t, sw), Sweep: sw})
	if err != nil {
		t.Fatal(err)
	}
	mev, err := st.Apply(ctx, se.ID, sessions.Change{Op: sessions.OpMarkerAdd, SweepID: ev.SweepID, Port: 1, FreqHz: 150e6})
	if err != nil {
		t.Fatal(err)
	}
	srv := New(Config{Store: st, Log: slog.New(slog.NewTextHandler(io.Discard, nil))})
	ts := httptest.NewServer(srv)
	t.Cleanup(func() {
		srv.Shutdown()
		ts.Close()
		st.Close()
	})
	return &fixture{store: st, srv: srv, ts: ts, sess: se, sweep: ev.SweepID, mk: mev.MarkerID}
}

func get(t *testing.T, url string) (int, string) {
	t.Helper()
	res, err := http.Get(url)
	if err != nil {
		t.Fatal(err)
	}
	defer res.Body.Close()
	b, _ := io.ReadAll(res.Body)
	return res.StatusCode, string(b)
}

func TestPages(t *testing.T) {
	t.Parallel()
	f := newFixture(t, 301)
	tests := []struct {
		name       string
		path       string
		status     int
		has, hasnt []string
	}{
		{"start lists sessions locally", "/", 200, []string{`data-testid="session-list"`, "bench test", "Cautions"}, nil},
		{"edit page", "/s/" + f.sess.EditToken + "/", 200,
			[]string{`data-can-edit="true"`, `data-testid="drop"`, `data-testid="view-link"`, "<svg", `id="mk-` + f.mk + `"`, "150 MHz"},
			[]string{`data-testid="view-only"`}},
		{"view page", "/s/" + f.sess.ViewToken + "/", 200,
			[]string{`data-can-edit="false"`, `data-testid="view-only"`, "<svg"},
			[]string{`data-testid="drop"`, `data-testid="edit-link"`, f.sess.EditToken}},
		{"unknown token", "/s/AAAAAAAAAAAAAAAAAAAAAA/", 404, []string{"No session answers"}, nil},
		{"static script", "/static/app.js", 200, []string{"WebSocket"}, nil},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			status, body := get(t, f.ts.URL+tc.path)
			if status != tc.status {
				t.Fatalf("status %d, want %d", status, tc.status)
			}
			for _, s := range tc.has {
				if !strings.Contains(body, s) {
					t.Errorf("page lacks %q", s)
				}
			}
			for _, s := range tc.hasnt {
				if strings.Contains(body, s) {
					t.Errorf("page has %q", s)
				}
			}
		})
	}
}

// A visitor from the lab network sees no session list and cannot start one.
// lanRequest is a request from a colleague's computer on the lab network
// (192.0.2.7, TEST-NET-1 of RFC 5737: never routed) to the server's address
// there (192.0.2.1:8080), as net/http's server would hand it over.
func lanRequest(method, target string, body io.Reader) *http.Request {
	req := httptest.NewRequest(method, target, body)
	req.RemoteAddr = "192.0.2.7:50000"
	req.Host = "192.0.2.1:8080"
	local := &net.TCPAddr{IP: net.IPv4(192, 0, 2, 1), Port: 8080}
	return req.WithContext(context.WithValue(req.Context(), http.LocalAddrContextKey, local))
}

func TestStartPageFromLAN(t *testing.T) {
	t.Parallel()
	f := newFixture(t, 11)
	req := lanRequest("GET", "/", nil)
	rec := httptest.NewRecorder()
	f.srv.ServeHTTP(rec, req)
	if rec.Code != 200 || strings.Contains(rec.Body.String(), "bench test") || !strings.Contains(rec.Body.String(), "Ask for a link") {
		t.Errorf("LAN start page: %d, lists sessions or lacks the note:\n%.300s", rec.Code, rec.Body.String())
	}
	req = lanRequest("POST", "/sessions", strings.NewReader("name=x"))
	req.Header.Set("Content-Type", "application/x-www-form-urlencoded")
	rec = httptest.NewRecorder()
	f.srv.ServeHTTP(rec, req)
	if rec.Code != http.StatusForbidden {
		t.Errorf("LAN create: %d, want 403", rec.Code)
	}
	req = lanRequest("GET", "/open/"+f.sess.ID, nil)
	rec = httptest.NewRecorder()
	f.srv.ServeHTTP(rec, req)
	if rec.Code != http.StatusForbidden {
		t.Errorf("LAN open by id: %d, want 403", rec.Code)
	}
}

func TestSecurityHeaders(t *testing.T) {
	t.Parallel()
	f := newFixture(t, 11)
	res, err := http.Get(f.ts.URL + "/s/" + f.sess.EditToken + "/")
	if err != nil {
		t.Fatal(err)
	}
	res.Body.Close()
	csp := res.Header.Get("Content-Security-Policy")
	for _, want := range []string{"script-src 'self'", "style-src 'self'", "frame-ancestors 'none'"} {
		if !strings.Contains(csp, want) {
			t.Errorf("CSP %q lacks %q", csp, want)
		}
	}
	if strings.Contains(csp, "unsafe-inline") {
		t.Errorf("CSP allows inline code: %q", csp)
	}
	// A cross-site POST is refused before it reaches a handler.
	req, _ := http.NewRequest("POST", f.ts.URL+"/sessions", strings.NewReader("name=x"))
	req.Header.Set("Content-Type", "application/x-www-form-urlencoded")
	req.Header.Set("Sec-Fetch-Site", "cross-site")
	res, err = http.DefaultClient.Do(req)
	if err != nil {
		t.Fatal(err)
	}
	res.Body.Close()
	if res.StatusCode != http.StatusForbidden {
		t.Errorf("cross-site POST: %d, want 403", res.StatusCode)
	}
}

func upload(t *testing.T, url, name string, body []byte) (int, uploadReply) {
	t.Helper()
	var b bytes.Buffer
	mw := multipart.NewWriter(&b)
	fw, _ := mw.CreateFormFile("file", name)
	fw.Write(body)
	mw.Close()
	res, err := http.Post(url, mw.FormDataContentType(), &b)
	if err != nil {
		t.Fatal(err)
	}
	defer res.Body.Close()
	var r uploadReply
	json.NewDecoder(res.Body).Decode(&r)
	return res.StatusCode, r
}

func TestUpload(t *testing.T) {
	t.Parallel()
	f := newFixture(t, 11)
	ctx := context.Background()
	good := touchstoneBytes(t, rlcSweep(21), " <script>alert(1)</script> & <b>bold</b>")
	tests := []struct {
		name   string
		token  string
		file   string
		body   []byte
		status int
		errHas string
	}{
		{"good file", f.sess.EditToken, `<img src=x onerror=alert(1)>.s1p`, good, 200, ""},
		{"bad line", f.sess.EditToken, "bad.s1p", []byte("# GHz S RI R 50\n1 0.5 0\n2 0.5\n"), 422, "bad.s1p:3"},
		{"decreasing frequency", f.sess.EditToken, "dec.s1p", []byte("# GHz S RI R 50\n2 0.5 0\n1 0.5 0\n"), 422, "dec.s1p:3"},
		{"unknown ending", f.sess.EditToken, "sweep.txt", good, 422, ".sNp"},
		{"view link", f.sess.ViewToken, "v.s1p", good, 403, "view-only"},
		{"bad csv header", f.sess.EditToken, "x.csv", []byte("a,b,c\n1,2,3\n"), 422, "x.csv"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			_, v0, _ := f.store.State(ctx, f.sess.ID)
			status, r := upload(t, f.ts.URL+"/s/"+tc.token+"/upload", tc.file, tc.body)
			if status != tc.status {
				t.Fatalf("status %d (%q), want %d", status, r.Error, tc.status)
			}
			_, v1, _ := f.store.State(ctx, f.sess.ID)
			if tc.status != 200 {
				if !strings.Contains(r.Error, tc.errHas) {
					t.Errorf("error %q lacks %q", r.Error, tc.errHas)
				}
				if v1 != v0 {
					t.Errorf("a refused upload changed the session: version %d → %d", v0, v1)
				}
				return
			}
			if r.SweepID == "" || v1 != v0+1 {
				t.Errorf("reply %+v, version %d → %d", r, v0, v1)
			}
		})
	}
	// The file name with markup is shown as text, never as markup.
	_, page := get(t, f.ts.URL+"/s/"+f.sess.EditToken+"/")
	if strings.Contains(page, "<img src=x") || !strings.Contains(page, "&lt;img src=x onerror=alert(1)&gt;") {
		t.Errorf("uploaded file name is not escaped in the page")
	}
}

func TestUploadTooLarge(t *testing.T) {
	t.Parallel()
	f := newFixture(t, 11)
	f.srv.cfg.MaxUploadBytes = 1 << 10
	status, r := upload(t, f.ts.URL+"/s/"+f.sess.EditToken+"/upload", "big.s1p", bytes.Repeat([]byte("! padding line\n"), 200))
	if status != http.StatusRequestEntityTooLarge || !strings.Contains(r.Error, "limit") {
		t.Errorf("status %d, error %q; want 413 naming the limit", status, r.Error)
	}
}

func TestExports(t *testing.T) {
	t.Parallel()
	f := newFixture(t, 101)
	for _, p := range []string{"chart.svg", "plot-refl.svg", "plot-zx.svg"} {
		status, body := get(t, f.ts.URL+"/s/"+f.sess.ViewToken+"/export/"+p)
		if status != 200 {
			t.Fatalf("%s: status %d", p, status)
		}
		d := xml.NewDecoder(strings.NewReader(body))
		for {
			_, err := d.Token()
			if err == io.EOF {
				break
			}
			if err != nil {
				t.Fatalf("%s is not well-formed XML: %v", p, err)
			}
		}
	}
	status, body := get(t, f.ts.URL+"/s/"+f.sess.ViewToken+"/export/markers.csv")
	lines := strings.Split(strings.TrimSpace(body), "\n")
	if status != 200 || len(lines) != 2 || !strings.HasPrefix(lines[1], "1,,rlc,S11,150000000,") {
		t.Errorf("markers.csv: %d\n%s", status, body)
	}
	status, body = get(t, f.ts.URL+"/s/"+f.sess.ViewToken+"/sweeps/"+f.sweep+"/file")
	if status != 200 || !strings.Contains(body, "# ") {
		t.Errorf("raw file: %d %.100s", status, body)
	}
}

func TestFormChange(t *testing.T) {
	t.Parallel()
	ch, err := formChange("band.set", map[string]string{"name": "ISM", "lo": "2.4G", "hi": "2.4835 GHz", "rl": "-10"})
	if err != nil || ch.LoHz != 2.4e9 || ch.HiHz != 2.4835e9 || ch.MinReturnLossDB != 10 || ch.Op != sessions.OpBandSet {
		t.Errorf("band.set: %+v, %v", ch, err)
	}
	_, err = formChange("band.set", map[string]string{"lo": "2.4x", "hi": "2.5G"})
	if err == nil || !strings.Contains(err.Error(), "From") || !strings.Contains(err.Error(), "2.4x") {
		t.Errorf("bad frequency error %v does not name the field and the text", err)
	}
	ch, err = formChange("chart.set", map[string]string{"impedanceGrid": "true", "admittanceGrid": "false", "vswrCircle": "2", "qArcs": "1, 3", "zoom": ""})
	if err != nil || !*ch.Chart.ImpedanceGrid || *ch.Chart.AdmittanceGrid || *ch.Chart.VSWRCircle != 2 || len(*ch.Chart.QArcs) != 2 || *ch.Chart.Zoom != 1 {
		t.Errorf("chart.set: %+v, %v", ch.Chart, err)
	}
	if _, err := formChange("chart.set", map[string]string{"qArcs": "1, -3"}); err == nil {
		t.Error("negative Q arc accepted")
	}
	ch, err = formChange("marker.add", map[string]string{"trace": "abc:1", "freq": "868M"})
	if err != nil || ch.SweepID != "abc" || ch.Port != 1 || ch.FreqHz != 868e6 {
		t.Errorf("marker.add: %+v, %v", ch, err)
	}
	if _, err := formChange("nope", nil); err == nil {
		t.Error("unknown form accepted")
	}
}

// wsDial opens a websocket to the session of token.
func wsDial(t testing.TB, f *fixture, token string) *websocket.Conn {
	t.Helper()
	url := "ws" + strings.TrimPrefix(f.ts.URL, "http") + "/s/" + token + "/ws"
	h := http.Header{"Origin": []string{f.ts.URL}}
	c, _, err := websocket.DefaultDialer.Dial(url, h)
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() { c.Close() })
	return c
}

// readUntil reads messages until one satisfies ok, or fails after 5 s.
func readUntil(t testing.TB, c *websocket.Conn, ok func(outMsg) bool) outMsg {
	t.Helper()
	c.SetReadDeadline(time.Now().Add(5 * time.Second))
	for {
		var m outMsg
		if err := c.ReadJSON(&m); err != nil {
			t.Fatalf("no expected message: %v", err)
		}
		if ok(m) {
			return m
		}
	}
}

func hasFrag(m outMsg, id string) bool {
	for _, fr := range m.Frags {
		if fr.ID == id {
			return true
		}
	}
	return false
}

// A drag by the editor reaches the viewer as the marker's fragments; the
// viewer's own change is refused and changes nothing.
func TestWebsocketEditAndView(t *testing.T) {
	t.Parallel()
	f := newFixture(t, 301)
	ed := wsDial(t, f, f.sess.EditToken)
	vw := wsDial(t, f, f.sess.ViewToken)
	// Both are subscribed once their hello is answered (nothing to catch up
	// with: a ping-pong through the reader proves it is running).
	for _, c := range []*websocket.Conn{ed, vw} {
		c.WriteJSON(inMsg{Type: "hello", V: 0})
		readUntil(t, c, func(m outMsg) bool { return m.Type == "update" && m.Op == "catchup" })
	}
	_, v0, _ := f.store.State(context.Background(), f.sess.ID)

	// A drag in two steps, as a pointer moves: first to Γ of the RLC at
	// 155 MHz, then to Γ at f0 = 159.155 MHz, which is −0.818182
	// (REFERENCE-CHECKS R-2): the marker snaps to the resonance.
	w := 2 * math.Pi * 155e6
	g155 := rfmath.GammaFromZ(complex(5, w*100e-9-1/(w*10e-12)), 50)
	var up outMsg
	for i, g := range []sessions.Point{{Re: real(g155), Im: imag(g155)}, {Re: -0.818182}} {
		id := int64(7 + i)
		drag := inMsg{Type: "change", ID: id, V: v0, Change: &sessions.Change{Op: sessions.OpMarkerMove, MarkerID: f.mk, Gamma: &g, Gesture: "g1"}}
		if err := ed.WriteJSON(drag); err != nil {
			t.Fatal(err)
		}
		ack := readUntil(t, ed, func(m outMsg) bool { return m.Type == "ack" || m.Type == "error" })
		if ack.Type != "ack" || ack.ID != id || ack.V != v0+id-6 {
			t.Fatalf("editor got %+v, want ack of %d at version %d", ack, id, v0+id-6)
		}
		up = readUntil(t, vw, func(m outMsg) bool { return m.Type == "update" && m.Op == sessions.OpMarkerMove })
		if up.V != v0+id-6 || !hasFrag(up, "mk-"+f.mk) || !hasFrag(up, "readout-body") || !hasFrag(up, "refl-pmk-"+f.mk) {
			t.Fatalf("viewer update %+v lacks the marker fragments", up)
		}
	}
	st, _, _ := f.store.State(context.Background(), f.sess.ID)
	if fm := st.Markers[0].FreqHz; math.Abs(fm-159.155e6) > 0.3e6 {
		t.Errorf("marker snapped to %g Hz, want about 159.155 MHz", fm)
	}
	for _, fr := range up.Frags {
		if fr.ID == "readout-body" && !strings.Contains(fr.HTML, "159.") {
			t.Errorf("readout does not show the new frequency: %.300s", fr.HTML)
		}
	}

	// The viewer cannot change anything.
	vw.WriteJSON(inMsg{Type: "change", ID: 19, Change: &sessions.Change{Op: sessions.OpMarkerRemove, MarkerID: f.mk}})
	e := readUntil(t, vw, func(m outMsg) bool { return m.Type == "error" })
	if e.ID != 19 || !strings.Contains(e.Msg, "view-only") {
		t.Errorf("viewer change answered %+v", e)
	}
	vw.WriteJSON(inMsg{Type: "form", ID: 10, Form: "band.set", Fields: map[string]string{"lo": "1G", "hi": "2G"}})
	readUntil(t, vw, func(m outMsg) bool { return m.Type == "error" && m.ID == 10 })
	if _, v, _ := f.store.State(context.Background(), f.sess.ID); v != v0+2 {
		t.Errorf("version %d after the viewer's attempts, want %d", v, v0+2)
	}
}

// A page that reconnects with an old version gets the whole state.
func TestWebsocketCatchUp(t *testing.T) {
	t.Parallel()
	f := newFixture(t, 101)
	ctx := context.Background()
	f.store.Apply(ctx, f.sess.ID, sessions.Change{Op: sessions.OpBandSet, Name: "b", LoHz: 120e6, HiHz: 130e6, MinReturnLossDB: 10})
	_, v, _ := f.store.State(ctx, f.sess.ID)
	c := wsDial(t, f, f.sess.ViewToken)
	c.WriteJSON(inMsg{Type: "hello", V: 1})
	m := readUntil(t, c, func(m outMsg) bool { return m.Type == "update" })
	if m.V != v || !hasFrag(m, "chart") || !hasFrag(m, "bands-panel") || !hasFrag(m, "markers-panel") {
		t.Errorf("catch-up %+v: want version %d with chart and panels", m.Op, v)
	}
	for _, fr := range m.Frags {
		if fr.ID == "bands-panel" && (strings.Contains(fr.HTML, "band-add") || !strings.Contains(fr.HTML, "120 MHz")) {
			t.Errorf("viewer's bands panel is wrong: %.300s", fr.HTML)
		}
	}
}

func TestWebsocketRefusesOtherOrigin(t *testing.T) {
	t.Parallel()
	f := newFixture(t, 11)
	url := "ws" + strings.TrimPrefix(f.ts.URL, "http") + "/s/" + f.sess.EditToken + "/ws"
	_, res, err := websocket.DefaultDialer.Dial(url, http.Header{"Origin": []string{"http://evil.example"}})
	if err == nil || res == nil || res.StatusCode != http.StatusForbidden {
		t.Errorf("foreign origin: err %v, response %v; want 403", err, res)
	}
}

// Bad messages get a clear error and do not close the connection.
func TestWebsocketBadMessages(t *testing.T) {
	t.Parallel()
	f := newFixture(t, 11)
	c := wsDial(t, f, f.sess.EditToken)
	cases := []struct {
		raw  string
		want string
	}{
		{`{not json`, "not JSON"},
		{`{"type":"dance","id":3}`, "Unknown message type"},
		{`{"type":"change","id":4}`, "needs a \"change\""},
		{`{"type":"change","id":5,"change":{"op":"marker.move","markerId":"nope","freqHz":1}}`, "nope"},
		{`{"type":"change","id":6,"change":{"op":"sweep.add"}}`, "uploading"},
		{`{"type":"form","id":8,"form":"band.set","fields":{"lo":"9G","hi":"1G"}}`, "To: the range 9 GHz – 1 GHz is empty"},
	}
	for _, tc := range cases {
		c.WriteMessage(websocket.TextMessage, []byte(tc.raw))
		m := readUntil(t, c, func(m outMsg) bool { return m.Type == "error" })
		if !strings.Contains(m.Msg, tc.want) {
			t.Errorf("%s: error %q lacks %q", tc.raw, m.Msg, tc.want)
		}
	}
}

func TestBucket(t *testing.T) {
	t.Parallel()
	b := newLimiter(10, 3)
	t0 := time.Unix(0, 0)
	n := 0
	for i := range 10 {
		if b.AllowN(t0.Add(time.Duration(i)*time.Millisecond), 1) {
			n++
		}
	}
	if n != 3 {
		t.Errorf("burst let %d through, want 3", n)
	}
	if !b.AllowN(t0.Add(200*time.Millisecond), 1) {
		t.Error("bucket did not refill at 10/s after 200 ms")
	}
}

// BenchmarkDrag measures the server side of one marker drag on a
// 10,001-point sweep: decode the message, snap and commit the move, render
// the changed fragments and encode the reply.
func BenchmarkDrag(b *testing.B) {
	for _, n := range []int{1001, 10001, 100001} {
		b.Run(fmt.Sprintf("points=%d", n), func(b *testing.B) {
			f := newFixture(b, n)
			ctx := context.Background()
			st, _, _ := f.store.State(ctx, f.sess.ID)
			rm := &room{s: f.srv, sid: f.sess.ID}
			rm.sceneFor(st)
			b.ReportAllocs()
			b.ResetTimer()
			for i := range b.N {
				re := -0.5 - 0.3*float64(i%2)
				raw := fmt.Appendf(nil, `{"type":"change","id":%d,"change":{"op":"marker.move","markerId":%q,"gamma":{"re":%g,"im":-0.1},"gesture":"g"}}`, i, f.mk, re)
				var m inMsg
				if err := json.Unmarshal(raw, &m); err != nil {
					b.Fatal(err)
				}
				ev, err := f.store.ApplyAs(ctx, sessions.Edit, f.sess.ID, *m.Change)
				if err != nil {
					b.Fatal(err)
				}
				out := rm.render([]sessions.Event{ev}, sessions.Edit, f.sess.EditToken, nil)
				if _, err := json.Marshal(out); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}

// A batch of marker moves becomes one update at the last version with each
// moved marker's groups and the readout table once; a batch with any other
// change redraws everything.
func TestRenderBatch(t *testing.T) {
	t.Parallel()
	f := newFixture(t, 101)
	ctx := context.Background()
	m2 := f.store
	ev2, err := m2.Apply(ctx, f.sess.ID, sessions.Change{Op: sessions.OpMarkerAdd, SweepID: f.sweep, Port: 1, FreqHz: 200e6})
	if err != nil {
		t.Fatal(err)
	}
	a, _ := f.store.Apply(ctx, f.sess.ID, sessions.Change{Op: sessions.OpMarkerMove, MarkerID: f.mk, FreqHz: 160e6})
	b, _ := f.store.Apply(ctx, f.sess.ID, sessions.Change{Op: sessions.OpMarkerMove, MarkerID: ev2.MarkerID, FreqHz: 210e6})
	rm := &room{s: f.srv, sid: f.sess.ID}
	msg := rm.render([]sessions.Event{a, b}, sessions.View, f.sess.ViewToken, nil)
	count := map[string]int{}
	for _, fr := range msg.Frags {
		count[fr.ID]++
	}
	if msg.V != b.Version || count["mk-"+f.mk] != 1 || count["mk-"+ev2.MarkerID] != 1 || count["readout-body"] != 1 || count["chart"] != 0 {
		t.Errorf("batched marker update: version %d (want %d), frags %v", msg.V, b.Version, count)
	}
	c, _ := f.store.Apply(ctx, f.sess.ID, sessions.Change{Op: sessions.OpBandSet, Name: "b", LoHz: 120e6, HiHz: 130e6})
	msg = rm.render([]sessions.Event{a, c}, sessions.View, f.sess.ViewToken, nil)
	if msg.V != c.Version || !hasFrag(msg, "chart") || !hasFrag(msg, "bands-panel") || msg.Anim != nil {
		t.Errorf("mixed batch: version %d, anim %v", msg.V, msg.Anim != nil)
	}
}
