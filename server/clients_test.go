package server

// Slow, vanishing and reconnecting clients.

import (
	"context"
	"net"
	"net/http"
	"slices"
	"strings"
	"sync"
	"testing"
	"time"

	"github.com/gorilla/websocket"

	"matchbench/sessions"
)

// roomConns returns how many connections the room of session sid holds
// (0 when it has no room).
func roomConns(s *Server, sid string) int {
	s.mu.Lock()
	rm := s.rooms[sid]
	s.mu.Unlock()
	if rm == nil {
		return 0
	}
	return len(rm.snapshot())
}

// waitFor polls cond every 10 ms until it holds or d has passed.
func waitFor(d time.Duration, cond func() bool) bool {
	end := time.Now().Add(d)
	for time.Now().Before(end) {
		if cond() {
			return true
		}
		time.Sleep(10 * time.Millisecond)
	}
	return cond()
}

// dialSmall opens a websocket whose socket has a small receive buffer, so
// that a client that stops reading holds up the server's writes quickly.
func dialSmall(t testing.TB, f *fixture, token string) *websocket.Conn {
	t.Helper()
	d := websocket.Dialer{
		NetDialContext: func(ctx context.Context, network, addr string) (net.Conn, error) {
			c, err := (&net.Dialer{}).DialContext(ctx, network, addr)
			if err == nil {
				c.(*net.TCPConn).SetReadBuffer(4096)
			}
			return c, err
		},
		ReadBufferSize: 1024,
	}
	url := "ws" + strings.TrimPrefix(f.ts.URL, "http") + "/s/" + token + "/ws"
	c, _, err := d.Dial(url, http.Header{"Origin": []string{f.ts.URL}})
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() { c.Close() })
	return c
}

// A page that stops reading does not hold up the others: its queue fills,
// it is dropped, and meanwhile another page receives every update
// promptly. On reconnecting it catches up. (What the stalled page reads
// once it wakes depends on the kernel's buffers: the server has closed its
// side, so it ends with a close frame or a cut connection.)
func TestSlowClientDropped(t *testing.T) {
	t.Parallel()
	// Small socket buffers on both ends, so that the kernel holds few
	// updates and the server's own queue soon fills.
	f := newFixtureConns(t, 401, sessions.Options{}, func(c *Config) {
		c.MsgPerSecond, c.MsgBurst, c.SessionMsgPerSecond, c.SessionMsgBurst = 1e6, 1e6, 1e6, 1e6
	},
		func(c net.Conn) { c.(*net.TCPConn).SetWriteBuffer(16 << 10) })
	ctx := context.Background()
	bev, err := f.store.Apply(ctx, f.sess.ID, sessions.Change{Op: sessions.OpBandSet, Name: "b", LoHz: 120e6, HiHz: 130e6})
	if err != nil {
		t.Fatal(err)
	}
	v0 := version(t, f)
	ed := wsDial(t, f, f.sess.EditToken)
	fast := wsDial(t, f, f.sess.ViewToken)
	slow := dialSmall(t, f, f.sess.ViewToken)
	for _, c := range []*websocket.Conn{ed, fast, slow} {
		hello(t, c, v0)
	}

	// The fast viewer notes when each version arrives.
	var mu sync.Mutex
	seen := map[int64]time.Time{}
	fast.SetReadDeadline(time.Time{}) // hello set one
	go func() {
		for {
			var m outMsg
			if err := fast.ReadJSON(&m); err != nil {
				return
			}
			if m.Type == "update" {
				mu.Lock()
				seen[m.V] = time.Now()
				mu.Unlock()
			}
		}
	}()

	// Every band edit redraws the whole page: tens of kilobytes per update.
	var lags []time.Duration
	dropped := false
	var n int
	for n = 1; n <= 800 && !dropped; n++ {
		lo := 120e6 + float64(n)*1e3
		ed.WriteJSON(inMsg{Type: "change", ID: int64(n), Change: &sessions.Change{Op: sessions.OpBandSet, BandID: bev.BandID, LoHz: lo, HiHz: 130e6}})
		a := readUntil(t, ed, func(m outMsg) bool { return m.ID == int64(n) })
		if a.Type != "ack" {
			t.Fatalf("change %d: %+v", n, a)
		}
		tAck := time.Now()
		// A stall would last the blocked write's 10 s (writeWait); 5 s
		// leaves room for a loaded machine. The log gives the real lags.
		// An update at this version, or a later one that batched it (a
		// room behind sends the queued events as one update).
		seenAt := func() (time.Time, bool) {
			var at time.Time
			for v, tv := range seen {
				if v >= a.V && (at.IsZero() || tv.Before(at)) {
					at = tv
				}
			}
			return at, !at.IsZero()
		}
		if !waitFor(5*time.Second, func() bool { mu.Lock(); defer mu.Unlock(); _, ok := seenAt(); return ok }) {
			t.Fatalf("the reading viewer did not get version %d within 5 s of its ack while another page stalls (%d in room)", a.V, roomConns(f.srv, f.sess.ID))
		}
		mu.Lock()
		at, _ := seenAt()
		lags = append(lags, max(0, at.Sub(tAck)))
		mu.Unlock()
		dropped = roomConns(f.srv, f.sess.ID) == 2
	}
	if !dropped {
		// The drop may lag the overflow by the blocked write's second.
		dropped = waitFor(3*time.Second, func() bool { return roomConns(f.srv, f.sess.ID) == 2 })
	}
	if !dropped {
		t.Fatalf("after %d updates the stalled page is still in the room (%d connections)", n-1, roomConns(f.srv, f.sess.ID))
	}
	slices.Sort(lags)
	t.Logf("stalled page dropped after %d updates; the reading page's lag after each ack: median %v, max %v",
		n-1, lags[len(lags)/2], lags[len(lags)-1])

	// Reconnecting, it catches up from the version it last saw.
	again := wsDial(t, f, f.sess.ViewToken)
	again.WriteJSON(inMsg{Type: "hello", V: v0})
	up := readUntil(t, again, func(m outMsg) bool { return m.Type == "update" })
	if want := version(t, f); up.Op != "catchup" || up.V != want || !hasFrag(up, "bands-panel") {
		t.Errorf("catch-up after the drop: op %q version %d, want version %d with the panels", up.Op, up.V, want)
	}
}

