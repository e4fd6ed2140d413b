package chartsvg

import (
	"bytes"
	"fmt"
	"math"
	"strconv"
	"strings"
	"testing"
)

func TestNiceStep(t *testing.T) {
	t.Parallel()
	// Steps of 1, 2 or 5 × 10^k nearest span/target (worked by hand).
	for _, tc := range []struct {
		span   float64
		target int
		want   float64
	}{
		{0.9e9, 9, 1e8},  // 1e8 exactly
		{0.9e9, 8, 1e8},  // 1.125e8 → 1e8
		{1, 5, 0.2},      // 0.2
		{37, 5, 5},       // 7.4 → 5
		{100, 4, 20},     // 25 → 20
		{83.5e6, 6, 1e7}, // 1.39e7 → 1e7
		{16.8, 5, 2},     // 3.36 → 2
		{40, 5, 10},      // 8 → 10
	} {
		if got := niceStep(tc.span, tc.target); math.Abs(got-tc.want) > tc.want*1e-12 {
			t.Errorf("niceStep(%g, %d) = %g, want %g", tc.span, tc.target, got, tc.want)
		}
	}
	if got := niceStep(0, 5); got != 0 {
		t.Errorf("niceStep(0, 5) = %g, want 0", got)
	}
}

func TestFormatHz(t *testing.T) {
	t.Parallel()
	for _, tc := range []struct {
		hz   float64
		want string
	}{
		{2.4e9, "2.4 GHz"},
		{915e6, "915 MHz"},
		{13.56e6, "13.56 MHz"},
		{1e3, "1 kHz"},
		{50, "50 Hz"},
		{1.57542e9, "1.57542 GHz"},
	} {
		if got := FormatHz(tc.hz); got != tc.want {
			t.Errorf("FormatHz(%g) = %q, want %q", tc.hz, got, tc.want)
		}
	}
	for _, tc := range []struct {
		hz, step float64
		want     string
	}{
		{2.4e9, 0.05e9, "2.40 GHz"},
		{2.45e9, 0.05e9, "2.45 GHz"},
		{2e9, 0.1e9, "2.0 GHz"},
		{2e9, 0.5e9, "2.0 GHz"},
		{3e9, 1e9, "3 GHz"},
		{2.4e9, 0.025e9, "2.400 GHz"},
	} {
		div, unit := siHz(tc.hz)
		if got := formatHzStep(tc.hz, tc.step, div, unit); got != tc.want {
			t.Errorf("formatHzStep(%g, %g) = %q, want %q", tc.hz, tc.step, got, tc.want)
		}
	}
}

// rlSeries returns the return loss, −20·log10|Γ| dB, of the demo traces.
func rlSeries(tr []Trace) []Series {
	var out []Series
	for _, x := range tr {
		y := make([]float64, len(x.Gamma))
		for i, g := range x.Gamma {
			y[i] = -20 * math.Log10(math.Hypot(real(g), imag(g)))
		}
		out = append(out, Series{ID: x.ID, Name: x.Name, FreqHz: x.FreqHz, Y: y, Dashed: x.Dashed})
	}
	return out
}

func TestPlotResolve(t *testing.T) {
	t.Parallel()
	s := []Series{{ID: "a", FreqHz: []float64{1e9, 2e9, 3e9}, Y: []float64{3.2, math.NaN(), 17.9}}}
	bands := []Band{{LoHz: 1.5e9, HiHz: 2e9, Limit: 20, HasLimit: true}}
	for _, tc := range []struct {
		name                   string
		p                      Plot
		xmin, xmax, ymin, ymax float64
	}{
		// Data 3.2–17.9 and the limit 20: 16.8/5 = 3.36 rounds to a step
		// of 2 (by hand), which widens the range to 2–20.
		{"auto", Plot{}, 1e9, 3e9, 2, 20},
		{"manual y", Plot{YMin: -5, YMax: 40}, 1e9, 3e9, -5, 40},
		// Only the points inside the x range count: none here (the one
		// at 2 GHz is NaN), so y spans the limit alone, 20, widened by
		// ±10 % (a constant's range) to 18–22.
		{"manual x", Plot{XMin: 1.2e9, XMax: 2.8e9}, 1.2e9, 2.8e9, 18, 22},
		// Log: decades around 3.2 and 20.
		{"log", Plot{LogY: true}, 1e9, 3e9, 1, 100},
	} {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			q := tc.p.Resolve(s, bands)
			if q.XMin != tc.xmin || q.XMax != tc.xmax || q.YMin != tc.ymin || q.YMax != tc.ymax {
				t.Errorf("ranges x [%g, %g] y [%g, %g], want x [%g, %g] y [%g, %g]",
					q.XMin, q.XMax, q.YMin, q.YMax, tc.xmin, tc.xmax, tc.ymin, tc.ymax)
			}
		})
	}
}

