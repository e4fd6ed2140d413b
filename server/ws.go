package server

import (
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"net/http"
	"net/url"
	"strings"
	"sync"
	"time"

	"github.com/gorilla/websocket"
	"golang.org/x/time/rate"

	"matchbench/sessions"
)

// Websocket timings and sizes.
const (
	writeWait      = 10 * time.Second
	pongWait       = 60 * time.Second
	pingPeriod     = pongWait * 9 / 10
	maxMessageSize = 64 << 10
	sendQueue      = 64  // messages waiting for a slow page before it is dropped
	opQueue        = 128 // changes waiting to be applied per connection
)

// inMsg is a message from a page.
//
//	hello   {v}                     the page's version; the server answers with a
//	                                full update when the session has moved on
//	change  {id, v, change}         one sessions.Change (see its doc for ops)
//	form    {id, v, form, fields}   a panel's form, fields as typed (SI prefixes)
//	action  {id, action}            "search-cancel" stops the session's search
//	partdrag {id, v, change}        a part's design point dragged on the chart:
//	                                change.partId, change.gamma, change.gesture; the
//	                                server finds the value along the part's arc
//	ping    {}                      keep-alive; ignored
type inMsg struct {
	Type   string            `json:"type"`
	ID     int64             `json:"id"`
	V      int64             `json:"v"`
	Change *sessions.Change  `json:"change,omitempty"`
	Form   string            `json:"form,omitempty"`
	Action string            `json:"action,omitempty"`
	Fields map[string]string `json:"fields,omitempty"`
}

// conn is one page's websocket. One goroutine reads, one writes, one
// applies changes; the room's broadcaster only queues.
type conn struct {
	s     *Server
	ws    *websocket.Conn
	sid   string
	token string
	cap   sessions.Capability
	send  chan []byte
	share *sessionShare // the session's

	mu      sync.Mutex
	ops     []inMsg // pending changes; a drag replaces the pending drag of its marker
	wake    chan struct{}
	closed  bool
	closeMu sync.Once
	done    chan struct{}
	reason  string
	final   []byte // a last message sent before the close frame (see closeReload)

	sendMu sync.Mutex // orders updates; see queueUpdate
	sentV  int64      // the version of the newest update queued

	viewMu sync.Mutex
	view   *pageView // how this page looks at the session (view.go); nil: the default
}

func (s *Server) upgrader() *websocket.Upgrader {
	return &websocket.Upgrader{
		ReadBufferSize:  4096,
		WriteBufferSize: 16384,
		// The page must come from the host it talks to.
		CheckOrigin: func(r *http.Request) bool {
			o := r.Header.Get("Origin")
			if o == "" {
				return true // not a browser
			}
			u, err := url.Parse(o)
			return err == nil && strings.EqualFold(u.Host, r.Host)
		},
	}
}

func (s *Server) websocket(w http.ResponseWriter, r *http.Request) {
	a := accessFrom(r.Context())
	release, err := s.admitConn(a.SessionID, a.Token, remoteIP(r))
	if err != nil {
		le := err.(*limitError)
		http.Error(w, le.msg, le.status)
		return
	}
	defer release()
	ws, err := s.upgrader().Upgrade(w, r, nil)
	if err != nil {
		return // the upgrader has answered
	}
	c := &conn{s: s, ws: ws, sid: a.SessionID, token: a.Token, cap: a.Cap, share: s.share(a.SessionID),
		send: make(chan []byte, sendQueue), wake: make(chan struct{}, 1), done: make(chan struct{})}
	rm, err := s.join(c)
	if err != nil {
		ws.WriteControl(websocket.CloseMessage, websocket.FormatCloseMessage(websocket.CloseGoingAway, "server shutting down"), time.Now().Add(time.Second))
		ws.Close()
		return
	}
	ctx, cancel := context.WithCancel(context.Background())
	go c.writer()
	if s.tokenRevoked(a) {
		c.closeReload("the links of this session were re-issued")
	}
	go c.applier(ctx)
	c.reader()
	cancel()
	s.leave(rm, c)
	c.close("")
}

// queue hands an encoded message to the writer. A page that does not keep
// up is closed; it reconnects and catches up from its version.
func (c *conn) queue(b []byte) {
	select {
	case c.send <- b:
	default:
		if c.isDone() {
			return
		}
		c.close("too slow; reload")
		// The writer may be blocked writing to a page that stopped
		// reading: give that write a second, not writeWait, so the
		// connection and its goroutines go soon.
		c.ws.UnderlyingConn().SetWriteDeadline(time.Now().Add(time.Second))
	}
}

