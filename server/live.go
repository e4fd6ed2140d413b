package server

import (
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"net/http"
	"slices"
	"strconv"
	"sync"

	"github.com/a-h/templ"

	"matchbench/sessions"
	"matchbench/web"
)

// frag is one fragment of the page to replace: the element with id ID
// gets HTML (parsed as SVG when SVG is set; its children only when Inner).
type frag struct {
	ID    string `json:"id"`
	HTML  string `json:"html"`
	SVG   bool   `json:"svg,omitempty"`
	Inner bool   `json:"inner,omitempty"`
}

// outMsg is a message from the server to a page.
type outMsg struct {
	Type  string `json:"type"`            // "update", "ack", "error", "reload"
	ID    int64  `json:"id,omitempty"`    // the client message answered
	V     int64  `json:"v,omitempty"`     // the session version after it
	Op    string `json:"op,omitempty"`    // the op that made an update
	Frags []frag `json:"frags,omitempty"` // fragments to swap
	Anim  *anim  `json:"anim,omitempty"`  // frames to play before the fragments land
	Msg   string `json:"msg,omitempty"`   // error text
}

// anim is the animation of one matching step: each frame is a list of
// fragments (the matching-path layer, with the morphing response drawn in
// it), played over MS milliseconds.
type anim struct {
	Frames [][]frag `json:"frames"`
	MS     int      `json:"ms"`
}

// room fans the events of one session out to its websocket connections.
// It renders each event once per capability and shares the bytes.
type room struct {
	s     *Server
	sid   string
	sub   *sessions.Subscription
	share *sessionShare // the session's; the room draws in its slot
	// redraw asks the room to redraw its pages at the latest state: a
	// derived result they show as computing is ready.
	redraw chan struct{}

	mu    sync.Mutex
	conns map[*conn]struct{}
	last  *scene // the scene of the latest state, reused while the structure is unchanged
	lastV int64  // the version of the update sent last
	key   string
	done  chan struct{}
}

// join adds c to the room of its session, creating the room on first use.
func (s *Server) join(c *conn) (*room, error) {
	s.mu.Lock()
	defer s.mu.Unlock()
	if s.closed {
		return nil, errors.New("server shutting down")
	}
	rm := s.rooms[c.sid]
	if rm == nil {
		sub, err := s.store.Subscribe(c.sid, 256)
		if err != nil {
			return nil, err
		}
		rm = &room{s: s, sid: c.sid, sub: sub, conns: map[*conn]struct{}{}, done: make(chan struct{}), share: s.share(c.sid), redraw: make(chan struct{}, 1)}
		s.rooms[c.sid] = rm
		go rm.run()
	}
	rm.mu.Lock()
	rm.conns[c] = struct{}{}
	rm.mu.Unlock()
	return rm, nil
}

// leave removes c; the last one out closes the room.
func (s *Server) leave(rm *room, c *conn) {
	s.mu.Lock()
	defer s.mu.Unlock()
	rm.mu.Lock()
	delete(rm.conns, c)
	empty := len(rm.conns) == 0
	rm.mu.Unlock()
	if empty && s.rooms[rm.sid] == rm {
		delete(s.rooms, rm.sid)
		rm.sub.Close()
	}
}

func (rm *room) run() {
	defer close(rm.done)
	for {
		var ev sessions.Event
		select {
		case e, ok := <-rm.sub.C:
			if !ok {
				rm.ended() // tokens.go: overflow, re-issued links, shutdown
				return
			}
			ev = e
		case <-rm.redraw:
			rm.share.drawing(context.Background())
			rm.redrawAll()
			rm.share.done()
			continue
		}
		// Events that arrived while the last one was being sent go out as
		// one update: a room that falls behind a fast drag sends the latest
		// state, not every step of the way.
		batch := []sessions.Event{ev}
	drain:
		for len(batch) < maxBatch {
			select {
			case e, ok := <-rm.sub.C:
				if !ok {
					break drain
				}
				batch = append(batch, e)
			default:
				break drain
			}
		}
		rm.share.drawing(context.Background())
		rm.broadcast(batch)
		rm.share.done()
	}
}

// askRedraw asks the room to redraw its pages; asks that come while one
// waits are one.
func (rm *room) askRedraw() {
	select {
	case rm.redraw <- struct{}{}:
	default:
	}
}