// A page that vanishes in the middle of a drag (its connection cut, no
// close frame) leaves the session consistent: the drag's committed moves
// form one undo step, the marker sits where the last committed move put
// it, and the room empties.
func TestVanishMidDrag(t *testing.T) {
	t.Parallel()
	f := newFixtureOpts(t, 301, sessions.Options{}, func(c *Config) {
		c.MsgPerSecond, c.MsgBurst, c.SessionMsgPerSecond, c.SessionMsgBurst = 1e6, 1e6, 1e6, 1e6
	})
	ctx := context.Background()
	st0, v0, _ := f.store.State(ctx, f.sess.ID)
	before := st0.Markers[0].FreqHz
	a := wsDial(t, f, f.sess.EditToken)
	hello(t, a, v0)
	freqs := []float64{}
	for i := range 5 {
		fr := 160e6 + float64(i)*1e6
		freqs = append(freqs, fr)
		a.WriteJSON(inMsg{Type: "change", ID: int64(i + 1), Change: &sessions.Change{Op: sessions.OpMarkerMove, MarkerID: f.mk, FreqHz: fr, Gesture: "drag-1"}})
		if m := readUntil(t, a, func(m outMsg) bool { return m.ID == int64(i+1) }); m.Type != "ack" {
			t.Fatalf("move %d: %+v", i, m)
		}
	}
	// Three more moves sent, and the page is gone before any answer.
	for i := 5; i < 8; i++ {
		fr := 160e6 + float64(i)*1e6
		freqs = append(freqs, fr)
		a.WriteJSON(inMsg{Type: "change", ID: int64(i + 1), Change: &sessions.Change{Op: sessions.OpMarkerMove, MarkerID: f.mk, FreqHz: fr, Gesture: "drag-1"}})
	}
	a.UnderlyingConn().Close()
	if !waitFor(5*time.Second, func() bool { return roomConns(f.srv, f.sess.ID) == 0 }) {
		t.Fatal("the vanished page's connection is still in the room")
	}
	time.Sleep(50 * time.Millisecond) // let an apply in progress finish
	st, v, _ := f.store.State(ctx, f.sess.ID)
	committed := int(v - v0)
	if committed < 5 || committed > 8 {
		t.Fatalf("%d moves committed, want 5 (acknowledged) to 8 (sent)", committed)
	}
	// Moves of one connection apply in order, and a drag replaces only the
	// pending drag of its marker, so the marker is at the last committed
	// move or a later one sent.
	got := st.Markers[0].FreqHz
	if k := slices.Index(freqs, got); k < 4 {
		t.Fatalf("marker at %g Hz, want one of the moves from the fifth on %v", got, freqs[4:])
	}

	// Another editor undoes the whole drag in one step and redoes it.
	b := wsDial(t, f, f.sess.EditToken)
	hello(t, b, v)
	b.WriteJSON(inMsg{Type: "change", ID: 1, Change: &sessions.Change{Op: sessions.OpUndo}})
	if m := readUntil(t, b, func(m outMsg) bool { return m.ID == 1 }); m.Type != "ack" || m.V != v+1 {
		t.Fatalf("undo: %+v", m)
	}
	if st, _, _ := f.store.State(ctx, f.sess.ID); st.Markers[0].FreqHz != before {
		t.Errorf("undo of the drag left the marker at %g Hz, want %g", st.Markers[0].FreqHz, before)
	}
	b.WriteJSON(inMsg{Type: "change", ID: 2, Change: &sessions.Change{Op: sessions.OpRedo}})
	readUntil(t, b, func(m outMsg) bool { return m.ID == 2 })
	if st, _, _ := f.store.State(ctx, f.sess.ID); st.Markers[0].FreqHz != got {
		t.Errorf("redo of the drag put the marker at %g Hz, want %g", st.Markers[0].FreqHz, got)
	}
	b.Close()
	if !waitFor(5*time.Second, func() bool { f.srv.mu.Lock(); defer f.srv.mu.Unlock(); return f.srv.rooms[f.sess.ID] == nil }) {
		t.Error("the room outlives its last page")
	}
}