// isDone reports whether c has been closed.
func (c *conn) isDone() bool {
	select {
	case <-c.done:
		return true
	default:
		return false
	}
}

// reply sends m, its text cut to maxReplyText: an error names what was
// wrong, not the whole of a client's input.
func (c *conn) reply(m outMsg) {
	if m.Type == "error" {
		m.Msg = plainWords(m.Msg) // words.go: the engineer's words, SI frequencies
	}
	m.Msg = clip(m.Msg, maxReplyText)
	b, _ := json.Marshal(m)
	c.queue(b)
}

func (c *conn) close(reason string) {
	c.closeMu.Do(func() {
		c.mu.Lock()
		c.closed = true
		c.reason = reason
		c.mu.Unlock()
		close(c.done)
	})
}

func (c *conn) writer() {
	t := time.NewTicker(pingPeriod)
	defer func() {
		t.Stop()
		c.ws.Close()
	}()
	for {
		select {
		case b := <-c.send:
			if c.isDone() {
				continue // closed meanwhile: drop the rest and say goodbye
			}
			c.ws.SetWriteDeadline(time.Now().Add(writeWait))
			if err := c.ws.WriteMessage(websocket.TextMessage, b); err != nil {
				c.close("")
				return
			}
		case <-t.C:
			c.ws.SetWriteDeadline(time.Now().Add(writeWait))
			if err := c.ws.WriteMessage(websocket.PingMessage, nil); err != nil {
				c.close("")
				return
			}
		case <-c.done:
			c.mu.Lock()
			reason, final := c.reason, c.final
			c.mu.Unlock()
			if final != nil {
				c.ws.SetWriteDeadline(time.Now().Add(time.Second))
				c.ws.WriteMessage(websocket.TextMessage, final)
			}
			code := websocket.CloseNormalClosure
			if reason != "" {
				code = websocket.CloseGoingAway
			}
			c.ws.WriteControl(websocket.CloseMessage, websocket.FormatCloseMessage(code, reason), time.Now().Add(time.Second))
			return
		}
	}
}

// reader decodes messages, refuses what the link does not allow, answers
// hellos and queues changes for the applier, at most MsgPerSecond on
// average.
func (c *conn) reader() {
	c.ws.SetReadLimit(maxMessageSize)
	c.ws.SetReadDeadline(time.Now().Add(pongWait))
	c.ws.SetPongHandler(func(string) error { c.ws.SetReadDeadline(time.Now().Add(pongWait)); return nil })
	bucket := newLimiter(c.s.cfg.MsgPerSecond, c.s.cfg.MsgBurst)
	for {
		_, data, err := c.ws.ReadMessage()
		if err != nil {
			return
		}
		c.ws.SetReadDeadline(time.Now().Add(pongWait))
		var m inMsg
		if err := json.Unmarshal(data, &m); err != nil {
			c.reply(outMsg{Type: "error", Msg: "the message is not JSON of the expected shape: " + err.Error()})
			continue
		}
		now := time.Now()
		if !bucket.AllowN(now, 1) {
			c.reply(outMsg{Type: "error", ID: m.ID, Msg: "too many messages: slow down"})
			continue
		}
		if cost := sessionCost(m.Type); cost > 0 && !c.share.take(now, cost) {
			c.reply(outMsg{Type: "error", ID: m.ID, Msg: fmt.Sprintf(
				"this session's pages together send more than the %g messages a second one session may: slow down", c.s.cfg.SessionMsgPerSecond)})
			continue
		}
		switch m.Type {
		case "ping":
		case "hello":
			c.catchUp(m.V)
		case "view": // any link may look at the session its own way
			c.setView(m)
		case "change", "form", "partdrag", "action":
			if c.cap != sessions.Edit {
				c.reply(outMsg{Type: "error", ID: m.ID, Msg: "this is a view-only link: changes are refused"})
				continue
			}
			if (m.Type == "change" || m.Type == "partdrag") && m.Change == nil {
				c.reply(outMsg{Type: "error", ID: m.ID, Msg: "a change message needs a \"change\" object"})
				continue
			}
			if !c.push(m) {
				c.reply(outMsg{Type: "error", ID: m.ID, Msg: "too many changes waiting: slow down"})
			}
		default:
			c.reply(outMsg{Type: "error", ID: m.ID, Msg: "unknown message type " + quoteClipped(m.Type, maxEcho)})
		}
	}
}

