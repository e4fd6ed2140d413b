package chartsvg

import (
	"bytes"
	"errors"
	"fmt"
	"math"
	"strconv"
	"strings"
	"testing"
)

// fullChart returns a chart with every option on and its data: the four
// synthetic demo traces of n points, three markers and a two-step path.
func fullChart(n int) (Chart, []Trace, []Marker, []PathSegment) {
	c := Chart{
		ImpedanceGrid: true, AdmittanceGrid: true, AngleScale: true, WavelengthScale: true,
		Z0Ohm: 50, VSWRCircles: []float64{2}, ReturnLossCircleDB: []float64{10}, QArcs: []float64{1, 3},
	}
	tr := demoTraces(n)
	mid := n / 2
	mk := []Marker{
		{ID: "m1", Num: 1, Gamma: tr[0].Gamma[mid], FreqHz: tr[0].FreqHz[mid], Trace: "ant"},
		{ID: "m2", Num: 2, Label: "low edge", Gamma: tr[0].Gamma[n/4], FreqHz: tr[0].FreqHz[n/4], Trace: "ant"},
		{ID: "m3", Num: 3, Gamma: tr[3].Gamma[3*n/4], FreqHz: tr[3].FreqHz[3*n/4], Trace: "match"},
		{ID: "m4", Num: 4, Gamma: tr[2].Gamma[n/3], FreqHz: tr[2].FreqHz[n/3], Trace: "cable"},
	}
	path := demoPath(0.5)
	return c, tr, mk, path
}

// demoPath is an L-network's path at one frequency: a series reactance
// along r = 0.4 from z = 0.4 + j0.6, then a shunt susceptance along the
// conductance circle it reaches; the second step drawn to fraction f.
func demoPath(f float64) []PathSegment {
	z0 := complex(0.4, 0.6)
	z1 := complex(0.4, -0.49)
	g1 := ZToGamma(z1)
	y1 := 1 / z1
	g2 := YToGamma(complex(real(y1), 0))
	return []PathSegment{
		{Kind: PathConstR, From: ZToGamma(z0), To: g1, Label: "series C"},
		{Kind: PathConstG, From: g1, To: g2, Fraction: f, Label: "shunt L"},
	}
}

func render(t testing.TB, c *Chart, tr []Trace, mk []Marker, path []PathSegment) string {
	t.Helper()
	var buf bytes.Buffer
	if err := c.Render(&buf, tr, mk, path); err != nil {
		t.Fatal(err)
	}
	return buf.String()
}

func TestRenderIsXMLWithLayerIDs(t *testing.T) {
	t.Parallel()
	for _, prefix := range []string{"", "left-"} {
		t.Run("prefix "+prefix, func(t *testing.T) {
			t.Parallel()
			c, tr, mk, path := fullChart(2001)
			c.IDPrefix = prefix
			c.Zoom = 0.8
			tr[1].Name = `a <b> & "c"` // escaped, or the XML would not parse
			doc := render(t, &c, tr, mk, path)
			root := parseSVG(t, doc)
			if root.name != "svg" {
				t.Fatalf("root is %q", root.name)
			}
			if got := root.attr["data-gamma-scale"]; got != strconv.FormatFloat(c.Scale(), 'g', 8, 64) {
				t.Errorf("data-gamma-scale = %q, want %v", got, c.Scale())
			}
			ids := map[string]int{}
			root.walk(func(e *element) {
				if id, ok := e.attr["id"]; ok {
					ids[id]++
				}
			})
			want := []string{"grid", "clip", "traces", "match-path", "markers", "legend"}
			for _, x := range tr {
				want = append(want, "trace-"+x.ID)
			}
			for _, m := range mk {
				want = append(want, "mk-"+m.ID)
			}
			for _, id := range want {
				if ids[prefix+id] != 1 {
					t.Errorf("id %q appears %d times, want once", prefix+id, ids[prefix+id])
				}
			}
			for id, n := range ids {
				if n != 1 {
					t.Errorf("id %q appears %d times", id, n)
				}
			}
			if got := root.byID(prefix + "legend").allText(); !strings.Contains(got, `a <b> & "c"`) {
				t.Errorf("legend text %q lacks the escaped name", got)
			}
			// Layers that draw data are clipped to the zoomed disc.
			for _, id := range []string{"traces", "markers", "match-path"} {
				if got := root.byID(prefix + id).attr["clip-path"]; got != "url(#"+prefix+"clip)" {
					t.Errorf("%s clip-path = %q", id, got)
				}
			}
		})
	}
}

