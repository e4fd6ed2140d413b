package server

// Tests of hostile input and hostile clients at the HTTP and websocket
// level: share-link permissions and re-issue, limits and bad files refused
// with a message that says what and where (never a 500), markup shown as
// text, tokens kept out of the log, and a commit that fails reported to the
// client instead of acknowledged.

import (
	"bytes"
	"context"
	"database/sql"
	"encoding/xml"
	"errors"
	"fmt"
	"io"
	"log/slog"
	"net"
	"net/http"
	"net/http/httptest"
	"net/url"
	"path/filepath"
	"regexp"
	"strings"
	"sync"
	"testing"
	"time"

	"github.com/gorilla/websocket"

	"matchbench/rfmath/touchstone"
	"matchbench/sessions"
)

// newFixtureOpts is newFixture with store options and a hook to change the
// server's configuration before it starts.
func newFixtureOpts(t testing.TB, points int, opt sessions.Options, cfg func(*Config)) *fixture {
	t.Helper()
	return newFixtureConns(t, points, opt, cfg, nil)
}

// newFixtureConns is newFixtureOpts whose server passes each accepted
// connection to conn first (nil: nothing).
func newFixtureConns(t testing.TB, points int, opt sessions.Options, cfg func(*Config), conn func(net.Conn)) *fixture {
	t.Helper()
	st, err := sessions.OpenWith(t.TempDir(), opt)
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
	c := Config{Store: st, Log: slog.New(slog.NewTextHandler(io.Discard, nil))}
	if cfg != nil {
		cfg(&c)
	}
	srv := New(c)
	ts := httptest.NewUnstartedServer(srv) // 127.0.0.1 only
	if conn != nil {
		ts.Listener = hookListener{ts.Listener, conn}
	}
	ts.Start()
	t.Cleanup(func() {
		srv.Shutdown()
		ts.Close()
		st.Close()
	})
	return &fixture{store: st, srv: srv, ts: ts, sess: se, sweep: ev.SweepID, mk: mev.MarkerID}
}

// hookListener passes each accepted connection to hook.
type hookListener struct {
	net.Listener
	hook func(net.Conn)
}

func (l hookListener) Accept() (net.Conn, error) {
	c, err := l.Listener.Accept()
	if err == nil {
		l.hook(c)
	}
	return c, err
}

// noRedirect is a client that shows redirects instead of following them.
var noRedirect = &http.Client{CheckRedirect: func(*http.Request, []*http.Request) error { return http.ErrUseLastResponse }}

// postForm posts form values to url and returns the status, the Location
// header and the body.
func postForm(t testing.TB, u string, vals url.Values, hdr map[string]string) (int, string, string) {
	t.Helper()
	req, err := http.NewRequest("POST", u, strings.NewReader(vals.Encode()))
	if err != nil {
		t.Fatal(err)
	}
	req.Header.Set("Content-Type", "application/x-www-form-urlencoded")
	for k, v := range hdr {
		req.Header.Set(k, v)
	}
	res, err := noRedirect.Do(req)
	if err != nil {
		t.Fatal(err)
	}
	defer res.Body.Close()
	b, _ := io.ReadAll(res.Body)
	return res.StatusCode, res.Header.Get("Location"), string(b)
}

func version(t testing.TB, f *fixture) int64 {
	t.Helper()
	_, v, err := f.store.State(context.Background(), f.sess.ID)
	if err != nil {
		t.Fatal(err)
	}
	return v
}

// hello sends a hello at version v and waits until the reader has answered
// it: by the catch-up when v is not current, else by the error that an
// unknown message type gets (the reader answers in order).
func hello(t testing.TB, c *websocket.Conn, v int64) {
	t.Helper()
	c.WriteJSON(inMsg{Type: "hello", V: v})
	c.WriteJSON(inMsg{Type: "sync", ID: -1})
	readUntil(t, c, func(m outMsg) bool { return m.Type == "error" && m.ID == -1 })
}

