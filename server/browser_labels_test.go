package server

import (
	"fmt"
	"math"
	"testing"

	"matchbench/internal/demo"
	"matchbench/rfmath"
	"matchbench/sessions"
)

// labelCheckJS returns, for every plot and the chart, the pairs of labels
// that overlap (band names, limit labels, marker numbers, legend entries,
// the title) and the axis labels cut by the drawing's edge.
const labelCheckJS = `(() => {
	const out = [];
	const rect = (e) => e.getBoundingClientRect();
	const hit = (a, b) => a.left < b.right - 0.5 && b.left < a.right - 0.5 && a.top < b.bottom - 0.5 && b.top < a.bottom - 0.5;
	for (const svg of document.querySelectorAll(".plot svg")) {
		const name = svg.closest("figure").id;
		const pick = (sel) => [...svg.querySelectorAll(sel)].filter(e => e.textContent.trim() !== "" && rect(e).width > 0);
		const labels = [
			...pick("[id$='bandnames'] text").map(e => ["band/limit", e]),
			...pick("[id$='pmarkers'] text").map(e => ["marker", e]),
			...pick("[id$='plegend'] text").map(e => ["legend", e]),
			...pick("[id$='axes'] > text").map(e => ["axis", e]),
		];
		// Band names and limit labels clear the markers' lines and shapes.
		for (const [kind, e] of labels.filter(l => l[0] === "band/limit")) {
			for (const m of svg.querySelectorAll("[id*='pmk-'] path")) {
				if (hit(rect(e), rect(m))) out.push(name + ": " + kind + " " + JSON.stringify(e.textContent) + " crosses marker " + m.closest("g").id);
			}
		}
		for (let i = 0; i < labels.length; i++) for (let j = i + 1; j < labels.length; j++) {
			if (hit(rect(labels[i][1]), rect(labels[j][1]))) out.push(name + ": " + labels[i][0] + " " + JSON.stringify(labels[i][1].textContent) + " overlaps " + labels[j][0] + " " + JSON.stringify(labels[j][1].textContent));
		}
		const box = rect(svg);
		for (const e of pick("[id$='axes'] text")) {
			const r = rect(e);
			if (r.left < box.left - 0.5 || r.right > box.right + 0.5 || r.top < box.top - 0.5 || r.bottom > box.bottom + 0.5) out.push(name + ": axis label " + JSON.stringify(e.textContent) + " cut by the edge");
		}
		const frame = svg.querySelector("[id$='axes'] rect");
		for (const e of pick("[id$='plegend'] text")) {
			if (rect(e).bottom > rect(frame).top - 14) out.push(name + ": legend " + JSON.stringify(e.textContent) + " runs into the plot");
		}
	}
	const chart = document.querySelector("#chart svg");
	for (const e of chart.querySelectorAll("[id$='legend'] text")) {
		const r = rect(e), b = rect(chart);
		if (r.right > b.right + 0.5 || r.bottom > b.bottom + 0.5) out.push("chart legend " + JSON.stringify(e.textContent) + " cut");
	}
	return out;
})()`

// TestBrowserLabels opens the invented Fieldnode session (the cable
// removed, both bands with their return-loss limits, three markers two of
// them close, a three-part network) at 1366×768 and at 1920×1080 and
// finds no label over another and no axis label cut; then a session of
// nine sweeps keeps a legend that does not run into its plot. The
// screenshots are the ones looked at for the page's layout.
func TestBrowserLabels(t *testing.T) {
	needBrowser(t)
	ts, _, se := pageFixture(t, func(st *sessions.Store, sid string) {
		via := addSweep(t, st, sid, "fieldnode-via-cable", demoSweep(t, "fieldnode-via-cable.s1p"))
		fx := addSweep(t, st, sid, "cable-fixture", demoSweep(t, "cable-fixture.s2p"))
		apply(t, st, sid, sessions.Change{Op: sessions.OpSweepVisible, SweepID: fx, Visible: false})
		apply(t, st, sid, sessions.Change{Op: sessions.OpSweepRefPlane, SweepID: via, RefPlane: &sessions.RefPlane{FixtureSweepID: fx, FixturePortFacingAnalyser: 1}})
		for _, b := range demo.FieldnodeBands {
			apply(t, st, sid, sessions.Change{Op: sessions.OpBandSet, Name: b.Name, LoHz: b.LoHz, HiHz: b.HiHz, MinReturnLossDB: b.MinReturnLossDB})
		}
		for _, f := range []float64{866.5e6, 915e6, 921e6} {
			apply(t, st, sid, sessions.Change{Op: sessions.OpMarkerAdd, SweepID: via, Port: 1, FreqHz: f})
		}
		apply(t, st, sid, sessions.Change{Op: sessions.OpNetworkAdd, Name: "three parts", SweepID: via, DesignHz: 866.5e6, Parts: []sessions.Part{
			{Kind: sessions.PartShuntL, Value: 1.8e-9, ESeries: "E24", Model: "0402"},
			{Kind: sessions.PartSeriesL, Value: 1.8e-9, ESeries: "E24", Model: "0402"},
			{Kind: sessions.PartShuntC, Value: 7.5e-12, ESeries: "E24", Model: "0402"},
		}})
	})
	dir := shotDir(t)
	for _, size := range [][2]int64{{1366, 768}, {1920, 1080}} {
		p := openPage(t, ts, se, false, size[0], size[1])
		if bad := js[[]string](p, labelCheckJS); len(bad) > 0 {
			t.Errorf("%d×%d: %d label problems:\n%v", size[0], size[1], len(bad), bad)
		}
		shot(t, p.ctx, fmt.Sprintf("%s/labels-%dx%d.png", dir, size[0], size[1]))
		// The span fitted to the bands: the names and limits of two
		// bands 32 MHz apart now have room, and still do not collide.
		p.do(`document.querySelector('[data-testid="span-bands"]').click()`)
		p.wait(`document.querySelector('[data-testid="span-lo"]').value !== "3 MHz"`)
		if bad := js[[]string](p, labelCheckJS); len(bad) > 0 {
			t.Errorf("%d×%d, fitted to the bands: %v", size[0], size[1], bad)
		}
		shot(t, p.ctx, fmt.Sprintf("%s/labels-bands-%dx%d.png", dir, size[0], size[1]))
	}

	// Nine sweeps: the legend grows rows above the plot.
	ts9, _, se9 := pageFixture(t, func(st *sessions.Store, sid string) {
		for i := range 9 {
			s := rfmath.NewSweep(101, 1, 50)
			for k := range s.FreqHz {
				s.FreqHz[k] = 800e6 + 2e6*float64(k)
				w := 2 * math.Pi * s.FreqHz[k]
				s.Data[k] = rfmath.GammaFromZ(complex(20+5*float64(i), w*20e-9-1/(w*1.7e-12)), 50)
			}
			addSweep(t, st, sid, fmt.Sprintf("board %d of the pilot lot", i+1), s)
		}
	})
	p := openPage(t, ts9, se9, false, 1366, 768)
	if n := js[int](p, `document.querySelectorAll("#plot-refl svg [id$='plegend'] text").length`); n != 9 {
		t.Errorf("%d legend entries, want 9", n)
	}
	if bad := js[[]string](p, labelCheckJS); len(bad) > 0 {
		t.Errorf("nine sweeps: %v", bad)
	}
	shot(t, p.ctx, dir+"/labels-nine-sweeps.png")
}
