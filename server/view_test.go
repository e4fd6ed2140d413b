package server

import (
	"context"
	"errors"
	"math"
	"math/cmplx"
	"strconv"
	"strings"
	"testing"

	"matchbench/chartsvg"
	"matchbench/rfmath"
	"matchbench/sessions"
)

// TestParseView reads a page's view from its fields, and names the field
// of each that cannot be read.
func TestParseView(t *testing.T) {
	t.Parallel()
	v, err := parseView(map[string]string{"vid": "v3", "z0": "75", "chart": "s22", "zoom": "4", "cre": "0.3", "cim": "-0.2",
		"spanLo": "860M", "spanHi": "0.93 GHz", "plot.refl": "S11:rl", "plot.zx": "S21:gd", "ymin.zx": "-1", "ymax.zx": "3n", "rl": "-6", "aperture": "3"})
	if err != nil {
		t.Fatal(err)
	}
	if v.ID != "v3" || v.Z0 != 75 || v.Chart != "S22" || v.Zoom != 4 || v.Centre != complex(0.3, -0.2) ||
		v.SpanLo != 860e6 || v.SpanHi != 930e6 || v.RLdB != 6 || v.Aperture != 3 {
		t.Errorf("view %+v", v)
	}
	if c := v.Plots["refl"]; c.Q != "S11:rl" || c.Fixed {
		t.Errorf("refl slot %+v", c)
	}
	if c := v.Plots["zx"]; c.Q != "S21:gd" || !c.Fixed || c.YMin != -1 || math.Abs(c.YMax-3e-9) > 1e-21 {
		t.Errorf("zx slot %+v", c)
	}
	// A centre outside the unit disc comes back to its edge; no zoom, no
	// centre.
	if v, _ := parseView(map[string]string{"zoom": "2", "cre": "3", "cim": "4"}); cmplx.Abs(v.Centre-complex(0.6, 0.8)) > 1e-12 {
		t.Errorf("centre %v, want 0.6+0.8i", v.Centre)
	}
	if v, _ := parseView(map[string]string{"zoom": "1", "cre": "0.5"}); v.Centre != 0 {
		t.Errorf("unzoomed centre %v, want 0", v.Centre)
	}
	for _, tc := range []struct {
		name  string
		f     map[string]string
		field string
	}{
		{"reference", map[string]string{"z0": "-5"}, "z0"},
		{"chart", map[string]string{"chart": "S33"}, "chart"},
		{"span stop below start", map[string]string{"spanLo": "900M", "spanHi": "800M"}, "spanHi"},
		{"span half", map[string]string{"spanLo": "900M"}, "spanLo"},
		{"span start", map[string]string{"spanLo": "fast", "spanHi": "1G"}, "spanLo"},
		{"unknown plot", map[string]string{"plot.refl": "S33:db"}, "plot.refl"},
		{"range half", map[string]string{"plot.refl": "S11:db", "ymin.refl": "1"}, "ymin.refl"},
		{"range upside down", map[string]string{"plot.refl": "S11:db", "ymin.refl": "1", "ymax.refl": "0"}, "ymin.refl"},
		{"threshold", map[string]string{"rl": "300"}, "rl"},
		{"aperture", map[string]string{"aperture": "0"}, "aperture"},
		{"zoom", map[string]string{"zoom": "NaN"}, "zoom"},
	} {
		_, err := parseView(tc.f)
		var fe *FieldError
		if !errors.As(err, &fe) || fe.Field != tc.field {
			t.Errorf("%s: error %v, want one naming %s", tc.name, err, tc.field)
		}
	}
}

// TestDisplayReference checks the chart's renormalisation against
// REFERENCE-CHECKS §11: a 75 Ω load, Γ = 0.2 in 50 Ω, is drawn at Γ = 0
// on a 75 Ω chart, and a 100 Ω load (Γ = 1/3 in 50 Ω) at 1/7; back the
// other way gives the 50 Ω values again.
func TestDisplayReference(t *testing.T) {
	t.Parallel()
	for _, tc := range []struct{ g, want complex128 }{{0.2, 0}, {1.0 / 3, 1.0 / 7}, {1, 1}, {-1, -1}} {
		if got := pointToChart(tc.g, 50, 75); cmplx.Abs(got-tc.want) > 1e-12 {
			t.Errorf("Γ %v in 50 Ω on a 75 Ω chart: %v, want %v", tc.g, got, tc.want)
		}
		if back := pointToChart(pointToChart(tc.g, 50, 75), 75, 50); cmplx.Abs(back-tc.g) > 1e-12 {
			t.Errorf("round trip of %v: %v", tc.g, back)
		}
	}
	g := []complex128{0.2, 1.0 / 3}
	if out := toChart(g, 50, 50); &out[0] != &g[0] {
		t.Error("equal references copied the trace")
	}
	if out := toChart(g, 50, 75); cmplx.Abs(out[0]) > 1e-12 || cmplx.Abs(out[1]-1.0/7) > 1e-12 || g[0] != 0.2 {
		t.Errorf("toChart: %v (input %v)", out, g)
	}
}