// redrawAll draws the session's latest state afresh (with the derived
// results the cache now holds) and sends it to every page as a full update
// at that version, unless the page has an update as new already.
//
// The state is the one the room sent last, so that a redraw never overtakes
// an update still to be sent (whose animation it would swallow); a room
// that has sent none yet takes the store's.
func (rm *room) redrawAll() {
	rm.mu.Lock()
	var st *sessions.State
	v := rm.lastV
	if rm.last != nil {
		st = rm.last.st
	}
	rm.mu.Unlock()
	if st == nil {
		var err error
		if st, v, err = rm.s.store.State(context.Background(), rm.sid); err != nil {
			return // the room ends with the session
		}
	}
	sc := rm.s.scene(rm.sid, st)
	rm.mu.Lock()
	if rm.last != nil && rm.last.st == st {
		sc.prev = rm.last.prev
		rm.last = sc
	}
	rm.mu.Unlock()
	msgs := map[string][]byte{} // by capability and page view, as broadcast
	for _, c := range rm.snapshot() {
		pv := c.currentView()
		key := strconv.Itoa(int(c.cap)) + "/" + pv.key()
		b, ok := msgs[key]
		if !ok {
			var err error
			b, err = json.Marshal(outMsg{Type: "update", V: v, Op: "derived",
				Frags: rm.s.fullFrags(sc, access{SessionID: rm.sid, Cap: c.cap, Token: c.token}, v, pv)})
			if err != nil {
				return
			}
			msgs[key] = b
		}
		c.queueRedraw(v, b)
	}
}

// maxBatch bounds the events merged into one update.
const maxBatch = 256

func (rm *room) snapshot() []*conn {
	rm.mu.Lock()
	defer rm.mu.Unlock()
	out := make([]*conn, 0, len(rm.conns))
	for c := range rm.conns {
		out = append(out, c)
	}
	return out
}

func (rm *room) closeAll(reason string) {
	for _, c := range rm.snapshot() {
		c.close(reason)
	}
}

// broadcast renders a batch of events (one update, at the last event's
// version) once per capability and page view in the room (editors and
// viewers of the default view share one rendering) and queues it on every
// connection.
func (rm *room) broadcast(batch []sessions.Event) {
	ev := batch[len(batch)-1]
	rm.mu.Lock()
	rm.lastV = ev.Version
	rm.mu.Unlock()
	conns := rm.snapshot()
	msgs := map[string][]byte{} // by capability and view
	for _, c := range conns {
		v := c.currentView()
		key := strconv.Itoa(int(c.cap)) + "/" + v.key()
		b, ok := msgs[key]
		if !ok {
			m := rm.render(batch, c.cap, c.token, v)
			var err error
			if b, err = json.Marshal(m); err != nil {
				rm.s.log.Error("encode update", "err", err)
				return
			}
			msgs[key] = b
		}
		c.queueUpdate(ev.Version, b)
	}
}

// markerOps only move or relabel one marker: the page swaps that marker's
// groups and the readout rows, nothing else.
var markerOps = map[string]bool{
	sessions.OpMarkerMove: true, sessions.OpMarkerStep: true, sessions.OpMarkerToDip: true, sessions.OpMarkerLabel: true,
}

// render builds the update for a batch of events as seen with capability
// cap: the last event's state; only the moved markers' fragments when every
// event only moved markers; the animation of the last event's step.
func (rm *room) render(batch []sessions.Event, cap sessions.Capability, token string, v *pageView) outMsg {
	ev := batch[len(batch)-1]
	sc, prev := rm.sceneFor(ev.State)
	msg := outMsg{Type: "update", V: ev.Version, Op: ev.Op}
	msg.Anim = stepAnimation(prev, sc, ev, v) // from the state before the batch
	var moved []string
	onlyMarkers := true
	for _, e := range batch {
		if !markerOps[e.Op] || e.MarkerID == "" {
			onlyMarkers = false
			break
		}
		if !slices.Contains(moved, e.MarkerID) {
			moved = append(moved, e.MarkerID)
		}
	}
	if onlyAmpPoints(batch) {
		if frags := rm.s.ampPointFrags(sc); frags != nil {
			msg.Frags = frags
			return msg
		}
	}
	if onlyMarkers {
		for i, id := range moved {
			frags := rm.s.markerFrags(sc, id, cap == sessions.Edit, v)
			if i < len(moved)-1 {
				frags = frags[:len(frags)-1] // the readout table once, at the end
			}
			msg.Frags = append(msg.Frags, frags...)
		}
		return msg
	}
	msg.Frags = rm.s.fullFrags(sc, access{SessionID: rm.sid, Cap: cap, Token: token}, ev.Version, v)
	return msg
}

// sceneFor returns the scene of st, reusing the previous one's traces and
// resolved plots when only markers changed.
func (rm *room) sceneFor(st *sessions.State) (sc, prev *scene) {
	rm.mu.Lock()
	defer rm.mu.Unlock()
	prev = rm.last
	if prev != nil && prev.st == st {
		return prev, prev.prev
	}
	key := structureKey(st)
	back := prev.animationBase()
	if prev != nil && rm.key == key {
		c := *prev
		c.st, c.prev = st, back
		sc = &c
	} else {
		sc = rm.s.scene(rm.sid, st)
		sc.prev = back
		rm.key = key
	}
	rm.last = sc
	return sc, prev
}

// animationBase is what a scene keeps of the scene before it: the state
// and the active network, from which stepAnimation starts a step. The
// traces, plots and drawings of the scene before are not kept, so a room
// holds one scene's worth of series, not two. A nil scene gives nil.
func (sc *scene) animationBase() *scene {
	if sc == nil {
		return nil
	}
	return &scene{sid: sc.sid, st: sc.st, net: sc.net}
}