func TestLogTicks(t *testing.T) {
	t.Parallel()
	p := Plot{LogY: true, YMin: 1, YMax: 100}
	l := p.layout(nil)
	got := fmt.Sprint(p.yTicks(&l).vals)
	if want := "[1 2 5 10 20 50 100]"; got != want {
		t.Errorf("log ticks %s, want %s", got, want)
	}
}

func TestPlotRender(t *testing.T) {
	t.Parallel()
	tr := demoTraces(10001)
	series := rlSeries(tr)
	bands := []Band{
		{Name: "2.4 GHz ISM", LoHz: 2.4e9, HiHz: 2.4835e9, Limit: 10, HasLimit: true},
		{LoHz: 2.4835e9, HiHz: 2.5e9, Limit: 6, HasLimit: true},
	}
	markers := []PlotMarker{{ID: "m1", Num: 1, FreqHz: 2.45e9}, {ID: "m2", Num: 2, FreqHz: 2.2e9, Label: "low"}}
	p := Plot{Title: "Return loss", YLabel: "Return loss", YUnit: "dB", IDPrefix: "rl-"}
	var buf bytes.Buffer
	if err := p.Render(&buf, series, bands, markers); err != nil {
		t.Fatal(err)
	}
	if buf.Len() > 40000 {
		t.Errorf("plot of 4 × 10001 points is %d bytes, want ≤ 40000", buf.Len())
	}
	root := parseSVG(t, buf.String())
	for _, id := range []string{"axes", "bands", "series", "series-ant", "series-match", "pmarkers", "pmk-m1", "pmk-m2", "plegend"} {
		if root.byID("rl-"+id) == nil {
			t.Errorf("no element with id rl-%s", id)
		}
	}
	q := p.Resolve(series, bands)
	l := q.layout(series)

	// The limit lines: one step line, 10 dB over the first band, stepping
	// to 6 dB over the second.
	var limit *element
	root.byID("rl-bands").walk(func(e *element) {
		if e.name == "path" {
			limit = e
		}
	})
	if limit == nil {
		t.Fatal("no limit line")
	}
	toks := tokenize(t, limit.attr["d"])
	var cmds []string
	for _, tk := range toks {
		if tk.cmd != 0 {
			cmds = append(cmds, string(tk.cmd))
		}
	}
	if got := strings.Join(cmds, ""); got != "MHVH" {
		t.Fatalf("limit line commands %q, want MHVH (one step line)", got)
	}
	vals := []float64{toks[1].num, toks[2].num, toks[4].num, toks[6].num, toks[8].num}
	wantVals := []float64{l.px(2.4e9), l.py(10), l.px(2.4835e9), l.py(6), l.px(2.5e9)}
	for i := range vals {
		if math.Abs(vals[i]-wantVals[i]) > 0.05+1e-9 {
			t.Errorf("limit line value %d = %g, want %g", i, vals[i], wantVals[i])
		}
	}

	// Each marker's shapes sit on the series at its frequency.
	m := root.byID("rl-pmk-m1")
	nShapes := 0
	for _, e := range m.children {
		if e.name != "path" || e.attr["transform"] == "" {
			continue
		}
		var x, y float64
		if _, err := fmt.Sscanf(e.attr["transform"], "translate(%g %g)", &x, &y); err != nil {
			t.Fatal(err)
		}
		if math.Abs(x-l.px(2.45e9)) > 0.05+1e-9 {
			t.Errorf("marker shape at x %g, want %g", x, l.px(2.45e9))
		}
		found := false
		for i := range series {
			v, _ := seriesAt(&series[i], 2.45e9)
			if math.Abs(y-l.py(v)) <= 0.05+1e-9 {
				found = true
			}
		}
		if !found {
			t.Errorf("marker shape at y %g lies on no series", y)
		}
		nShapes++
	}
	if nShapes != len(series) {
		t.Errorf("%d marker shapes, want one per series (%d)", nShapes, len(series))
	}

	// Every point of each series lies within a pixel column and the
	// tolerance of the drawn curve.
	for i, s := range series {
		e := root.byID("rl-series-" + s.ID)
		subs := parsePolyline(t, e.children[0].attr["d"])
		if len(subs) != 1 {
			t.Fatalf("series %d: %d subpaths", i, len(subs))
		}
		worst := 0.0
		for j := range s.Y {
			p := pt{l.px(s.FreqHz[j]), l.py(s.Y[j])}
			worst = math.Max(worst, polyDist(p, subs[0]))
		}
		if worst > 1+DefaultTolerancePx+0.0708 {
			t.Errorf("series %s: a point lies %.2f from the curve", s.ID, worst)
		}
	}
}

