package server

import (
	"context"
	"fmt"
	"io"
	"log/slog"
	"net"
	"net/http"
	"net/http/httptest"
	"slices"
	"strings"
	"sync"
	"sync/atomic"
	"testing"
	"time"

	"github.com/gorilla/websocket"

	"matchbench/sessions"
)

// Flood sizes of TestFloodedSessionLeavesOthersAlone.
const (
	floodDials    = 120             // pages the flooding link tries to open
	floodRate     = 100             // messages a second from each of them
	floodFor      = 4 * time.Second // how long they send
	otherEvery    = 20 * time.Millisecond
	otherSamples  = 150 // changes the other session's editor times
	otherP99Bound = 250 * time.Millisecond
	raceSlowdown  = 4 // the bound is this many times wider under the race detector
)

// One edit link opens floodDials pages on its session and sends floodRate
// messages a second from each, for floodFor: a bounded flood, half of it
// hellos from an old version (each asks for the whole page again), half
// marker moves. Another session's editor meanwhile makes a change every
// otherEvery and times each acknowledgement. The link gets at most
// DefaultConnsPerToken pages (the others are refused with 429 and a
// reason), its session no more changes than its share lets through, and
// the other editor's 99th-percentile acknowledgement stays within
// otherP99Bound.
//
// The bound is generous on purpose. Measured on the shared 2-core
// development machine: with the caps and the fair share the other
// session's p99 was 7–16 ms (110 ms once, with other engineers' builds
// running); on the code before them, whose pages all opened and whose
// flood redrew whole pages on every core, it was 0.93 s and 1.24 s (the
// test then ran for 40 s). A loaded CI machine adds tens of milliseconds,
// not hundreds, so the test keeps its point without being a timing test.
// Under the race detector, which slows the server's drawing several times,
// the bound is raceSlowdown times wider (measured there: 171 ms).
func TestFloodedSessionLeavesOthersAlone(t *testing.T) {
	if testing.Short() {
		t.Skip("a flood of several seconds")
	}
	st, err := sessions.OpenWith(t.TempDir(), sessions.Options{})
	if err != nil {
		t.Fatal(err)
	}
	srv := New(Config{Store: st, Log: slog.New(slog.NewTextHandler(io.Discard, nil))})
	ts := httptest.NewServer(srv)
	t.Cleanup(func() { srv.Shutdown(); ts.Close(); st.Close() })
	ctx := context.Background()
	sw := rlcSweep(2001)
	raw := touchstoneBytes(t, sw)
	mkSession := func(name string, markers int) (*sessions.Session, []string) {
		se, err := st.Create(ctx, name)
		if err != nil {
			t.Fatal(err)
		}
		var mks []string
		for s := 0; len(mks) < markers; s++ {
			ev, err := st.Apply(ctx, se.ID, sessions.Change{Op: sessions.OpSweepAdd, FileName: "rlc.s1p", Raw: raw, Sweep: sw})
			if err != nil {
				t.Fatal(err)
			}
			for range min(16, markers-len(mks)) { // 16 markers a trace is the limit
				mev, err := st.Apply(ctx, se.ID, sessions.Change{Op: sessions.OpMarkerAdd, SweepID: ev.SweepID, FreqHz: 150e6})
				if err != nil {
					t.Fatal(err)
				}
				mks = append(mks, mev.MarkerID)
			}
		}
		return se, mks
	}
	flooded, fmks := mkSession("flooded", floodDials)
	other, omks := mkSession("other", 1)
	wsURL := "ws" + strings.TrimPrefix(ts.URL, "http") + "/s/"
	hdr := http.Header{"Origin": {ts.URL}}

	// The flood's pages: each reads everything (heads only) and counts the
	// refusals of the session's fair share.
	var pages []*websocket.Conn
	var refused, shareRefusals, answers, acked atomic.Int64
	var readers sync.WaitGroup
	for range floodDials {
		c, res, err := websocket.DefaultDialer.Dial(wsURL+flooded.EditToken+"/ws", hdr)
		if err != nil {
			if res == nil || res.StatusCode != http.StatusTooManyRequests {
				t.Fatalf("a refused page got %v, %v; want 429", err, res)
			}
			body, _ := io.ReadAll(res.Body)
			if !strings.Contains(string(body), "live pages open") {
				t.Errorf("refusal %q does not say why", body)
			}
			refused.Add(1)
			continue
		}
		pages = append(pages, c)
		readers.Add(1)
		go func() {
			defer readers.Done()
			for {
				m, err := readHead(c)
				if err != nil {
					return
				}
				if m.Type == "ack" || m.Type == "error" {
					answers.Add(1)
				}
				if m.Type == "ack" {
					acked.Add(1)
				}
				if m.Type == "error" && strings.Contains(m.Msg, "one session may") {
					shareRefusals.Add(1)
				}
			}
		}()
	}
	t.Cleanup(func() {
		for _, c := range pages {
			c.Close()
		}
		readers.Wait()
	})
	if got, want := len(pages), min(floodDials, DefaultConnsPerToken); got != want || refused.Load() != int64(floodDials-want) {
		t.Errorf("the link opened %d pages (%d refused); want %d", got, refused.Load(), want)
	}

	// The other session's editor.
	oc, _, err := websocket.DefaultDialer.Dial(wsURL+other.EditToken+"/ws", hdr)
	if err != nil {
		t.Fatal(err)
	}
	defer oc.Close()
	acks := make(chan outMsg, 64)
	go func() {
		for {
			m, err := readHead(oc)
			if err != nil {
				close(acks)
				return
			}
			if m.Type == "ack" || m.Type == "error" {
				acks <- m
			}
		}
	}()

	// The flood: floodRate a second from each page, by frequency, each
	// page on its own marker.
	stop := time.Now().Add(floodFor)
	var senders sync.WaitGroup
	var sent atomic.Int64
	for i, c := range pages {
		senders.Add(1)
		go func() {
			defer senders.Done()
			tick := time.NewTicker(time.Second / floodRate)
			defer tick.Stop()
			for n := 0; time.Now().Before(stop); n++ {
				<-tick.C
				m := inMsg{Type: "hello", V: 1} // an old version: the whole page again
				if n%2 == 1 {
					m = inMsg{Type: "change", ID: int64(n + 1), Change: &sessions.Change{
						Op: sessions.OpMarkerMove, MarkerID: fmks[i], FreqHz: 100e6 + 1e4*float64(n%10000), Gesture: fmt.Sprint("f", i)}}
				}
				if c.WriteJSON(m) != nil {
					return
				}
				sent.Add(1)
			}
		}()
	}

	floodStart := time.Now()
	time.Sleep(200 * time.Millisecond) // the flood under way
	var lat []time.Duration
	for n := range otherSamples {
		ch := sessions.Change{Op: sessions.OpMarkerMove, MarkerID: omks[0], FreqHz: 120e6 + 1e5*float64(n), Gesture: "o"}
		t0 := time.Now()
		if err := oc.WriteJSON(inMsg{Type: "change", ID: int64(n + 1), Change: &ch}); err != nil {
			t.Fatal(err)
		}
		var m outMsg
		for m.ID != int64(n+1) {
			select {
			case a, ok := <-acks:
				if !ok {
					t.Fatal("the other editor's connection ended")
				}
				m = a
			case <-time.After(10 * time.Second):
				t.Fatalf("no answer to the other editor's change %d in 10 s", n+1)
			}
		}
		if m.Type != "ack" {
			t.Fatalf("the other editor's change %d was refused: %s", n+1, m.Msg)
		}
		lat = append(lat, time.Since(t0))
		time.Sleep(otherEvery)
	}
	senders.Wait()
	floodTime := time.Since(floodStart)
	time.Sleep(200 * time.Millisecond) // the last answers
	slices.Sort(lat)
	p50, p99 := lat[len(lat)/2], lat[len(lat)*99/100-1]
	t.Logf("flood: %d pages, %d refused, %d messages sent, %d answered, %d changes acknowledged, %d over the session's share; other session's ack p50 %v, p99 %v (bound %v), slowest %v",
		len(pages), refused.Load(), sent.Load(), answers.Load(), acked.Load(), shareRefusals.Load(), p50, p99, otherP99Bound, lat[len(lat)-5:])
	bound := otherP99Bound
	if raceBuild {
		bound *= raceSlowdown
	}
	if p99 > bound {
		t.Errorf("the other session's ack p99 is %v under the flood; the bound is %v", p99, bound)
	}
	// The flooded session's changes went through at its share at most: a
	// burst and the rate over the flood's time (and a second for the
	// clocks of sender and server).
	if most := DefaultSessionMsgBurst + DefaultSessionMsgPerSec*(floodTime.Seconds()+1); float64(acked.Load()) > most {
		t.Errorf("the flooded session had %d changes acknowledged in %v; its share allows at most %.0f", acked.Load(), floodTime.Round(time.Millisecond), most)
	}
}