// TestLayersMatchRender checks that each layer written alone is byte for
// byte the same as in the whole chart, so a page can swap it in place.
func TestLayersMatchRender(t *testing.T) {
	t.Parallel()
	c, tr, mk, path := fullChart(3001)
	doc := render(t, &c, tr, mk, path)
	layers := map[string]func(*bytes.Buffer) error{
		"grid":    func(b *bytes.Buffer) error { return c.RenderGrid(b) },
		"traces":  func(b *bytes.Buffer) error { return c.RenderTraces(b, tr) },
		"markers": func(b *bytes.Buffer) error { return c.RenderMarkers(b, mk) },
		"path":    func(b *bytes.Buffer) error { return c.RenderPath(b, path) },
		"legend":  func(b *bytes.Buffer) error { return c.RenderLegend(b, tr) },
		"marker":  func(b *bytes.Buffer) error { return c.RenderMarker(b, mk[1]) },
	}
	for name, f := range layers {
		var b bytes.Buffer
		if err := f(&b); err != nil {
			t.Fatal(err)
		}
		if b.Len() < 40 || !strings.Contains(doc, b.String()) {
			t.Errorf("layer %s (%d bytes) is not part of the whole chart", name, b.Len())
		}
	}
}

func TestMarkerPlacementAndShapes(t *testing.T) {
	t.Parallel()
	c := Chart{SizePx: 500}
	var mk []Marker
	for i := 1; i <= 9; i++ {
		g := complex(0.1*float64(i)-0.5, 0.05*float64(i))
		mk = append(mk, Marker{ID: fmt.Sprint("k", i), Num: i, Gamma: g, FreqHz: 1e9 + float64(i)})
	}
	var buf bytes.Buffer
	if err := c.RenderMarkers(&buf, mk); err != nil {
		t.Fatal(err)
	}
	root := parseSVG(t, buf.String())
	shapes := map[string]int{}
	for _, m := range mk {
		e := root.byID("mk-" + m.ID)
		if e == nil {
			t.Fatalf("no group for marker %s", m.ID)
		}
		var x, y float64
		if _, err := fmt.Sscanf(e.attr["transform"], "translate(%g %g)", &x, &y); err != nil {
			t.Fatalf("transform %q: %v", e.attr["transform"], err)
		}
		wx, wy := c.GammaToXY(m.Gamma)
		if math.Abs(x-wx) > 0.05+1e-9 || math.Abs(y-wy) > 0.05+1e-9 {
			t.Errorf("marker %s at (%v, %v), want (%v, %v)", m.ID, x, y, wx, wy)
		}
		if f, _ := strconv.ParseFloat(e.attr["data-f"], 64); f != m.FreqHz {
			t.Errorf("marker %s data-f = %q, want %v", m.ID, e.attr["data-f"], m.FreqHz)
		}
		if got := strings.TrimSpace(e.children[1].text); got != strconv.Itoa(m.Num) {
			t.Errorf("marker %s number text %q", m.ID, got)
		}
		shapes[e.children[0].attr["d"]]++
	}
	// Numbers 1 to 8 each have their own outline; 9 repeats 1's.
	if len(shapes) != 8 {
		t.Errorf("%d distinct outlines for 9 markers, want 8", len(shapes))
	}
}

// failWriter fails every write once it has taken limit bytes and counts
// the writes it was asked to do from then on.
type failWriter struct {
	limit, n, after int
}

var errDiskFull = errors.New("disk full")

