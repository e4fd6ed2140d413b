package server

import (
	"context"
	"math"
	"strconv"
	"strings"
	"testing"
	"time"

	"github.com/gorilla/websocket"

	"matchbench/rfmath/units"
	"matchbench/sessions"
)

func readMsg(t *testing.T, c *websocket.Conn, ok func(map[string]any) bool) map[string]any {
	t.Helper()
	c.SetReadDeadline(time.Now().Add(60 * time.Second))
	for {
		var m map[string]any
		if err := c.ReadJSON(&m); err != nil {
			t.Fatalf("no expected message: %v", err)
		}
		if ok(m) {
			return m
		}
	}
}

// The search runs in the background, reports progress to the pages, keeps
// its designs in the session, and one of them becomes a network in one
// action. On the 200 Ω load (95–105 MHz, 10 dB) two E24 parts suffice.
func TestSearchOverWebsocket(t *testing.T) {
	t.Parallel()
	f, _ := netFixture(t)
	c := wsDial(t, f, f.sess.EditToken)
	c.WriteJSON(inMsg{Type: "form", ID: 1, Form: "search.start", Fields: map[string]string{"parts": "2", "lseries": "E24", "cseries": "E24", "model": ""}})
	readMsg(t, c, func(m map[string]any) bool { return m["type"] == "ack" && m["id"] == 1.0 })
	readMsg(t, c, func(m map[string]any) bool { return m["type"] == "progress" })
	done := readMsg(t, c, func(m map[string]any) bool { return m["type"] == "progress" && m["running"] == false })
	if msg, _ := done["msg"].(string); !strings.HasPrefix(msg, "search done") {
		t.Fatalf("search ended with %q", msg)
	}
	st, _, _ := f.store.State(context.Background(), f.sess.ID)
	if st.Search == nil || len(st.Search.Designs) == 0 || st.Search.Designs[0].MarginDB < 0 {
		t.Fatalf("stored search %+v", st.Search)
	}
	best := st.Search.Designs[0]
	for _, p := range best.Parts {
		if p.ESeries != "E24" {
			t.Errorf("part %+v is not an E24 value", p)
		}
	}
	nbefore := len(st.Networks)
	c.WriteJSON(inMsg{Type: "form", ID: 2, Form: "search.use", Fields: map[string]string{"index": "0"}})
	readMsg(t, c, func(m map[string]any) bool { return m["type"] == "ack" && m["id"] == 2.0 })
	st, _, _ = f.store.State(context.Background(), f.sess.ID)
	if len(st.Networks) != nbefore+1 || len(st.Active().Parts) != len(best.Parts) {
		t.Fatalf("search.use: networks %d → %d", nbefore, len(st.Networks))
	}
	// The network built from the design shows, in the network panel, the
	// figures the search table shows for it and the search stored, to the
	// last printed digit: one evaluator (match.Evaluate) for both.
	sc := f.srv.scene(f.sess.ID, st)
	row := sc.networkView().Metrics[0]
	d := sc.searchView().Designs[0]
	if row.Worst != d.Worst || row.Worst != units.FormatDB(best.WorstRLdB) || row.PowerWorst != d.Power || !strings.Contains(d.Bands, "RL "+row.Worst+" (mean "+row.Mean+")") {
		t.Errorf("panel %q / %q, search table %q / %q (%s), stored %v dB", row.Worst, row.PowerWorst, d.Worst, d.Power, d.Bands, best.WorstRLdB)
	}
}

// A single-frequency L-network solution becomes a network in one action:
// at 100 MHz the 200 Ω load takes the L-3 values of REFERENCE-CHECKS §6c
// (shunt C 13.783 pF, series L 137.83 nH) in one of its solutions.
func TestSynthUse(t *testing.T) {
	t.Parallel()
	f, _ := netFixture(t)
	st, _, _ := f.store.State(context.Background(), f.sess.ID)
	sc := f.srv.scene(f.sess.ID, st)
	v := sc.searchView()
	found := -1
	for i, l := range v.LNets {
		if strings.Contains(l.Parts, "13.78 pF") && strings.Contains(l.Parts, "137.8 nH") {
			found = i
		}
	}
	if found < 0 {
		t.Fatalf("L-3 solution not among %+v", v.LNets)
	}
	ch, err := sc.searchChange("synth.use", map[string]string{"index": itoa(found)})
	if err != nil || ch.Op != sessions.OpNetworkAdd || len(ch.Parts) != 2 || math.Abs(ch.Parts[0].Value-13.783e-12) > 1e-15 {
		t.Fatalf("synth.use: %+v, %v", ch, err)
	}
	if _, err := sc.searchChange("synth.use", map[string]string{"index": "99"}); err == nil {
		t.Error("a missing solution was accepted")
	}
}

func itoa(i int) string { return strconv.Itoa(i) }

// TestSearchCancel cancels a search before it can finish: every slot of
// the search pool is held, so the search waits for one until it is
// cancelled, and its end must say so.
func TestSearchCancel(t *testing.T) {
	t.Parallel()
	f, _ := netFixture(t)
	for range cap(f.srv.searches) {
		f.srv.searches <- struct{}{}
	}
	t.Cleanup(func() {
		for range cap(f.srv.searches) {
			<-f.srv.searches
		}
	})
	c := wsDial(t, f, f.sess.EditToken)
	c.WriteJSON(inMsg{Type: "form", ID: 1, Form: "search.start", Fields: map[string]string{"parts": "4", "lseries": "E48", "cseries": "E48", "model": "0603"}})
	readMsg(t, c, func(m map[string]any) bool { return m["type"] == "ack" && m["id"] == 1.0 })
	c.WriteJSON(inMsg{Type: "form", ID: 2, Form: "search.start", Fields: map[string]string{"parts": "2", "lseries": "E24", "cseries": "E24"}})
	e := readMsg(t, c, func(m map[string]any) bool { return m["id"] == 2.0 })
	if e["type"] != "error" || !strings.Contains(e["msg"].(string), "already running") {
		t.Errorf("second search: %v", e)
	}
	c.WriteJSON(inMsg{Type: "action", ID: 3, Action: "search-cancel"})
	// The search's end and the cancel's answer, in either order.
	var end, ack map[string]any
	readMsg(t, c, func(m map[string]any) bool {
		if m["type"] == "progress" && m["running"] == false {
			end = m
		}
		if m["id"] == 3.0 {
			ack = m
		}
		return end != nil && ack != nil
	})
	if ack["type"] != "ack" {
		t.Errorf("cancel: %v, want an ack", ack)
	}
	if msg := end["msg"].(string); msg != "the search was cancelled" {
		t.Errorf("after cancel: %q, want \"the search was cancelled\"", msg)
	}
	// A viewer can neither start nor cancel.
	v := wsDial(t, f, f.sess.ViewToken)
	v.WriteJSON(inMsg{Type: "action", ID: 4, Action: "search-cancel"})
	if e := readMsg(t, v, func(m map[string]any) bool { return m["type"] == "error" }); !strings.Contains(e["msg"].(string), "view-only") {
		t.Errorf("viewer cancel: %v", e)
	}
}
