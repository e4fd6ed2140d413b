package server

import (
	"context"
	"fmt"
	"io"
	"log/slog"
	"math"
	"net/http/httptest"
	"os"
	"os/exec"
	"testing"

	"github.com/gorilla/websocket"

	"matchbench/chartsvg"
	"matchbench/rfmath"
	"matchbench/sessions"
)

// The uploads of TestUploadMemoryFlat: 4-port sweeps of 4001 points, whose
// numbers take 8·4001 + 16·16·4001 ≈ 1.06 MB each (about 1.6 MB as
// Touchstone text).
const (
	flatRounds = 20
	flatPorts  = 4
	flatPoints = 4001
	flatWarm   = 5 // rounds before the first reading: pools and caches warm
)

// flatSweepBytes is what one upload's numbers take in memory.
// The huge sweep: 16 ports, 2900 points (8·2900 + 16·256·2900 B ≈ 11.9 MB
// of numbers) with a 16 MB file, about what a 16-port file at the 20 MB
// upload limit holds.
const (
	hugePorts  = 16
	hugePoints = 2900
	hugeFile   = 16 << 20
)

const flatSweepBytes = 8*flatPoints + 8*flatPorts + 16*flatPorts*flatPorts*flatPoints

// An edit link that uploads large sweeps and removes them again, over and
// over, must not grow the server's memory: a removed sweep leaves the
// cache at once (its bytes stay on disk for undo), the cache is bounded,
// and a sweep's bytes go to SQLite in pieces, so its allocator (which keeps
// the largest regions it has held) never holds a whole file. The measuring
// runs in a fresh process (this test binary again, running
// TestUploadMemoryProbe) so that no other test's garbage counts; it reads
// the resident set (/proc/self/statm) and the live heap after garbage
// collection: at the start, after one huge sweep was added and removed,
// after flatWarm rounds of upload-and-remove and after flatRounds.
//
// The bounds, each met by a wide margin and missed by a wide one before
// the fix (figures measured on the 2-core development machine):
//
//	live heap, rounds flatWarm…flatRounds   ≤ 2 sweeps (2.1 MB)   measured +0.03 MB; before, +16 MB
//	resident set after the huge sweep       ≤ 12 MB               measured +3…5 MB; before, +30 MB
//	resident set, start to end              ≤ 20 MB               measured +5…10 MB; before, +46 MB
//	the cache's bytes                       ≤ its budget
//
// The resident set moves by a few MB from run to run (transparent huge
// pages, code paged in), hence no tighter bound on it; under the race
// detector, whose shadow memory is never given back, only the heap and
// cache bounds are checked.
func TestUploadMemoryFlat(t *testing.T) {
	if _, err := os.Stat("/proc/self/statm"); err != nil {
		t.Skip("needs /proc/self/statm (Linux)")
	}
	if os.Getenv("MATCHBENCH_UPLOAD_PROBE") == "1" {
		t.Skip("the probe's own process")
	}
	cmd := exec.Command(os.Args[0], "-test.run=^TestUploadMemoryProbe$", "-test.count=1", "-test.v")
	cmd.Env = append(os.Environ(), "MATCHBENCH_UPLOAD_PROBE=1")
	out, err := cmd.CombinedOutput()
	if err != nil {
		t.Fatalf("upload probe: %v\n%s", err, out)
	}
	m, err := probeFigures(out)
	if err != nil {
		t.Fatalf("%v\n%s", err, out)
	}
	mb := func(k0, k1 string) float64 { return (m[k1] - m[k0]) / 1e6 }
	t.Logf("huge sweep added and removed: resident set %+.2f MB, live heap %+.2f MB", mb("base-rss", "huge-rss"), mb("base-heap", "huge-heap"))
	t.Logf("rounds %d–%d: resident set %+.2f MB, live heap %+.2f MB; one sweep %.2f MB", flatWarm, flatRounds, mb("warm-rss", "end-rss"), mb("warm-heap", "end-heap"), flatSweepBytes/1e6)
	t.Logf("start to end: resident set %+.2f MB, live heap %+.2f MB; cache %.2f MB of %.2f MB", mb("base-rss", "end-rss"), mb("base-heap", "end-heap"), m["cache-bytes"]/1e6, m["cache-limit"]/1e6)
	if d := mb("warm-heap", "end-heap"); d > 2*flatSweepBytes/1e6 {
		t.Errorf("the live heap grew by %.2f MB over %d uploads and removals; the bound is %.2f MB", d, flatRounds-flatWarm, 2*flatSweepBytes/1e6)
	}
	if m["cache-bytes"] > m["cache-limit"] {
		t.Errorf("the sweep cache holds %.0f bytes, over its budget of %.0f", m["cache-bytes"], m["cache-limit"])
	}
	if raceBuild {
		return
	}
	if d := mb("base-rss", "huge-rss"); d > 12 {
		t.Errorf("a huge sweep added and removed left the resident set %.2f MB larger; the bound is 12 MB", d)
	}
	if d := mb("base-rss", "end-rss"); d > 20 {
		t.Errorf("the resident set grew by %.2f MB from the start; the bound is 20 MB", d)
	}
}

