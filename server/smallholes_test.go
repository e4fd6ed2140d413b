package server

import (
	"bufio"
	"context"
	"fmt"
	"io"
	"log/slog"
	"net"
	"net/http"
	"net/http/httptest"
	"strings"
	"testing"
	"time"

	"matchbench/sessions"
)

// An upload that trickles in is cut off once it falls behind the pace, and
// the answer says why; one that keeps the pace is taken. (The pace here:
// 300 ms of grace, then 64 KiB/s; the server's default is 10 s and
// 16 KiB/s.)
func TestSlowUploadCut(t *testing.T) {
	t.Parallel()
	f := newFixtureOpts(t, 11, sessions.Options{}, func(c *Config) {
		c.BodyGrace, c.BodyMinRate = 300*time.Millisecond, 64<<10
	})
	c, err := net.Dial("tcp", f.ts.Listener.Addr().String())
	if err != nil {
		t.Fatal(err)
	}
	defer c.Close()
	fmt.Fprintf(c, "POST /s/%s/upload HTTP/1.1\r\nHost: %s\r\nContent-Type: multipart/form-data; boundary=x\r\nContent-Length: 100000\r\n\r\n"+
		"--x\r\nContent-Disposition: form-data; name=\"file\"; filename=\"slow.s1p\"\r\n\r\n# GHz S RI R 50\n", f.sess.EditToken, f.ts.Listener.Addr())
	t0 := time.Now()
	stop := make(chan struct{})
	defer close(stop)
	go func() { // one byte every 50 ms: 20 B/s
		for {
			select {
			case <-stop:
				return
			case <-time.After(50 * time.Millisecond):
				if _, err := c.Write([]byte("1")); err != nil {
					return
				}
			}
		}
	}()
	c.SetReadDeadline(time.Now().Add(5 * time.Second))
	res, err := http.ReadResponse(bufio.NewReader(c), nil)
	if err != nil {
		t.Fatalf("no answer to the trickling upload within 5 s: %v", err)
	}
	body, _ := io.ReadAll(res.Body)
	if res.StatusCode != http.StatusRequestTimeout || !strings.Contains(string(body), "too slowly") {
		t.Errorf("answer %d %s; want 408 saying the upload was too slow", res.StatusCode, body)
	}
	if d := time.Since(t0); d > 3*time.Second {
		t.Errorf("cut off after %v; the pace allows about 300 ms", d)
	}

	// A whole file sent at once is taken.
	if status, r := upload(t, f.ts.URL+"/s/"+f.sess.EditToken+"/upload", "fast.s1p", touchstoneBytes(t, rlcSweep(2001))); status != 200 {
		t.Errorf("a fast upload: %d %s", status, r.Error)
	}
}

// An archive import that trickles in is cut off as an upload is, and the
// start page says why. (The loopback address sends it: imports are for the
// bench computer.)
func TestSlowImportCut(t *testing.T) {
	t.Parallel()
	f := newFixtureOpts(t, 11, sessions.Options{}, func(c *Config) {
		c.BodyGrace, c.BodyMinRate = 300*time.Millisecond, 64<<10
	})
	c, err := net.Dial("tcp", f.ts.Listener.Addr().String())
	if err != nil {
		t.Fatal(err)
	}
	defer c.Close()
	fmt.Fprintf(c, "POST /sessions/import HTTP/1.1\r\nHost: %s\r\nContent-Type: multipart/form-data; boundary=x\r\nContent-Length: 100000\r\n\r\n"+
		"--x\r\nContent-Disposition: form-data; name=\"archive\"; filename=\"slow.zip\"\r\n\r\nPK", f.ts.Listener.Addr())
	stop := make(chan struct{})
	defer close(stop)
	go func() { // one byte every 50 ms: 20 B/s
		for {
			select {
			case <-stop:
				return
			case <-time.After(50 * time.Millisecond):
				if _, err := c.Write([]byte("1")); err != nil {
					return
				}
			}
		}
	}()
	c.SetReadDeadline(time.Now().Add(5 * time.Second))
	res, err := http.ReadResponse(bufio.NewReader(c), nil)
	if err != nil {
		t.Fatalf("no answer to the trickling import within 5 s: %v", err)
	}
	body, _ := io.ReadAll(res.Body)
	if res.StatusCode != http.StatusRequestTimeout || !strings.Contains(string(body), "too slowly") {
		t.Errorf("answer %d %.300s; want 408 saying the upload was too slow", res.StatusCode, body)
	}
	if list, err := f.store.List(context.Background()); err != nil || len(list) != 1 {
		t.Errorf("sessions after the cut import: %d, %v; want the fixture's only", len(list), err)
	}
}

