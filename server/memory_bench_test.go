package server

import (
	"bufio"
	"bytes"
	"context"
	"fmt"
	"io"
	"log/slog"
	"math"
	"net/http/httptest"
	"os"
	"os/exec"
	"runtime"
	"runtime/debug"
	"runtime/metrics"
	"strconv"
	"strings"
	"testing"

	"matchbench/rfmath"
	"matchbench/sessions"
)

// The session of the memory figure: 20 one-port sweeps of 10,001 points,
// whose complex data alone (16 bytes a point) is the "raw" size.
const (
	memSweeps = 20
	memPoints = 10001
	memRaw    = memSweeps * memPoints * 16
)

// BenchmarkSessionMemory reports the resident memory of a running server
// (store on a real SQLite file, HTTP server, one websocket viewer) before
// and after it takes a session of 20 sweeps of 10,001 points, uploaded as
// Touchstone files through the HTTP endpoint. Each run measures in a fresh
// process (this test binary again, running TestMemoryProbe), so nothing
// that earlier benchmarks left on the heap counts.
//
// Resident memory is the second field of /proc/self/statm (pages resident
// in RAM, times the page size), read after runtime.GC and
// debug.FreeOSMemory; the live Go heap (runtime/metrics
// /memory/classes/heap/objects:bytes) is reported beside it. Metrics:
// base-rss-bytes (the empty store and server), extra-rss-bytes (what the
// session adds), raw-bytes (20 × 10,001 × 16 B) and extra/raw.
func BenchmarkSessionMemory(b *testing.B) {
	if _, err := os.Stat("/proc/self/statm"); err != nil {
		b.Skip("needs /proc/self/statm (Linux)")
	}
	var base, extra, heap []float64
	for b.Loop() {
		cmd := exec.Command(os.Args[0], "-test.run=^TestMemoryProbe$", "-test.count=1")
		cmd.Env = append(os.Environ(), "MATCHBENCH_MEMORY_PROBE=1")
		out, err := cmd.CombinedOutput()
		if err != nil {
			b.Fatalf("memory probe: %v\n%s", err, out)
		}
		m, err := probeFigures(out)
		if err != nil {
			b.Fatalf("%v\n%s", err, out)
		}
		base = append(base, m["base-rss"])
		extra = append(extra, m["loaded-rss"]-m["base-rss"])
		heap = append(heap, m["loaded-heap"]-m["base-heap"])
	}
	e := medianOf(extra)
	b.ReportMetric(medianOf(base), "base-rss-bytes")
	b.ReportMetric(e, "extra-rss-bytes")
	b.ReportMetric(medianOf(heap), "extra-heap-bytes")
	b.ReportMetric(memRaw, "raw-bytes")
	b.ReportMetric(e/memRaw, "extra/raw")
}

// probeFigures reads the "memprobe k=v …" line of the probe's output.
func probeFigures(out []byte) (map[string]float64, error) {
	sc := bufio.NewScanner(bytes.NewReader(out))
	for sc.Scan() {
		rest, ok := strings.CutPrefix(sc.Text(), "memprobe ")
		if !ok {
			continue
		}
		m := map[string]float64{}
		for _, kv := range strings.Fields(rest) {
			k, v, _ := strings.Cut(kv, "=")
			x, err := strconv.ParseFloat(v, 64)
			if err != nil {
				return nil, fmt.Errorf("memory probe: bad figure %q", kv)
			}
			m[k] = x
		}
		return m, nil
	}
	return nil, fmt.Errorf("memory probe printed no figures")
}

func medianOf(s []float64) float64 {
	c := append([]float64(nil), s...)
	for i := range c { // insertion sort: a handful of values
		for j := i; j > 0 && c[j] < c[j-1]; j-- {
			c[j], c[j-1] = c[j-1], c[j]
		}
	}
	if len(c) == 0 {
		return math.NaN()
	}
	if len(c)%2 == 1 {
		return c[len(c)/2]
	}
	return (c[len(c)/2-1] + c[len(c)/2]) / 2
}

