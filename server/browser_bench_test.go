package server

import (
	"context"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"net/http"
	"sort"
	"testing"
	"time"

	"github.com/chromedp/cdproto/cdp"
	"github.com/chromedp/cdproto/page"
	"github.com/chromedp/chromedp"

	"matchbench/internal/browsertest"
	"matchbench/sessions"
)

// The browser side of the bench as an engineer feels it, measured in
// headless Chromium (scripts/bench prints the figures with their targets;
// no test fails on a timing).
//
// An instrument is put into every page before its own script runs: it
// wraps the page's WebSocket to record, on the page's own clock
// (performance.timeOrigin + performance.now(), epoch milliseconds shared by
// every tab of the browser), when each message is sent (with the last
// pointer event before it), each ack (id → version) and each update
// (version) arrives, and, once the page's own handler has swapped the
// update's fragments in, the frame that paints them (the timestamp of the
// next requestAnimationFrame) with the marker's readout frequency as it then
// reads; and it collects long tasks. The latency of a pointer event is then
// exact: the event is carried by the first message sent after it, whose ack
// names a version; the frame that counts is the one that paints the first
// update of at least that version. (Watching the readout's text for a change
// instead would miss a move whose frequency reads as the one before, and
// charge it to the next move's frame.)
const instrumentJS = `(() => {
	const T0 = performance.timeOrigin, now = () => T0 + performance.now();
	const mb = window.__mb = { ptr: [], sent: [], acks: {}, upd: [], painted: [], frames: [], long: [], sel: null };
	document.addEventListener("pointermove", e => { if (e.buttons) mb.ptr.push(T0 + e.timeStamp); }, true);
	// afterPaint runs f once the frame whose requestAnimationFrame callbacks
	// are running has done its style, layout and paint: a message posted from
	// a rAF callback is delivered only after the frame's rendering step.
	const afterPaint = f => { const c = new MessageChannel(); c.port1.onmessage = f; c.port2.postMessage(0); };
	const WS = window.WebSocket;
	window.WebSocket = function (...a) {
		const s = new WS(...a);
		const send = s.send.bind(s);
		s.send = d => {
			try { const m = JSON.parse(d); if (m.type === "change" || m.type === "partdrag") mb.sent.push({ id: m.id, t: now(), p: mb.ptr.length ? mb.ptr[mb.ptr.length - 1] : 0 }); } catch {}
			return send(d);
		};
		s.addEventListener("message", ev => {
			const t = now();
			try {
				const m = JSON.parse(ev.data);
				if (m.type === "ack") mb.acks[m.id] = m.v;
				if (m.type === "update") {
					mb.upd.push({ v: m.v, t });
					// After the page's own listener (a later one) has run.
					setTimeout(() => {
						const el = mb.sel && document.querySelector(mb.sel), txt = el ? el.textContent : null;
						requestAnimationFrame(() => afterPaint(() => mb.painted.push({ v: m.v, t, frame: now(), txt })));
					}, 0);
				}
			} catch {}
		});
		return s;
	};
	window.WebSocket.prototype = WS.prototype;
	Object.assign(window.WebSocket, { OPEN: WS.OPEN, CLOSED: WS.CLOSED, CONNECTING: WS.CONNECTING, CLOSING: WS.CLOSING });
	let rec = false;
	const tick = ts => { if (!rec) return; mb.frames.push(T0 + ts); requestAnimationFrame(tick); };
	mb.record = on => { rec = on; if (on) requestAnimationFrame(tick); };
	try { new PerformanceObserver(l => { for (const e of l.getEntries()) mb.long.push(e.duration); }).observe({ type: "longtask", buffered: true }); } catch {}
})()`

// instrument adds instrumentJS to every document the tab ctx opens.
func instrument(ctx context.Context) error {
	return chromedp.Do(ctx, chromedp.Func(func(ctx context.Context, t *chromedp.Target) error {
		_, err := cdp.Call(ctx, t, page.AddScriptToEvaluateOnNewDocument, page.AddScriptToEvaluateOnNewDocumentParams{Source: instrumentJS})
		return err
	}))
}

// pageRecord is what the instrument collected, as the page holds it.
type pageRecord struct {
	Ptr  []float64 `json:"ptr"`
	Sent []struct {
		ID int64   `json:"id"`
		T  float64 `json:"t"`
		P  float64 `json:"p"`
	} `json:"sent"`
	Acks map[string]int64 `json:"acks"`
	Upd  []struct {
		V int64   `json:"v"`
		T float64 `json:"t"`
	} `json:"upd"`
	Painted []struct {
		V     int64   `json:"v"`
		T     float64 `json:"t"`
		Frame float64 `json:"frame"`
		Txt   string  `json:"txt"`
	} `json:"painted"`
	Frames []float64 `json:"frames"`
	Long   []float64 `json:"long"`
}