// An error reply names what was wrong and where, and quotes little of the
// input: a CSV whose header is 2 MB gets an answer of a few hundred bytes,
// and so does a websocket message of an unknown type of 60 kB.
func TestErrorRepliesBounded(t *testing.T) {
	t.Parallel()
	f := newFixture(t, 11)
	huge := strings.Repeat("a", 2<<20)
	status, r := upload(t, f.ts.URL+"/s/"+f.sess.EditToken+"/upload", "x.csv", []byte(huge+"\n1\n"))
	if status != http.StatusUnprocessableEntity || len(r.Error) > maxReplyText+100 || !strings.HasPrefix(r.Error, "x.csv:1:1:") {
		t.Errorf("upload of a 2 MB header: %d, a reply of %d bytes starting %.60q; want 422 of at most %d naming x.csv:1:1", status, len(r.Error), r.Error, maxReplyText)
	}
	status, r = upload(t, f.ts.URL+"/s/"+f.sess.EditToken+"/upload", strings.Repeat("n", 100000)+".s1p", touchstoneBytes(t, rlcSweep(11)))
	if status != http.StatusUnprocessableEntity || len(r.Error) > maxReplyText || !strings.Contains(r.Error, "100004 characters") {
		t.Errorf("upload with a 100 kB name: %d, a reply of %d bytes: %.100q", status, len(r.Error), r.Error)
	}

	c := wsDial(t, f, f.sess.EditToken)
	c.WriteJSON(inMsg{Type: strings.Repeat("t", 60000)})
	m := readUntil(t, c, func(m outMsg) bool { return m.Type == "error" })
	if len(m.Msg) > maxReplyText || !strings.Contains(m.Msg, "Unknown message type") || !strings.Contains(m.Msg, "60000 bytes") {
		t.Errorf("error of %d bytes: %.100q", len(m.Msg), m.Msg)
	}
}

// A page cannot store a "search result" of its own making; the server's
// own search still stores its result.
func TestPageSearchResultRefused(t *testing.T) {
	t.Parallel()
	f := newFixture(t, 11)
	c := wsDial(t, f, f.sess.EditToken)
	_, v0, _ := f.store.State(context.Background(), f.sess.ID)
	forged := &sessions.SearchResult{SweepID: f.sweep, Port: 1, Settings: "forged", Designs: []sessions.Design{{WorstRLdB: 99, MarginDB: 89,
		Parts: []sessions.Part{{Kind: sessions.PartSeriesL, Value: 1e-9}}}}}
	c.WriteJSON(inMsg{Type: "change", ID: 7, Change: &sessions.Change{Op: sessions.OpSearchStore, Search: forged}})
	m := readUntil(t, c, func(m outMsg) bool { return m.ID == 7 })
	if m.Type != "error" || !strings.Contains(m.Msg, "server's own search") {
		t.Errorf("answer %+v; want an error saying results come from the server's search", m)
	}
	st, v1, _ := f.store.State(context.Background(), f.sess.ID)
	if st.Search != nil || v1 != v0 {
		t.Errorf("the forged result was stored (search %+v, version %d → %d)", st.Search, v0, v1)
	}
}

// A page cannot store a tuning round or a stage design of its own making
// either: those too are results of the server's own computations (the fit
// of a board, the stage search).
func TestPageComputedResultsRefused(t *testing.T) {
	t.Parallel()
	f := newFixture(t, 11)
	c := wsDial(t, f, f.sess.EditToken)
	_, v0, _ := f.store.State(context.Background(), f.sess.ID)
	for i, tc := range []struct {
		ch   sessions.Change
		want string
	}{
		{sessions.Change{Op: sessions.OpTuneStore, Tune: &sessions.TuneRound{LoadSweepID: f.sweep, BuiltSweepID: f.sweep, Port: 1,
			Parts: []sessions.Part{{Kind: sessions.PartSeriesL, Value: 1e-9}}}}, "server's own fit"},
		{sessions.Change{Op: sessions.OpStageStore, AmpChange: sessions.AmpChange{StageSearch: &sessions.StageSearchResult{Settings: "forged"}}}, "server's own stage search"},
	} {
		id := int64(20 + i)
		c.WriteJSON(inMsg{Type: "change", ID: id, Change: &tc.ch})
		m := readUntil(t, c, func(m outMsg) bool { return m.ID == id })
		if m.Type != "error" || !strings.Contains(m.Msg, tc.want) {
			t.Errorf("%s: answer %+v; want an error saying %q", tc.ch.Op, m, tc.want)
		}
	}
	st, v1, _ := f.store.State(context.Background(), f.sess.ID)
	if len(st.Tuning) != 0 || v1 != v0 {
		t.Errorf("a forged result was stored (%d tuning rounds, version %d → %d)", len(st.Tuning), v0, v1)
	}
}