// A view link never changes a session: not by upload, not by re-issue, not
// by any op or form over the websocket.
func TestViewLinkNeverChanges(t *testing.T) {
	t.Parallel()
	f := newFixture(t, 101)
	v0 := version(t, f)
	base := f.ts.URL + "/s/" + f.sess.ViewToken

	status, r := upload(t, base+"/upload", "v.s1p", touchstoneBytes(t, rlcSweep(11)))
	if status != http.StatusForbidden || !strings.Contains(r.Error, "view-only") {
		t.Errorf("view upload: %d %q, want 403 naming the view-only link", status, r.Error)
	}
	status, _, body := postForm(t, base+"/reissue", url.Values{"confirm": {"yes"}}, nil)
	if status != http.StatusForbidden || !strings.Contains(body, "view-only") {
		t.Errorf("view re-issue: %d %q, want 403", status, body)
	}
	// The links still work: nothing was re-issued.
	if s, _ := get(t, base+"/"); s != 200 {
		t.Errorf("view link after a refused re-issue: %d", s)
	}

	c := wsDial(t, f, f.sess.ViewToken)
	hello(t, c, v0)
	id := int64(100)
	for _, op := range sessions.Ops {
		id++
		ch := sessions.Change{Op: op, SweepID: f.sweep, MarkerID: f.mk, Name: "x", Label: "x", FreqHz: 120e6, LoHz: 1e6, HiHz: 2e6,
			Color: "#000000", Steps: 1, Chart: &sessions.ChartPatch{}}
		c.WriteJSON(inMsg{Type: "change", ID: id, Change: &ch})
		m := readUntil(t, c, func(m outMsg) bool { return m.ID == id })
		if m.Type != "error" || !strings.Contains(m.Msg, "view-only") {
			t.Errorf("view change %s answered %+v", op, m)
		}
	}
	for _, form := range []string{"marker.add", "band.set", "chart.set", "session.rename"} {
		id++
		c.WriteJSON(inMsg{Type: "form", ID: id, Form: form, Fields: map[string]string{"trace": f.sweep + ":1", "freq": "120M", "lo": "1G", "hi": "2G", "name": "x"}})
		m := readUntil(t, c, func(m outMsg) bool { return m.ID == id })
		if m.Type != "error" || !strings.Contains(m.Msg, "view-only") {
			t.Errorf("view form %s answered %+v", form, m)
		}
	}
	if v := version(t, f); v != v0 {
		t.Errorf("version %d after the view link's attempts, want %d", v, v0)
	}
}

// Re-issuing ends the old links at once: pages, uploads, websockets (live
// ones get a reload message and are closed); the new links work and get
// live updates.
func TestReissue(t *testing.T) {
	t.Parallel()
	f := newFixture(t, 101)
	oldEdit, oldView := f.sess.EditToken, f.sess.ViewToken
	v0 := version(t, f)
	ed := wsDial(t, f, oldEdit)
	vw := wsDial(t, f, oldView)
	hello(t, ed, v0)
	hello(t, vw, v0)

	// The edit page offers the re-issue (a POST form with a required
	// confirmation box); the view page does not.
	_, editPage := get(t, f.ts.URL+"/s/"+oldEdit+"/")
	_, viewPage := get(t, f.ts.URL+"/s/"+oldView+"/")
	form := regexp.MustCompile(`(?s)<form method="post" action="/s/` + oldEdit + `/reissue"[^>]*data-testid="reissue"[^>]*>.*?name="confirm"[^>]*required`)
	if !form.MatchString(editPage) || strings.Contains(viewPage, "reissue") {
		t.Error("the edit page lacks the re-issue form, or the view page has it")
	}

	// Refused: without the confirmation, and from another site.
	if status, _, body := postForm(t, f.ts.URL+"/s/"+oldEdit+"/reissue", nil, nil); status != http.StatusBadRequest || !strings.Contains(body, "confirmation") {
		t.Errorf("re-issue without confirmation: %d %q, want 400", status, body)
	}
	if status, _, _ := postForm(t, f.ts.URL+"/s/"+oldEdit+"/reissue", url.Values{"confirm": {"yes"}},
		map[string]string{"Sec-Fetch-Site": "cross-site", "Origin": "http://evil.example"}); status != http.StatusForbidden {
		t.Errorf("cross-site re-issue: %d, want 403", status)
	}
	if s, _ := get(t, f.ts.URL+"/s/"+oldEdit+"/"); s != 200 {
		t.Fatalf("a refused re-issue ended the link: %d", s)
	}

	status, loc, _ := postForm(t, f.ts.URL+"/s/"+oldEdit+"/reissue", url.Values{"confirm": {"yes"}},
		map[string]string{"Sec-Fetch-Site": "same-origin", "Origin": f.ts.URL})
	m := regexp.MustCompile(`^/s/([A-Za-z0-9_-]{22})/$`).FindStringSubmatch(loc)
	if status != http.StatusSeeOther || m == nil {
		t.Fatalf("re-issue: %d to %q, want 303 to the new edit link", status, loc)
	}
	newEdit := m[1]
	if newEdit == oldEdit {
		t.Fatal("the edit token did not change")
	}
	newEditGot, newView, err := f.store.Tokens(context.Background(), f.sess.ID)
	if err != nil || newEditGot != newEdit || newView == oldView {
		t.Fatalf("store tokens after re-issue: %v; edit matches %v, view changed %v", err, newEditGot == newEdit, newView != oldView)
	}

	// Live connections on the old links are told to reload, then closed.
	for name, c := range map[string]*websocket.Conn{"editor": ed, "viewer": vw} {
		m := readUntil(t, c, func(m outMsg) bool { return m.Type == "reload" })
		if !strings.Contains(m.Msg, "re-issued") {
			t.Errorf("%s reload message %q does not say why", name, m.Msg)
		}
		c.SetReadDeadline(time.Now().Add(5 * time.Second))
		if _, _, err := c.ReadMessage(); err == nil {
			t.Errorf("%s connection on the old link stays open", name)
		}
	}

	// Old links: 404 with an explanation, for the page, the upload and the
	// websocket.
	for _, tok := range []string{oldEdit, oldView} {
		status, body := get(t, f.ts.URL+"/s/"+tok+"/")
		if status != http.StatusNotFound || !strings.Contains(body, "re-issued") {
			t.Errorf("old link page: %d %q", status, body)
		}
		if status, _ := upload(t, f.ts.URL+"/s/"+tok+"/upload", "x.s1p", touchstoneBytes(t, rlcSweep(11))); status != http.StatusNotFound {
			t.Errorf("old link upload: %d, want 404", status)
		}
		wsURL := "ws" + strings.TrimPrefix(f.ts.URL, "http") + "/s/" + tok + "/ws"
		if _, res, err := websocket.DefaultDialer.Dial(wsURL, nil); err == nil || res == nil || res.StatusCode != http.StatusNotFound {
			t.Errorf("old link websocket: %v, want a 404", err)
		}
	}
	if v := version(t, f); v != v0 {
		t.Errorf("re-issue changed the version %d → %d", v0, v)
	}

	// The new links work, and their pages get live updates from a fresh
	// room.
	if s, body := get(t, f.ts.URL+"/s/"+newView+"/"); s != 200 || strings.Contains(body, newEdit) {
		t.Errorf("new view link: %d, or it shows the edit token", s)
	}
	ed2 := wsDial(t, f, newEdit)
	vw2 := wsDial(t, f, newView)
	hello(t, ed2, v0)
	hello(t, vw2, v0)
	ed2.WriteJSON(inMsg{Type: "change", ID: 1, Change: &sessions.Change{Op: sessions.OpMarkerMove, MarkerID: f.mk, FreqHz: 130e6}})
	if a := readUntil(t, ed2, func(m outMsg) bool { return m.ID == 1 }); a.Type != "ack" || a.V != v0+1 {
		t.Errorf("change on the new edit link: %+v", a)
	}
	readUntil(t, vw2, func(m outMsg) bool { return m.Type == "update" && m.V == v0+1 })
}