func readRecord(ctx context.Context) (pageRecord, error) {
	var r pageRecord
	s, err := chromedp.Run(ctx, chromedp.Evaluate[string](`JSON.stringify(window.__mb)`))
	if err != nil {
		return r, err
	}
	err = json.Unmarshal([]byte(s), &r)
	return r, err
}

// latencies returns, for every pointer event the editor's record ed holds,
// the time until the frame of the page record view (the editor's own, or a
// viewer's) that paints the first update at least as new as the version
// acknowledging the message that carried the event. An event whose message
// was never acknowledged, or changed nothing (its ack names a version that
// arrived before it was sent), is left out.
func latencies(ed, view pageRecord) []float64 {
	var out []float64
	for _, p := range ed.Ptr {
		// The first message sent after the event carries it.
		k := sort.Search(len(ed.Sent), func(i int) bool { return ed.Sent[i].T >= p })
		if k == len(ed.Sent) {
			continue
		}
		v, ok := ed.Acks[fmt.Sprint(ed.Sent[k].ID)]
		if !ok {
			continue
		}
		first := -1
		for i, u := range view.Painted {
			if u.V >= v && (first < 0 || u.T < view.Painted[first].T) {
				first = i
			}
		}
		if first >= 0 && view.Painted[first].T >= ed.Sent[k].T {
			out = append(out, view.Painted[first].Frame-p)
		}
	}
	return out
}

// percentile returns the q-quantile (0 to 1) of xs by the nearest rank.
func percentile(xs []float64, q float64) float64 {
	if len(xs) == 0 {
		return math.NaN()
	}
	s := append([]float64(nil), xs...)
	sort.Float64s(s)
	i := int(math.Ceil(q*float64(len(s)))) - 1
	return s[max(0, min(i, len(s)-1))]
}

// browserFixture is a session of n sweeps of points points each (the
// benchmarks' R–L–C sweep, each a little detuned), with a marker on the
// first and, with a network, the demo's three parts on it.
func browserFixture(b *testing.B, n, points int, network bool, yieldBuilds int) *fixture {
	b.Helper()
	f := newFixture(b, points)
	ctx := context.Background()
	for i := 1; i < n; i++ {
		sw := rlcSweep(points)
		for k := range sw.Data {
			sw.Data[k] *= complex(1-0.01*float64(i), 0)
		}
		if _, err := f.store.Apply(ctx, f.sess.ID, sessions.Change{Op: sessions.OpSweepAdd, Name: fmt.Sprintf("rlc %d", i+1), FileName: "rlc.s1p", Raw: touchstoneBytes(b, sw), Sweep: sw}); err != nil {
			b.Fatal(err)
		}
	}
	if network {
		if _, err := f.store.Apply(ctx, f.sess.ID, sessions.Change{Op: sessions.OpBandSet, Name: "band", LoHz: 140e6, HiHz: 160e6, MinReturnLossDB: 10}); err != nil {
			b.Fatal(err)
		}
		ps := []sessions.Part{{Kind: sessions.PartShuntC, Value: 10e-12, ESeries: "E24", Model: "0402"}, {Kind: sessions.PartSeriesL, Value: 100e-9, ESeries: "E24", Model: "0402"}}
		ev, err := f.store.Apply(ctx, f.sess.ID, sessions.Change{Op: sessions.OpNetworkAdd, SweepID: f.sweep, DesignHz: 150e6, Parts: ps})
		if err != nil {
			b.Fatal(err)
		}
		if yieldBuilds > 0 {
			if _, err := f.store.Apply(ctx, f.sess.ID, sessions.Change{Op: sessions.OpNetworkSet, NetworkID: ev.NetworkID, YieldBuilds: yieldBuilds}); err != nil {
				b.Fatal(err)
			}
		}
	}
	return f
}

// dragPath returns n points of Γ along the fixture's first sweep around
// its marker, for a drag.
func dragPath(f *fixture, n int) []complex128 {
	sw := rlcSweep(10001)
	var out []complex128
	for i := range n {
		k := 2000 + i*(4000/n)
		out = append(out, sw.Data[k])
	}
	return out
}

// dragActions is a pointer drag from the marker's point along path, one
// move a frame.
func dragActions(ctx context.Context, mk complex128, path []complex128) ([]chromedp.Action[chromedp.Void], error) {
	p0, err := screenOf(ctx, mk)
	if err != nil {
		return nil, err
	}
	acts := []chromedp.Action[chromedp.Void]{chromedp.MouseEvent(chromedp.MousePressed, p0[0], p0[1], chromedp.ButtonLeft)}
	var pe []float64
	for _, g := range path {
		if pe, err = screenOf(ctx, g); err != nil {
			return nil, err
		}
		acts = append(acts, chromedp.MouseEvent(chromedp.MouseMoved, pe[0], pe[1], chromedp.ButtonLeft), chromedp.Sleep(16*time.Millisecond))
	}
	return append(acts, chromedp.MouseEvent(chromedp.MouseReleased, pe[0], pe[1], chromedp.ButtonLeft), chromedp.Sleep(300*time.Millisecond)), nil
}