// TestUploadMemoryProbe is the measuring side of TestUploadMemoryFlat.
// The store's cache has room for three of the sweeps, and one sweep stays
// listed throughout so that every render has numbers to draw.
func TestUploadMemoryProbe(t *testing.T) {
	if os.Getenv("MATCHBENCH_UPLOAD_PROBE") != "1" {
		t.Skip("run by TestUploadMemoryFlat in a process of its own")
	}
	ctx := context.Background()
	st, err := sessions.OpenWith(t.TempDir(), sessions.Options{SweepCacheBytes: 3 * flatSweepBytes})
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
	vw := wsDial(t, f, se.ViewToken)
	vw.WriteJSON(inMsg{Type: "probe"})
	readUntil(t, vw, func(m outMsg) bool { return m.Type == "error" })
	if status, r := upload(t, ts.URL+"/s/"+se.EditToken+"/upload", "kept.s1p", touchstoneBytes(t, rlcSweep(1001))); status != 200 {
		t.Fatalf("upload: %d %s", status, r.Error)
	}

	baseRSS, baseHeap := settledMemory(t)

	// One huge sweep, added and removed (not under the race detector, where
	// the resident set is not checked and the copies are slow).
	hugeRSS, hugeHeap := baseRSS, baseHeap
	if !raceBuild {
		hugeRSS, hugeHeap = addRemoveHuge(t, st, se.ID, vw)
	}

	var warmRSS, warmHeap uint64
	for i := range flatRounds {
		// A 4-port of coupled RLC-like reflections, different each round.
		sw := rfmath.NewSweep(flatPoints, flatPorts, 50)
		for k := range flatPoints {
			fr := 100e6 + 150e6*float64(k)/float64(flatPoints-1)
			sw.FreqHz[k] = fr
			w := 2 * math.Pi * fr
			for p := range flatPorts {
				for q := range flatPorts {
					g := rfmath.GammaFromZ(complex(5+float64(i+p), w*100e-9-1/(w*10e-12)), 50)
					if p != q {
						g *= 0.1
					}
					sw.Set(k, p, q, g)
				}
			}
		}
		status, r := upload(t, ts.URL+"/s/"+se.EditToken+"/upload", fmt.Sprintf("big%02d.s4p", i), touchstoneBytes(t, sw))
		if status != 200 {
			t.Fatalf("upload %d: status %d, %s", i, status, r.Error)
		}
		ev, err := st.Apply(ctx, se.ID, sessions.Change{Op: sessions.OpSweepRemove, SweepID: r.SweepID})
		if err != nil {
			t.Fatal(err)
		}
		readUntil(t, vw, func(m outMsg) bool { return m.Type == "update" && m.V >= ev.Version })
		if i+1 == flatWarm {
			warmRSS, warmHeap = settledMemory(t)
		}
	}
	endRSS, endHeap := settledMemory(t)
	c := st.SweepCacheStats()
	fmt.Printf("memprobe base-rss=%d huge-rss=%d warm-rss=%d end-rss=%d base-heap=%d huge-heap=%d warm-heap=%d end-heap=%d cache-bytes=%d cache-limit=%d\n",
		baseRSS, hugeRSS, warmRSS, endRSS, baseHeap, hugeHeap, warmHeap, endHeap, c.Bytes, c.Limit)
}

