package chartsvg

import (
	"bytes"
	"io"
	"math/rand/v2"
	"testing"
)

// countWriter counts the bytes written to it.
type countWriter struct{ n int }

func (w *countWriter) Write(p []byte) (int, error) { w.n += len(p); return len(p), nil }

// benchChart is the full chart of the benchmarks: both grids, scales and
// overlays, four traces of n points with a little noise (0.0003 in Γ,
// about −70 dB, seeded), four markers and a two-step path.
func benchChart(n int) (Chart, []Trace, []Marker, []PathSegment) {
	c, tr, mk, path := fullChart(n)
	rng := rand.New(rand.NewPCG(1, 1))
	for i := range tr {
		for j := range tr[i].Gamma {
			tr[i].Gamma[j] += complex(3e-4*rng.NormFloat64(), 3e-4*rng.NormFloat64())
		}
	}
	return c, tr, mk, path
}

func BenchmarkChartFull(b *testing.B) {
	c, tr, mk, path := benchChart(10001)
	var w countWriter
	b.ReportAllocs()
	b.ResetTimer()
	for b.Loop() {
		w.n = 0
		if err := c.Render(&w, tr, mk, path); err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric(float64(w.n), "svg-bytes")
}

func BenchmarkGrid(b *testing.B) {
	c, _, _, _ := benchChart(2)
	var w countWriter
	b.ReportAllocs()
	for b.Loop() {
		w.n = 0
		if err := c.RenderGrid(&w); err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric(float64(w.n), "svg-bytes")
}

// BenchmarkMarkerLayer renders the four markers of the full chart. The
// layer never sees the traces, so its cost cannot grow with their length.
func BenchmarkMarkerLayer(b *testing.B) {
	c, _, mk, _ := benchChart(10001)
	var w countWriter
	b.ReportAllocs()
	for b.Loop() {
		w.n = 0
		if err := c.RenderMarkers(&w, mk); err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric(float64(w.n), "svg-bytes")
}

func BenchmarkMarkerOne(b *testing.B) {
	c, _, mk, _ := benchChart(10001)
	var w countWriter
	b.ReportAllocs()
	for b.Loop() {
		w.n = 0
		if err := c.RenderMarker(&w, mk[0]); err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric(float64(w.n), "svg-bytes")
}

// BenchmarkPathFrame renders one animation frame of the matching path: the
// first step whole and the second drawn to 40 %.
func BenchmarkPathFrame(b *testing.B) {
	c := Chart{ImpedanceGrid: true}
	path := demoPath(0.4)
	var w countWriter
	b.ReportAllocs()
	for b.Loop() {
		w.n = 0
		if err := c.RenderPath(&w, path); err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric(float64(w.n), "svg-bytes")
}

func BenchmarkPlotReturnLoss(b *testing.B) {
	_, tr, mk, _ := benchChart(10001)
	s := rlSeries(tr)
	p := Plot{Title: "Return loss", YLabel: "Return loss", YUnit: "dB"}
	bands := []Band{{Name: "ISM", LoHz: 2.4e9, HiHz: 2.4835e9, Limit: 10, HasLimit: true}}
	pm := plotMarkers(mk)
	var w countWriter
	b.ReportAllocs()
	for b.Loop() {
		w.n = 0
		if err := p.Render(&w, s, bands, pm); err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric(float64(w.n), "svg-bytes")
}

// TestSizeBudgets holds the sizes the issue asks for: the full chart with
// both grids and four 10,001-point traces within 150 kB, the marker layer
// within 2 kB.
func TestSizeBudgets(t *testing.T) {
	t.Parallel()
	c, tr, mk, path := benchChart(10001)
	var full, markers bytes.Buffer
	if err := c.Render(&full, tr, mk, path); err != nil {
		t.Fatal(err)
	}
	if err := c.RenderMarkers(&markers, mk); err != nil {
		t.Fatal(err)
	}
	if full.Len() > 150_000 {
		t.Errorf("full chart is %d bytes, want ≤ 150000", full.Len())
	}
	if markers.Len() > 2_000 {
		t.Errorf("marker layer is %d bytes, want ≤ 2000", markers.Len())
	}
	t.Logf("full chart %d bytes, marker layer %d bytes", full.Len(), markers.Len())
}

// TestMarkerLayerAllocatesNothing locks in that the marker layer, the one
// redrawn on every drag, does no allocation once the writer pool is warm.
func TestMarkerLayerAllocatesNothing(t *testing.T) {
	c, _, mk, _ := benchChart(11)
	allocs := testing.AllocsPerRun(100, func() {
		if err := c.RenderMarkers(io.Discard, mk); err != nil {
			t.Fatal(err)
		}
	})
	if allocs != 0 {
		t.Errorf("RenderMarkers: %v allocations per run, want 0", allocs)
	}
}