// The caps on live pages: by link, by session and by remote address, each
// refused with 429 and its reason; a page that closes frees its place.
func TestConnCaps(t *testing.T) {
	t.Parallel()
	f := newFixtureOpts(t, 11, sessions.Options{}, func(c *Config) {
		c.MaxConnsPerToken, c.MaxConnsPerSession, c.MaxConnsPerAddr = 2, 3, 4
	})
	other, err := f.store.Create(context.Background(), "other")
	if err != nil {
		t.Fatal(err)
	}
	dial := func(token string) (*websocket.Conn, int, string) {
		url := "ws" + strings.TrimPrefix(f.ts.URL, "http") + "/s/" + token + "/ws"
		c, res, err := websocket.DefaultDialer.Dial(url, http.Header{"Origin": {f.ts.URL}})
		if err != nil {
			if res == nil {
				t.Fatal(err)
			}
			b, _ := io.ReadAll(res.Body)
			return nil, res.StatusCode, string(b)
		}
		t.Cleanup(func() { c.Close() })
		return c, http.StatusSwitchingProtocols, ""
	}
	steps := []struct {
		token  string
		status int
		why    string
	}{
		{f.sess.EditToken, 101, ""},
		{f.sess.EditToken, 101, ""},
		{f.sess.EditToken, 429, "This link already has 2 live pages"},
		{f.sess.ViewToken, 101, ""},
		{f.sess.ViewToken, 429, "This session already has 3 live pages"},
		{other.ViewToken, 101, ""},
		{other.EditToken, 429, "Your computer already has 4 live pages"},
	}
	var first *websocket.Conn
	for i, s := range steps {
		c, status, body := dial(s.token)
		if status != s.status || !strings.Contains(body, s.why) {
			t.Fatalf("page %d: status %d %q; want %d %q", i+1, status, body, s.status, s.why)
		}
		if i == 0 {
			first = c
		}
	}
	first.Close()
	if !waitFor(5*time.Second, func() bool { _, status, _ := dial(f.sess.EditToken); return status == 101 }) {
		t.Error("a closed page did not free its place")
	}
}

