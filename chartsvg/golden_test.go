package chartsvg

import (
	"bytes"
	"encoding/xml"
	"errors"
	"flag"
	"io"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"testing"
)

var (
	update  = flag.Bool("update", false, "rewrite the golden files in ../testdata/chartsvg")
	demoDir = flag.String("demo-dir", "", "write the demo chart and plots as SVG files to this folder")
)

// smallChart is the golden chart: every layer, short synthetic traces.
func smallChart() (Chart, []Trace, []Marker, []PathSegment) {
	c := Chart{
		SizePx: 420, ImpedanceGrid: true, AdmittanceGrid: true, AngleScale: true, WavelengthScale: true,
		Z0Ohm: 50, VSWRCircles: []float64{2}, QArcs: []float64{2},
	}
	f, g := synth{2.45e9, 38, 6, 0.08e-9, 50}.sweep(2.2e9, 2.7e9, 41)
	f2, g2 := synth{2.44e9, 52, 3, 0.02e-9, 50}.sweep(2.2e9, 2.7e9, 41)
	tr := []Trace{
		{ID: "a", Name: "antenna (synthetic)", FreqHz: f, Gamma: g, Ticks: 5},
		{ID: "b", Name: "matched (synthetic)", FreqHz: f2, Gamma: g2, Dashed: true, Ticks: 5},
	}
	mk := []Marker{
		{ID: "m1", Num: 1, Gamma: g[20], FreqHz: f[20], Trace: "a"},
		{ID: "m2", Num: 2, Label: "edge", Gamma: g2[8], FreqHz: f2[8], Trace: "b"},
	}
	return c, tr, mk, demoPath(0.5)
}

func smallPlot() (Plot, []Series, []Band, []PlotMarker) {
	_, tr, _, _ := smallChart()
	return Plot{Width: 420, Height: 220, Title: "Return loss", YLabel: "Return loss", YUnit: "dB"},
		rlSeries(tr),
		[]Band{{Name: "band", LoHz: 2.4e9, HiHz: 2.5e9, Limit: 10, HasLimit: true}},
		[]PlotMarker{{ID: "m1", Num: 1, FreqHz: tr[0].FreqHz[20]}, {ID: "m2", Num: 2, FreqHz: tr[1].FreqHz[8]}}
}

func TestGolden(t *testing.T) {
	t.Parallel()
	for _, tc := range []struct {
		file   string
		render func(*bytes.Buffer) error
	}{
		{"small-chart.svg", func(b *bytes.Buffer) error {
			c, tr, mk, path := smallChart()
			return c.Render(b, tr, mk, path)
		}},
		{"small-chart-zoom.svg", func(b *bytes.Buffer) error {
			c, tr, mk, path := smallChart()
			c.Zoom, c.AdmittanceGrid, c.WavelengthScale = 0.5, false, false
			return c.Render(b, tr, mk, path)
		}},
		{"small-plot.svg", func(b *bytes.Buffer) error {
			p, s, bands, mk := smallPlot()
			return p.Render(b, s, bands, mk)
		}},
	} {
		t.Run(tc.file, func(t *testing.T) {
			t.Parallel()
			var buf bytes.Buffer
			if err := tc.render(&buf); err != nil {
				t.Fatal(err)
			}
			parseSVG(t, buf.String())
			path := filepath.Join("..", "testdata", "chartsvg", tc.file)
			if *update {
				if err := os.WriteFile(path, buf.Bytes(), 0o644); err != nil {
					t.Fatal(err)
				}
				return
			}
			want, err := os.ReadFile(path)
			if err != nil {
				t.Fatalf("%v (run go test ./chartsvg -run TestGolden -update to create it)", err)
			}
			if !bytes.Equal(buf.Bytes(), want) {
				t.Errorf("%s differs from the golden file (%d bytes, golden %d); look at both, then rerun with -update if the change is meant.\nfirst difference near: %q",
					tc.file, buf.Len(), len(want), firstDiff(buf.String(), string(want)))
			}
		})
	}
}

// firstDiff returns some context around the first byte where a and b differ.
func firstDiff(a, b string) string {
	i := 0
	for i < len(a) && i < len(b) && a[i] == b[i] {
		i++
	}
	lo := max(0, i-40)
	return strings.ToValidUTF8(a[lo:min(len(a), i+40)], "?")
}