// TestSnapToShown checks that a marker placed by a chart point lands on
// the trace as the page's chart draws it: a 75 Ω sweep of the RLC of
// REFERENCE-CHECKS §9 on a 50 Ω chart, clicked at the 50 Ω Γ of its
// impedance at 180 MHz, gets a marker at 180 MHz.
func TestSnapToShown(t *testing.T) {
	t.Parallel()
	f := newFixture(t, 301)
	s := rfmath.NewSweep(301, 1, 75)
	z := func(fHz float64) complex128 {
		w := 2 * math.Pi * fHz
		return complex(30, w*100e-9-1/(w*10e-12))
	}
	for k := range s.FreqHz {
		s.FreqHz[k] = 100e6 + 0.5e6*float64(k)
		s.Data[k] = rfmath.GammaFromZ(z(s.FreqHz[k]), 75)
	}
	ctx := context.Background()
	ev, err := f.store.Apply(ctx, f.sess.ID, sessions.Change{Op: sessions.OpSweepAdd, Name: "at75", FileName: "a.s1p", Raw: []byte("!\n"), Sweep: s})
	if err != nil {
		t.Fatal(err)
	}
	c := &conn{s: f.srv, sid: f.sess.ID}
	g := rfmath.GammaFromZ(z(180e6), 50)
	ch := sessions.Change{Op: sessions.OpMarkerAdd, SweepID: ev.SweepID, Port: 1, Gamma: &sessions.Point{Re: real(g), Im: imag(g)}}
	if err := c.snapToShown(ctx, &ch); err != nil {
		t.Fatal(err)
	}
	if ch.Gamma != nil || math.Abs(ch.FreqHz-180e6) > 1e3 {
		t.Errorf("snapped to %g Hz (gamma %v), want 180 MHz", ch.FreqHz, ch.Gamma)
	}
	// Taken as a 75 Ω point (what the store alone would do) it would land
	// elsewhere: the test can fail.
	st, _, _ := f.store.State(ctx, f.sess.ID)
	k, u := rfmath.SnapToTrace(s.Data, g, 0, -1)
	if wrong := s.FreqHz[k] + u*(s.FreqHz[k+1]-s.FreqHz[k]); math.Abs(wrong-180e6) < 1e6 || len(st.Sweeps) != 2 {
		t.Errorf("the raw snap lands at %g Hz too; the case does not tell the two apart", wrong)
	}
}

