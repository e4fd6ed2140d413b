package server

import (
	"context"
	"errors"
	"fmt"
	"strconv"
	"strings"
	"sync"
	"sync/atomic"
	"testing"
	"time"

	"matchbench/rfmath/match"
	"matchbench/sessions"
)

// hugeMCFixture is a session on a 10,001-point sweep of the R-1 series RLC
// with a band requirement and a 2-part network whose Monte Carlo is set to
// builds builds.
func hugeMCFixture(t *testing.T, builds int) *fixture {
	t.Helper()
	f := newFixture(t, 10001)
	ctx := context.Background()
	if _, err := f.store.Apply(ctx, f.sess.ID, sessions.Change{Op: sessions.OpBandSet, Name: "b", LoHz: 150e6, HiHz: 170e6, MinReturnLossDB: 6}); err != nil {
		t.Fatal(err)
	}
	ev, err := f.store.Apply(ctx, f.sess.ID, sessions.Change{Op: sessions.OpNetworkAdd, SweepID: f.sweep, DesignHz: 160e6,
		Parts: []sessions.Part{{Kind: sessions.PartShuntC, Value: 10e-12, ESeries: "E24"}, {Kind: sessions.PartSeriesL, Value: 47e-9, ESeries: "E24"}}})
	if err != nil {
		t.Fatal(err)
	}
	if _, err := f.store.Apply(ctx, f.sess.ID, sessions.Change{Op: sessions.OpNetworkSet, NetworkID: ev.NetworkID, YieldBuilds: builds}); err != nil {
		t.Fatal(err)
	}
	return f
}

// A view link's page load never runs the Monte Carlo: with 100,000 builds
// on a 10,001-point sweep (about 20 s of work, the Monte Carlo's own time
// limit, on the development machine), six view GETs at once are each
// answered within 5 s, say the results are computing, and start one
// computation between them, not six.
func TestViewGetDoesNotCompute(t *testing.T) {
	t.Parallel()
	f := hugeMCFixture(t, 100000)
	var wg sync.WaitGroup
	times := make([]time.Duration, 6)
	pages := make([]string, 6)
	for i := range 6 {
		wg.Add(1)
		go func() {
			defer wg.Done()
			t0 := time.Now()
			code, page := get(t, f.ts.URL+"/s/"+f.sess.ViewToken+"/")
			times[i] = time.Since(t0)
			if code != 200 {
				t.Errorf("view GET %d: status %d", i, code)
			}
			pages[i] = page
		}()
	}
	wg.Wait()
	for i := range 6 {
		if times[i] > 5*time.Second {
			t.Errorf("view GET %d took %v; the bound is 5 s", i, times[i])
		}
		if !strings.Contains(pages[i], "Monte Carlo of 100000 builds: computing") {
			t.Errorf("view GET %d does not say the Monte Carlo is computing", i)
		}
	}
	d := f.srv.derived
	d.mu.Lock()
	jobs := 0
	for k := range d.entries {
		if k.kind == "yield" {
			jobs++
		}
	}
	d.mu.Unlock()
	if jobs != 1 {
		t.Errorf("%d Monte Carlo jobs for one state; want 1", jobs)
	}
	t.Logf("six view GETs at once: %v", times)
}

// A page that shows "computing…" is filled in when the result is ready:
// its websocket gets a redraw with the Monte Carlo's summary and cloud, and
// a page loaded afterwards has them at once.
func TestDerivedFillsIn(t *testing.T) {
	t.Parallel()
	f := hugeMCFixture(t, 300)
	code, page := get(t, f.ts.URL+"/s/"+f.sess.ViewToken+"/")
	if code != 200 {
		t.Fatalf("status %d", code)
	}
	vw := wsDial(t, f, f.sess.ViewToken)
	// The page's own version, as its script would say hello with it.
	v := pageVersion(t, page)
	vw.WriteJSON(inMsg{Type: "hello", V: v})
	var got outMsg
	c := vw
	c.SetReadDeadline(time.Now().Add(60 * time.Second))
	for {
		var m outMsg
		if err := c.ReadJSON(&m); err != nil {
			t.Fatalf("no update with the Monte Carlo's results: %v", err)
		}
		if m.Type == "update" && fragHas(m, "network-panel", `data-testid="yield-summary"`) {
			got = m
			break
		}
	}
	if !fragHas(got, "chart", `id="trace-mc-0"`) {
		t.Error("the update with the results does not draw the builds on the chart")
	}
	_, page = get(t, f.ts.URL+"/s/"+f.sess.ViewToken+"/")
	if !strings.Contains(page, `data-testid="yield-summary"`) || strings.Contains(page, "computing") {
		t.Error("a page loaded after the result does not show it at once")
	}
}