// Requests other than websockets are capped per remote address while in
// progress: two uploads that stall take both places, a third request is
// refused with 429, and the places come back when they end.
func TestRequestsPerAddr(t *testing.T) {
	t.Parallel()
	f := newFixtureOpts(t, 11, sessions.Options{}, func(c *Config) { c.MaxRequestsPerAddr = 2 })
	var stalled []net.Conn
	for range 2 {
		c, err := net.Dial("tcp", f.ts.Listener.Addr().String())
		if err != nil {
			t.Fatal(err)
		}
		fmt.Fprintf(c, "POST /s/%s/upload HTTP/1.1\r\nHost: %s\r\nContent-Type: multipart/form-data; boundary=x\r\nContent-Length: 100000\r\n\r\n--x\r\n",
			f.sess.EditToken, f.ts.Listener.Addr())
		stalled = append(stalled, c)
	}
	if !waitFor(5*time.Second, func() bool {
		code, _ := get(t, f.ts.URL+"/static/app.css")
		return code == http.StatusTooManyRequests
	}) {
		t.Fatal("a third request in progress from the same address was not refused")
	}
	_, body := get(t, f.ts.URL+"/static/app.css")
	if !strings.Contains(body, "2 requests in progress") {
		t.Errorf("refusal %q does not say why", body)
	}
	for _, c := range stalled {
		c.Close()
	}
	if !waitFor(5*time.Second, func() bool { code, _ := get(t, f.ts.URL+"/static/app.css"); return code == 200 }) {
		t.Error("the places did not come back when the stalled uploads ended")
	}
}

// A page's view is drawn in its session's drawing slot, as every other
// drawing: while the slot is held no view is drawn, and the view comes
// when it is free.
func TestViewDrawnInSlot(t *testing.T) {
	t.Parallel()
	f := newFixture(t, 101)
	c := wsDial(t, f, f.sess.ViewToken)
	got := make(chan outMsg, 4)
	go func() {
		for {
			var m outMsg
			if err := c.ReadJSON(&m); err != nil {
				close(got)
				return
			}
			got <- m
		}
	}()
	sh := f.srv.share(f.sess.ID)
	sh.drawing(context.Background())
	c.WriteJSON(inMsg{Type: "view", ID: 5, Fields: map[string]string{"vid": "v1", "z0": "75"}})
	select {
	case m := <-got:
		if m.Type == "view" {
			t.Error("a view was drawn while the session's drawing slot was held")
		}
	case <-time.After(300 * time.Millisecond):
	}
	sh.done()
	deadline := time.After(10 * time.Second)
	for {
		select {
		case m, ok := <-got:
			if !ok {
				t.Fatal("the connection ended")
			}
			if m.Type == "view" && m.ID == 5 {
				return
			}
		case <-deadline:
			t.Fatal("no view once the slot was free")
		}
	}
}