// A page reconnecting at the current version gets nothing to catch up; at
// an older one it gets the whole current state, whatever happened while it
// was away.
func TestReconnectCatchUp(t *testing.T) {
	t.Parallel()
	f := newFixture(t, 101)
	ctx := context.Background()
	c := wsDial(t, f, f.sess.ViewToken)
	v0 := version(t, f)
	c.WriteJSON(inMsg{Type: "hello", V: v0})
	c.WriteJSON(inMsg{Type: "sync", ID: -1})
	if m := readUntil(t, c, func(m outMsg) bool { return m.Type == "update" || m.ID == -1 }); m.Type == "update" {
		t.Errorf("a page at the current version got a catch-up: %+v", m.Op)
	}
	c.Close()
	for i, name := range []string{"first", "second", "third"} {
		if _, err := f.store.Apply(ctx, f.sess.ID, sessions.Change{Op: sessions.OpSessionRename, Name: name}); err != nil {
			t.Fatal(i, err)
		}
	}
	c = wsDial(t, f, f.sess.ViewToken)
	c.WriteJSON(inMsg{Type: "hello", V: v0})
	up := readUntil(t, c, func(m outMsg) bool { return m.Type == "update" })
	if up.V != v0+3 || up.Op != "catchup" {
		t.Fatalf("catch-up: %+v, want version %d", up.Op, v0+3)
	}
	for _, fr := range up.Frags {
		if fr.ID == "session-name" && !strings.Contains(fr.HTML, "third") {
			t.Errorf("catch-up shows the name %q", fr.HTML)
		}
	}
	// Then it follows live changes from there.
	if _, err := f.store.Apply(ctx, f.sess.ID, sessions.Change{Op: sessions.OpSessionRename, Name: "fourth"}); err != nil {
		t.Fatal(err)
	}
	if up := readUntil(t, c, func(m outMsg) bool { return m.Type == "update" }); up.V != v0+4 {
		t.Errorf("live update after the catch-up at version %d, want %d", up.V, v0+4)
	}
}