func (w *failWriter) Write(p []byte) (int, error) {
	if w.n >= w.limit {
		w.after++
		return 0, errDiskFull
	}
	w.n += len(p)
	return len(p), nil
}

func TestWriterErrorIsSticky(t *testing.T) {
	t.Parallel()
	c, tr, mk, path := fullChart(10001)
	for _, tc := range []struct {
		name   string
		render func(*failWriter) error
	}{
		{"chart", func(w *failWriter) error { return c.Render(w, tr, mk, path) }},
		{"plot", func(w *failWriter) error {
			p := Plot{}
			return p.Render(w, []Series{{ID: "a", FreqHz: tr[2].FreqHz, Y: make([]float64, len(tr[2].FreqHz))}}, nil, nil)
		}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			w := &failWriter{limit: 0}
			err := tc.render(w)
			if !errors.Is(err, errDiskFull) {
				t.Fatalf("error %v, want %v", err, errDiskFull)
			}
			if w.after != 1 {
				t.Errorf("%d writes after the first error, want 1 (the one that failed)", w.after)
			}
		})
	}
}

func TestLengthMismatchPanics(t *testing.T) {
	t.Parallel()
	for _, tc := range []struct {
		name string
		f    func()
		msg  string
	}{
		{"trace", func() {
			c := Chart{}
			_ = c.RenderTraces(&bytes.Buffer{}, []Trace{{FreqHz: []float64{1, 2}, Gamma: []complex128{0}}})
		}, badTraceLength},
		{"series", func() {
			p := Plot{XMin: 1, XMax: 2}
			_ = p.RenderSeries(&bytes.Buffer{}, []Series{{FreqHz: []float64{1, 2}, Y: []float64{0}}})
		}, badSeriesLength},
	} {
		t.Run(tc.name, func(t *testing.T) {
			defer func() {
				if r := recover(); r != tc.msg {
					t.Errorf("panic %v, want %q", r, tc.msg)
				}
			}()
			tc.f()
		})
	}
}

func TestOverlayRadii(t *testing.T) {
	t.Parallel()
	// REFERENCE-CHECKS §2a: VSWR 2 ↔ |Γ| = 1/3; §2b: RL 10 dB ↔ |Γ| 0.316.
	c := Chart{VSWRCircles: []float64{2}, ReturnLossCircleDB: []float64{10}}
	var buf bytes.Buffer
	if err := c.RenderGrid(&buf); err != nil {
		t.Fatal(err)
	}
	root := parseSVG(t, buf.String())
	var radii []float64
	root.walk(func(e *element) {
		if e.name == "path" && e.attr["stroke-dasharray"] == "7 4" {
			for _, a := range parseArcs(t, e.attr["d"]) {
				radii = append(radii, a.r/c.Scale())
			}
		}
	})
	for _, want := range []float64{1.0 / 3, 0.316} {
		if !containsApprox(radii, want, 1e-3) {
			t.Errorf("no overlay circle of |Γ| %v among %v", want, radii)
		}
	}
	if !strings.Contains(root.allText(), "VSWR 2") || !strings.Contains(root.allText(), "RL 10 dB") {
		t.Errorf("overlay labels missing: %q", root.allText())
	}
}

func TestTicksAtRoundFrequencies(t *testing.T) {
	t.Parallel()
	c := Chart{}
	f, g := synth{2.45e9, 38, 6, 0, 50}.sweep(2.0e9, 2.9e9, 901)
	var buf bytes.Buffer
	if err := c.RenderTraces(&buf, []Trace{{ID: "a", FreqHz: f, Gamma: g, Ticks: 9}}); err != nil {
		t.Fatal(err)
	}
	text := parseSVG(t, buf.String()).allText()
	// 0.9 GHz over 9 ticks is a 0.1 GHz step (1-2-5 rule, by hand): ticks
	// at 2.0, 2.1, … 2.9 GHz, labelled with one decimal where room allows.
	for _, want := range []string{"2.0 GHz", "2.5 GHz", "2.9 GHz"} {
		if !strings.Contains(text, want) {
			t.Errorf("tick label %q missing from %q", want, text)
		}
	}
}