// sessionCost is what a message of type typ takes from its session's
// fair share: nothing for a keep-alive, catchUpCost for a hello (which may
// redraw the whole page), one for anything else.
func sessionCost(typ string) int {
	switch typ {
	case "ping":
		return 0
	case "hello":
		return catchUpCost
	}
	return 1
}

// push queues m. A marker drag replaces the drag of the same marker still
// waiting, so the server never holds more than the latest drag per marker.
func (c *conn) push(m inMsg) bool {
	c.mu.Lock()
	defer c.mu.Unlock()
	if isDrag(m) {
		for i := range c.ops {
			if isDrag(c.ops[i]) && dragKey(c.ops[i]) == dragKey(m) {
				c.ops[i] = m
				return true
			}
		}
	}
	if len(c.ops) >= opQueue {
		return false
	}
	c.ops = append(c.ops, m)
	select {
	case c.wake <- struct{}{}:
	default:
	}
	return true
}

func isDrag(m inMsg) bool {
	return (m.Type == "change" && m.Change != nil && (m.Change.Op == sessions.OpMarkerMove || m.Change.Op == sessions.OpAmpPoint)) ||
		(m.Type == "partdrag" && m.Change != nil) || m.Type == "view"
}

// dragKey is what a drag moves: one marker, one part or one termination
// of the amplifier view, or the page's view (a wheel zoom or a pan sends
// many; only the latest is drawn).
func dragKey(m inMsg) string {
	switch {
	case m.Type == "view":
		return "v"
	case m.Type == "partdrag":
		return "p:" + m.Change.PartID
	case m.Change.Op == sessions.OpAmpPoint:
		return "a:" + m.Change.Plane
	}
	return "m:" + m.Change.MarkerID
}

func (c *conn) pop() (inMsg, bool) {
	c.mu.Lock()
	defer c.mu.Unlock()
	if len(c.ops) == 0 {
		return inMsg{}, false
	}
	m := c.ops[0]
	c.ops = c.ops[1:]
	return m, true
}

// applier applies queued changes in order; the acknowledgement carries the
// committed version, the update reaches every page through the room.
func (c *conn) applier(ctx context.Context) {
	for {
		select {
		case <-c.wake:
		case <-c.done:
			return
		case <-ctx.Done():
			return
		}
		for {
			m, ok := c.pop()
			if !ok {
				break
			}
			c.apply(ctx, m)
		}
	}
}

// apply handles one page message: its type's handler (messageHandlers)
// makes the change, which is stored under the link's capability and
// acknowledged with the new version; every refusal is an error message to
// the page naming what was wrong.
func (c *conn) apply(ctx context.Context, m inMsg) {
	h, ok := messageHandlers[m.Type]
	if !ok {
		h = (*conn).changeMsg
	}
	ch, err := h(c, ctx, m)
	if err != nil {
		c.reply(outMsg{Type: "error", ID: m.ID, Msg: err.Error()})
		return
	}
	if ch == nil {
		return // the handler answered
	}
	ev, err := c.s.store.ApplyAs(ctx, c.cap, c.sid, *ch)
	if err != nil {
		status, msg := errorStatus(err)
		if status >= 500 {
			c.s.log.Error("apply", "op", ch.Op, "err", err)
		}
		c.reply(outMsg{Type: "error", ID: m.ID, Msg: msg})
		return
	}
	c.reply(outMsg{Type: "ack", ID: m.ID, V: ev.Version})
}

// A messageHandler handles one type of page message: it returns the change
// to store (apply stores it and acknowledges it), or nil when it has
// answered the page itself, or an error for the page.
type messageHandler func(c *conn, ctx context.Context, m inMsg) (*sessions.Change, error)

// messageHandlers is the one table from a message's type to its handler;
// a message of any other type carries a change of its own (changeMsg).
var messageHandlers = map[string]messageHandler{
	"view":     (*conn).viewMsg,
	"action":   (*conn).actionMsg,
	"form":     (*conn).formMsg,
	"partdrag": (*conn).partDragMsg,
}

// viewMsg redraws the page for its new view (view.go).
func (c *conn) viewMsg(ctx context.Context, m inMsg) (*sessions.Change, error) {
	c.sendView(ctx, m.ID)
	return nil, nil
}