// TestPlotQuantities checks the plot slots' titles and limits: a band
// asking 10 dB of return loss draws −10 dB on |S11|, 10 dB on return loss
// and VSWR 1.925 (REFERENCE-CHECKS §2: RL 10 dB is VSWR 1.925), and a
// power requirement of 80 % draws 80 % or −0.97 dB (10·log10 0.8).
func TestPlotQuantities(t *testing.T) {
	t.Parallel()
	f := newFixture(t, 101)
	ctx := context.Background()
	if _, err := f.store.Apply(ctx, f.sess.ID, sessions.Change{Op: sessions.OpBandSet, Name: "b", LoHz: 150e6, HiHz: 170e6, MinReturnLossDB: 10, MinPowerToLoad: 0.8}); err != nil {
		t.Fatal(err)
	}
	st, _, _ := f.store.State(ctx, f.sess.ID)
	sc := f.srv.scene(f.sess.ID, st)
	for _, tc := range []struct {
		q     string
		limit float64
	}{{"S11:db", -10}, {"S11:rl", 10}, {"S11:vswr", 1.925}, {"power:pct", 80}, {"power:pdb", -0.97}} {
		b := sc.quantityBands(quantities[tc.q])
		if len(b) != 1 || !b[0].HasLimit || math.Abs(b[0].Limit-tc.limit) > 1e-3 {
			t.Errorf("%s: bands %+v, want limit %g", tc.q, b, tc.limit)
		}
	}
	if b := sc.quantityBands(quantities["S21:db"]); b[0].HasLimit {
		t.Errorf("a transmission plot shows a reflection limit: %+v", b)
	}
	v := &pageView{Plots: map[string]plotChoice{"zx": {Q: "S22:db"}}}
	for _, p := range sc.plotsFor(v) {
		if p.id == "zx" && (!strings.Contains(p.title, "|S22|") || !strings.Contains(p.title, "no 2-port sweep")) {
			t.Errorf("S22 of a 1-port session titled %q", p.title)
		}
	}
	// The span fitted to the band: 150–170 MHz with 5 MHz either side.
	if lo, hi := sc.span(&pageView{SpanFit: true}); lo != 145e6 || hi != 175e6 {
		t.Errorf("span fitted to the band %g–%g", lo, hi)
	}
	// A span beyond the sweep (100–250 MHz) is cut to it.
	if lo, hi := sc.span(&pageView{SpanLo: 50e6, SpanHi: 120e6}); lo != 100e6 || hi != 120e6 {
		t.Errorf("span %g–%g", lo, hi)
	}
	_ = chartsvg.Band{}
}

// TestLineForms checks the line and stub forms: a velocity factor or an
// effective permittivity (εeff 2.25 is VF 2/3, REFERENCE-CHECKS §15), a
// loss in dB/m, a length typed in wavelengths (0.25 λ at 100 MHz on a VF
// 0.66 line is 0.25 × 0.66 × c/f = 494.66 mm, §15), and the quarter-wave
// solution built of two lines, the second of √(Z0·R) (§5).
func TestLineForms(t *testing.T) {
	t.Parallel()
	f, _ := netFixture(t)
	ctx := context.Background()
	st, _, _ := f.store.State(ctx, f.sess.ID)
	sc := f.srv.scene(f.sess.ID, st)
	ch, err := sc.searchChange("qw.use", map[string]string{"index": "0", "vf": "0.66", "loss": "1.5", "lossRef": "1G"})
	if err != nil {
		t.Fatal(err)
	}
	// A 200 Ω load is real: the first transformer is at the load, of
	// √(50·200) = 100 Ω, a quarter wave on the line long.
	last := ch.Parts[len(ch.Parts)-1]
	if last.Kind != sessions.PartLine || math.Abs(last.Params["z0Ohm"]-100) > 1e-9 || last.Params["vf"] != 0.66 ||
		last.Params["lossDBPerM"] != 1.5 || math.Abs(last.Value-0.25*0.66*rfmath.SpeedOfLight/100e6) > 1e-12 {
		t.Errorf("quarter-wave parts %+v", ch.Parts)
	}
	if _, err := f.store.Apply(ctx, f.sess.ID, ch); err != nil {
		t.Fatal(err)
	}
	st, _, _ = f.store.State(ctx, f.sess.ID)
	sc = f.srv.scene(f.sess.ID, st)
	id := sc.net.n.Parts[len(sc.net.n.Parts)-1].ID
	pc, err := sc.partChange("part.params", map[string]string{"partId": id, "vfKind": "eeff", "vfValue": "2.25", "loss": "", "z0": "60"})
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(pc.Params["vf"]-2.0/3) > 1e-12 || pc.Params["z0Ohm"] != 60 || !math.IsNaN(pc.Params["lossDBPerM"]) {
		t.Errorf("line params %v", pc.Params)
	}
	vc, err := sc.partChange("part.set", map[string]string{"partId": id, "value": "0.25λ"})
	if err != nil || math.Abs(*vc.Value-0.4946576) > 1e-6 {
		t.Errorf("0.25λ: %v, %v, want 494.66 mm", vc.Value, err)
	}
	if _, err := sc.partChange("part.set", map[string]string{"partId": sc.net.n.Parts[0].ID, "value": "0.1λ"}); err != nil {
		// The first part of this network is a line too (the quarter-wave's
		// own): a length in wavelengths is fine there.
		t.Errorf("0.1λ on a line: %v", err)
	}
	for _, bad := range []map[string]string{{"vfKind": "vf", "vfValue": "1.5"}, {"vfKind": "eeff", "vfValue": "0.5"}, {"loss": "-1"}} {
		bad["partId"] = id
		if _, err := sc.partChange("part.params", bad); err == nil {
			t.Errorf("%v accepted", bad)
		}
	}
}

