package server

import (
	"bytes"
	"context"
	"io"
	"log/slog"
	"net/http/httptest"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"github.com/chromedp/chromedp"

	"matchbench/internal/demo"
	"matchbench/rfmath/touchstone"
	"matchbench/sessions"
)

// TestBrowserTuningRound runs a round of bench tuning in a real browser on
// the invented Fieldnode (internal/demo): the antenna and the network the
// search chose are in the session; the engineer uploads the sweep of the
// first board as built, picks it as the board as built with the board as
// declared (0402 pads, 0.5 mm of trace between L2 and C1), fits it, reads
// the fitted values with their uncertainties and the warnings, and makes
// the suggested swap the next candidate network with one click; the round
// stays listed with the swap chosen.
func TestBrowserTuningRound(t *testing.T) {
	needBrowser(t)
	st, err := sessions.Open(t.TempDir())
	if err != nil {
		t.Fatal(err)
	}
	ctx0 := context.Background()
	se, _ := st.Create(ctx0, "tuning")
	var sweepID, builtFile string
	dir := t.TempDir()
	for _, f := range demo.Generate() {
		switch f.Name {
		case "fieldnode-antenna.s1p":
			ev, err := st.Apply(ctx0, se.ID, sessions.Change{Op: sessions.OpSweepAdd, Name: "fieldnode", FileName: f.Name, Raw: []byte("!\n"), Sweep: f.Sweep})
			if err != nil {
				t.Fatal(err)
			}
			sweepID = ev.SweepID
		case "fieldnode-first-build.s1p":
			var b bytes.Buffer
			if err := touchstone.Write(&b, f.Sweep, touchstone.WriteOptions{FreqUnit: "MHz", Digits: 10}); err != nil {
				t.Fatal(err)
			}
			builtFile = filepath.Join(dir, f.Name)
			if err := os.WriteFile(builtFile, b.Bytes(), 0o644); err != nil {
				t.Fatal(err)
			}
		}
	}
	for _, b := range demo.FieldnodeBands {
		st.Apply(ctx0, se.ID, sessions.Change{Op: sessions.OpBandSet, Name: b.Name, LoHz: b.LoHz, HiHz: b.HiHz, MinReturnLossDB: b.MinReturnLossDB})
	}
	var ps []sessions.Part
	for _, p := range demo.FieldnodeDesign {
		ps = append(ps, sessions.Part{Kind: p.Kind, Value: p.Value, ESeries: "E24", Model: "0402"})
	}
	if _, err := st.Apply(ctx0, se.ID, sessions.Change{Op: sessions.OpNetworkAdd, Name: "Search 1", SweepID: sweepID, DesignHz: 866.5e6, Parts: ps}); err != nil {
		t.Fatal(err)
	}
	srv := New(Config{Store: st, Log: slog.New(slog.NewTextHandler(io.Discard, nil))})
	ts := httptest.NewServer(srv)
	t.Cleanup(func() { srv.Shutdown(); ts.Close(); st.Close() })
	shots := shotDir(t)
	ctx := browser(t)
	ectx, cancel := context.WithTimeout(ctx, 120*time.Second)
	defer cancel()
	must := func(err error) {
		t.Helper()
		if err != nil {
			t.Fatal(err)
		}
	}
	waitFor := func(js string) {
		t.Helper()
		wctx, c := context.WithTimeout(ectx, 30*time.Second)
		defer c()
		if err := chromedp.Do(wctx, chromedp.Poll[chromedp.Void](js)); err != nil {
			t.Fatalf("waiting for %s: %v", js, err)
		}
	}
	text := func(sel string) string {
		t.Helper()
		s, err := textIn(ectx, sel)
		must(err)
		return s
	}
	must(chromedp.Do(ectx,
		chromedp.EmulateViewport(1366, 2400),
		chromedp.Navigate(ts.URL+"/s/"+se.EditToken+"/"),
		chromedp.Poll[chromedp.Void](liveJS),
	))
	waitFor(`!!document.querySelector('[data-testid="tuning-panel"]')`)
	if strings.Contains(text(`[data-testid="tuning-panel"]`), "Round 1") {
		t.Fatal("a round before any fit")
	}

	// The limits are computed in the derived-results pool and the page is
	// redrawn when they arrive, replacing the file input: upload after.
	waitFor(`!document.body.textContent.includes("computing…")`)

	// Upload the re-measurement; the tuning form offers it.
	// (The panel redraw that adds the sweep replaces the upload's status
	// line, so the form's list is what tells that it arrived.)
	must(chromedp.Do(ectx, chromedp.SetUploadFiles(chromedp.CSS("#file-input"), []string{builtFile})))
	waitFor(`[...document.querySelectorAll('[data-testid="tune-form"] select[name="builtId"] option')].some(o => o.textContent.includes("first-build"))`)

	// The board as declared, and fit.
	must(chromedp.Do(ectx, chromedp.Evaluate[chromedp.Void](`(() => {
		const f = document.querySelector('[data-testid="tune-form"]');
		const sel = f.querySelector('[name="builtId"]');
		sel.value = [...sel.options].find(o => o.textContent.includes("first-build")).value;
		f.querySelector('[name="footprint"]').value = "0402";
		f.querySelector('[name="traces"]').value = "2:0.5mm:53.13:3.178";
		f.querySelector('[data-testid="tune-fit"]').click();
	})()`)))
	waitFor(`document.querySelectorAll('[data-testid="tune-round"]').length === 1`)
	waitFor(`document.querySelectorAll('[data-testid="tune-param"]').length === 7`)
	params := text(`[data-testid="tune-params"]`)
	for _, w := range []string{"L1", "L2", "C1", "pads at the L1–L2 node", "trace L2–C1", "± "} {
		if !strings.Contains(params, w) {
			t.Errorf("fitted values lack %q: %s", w, params)
		}
	}
	if n, _ := chromedp.Run(ectx, chromedp.Evaluate[int](`document.querySelectorAll('[data-testid="tune-warning"]').length`)); n == 0 {
		t.Error("no warning shown: the demo's pads beside L2 and C1 cannot be told apart")
	}
	if s := text(`[data-testid="tune-asbuilt"]`); !strings.Contains(s, "misses") {
		t.Errorf("the first build as fitted: %q", s)
	}
	best := text(`[data-testid="tune-swap"]:has([data-testid="tune-best"])`)
	if !strings.Contains(best, "L2 1.8 nH → 1.5 nH") || !strings.Contains(best, "+") {
		t.Errorf("best suggestion row %q", best)
	}
	panelShot(t, ectx, filepath.Join(shots, "tuning-round.png"))

	// One click: the suggestion is the next candidate network.
	must(chromedp.Do(ectx, chromedp.Evaluate[chromedp.Void](`document.querySelector('[data-testid="tune-swap"]:has([data-testid="tune-best"]) [data-testid="tune-use"]').click()`)))
	waitFor(`!!document.querySelector('[data-testid="tune-chosen"]')`)
	waitFor(`[...document.querySelectorAll('[data-testid="part-value"]')].map(e => e.value).join("|") === "1.8 nH|1.5 nH|7.5 pF"`)
	if s := text(`[data-testid="tune-chosen"]`); !strings.Contains(s, "Round 1: L2 1.8 nH → 1.5 nH") {
		t.Errorf("chosen: %q", s)
	}
	if s := text(`[data-testid="board-text"]`); !strings.Contains(s, "0402 pads") || !strings.Contains(s, "trace L2–C1") {
		t.Errorf("the next network's board: %q", s)
	}
	panelShot(t, ectx, filepath.Join(shots, "tuning-chosen.png"))
}

// panelShot writes a screenshot of the tuning panel alone.
func panelShot(t *testing.T, ctx context.Context, path string) {
	t.Helper()
	b, err := chromedp.Run(ctx, chromedp.Screenshot(chromedp.CSS(`#tuning-panel`)))
	if err != nil {
		t.Fatalf("screenshot: %v", err)
	}
	if len(b) < 10000 {
		t.Errorf("screenshot %s is only %d bytes: blank panel?", path, len(b))
	}
	os.WriteFile(path, b, 0o644)
}