// A file whose name holds a bidirectional control character is refused
// with the reason; a download's file name never carries one.
func TestBidiNamesRefused(t *testing.T) {
	t.Parallel()
	f := newFixture(t, 11)
	status, r := upload(t, f.ts.URL+"/s/"+f.sess.EditToken+"/upload", "report\u202Efdp.s1p", touchstoneBytes(t, rlcSweep(11)))
	if status != http.StatusUnprocessableEntity || !strings.Contains(r.Error, "bidirectional control character U+202E") {
		t.Errorf("upload: %d %q; want 422 naming U+202E", status, r.Error)
	}
	for _, name := range []string{"report\u202Efdp.s1p", "a\u2066b\u2069.csv", "\u200f"} {
		rec := httptest.NewRecorder()
		attachment(rec, name, "text/plain")
		cd := rec.Header().Get("Content-Disposition")
		if strings.ContainsAny(cd, "\u202e\u2066\u2069\u200f") || strings.Contains(strings.ToUpper(cd), "%E2%80%AE") ||
			strings.Contains(strings.ToUpper(cd), "%E2%81%A6") || strings.Contains(strings.ToUpper(cd), "%E2%80%8F") {
			t.Errorf("download of %q: Content-Disposition %q keeps a bidirectional control", name, cd)
		}
	}
}

// /static/ serves its files and lists none of them.
func TestStaticNotListed(t *testing.T) {
	t.Parallel()
	f := newFixture(t, 11)
	for _, p := range []string{"/static/", "/static/./", "/static//"} {
		code, body := get(t, f.ts.URL+p)
		if code != http.StatusNotFound || strings.Contains(body, "app.js") {
			t.Errorf("GET %s: %d %.100q; want 404 without a listing", p, code, body)
		}
	}
	if code, _ := get(t, f.ts.URL+"/static/app.js"); code != 200 {
		t.Errorf("GET /static/app.js: %d", code)
	}
}

// fullStore is a store whose disk is full: every change fails as the
// store reports a full disk.
type fullStore struct{ *sessions.Store }

func (fullStore) ApplyAs(ctx context.Context, c sessions.Capability, sid string, ch sessions.Change) (sessions.Event, error) {
	return sessions.Event{}, fmt.Errorf("sessions: %s: %w (database or disk is full)", ch.Op, sessions.ErrDiskFull)
}

// A full disk is reported as such, on an upload and on a change, not as
// "could not store; see its log".
func TestDiskFullNamed(t *testing.T) {
	t.Parallel()
	f := newFixture(t, 11)
	srv := New(Config{Store: fullStore{f.store}, Log: slog.New(slog.NewTextHandler(io.Discard, nil))})
	ts := httptest.NewServer(srv)
	t.Cleanup(func() { srv.Shutdown(); ts.Close() })
	status, r := upload(t, ts.URL+"/s/"+f.sess.EditToken+"/upload", "a.s1p", touchstoneBytes(t, rlcSweep(11)))
	if status != http.StatusInsufficientStorage || !strings.Contains(r.Error, "disk") || !strings.Contains(r.Error, "full") {
		t.Errorf("upload: %d %q; want 507 saying the disk is full", status, r.Error)
	}
	g := &fixture{store: f.store, srv: srv, ts: ts, sess: f.sess}
	c := wsDial(t, g, f.sess.EditToken)
	c.WriteJSON(inMsg{Type: "change", ID: 3, Change: &sessions.Change{Op: sessions.OpSessionRename, Name: "x"}})
	m := readUntil(t, c, func(m outMsg) bool { return m.ID == 3 })
	if m.Type != "error" || !strings.Contains(m.Msg, "disk") || !strings.Contains(m.Msg, "full") {
		t.Errorf("change: %+v; want an error saying the disk is full", m)
	}
}