// TestExportCarriesView checks that the chart and plot exports draw the
// view their links carry: the chart at 75 Ω says so, a plot slot shows the
// quantity asked, over the span asked.
func TestExportCarriesView(t *testing.T) {
	t.Parallel()
	f := newFixture(t, 101)
	_, svg := get(t, f.ts.URL+"/s/"+f.sess.EditToken+"/export/chart.svg?z0=75&zoom=2&cre=0.1&cim=0")
	if !strings.Contains(svg, "Z₀ = 75 Ω") || !strings.Contains(svg, `data-gamma-radius="0.5"`) {
		t.Errorf("exported chart does not carry the view: %.300s", svg)
	}
	_, plot := get(t, f.ts.URL+"/s/"+f.sess.EditToken+"/export/plot-refl.svg?plot.refl=S11:vswr&spanLo=150M&spanHi=170M")
	if !strings.Contains(plot, "VSWR from S11") || !strings.Contains(plot, `data-f0="150000000"`) {
		t.Errorf("exported plot does not carry the view: %.400s", plot)
	}
}

// A narrow span keeps its own detail: the plots of a span of 1 % of a
// 20,001-point sweep hold every measured point inside it (some 130), where
// the series thinned for the whole sweep keep only a few a pixel column of
// the whole (at most 4 × 640 × 1 % ≈ 26 there).
func TestSpanThinnedForItself(t *testing.T) {
	t.Parallel()
	f := newFixture(t, 20001)
	st, _, err := f.store.State(context.Background(), f.sess.ID)
	if err != nil {
		t.Fatal(err)
	}
	sc := f.srv.scene(f.sess.ID, st)
	lo, hi := 150e6, 151.5e6
	inSpan := func(s chartsvg.Series) int {
		n := 0
		for _, fHz := range s.FreqHz {
			if fHz >= lo && fHz <= hi {
				n++
			}
		}
		return n
	}
	sw := sc.traces[0].sweep
	want := 0
	for _, fHz := range sw.FreqHz {
		if fHz >= lo && fHz <= hi {
			want++
		}
	}
	for _, p := range sc.plotsFor(nil) {
		if p.id == "refl" && (len(p.series[0].Y) > 4*plotWidth || inSpan(p.series[0]) >= want) {
			t.Fatalf("whole-sweep series: %d points, %d in the span of %d: the case tells nothing apart", len(p.series[0].Y), inSpan(p.series[0]), want)
		}
	}
	for _, p := range sc.plotsFor(&pageView{SpanLo: lo, SpanHi: hi}) {
		if p.id != "refl" {
			continue
		}
		s := p.series[0]
		if got := inSpan(s); got != want {
			t.Errorf("the span's series holds %d of its %d measured points", got, want)
		}
		if len(s.Y) > want+2 {
			t.Errorf("the span's series holds %d points, more than the span's %d and one either side", len(s.Y), want)
		}
	}
}

// TestViewCachesBounded checks that a scene's caches by page view stay
// bounded however many views its pages ask for: plots per view, series
// per quantity and span, traces renormalised per chart reference.
func TestViewCachesBounded(t *testing.T) {
	t.Parallel()
	f := newFixture(t, 2001)
	st, _, err := f.store.State(context.Background(), f.sess.ID)
	if err != nil {
		t.Fatal(err)
	}
	sc := f.srv.scene(f.sess.ID, st)
	for i := range 200 {
		lo := 110e6 + 1e5*float64(i)
		sc.plotsFor(&pageView{ID: "v" + strconv.Itoa(i), SpanLo: lo, SpanHi: lo + 20e6})
		sc.dispGamma(sc.traces[0], 20+float64(i))
	}
	if len(sc.plotsC) > maxViewsKept || len(sc.seriesC) > maxSeriesKept || len(sc.seriesNote) > maxSeriesKept {
		t.Errorf("after 200 views the scene keeps plots of %d views and %d series (bounds %d, %d)", len(sc.plotsC), len(sc.seriesC), maxViewsKept, maxSeriesKept)
	}
	if len(sc.disp) > maxDispRefs*len(sc.traces) {
		t.Errorf("after 200 chart references the scene keeps %d renormalised traces (bound %d)", len(sc.disp), maxDispRefs*len(sc.traces))
	}
	// What is kept is still right: the latest view's plots are those of
	// its span.
	v := &pageView{ID: "last", SpanLo: 200e6, SpanHi: 210e6}
	for _, p := range sc.plotsFor(v) {
		if p.p.XMin != 200e6 || p.p.XMax != 210e6 {
			t.Errorf("plot %s spans %g–%g after the caches were renewed", p.id, p.p.XMin, p.p.XMax)
		}
	}
}

