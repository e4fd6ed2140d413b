package server

import (
	"context"
	"encoding/json"
	"fmt"
	"io"
	"log/slog"
	"math"
	"math/cmplx"
	"net/http/httptest"
	"strings"
	"testing"
	"time"

	"github.com/chromedp/cdproto/input"
	"github.com/chromedp/chromedp"

	"matchbench/rfmath"
	"matchbench/sessions"
)

// The real-browser tests of the session page's own view and panels: one
// test for each point of the page's engineering standard (plots, span,
// chart zoom, resonances, lines, typing, wording, uploads, labels) and one
// for drawing mixed reference impedances right.

// tab drives one browser tab through a test.
type tab struct {
	t   *testing.T
	ctx context.Context
}

func (p tab) must(err error) {
	p.t.Helper()
	if err != nil {
		p.t.Fatal(err)
	}
}

// wait polls js until it is true (15 s), failing with the page's notice.
func (p tab) wait(js string) {
	p.t.Helper()
	wctx, cancel := context.WithTimeout(p.ctx, 15*time.Second)
	defer cancel()
	if err := chromedp.Do(wctx, chromedp.Poll[chromedp.Void](js)); err != nil {
		notice, _ := chromedp.Run(p.ctx, chromedp.Evaluate[string](`(document.querySelector("#notice")||{}).textContent || ""`))
		p.t.Fatalf("waiting for %s: %v (notice: %q)", js, err, notice)
	}
}

// js evaluates js and decodes its value into a T.
func js[T any](p tab, src string) T {
	p.t.Helper()
	v, err := chromedp.Run(p.ctx, chromedp.Evaluate[T](src))
	if err != nil {
		p.t.Fatalf("evaluating %s: %v", src, err)
	}
	return v
}

// do runs src in the page for its effects.
func (p tab) do(src string) {
	p.t.Helper()
	p.must(chromedp.Do(p.ctx, chromedp.Evaluate[chromedp.Void](src)))
}

// set types value into the element sel and fires the change event, as a
// user leaving the field does.
func (p tab) set(sel, value string) {
	p.t.Helper()
	p.do(fmt.Sprintf(`(() => { const e = document.querySelector(%q); e.value = %q; e.dispatchEvent(new Event("change", {bubbles: true})); })()`, sel, value))
}

// submit fills the named fields of the form sel and submits it.
func (p tab) submit(sel string, fields map[string]string) {
	p.t.Helper()
	b, _ := json.Marshal(fields)
	p.do(fmt.Sprintf(`(() => { const f = document.querySelector(%q); const v = %s; for (const k in v) f.elements.namedItem(k).value = v[k]; f.requestSubmit(); })()`, sel, b))
}

// openPage starts a browser at w × h on the session's page (edit link, or
// view link with view set) and waits for it to be live.
func openPage(t *testing.T, ts *httptest.Server, se *sessions.Session, view bool, w, h int64) tab {
	t.Helper()
	ctx := browser(t)
	tctx, cancel := context.WithTimeout(ctx, 150*time.Second)
	t.Cleanup(cancel)
	tok := se.EditToken
	if view {
		tok = se.ViewToken
	}
	p := tab{t, tctx}
	p.must(chromedp.Do(tctx,
		chromedp.EmulateViewport(w, h),
		chromedp.Navigate(ts.URL+"/s/"+tok+"/"),
		chromedp.Poll[chromedp.Void](liveJS),
	))
	return p
}

// pageFixture starts a server on a fresh store with one session that
// setup fills.
func pageFixture(t *testing.T, setup func(st *sessions.Store, sid string)) (*httptest.Server, *sessions.Store, *sessions.Session) {
	t.Helper()
	st, err := sessions.Open(t.TempDir())
	if err != nil {
		t.Fatal(err)
	}
	se, err := st.Create(context.Background(), "page")
	if err != nil {
		t.Fatal(err)
	}
	setup(st, se.ID)
	srv := New(Config{Store: st, Log: slog.New(slog.NewTextHandler(io.Discard, nil))})
	ts := httptest.NewServer(srv)
	t.Cleanup(func() { srv.Shutdown(); ts.Close(); st.Close() })
	return ts, st, se
}