// structureKey identifies everything of a state except its markers: when
// it is unchanged the traces and plot ranges are too.
func structureKey(st *sessions.State) string {
	c := *st
	c.Markers = nil
	if c.Amp != nil { // the terminations are drawn from the state itself
		a := *c.Amp
		a.GammaS, a.GammaL = nil, nil
		c.Amp = &a
	}
	b, _ := json.Marshal(&c)
	return string(b)
}

// markerFrags draws the groups of one marker (chart and plots) as view v
// shows them, and the readout table.
func (s *Server) markerFrags(sc *scene, markerID string, canEdit bool, v *pageView) []frag {
	var out []frag
	i := sc.st.MarkerIndex(markerID)
	if i >= 0 {
		if cm, ok := sc.chartMarker(i, v); ok {
			var b bytes.Buffer
			c := sc.chartFor(v)
			c.RenderMarker(&b, cm)
			out = append(out, frag{ID: "mk-" + markerID, HTML: b.String(), SVG: true})
		}
		// Every marker's group of each plot: a moved marker's number may
		// make another's move aside (chartsvg.Plot.SpreadLabels).
		// The bands' names and limits move out of the markers' way too.
		for _, p := range sc.plotsFor(v) {
			ms := sc.markersOf(&p)
			for _, pm := range ms {
				var b bytes.Buffer
				p.p.RenderMarker(&b, pm, p.series)
				out = append(out, frag{ID: p.p.IDPrefix + "pmk-" + pm.ID, HTML: b.String(), SVG: true})
			}
			if len(p.bands) > 0 {
				var b bytes.Buffer
				p.p.RenderBandLabels(&b, p.bands, ms, p.series)
				out = append(out, frag{ID: p.p.IDPrefix + "bandnames", HTML: b.String(), SVG: true})
			}
		}
	}
	out = append(out, frag{ID: "readout-body", HTML: renderString(web.ReadoutBody(sc.readoutRows(), canEdit))})
	return out
}

// fullFrags redraws the chart, the plots and every panel as view pv shows
// them.
func (s *Server) fullFrags(sc *scene, a access, ver int64, pv *pageView) []frag {
	v := s.panelsView(a, sc, ver, pv)
	out := s.viewFrags(sc, v, pv)
	out = append(out,
		frag{ID: "markers-panel", HTML: renderString(web.MarkersPanel(v))},
		frag{ID: "sweeps-panel", HTML: renderString(web.SweepsPanel(v))},
		frag{ID: "bands-panel", HTML: renderString(web.BandsPanel(v))},
		frag{ID: "chart-panel", HTML: renderString(web.ChartPanel(v))},
		frag{ID: "network-panel", HTML: renderString(web.NetworkPanel(v))},
		frag{ID: "sets-panel", HTML: renderString(web.SetsPanel(v))},
		frag{ID: "tuning-panel", HTML: renderString(web.TuningPanel(v))},
		frag{ID: "refplane-panel", HTML: renderString(web.RefPlanePanel(v))},
		frag{ID: "amp-panel", HTML: renderString(web.AmpPanel(v))},
		frag{ID: "session-name", HTML: renderString(web.SessionName(sc.st.Name))},
	)
	return out
}

// viewFrags draws what depends on a page's view: the chart, its bar, the
// plots with the span, and the resonance table.
func (s *Server) viewFrags(sc *scene, v web.SessionView, pv *pageView) []frag {
	var b bytes.Buffer
	if err := sc.renderChartView(&b, pv); err != nil {
		s.log.Error("render chart", "err", err)
	}
	v.Plots = sc.plotViews(pv)
	return []frag{
		{ID: "chart", HTML: "<div>" + b.String() + "</div>", Inner: true},
		{ID: "chart-bar", HTML: renderString(web.ChartBarView(v))},
		{ID: "plots-pane", HTML: renderString(web.PlotsPane(v))},
		{ID: "resonance-panel", HTML: renderString(web.ResonancePanel(v))},
	}
}

func renderString(c templ.Component) string {
	var b bytes.Buffer
	if err := c.Render(context.Background(), &b); err != nil {
		return ""
	}
	return b.String()
}

// shareLinks returns the edit and view links of a session for the hosts a
// colleague can reach.
func (s *Server) shareLinks(r *http.Request, sid string) web.ShareView {
	v := web.ShareView{LAN: s.cfg.LAN}
	edit, view, err := s.store.Tokens(r.Context(), sid)
	if err != nil {
		s.log.Error("tokens", "err", err)
		return v
	}
	hosts := s.cfg.ShareHosts
	if len(hosts) == 0 {
		hosts = []string{r.Host}
	}
	for _, h := range hosts {
		v.EditLinks = append(v.EditLinks, "http://"+h+"/s/"+edit+"/")
		v.ViewLinks = append(v.ViewLinks, "http://"+h+"/s/"+view+"/")
	}
	return v
}