// A re-issue that lands between a websocket's token check and its joining
// the room must still close that connection: the handler checks the token
// again after joining.
func TestReissueRaceClosesLateSocket(t *testing.T) {
	t.Parallel()
	f := newFixture(t, 11)
	a := access{Token: f.sess.EditToken, SessionID: f.sess.ID, Cap: sessions.Edit}
	if f.srv.tokenRevoked(a) {
		t.Fatal("a current token counts as revoked")
	}
	if _, err := f.store.ReissueTokens(context.Background(), f.sess.ID); err != nil {
		t.Fatal(err)
	}
	if !f.srv.tokenRevoked(a) {
		t.Error("a re-issued token does not count as revoked")
	}
}

// syncBuffer is a bytes.Buffer safe for the logger's concurrent writes.
type syncBuffer struct {
	mu sync.Mutex
	b  bytes.Buffer
}

func (s *syncBuffer) Write(p []byte) (int, error) {
	s.mu.Lock()
	defer s.mu.Unlock()
	return s.b.Write(p)
}

func (s *syncBuffer) String() string {
	s.mu.Lock()
	defer s.mu.Unlock()
	return s.b.String()
}

// The log, at its most verbose, never holds a token, whatever the
// requests: pages, uploads good and bad, websockets, refused changes,
// unknown links, a re-issue and a failing store.
func TestTokensNotLogged(t *testing.T) {
	t.Parallel()
	var logBuf syncBuffer
	log := slog.New(slog.NewTextHandler(&logBuf, &slog.HandlerOptions{Level: slog.LevelDebug}))
	f := newFixtureOpts(t, 101, sessions.Options{}, func(c *Config) { c.Log = log })
	edit, view := f.sess.EditToken, f.sess.ViewToken
	for _, tok := range []string{edit, view} {
		get(t, f.ts.URL+"/s/"+tok+"/")
		get(t, f.ts.URL+"/s/"+tok+"/export/chart.svg")
		get(t, f.ts.URL+"/s/"+tok+"/export/markers.csv")
		get(t, f.ts.URL+"/s/"+tok+"/sweeps/nosuch/file")
		upload(t, f.ts.URL+"/s/"+tok+"/upload", "bad.s1p", []byte("# GHz S RI R 50\n2 0 0\n1 0 0\n"))
		upload(t, f.ts.URL+"/s/"+tok+"/upload", "ok.s1p", touchstoneBytes(t, rlcSweep(11)))
		c := wsDial(t, f, tok)
		hello(t, c, 0)
		c.WriteJSON(inMsg{Type: "change", ID: 5, Change: &sessions.Change{Op: sessions.OpMarkerMove, MarkerID: f.mk, FreqHz: 140e6}})
		readUntil(t, c, func(m outMsg) bool { return m.ID == 5 })
		c.WriteMessage(websocket.TextMessage, []byte("{nonsense"))
		readUntil(t, c, func(m outMsg) bool { return m.Type == "error" })
		c.Close()
	}
	get(t, f.ts.URL+"/s/"+strings.Repeat("A", 22)+"/")
	get(t, f.ts.URL+"/open/"+f.sess.ID)
	_, loc, _ := postForm(t, f.ts.URL+"/s/"+edit+"/reissue", url.Values{"confirm": {"yes"}}, nil)
	newEdit := strings.TrimSuffix(strings.TrimPrefix(loc, "/s/"), "/")
	_, newView, _ := f.store.Tokens(context.Background(), f.sess.ID)
	get(t, f.ts.URL+"/s/"+newEdit+"/")
	// A failing store makes the server log errors: close it under the
	// server's feet and ask again.
	f.store.Close()
	get(t, f.ts.URL+"/s/"+newEdit+"/")
	upload(t, f.ts.URL+"/s/"+newEdit+"/upload", "ok.s1p", touchstoneBytes(t, rlcSweep(11)))

	out := logBuf.String()
	if !strings.Contains(out, "request") || !strings.Contains(out, "/s/{token}/") {
		t.Fatalf("the log did not record the requests; the test proves nothing:\n%s", out)
	}
	for _, tok := range []string{edit, view, newEdit, newView} {
		if tok == "" || strings.Contains(out, tok) {
			t.Errorf("the log holds a token (%d bytes of log)", len(out))
		}
	}
}