// apply applies ch to the session or fails, returning the event.
func apply(t *testing.T, st *sessions.Store, sid string, ch sessions.Change) sessions.Event {
	t.Helper()
	ev, err := st.Apply(context.Background(), sid, ch)
	if err != nil {
		t.Fatalf("%s: %v", ch.Op, err)
	}
	return ev
}

// addSweep adds sw to the session under name and returns its id.
func addSweep(t *testing.T, st *sessions.Store, sid, name string, sw *rfmath.Sweep) string {
	t.Helper()
	return apply(t, st, sid, sessions.Change{Op: sessions.OpSweepAdd, Name: name, FileName: name + ".s1p", Raw: []byte("!\n"), Sweep: sw}).SweepID
}

// markerScreen returns the client position of chart marker id: its group's
// translate taken through the chart's screen matrix.
func markerScreen(p tab, id string) []float64 {
	p.t.Helper()
	return js[[]float64](p, fmt.Sprintf(`(() => {
		const svg = document.querySelector("#chart svg");
		const g = document.getElementById("mk-%s");
		if (!g) return [];
		const m = g.transform.baseVal.consolidate().matrix;
		const q = svg.createSVGPoint(); q.x = m.e; q.y = m.f;
		const s = q.matrixTransform(svg.getScreenCTM());
		return [s.x, s.y];
	})()`, id))
}

// gammaScreen returns the client position of Γ on the chart as drawn,
// honouring its scale and centre.
func gammaScreen(p tab, g complex128) []float64 {
	p.t.Helper()
	return js[[]float64](p, fmt.Sprintf(`(() => {
		const svg = document.querySelector("#chart svg");
		const k = Number(svg.dataset.gammaScale);
		const [cr, ci] = svg.dataset.gammaCentre.split(" ").map(Number);
		const q = svg.createSVGPoint(); q.x = k * (%g - cr); q.y = -k * (%g - ci);
		const s = q.matrixTransform(svg.getScreenCTM());
		return [s.x, s.y];
	})()`, real(g), imag(g)))
}

func dist(a, b []float64) float64 {
	if len(a) < 2 || len(b) < 2 {
		return math.Inf(1)
	}
	return math.Hypot(a[0]-b[0], a[1]-b[1])
}

// TestBrowserMixedReferences draws the same impedance measured against
// 50 Ω and against 75 Ω: both sweeps' markers land on one chart point
// within a pixel, the point of Γ = (Z − Z0)/(Z + Z0) at the chart's
// reference; a chart at 75 Ω moves both together and says so; and showing
// one sweep in another reference (its reference plane) moves neither.
func TestBrowserMixedReferences(t *testing.T) {
	needBrowser(t)
	// A series RLC (REFERENCE-CHECKS §9 R-1 with R = 30 Ω) at both
	// references: the same impedance at every frequency.
	z := func(f float64) complex128 {
		w := 2 * math.Pi * f
		return complex(30, w*100e-9-1/(w*10e-12))
	}
	mk := func(z0 float64) *rfmath.Sweep {
		s := rfmath.NewSweep(151, 1, z0)
		for k := range s.FreqHz {
			s.FreqHz[k] = 100e6 + 1e6*float64(k)
			s.Data[k] = rfmath.GammaFromZ(z(s.FreqHz[k]), complex(z0, 0))
		}
		return s
	}
	var a, b, ma, mb string
	ts, st, se := pageFixture(t, func(st *sessions.Store, sid string) {
		a = addSweep(t, st, sid, "at50", mk(50))
		b = addSweep(t, st, sid, "at75", mk(75))
		ma = apply(t, st, sid, sessions.Change{Op: sessions.OpMarkerAdd, SweepID: a, Port: 1, FreqHz: 140e6}).MarkerID
		mb = apply(t, st, sid, sessions.Change{Op: sessions.OpMarkerAdd, SweepID: b, Port: 1, FreqHz: 140e6}).MarkerID
	})
	p := openPage(t, ts, se, false, 1366, 900)
	dir := shotDir(t)
	at := func(z0 float64) {
		t.Helper()
		pa, pb := markerScreen(p, ma), markerScreen(p, mb)
		want := gammaScreen(p, rfmath.GammaFromZ(z(140e6), complex(z0, 0)))
		if d := dist(pa, pb); d > 1 {
			t.Errorf("chart at %g Ω: the 50 Ω and 75 Ω sweeps' markers are %.2f px apart (%v, %v), want ≤ 1", z0, d, pa, pb)
		}
		if d := dist(pa, want); d > 1 {
			t.Errorf("chart at %g Ω: marker at %v, Γ of the impedance at %v (%.2f px off)", z0, pa, want, d)
		}
	}
	at(50)
	if txt := js[string](p, `document.querySelector("#chart svg").textContent`); !strings.Contains(txt, "Z₀ = 50 Ω") {
		t.Errorf("the chart does not state its reference: %.200q", txt)
	}
	shot(t, p.ctx, dir+"/mixed-50.png")

	// The chart at 75 Ω: both move together, and the chart says 75 Ω.
	p.set(`[data-view="z0"]`, "75")
	p.wait(`document.querySelector("#chart svg").textContent.includes("Z₀ = 75 Ω")`)
	at(75)

	// Sweep "at50" shown in 75 Ω (its reference plane): the other sweep's
	// marker does not move, and the two still coincide.
	before := markerScreen(p, mb)
	apply(t, st, se.ID, sessions.Change{Op: sessions.OpSweepRefPlane, SweepID: a, RefPlane: &sessions.RefPlane{RenormOhm: 75}})
	p.wait(`document.querySelector("#sweeps-panel").textContent.includes("shown in 75 Ω")`)
	if d := dist(before, markerScreen(p, mb)); d > 1 {
		t.Errorf("showing one sweep in 75 Ω moved the other sweep's marker by %.2f px", d)
	}
	at(75)
	shot(t, p.ctx, dir+"/mixed-75.png")
}

