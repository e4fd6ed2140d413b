package server

import (
	"fmt"
	"math"
	"math/cmplx"
	"strings"
	"testing"
	"time"

	"github.com/chromedp/chromedp"

	"matchbench/rfmath"
	"matchbench/sessions"
)

// lineSweep is a 2-port of a nearly matched line: S21 = S12 =
// 0.9·e^(−jωT) with T = 2 ns, S11 = S22 = 0.1·e^(−j2ωT), 100–250 MHz, so its
// transmission's group delay is T exactly (REFERENCE-CHECKS §10: 1 ns is
// −360°/GHz in transmission).
func lineSweep() *rfmath.Sweep {
	const T = 2e-9
	s := rfmath.NewSweep(301, 2, 50)
	for k := range s.FreqHz {
		f := 100e6 + 0.5e6*float64(k)
		s.FreqHz[k] = f
		w := 2 * math.Pi * f
		r, tr := cmplx.Rect(0.1, -2*w*T), cmplx.Rect(0.9, -w*T)
		s.Set(k, 0, 0, r)
		s.Set(k, 1, 1, r)
		s.Set(k, 1, 0, tr)
		s.Set(k, 0, 1, tr)
	}
	return s
}

// xTicks returns the frequencies of a plot's x tick labels, in Hz.
func xTicks(p tab, plot string) []float64 {
	p.t.Helper()
	labels := js[[]string](p, fmt.Sprintf(`[...document.querySelectorAll("#plot-%s svg [id$='axes'] text")].map(e => e.textContent).filter(s => / [kMG]?Hz$/.test(s))`, plot))
	var out []float64
	for _, s := range labels {
		var v float64
		var unit string
		fmt.Sscanf(s, "%g %s", &v, &unit)
		switch unit {
		case "kHz":
			v *= 1e3
		case "MHz":
			v *= 1e6
		case "GHz":
			v *= 1e9
		}
		out = append(out, v)
	}
	return out
}

// within reports whether every tick lies in [lo, hi] and there are at
// least three.
func within(ticks []float64, lo, hi float64) bool {
	if len(ticks) < 3 {
		return false
	}
	for _, v := range ticks {
		if v < lo-1 || v > hi+1 {
			return false
		}
	}
	return true
}