// twoPointFile writes a 1-port RI file of the given frequency lines.
func tsFile(header string, lines ...string) []byte {
	return []byte(header + "\n" + strings.Join(lines, "\n") + "\n")
}

// Bad files and files over a limit are refused with 413 or 422 and a
// message naming the file, the line and the rule; the session is left as
// it was. Never a 500.
func TestUploadRefusals(t *testing.T) {
	t.Parallel()
	f := newFixtureOpts(t, 11, sessions.Options{Limits: sessions.Limits{SweepsPerSession: 3}}, func(c *Config) {
		c.MaxUploadBytes = 64 << 10
		c.FileLimits = touchstone.Limits{MaxPorts: 4, MaxPoints: 50}
	})
	var points51 []string
	for k := range 51 {
		points51 = append(points51, fmt.Sprintf("%d 0.1 0", k+1))
	}
	big := bytes.Repeat([]byte("! padding to pass the upload limit\n"), 2000) // 70,000 bytes
	tests := []struct {
		name, file string
		body       []byte
		status     int
		has        []string // what and where
	}{
		{"over the upload size", "big.s1p", big, 413, []string{"upload limit", "MB"}},
		{"more ports than the limit", "five.s5p", tsFile("# GHz S RI R 50", "1 "+strings.Repeat("0 0 ", 25)), 422, []string{"five.s5p", "5 ports", "MaxPorts"}},
		{"more points than the limit", "many.s1p", tsFile("# GHz S RI R 50", points51...), 422, []string{"many.s1p:52", "MaxPoints", "50"}},
		{"NaN frequency", "nan.s1p", tsFile("# GHz S RI R 50", "1 0 0", "NaN 0 0"), 422, []string{"nan.s1p:3"}},
		{"Inf frequency", "inf.s1p", tsFile("# GHz S RI R 50", "1 0 0", "Inf 0 0"), 422, []string{"inf.s1p:3"}},
		{"huge frequency", "huge.s1p", tsFile("# GHz S RI R 50", "1 0 0", "1e400 0 0"), 422, []string{"huge.s1p:3"}},
		{"negative frequency", "neg.s1p", tsFile("# GHz S RI R 50", "-1 0 0", "1 0 0"), 422, []string{"neg.s1p:2"}},
		{"decreasing frequency", "dec.s1p", tsFile("# GHz S RI R 50", "2 0 0", "1 0 0"), 422, []string{"dec.s1p:3", "increase"}},
		{"duplicate frequency", "dup.s1p", tsFile("# GHz S RI R 50", "1 0 0", "1 0.1 0"), 422, []string{"dup.s1p:3", "increase"}},
		{"NaN value", "nanval.s1p", tsFile("# GHz S RI R 50", "1 NaN 0"), 422, []string{"nanval.s1p:2"}},
		{"zero reference resistance", "z0.s1p", tsFile("# GHz S RI R 0", "1 0 0"), 422, []string{"z0.s1p:1", "reference resistance"}},
		{"negative reference resistance", "zneg.s1p", tsFile("# GHz S RI R -50", "1 0 0"), 422, []string{"zneg.s1p:1", "reference resistance"}},
		{"zero reference in [Reference]", "ref.s2p", tsFile("[Version] 2.0\n# GHz S RI R 50\n[Number of Ports] 2\n[Two-Port Data Order] 12_21\n[Reference] 50 0\n[Network Data]",
			"1 0 0 0 0 0 0 0 0"), 422, []string{"ref.s2p:5"}},
		{"empty file", "empty.s1p", nil, 422, []string{"empty.s1p"}},
		{"binary junk", "junk.s1p", []byte{0, 1, 2, 0xff, 0xfe, '\n'}, 422, []string{"junk.s1p:1"}},
		{"CSV with NaN", "n.csv", []byte("freq_hz,re,im\n1e9,NaN,0\n"), 422, []string{"n.csv"}},
	}
	for _, tc := range tests {
		v0 := version(t, f)
		status, r := upload(t, f.ts.URL+"/s/"+f.sess.EditToken+"/upload", tc.file, tc.body)
		if status != tc.status {
			t.Errorf("%s: status %d (%q), want %d", tc.name, status, r.Error, tc.status)
			continue
		}
		for _, s := range tc.has {
			if !strings.Contains(r.Error, s) {
				t.Errorf("%s: error %q lacks %q", tc.name, r.Error, s)
			}
		}
		if v := version(t, f); v != v0 {
			t.Errorf("%s: a refused upload changed the version %d → %d", tc.name, v0, v)
		}
	}

	// Sweeps per session: the fixture holds one; the limit is 3.
	for i := range 3 {
		status, r := upload(t, f.ts.URL+"/s/"+f.sess.EditToken+"/upload", fmt.Sprintf("s%d.s1p", i), touchstoneBytes(t, rlcSweep(11)))
		want := 200
		if i == 2 {
			want = 422
		}
		if status != want {
			t.Fatalf("upload %d of a session with a limit of 3 sweeps: %d %q, want %d", i+2, status, r.Error, want)
		}
		if i == 2 && !strings.Contains(r.Error, "3 sweeps, the limit") {
			t.Errorf("sweep limit error %q does not name the limit", r.Error)
		}
	}
	// A multipart form without the file field, and a body that is not a form.
	req, _ := http.NewRequest("POST", f.ts.URL+"/s/"+f.sess.EditToken+"/upload", strings.NewReader("hello"))
	req.Header.Set("Content-Type", "text/plain")
	res, err := http.DefaultClient.Do(req)
	if err != nil {
		t.Fatal(err)
	}
	res.Body.Close()
	if res.StatusCode != http.StatusBadRequest {
		t.Errorf("upload without a form: %d, want 400", res.StatusCode)
	}
}