// TestStabilityQuantity checks the plots' 2-port stability choice: on a
// sweep of the bipolar device of Pozar's stability-circle example (S11
// 0.894∠−60.6°, S12 0.020∠62.4°, S21 3.122∠123.6°, S22 0.781∠−27.6°; the
// book's K = 0.607, rfmath/amp TestPozarStabilityExample) it draws K =
// 0.607132 and μ by Edwards–Sinsky's closed form (REFERENCE-CHECKS AM-2,
// computed here), with the line at 1; it is offered only with a 2-port
// sweep shown.
func TestStabilityQuantity(t *testing.T) {
	t.Parallel()
	f := newFixture(t, 101)
	ctx := context.Background()
	st, _, _ := f.store.State(ctx, f.sess.ID)
	for _, g := range f.srv.scene(f.sess.ID, st).quantityGroups("S11:db") {
		for _, o := range g.Options {
			if o.Value == "K:kmu" {
				t.Error("the stability choice is offered without a 2-port sweep")
			}
		}
	}
	p := func(mag, deg float64) complex128 { return cmplx.Rect(mag, deg*math.Pi/180) }
	s := [4]complex128{p(0.894, -60.6), p(0.020, 62.4), p(3.122, 123.6), p(0.781, -27.6)}
	sw := rfmath.NewSweep(3, 2, 50)
	for k := range 3 {
		sw.FreqHz[k] = 1.8e9 + 0.1e9*float64(k)
		sw.Set(k, 0, 0, s[0])
		sw.Set(k, 0, 1, s[1])
		sw.Set(k, 1, 0, s[2])
		sw.Set(k, 1, 1, s[3])
	}
	if _, err := f.store.Apply(ctx, f.sess.ID, sessions.Change{Op: sessions.OpSweepAdd, Name: "bjt", FileName: "bjt.s2p", Raw: []byte("!\n"), Sweep: sw}); err != nil {
		t.Fatal(err)
	}
	st, _, _ = f.store.State(ctx, f.sess.ID)
	sc := f.srv.scene(f.sess.ID, st)
	offered := false
	for _, g := range sc.quantityGroups("S11:db") {
		for _, o := range g.Options {
			offered = offered || o.Value == "K:kmu"
		}
	}
	if !offered {
		t.Error("the stability choice is not offered with a 2-port sweep shown")
	}
	delta := s[0]*s[3] - s[1]*s[2]
	mu := (1 - cmplx.Abs(s[0])*cmplx.Abs(s[0])) / (cmplx.Abs(s[3]-delta*cmplx.Conj(s[0])) + cmplx.Abs(s[1]*s[2]))
	series, _, note := sc.quantitySeries("K:kmu", nil, sc.fmin, sc.fmax)
	got := map[string][]float64{}
	for _, se := range series {
		got[se.ID] = se.Y
	}
	var kID, muID string
	for id := range got {
		switch {
		case strings.HasSuffix(id, "-k"):
			kID = id
		case strings.HasSuffix(id, "-mu"):
			muID = id
		}
	}
	if note != "" || kID == "" || muID == "" || got["k-one"] == nil {
		t.Fatalf("series %v, note %q", got, note)
	}
	for i := range got[kID] {
		if math.Abs(got[kID][i]-0.607132) > 1e-6 || math.Abs(got[muID][i]-mu) > 1e-9 || got["k-one"][i] != 1 {
			t.Errorf("point %d: K %g, μ %g (want 0.607132, %g), line %g", i, got[kID][i], got[muID][i], mu, got["k-one"][i])
		}
	}
	for _, p := range sc.plotsFor(&pageView{Plots: map[string]plotChoice{"p3": {Q: "K:kmu"}}}) {
		if p.id == "p3" && !strings.Contains(p.title, "Rollett K") {
			t.Errorf("the stability plot is titled %q", p.title)
		}
	}
}