func TestPlotRXOnOneAxis(t *testing.T) {
	t.Parallel()
	// R and X in ohms of the synthetic antenna, both on one y axis.
	tr := demoTraces(2001)[1]
	r := make([]float64, len(tr.Gamma))
	x := make([]float64, len(tr.Gamma))
	lo, hi := math.Inf(1), math.Inf(-1)
	for i, g := range tr.Gamma {
		z := 50 * gammaToZ(g)
		r[i], x[i] = real(z), imag(z)
		lo = math.Min(lo, math.Min(r[i], x[i]))
		hi = math.Max(hi, math.Max(r[i], x[i]))
	}
	p := Plot{YLabel: "Impedance", YUnit: "Ω"}
	q := p.Resolve([]Series{{ID: "r", FreqHz: tr.FreqHz, Y: r}, {ID: "x", FreqHz: tr.FreqHz, Y: x}}, nil)
	if q.YMin > lo || q.YMax < hi || q.YMin >= 0 {
		t.Errorf("y range [%g, %g] does not hold R and X in [%g, %g]", q.YMin, q.YMax, lo, hi)
	}
}

// TestPlotLayersMatchRender checks that the layers of a resolved plot,
// written alone, are byte for byte those of the whole plot.
func TestPlotLayersMatchRender(t *testing.T) {
	t.Parallel()
	series := rlSeries(demoTraces(3001))
	bands := []Band{{Name: "ISM", LoHz: 2.4e9, HiHz: 2.4835e9, Limit: 10, HasLimit: true}}
	markers := []PlotMarker{{ID: "m1", Num: 1, FreqHz: 2.45e9}, {ID: "m2", Num: 2, FreqHz: 2.2e9}}
	p := Plot{Title: "Return loss", YLabel: "Return loss", YUnit: "dB"}
	var whole bytes.Buffer
	if err := p.Render(&whole, series, bands, markers); err != nil {
		t.Fatal(err)
	}
	q := p.Resolve(series, bands)
	for name, f := range map[string]func(*bytes.Buffer) error{
		"series":  func(b *bytes.Buffer) error { return q.RenderSeries(b, series) },
		"markers": func(b *bytes.Buffer) error { return q.RenderMarkers(b, markers, series) },
		"marker":  func(b *bytes.Buffer) error { return q.RenderMarker(b, markers[1], series) },
	} {
		var b bytes.Buffer
		if err := f(&b); err != nil {
			t.Fatal(err)
		}
		if b.Len() < 40 || !bytes.Contains(whole.Bytes(), b.Bytes()) {
			t.Errorf("layer %s (%d bytes) is not part of the whole plot", name, b.Len())
		}
	}
}

// A plot of distance labels its x ticks in metres with an SI prefix.
func TestPlotXUnit(t *testing.T) {
	t.Parallel()
	p := Plot{XUnit: "m", XLabel: "Distance"}
	s := Series{ID: "z", FreqHz: []float64{0, 0.25, 0.5}, Y: []float64{50, 75, 50}}
	var b strings.Builder
	if err := p.Render(&b, []Series{s}, nil, nil); err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(b.String(), " mm<") && !strings.Contains(b.String(), " m<") {
		t.Errorf("no metre tick labels in %q", b.String()[:300])
	}
	if strings.Contains(b.String(), "Hz<") {
		t.Error("a distance plot labels ticks in Hz")
	}
	if div, u := siPrefix(0.004, "m"); div != 1e-3 || u != "mm" {
		t.Errorf("siPrefix(0.004, m) = %g, %q", div, u)
	}
}