// markerGamma returns where the fixture's marker sits on the chart.
func markerGamma(f *fixture) complex128 {
	st, _, _ := f.store.State(context.Background(), f.sess.ID)
	sw := rlcSweep(10001)
	k := sort.SearchFloat64s(sw.FreqHz, st.Markers[0].FreqHz)
	return sw.Data[min(k, len(sw.Data)-1)]
}

// BenchmarkBrowser measures, in headless Chromium at 1366×768:
//
//	drag:      a pointer drag of a marker on a session of 4 sweeps of 10,001
//	           points; per pointer event, the time to the frame that shows the
//	           new frequency in the editor (p50-ms, p99-ms, samples). The
//	           DevTools Protocol dispatches scripted input phase-locked to
//	           the frames, so a move reaches the page early in a frame and
//	           its answer paints on the next one: about one frame is the
//	           floor of this figure, whatever the server's speed
//	viewer:    the same drag watched from the view link in a second tab;
//	           per pointer event, the time to the viewer's frame
//	open:      a session of 20 sweeps of 10,001 points, a network and a Monte
//	           Carlo cloud: from navigation to the first contentful paint
//	           (the chart is server-drawn in the page), and the bytes of the
//	           page's HTML with its inline SVG (open-ms, page-bytes)
//	animation: the frames while a part is added (its 24-frame step
//	           animation): frame-interval p99 and the longest task
func BenchmarkBrowser(b *testing.B) {
	browsertest.Need(b)
	bctx := browsertest.Start(b)
	tab := func(b *testing.B) context.Context {
		ctx, cancel := chromedp.NewContext(bctx)
		b.Cleanup(cancel)
		if err := chromedp.Do(ctx, chromedp.EmulateViewport(1366, 768)); err != nil {
			b.Fatal(err)
		}
		if err := instrument(ctx); err != nil {
			b.Fatal(err)
		}
		return ctx
	}
	open := func(b *testing.B, ctx context.Context, url string) {
		if err := chromedp.Do(ctx, chromedp.Navigate(url), chromedp.Poll[chromedp.Void](liveJS)); err != nil {
			b.Fatal(err)
		}
	}
	readoutJS := func(mk string) string {
		return fmt.Sprintf(`window.__mb.sel = '#ro-%s [data-testid="ro-freq"]'`, mk)
	}

	b.Run("drag", func(b *testing.B) {
		f := browserFixture(b, 4, 10001, false, 0)
		f.srv.cfg.MsgPerSecond, f.srv.cfg.MsgBurst = 1e9, 1e9
		ed := tab(b)
		open(b, ed, f.ts.URL+"/s/"+f.sess.EditToken+"/")
		var all []float64
		for b.Loop() {
			if _, err := chromedp.Run(ed, chromedp.Evaluate[any](`window.__mb.ptr = []; window.__mb.sent = []; window.__mb.painted = []; window.__mb.upd = []; `+readoutJS(f.mk))); err != nil {
				b.Fatal(err)
			}
			acts, err := dragActions(ed, markerGamma(f), dragPath(f, 40))
			if err != nil {
				b.Fatal(err)
			}
			if err := chromedp.Do(ed, acts...); err != nil {
				b.Fatal(err)
			}
			r, err := readRecord(ed)
			if err != nil {
				b.Fatal(err)
			}
			checkShown(b, f, r)
			all = append(all, latencies(r, r)...)
		}
		reportLatency(b, all)
	})

	b.Run("viewer", func(b *testing.B) {
		f := browserFixture(b, 4, 10001, false, 0)
		f.srv.cfg.MsgPerSecond, f.srv.cfg.MsgBurst = 1e9, 1e9
		ed, vw := tab(b), tab(b)
		open(b, ed, f.ts.URL+"/s/"+f.sess.EditToken+"/")
		open(b, vw, f.ts.URL+"/s/"+f.sess.ViewToken+"/")
		var all []float64
		for b.Loop() {
			for _, c := range []context.Context{ed, vw} {
				if _, err := chromedp.Run(c, chromedp.Evaluate[any](`window.__mb.ptr = []; window.__mb.sent = []; window.__mb.painted = []; window.__mb.upd = []; `+readoutJS(f.mk))); err != nil {
					b.Fatal(err)
				}
			}
			acts, err := dragActions(ed, markerGamma(f), dragPath(f, 40))
			if err != nil {
				b.Fatal(err)
			}
			if err := chromedp.Do(ed, acts...); err != nil {
				b.Fatal(err)
			}
			re, err := readRecord(ed)
			if err != nil {
				b.Fatal(err)
			}
			rv, err := readRecord(vw)
			if err != nil {
				b.Fatal(err)
			}
			checkShown(b, f, rv)
			all = append(all, latencies(re, rv)...)
		}
		reportLatency(b, all)
	})

	b.Run("open", func(b *testing.B) {
		f := browserFixture(b, 20, 10001, true, 2000)
		url := f.ts.URL + "/s/" + f.sess.EditToken + "/"
		res, err := http.Get(url)
		if err != nil {
			b.Fatal(err)
		}
		body, _ := io.ReadAll(res.Body)
		res.Body.Close()
		ctx := tab(b)
		var ms []float64
		for b.Loop() {
			if err := chromedp.Do(ctx, chromedp.Navigate("about:blank"), chromedp.Navigate(url)); err != nil {
				b.Fatal(err)
			}
			fcp, err := chromedp.Run(ctx, chromedp.Poll[float64](`(() => { const e = performance.getEntriesByName("first-contentful-paint")[0]; return e && document.querySelector("#chart svg") ? e.startTime : 0; })()`))
			if err != nil {
				b.Fatal(err)
			}
			ms = append(ms, fcp)
		}
		b.ReportMetric(percentile(ms, 0.5), "open-ms")
		b.ReportMetric(float64(len(body)), "page-bytes")
		b.ReportMetric(float64(len(ms)), "samples")
	})

	b.Run("animation", func(b *testing.B) {
		f := browserFixture(b, 4, 10001, true, 0)
		ctx := tab(b)
		open(b, ctx, f.ts.URL+"/s/"+f.sess.EditToken+"/")
		var gaps, long []float64
		for b.Loop() {
			n, err := chromedp.Run(ctx, chromedp.Evaluate[int](`document.querySelectorAll('[data-testid="part-row"]').length`))
			if err != nil {
				b.Fatal(err)
			}
			if _, err := chromedp.Run(ctx, chromedp.Evaluate[any](`window.__mb.frames = []; window.__mb.long = []; window.__mb.record(true)`)); err != nil {
				b.Fatal(err)
			}
			if err := chromedp.Do(ctx, chromedp.Evaluate[chromedp.Void](`document.querySelector('[data-testid="add-series_L"]').click()`),
				chromedp.Poll[chromedp.Void](fmt.Sprintf(`document.querySelectorAll('[data-testid="part-row"]').length === %d`, n+1)),
				chromedp.Sleep(900*time.Millisecond)); err != nil {
				b.Fatal(err)
			}
			r, err := readRecord(ctx)
			if err != nil {
				b.Fatal(err)
			}
			if _, err := chromedp.Run(ctx, chromedp.Evaluate[any](`window.__mb.record(false)`)); err != nil {
				b.Fatal(err)
			}
			for i := 1; i < len(r.Frames); i++ {
				gaps = append(gaps, r.Frames[i]-r.Frames[i-1])
			}
			long = append(long, r.Long...)
			// Take the part away again, so every round adds to the same network.
			st, _, _ := f.store.State(context.Background(), f.sess.ID)
			a := st.Active()
			if _, err := f.store.Apply(context.Background(), f.sess.ID, sessions.Change{Op: sessions.OpPartRemove, NetworkID: a.ID, PartID: a.Parts[len(a.Parts)-1].ID}); err != nil {
				b.Fatal(err)
			}
			time.Sleep(200 * time.Millisecond)
		}
		longest := 0.0
		for _, l := range long {
			longest = math.Max(longest, l)
		}
		b.ReportMetric(percentile(gaps, 0.5), "frame-p50-ms")
		b.ReportMetric(percentile(gaps, 0.99), "frame-p99-ms")
		b.ReportMetric(float64(len(gaps)), "samples")
		b.ReportMetric(longest, "longest-task-ms")
	})
}

func reportLatency(b *testing.B, all []float64) {
	b.ReportMetric(percentile(all, 0.5), "p50-ms")
	b.ReportMetric(percentile(all, 0.99), "p99-ms")
	b.ReportMetric(float64(len(all)), "samples")
}

// checkShown fails the benchmark unless the last update the page r painted
// shows the marker's readout at the frequency the store holds: the frames
// measured are those of the readout really moving.
func checkShown(b *testing.B, f *fixture, r pageRecord) {
	b.Helper()
	st, _, err := f.store.State(context.Background(), f.sess.ID)
	if err != nil {
		b.Fatal(err)
	}
	if len(r.Painted) == 0 {
		b.Fatal("the page painted no update")
	}
	got, want := r.Painted[len(r.Painted)-1].Txt, fmtF(st.Markers[0].FreqHz)
	if got != want {
		b.Fatalf("the last frame painted reads %q, the store's marker is at %q", got, want)
	}
}
