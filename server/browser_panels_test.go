package server

import (
	"context"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
	"time"

	"github.com/chromedp/chromedp"
	"github.com/chromedp/chromedp/kb"

	"matchbench/internal/demo"
	"matchbench/rfmath"
	"matchbench/sessions"
)

// demoSweep returns the invented demo file name (internal/demo).
func demoSweep(t *testing.T, name string) *rfmath.Sweep {
	t.Helper()
	for _, f := range demo.Generate() {
		if f.Name == name {
			return f.Sweep
		}
	}
	t.Fatalf("no demo file %s", name)
	return nil
}

// TestBrowserResonances reads the resonance table of the series RLC of
// REFERENCE-CHECKS §9 R-1 (f0 = 159.1549 MHz, Q = 20 from its half-power
// edges 155.2258 and 163.1835 MHz) and, with a 1 dB threshold, its usable
// band (the return loss peaks at 1.743 dB, R-2); clicking the resonance's
// row places a marker there.
func TestBrowserResonances(t *testing.T) {
	needBrowser(t)
	f := newFixture(t, 3001)
	p := openPage(t, f.ts, f.sess, false, 1366, 1200)
	row := js[[]string](p, `(() => { const r = [...document.querySelectorAll('[data-testid="res-row"]')].find(r => r.textContent.includes("series-type")); return r ? [...r.cells].map(c => c.textContent) : []; })()`)
	if len(row) < 9 {
		t.Fatalf("no series-type resonance row: %v", row)
	}
	freq, _ := strconv.ParseFloat(strings.Fields(row[1])[0], 64)
	q, _ := strconv.ParseFloat(strings.Fields(row[8])[0], 64)
	if math.Abs(freq-159.1549) > 0.01 || math.Abs(q-20) > 0.1 {
		t.Errorf("series resonance %s, Q %s; want 159.155 MHz, Q 20 (R-1)", row[1], row[8])
	}
	if !strings.HasPrefix(row[3], "155.2") || !strings.HasPrefix(row[4], "163.1") {
		t.Errorf("half-power edges %s – %s, want 155.2258 – 163.1835 MHz", row[3], row[4])
	}
	// The band where RL ≥ 1 dB: around the peak of 1.743 dB.
	p.submit(`form[data-view-form="rl"]`, map[string]string{"rl": "1"})
	p.wait(`[...document.querySelectorAll('[data-testid="res-row"]')].some(r => r.textContent.includes("band ≥ 1 dB"))`)
	band := js[[]string](p, `[...[...document.querySelectorAll('[data-testid="res-row"]')].find(r => r.textContent.includes("band ≥ 1 dB")).cells].map(c => c.textContent)`)
	rl, _ := strconv.ParseFloat(strings.Fields(band[2])[0], 64)
	if math.Abs(rl-1.743) > 0.005 || !strings.HasSuffix(band[6], "%") {
		t.Errorf("band ≥ 1 dB row %v: want the peak 1.743 dB (R-2) and a fractional bandwidth", band)
	}
	// Click the resonance: a marker at 159.15 MHz.
	p.do(`[...document.querySelectorAll('[data-testid="res-row"]')].find(r => r.textContent.includes("series-type")).click()`)
	p.wait(`[...document.querySelectorAll('#readout-body [data-testid="ro-freq"]')].some(e => e.textContent.startsWith("159.15"))`)
	shot(t, p.ctx, shotDir(t)+"/resonances.png")
}