// TestMemoryProbe is the measuring side of BenchmarkSessionMemory; it runs
// only in the process the benchmark starts.
func TestMemoryProbe(t *testing.T) {
	if os.Getenv("MATCHBENCH_MEMORY_PROBE") != "1" {
		t.Skip("run by BenchmarkSessionMemory in a process of its own")
	}
	ctx := context.Background()
	st, err := sessions.Open(t.TempDir())
	if err != nil {
		t.Fatal(err)
	}
	srv := New(Config{Store: st, Log: slog.New(slog.NewTextHandler(io.Discard, nil))})
	ts := httptest.NewServer(srv)
	defer func() {
		srv.Shutdown()
		ts.Close()
		st.Close()
	}()
	se, err := st.Create(ctx, "memory")
	if err != nil {
		t.Fatal(err)
	}
	f := &fixture{store: st, srv: srv, ts: ts, sess: se}
	// The base: the empty session's page served once and a viewer on it.
	get(t, ts.URL+"/s/"+se.EditToken+"/")
	vw := wsDial(t, f, se.ViewToken)
	// Any answer proves the viewer has joined the session's room; a
	// message of no known type always gets one.
	vw.WriteJSON(inMsg{Type: "probe"})
	readUntil(t, vw, func(m outMsg) bool { return m.Type == "error" })
	baseRSS, baseHeap := settledMemory(t)

	// Twenty different one-port sweeps (the RLC with R from 5 to 24 Ω),
	// uploaded as files; the viewer receives every update.
	for i := range memSweeps {
		sw := rfmath.NewSweep(memPoints, 1, 50)
		for k := range memPoints {
			fr := 100e6 + 150e6*float64(k)/float64(memPoints-1)
			w := 2 * math.Pi * fr
			sw.FreqHz[k] = fr
			sw.Data[k] = rfmath.GammaFromZ(complex(5+float64(i), w*100e-9-1/(w*10e-12)), 50)
		}
		status, r := upload(t, ts.URL+"/s/"+se.EditToken+"/upload", fmt.Sprintf("sweep%02d.s1p", i), touchstoneBytes(t, sw))
		if status != 200 {
			t.Fatalf("upload %d: status %d, %s", i, status, r.Error)
		}
	}
	_, v, err := st.State(ctx, se.ID)
	if err != nil {
		t.Fatal(err)
	}
	readUntil(t, vw, func(m outMsg) bool { return m.Type == "update" && m.V >= v })
	if code, page := get(t, ts.URL+"/s/"+se.EditToken+"/"); code != 200 || !strings.Contains(page, fmt.Sprintf("sweep%02d.s1p", memSweeps-1)) {
		t.Fatalf("session page: status %d without the last sweep", code)
	}
	loadedRSS, loadedHeap := settledMemory(t)
	fmt.Printf("memprobe base-rss=%d loaded-rss=%d base-heap=%d loaded-heap=%d\n", baseRSS, loadedRSS, baseHeap, loadedHeap)
}

// settledMemory collects garbage, returns freed pages to the system and
// reads the resident set size (/proc/self/statm) and the live heap
// (runtime/metrics).
func settledMemory(t *testing.T) (rss, heap uint64) {
	t.Helper()
	runtime.GC()
	debug.FreeOSMemory()
	b, err := os.ReadFile("/proc/self/statm")
	if err != nil {
		t.Fatal(err)
	}
	f := strings.Fields(string(b))
	if len(f) < 2 {
		t.Fatalf("/proc/self/statm: %q", b)
	}
	pages, err := strconv.ParseUint(f[1], 10, 64)
	if err != nil {
		t.Fatal(err)
	}
	s := []metrics.Sample{{Name: "/memory/classes/heap/objects:bytes"}}
	metrics.Read(s)
	return pages * uint64(os.Getpagesize()), s[0].Value.Uint64()
}
