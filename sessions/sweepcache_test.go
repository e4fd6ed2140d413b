package sessions

import (
	"context"
	"slices"
	"strconv"
	"strings"
	"testing"

	"matchbench/rfmath"
)

// sweepBytes is what the cache counts for a sweep of n points and p ports
// that shares no grid: 8n (frequencies) + 8p (Z0) + 16·p²·n (data).
func sweepBytes(n, p int) int64 { return int64(8*n + 8*p + 16*p*p*n) }

// Sweeps beyond the budget leave the cache, least recently used first, and
// come back decoded from their stored bytes, number for number.
func TestSweepCacheBudget(t *testing.T) {
	t.Parallel()
	const n = 1001
	per := sweepBytes(n, 1)
	st := openStore(t, Options{SweepCacheBytes: 3 * per}) // room for three
	s := create(t, st, "cache")
	var ids []string
	var want []*rfmath.Sweep
	for i := range 10 {
		// Each sweep on its own grid, so that none is shared.
		sw := testSweep(n, 1, 1e9+float64(i)*1e6, 2e9+float64(i)*1e6)
		ids = append(ids, addSweep(t, st, s.ID, sw, "s"+strconv.Itoa(i)))
		want = append(want, sw)
		if c := st.SweepCacheStats(); c.Bytes > c.Limit || c.Sweeps > 3 {
			t.Fatalf("after %d sweeps the cache holds %d sweeps, %d bytes; the budget is %d", i+1, c.Sweeps, c.Bytes, c.Limit)
		}
	}
	if c := st.SweepCacheStats(); c.Sweeps != 3 || c.Bytes != 3*per {
		t.Errorf("cache %+v, want the last 3 sweeps, %d bytes", c, 3*per)
	}
	for i, id := range ids {
		got, err := st.Sweep(s.ID, id)
		if err != nil {
			t.Fatal(err)
		}
		if !slices.Equal(got.FreqHz, want[i].FreqHz) || !slices.Equal(got.Data, want[i].Data) || !slices.Equal(got.Z0, want[i].Z0) {
			t.Errorf("sweep %d differs after leaving the cache and coming back", i)
		}
	}
	// Reading them all in order left the last three read.
	a, _ := st.Sweep(s.ID, ids[7])
	b, _ := st.Sweep(s.ID, ids[7])
	if a != b {
		t.Error("a sweep just read was decoded again: the most recently used should stay")
	}
	if c := st.SweepCacheStats(); c.Bytes > c.Limit {
		t.Errorf("cache over budget after reads: %+v", c)
	}
}

// A removed sweep leaves the cache at once; undo brings it back, decoded.
func TestSweepCacheForgetsRemoved(t *testing.T) {
	t.Parallel()
	st := openStore(t, Options{})
	s := create(t, st, "cache")
	sw := testSweep(501, 1, 1e9, 2e9)
	id := addSweep(t, st, s.ID, sw, "a")
	if c := st.SweepCacheStats(); c.Sweeps != 1 || c.Bytes != sweepBytes(501, 1) {
		t.Fatalf("cache after an upload: %+v", c)
	}
	apply(t, st, s.ID, Change{Op: OpSweepRemove, SweepID: id})
	if c := st.SweepCacheStats(); c.Sweeps != 0 || c.Bytes != 0 {
		t.Errorf("cache after the sweep was removed: %+v, want empty", c)
	}
	apply(t, st, s.ID, Change{Op: OpUndo})
	got, err := st.Sweep(s.ID, id)
	if err != nil {
		t.Fatal(err)
	}
	if !slices.Equal(got.Data, sw.Data) {
		t.Error("the sweep brought back by undo differs")
	}
	if c := st.SweepCacheStats(); c.Sweeps != 1 {
		t.Errorf("cache after reading the restored sweep: %+v", c)
	}
}

// Sweeps on one frequency grid share it: the grid is counted once.
// A 2-port sweep's extracted traces are counted too.
func TestSweepCacheSharesGrids(t *testing.T) {
	t.Parallel()
	const n = 401
	st := openStore(t, Options{})
	s := create(t, st, "grids")
	var ids []string
	for i := range 5 {
		sw := testSweep(n, 1, 1e9, 2e9)
		for k := range sw.Data {
			sw.Data[k] *= complex(1-0.1*float64(i), 0)
		}
		ids = append(ids, addSweep(t, st, s.ID, sw, "g"+strconv.Itoa(i)))
	}
	c := st.SweepCacheStats()
	if want := int64(8*n + 5*(8+16*n)); c.Grids != 1 || c.Sweeps != 5 || c.Bytes != want {
		t.Errorf("cache %+v, want 5 sweeps on 1 grid, %d bytes", c, want)
	}
	a, _ := st.Sweep(s.ID, ids[0])
	b, _ := st.Sweep(s.ID, ids[4])
	if &a.FreqHz[0] != &b.FreqHz[0] {
		t.Error("two sweeps on the same grid hold two copies of it")
	}
	if a.Data[10] == b.Data[10] {
		t.Error("the sweeps' data were mixed up")
	}

	two := addSweep(t, st, s.ID, testSweep(n, 2, 1e9, 2e9), "two")
	before := st.SweepCacheStats().Bytes
	apply(t, st, s.ID, Change{Op: OpMarkerAdd, SweepID: two, Port: 2, FreqHz: 1.5e9})
	mk, _ := state(t, st, s.ID)
	if len(mk.Markers) != 1 {
		t.Fatal("marker not added")
	}
	apply(t, st, s.ID, Change{Op: OpMarkerToDip, MarkerID: mk.Markers[0].ID})
	if got := st.SweepCacheStats().Bytes - before; got != 16*n {
		t.Errorf("extracting S22 of the 2-port sweep added %d bytes to the cache, want %d", got, 16*n)
	}
}

// A session may list sweeps of at most Limits.SweepBytes of numbers.
func TestSweepBytesLimit(t *testing.T) {
	t.Parallel()
	const n = 1001
	st := openStore(t, Options{Limits: Limits{SweepBytes: 2*sweepBytes(n, 1) + 100}})
	s := create(t, st, "limit")
	addSweep(t, st, s.ID, testSweep(n, 1, 1e9, 2e9), "a")
	addSweep(t, st, s.ID, testSweep(n, 1, 1e9, 2e9), "b")
	_, err := st.Apply(context.Background(), s.ID, Change{Op: OpSweepAdd, Name: "c", FileName: "c.s1p", Raw: []byte("x"), Sweep: testSweep(n, 1, 1e9, 2e9)})
	wantErr(t, err, ErrInvalid, "sweep")
	if !strings.Contains(err.Error(), "MB") || !strings.Contains(err.Error(), "remove a sweep") {
		t.Errorf("error %q does not give the sizes and what to do", err)
	}
	if got, _ := state(t, st, s.ID); len(got.Sweeps) != 2 {
		t.Errorf("%d sweeps after the refusal, want 2", len(got.Sweeps))
	}
}
