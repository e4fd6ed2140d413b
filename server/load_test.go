package server

import (
	"bytes"
	"context"
	"encoding/json"
	"flag"
	"fmt"
	"io"
	"log/slog"
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

// loadLastDrop holds why a load-test page's connection last ended, for
// the report.
var loadLastDrop atomic.Value

var loadBig = flag.Bool("load.big", false, "run TestLoad with 200 changes per editor instead of 10")

// loadClient is one page of the load test: it reads every message, keeps
// the highest version it has seen and, like the page's script, reconnects
// and says hello with that version when its connection ends.
type loadClient struct {
	url  string // ws://…/s/TOKEN/ws
	orig string
	sid  string
	acks chan outMsg // editors: acknowledgements and errors

	mu         sync.Mutex
	ws         *websocket.Conn
	lastV      int64
	updates    int
	backwards  int // updates older than one already seen on the same connection
	reconnects int
	stopping   bool
	lastErr    string // why the connection last ended
}

// readHead reads one message and decodes its head only: an update's
// fragments are cut off unread, so that the test's clients, sharing the
// machine with the server, spend little of it and the figures are the
// server's.
func readHead(ws *websocket.Conn) (outMsg, error) {
	var m outMsg
	_, b, err := ws.ReadMessage()
	if err != nil {
		return m, err
	}
	if i := bytes.Index(b, []byte(`,"frags":`)); i > 0 {
		b = append(b[:i:i], '}')
	}
	err = json.Unmarshal(b, &m)
	return m, err
}

func (c *loadClient) dial() error {
	ws, _, err := websocket.DefaultDialer.Dial(c.url, http.Header{"Origin": {c.orig}})
	if err != nil {
		return err
	}
	c.mu.Lock()
	c.ws = ws
	v := c.lastV
	c.mu.Unlock()
	return ws.WriteJSON(inMsg{Type: "hello", V: v})
}

func (c *loadClient) run(done *sync.WaitGroup) {
	defer done.Done()
	for {
		c.mu.Lock()
		ws := c.ws
		c.mu.Unlock()
		connV := int64(-1)
		for {
			m, err := readHead(ws)
			if err != nil {
				c.mu.Lock()
				c.lastErr = err.Error()
				c.mu.Unlock()
				break
			}
			c.mu.Lock()
			if m.Type == "update" {
				c.updates++
				if m.V < connV {
					c.backwards++
				}
				connV = max(connV, m.V)
			}
			if (m.Type == "update" || m.Type == "ack") && m.V > c.lastV {
				c.lastV = m.V
			}
			c.mu.Unlock()
			if c.acks != nil && (m.Type == "ack" || m.Type == "error") {
				c.acks <- m
			}
		}
		c.mu.Lock()
		stop := c.stopping
		c.mu.Unlock()
		if stop {
			return
		}
		c.mu.Lock()
		c.reconnects++
		loadLastDrop.Store(c.lastErr)
		c.mu.Unlock()
		if c.acks != nil {
			c.acks <- outMsg{Type: "dropped"}
		}
		for c.dial() != nil {
			time.Sleep(50 * time.Millisecond)
		}
	}
}

func (c *loadClient) send(m inMsg) error {
	c.mu.Lock()
	ws := c.ws
	c.mu.Unlock()
	return ws.WriteJSON(m)
}

func (c *loadClient) stop() {
	c.mu.Lock()
	c.stopping = true
	ws := c.ws
	c.mu.Unlock()
	ws.Close()
}

func (c *loadClient) seen() int64 {
	c.mu.Lock()
	defer c.mu.Unlock()
	return c.lastV
}

// loadEditor is what one editing page did: its marker and the last
// frequency and label acknowledged for it.
type loadEditor struct {
	c         *loadClient
	sid, mk   string
	lastFreq  float64
	lastLabel string
	acked     int
	unknown   int // changes whose answer was lost with a dropped connection
	versions  []int64
	latencies []time.Duration
}

// TestLoad runs 50 pages on one session (25 editors, 25 viewers) and 20
// more sessions with one editor and one viewer each, all at once on a
// loopback server with a real SQLite store (synchronous FULL). Each editor
// sends a fixed count of changes, one at a time, mostly drags by frequency
// with an edit of its marker's label every fifth. It reports throughput and
// the latency from sending a change to its acknowledgement, then checks
// that no acknowledged change is lost (each session's version moved by
// exactly the changes acknowledged, every acknowledgement has its own
// version, each marker holds its editor's last frequency and label), that
// no page saw an update go backwards, and that every page converges to its
// session's final version.
func TestLoad(t *testing.T) {
	if testing.Short() {
		t.Skip("load test")
	}
	t.Parallel()
	perEditor := 10
	if *loadBig {
		perEditor = 200
	}
	st, err := sessions.OpenWith(t.TempDir(), sessions.Options{})
	if err != nil {
		t.Fatal(err)
	}
	defer st.Close()
	srv := New(Config{Store: st, Log: slog.New(slog.NewTextHandler(io.Discard, nil)), MsgPerSecond: 1e6, MsgBurst: 1e6,
		SessionMsgPerSecond: 1e6, SessionMsgBurst: 1e6, MaxConnsPerSession: 1000, MaxConnsPerToken: 1000, MaxConnsPerAddr: 1000})
	ts := httptest.NewServer(srv) // listens on 127.0.0.1 only
	defer ts.Close()
	defer srv.Shutdown()
	ctx := context.Background()

	type sessionPlan struct {
		editors, viewers int
	}
	plans := []sessionPlan{{25, 25}}
	for range 20 {
		plans = append(plans, sessionPlan{1, 1})
	}
	sw := rlcSweep(301)
	raw := touchstoneBytes(t, sw)
	var editors []*loadEditor
	var clients []*loadClient
	sids := map[string]int64{} // session → version before the load
	for si, p := range plans {
		se, err := st.Create(ctx, fmt.Sprintf("load %d", si))
		if err != nil {
			t.Fatal(err)
		}
		// Two sweeps: 16 markers per trace is the limit.
		var sweeps []string
		for range 2 {
			ev, err := st.Apply(ctx, se.ID, sessions.Change{Op: sessions.OpSweepAdd, FileName: "rlc.s1p", Raw: raw, Sweep: sw})
			if err != nil {
				t.Fatal(err)
			}
			sweeps = append(sweeps, ev.SweepID)
		}
		wsURL := "ws" + strings.TrimPrefix(ts.URL, "http") + "/s/"
		for e := range p.editors {
			ev, err := st.Apply(ctx, se.ID, sessions.Change{Op: sessions.OpMarkerAdd, SweepID: sweeps[e%2], FreqHz: 150e6})
			if err != nil {
				t.Fatal(err)
			}
			c := &loadClient{url: wsURL + se.EditToken + "/ws", orig: ts.URL, sid: se.ID, acks: make(chan outMsg, 16)}
			editors = append(editors, &loadEditor{c: c, sid: se.ID, mk: ev.MarkerID, lastFreq: 150e6})
			clients = append(clients, c)
		}
		for range p.viewers {
			clients = append(clients, &loadClient{url: wsURL + se.ViewToken + "/ws", orig: ts.URL, sid: se.ID})
		}
		_, v, _ := st.State(ctx, se.ID)
		sids[se.ID] = v
	}
	var readers sync.WaitGroup
	for _, c := range clients {
		if err := c.dial(); err != nil {
			t.Fatal(err)
		}
		readers.Add(1)
		go c.run(&readers)
	}
	defer func() {
		for _, c := range clients {
			c.stop()
		}
		readers.Wait()
	}()

	t0 := time.Now()
	var wg sync.WaitGroup
	errs := make(chan error, len(editors))
	for ei, e := range editors {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for n := range perEditor {
				id := int64(n + 1)
				var ch sessions.Change
				freq := 100e6 + 1e3*float64(ei*1000+n+1) // unique per change, inside 100–250 MHz
				label := ""
				if n%5 == 4 {
					label = fmt.Sprintf("e%d-%d", ei, n)
					ch = sessions.Change{Op: sessions.OpMarkerLabel, MarkerID: e.mk, Label: label}
				} else {
					ch = sessions.Change{Op: sessions.OpMarkerMove, MarkerID: e.mk, FreqHz: freq, Gesture: fmt.Sprintf("g%d-%d", ei, n/5)}
				}
				sent := time.Now()
				if err := e.c.send(inMsg{Type: "change", ID: id, Change: &ch}); err != nil {
					e.unknown++
					continue
				}
				var m outMsg
				select {
				case m = <-e.c.acks:
					for m.Type != "dropped" && m.ID != id {
						m = <-e.c.acks
					}
				case <-time.After(30 * time.Second):
					errs <- fmt.Errorf("editor %d: no answer to change %d in 30 s", ei, id)
					return
				}
				switch m.Type {
				case "ack":
					e.acked++
					e.latencies = append(e.latencies, time.Since(sent))
					e.versions = append(e.versions, m.V)
					if label != "" {
						e.lastLabel = label
					} else {
						e.lastFreq = freq
					}
				case "dropped":
					e.unknown++
				default:
					errs <- fmt.Errorf("editor %d: change %d refused: %s", ei, id, m.Msg)
					return
				}
			}
		}()
	}
	wg.Wait()
	elapsed := time.Since(t0)
	close(errs)
	for err := range errs {
		t.Error(err)
	}
	if t.Failed() {
		return
	}

	// Figures.
	var lat []time.Duration
	total, unknown := 0, 0
	for _, e := range editors {
		lat = append(lat, e.latencies...)
		total += e.acked
		unknown += e.unknown
	}
	slices.Sort(lat)
	pct := func(p float64) time.Duration { return lat[min(len(lat)-1, int(p*float64(len(lat))))] }
	t.Logf("%d pages (%d editors) on %d sessions, %d changes per editor: %d acknowledged in %v = %.0f changes/s; send→ack p50 %v, p95 %v, p99 %v, max %v",
		len(clients), len(editors), len(sids), perEditor, total, elapsed.Round(time.Millisecond), float64(total)/elapsed.Seconds(),
		pct(0.50).Round(time.Microsecond), pct(0.95).Round(time.Microsecond), pct(0.99).Round(time.Microsecond), lat[len(lat)-1].Round(time.Microsecond))

	// No acknowledged change lost.
	acked := map[string]int{}
	versions := map[string][]int64{}
	for _, e := range editors {
		acked[e.sid] += e.acked
		versions[e.sid] = append(versions[e.sid], e.versions...)
	}
	final := map[string]int64{}
	for sid, v0 := range sids {
		state, v, err := st.State(ctx, sid)
		if err != nil {
			t.Fatal(err)
		}
		final[sid] = v
		vs := versions[sid]
		slices.Sort(vs)
		if len(slices.Compact(slices.Clone(vs))) != len(vs) {
			t.Errorf("session %s: two acknowledgements share a version", sid)
		}
		if unknown == 0 && v-v0 != int64(acked[sid]) {
			t.Errorf("session %s: version moved by %d, %d changes acknowledged", sid, v-v0, acked[sid])
		}
		if v-v0 < int64(acked[sid]) {
			t.Errorf("session %s: version moved by %d, fewer than the %d changes acknowledged", sid, v-v0, acked[sid])
		}
		for _, e := range editors {
			if e.sid != sid || e.unknown > 0 {
				continue
			}
			m := state.Markers[state.MarkerIndex(e.mk)]
			if m.FreqHz != e.lastFreq || m.Label != e.lastLabel {
				t.Errorf("marker %s holds %g Hz %q, its editor last had %g Hz %q acknowledged", e.mk, m.FreqHz, m.Label, e.lastFreq, e.lastLabel)
			}
		}
	}

	// Every page converges to its session's final version.
	conv := time.Now()
	for _, c := range clients {
		if !waitFor(30*time.Second, func() bool { return c.seen() == final[c.sid] }) {
			t.Errorf("a page of session %s stopped at version %d, the session is at %d", c.sid, c.seen(), final[c.sid])
		}
	}
	backwards, reconnects, updates := 0, 0, 0
	for _, c := range clients {
		c.mu.Lock()
		backwards += c.backwards
		reconnects += c.reconnects
		updates += c.updates
		c.mu.Unlock()
	}
	t.Logf("%d updates delivered; all pages at their session's final version %v after the last ack; %d reconnects, %d changes with a lost answer",
		updates, time.Since(conv).Round(time.Millisecond), reconnects, unknown)
	if reconnects > 0 {
		t.Logf("the last dropped connection ended with: %v", loadLastDrop.Load())
	}
	if backwards > 0 {
		t.Errorf("%d updates arrived older than one already seen", backwards)
	}
}