// TestBrowserLinesAndStubs builds the single-stub match of a 200 Ω load
// at 100 MHz (netFixture) with a line of velocity factor 0.66 and 2 dB/m
// at 100 MHz: the stub's parts carry those figures, their lengths are
// wavelengths on that line (λ = 0.66·c/f = 1.978630 m), the loss is
// counted (less power reaches the load than with a lossless line), a
// line's figures can be set in its row, and a length typed in wavelengths
// becomes millimetres.
func TestBrowserLinesAndStubs(t *testing.T) {
	needBrowser(t)
	f, nid := netFixture(t)
	if _, err := f.store.Apply(context.Background(), f.sess.ID, sessions.Change{Op: sessions.OpNetworkRemove, NetworkID: nid}); err != nil {
		t.Fatal(err)
	}
	p := openPage(t, f.ts, f.sess, false, 1366, 1600)
	p.do(`document.querySelector('[data-testid="network-add"] button').click()`)
	p.wait(`!!document.querySelector('[data-testid="stub-use"]')`)
	// Lossless first: the shorted stub of the first position.
	p.do(`document.querySelectorAll('[data-testid="stub-use"]')[1].click()`)
	p.wait(`document.querySelectorAll('[data-testid="part-row"]').length === 2`)
	p.wait(`!!document.querySelector('[data-testid="net-power-worst"]')`)
	lossless := js[string](p, `document.querySelector('[data-testid="net-power-worst"]').textContent`)
	d := js[[]string](p, `[...document.querySelectorAll('[data-testid="line-summary"]')].map(e => e.textContent)`)
	// The same stub on a VF 0.66 line with 2 dB/m at 100 MHz.
	p.do(`(() => { const f = document.querySelector('#line-settings'); f.elements.vf.value = "0.66"; f.elements.loss.value = "2"; f.elements.lossRef.value = "100M"; for (const e of f.elements) e.dispatchEvent(new Event("input", {bubbles: true})); })()`)
	p.do(`document.querySelectorAll('[data-testid="stub-use"]')[1].click()`)
	p.wait(`[...document.querySelectorAll('[data-testid="line-summary"]')].some(e => e.textContent.includes("VF 0.66"))`)
	sums := js[[]string](p, `[...document.querySelectorAll('[data-testid="line-summary"]')].map(e => e.textContent)`)
	if len(sums) != 2 || len(d) != 2 {
		t.Fatalf("line summaries %q (lossless %q)", sums, d)
	}
	// The wavelengths are the solution's; the millimetres scale by 0.66.
	wl := func(s string) (mm, lambda float64) {
		i := strings.Index(s, " = ")
		fmt.Sscanf(s[strings.LastIndex(s[:i], "; ")+2:], "%g", &mm)
		if strings.Contains(s[:i], " m =") || strings.HasSuffix(strings.Fields(s[:i])[len(strings.Fields(s[:i]))-1], "m") && !strings.Contains(s[:i], "mm") {
			mm *= 1000
		}
		fmt.Sscanf(s[i+3:], "%g", &lambda)
		return
	}
	for k := range sums {
		mm0, l0 := wl(d[k])
		mm1, l1 := wl(sums[k])
		if math.Abs(l0-l1) > 1e-4 || math.Abs(mm1/mm0-0.66) > 2e-3 {
			t.Errorf("part %d: %q then %q: the length in wavelengths must stay, in millimetres scale by the VF 0.66", k, d[k], sums[k])
		}
		if !strings.Contains(sums[k], "2 dB/m at 100 MHz") || !strings.Contains(sums[k], "losing") {
			t.Errorf("part %d's summary %q lacks its loss", k, sums[k])
		}
	}
	lossy := js[string](p, `document.querySelector('[data-testid="net-power-worst"]').textContent`)
	a, _ := strconv.ParseFloat(strings.Fields(lossless)[0], 64)
	b, _ := strconv.ParseFloat(strings.Fields(lossy)[0], 64)
	if !(b < a) {
		t.Errorf("worst power to the load %q with 2 dB/m lines, %q lossless: the loss is not counted", lossy, lossless)
	}
	// Set the first line's impedance to 60 Ω in its row; type 0.25λ as
	// the stub's length at the design frequency, the band's geometric
	// centre √(95 · 105) MHz = 99.875 MHz: 0.25 × 0.66 c / f = 495.28 mm.
	p.submit(`[data-testid="line-form"]`, map[string]string{"z0": "60"})
	p.wait(`document.querySelector('[data-testid="line-summary"]').textContent.includes("60 Ω")`)
	p.set(`[data-testid="part-row"][data-index="1"] [data-testid="part-value"]`, "0.25λ")
	p.wait(`document.querySelector('[data-testid="part-row"][data-index="1"] [data-testid="part-value"]').value === "495.3 mm"`)
	shot(t, p.ctx, shotDir(t)+"/lines.png")
}

