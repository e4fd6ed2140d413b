package server

import (
	"context"
	"io"
	"log/slog"
	"net/http/httptest"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
	"time"

	"github.com/chromedp/chromedp"

	"matchbench/internal/demo"
	"matchbench/sessions"
)

// TestBrowserLossAware opens the invented Fieldnode antenna (internal/demo)
// with a 3-part network of typical 0402 parts, lowers one inductor's own Q
// in the panel and sees the power that reaches the load fall while the
// network's own loss rises and is flagged in words; then it runs the
// return-loss-only search and sees designs flagged for burning the power
// they accept.
func TestBrowserLossAware(t *testing.T) {
	needBrowser(t)
	st, err := sessions.Open(t.TempDir())
	if err != nil {
		t.Fatal(err)
	}
	ctx0 := context.Background()
	se, _ := st.Create(ctx0, "loss")
	var sweepID string
	for _, f := range demo.Generate() {
		if f.Name == "fieldnode-antenna.s1p" {
			ev, err := st.Apply(ctx0, se.ID, sessions.Change{Op: sessions.OpSweepAdd, Name: "fieldnode", FileName: f.Name, Raw: []byte("!\n"), Sweep: f.Sweep})
			if err != nil {
				t.Fatal(err)
			}
			sweepID = ev.SweepID
		}
	}
	for _, b := range demo.FieldnodeBands {
		st.Apply(ctx0, se.ID, sessions.Change{Op: sessions.OpBandSet, Name: b.Name, LoHz: b.LoHz, HiHz: b.HiHz, MinReturnLossDB: b.MinReturnLossDB})
	}
	ps := []sessions.Part{
		{Kind: sessions.PartShuntL, Value: 1.8e-9, ESeries: "E24", Model: "0402"},
		{Kind: sessions.PartSeriesL, Value: 1.8e-9, ESeries: "E24", Model: "0402"},
		{Kind: sessions.PartShuntC, Value: 7.5e-12, ESeries: "E24", Model: "0402"},
	}
	if _, err := st.Apply(ctx0, se.ID, sessions.Change{Op: sessions.OpNetworkAdd, Name: "three parts", SweepID: sweepID, DesignHz: 866.5e6, Parts: ps}); err != nil {
		t.Fatal(err)
	}
	srv := New(Config{Store: st, Log: slog.New(slog.NewTextHandler(io.Discard, nil))})
	ts := httptest.NewServer(srv)
	t.Cleanup(func() { srv.Shutdown(); ts.Close(); st.Close() })
	dir := shotDir(t)
	ctx := browser(t)
	ectx, cancel := context.WithTimeout(ctx, 120*time.Second)
	defer cancel()
	must, waitFor := steps(t, ectx, 30*time.Second)
	share := func() float64 { // the first band's worst power to the load, in %
		t.Helper()
		s, err := textIn(ectx, `[data-testid="net-power-worst"]`)
		must(err)
		v, err := strconv.ParseFloat(strings.Fields(s)[0], 64)
		must(err)
		return v
	}
	must(chromedp.Do(ectx,
		chromedp.EmulateViewport(1366, 1800),
		chromedp.Navigate(ts.URL+"/s/"+se.EditToken+"/"),
		chromedp.Poll[chromedp.Void](liveJS),
	))
	waitFor(`!!document.querySelector('[data-testid="net-power-worst"]')`)
	before := share()
	if n, _ := chromedp.Run(ectx, chromedp.Evaluate[int](`document.querySelectorAll('[data-testid="net-loss-note"]').length`)); n != 0 {
		t.Errorf("%d loss warnings before the Q is lowered", n)
	}
	// L1's own Q of 2: its loss resistance is ωL/2 (REFERENCE-CHECKS LS-2).
	must(chromedp.Do(ectx, chromedp.Evaluate[chromedp.Void](`(() => {
		const f = document.querySelector('form[data-form="part.params"]');
		f.querySelector('[name="q"]').value = "2";
		f.querySelector('[name="qRef"]').value = "866M";
		f.requestSubmit();
	})()`)))
	waitFor(`parseFloat(document.querySelector('[data-testid="net-power-worst"]').textContent) < ` + strconv.FormatFloat(before-5, 'f', 2, 64))
	waitFor(`document.querySelectorAll('[data-testid="net-loss-note"]').length > 0`)
	after := share()
	note, _ := textIn(ectx, `[data-testid="net-loss-note"]`)
	if !strings.Contains(note, "heat") {
		t.Errorf("loss note %q", note)
	}
	t.Logf("worst power to the load: %.1f %% with the typical Q, %.1f %% with Q 2", before, after)
	shot(t, ectx, filepath.Join(dir, "loss-low-q.png"))

	// The return-loss-only search: its best designs match by burning power.
	must(chromedp.Do(ectx, chromedp.Evaluate[chromedp.Void](`(() => {
		const f = document.querySelector('[data-testid="search-form"]');
		f.querySelector('[name="objective"]').value = "rl";
		f.querySelector('[name="model"]').value = "0402";
		f.requestSubmit();
	})()`)))
	waitFor(`document.querySelectorAll('[data-testid="search-design"]').length > 0`)
	waitFor(`document.querySelectorAll('[data-testid="search-over"]').length > 0`)
	shot(t, ectx, filepath.Join(dir, "loss-rl-search.png"))
}