// wheel turns the mouse wheel at (x, y) by deltaY pixels.
func wheel(p tab, x, y, deltaY float64) {
	p.t.Helper()
	p.must(chromedp.Do(p.ctx, chromedp.MouseEvent(chromedp.MouseWheel, x, y, func(e *input.DispatchMouseEventParams) { e.DeltaX, e.DeltaY = 1e-6, deltaY })))
}

// chartState returns the drawn chart's radius in Γ and its centre.
func chartState(p tab) (radius float64, centre complex128) {
	v := js[[]float64](p, `(() => { const s = document.querySelector("#chart svg"); const [a, b] = s.dataset.gammaCentre.split(" ").map(Number); return [Number(s.dataset.gammaRadius), a, b]; })()`)
	return v[0], complex(v[1], v[2])
}

// TestBrowserChartZoom zooms the chart with the wheel about a marker (the
// marker stays under the pointer), drags the marker along its trace while
// zoomed (the readout follows, so the page's mapping from the screen to Γ
// honours the zoom and the centre), pans by dragging the empty chart, and
// resets; then zooms onto a matching network's part point and drags it.
func TestBrowserChartZoom(t *testing.T) {
	needBrowser(t)
	f := newFixture(t, 301)
	p := openPage(t, f.ts, f.sess, false, 1366, 900)
	gammaAt := func(fHz float64) complex128 { // the RLC of rlcSweep
		w := 2 * math.Pi * fHz
		return rfmath.GammaFromZ(complex(5, w*100e-9-1/(w*10e-12)), 50)
	}
	start := markerScreen(p, f.mk)
	for range 5 {
		wheel(p, start[0], start[1], -240)
		time.Sleep(60 * time.Millisecond)
	}
	p.wait(`Number(document.querySelector("#chart svg").dataset.gammaRadius) < 0.5`)
	p.wait(`!document.querySelector("#chart svg").style.transform`)
	r, c := chartState(p)
	if c == 0 {
		t.Errorf("zoomed about a marker off the centre, yet the chart is centred on Γ = 0 (radius %g)", r)
	}
	if d := dist(markerScreen(p, f.mk), start); d > 3 {
		t.Errorf("the marker under the pointer moved %.1f px while zooming ×%.3g", d, 1/r)
	}
	shot(t, p.ctx, shotDir(t)+"/zoomed.png")

	// Drag the marker along the trace from 150 to 155 MHz, zoomed.
	acts := []chromedp.Action[chromedp.Void]{chromedp.MouseEvent(chromedp.MousePressed, start[0], start[1], chromedp.ButtonLeft)}
	for i := 1; i <= 8; i++ {
		q := gammaScreen(p, gammaAt(150e6+5e6*float64(i)/8))
		acts = append(acts, chromedp.MouseEvent(chromedp.MouseMoved, q[0], q[1], chromedp.ButtonLeft), chromedp.Sleep(30*time.Millisecond))
	}
	end := gammaScreen(p, gammaAt(155e6))
	acts = append(acts, chromedp.MouseEvent(chromedp.MouseReleased, end[0], end[1], chromedp.ButtonLeft))
	p.must(chromedp.Do(p.ctx, acts...))
	p.wait(`(() => { const v = parseFloat(document.querySelector('#ro-` + f.mk + ` [data-testid="ro-freq"]').textContent); return v > 154.5 && v < 155.5; })()`)

	// Pan: drag the empty chart (a point away from the trace) to the left:
	// the centre moves right.
	_, c0 := chartState(p)
	box := js[[]float64](p, `(() => { const r = document.querySelector("#chart svg").getBoundingClientRect(); return [r.left, r.top, r.width]; })()`)
	x0, y0 := box[0]+box[2]*0.15, box[1]+box[2]*0.15
	p.must(chromedp.Do(p.ctx,
		chromedp.MouseEvent(chromedp.MousePressed, x0, y0, chromedp.ButtonLeft),
		chromedp.MouseEvent(chromedp.MouseMoved, x0-40, y0, chromedp.ButtonLeft), chromedp.Sleep(40*time.Millisecond),
		chromedp.MouseEvent(chromedp.MouseMoved, x0-80, y0, chromedp.ButtonLeft), chromedp.Sleep(40*time.Millisecond),
		chromedp.MouseEvent(chromedp.MouseReleased, x0-80, y0, chromedp.ButtonLeft),
	))
	p.wait(fmt.Sprintf(`Number(document.querySelector("#chart svg").dataset.gammaCentre.split(" ")[0]) > %g`, real(c0)+1e-3))
	p.wait(`!document.querySelector("#chart svg").style.transform`)
	if got := js[string](p, `document.querySelector('#ro-`+f.mk+` [data-testid="ro-freq"]').textContent`); !strings.HasPrefix(got, "15") {
		t.Errorf("panning moved the marker: readout %q", got)
	}

	// Reset.
	p.do(`document.querySelector('[data-testid="chart-reset"]').click()`)
	p.wait(`document.querySelector("#chart svg").dataset.gammaRadius === "1"`)

	// A matching network: zoom onto L1's point, then drag it along its
	// constant-resistance circle toward a larger inductance.
	nf, _ := netFixture(t)
	q := openPage(t, nf.ts, nf.sess, false, 1366, 900)
	stt, _, _ := nf.store.State(context.Background(), nf.sess.ID)
	sc := nf.srv.scene(nf.sess.ID, stt)
	segs, handles := sc.net.path(-1, 0, 1)
	h := gammaScreen(q, handles[1].Gamma)
	for range 4 {
		wheel(q, h[0], h[1], -240)
		time.Sleep(60 * time.Millisecond)
	}
	q.wait(`Number(document.querySelector("#chart svg").dataset.gammaRadius) < 0.6 && !document.querySelector("#chart svg").style.transform`)
	zStart := rfmath.ZFromGamma(segs[1].Points[0], 50)
	h = gammaScreen(q, handles[1].Gamma)
	acts = []chromedp.Action[chromedp.Void]{chromedp.MouseEvent(chromedp.MousePressed, h[0], h[1], chromedp.ButtonLeft)}
	var last []float64
	for i := 1; i <= 10; i++ {
		l := 137.83e-9 * (1 + 0.02*float64(i))
		last = gammaScreen(q, rfmath.GammaFromZ(zStart+complex(0, 2*math.Pi*100e6*l), 50))
		acts = append(acts, chromedp.MouseEvent(chromedp.MouseMoved, last[0], last[1], chromedp.ButtonLeft), chromedp.Sleep(40*time.Millisecond))
	}
	acts = append(acts, chromedp.MouseEvent(chromedp.MouseReleased, last[0], last[1], chromedp.ButtonLeft))
	q.must(chromedp.Do(q.ctx, acts...))
	shot(t, q.ctx, shotDir(t)+"/zoomed-part-drag.png")
	// 137.83 nH × 1.2 = 165.4 nH, within the drag's pixel rounding.
	q.wait(`(() => { const v = parseFloat(document.querySelector('[data-testid="part-row"][data-index="1"] [data-testid="part-value"]').value); return v > 160 && v < 171; })()`)
	_ = cmplx.Abs
}