// TestBrowserTyping types a part's value without leaving the field and
// sees the band figures answer within the debounce, the field keeping
// focus; slides the fine slider to +10 %; and picks E192.
func TestBrowserTyping(t *testing.T) {
	needBrowser(t)
	f, _ := netFixture(t)
	p := openPage(t, f.ts, f.sess, false, 1366, 1600)
	p.wait(`!!document.querySelector('[data-testid="net-worst"]')`)
	before := js[string](p, `document.querySelector('[data-testid="net-worst"]').textContent`)
	sel := `[data-testid="part-row"][data-index="1"] [data-testid="part-value"]`
	p.do(`document.querySelector('` + sel + `').select()`)
	p.must(chromedp.Do(p.ctx, chromedp.SendKeys(chromedp.CSS(sel), "160n")))
	p.wait(`document.querySelector('[data-testid="net-worst"]').textContent !== ` + strconv.Quote(before))
	if got := js[string](p, `document.activeElement === document.querySelector('`+sel+`') ? document.activeElement.value : "lost focus"`); got != "160n" {
		t.Errorf("while typing, the field holds %q, want 160n with the focus kept", got)
	}
	// The server has 160 nH: its slider says so.
	p.wait(`Math.abs(Number(document.querySelector('[data-testid="part-row"][data-index="1"] .part-slider').value) - Math.log10(160e-9)) < 2e-3`)
	p.must(chromedp.Do(p.ctx, chromedp.KeyEvent(kb.Tab)))
	p.wait(`document.querySelector('` + sel + `').value === "160 nH"`)

	// The fine slider to its end: +10 %, 176 nH.
	p.do(`(() => { const e = document.querySelector('[data-testid="part-row"][data-index="1"] [data-testid="part-fine"]'); e.value = "1"; e.dispatchEvent(new Event("input", {bubbles: true})); setTimeout(() => e.dispatchEvent(new Event("change", {bubbles: true})), 100); })()`)
	p.wait(`document.querySelector('` + sel + `').value === "176 nH"`)

	// E192: the part's standard value is one of that series.
	p.set(`[data-testid="part-row"][data-index="1"] select[data-part-series]`, "E192")
	p.wait(`(document.querySelector('[data-testid="part-row"][data-index="1"] [data-testid="part-buy"]') || {}).textContent === "176 nH"`)
	p.set(sel, "171n")
	// 171 lies between the E192 values 169 and 172 (IEC 60063; √(169·172) = 170.5).
	p.wait(`(document.querySelector('[data-testid="part-row"][data-index="1"] [data-testid="part-buy"]') || {}).textContent === "172 nH"`)
}