// TestPlotScalesToSpanAndRobust checks the automatic y range: a span that
// leaves out the near-DC points scales to the rest, and Robust cuts a few
// far outliers (R of a cable sweep from near DC, as in the via-cable demo)
// while keeping a tail that continues the curve; the points cut are drawn
// clipped, with marks and a count.
func TestPlotScalesToSpanAndRobust(t *testing.T) {
	t.Parallel()
	var f, y []float64
	for k := 0; k < 200; k++ {
		f = append(f, 1e6+5e6*float64(k))
		v := 40 + 10*math.Sin(float64(k)/20) // 30…50 Ω
		if k < 3 {
			v = 20000 // the first points near DC
		}
		y = append(y, v)
	}
	s := []Series{{ID: "r", FreqHz: f, Y: y}}
	full := (&Plot{}).Resolve(s, nil)
	if full.YMax < 20000 {
		t.Fatalf("plain autoscale %g…%g: the outliers should set it", full.YMin, full.YMax)
	}
	span := (&Plot{XMin: 100e6, XMax: 900e6}).Resolve(s, nil)
	if span.YMin < 25 || span.YMax > 55 {
		t.Errorf("span without the near-DC points: %g…%g, want about 30…50", span.YMin, span.YMax)
	}
	rob := (&Plot{Robust: true}).Resolve(s, nil)
	if rob.YMin < 25 || rob.YMax > 55 {
		t.Errorf("robust autoscale %g…%g, want about 30…50", rob.YMin, rob.YMax)
	}
	// A genuine tail (a steady rise to 80 over the last quarter) is kept.
	y2 := append([]float64(nil), y[3:]...)
	for k := 150; k < len(y2); k++ {
		y2[k] = 50 + 30*float64(k-150)/float64(len(y2)-151)
	}
	tail := (&Plot{Robust: true}).Resolve([]Series{{ID: "r", FreqHz: f[3:], Y: y2}}, nil)
	if tail.YMax < 80 {
		t.Errorf("robust autoscale cut a tail that continues the curve: max %g, want ≥ 80", tail.YMax)
	}
	var b strings.Builder
	if err := rob.Render(&b, s, nil, nil); err != nil {
		t.Fatal(err)
	}
	root := parseSVG(t, b.String())
	g := root.byID("series-r")
	if g == nil || g.attr["data-clipped"] != "3" {
		t.Fatalf("series group %v, want data-clipped 3", g)
	}
	if !strings.Contains(b.String(), "beyond the scale") || !strings.Contains(b.String(), `clip-path="url(#area)"`) {
		t.Errorf("no clip note or clip path in %s", b.String()[:300])
	}
}

// TestSpreadLabels checks that marker numbers that would overlap centred
// are moved aside: two markers 2 MHz apart on a 1 GHz span (about a pixel)
// get the lower one's number ending left of its line and the other's
// starting right of it; a lone marker stays centred.
func TestSpreadLabels(t *testing.T) {
	t.Parallel()
	s := []Series{{ID: "a", FreqHz: []float64{1e9, 2e9}, Y: []float64{0, 1}}}
	p := (&Plot{}).Resolve(s, nil)
	ms := []PlotMarker{{ID: "b", Num: 2, FreqHz: 1.502e9}, {ID: "a", Num: 1, FreqHz: 1.5e9}, {ID: "c", Num: 3, FreqHz: 1.9e9}}
	p.SpreadLabels(ms, s)
	if ms[1].Anchor != -1 || ms[0].Anchor != 1 || ms[2].Anchor != 0 {
		t.Errorf("anchors %d %d %d, want −1 for 1.5 GHz, +1 for 1.502 GHz, 0 for 1.9 GHz", ms[1].Anchor, ms[0].Anchor, ms[2].Anchor)
	}
	var b strings.Builder
	p.Render(&b, s, nil, ms)
	root := parseSVG(t, b.String())
	for id, want := range map[string]string{"pmk-a": "end", "pmk-b": "start", "pmk-c": "middle"} {
		var got string
		root.byID(id).walk(func(e *element) {
			if e.name == "text" {
				got = e.attr["text-anchor"]
			}
		})
		if got != want {
			t.Errorf("%s's number anchored %q, want %q", id, got, want)
		}
	}
}

// TestPlotEdgeLabels checks that no x tick label runs off the drawing: the
// last label of 0.8–1.0 GHz, "1.00 GHz", is set to end at the right edge.
func TestPlotEdgeLabels(t *testing.T) {
	t.Parallel()
	s := []Series{{ID: "a", FreqHz: []float64{0.8e9, 1e9}, Y: []float64{0, 1}}}
	var b strings.Builder
	(&Plot{Width: 640, Height: 260}).Render(&b, s, nil, nil)
	root := parseSVG(t, b.String())
	found := false
	root.walk(func(e *element) {
		if e.name == "text" && strings.TrimSpace(e.text) == "1.00 GHz" {
			found = true
			x, _ := strconv.ParseFloat(e.attr["x"], 64)
			if e.attr["text-anchor"] != "end" || x > 640 {
				t.Errorf("last tick label at x %v anchored %q", x, e.attr["text-anchor"])
			}
		}
	})
	if !found {
		t.Error("no 1.00 GHz tick label")
	}
}
