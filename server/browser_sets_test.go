package server

import (
	"context"
	"io"
	"log/slog"
	"net/http/httptest"
	"path/filepath"
	"testing"
	"time"

	"github.com/chromedp/chromedp"

	"matchbench/internal/demo"
	"matchbench/sessions"
)

// TestBrowserLoadSet groups the wrist tag's three invented conditions
// (internal/demo) into a set in the browser, judges the network across it,
// runs the search across the set and uses a design: the new network is
// judged across the set and meets the band on every member.
func TestBrowserLoadSet(t *testing.T) {
	needBrowser(t)
	st, err := sessions.Open(t.TempDir())
	if err != nil {
		t.Fatal(err)
	}
	ctx0 := context.Background()
	se, _ := st.Create(ctx0, "sets")
	files := map[string]demo.File{}
	for _, f := range demo.Generate() {
		files[f.Name] = f
	}
	var first string
	for _, name := range []string{"wristtag-antenna.s1p", "wristtag-wrist.s1p", "wristtag-enclosure.s1p"} {
		ev, err := st.Apply(ctx0, se.ID, sessions.Change{Op: sessions.OpSweepAdd, Name: name[:len(name)-4], FileName: name, Raw: []byte("!\n"), Sweep: files[name].Sweep})
		if err != nil {
			t.Fatal(err)
		}
		if first == "" {
			first = ev.SweepID
		}
	}
	b := demo.WristtagBands[0]
	st.Apply(ctx0, se.ID, sessions.Change{Op: sessions.OpBandSet, Name: b.Name, LoHz: b.LoHz, HiHz: b.HiHz, MinReturnLossDB: b.MinReturnLossDB})
	st.Apply(ctx0, se.ID, sessions.Change{Op: sessions.OpNetworkAdd, SweepID: first, DesignHz: 2.44e9})
	srv := New(Config{Store: st, Log: slog.New(slog.NewTextHandler(io.Discard, nil))})
	ts := httptest.NewServer(srv)
	t.Cleanup(func() { srv.Shutdown(); ts.Close(); st.Close() })

	dir := shotDir(t)
	ctx := browser(t)
	ectx, cancel := context.WithTimeout(ctx, 120*time.Second)
	defer cancel()
	must, waitFor := steps(t, ectx, 30*time.Second)
	must(chromedp.Do(ectx,
		chromedp.EmulateViewport(1366, 1800),
		chromedp.Navigate(ts.URL+"/s/"+se.EditToken+"/"),
		chromedp.Poll[chromedp.Void](liveJS),
	))
	// Tick the three sweeps and group them.
	must(chromedp.Do(ectx, chromedp.Evaluate[chromedp.Void](`(() => {
		const f = document.querySelector('[data-testid="set-add"]');
		f.querySelector('[name="name"]').value = "three conditions";
		for (const c of f.querySelectorAll('[data-testid="set-sweep"]')) c.checked = true;
		f.requestSubmit();
	})()`)))
	waitFor(`document.querySelectorAll('[data-testid="set-row"]').length === 1 && !!document.querySelector('[data-testid="net-set"]')`)
	// Judge the network across the set.
	must(chromedp.Do(ectx, chromedp.Evaluate[chromedp.Void](`(() => {
		const s = document.querySelector('[data-testid="net-set"]');
		s.value = s.options[1].value;
		s.closest("form").requestSubmit();
	})()`)))
	waitFor(`!!document.querySelector('[data-testid="search-target"]')`)
	// Search across the set with the loss-aware objective, then use the best design.
	must(chromedp.Do(ectx, chromedp.Evaluate[chromedp.Void](`(() => {
		const f = document.querySelector('[data-testid="search-form"]');
		f.querySelector('[name="parts"]').value = "3";
		f.querySelector('[name="target"]').value = "set";
		f.requestSubmit();
	})()`)))
	waitFor(`document.querySelectorAll('[data-testid="search-design"]').length > 0`)
	must(chromedp.Do(ectx, chromedp.Click(chromedp.CSS(`[data-testid="search-use"]`))))
	waitFor(`document.querySelectorAll('[data-testid="net-member"]').length === 3 && document.querySelectorAll('[data-testid="part-row"]').length > 0`)
	pass, err := chromedp.Run(ectx, chromedp.Evaluate[int](`[...document.querySelectorAll('[data-testid="net-member"]')].filter(r => r.classList.contains("pass")).length`))
	must(err)
	if pass != 3 {
		t.Errorf("%d of 3 members pass with the set's best design", pass)
	}
	shot(t, ectx, filepath.Join(dir, "load-set.png"))
	// The stored state agrees: the new network is judged across the set.
	cur, _, _ := st.State(ctx0, se.ID)
	if n := cur.Active(); n == nil || n.SetID == "" || len(cur.LoadSets) != 1 || len(cur.LoadSets[0].Members) != 3 {
		t.Errorf("state: active %+v, sets %+v", n, cur.LoadSets)
	}
}