// Changes over the websocket that break a rule are refused with a message
// naming the field as the page labels it (plainWords), with no package
// prefix; the connection stays usable.
func TestWebsocketRefusals(t *testing.T) {
	t.Parallel()
	f := newFixtureOpts(t, 101, sessions.Options{Limits: sessions.Limits{MarkersPerTrace: 2, Bands: 1, TextRunes: 20}}, nil)
	c := wsDial(t, f, f.sess.EditToken)
	v0 := version(t, f)
	hello(t, c, v0)
	long := strings.Repeat("é", 21)
	tests := []struct {
		name string
		raw  string
		ok   bool
		has  []string
	}{
		{"second marker", `{"type":"change","id":1,"change":{"op":"marker.add","sweepId":"` + f.sweep + `","freqHz":2e8}}`, true, nil},
		{"markers per trace", `{"type":"change","id":2,"change":{"op":"marker.add","sweepId":"` + f.sweep + `","freqHz":2e8}}`, false, []string{"Marker: ", "2 markers, the limit"}},
		{"port beyond the sweep", `{"type":"change","id":3,"change":{"op":"marker.add","sweepId":"` + f.sweep + `","port":2,"freqHz":2e8}}`, false, []string{"port"}},
		{"frequency out of range number", `{"type":"change","id":4,"change":{"op":"marker.move","markerId":"` + f.mk + `","freqHz":1e999}}`, false, []string{"not JSON"}},
		{"NaN as a string", `{"type":"change","id":5,"change":{"op":"marker.move","markerId":"` + f.mk + `","freqHz":"NaN"}}`, false, []string{"not JSON"}},
		{"gamma far off", `{"type":"change","id":6,"change":{"op":"marker.move","markerId":"` + f.mk + `","gamma":{"re":1e308,"im":-1e308}}}`, true, nil},
		{"negative window", `{"type":"change","id":7,"change":{"op":"marker.move","markerId":"` + f.mk + `","gamma":{"re":0,"im":0},"window":-3}}`, false, []string{"Search window", "negative"}},
		{"empty band", `{"type":"change","id":10,"change":{"op":"band.set","loHz":2e9,"hiHz":1e9}}`, false, []string{"To: ", "empty"}},
		{"first band", `{"type":"form","id":8,"form":"band.set","fields":{"lo":"1G","hi":"2G"}}`, true, nil},
		{"bands per session", `{"type":"form","id":9,"form":"band.set","fields":{"lo":"1G","hi":"2G"}}`, false, []string{"1 bands, the limit"}},
		{"NaN in a form", `{"type":"form","id":11,"form":"marker.add","fields":{"trace":"` + f.sweep + `:1","freq":"NaN"}}`, false, []string{"Frequency"}},
		{"Inf in a form", `{"type":"form","id":12,"form":"chart.set","fields":{"zoom":"Inf"}}`, false, []string{"Zoom"}},
		{"zoom out of range", `{"type":"change","id":13,"change":{"op":"chart.set","chart":{"zoom":0.5}}}`, false, []string{"Zoom: "}},
		{"label too long", `{"type":"change","id":14,"change":{"op":"marker.label","markerId":"` + f.mk + `","label":"` + long + `"}}`, false, []string{"Label: ", "21 characters, the limit is 20"}},
		{"control character", `{"type":"change","id":15,"change":{"op":"session.rename","name":"a\u0007b"}}`, false, []string{"Name: ", "control character"}},
		{"invalid UTF-8", "{\"type\":\"change\",\"id\":16,\"change\":{\"op\":\"session.rename\",\"name\":\"a\xffb\"}}", true, nil},
		{"bad colour", `{"type":"change","id":17,"change":{"op":"sweep.color","sweepId":"` + f.sweep + `","color":"red"}}`, false, []string{"Colour: ", "#rrggbb"}},
		{"unknown op", `{"type":"change","id":18,"change":{"op":"launch"}}`, false, []string{"unknown op"}},
		{"deep nesting", `{"type":"change","id":19,"change":` + strings.Repeat(`{"a":`, 2000) + `1` + strings.Repeat(`}`, 2000) + `}`, false, []string{""}},
	}
	acked := 0
	for _, tc := range tests {
		c.WriteMessage(websocket.TextMessage, []byte(tc.raw))
		m := readUntil(t, c, func(m outMsg) bool { return m.Type == "ack" || m.Type == "error" })
		if tc.ok != (m.Type == "ack") {
			t.Errorf("%s: answered %+v", tc.name, m)
			continue
		}
		if m.Type == "ack" {
			acked++
			continue
		}
		for _, s := range tc.has {
			if !strings.Contains(m.Msg, s) {
				t.Errorf("%s: error %q lacks %q", tc.name, m.Msg, s)
			}
		}
		if strings.Contains(m.Msg, "sessions:") || strings.Contains(m.Msg, "invalid:") {
			t.Errorf("%s: error %q shows the store's wording", tc.name, m.Msg)
		}
	}
	// Invalid UTF-8 in JSON decodes to U+FFFD, which is a valid name.
	if v := version(t, f); v != v0+int64(acked) {
		t.Errorf("version %d after %d acknowledged changes from %d", v, acked, v0)
	}
}