// TestBrowserWordsAndStates checks the page's words: a refused design
// frequency named as the form names it with SI frequencies; the Chu
// comparison on the wrist-tag demo answering with a result; the Bode–Fano
// note of a poor fit on the Fieldnode demo; a part over its rating
// flagged; and, on a view link, one line saying why nothing can be changed
// and a notice where a click would have changed something.
func TestBrowserWordsAndStates(t *testing.T) {
	needBrowser(t)
	var wrist string
	ts, _, se := pageFixture(t, func(st *sessions.Store, sid string) {
		wrist = addSweep(t, st, sid, "wristtag", demoSweep(t, "wristtag-antenna.s1p"))
		for _, b := range demo.WristtagBands {
			apply(t, st, sid, sessions.Change{Op: sessions.OpBandSet, Name: b.Name, LoHz: b.LoHz, HiHz: b.HiHz, MinReturnLossDB: b.MinReturnLossDB})
		}
		apply(t, st, sid, sessions.Change{Op: sessions.OpNetworkAdd, Name: "match", SweepID: wrist, DesignHz: 2.44e9,
			Parts: []sessions.Part{{Kind: sessions.PartShuntC, Value: 0.2e-12}, {Kind: sessions.PartSeriesL, Value: 1.2e-9, Model: "0402"}, {Kind: sessions.PartShuntC, Value: 1.3e-12}}})
	})
	p := openPage(t, ts, se, false, 1366, 1600)
	p.submit(`#network-panel form[data-form="network.set"]`, map[string]string{"design": "3.5G"})
	p.wait(`!document.querySelector("#notice").hidden`)
	n := js[string](p, `document.querySelector("#notice").textContent`)
	if !strings.HasPrefix(n, "Design frequency: 3.5 GHz is outside the sweep (2 GHz – 3 GHz)") || strings.Contains(n, "sessions") || strings.Contains(n, "e+") {
		t.Errorf("notice %q, want the form's words with SI frequencies", n)
	}
	// The Chu comparison for an 8 mm sphere.
	p.submit(`#network-panel .find form[data-form="network.set"]`, map[string]string{"radius": "8mm"})
	p.wait(`!!document.querySelector('[data-testid="chu"]') && !document.querySelector('[data-testid="chu"]').textContent.includes("computing")`)
	chu := js[string](p, `document.querySelector('[data-testid="chu"]').textContent`)
	if !strings.Contains(chu, "Chu limit for a sphere of radius 8 mm") || !strings.Contains(chu, "× the limit") {
		t.Errorf("Chu comparison %q, want a result", chu)
	}
	// A rated current of 1 mA at 1 W: L1 is over its rating.
	p.submit(`#network-panel form[data-form="network.set"]`, map[string]string{"power": "1"})
	p.do(`(() => { const f = document.querySelectorAll('form[data-form="part.params"]')[1]; f.elements.maxA.value = "1m"; f.requestSubmit(); })()`)
	p.wait(`!!document.querySelector('[data-testid="over-rating"]')`)
	if got := js[string](p, `document.querySelector('[data-testid="over-rating"]').closest("tr").cells[0].textContent`); !strings.Contains(got, "L1") {
		t.Errorf("the flag is on %q, want L1", got)
	}
	shot(t, p.ctx, shotDir(t)+"/words.png")

	// The Fieldnode demo: its two bands fitted by one RLC is too poor a fit.
	fts, _, fse := pageFixture(t, func(st *sessions.Store, sid string) {
		id := addSweep(t, st, sid, "fieldnode", demoSweep(t, "fieldnode-antenna.s1p"))
		for _, b := range demo.FieldnodeBands {
			apply(t, st, sid, sessions.Change{Op: sessions.OpBandSet, Name: b.Name, LoHz: b.LoHz, HiHz: b.HiHz, MinReturnLossDB: b.MinReturnLossDB})
		}
		apply(t, st, sid, sessions.Change{Op: sessions.OpNetworkAdd, SweepID: id, DesignHz: 866.5e6})
	})
	fp := openPage(t, fts, fse, false, 1366, 1200)
	// The limits come from the derived-results pool: the panel says
	// "computing…" until they are drawn in.
	fp.wait(`!!document.querySelector('[data-testid="bode-fano"]') && !document.querySelector('[data-testid="bode-fano"]').textContent.includes("computing")`)
	poor := js[string](fp, `(document.querySelector('[data-testid="bode-fano-poor"]') || {}).textContent || ""`)
	fit := js[string](fp, `document.querySelector('[data-testid="bode-fano"]').textContent`)
	var e float64
	if i := strings.Index(fit, "fit error "); i >= 0 {
		fmt.Sscanf(fit[i+len("fit error "):], "%g", &e)
	}
	if (e > 0.05) != (poor != "") || e == 0 {
		t.Errorf("Bode–Fano fit error %g (%q): the too-poor note is %q", e, fit, poor)
	}

	// The view link.
	v := openPage(t, ts, se, true, 1366, 1200)
	if got := js[string](v, `(document.querySelector('[data-testid="viewer-note"]') || {}).textContent || ""`); !strings.Contains(got, "view link") {
		t.Errorf("viewer note %q", got)
	}
	if n := js[int](v, `[...document.querySelectorAll('[data-testid="part-value"]')].filter(e => !e.disabled).length`); n != 0 {
		t.Errorf("%d part values editable on a view link", n)
	}
	pt := js[[]float64](v, `(() => { const svg = document.querySelector("#chart svg"); const path = svg.querySelector("[id^='trace-'] path"); const l = path.getTotalLength(); const q = path.getPointAtLength(l / 3); const s = svg.createSVGPoint(); s.x = q.x; s.y = q.y; const r = s.matrixTransform(path.getScreenCTM()); return [r.x, r.y]; })()`)
	v.must(chromedp.Do(v.ctx, chromedp.MouseClickXY(pt[0], pt[1])))
	v.wait(`!document.querySelector("#notice").hidden && document.querySelector("#notice").textContent.includes("view link")`)
}

