package server

import (
	"context"
	"encoding/json"
	"fmt"
	"matchbench/internal/browsertest"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"github.com/chromedp/cdproto/input"
	"github.com/chromedp/chromedp"
	"github.com/chromedp/chromedp/kb"

	"matchbench/rfmath"
	"matchbench/sessions"
)

func needBrowser(t *testing.T) { browsertest.Need(t) }

func browser(t *testing.T) context.Context { return browsertest.Start(t) }

// shotDir is where screenshots go: $MATCHBENCH_SHOTS when set (to look at
// them), else a temporary folder.
func shotDir(t *testing.T) string {
	if d := os.Getenv("MATCHBENCH_SHOTS"); d != "" {
		os.MkdirAll(d, 0o755)
		return d
	}
	return t.TempDir()
}

func shot(t *testing.T, ctx context.Context, path string) {
	t.Helper()
	b, err := chromedp.Run(ctx, chromedp.CaptureScreenshot())
	if err != nil {
		t.Fatalf("screenshot: %v", err)
	}
	if len(b) < 10000 {
		t.Errorf("screenshot %s is only %d bytes: blank page?", path, len(b))
	}
	os.WriteFile(path, b, 0o644)
}

const liveJS = `document.querySelector("#live-status") && document.querySelector("#live-status").classList.contains("on")`

// screenOf returns the client coordinates of Γ on the chart.
func screenOf(ctx context.Context, g complex128) ([]float64, error) {
	return chromedp.Run(ctx, chromedp.Evaluate[[]float64](fmt.Sprintf(`(() => {
		const svg = document.querySelector("#chart svg");
		const k = Number(svg.dataset.gammaScale);
		const p = svg.createSVGPoint();
		p.x = k * %g; p.y = -k * %g;
		const q = p.matrixTransform(svg.getScreenCTM());
		return [q.x, q.y];
	})()`, real(g), imag(g))))
}

func readoutFreq(ctx context.Context, mk string) (string, error) {
	return textIn(ctx, fmt.Sprintf(`#ro-%s [data-testid="ro-freq"]`, mk))
}

// textIn reads the text of the first element matching the CSS selector in
// one script, so a fragment landing between finding the node and reading it
// cannot fail the read (chromedp's TextContent takes two round trips and
// reports "No node with given id" when the page redraws in between). It
// errors when nothing matches.
func textIn(ctx context.Context, sel string) (string, error) {
	q, err := json.Marshal(sel)
	if err != nil {
		return "", err
	}
	return chromedp.Run(ctx, chromedp.Evaluate[string](`(() => {
		const e = document.querySelector(`+string(q)+`);
		if (!e) throw new Error("no element matches " + `+string(q)+`);
		return e.textContent;
	})()`))
}