// A message over the size limit ends that connection with close status
// 1009 (message too big); the server and its other connections carry on,
// and the page can reconnect at once.
func TestWebsocketMessageTooBig(t *testing.T) {
	t.Parallel()
	f := newFixture(t, 101)
	other := wsDial(t, f, f.sess.ViewToken)
	hello(t, other, 0)
	c := wsDial(t, f, f.sess.EditToken)
	hello(t, c, 0)
	huge := `{"type":"change","id":1,"change":{"op":"session.rename","name":"` + strings.Repeat("x", maxMessageSize) + `"}}`
	c.WriteMessage(websocket.TextMessage, []byte(huge))
	c.SetReadDeadline(time.Now().Add(5 * time.Second))
	var err error
	for err == nil {
		_, _, err = c.ReadMessage()
	}
	var ce *websocket.CloseError
	if !errors.As(err, &ce) || ce.Code != websocket.CloseMessageTooBig {
		t.Errorf("over-size message ended with %v, want close 1009", err)
	}
	c2 := wsDial(t, f, f.sess.EditToken)
	hello(t, c2, 0)
	v0 := version(t, f)
	c2.WriteJSON(inMsg{Type: "change", ID: 2, Change: &sessions.Change{Op: sessions.OpSessionRename, Name: "after"}})
	if a := readUntil(t, c2, func(m outMsg) bool { return m.ID == 2 }); a.Type != "ack" || a.V != v0+1 {
		t.Errorf("reconnected editor: %+v", a)
	}
	readUntil(t, other, func(m outMsg) bool { return m.Type == "update" && m.V == v0+1 })
}