// pageVersion reads the data-version of a session page.
func pageVersion(t *testing.T, page string) int64 {
	t.Helper()
	_, rest, ok := strings.Cut(page, `data-version="`)
	if !ok {
		t.Fatal("the page has no data-version")
	}
	s, _, _ := strings.Cut(rest, `"`)
	v, err := strconv.ParseInt(s, 10, 64)
	if err != nil {
		t.Fatal(err)
	}
	return v
}

// fragHas reports whether m's fragment id holds s.
func fragHas(m outMsg, id, s string) bool {
	for _, fr := range m.Frags {
		if fr.ID == id && strings.Contains(fr.HTML, s) {
			return true
		}
	}
	return false
}

// Searches run at most DerivedWorkers at a time, across all sessions; the
// others wait their turn (and can be cancelled while they wait).
func TestSearchesBounded(t *testing.T) {
	t.Parallel()
	f := newFixtureOpts(t, 11, sessions.Options{}, func(c *Config) { c.DerivedWorkers = 1 })
	var running, most atomic.Int32
	gate := make(chan struct{})
	search := func() (*match.Result, error) {
		n := running.Add(1)
		for {
			m := most.Load()
			if n <= m || most.CompareAndSwap(m, n) {
				break
			}
		}
		<-gate
		running.Add(-1)
		return &match.Result{}, nil
	}
	var wg sync.WaitGroup
	for i := range 3 {
		wg.Add(1)
		go func() {
			defer wg.Done()
			if _, err := f.srv.searchInPool(context.Background(), fmt.Sprint("s", i), search); err != nil {
				t.Error(err)
			}
		}()
	}
	waitFor(5*time.Second, func() bool { return running.Load() == 1 })
	time.Sleep(50 * time.Millisecond) // a second search would be running by now
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	if _, err := f.srv.searchInPool(ctx, "late", search); !errors.Is(err, context.Canceled) {
		t.Errorf("a cancelled wait: %v", err)
	}
	close(gate)
	wg.Wait()
	if most.Load() != 1 {
		t.Errorf("%d searches ran at once; the pool has 1 worker", most.Load())
	}
}

// The redraw that brings a derived result is drawn for each page's own
// view: a page whose chart is at 75 Ω (view "v9") gets a chart tagged as
// its view, with the Monte Carlo's builds, renormalised to its reference.
func TestDerivedRedrawKeepsView(t *testing.T) {
	t.Parallel()
	f := hugeMCFixture(t, 300)
	c := wsDial(t, f, f.sess.ViewToken)
	c.WriteJSON(inMsg{Type: "view", ID: 3, Fields: map[string]string{"vid": "v9", "z0": "75"}})
	c.SetReadDeadline(time.Now().Add(60 * time.Second))
	for {
		var m outMsg
		if err := c.ReadJSON(&m); err != nil {
			t.Fatalf("no redraw with the Monte Carlo's results: %v", err)
		}
		if m.Type == "error" {
			t.Fatalf("error %q", m.Msg)
		}
		if m.Type != "update" || !fragHas(m, "chart", `id="trace-mc-0"`) {
			continue
		}
		if !fragHas(m, "chart", `data-tag="v9"`) || !fragHas(m, "chart-bar", `value="75"`) {
			t.Errorf("the redraw with the results is not drawn for the page's view (tag v9 at 75 Ω)")
		}
		return
	}
}