// addRemoveHuge adds one huge sweep to session sid and removes it again,
// and returns the settled resident set and live heap.
func addRemoveHuge(t *testing.T, st *sessions.Store, sid string, vw *websocket.Conn) (rss, heap uint64) {
	ctx := context.Background()
	// The size of a 16-port file at the
	// upload limit (hugePorts ports, hugePoints points: 11.9 MB of numbers,
	// and 16 MB of file bytes, here arbitrary since the store does not read
	// them).
	huge := rfmath.NewSweep(hugePoints, hugePorts, 50)
	for k := range hugePoints {
		huge.FreqHz[k] = 100e6 + 1e5*float64(k)
		for j := range huge.Data[k*hugePorts*hugePorts : (k+1)*hugePorts*hugePorts] {
			huge.Data[k*hugePorts*hugePorts+j] = complex(0.5*math.Sin(float64(j+k)), 0.1)
		}
	}
	raw := make([]byte, hugeFile)
	for i := range raw {
		raw[i] = '0' + byte(i%10)
	}
	ev, err := st.Apply(ctx, sid, sessions.Change{Op: sessions.OpSweepAdd, Name: "huge", FileName: "huge.s16p", Raw: raw, Sweep: huge})
	if err != nil {
		t.Fatal(err)
	}
	if _, _, err := st.Raw(ctx, sid, ev.SweepID); err != nil { // the download reads it back
		t.Fatal(err)
	}
	ev, err = st.Apply(ctx, sid, sessions.Change{Op: sessions.OpSweepRemove, SweepID: ev.SweepID})
	if err != nil {
		t.Fatal(err)
	}
	readUntil(t, vw, func(m outMsg) bool { return m.Type == "update" && m.V >= ev.Version })
	huge, raw = nil, nil
	return settledMemory(t)
}

// thinSeries keeps of a long series the first, lowest, highest and last
// point of each of plotWidth columns, in slices sized to what it kept; a
// series the plot can hold whole is left alone.
func TestThinSeries(t *testing.T) {
	t.Parallel()
	const n = 10001
	s := chartsvg.Series{FreqHz: make([]float64, n), Y: make([]float64, n)}
	for k := range n {
		s.FreqHz[k] = 1e9 + 1e5*float64(k)
		s.Y[k] = math.Sin(float64(k) / 7) // 7-point wiggles: several extremes a column
	}
	th := thinSeries(s)
	if len(th.Y) > 4*plotWidth || len(th.Y) < 2*plotWidth {
		t.Errorf("thinned to %d points; want between 2 and 4 a column of %d", len(th.Y), plotWidth)
	}
	// Sized to what was kept (up to the allocator's rounding), not to the
	// worst case of 4 points a column.
	if cap(th.Y) > len(th.Y)*17/16 || cap(th.FreqHz) > len(th.FreqHz)*17/16 || len(th.FreqHz) != len(th.Y) {
		t.Errorf("thinned slices: len %d/%d, cap %d/%d; want them sized to what was kept", len(th.FreqHz), len(th.Y), cap(th.FreqHz), cap(th.Y))
	}
	// Every column's extremes survive.
	col := func(f float64) int { return int(plotWidth * (f - s.FreqHz[0]) / (s.FreqHz[n-1] - s.FreqHz[0])) }
	lo, hi := map[int]float64{}, map[int]float64{}
	for k := range n {
		c := col(s.FreqHz[k])
		if v, ok := lo[c]; !ok || s.Y[k] < v {
			lo[c] = s.Y[k]
		}
		if v, ok := hi[c]; !ok || s.Y[k] > v {
			hi[c] = s.Y[k]
		}
	}
	gotLo, gotHi := map[int]float64{}, map[int]float64{}
	for k := range th.Y {
		c := col(th.FreqHz[k])
		if v, ok := gotLo[c]; !ok || th.Y[k] < v {
			gotLo[c] = th.Y[k]
		}
		if v, ok := gotHi[c]; !ok || th.Y[k] > v {
			gotHi[c] = th.Y[k]
		}
	}
	for c := range lo {
		if gotLo[c] != lo[c] || gotHi[c] != hi[c] {
			t.Fatalf("column %d: kept %g…%g, the series spans %g…%g", c, gotLo[c], gotHi[c], lo[c], hi[c])
		}
	}
	if th.FreqHz[0] != s.FreqHz[0] || th.FreqHz[len(th.FreqHz)-1] != s.FreqHz[n-1] {
		t.Error("the ends of the series were not kept")
	}
	short := chartsvg.Series{FreqHz: s.FreqHz[:4*plotWidth], Y: s.Y[:4*plotWidth]}
	if got := thinSeries(short); len(got.Y) != 4*plotWidth {
		t.Errorf("a series of %d points was thinned to %d", 4*plotWidth, len(got.Y))
	}
}