// Messages beyond the rate are refused with "slow down" while the
// connection stays open; once the bucket refills they pass again.
func TestWebsocketRate(t *testing.T) {
	t.Parallel()
	f := newFixtureOpts(t, 11, sessions.Options{}, func(c *Config) { c.MsgPerSecond, c.MsgBurst = 2, 5 })
	c := wsDial(t, f, f.sess.EditToken)
	// Every message of an unknown type is answered, with "unknown message
	// type" when it passes the bucket and "slow down" when it does not.
	for i := range 30 {
		c.WriteJSON(inMsg{Type: "sync", ID: int64(i + 1)})
	}
	refused := 0
	for range 30 {
		m := readUntil(t, c, func(m outMsg) bool { return m.Type == "error" })
		if strings.Contains(m.Msg, "slow down") {
			refused++
		}
	}
	// 30 messages sent at once: a burst of 5 passes, plus what 2/s
	// refills while they arrive; most are refused.
	if refused < 15 || refused > 25 {
		t.Errorf("%d of 30 messages refused, want most but not all", refused)
	}
	time.Sleep(600 * time.Millisecond) // a token back
	c.WriteJSON(inMsg{Type: "change", ID: 99, Change: &sessions.Change{Op: sessions.OpSessionRename, Name: "calm"}})
	if m := readUntil(t, c, func(m outMsg) bool { return m.ID == 99 }); m.Type != "ack" {
		t.Errorf("after a pause: %+v, want an ack", m)
	}
}