// TestBrowserUploads picks three files at once and sees three sweeps, with
// three "added" lines that stay through the page's updates until
// dismissed; then removes the cable fixture from the via-cable sweep and
// sees the corrected sweep marked and offered as a new network's load.
func TestBrowserUploads(t *testing.T) {
	needBrowser(t)
	ts, _, se := pageFixture(t, func(*sessions.Store, string) {})
	p := openPage(t, ts, se, false, 1366, 1400)
	dir := filepath.Join("..", "testdata", "demo")
	files := []string{"fieldnode-via-cable.s1p", "cable-fixture.s2p", "wristtag-antenna.s1p"}
	var paths []string
	for _, f := range files {
		a, err := filepath.Abs(filepath.Join(dir, f))
		p.must(err)
		if _, err := os.Stat(a); err != nil {
			t.Fatal(err)
		}
		paths = append(paths, a)
	}
	p.must(chromedp.Do(p.ctx, chromedp.SetUploadFiles(chromedp.CSS("#file-input"), paths)))
	p.wait(`document.querySelectorAll('#sweeps-panel tr[data-sweep]').length === 3`)
	p.wait(`document.querySelectorAll('[data-testid="upload-ok"]').length === 3`)
	time.Sleep(700 * time.Millisecond) // the updates after the uploads land
	if n := js[int](p, `document.querySelectorAll('[data-testid="upload-ok"]').length`); n != 3 {
		t.Errorf("%d upload messages after the page updated, want the 3 to stay", n)
	}
	// The fixture, set in the via-cable sweep's plane (opened from its row).
	p.do(`document.querySelector('#sweeps-panel tr[data-sweep] a[data-open-plane]').click()`)
	id := js[string](p, `document.querySelector('#sweeps-panel tr[data-sweep]').dataset.sweep`)
	fx := js[string](p, `[...document.querySelectorAll('#sweeps-panel tr[data-sweep]')].find(r => r.querySelector('input[aria-label="sweep name"]').value === "cable-fixture").dataset.sweep`)
	if open := js[bool](p, `document.getElementById("plane-`+id+`").open`); !open {
		t.Errorf("the sweep's plane link did not open its settings")
	}
	p.submit(`#plane-`+id+` form[data-form="refplane.set"]`, map[string]string{"fixture": fx, "fixturePort": "1"})
	p.wait(`!!document.querySelector('[data-testid="sweep-plane"]')`)
	// The chart shows the corrected trace and the measurement dashed.
	p.wait(`!!document.getElementById("trace-` + id + `-raw")`)
	// A new network is offered the corrected measurement.
	if got := js[string](p, `(() => { const s = document.querySelector('[data-testid="network-add"] select'); return s.options[s.selectedIndex].textContent; })()`); !strings.Contains(got, "fieldnode-via-cable (corrected)") {
		t.Errorf("a new network's load defaults to %q, want the corrected via-cable sweep", got)
	}
	// Dismiss the messages.
	p.do(`document.querySelector('[data-dismiss-upload="all"]').click()`)
	p.wait(`document.querySelectorAll('[data-testid="upload-ok"]').length === 0`)
	shot(t, p.ctx, shotDir(t)+"/uploads.png")
}