// A room keeps one scene's traces and plots: of the scene before it keeps
// only what a step's animation starts from (the state and the network).
func TestRoomKeepsOneScene(t *testing.T) {
	t.Parallel()
	f, _ := netFixture(t)
	ctx := context.Background()
	rm := &room{s: f.srv, sid: f.sess.ID}
	st1, _, _ := f.store.State(ctx, f.sess.ID)
	first, _ := rm.sceneFor(st1)
	first.plots()
	ev, err := f.store.Apply(ctx, f.sess.ID, sessions.Change{Op: sessions.OpBandSet, Name: "b", LoHz: 120e6, HiHz: 130e6, MinReturnLossDB: 6})
	if err != nil {
		t.Fatal(err)
	}
	sc, prev := rm.sceneFor(ev.State)
	if prev != first {
		t.Fatal("sceneFor did not return the scene before")
	}
	if sc.prev == nil || sc.prev.st != st1 || sc.prev.net != first.net {
		t.Fatal("the new scene lost the state and network the animation starts from")
	}
	if sc.prev.traces != nil || sc.prev.plotsC != nil || sc.prev.all != nil {
		t.Errorf("the new scene keeps the previous scene's traces or plots (%d traces, %d plots)", len(sc.prev.traces), len(sc.prev.plotsC))
	}
}

// Corrected sweeps are cached within a budget of bytes, whatever the
// number of planes tried.
func TestCorrectionsBounded(t *testing.T) {
	t.Parallel()
	f := newFixture(t, 2001)
	per := int64(8*2001 + 8 + 16*2001) // one corrected 1-port sweep
	f.srv.corr.limit = 5 * per
	ctx := context.Background()
	st, _, _ := f.store.State(ctx, f.sess.ID)
	ref := st.Sweeps[0]
	raw, err := f.store.Sweep(f.sess.ID, ref.ID)
	if err != nil {
		t.Fatal(err)
	}
	for i := range 40 {
		ref.RefPlane = &sessions.RefPlane{DelayS: float64(i+1) * 1e-12}
		c, err := f.srv.corrected(f.sess.ID, ref, raw)
		if err != nil || c == raw {
			t.Fatalf("plane %d: %v", i, err)
		}
		f.srv.corr.mu.Lock()
		held := int64(0)
		for _, e := range f.srv.corr.m {
			held += sweepBytes(e.s)
		}
		f.srv.corr.mu.Unlock()
		if held > 5*per {
			t.Fatalf("after %d planes the corrections hold %d bytes; the budget is %d", i+1, held, 5*per)
		}
	}
}