// TestBrowserDragAndWatch loads a session in headless Chromium, drags a
// marker along its trace with the mouse, checks the readout follows in the
// editor and in a viewer's separate browser context, steps it with the
// keyboard, and uploads a bad file to see the reader's error.
func TestBrowserDragAndWatch(t *testing.T) {
	needBrowser(t)
	f := newFixture(t, 301)
	dir := shotDir(t)
	ctx := browser(t)
	ectx, cancel := context.WithTimeout(ctx, 90*time.Second)
	defer cancel()
	if err := chromedp.Do(ectx,
		chromedp.EmulateViewport(1400, 1000),
		chromedp.Navigate(f.ts.URL+"/s/"+f.sess.EditToken+"/"),
		chromedp.Poll[chromedp.Void](liveJS),
	); err != nil {
		t.Fatal(err)
	}
	if got, err := readoutFreq(ectx, f.mk); err != nil || got != "150 MHz" {
		t.Fatalf("readout before the drag: %q, %v", got, err)
	}

	// The viewer, in a browser context of its own.
	vtab, vcancel := chromedp.NewContext(ctx, chromedp.WithNewBrowserContext())
	defer vcancel()
	vctx, vcancel2 := context.WithTimeout(vtab, 60*time.Second)
	defer vcancel2()
	if err := chromedp.Do(vctx,
		chromedp.EmulateViewport(1400, 1000),
		chromedp.Navigate(f.ts.URL+"/s/"+f.sess.ViewToken+"/"),
		chromedp.Poll[chromedp.Void](liveJS),
	); err != nil {
		t.Fatal(err)
	}

	// Drag along the trace from 150 MHz to f0 = 159.155 MHz, where the
	// RLC is 5 Ω and Γ = −0.818182 (REFERENCE-CHECKS R-2).
	gammaAt := func(fHz float64) complex128 {
		w := 2 * math.Pi * fHz
		return rfmath.GammaFromZ(complex(5, w*100e-9-1/(w*10e-12)), 50)
	}
	start, err := screenOf(ectx, gammaAt(150e6))
	if err != nil {
		t.Fatal(err)
	}
	acts := []chromedp.Action[chromedp.Void]{chromedp.MouseEvent(chromedp.MousePressed, start[0], start[1], chromedp.ButtonLeft)}
	for i := 1; i <= 12; i++ {
		fr := 150e6 + (159.1549e6-150e6)*float64(i)/12
		p, err := screenOf(ectx, gammaAt(fr))
		if err != nil {
			t.Fatal(err)
		}
		acts = append(acts, chromedp.MouseEvent(chromedp.MouseMoved, p[0], p[1], chromedp.ButtonLeft), chromedp.Sleep(30*time.Millisecond))
	}
	end, _ := screenOf(ectx, gammaAt(159.1549e6))
	acts = append(acts, chromedp.MouseEvent(chromedp.MouseReleased, end[0], end[1], chromedp.ButtonLeft))
	if err := chromedp.Do(ectx, acts...); err != nil {
		t.Fatal(err)
	}
	near := func(mhz string) string {
		return fmt.Sprintf(`(() => { const e = document.querySelector('#ro-%s [data-testid="ro-freq"]'); return e && e.textContent.startsWith(%q); })()`, f.mk, mhz)
	}
	pctx, pcancel := context.WithTimeout(ectx, 10*time.Second)
	defer pcancel()
	if err := chromedp.Do(pctx, chromedp.Poll[chromedp.Void](near("159."))); err != nil {
		got, _ := readoutFreq(ectx, f.mk)
		t.Fatalf("editor readout after the drag is %q, want about 159.155 MHz: %v", got, err)
	}
	shot(t, ectx, filepath.Join(dir, "editor-after-drag.png"))
	wctx, wcancel := context.WithTimeout(vctx, 10*time.Second)
	defer wcancel()
	if err := chromedp.Do(wctx, chromedp.Poll[chromedp.Void](near("159."))); err != nil {
		got, _ := readoutFreq(vctx, f.mk)
		t.Fatalf("viewer readout is %q, want the editor's drag to show: %v", got, err)
	}
	shot(t, vctx, filepath.Join(dir, "viewer-after-drag.png"))
	if n, err := chromedp.Run(vctx, chromedp.Evaluate[int](`document.querySelectorAll('#drop, [data-action="undo"]').length`)); err != nil || n != 0 {
		t.Errorf("viewer page shows %d editing controls (%v)", n, err)
	}

	// The arrow key steps the selected marker to the next measured point:
	// the grid is 0.5 MHz, so 159.155 MHz → 159.5 MHz.
	before, _ := readoutFreq(ectx, f.mk)
	if err := chromedp.Do(ectx, chromedp.KeyEvent(kb.ArrowRight)); err != nil {
		t.Fatal(err)
	}
	kctx, kcancel := context.WithTimeout(ectx, 10*time.Second)
	defer kcancel()
	if err := chromedp.Do(kctx, chromedp.Poll[chromedp.Void](near("159.5 MHz"))); err != nil {
		got, _ := readoutFreq(ectx, f.mk)
		t.Errorf("after ArrowRight the readout is %q (was %q), want 159.5 MHz", got, before)
	}

	// Drag the marker's line along the reflection plot's frequency axis to
	// 200 MHz: the plot maps x to frequency from its data-x0/x1/f0/f1.
	pts, err := chromedp.Run(ectx, chromedp.Evaluate[[]float64](fmt.Sprintf(`(() => {
		const svg = document.querySelector("#plot-refl svg");
		const g = document.getElementById("refl-pmk-%s");
		const r = g.getBoundingClientRect();
		const at = (f) => {
			const d = svg.dataset, x = Number(d.x0) + (f - Number(d.f0)) / (Number(d.f1) - Number(d.f0)) * (Number(d.x1) - Number(d.x0));
			const p = svg.createSVGPoint(); p.x = x; p.y = Number(d.x0);
			const q = p.matrixTransform(svg.getScreenCTM());
			return q.x;
		};
		return [r.left + r.width / 2, r.top + r.height / 2, at(180e6), at(200e6)];
	})()`, f.mk)))
	if err != nil {
		t.Fatal(err)
	}
	if err := chromedp.Do(ectx,
		chromedp.MouseEvent(chromedp.MousePressed, pts[0], pts[1], chromedp.ButtonLeft),
		chromedp.MouseEvent(chromedp.MouseMoved, pts[2], pts[1], chromedp.ButtonLeft), chromedp.Sleep(50*time.Millisecond),
		chromedp.MouseEvent(chromedp.MouseMoved, pts[3], pts[1], chromedp.ButtonLeft), chromedp.Sleep(50*time.Millisecond),
		chromedp.MouseEvent(chromedp.MouseReleased, pts[3], pts[1], chromedp.ButtonLeft),
	); err != nil {
		t.Fatal(err)
	}
	dctx, dcancel := context.WithTimeout(ectx, 10*time.Second)
	defer dcancel()
	if err := chromedp.Do(dctx, chromedp.Poll[chromedp.Void](`(() => { const e = document.querySelector('#ro-`+f.mk+` [data-testid="ro-freq"]'); const v = e && parseFloat(e.textContent); return v > 198 && v < 202; })()`)); err != nil {
		got, _ := readoutFreq(ectx, f.mk)
		t.Errorf("after dragging along the plot the readout is %q, want about 200 MHz", got)
	}

	// A bad file: the reader's message with its line number appears.
	bad := filepath.Join(t.TempDir(), "bad.s1p")
	os.WriteFile(bad, []byte("! hand-made bad file\n# MHz S RI R 50\n100 0.1 0.2\n101 0.1\n"), 0o644)
	uctx, ucancel := context.WithTimeout(ectx, 15*time.Second)
	defer ucancel()
	if err := chromedp.Do(uctx,
		chromedp.SetUploadFiles(chromedp.CSS("#file-input"), []string{bad}),
		chromedp.Poll[chromedp.Void](`document.querySelector("#upload-errors").textContent.includes("bad.s1p:4")`),
	); err != nil {
		txt, _ := textIn(ectx, "#upload-errors")
		t.Fatalf("upload error shown: %q: %v", txt, err)
	}
	shot(t, ectx, filepath.Join(dir, "editor-bad-upload.png"))
	txt, _ := textIn(ectx, "#upload-errors")
	if !strings.Contains(txt, "bad.s1p:4") {
		t.Errorf("upload errors %q", txt)
	}
	_ = input.MouseButtonLeft
}

