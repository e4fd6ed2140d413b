package server

import (
	"context"
	"fmt"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"github.com/chromedp/chromedp"

	"matchbench/rfmath/amp"
	"matchbench/rfmath/units"
)

// TestBrowserAmplifierPanel opens the invented LNA transistor's amplifier
// view at 2.44 GHz in headless Chromium: the gain and noise circles and
// the handles appear on the two charts; dragging the Γs handle in the
// source plane with the mouse moves it and updates the noise figure and
// the gains in the readout to rfmath/amp's figures at the Γs the session
// stored; at 1 GHz the page says why there is no conjugate match and
// shades the unstable sources.
func TestBrowserAmplifierPanel(t *testing.T) {
	needBrowser(t)
	f, tf := ampFixture(t, 2.44e9)
	dir := shotDir(t)
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
		return strings.TrimSpace(s)
	}
	must(chromedp.Do(ectx,
		chromedp.EmulateViewport(1366, 1400),
		chromedp.Navigate(f.ts.URL+"/s/"+f.sess.EditToken+"/"),
		chromedp.Poll[chromedp.Void](liveJS),
	))
	// The circles appear, drawn inside the source-plane chart.
	n, err := chromedp.Run(ectx, chromedp.Evaluate[int](`(() => {
		const svg = document.querySelector("#amp-src svg");
		const box = svg.getBoundingClientRect();
		let n = 0;
		for (const id of ["amps-region-ga0", "amps-region-ga1", "amps-region-nf0"]) {
			const c = document.getElementById(id).querySelector("circle");
			const b = c.getBoundingClientRect();
			if (b.width > 10 && b.left >= box.left - 1 && b.right <= box.right + 1) n++;
		}
		return n + (document.getElementById("ampl-region-gp0") ? 1 : 0);
	})()`))
	must(err)
	if n != 4 {
		t.Errorf("%d of the 4 gain and noise circles appear on the charts", n)
	}
	must(chromedp.Do(ectx, chromedp.ScrollIntoView(chromedp.ID("amp-src"))))
	shot(t, ectx, filepath.Join(dir, "amp-before-drag.png"))
	nf0, ga0 := text(`[data-testid="amp-nf"]`), text(`[data-testid="amp-ga"]`)

	// Drag the Γs handle 60 px right and 50 px down in a dozen moves.
	p0, err := chromedp.Run(ectx, chromedp.Evaluate[[]float64](`(() => {
		const b = document.getElementById("amps-spot-gs").getBoundingClientRect();
		return [b.left + b.width / 2, b.top + b.height / 2];
	})()`))
	must(err)
	acts := []chromedp.Action[chromedp.Void]{chromedp.MouseEvent(chromedp.MousePressed, p0[0], p0[1], chromedp.ButtonLeft)}
	for i := 1; i <= 12; i++ {
		acts = append(acts, chromedp.MouseEvent(chromedp.MouseMoved, p0[0]+5*float64(i), p0[1]+4*float64(i), chromedp.ButtonLeft), chromedp.Sleep(30*time.Millisecond))
	}
	acts = append(acts, chromedp.MouseEvent(chromedp.MouseReleased, p0[0]+60, p0[1]+48, chromedp.ButtonLeft))
	must(chromedp.Do(ectx, acts...))
	// The page settles on the session's stored Γs: its figures, by
	// rfmath/amp, are what the readout shows.
	np, _ := amp.NoiseAt(tf.Noise, 2.44e9)
	s, _ := amp.SAt(tf.Sweep, 2.44e9)
	var want [3]string
	deadline := time.Now().Add(20 * time.Second)
	for {
		st := f.state(t)
		if g := st.Amp.GammaS; g != nil {
			gs := complex(g.Re, g.Im)
			gl := complex(0, 0)
			if o := amp.GammaOut(s, gs); real(o)*real(o)+imag(o)*imag(o) < 1 {
				gl = complex(real(o), -imag(o))
			}
			want = [3]string{units.FormatDB(amp.NoiseFigureDB(np, 50, gs)), "available G_A " + units.FormatDB(amp.DB(amp.AvailableGain(s, gs))), "G_T " + units.FormatDB(amp.DB(amp.TransducerGain(s, gs, gl)))}
			got := [3]string{text(`[data-testid="amp-nf"]`), text(`[data-testid="amp-ga"]`), text(`[data-testid="amp-gt"]`)}
			if got == want {
				break
			}
			if time.Now().After(deadline) {
				t.Fatalf("after the drag the readout shows %q; rfmath/amp at the stored Γs = %v gives %q", got, gs, want)
			}
		} else if time.Now().After(deadline) {
			t.Fatal("the drag stored no Γs")
		}
		time.Sleep(100 * time.Millisecond)
	}
	if want[0] == nf0 || want[1] == ga0 {
		t.Errorf("the noise figure (%s → %s) or the gain (%s → %s) did not change with Γs", nf0, want[0], ga0, want[1])
	}
	moved, err := chromedp.Run(ectx, chromedp.Evaluate[bool](fmt.Sprintf(`(() => {
		const b = document.getElementById("amps-spot-gs").getBoundingClientRect();
		return Math.abs(b.left + b.width / 2 - %g) > 30;
	})()`, p0[0])))
	must(err)
	if !moved {
		t.Error("the Γs handle did not move on the chart")
	}
	t.Logf("Γs dragged: NF %s → %s, %s → %s", nf0, want[0], ga0, want[1])
	shot(t, ectx, filepath.Join(dir, "amp-after-drag.png"))

	// At 1 GHz: no conjugate match, and the reason; the unstable side is
	// shaded.
	must(chromedp.Do(ectx, chromedp.Evaluate[chromedp.Void](`(() => {
		const f = document.querySelector('[data-testid="amp-set"]');
		f.querySelector('[name="freq"]').value = "1G";
		f.requestSubmit();
	})()`)))
	waitFor(`document.querySelector('[data-testid="amp-conj"]').textContent.includes("No simultaneous conjugate match")`)
	waitFor(`!!document.querySelector('#amps-region-instab path[fill-opacity]')`)
	shot(t, ectx, filepath.Join(dir, "amp-1ghz.png"))
}