// actionMsg runs a page action that changes no state: cancelling the
// session's search.
func (c *conn) actionMsg(_ context.Context, m inMsg) (*sessions.Change, error) {
	switch m.Action {
	case "search-cancel":
		if !c.s.cancelSearch(c.sid) {
			return nil, errors.New("no search is running")
		}
		c.reply(outMsg{Type: "ack", ID: m.ID})
		return nil, nil
	}
	return nil, errors.New("unknown action " + quoteClipped(m.Action, maxEcho))
}

// formMsg turns a panel's form into a change: through its entry in
// formHandlers when the form needs the session's scene, else formChange.
func (c *conn) formMsg(ctx context.Context, m inMsg) (*sessions.Change, error) {
	h, ok := formHandlers[m.Form]
	if !ok {
		ch, err := formChange(m.Form, m.Fields)
		return &ch, err
	}
	sc, err := c.scene(ctx)
	if err != nil {
		return nil, err
	}
	ch, err := h(ctx, c, sc, m.Form, m.Fields)
	if err == nil && ch == nil {
		c.reply(outMsg{Type: "ack", ID: m.ID}) // work started
	}
	return ch, err
}

// partDragMsg turns a drag of a part's point on the chart into the part's
// new value.
func (c *conn) partDragMsg(ctx context.Context, m inMsg) (*sessions.Change, error) {
	ne, err := c.activeNetwork(ctx)
	if err != nil {
		return nil, err
	}
	if m.Change.Gamma == nil {
		return nil, errors.New("a part drag needs a \"gamma\" point")
	}
	// The page's chart may be at another reference than the load's.
	g := pointToChart(complex(m.Change.Gamma.Re, m.Change.Gamma.Im), c.currentView().z0(), ne.z0)
	v, err := ne.dragValue(m.Change.PartID, g)
	if err != nil {
		return nil, err
	}
	return &sessions.Change{Op: sessions.OpPartSet, NetworkID: ne.n.ID, PartID: m.Change.PartID, Value: &v, Gesture: m.Change.Gesture}, nil
}

// changeMsg takes a change the page made itself (a marker drag, an undo),
// refusing the ops only the server makes and snapping chart points to the
// trace shown.
func (c *conn) changeMsg(ctx context.Context, m inMsg) (*sessions.Change, error) {
	ch := *m.Change
	ch.Raw, ch.Sweep = nil, nil
	if why, ok := serverOnlyOps[ch.Op]; ok {
		return nil, errors.New(why)
	}
	if err := c.snapToShown(ctx, &ch); err != nil { // view.go: a chart point to a frequency
		return nil, err
	}
	return &ch, nil
}

// A formHandler turns a form that needs the session's scene into a change,
// or starts the form's work and returns nil (the page is acknowledged at
// once and follows the work's progress).
type formHandler func(ctx context.Context, c *conn, sc *scene, form string, f map[string]string) (*sessions.Change, error)

// formHandlers is the one table from a form that needs the scene to its
// handler; every other form is formChange's.
var formHandlers = func() map[string]formHandler {
	t := map[string]formHandler{
		"search.start": func(_ context.Context, c *conn, sc *scene, _ string, f map[string]string) (*sessions.Change, error) {
			return nil, c.s.startSearch(sc, f)
		},
		"stage.search": func(_ context.Context, c *conn, sc *scene, _ string, f map[string]string) (*sessions.Change, error) {
			return nil, c.s.startStageSearch(sc, f)
		},
	}
	of := func(change func(sc *scene, form string, f map[string]string) (sessions.Change, error)) formHandler {
		return func(_ context.Context, _ *conn, sc *scene, form string, f map[string]string) (*sessions.Change, error) {
			ch, err := change(sc, form, f)
			return &ch, err
		}
	}
	add := func(forms map[string]bool, h formHandler) {
		for name := range forms {
			t[name] = h
		}
	}
	add(searchForms, of((*scene).searchChange))
	add(ampForms, of((*scene).ampChange))
	add(setForms, of((*scene).setChange))
	add(networkForms, of((*scene).partChange))
	add(tuneForms, func(ctx context.Context, _ *conn, sc *scene, form string, f map[string]string) (*sessions.Change, error) {
		ch, err := sc.tuneChange(ctx, form, f)
		return &ch, err
	})
	add(planeForms, func(_ context.Context, c *conn, sc *scene, form string, f map[string]string) (*sessions.Change, error) {
		ch, err := sc.refPlaneChange(c.s, form, f)
		return &ch, err
	})
	return t
}()