// TestWriteDemo writes the demo chart and plots of the synthetic sweeps to
// SVG files (to -demo-dir when given, to look at them, else to a temporary
// folder) and reads each back: it must be an SVG document holding every
// trace, marker, series, band and title it was drawn with.
//
//	go test ./chartsvg -run TestWriteDemo -demo-dir=/tmp/matchbench-demo
func TestWriteDemo(t *testing.T) {
	t.Parallel()
	dir := *demoDir
	if dir == "" {
		dir = t.TempDir()
	}
	if err := os.MkdirAll(dir, 0o755); err != nil {
		t.Fatal(err)
	}
	c, tr, mk, path := fullChart(10001)
	ids := func(prefix string, tr []Trace) []string {
		var out []string
		for _, x := range tr {
			out = append(out, prefix+x.ID)
		}
		return out
	}
	markerIDs := func(prefix string, mk []Marker) []string {
		var out []string
		for _, m := range mk {
			out = append(out, prefix+m.ID)
		}
		return out
	}
	chartWant := append(append(ids("trace-", tr), markerIDs("mk-", mk)...), "match-path")
	files := []struct {
		name   string
		render func(*os.File) error
		ids    []string // element ids the file must hold
		text   []string // text the file must hold
		attrs  []string // attributes (name="value") of its root
	}{
		{"chart.svg", func(f *os.File) error { return c.Render(f, tr, mk, path) },
			chartWant, []string{"Reflection coefficient chart"}, []string{`data-gamma-radius="1"`}},
		{"chart-zoom.svg", func(f *os.File) error {
			z := c
			z.Zoom, z.AdmittanceGrid = 0.4, false
			return z.Render(f, tr, mk, path)
		}, chartWant, []string{"Reflection coefficient chart"}, []string{`data-gamma-radius="0.4"`}},
		{"return-loss.svg", func(f *os.File) error {
			p := Plot{Title: "Return loss", YLabel: "Return loss", YUnit: "dB"}
			return p.Render(f, rlSeries(tr), []Band{{Name: "2.4 GHz ISM", LoHz: 2.4e9, HiHz: 2.4835e9, Limit: 10, HasLimit: true}},
				plotMarkers(mk))
		}, append(ids("series-", tr), markerIDs("pmk-", mk)...), []string{"Return loss", "2.4 GHz ISM"}, nil},
		{"impedance.svg", func(f *os.File) error {
			r, x := rxSeries(tr[1])
			p := Plot{Title: "Impedance, port extension removed", YLabel: "Impedance", YUnit: "Ω"}
			return p.Render(f, []Series{r, x}, nil, plotMarkers(mk[:2]))
		}, append([]string{"series-r", "series-x"}, markerIDs("pmk-", mk[:2])...), []string{"Impedance, port extension removed"}, nil},
		{"vswr.svg", func(f *os.File) error {
			s := rlSeries(tr)
			for i := range s {
				for j, rl := range s[i].Y {
					g := 1 / pow10(rl/20)
					s[i].Y[j] = (1 + g) / (1 - g)
				}
			}
			p := Plot{Title: "VSWR", YLabel: "VSWR", LogY: true, YMin: 1, YMax: 20}
			return p.Render(f, s, []Band{{Name: "2.4 GHz ISM", LoHz: 2.4e9, HiHz: 2.4835e9, Limit: 2, HasLimit: true}}, plotMarkers(mk))
		}, append(ids("series-", tr), markerIDs("pmk-", mk)...), []string{"VSWR", "2.4 GHz ISM"}, nil},
	}
	for _, fc := range files {
		name := filepath.Join(dir, fc.name)
		f, err := os.Create(name)
		if err != nil {
			t.Fatal(err)
		}
		if err := fc.render(f); err != nil {
			t.Fatal(err)
		}
		if err := f.Close(); err != nil {
			t.Fatal(err)
		}
		t.Logf("wrote %s", name)

		b, err := os.ReadFile(name)
		if err != nil {
			t.Fatal(err)
		}
		root, got, text, err := svgContent(b)
		if err != nil {
			t.Errorf("%s: not a well-formed document: %v", fc.name, err)
			continue
		}
		if root.Name.Local != "svg" {
			t.Errorf("%s: root element <%s>, want <svg>", fc.name, root.Name.Local)
		}
		for _, id := range fc.ids {
			if !got[id] {
				t.Errorf("%s: no element with id %q", fc.name, id)
			}
		}
		for _, s := range fc.text {
			if !strings.Contains(text, s) {
				t.Errorf("%s: no text %q", fc.name, s)
			}
		}
		for _, a := range fc.attrs {
			k, v, _ := strings.Cut(a, "=")
			if !slices.ContainsFunc(root.Attr, func(x xml.Attr) bool { return x.Name.Local == k && strconv.Quote(x.Value) == v }) {
				t.Errorf("%s: root element lacks %s", fc.name, a)
			}
		}
	}
}

// svgContent parses the XML document b and returns its root element, the
// ids of its elements and its character data.
func svgContent(b []byte) (root xml.StartElement, ids map[string]bool, text string, err error) {
	ids = map[string]bool{}
	var sb strings.Builder
	d := xml.NewDecoder(bytes.NewReader(b))
	seenRoot := false
	for {
		tok, err := d.Token()
		if err == io.EOF {
			break
		}
		if err != nil {
			return root, nil, "", err
		}
		switch e := tok.(type) {
		case xml.StartElement:
			if !seenRoot {
				root, seenRoot = e.Copy(), true
			}
			for _, a := range e.Attr {
				if a.Name.Local == "id" {
					ids[a.Value] = true
				}
			}
		case xml.CharData:
			sb.Write(e)
		}
	}
	if !seenRoot {
		return root, nil, "", errors.New("no element")
	}
	return root, ids, sb.String(), nil
}

func plotMarkers(mk []Marker) []PlotMarker {
	out := make([]PlotMarker, len(mk))
	for i, m := range mk {
		out[i] = PlotMarker{ID: m.ID, Num: m.Num, Label: m.Label, FreqHz: m.FreqHz}
	}
	return out
}

// rxSeries returns R and X in ohms (50 Ω reference) of a trace.
func rxSeries(tr Trace) (Series, Series) {
	r := Series{ID: "r", Name: "R", FreqHz: tr.FreqHz, Y: make([]float64, len(tr.Gamma))}
	x := Series{ID: "x", Name: "X", FreqHz: tr.FreqHz, Y: make([]float64, len(tr.Gamma))}
	for i, g := range tr.Gamma {
		z := 50 * gammaToZ(g)
		r.Y[i], x.Y[i] = real(z), imag(z)
	}
	return r, x
}