// TestBrowserPlotsAndSpan picks what the plots show and reads their titles
// and axes: return loss, the group delay of a line's S21 (2 ns, its known
// delay), S22 on the chart; sets the span by typing, by dragging across a
// plot, by fitting the bands, and resets it, reading the frequency ticks;
// fixes a y range and reads the y ticks; and shows that a viewer's choice
// of plot is its own.
func TestBrowserPlotsAndSpan(t *testing.T) {
	needBrowser(t)
	ts, _, se := pageFixture(t, func(st *sessions.Store, sid string) {
		addSweep(t, st, sid, "rlc", rlcSweep(301))
		addSweep(t, st, sid, "line", lineSweep())
		apply(t, st, sid, sessions.Change{Op: sessions.OpBandSet, Name: "ISM", LoHz: 150e6, HiHz: 170e6, MinReturnLossDB: 10})
	})
	p := openPage(t, ts, se, false, 1366, 900)
	title := func(plot string) string {
		return js[string](p, fmt.Sprintf(`document.querySelector("#plot-%s svg [id$='axes']").textContent`, plot))
	}

	// Return loss of S11, with its axis.
	p.set(`select[data-view-plot="refl"]`, "S11:rl")
	p.wait(`document.querySelector("#plot-refl svg").textContent.includes("Return loss from S11")`)
	if got := title("refl"); !strings.Contains(got, "Return loss (dB)") {
		t.Errorf("return-loss plot's axes: %q", got)
	}
	// The limit line of the band reads +10 dB on a return-loss plot.
	if got := js[string](p, `document.querySelector("#plot-refl svg [id$='bandnames']").textContent`); !strings.Contains(got, "limit 10 dB") {
		t.Errorf("return-loss plot's limit label: %q", got)
	}

	// The group delay of the line's S21: its curve lies on the y tick of 2 ns.
	p.set(`select[data-view-plot="p3"]`, "S21:gd")
	p.wait(`document.querySelector("#plot-p3 svg").textContent.includes("Group delay of S21")`)
	gd := js[[]float64](p, `(() => {
		const svg = document.querySelector("#plot-p3 svg");
		const tick = [...svg.querySelectorAll("[id$='axes'] text")].find(e => Math.abs(parseFloat(e.textContent.replace("−", "-")) - 2) < 1e-9 && e.getAttribute("text-anchor") !== "middle" && !/Hz/.test(e.textContent));
		const d = svg.querySelector("[id*='series-'] path[clip-path]").getAttribute("d");
		const y = Number(d.replace(/^M/, "").split(/[ l]/)[1]);
		return tick ? [Number(tick.getAttribute("y")), y] : [];
	})()`)
	shot(t, p.ctx, shotDir(t)+"/plots-gd.png")
	if len(gd) != 2 || math.Abs(gd[0]-gd[1]) > 1.5 {
		t.Errorf("group delay of S21: the curve (y %v) is not on the 2 ns tick", gd)
	}

	// S22 only on the chart.
	p.set(`[data-testid="chart-param"]`, "S22")
	p.wait(`!document.querySelector("#chart svg [id$='legend']").textContent.includes("rlc") && document.querySelector("#chart svg [id$='legend']").textContent.includes("line S22")`)

	// The span, typed.
	p.submit(`[data-testid="span"]`, map[string]string{"spanLo": "150M", "spanHi": "170M"})
	p.wait(`document.querySelector('[data-testid="span-lo"]').value === "150 MHz"`)
	if tk := xTicks(p, "refl"); !within(tk, 150e6, 170e6) {
		t.Errorf("typed span 150–170 MHz: ticks %v", tk)
	}
	// Reset, then drag across the reflection plot from 180 to 220 MHz.
	p.do(`document.querySelector('[data-testid="span-reset"]').click()`)
	p.wait(`document.querySelector('[data-testid="span-lo"]').value === "100 MHz"`)
	if tk := xTicks(p, "refl"); !within(tk, 100e6, 250e6) || tk[len(tk)-1]-tk[0] < 100e6 {
		t.Errorf("whole sweep: ticks %v", tk)
	}
	xs := js[[]float64](p, `(() => {
		const svg = document.querySelector("#plot-refl svg"), d = svg.dataset;
		const at = (f) => { const q = svg.createSVGPoint(); q.x = Number(d.x0) + (f - Number(d.f0)) / (Number(d.f1) - Number(d.f0)) * (Number(d.x1) - Number(d.x0)); q.y = 120; return q.matrixTransform(svg.getScreenCTM()); };
		const a = at(180e6), b = at(220e6);
		return [a.x, b.x, a.y];
	})()`)
	p.must(chromedp.Do(p.ctx,
		chromedp.MouseEvent(chromedp.MousePressed, xs[0], xs[2], chromedp.ButtonLeft),
		chromedp.MouseEvent(chromedp.MouseMoved, (xs[0]+xs[1])/2, xs[2], chromedp.ButtonLeft), chromedp.Sleep(30*time.Millisecond),
		chromedp.MouseEvent(chromedp.MouseMoved, xs[1], xs[2], chromedp.ButtonLeft), chromedp.Sleep(30*time.Millisecond),
		chromedp.MouseEvent(chromedp.MouseReleased, xs[1], xs[2], chromedp.ButtonLeft),
	))
	p.wait(`document.querySelector('[data-testid="span-lo"]').value.startsWith("18")`)
	if tk := xTicks(p, "refl"); !within(tk, 179e6, 221e6) {
		t.Errorf("span dragged over 180–220 MHz: ticks %v", tk)
	}
	// All plots share it.
	if tk := xTicks(p, "zx"); !within(tk, 179e6, 221e6) {
		t.Errorf("the R, X plot does not share the span: ticks %v", tk)
	}
	// Fit to the band: 150–170 MHz with 5 MHz either side.
	p.do(`document.querySelector('[data-testid="span-bands"]').click()`)
	p.wait(`document.querySelector('[data-testid="span-lo"]').value === "145 MHz" && document.querySelector('[data-testid="span-hi"]').value === "175 MHz"`)
	if tk := xTicks(p, "refl"); !within(tk, 145e6, 175e6) {
		t.Errorf("span fitted to the band: ticks %v", tk)
	}

	// A fixed y range on the R, X plot, then back to the data.
	p.submit(`form[data-slot="zx"]`, map[string]string{"ymin": "-40", "ymax": "60"})
	p.wait(`!!document.querySelector('[data-testid="yauto-zx"]')`)
	yt := js[[]string](p, `[...document.querySelectorAll("#plot-zx svg [id$='axes'] g[text-anchor='end'] text")].map(e => e.textContent)`)
	if len(yt) == 0 || yt[0] != "−40" || yt[len(yt)-1] != "60" {
		t.Errorf("fixed range −40…60 Ω: y ticks %v", yt)
	}
	p.do(`document.querySelector('[data-testid="yauto-zx"]').click()`)
	p.wait(`!document.querySelector('[data-testid="yauto-zx"]')`)
	shot(t, p.ctx, shotDir(t)+"/plots-span.png")

	// A viewer picks its own plot; the editor's stays.
	v := openPage(t, ts, se, true, 1366, 900)
	v.set(`select[data-view-plot="refl"]`, "S11:vswr")
	v.wait(`document.querySelector("#plot-refl svg").textContent.includes("VSWR from S11")`)
	time.Sleep(300 * time.Millisecond)
	if got := js[string](p, `document.querySelector("#plot-refl svg [id$='axes']").textContent`); !strings.Contains(got, "Return loss from S11") {
		t.Errorf("a viewer's choice of plot changed the editor's: %q", got)
	}
}
