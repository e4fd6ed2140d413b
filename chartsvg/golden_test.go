package chartsvg

import (
	"bytes"
	"flag"
	"os"
	"path/filepath"
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
// SVG files, when -demo-dir is given:
//
//	go test ./chartsvg -run TestWriteDemo -demo-dir=/tmp/matchbench-demo
func TestWriteDemo(t *testing.T) {
	if *demoDir == "" {
		t.Skip("no -demo-dir given")
	}
	if err := os.MkdirAll(*demoDir, 0o755); err != nil {
		t.Fatal(err)
	}
	c, tr, mk, path := fullChart(10001)
	files := map[string]func(*os.File) error{
		"chart.svg": func(f *os.File) error { return c.Render(f, tr, mk, path) },
		"chart-zoom.svg": func(f *os.File) error {
			z := c
			z.Zoom, z.AdmittanceGrid = 0.4, false
			return z.Render(f, tr, mk, path)
		},
		"return-loss.svg": func(f *os.File) error {
			p := Plot{Title: "Return loss", YLabel: "Return loss", YUnit: "dB"}
			return p.Render(f, rlSeries(tr), []Band{{Name: "2.4 GHz ISM", LoHz: 2.4e9, HiHz: 2.4835e9, Limit: 10, HasLimit: true}},
				plotMarkers(mk))
		},
		"impedance.svg": func(f *os.File) error {
			r, x := rxSeries(tr[1])
			p := Plot{Title: "Impedance, port extension removed", YLabel: "Impedance", YUnit: "Ω"}
			return p.Render(f, []Series{r, x}, nil, plotMarkers(mk[:2]))
		},
		"vswr.svg": func(f *os.File) error {
			s := rlSeries(tr)
			for i := range s {
				for j, rl := range s[i].Y {
					g := 1 / pow10(rl/20)
					s[i].Y[j] = (1 + g) / (1 - g)
				}
			}
			p := Plot{Title: "VSWR", YLabel: "VSWR", LogY: true, YMin: 1, YMax: 20}
			return p.Render(f, s, []Band{{Name: "2.4 GHz ISM", LoHz: 2.4e9, HiHz: 2.4835e9, Limit: 2, HasLimit: true}}, plotMarkers(mk))
		},
	}
	for name, render := range files {
		f, err := os.Create(filepath.Join(*demoDir, name))
		if err != nil {
			t.Fatal(err)
		}
		if err := render(f); err != nil {
			t.Fatal(err)
		}
		if err := f.Close(); err != nil {
			t.Fatal(err)
		}
		t.Logf("wrote %s", filepath.Join(*demoDir, name))
	}
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