// TestBrowserMatching builds a network in the browser: start one on the
// 200 Ω load (netFixture's load, without its network), add a shunt
// capacitor and a series inductor with the buttons, see the band figures
// appear, then drag the inductor's point on the chart and see its value
// follow.
func TestBrowserMatching(t *testing.T) {
	needBrowser(t)
	f, nid := netFixture(t)
	ctx0 := context.Background()
	if _, err := f.store.Apply(ctx0, f.sess.ID, sessions.Change{Op: sessions.OpNetworkRemove, NetworkID: nid}); err != nil {
		t.Fatal(err)
	}
	dir := shotDir(t)
	ctx := browser(t)
	ectx, cancel := context.WithTimeout(ctx, 90*time.Second)
	defer cancel()
	must, waitFor := steps(t, ectx, 10*time.Second)
	must(chromedp.Do(ectx,
		chromedp.EmulateViewport(1400, 1700),
		chromedp.Navigate(f.ts.URL+"/s/"+f.sess.EditToken+"/"),
		chromedp.Poll[chromedp.Void](liveJS),
		chromedp.Evaluate[chromedp.Void](`window.addEventListener("error", e => { window.__errs = (window.__errs || []).concat(e.message); })`),
		chromedp.Click(chromedp.CSS(`[data-testid="network-add"] button`)),
	))
	waitFor(`!!document.querySelector('[data-testid="add-shunt_C"]')`)
	must(chromedp.Do(ectx, chromedp.Click(chromedp.CSS(`[data-testid="add-shunt_C"]`))))
	waitFor(`document.querySelectorAll('[data-testid="part-row"]').length === 1`)
	must(chromedp.Do(ectx, chromedp.Click(chromedp.CSS(`[data-testid="add-series_L"]`))))
	waitFor(`document.querySelectorAll('[data-testid="part-row"]').length === 2 && !!document.querySelector('[data-testid="net-worst"]')`)
	before, err := textIn(ectx, `[data-testid="net-worst"]`)
	must(err)
	// Type the L-3 values (REFERENCE-CHECKS §6c): the band's worst return
	// loss then rises well above 10 dB.
	must(chromedp.Do(ectx,
		chromedp.SetValue(chromedp.CSS(`[data-testid="part-row"][data-index="0"] [data-testid="part-value"]`), "13.783p"),
		chromedp.Evaluate[chromedp.Void](`document.querySelector('[data-testid="part-row"][data-index="0"] [data-testid="part-value"]').dispatchEvent(new Event("change", {bubbles: true}))`),
	))
	waitFor(`document.querySelector('[data-testid="part-row"][data-index="0"] [data-testid="part-value"]').value === "13.78 pF"`)
	must(chromedp.Do(ectx,
		chromedp.SetValue(chromedp.CSS(`[data-testid="part-row"][data-index="1"] [data-testid="part-value"]`), "137.83n"),
		chromedp.Evaluate[chromedp.Void](`document.querySelector('[data-testid="part-row"][data-index="1"] [data-testid="part-value"]').dispatchEvent(new Event("change", {bubbles: true}))`),
	))
	waitFor(`document.querySelector('[data-testid="part-row"][data-index="1"] [data-testid="part-value"]').value === "137.8 nH"`)
	waitFor(`parseFloat(document.querySelector('[data-testid="net-worst"]').textContent) > 20`)
	after, _ := textIn(ectx, `[data-testid="net-worst"]`)
	if before == after {
		t.Errorf("band figure did not change: %q", after)
	}
	shot(t, ectx, filepath.Join(dir, "matching-built.png"))

	// Drag L1's point on the chart toward a larger inductance: along its
	// constant-resistance circle, clockwise (upward here).
	st, _, _ := f.store.State(ctx0, f.sess.ID)
	sc := f.srv.scene(f.sess.ID, st)
	segs, handles := sc.net.path(-1, 0, 1)
	from := handles[1].Gamma
	zStart := rfmath.ZFromGamma(segs[1].Points[0], 50)
	var path []complex128
	for i := 1; i <= 10; i++ {
		l := 137.83e-9 * (1 + 0.05*float64(i))
		z := zStart + complex(0, 2*math.Pi*100e6*l)
		path = append(path, rfmath.GammaFromZ(z, 50))
	}
	// Typing scrolled the part's field into view: back to the chart.
	must(chromedp.Do(ectx, chromedp.Evaluate[chromedp.Void](`document.activeElement.blur(); window.scrollTo(0, 0)`)))
	p0, err := screenOf(ectx, from)
	must(err)
	acts := []chromedp.Action[chromedp.Void]{chromedp.MouseEvent(chromedp.MousePressed, p0[0], p0[1], chromedp.ButtonLeft)}
	for _, g := range path {
		p, err := screenOf(ectx, g)
		must(err)
		acts = append(acts, chromedp.MouseEvent(chromedp.MouseMoved, p[0], p[1], chromedp.ButtonLeft), chromedp.Sleep(40*time.Millisecond))
	}
	pe, _ := screenOf(ectx, path[len(path)-1])
	acts = append(acts, chromedp.MouseEvent(chromedp.MouseReleased, pe[0], pe[1], chromedp.ButtonLeft))
	must(chromedp.Do(ectx, acts...))
	// 137.83 nH × 1.5 = 206.7 nH, within the drag's pixel rounding.
	waitFor(`(() => { const v = parseFloat(document.querySelector('[data-testid="part-row"][data-index="1"] [data-testid="part-value"]').value); return v > 190 && v < 225; })()`)
	shot(t, ectx, filepath.Join(dir, "matching-dragged.png"))
}