// Names, labels, file names and comments holding markup and script are
// shown as text in the page, the live fragments, the start page and the
// exported SVG.
func TestMarkupShownAsText(t *testing.T) {
	t.Parallel()
	f := newFixture(t, 101)
	const (
		script = `<script>alert("x")</script>`
		img    = `"><img src=x onerror=alert(1)>`
		svg    = `</text><svg onload=alert(2)>`
	)
	file := `<b onmouseover=alert(3)>sweep.s1p`
	status, r := upload(t, f.ts.URL+"/s/"+f.sess.EditToken+"/upload", file,
		touchstoneBytes(t, rlcSweep(21), " "+script, " "+img, " "+svg))
	if status != 200 {
		t.Fatalf("upload: %d %q", status, r.Error)
	}
	c := wsDial(t, f, f.sess.EditToken)
	v := version(t, f)
	hello(t, c, v)
	changes := []sessions.Change{
		{Op: sessions.OpSessionRename, Name: "S " + script},
		{Op: sessions.OpSweepRename, SweepID: f.sweep, Name: "W " + img},
		{Op: sessions.OpMarkerLabel, MarkerID: f.mk, Label: "M " + svg},
		{Op: sessions.OpMarkerAdd, SweepID: r.SweepID, FreqHz: 150e6, Label: "N " + img},
		{Op: sessions.OpBandSet, Name: "B " + script, LoHz: 120e6, HiHz: 140e6, MinReturnLossDB: 10},
	}
	var frags strings.Builder
	for i, ch := range changes {
		c.WriteJSON(inMsg{Type: "change", ID: int64(i + 1), Change: &ch})
		// The update may reach the page before the ack or after it.
		acked, updated := false, false
		readUntil(t, c, func(m outMsg) bool {
			switch {
			case m.ID == int64(i+1) && m.Type != "ack":
				t.Fatalf("%s: %+v", ch.Op, m)
			case m.ID == int64(i+1):
				acked = true
			case m.Type == "update" && m.Op == ch.Op:
				updated = true
				for _, fr := range m.Frags {
					frags.WriteString(fr.HTML)
				}
			}
			return acked && updated
		})
	}
	// A page reconnecting from version 0 gets every panel whole.
	c.WriteJSON(inMsg{Type: "hello", V: 0})
	up := readUntil(t, c, func(m outMsg) bool { return m.Type == "update" && m.Op == "catchup" })
	for _, fr := range up.Frags {
		frags.WriteString(fr.HTML)
	}
	_, page := get(t, f.ts.URL+"/s/"+f.sess.EditToken+"/")
	_, start := get(t, f.ts.URL+"/")
	_, chart := get(t, f.ts.URL+"/s/"+f.sess.EditToken+"/export/chart.svg")
	_, plot := get(t, f.ts.URL+"/s/"+f.sess.EditToken+"/export/plot-refl.svg")
	raw := []string{"<script>alert", "<img", "<b ", "<svg onload", "<sweep"}
	for name, doc := range map[string]string{"page": page, "fragments": frags.String(), "start page": start, "chart export": chart, "plot export": plot} {
		for _, bad := range raw {
			if strings.Contains(doc, bad) {
				i := strings.Index(doc, bad)
				t.Errorf("%s holds raw markup %q: …%s…", name, bad, doc[max(0, i-80):min(len(doc), i+80)])
			}
		}
	}
	// Shown as text: the escaped forms are there.
	for name, doc := range map[string]string{"page": page, "fragments": frags.String()} {
		for _, want := range []string{"&lt;script&gt;", "&lt;img src=x onerror=alert(1)&gt;", "&lt;/text&gt;&lt;svg onload=alert(2)&gt;", "&lt;b onmouseover=alert(3)&gt;"} {
			if !strings.Contains(doc, want) {
				t.Errorf("%s lacks the escaped text %q", name, want)
			}
		}
	}
	if !strings.Contains(start, "S &lt;script&gt;") {
		t.Error("start page does not show the session name as text")
	}
	for name, doc := range map[string]string{"chart export": chart, "plot export": plot} {
		d := xml.NewDecoder(strings.NewReader(doc))
		for {
			_, err := d.Token()
			if err == io.EOF {
				break
			}
			if err != nil {
				t.Fatalf("%s is not well-formed XML: %v", name, err)
			}
		}
	}
}

// A change whose commit fails (here the database stays locked by another
// writer for longer than the store's busy timeout) is reported to the
// page as an error, not acknowledged, and leaves the session as it was;
// the next change, once the database is free, commits with the next
// version.
func TestCommitFailureNotAcknowledged(t *testing.T) {
	t.Parallel()
	if testing.Short() {
		t.Skip("waits out the store's 5 s busy timeout")
	}
	f := newFixture(t, 101)
	c := wsDial(t, f, f.sess.EditToken)
	v0 := version(t, f)
	hello(t, c, v0)

	db, err := sql.Open("sqlite", "file:"+filepath.Join(f.store.Dir(), sessions.DBFile)+"?_pragma=busy_timeout(1000)")
	if err != nil {
		t.Fatal(err)
	}
	defer db.Close()
	ctx := context.Background()
	lock, err := db.Conn(ctx)
	if err != nil {
		t.Fatal(err)
	}
	if _, err := lock.ExecContext(ctx, "BEGIN IMMEDIATE"); err != nil {
		t.Fatal(err)
	}
	c.WriteJSON(inMsg{Type: "change", ID: 1, Change: &sessions.Change{Op: sessions.OpSessionRename, Name: "never stored"}})
	c.SetReadDeadline(time.Now().Add(15 * time.Second))
	var m outMsg
	for {
		if err := c.ReadJSON(&m); err != nil {
			t.Fatalf("no answer to a change that cannot commit: %v", err)
		}
		if m.ID == 1 || m.Type == "update" {
			break
		}
	}
	if m.Type != "error" || !strings.Contains(m.Msg, "could not store the change") {
		t.Errorf("answer to a change that cannot commit: %+v, want an error", m)
	}
	if _, err := lock.ExecContext(ctx, "ROLLBACK"); err != nil {
		t.Fatal(err)
	}
	lock.Close()
	st, v, err := f.store.State(ctx, f.sess.ID)
	if err != nil || v != v0 || st.Name == "never stored" {
		t.Fatalf("after the failed commit: version %d (want %d), name %q, %v", v, v0, st.Name, err)
	}
	c.WriteJSON(inMsg{Type: "change", ID: 2, Change: &sessions.Change{Op: sessions.OpSessionRename, Name: "stored"}})
	if a := readUntil(t, c, func(m outMsg) bool { return m.ID == 2 }); a.Type != "ack" || a.V != v0+1 {
		t.Errorf("next change: %+v, want ack at version %d", a, v0+1)
	}
}