// serverOnlyOps are the ops that only the server makes, with why a page's
// is refused: a page could otherwise store numbers of its own making as a
// measurement or as the result of a search.
var serverOnlyOps = map[string]string{
	sessions.OpSweepAdd:    "sweeps are added by uploading a file",
	sessions.OpSearchStore: "search results come only from the server's own search: start one with the search form",
	sessions.OpTuneStore:   "tuning rounds come only from the server's own fit: fit the board as built with the tuning form",
	sessions.OpStageStore:  "stage designs come only from the server's own stage search: start one with the stage form",
}

// networkForms are the forms whose fields need the session's current scene
// (the active network's parts and design frequency).
var networkForms = map[string]bool{"network.add": true, "network.set": true, "part.add": true, "part.set": true, "part.params": true}

// setForms save and remove load sets; they need the session's sweeps.
var setForms = map[string]bool{"set.save": true, "set.remove": true}

// searchForms turn a found design or solution into a network.
var searchForms = map[string]bool{"search.use": true, "synth.use": true, "stub.use": true, "qw.use": true}

// planeForms are the reference-plane and time-domain forms; they too need
// the scene (the sweeps, corrected or raw).
var planeForms = map[string]bool{"refplane.set": true, "refplane.fit": true, "tdr.set": true, "tdr.gate": true}

// scene returns the scene of the session's current state, built in the
// session's drawing slot.
func (c *conn) scene(ctx context.Context) (*scene, error) {
	st, _, err := c.s.store.State(ctx, c.sid)
	if err != nil {
		return nil, err
	}
	if !c.share.drawing(ctx) {
		return nil, ctx.Err()
	}
	defer c.share.done()
	return c.s.scene(c.sid, st), nil
}

// activeNetwork prepares the session's active network on its load (with
// the load's reference plane) without drawing anything or evaluating it
// over the sweep: a part drag needs only its design frequency.
func (c *conn) activeNetwork(ctx context.Context) (*netEval, error) {
	st, _, err := c.s.store.State(ctx, c.sid)
	if err != nil {
		return nil, err
	}
	n := st.Active()
	i := -1
	if n != nil {
		i = st.SweepIndex(n.SweepID)
	}
	if i < 0 {
		return nil, errors.New("the session has no matching network to drag")
	}
	sw, err := c.s.store.Sweep(c.sid, n.SweepID)
	if err == nil {
		sw, err = c.s.corrected(c.sid, st.Sweeps[i], sw)
	}
	if err != nil {
		return nil, err
	}
	ne := prepareNetwork(n, sw)
	adaptStage(st, ne)
	return ne, ne.err
}

// catchUp sends a full update when the page's version is not the session's.
// It draws in the session's drawing slot, taken before sendMu as the room
// takes it, and holds sendMu throughout, so that the room's updates queue
// either before the catch-up (and it overtakes them) or after it (and those
// it already covers are skipped).
func (c *conn) catchUp(v int64) {
	c.share.drawing(context.Background())
	defer c.share.done()
	c.sendMu.Lock()
	defer c.sendMu.Unlock()
	cu, err := c.s.store.Since(context.Background(), c.sid, v)
	if err != nil {
		if !errors.Is(err, sessions.ErrNotFound) {
			c.s.log.Error("catch up", "err", err)
		}
		c.reply(outMsg{Type: "reload"})
		return
	}
	c.sentV = max(c.sentV, cu.Version)
	if cu.Version == v {
		return
	}
	sc := c.s.scene(c.sid, cu.State)
	c.reply(outMsg{Type: "update", V: cu.Version, Op: "catchup", Frags: c.s.fullFrags(sc, access{SessionID: c.sid, Cap: c.cap, Token: c.token}, cu.Version, c.currentView())})
}

// newLimiter is the token bucket of a connection or a session: rate
// messages a second on average, bursts of up to burst (rounded up to a whole
// message, at least one). It takes the time as an argument (AllowN), so
// tests step it without sleeping.
func newLimiter(perSecond, burst float64) *rate.Limiter {
	return rate.NewLimiter(rate.Limit(perSecond), max(1, int(math.Ceil(burst))))
}
