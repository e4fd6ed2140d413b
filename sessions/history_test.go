package sessions

import (
	"context"
	"encoding/json"
	"errors"
	"testing"
)

func TestUndoRedo(t *testing.T) {
	t.Parallel()
	st := openStore(t, Options{})
	sid := create(t, st, "A").ID
	apply(t, st, sid, Change{Op: OpSessionRename, Name: "B"})
	apply(t, st, sid, Change{Op: OpSessionRename, Name: "C"})

	steps := []struct {
		op      string
		name    string
		version int64
	}{
		{OpUndo, "B", 3}, {OpUndo, "A", 4}, {OpRedo, "B", 5}, {OpRedo, "C", 6}, {OpUndo, "B", 7},
	}
	for _, s := range steps {
		ev := apply(t, st, sid, Change{Op: s.op})
		if ev.State.Name != s.name || ev.Version != s.version || ev.Op != s.op || ev.Of != OpSessionRename {
			t.Fatalf("%s: event %+v (name %q), want name %q at version %d", s.op, ev, ev.State.Name, s.name, s.version)
		}
		if got, err := st.Get(context.Background(), sid); err != nil || got.Name != s.name {
			t.Fatalf("%s: stored name %q, %v", s.op, got.Name, err)
		}
	}
	// A new change after an undo drops the redo branch.
	apply(t, st, sid, Change{Op: OpSessionRename, Name: "D"})
	_, err := st.Apply(context.Background(), sid, Change{Op: OpRedo})
	wantErr(t, err, ErrInvalid, "")
	ev := apply(t, st, sid, Change{Op: OpUndo})
	if ev.State.Name != "B" {
		t.Fatalf("undo after the new branch gave %q, want B", ev.State.Name)
	}
}

// TestUndoCoalescedDrag: the moves of one gesture are one undo step, but
// each is committed and versioned.
func TestUndoCoalescedDrag(t *testing.T) {
	t.Parallel()
	st := openStore(t, Options{})
	sid := create(t, st, "drag").ID
	sw := testSweep(101, 1, 1e9, 2e9)
	id := addSweep(t, st, sid, sw, "a")
	mid := apply(t, st, sid, Change{Op: OpMarkerAdd, SweepID: id, FreqHz: sw.FreqHz[10]}).MarkerID
	_, v0 := state(t, st, sid)

	moveTo := func(k int, gesture string) Event {
		g := sw.Data[k]
		return apply(t, st, sid, Change{Op: OpMarkerMove, MarkerID: mid, Gamma: &Point{real(g), imag(g)}, Gesture: gesture})
	}
	for i, k := range []int{12, 14, 16, 18, 20} {
		if ev := moveTo(k, "drag-1"); ev.Version != v0+int64(i)+1 {
			t.Fatalf("move %d at version %d, want %d", i, ev.Version, v0+int64(i)+1)
		}
	}
	// A second gesture is its own step; so is a move without a gesture.
	moveTo(30, "drag-2")
	moveTo(32, "drag-2")
	apply(t, st, sid, Change{Op: OpMarkerMove, MarkerID: mid, FreqHz: sw.FreqHz[40]})
	apply(t, st, sid, Change{Op: OpMarkerMove, MarkerID: mid, FreqHz: sw.FreqHz[41]})

	wantFreqs := []float64{sw.FreqHz[40], sw.FreqHz[32], sw.FreqHz[20], sw.FreqHz[10]}
	for _, f := range wantFreqs {
		ev := apply(t, st, sid, Change{Op: OpUndo})
		if got := ev.State.Markers[0].FreqHz; !near(got, f, 1e-12) {
			t.Fatalf("undo: marker at %g Hz, want %g", got, f)
		}
		if ev.Of != OpMarkerMove || ev.MarkerID != mid {
			t.Fatalf("undo event %+v", ev)
		}
	}
	// Undo once more removes the marker itself; redo brings it back and then
	// replays the whole first drag as one step.
	if ev := apply(t, st, sid, Change{Op: OpUndo}); len(ev.State.Markers) != 0 || ev.Of != OpMarkerAdd {
		t.Fatalf("undo of marker.add left %+v", ev.State.Markers)
	}
	apply(t, st, sid, Change{Op: OpRedo})
	if ev := apply(t, st, sid, Change{Op: OpRedo}); !near(ev.State.Markers[0].FreqHz, sw.FreqHz[20], 1e-12) {
		t.Fatalf("redo of the drag: %g Hz, want %g", ev.State.Markers[0].FreqHz, sw.FreqHz[20])
	}

	// A change in between ends the coalescing even with the same gesture.
	apply(t, st, sid, Change{Op: OpRedo})
	apply(t, st, sid, Change{Op: OpRedo})
	apply(t, st, sid, Change{Op: OpRedo})
	moveTo(50, "drag-3")
	apply(t, st, sid, Change{Op: OpMarkerLabel, MarkerID: mid, Label: "x"})
	moveTo(60, "drag-3")
	apply(t, st, sid, Change{Op: OpUndo}) // the second part of drag-3
	apply(t, st, sid, Change{Op: OpUndo}) // the label
	if s, _ := state(t, st, sid); !near(s.Markers[0].FreqHz, sw.FreqHz[50], 1e-12) || s.Markers[0].Label != "" {
		t.Fatalf("after two undos: %+v, want the marker at %g without label", s.Markers[0], sw.FreqHz[50])
	}
}

// TestUndoSweepRemove: removing a sweep removes its markers; undo brings
// both back, with the stored numbers.
func TestUndoSweepRemove(t *testing.T) {
	t.Parallel()
	st := openStore(t, Options{})
	sid := create(t, st, "rm").ID
	sw := testSweep(51, 2, 1e9, 2e9)
	id := addSweep(t, st, sid, sw, "a")
	other := addSweep(t, st, sid, testSweep(11, 1, 1e9, 2e9), "b")
	apply(t, st, sid, Change{Op: OpMarkerAdd, SweepID: id, FreqHz: 1.2e9, Label: "m1"})
	apply(t, st, sid, Change{Op: OpMarkerAdd, SweepID: id, Port: 2, FreqHz: 1.4e9})
	apply(t, st, sid, Change{Op: OpMarkerAdd, SweepID: other, FreqHz: 1.5e9})
	before, _ := state(t, st, sid)
	beforeJS, _ := json.Marshal(before)

	ev := apply(t, st, sid, Change{Op: OpSweepRemove, SweepID: id})
	if len(ev.State.Sweeps) != 1 || len(ev.State.Markers) != 1 {
		t.Fatalf("after remove: %+v", ev.State)
	}
	if removed := removedFlag(t, st, sid, id); removed != 1 {
		t.Fatalf("removed flag = %d, want 1", removed)
	}
	ev = apply(t, st, sid, Change{Op: OpUndo})
	js, _ := json.Marshal(ev.State)
	if string(js) != string(beforeJS) {
		t.Fatalf("undo of sweep.remove gave\n%s\nwant\n%s", js, beforeJS)
	}
	if ev.Of != OpSweepRemove || ev.SweepID != id {
		t.Errorf("undo event %+v", ev)
	}
	if removed := removedFlag(t, st, sid, id); removed != 0 {
		t.Fatalf("removed flag after undo = %d, want 0", removed)
	}
	got, err := st.Sweep(sid, id)
	if err != nil || got.Len() != 51 || got.At(7, 1, 1) != sw.At(7, 1, 1) {
		t.Fatalf("sweep after undo: %v", err)
	}
	ev = apply(t, st, sid, Change{Op: OpRedo})
	if ev.State.SweepIndex(id) >= 0 || removedFlag(t, st, sid, id) != 1 {
		t.Fatalf("redo of sweep.remove did not remove it")
	}
}

// TestPurgeUnreachableSweeps: a sweep that no undo or redo can bring back
// is deleted from the database and the cache.
func TestPurgeUnreachableSweeps(t *testing.T) {
	t.Parallel()
	t.Run("redo branch dropped", func(t *testing.T) {
		t.Parallel()
		st := openStore(t, Options{})
		sid := create(t, st, "p").ID
		id := addSweep(t, st, sid, testSweep(11, 1, 1e9, 2e9), "a")
		apply(t, st, sid, Change{Op: OpUndo})
		if _, err := st.Sweep(sid, id); err != nil {
			t.Fatalf("sweep gone before the redo branch was dropped: %v", err)
		}
		apply(t, st, sid, Change{Op: OpSessionRename, Name: "new branch"})
		if _, err := st.Sweep(sid, id); !isNotFound(err) {
			t.Fatalf("sweep of a dropped redo step still readable: %v", err)
		}
		if n := sweepRows(t, st, sid); n != 0 {
			t.Fatalf("%d sweep rows left", n)
		}
	})
	t.Run("history trimmed", func(t *testing.T) {
		t.Parallel()
		st := openStore(t, Options{Limits: Limits{HistorySteps: 3}})
		sid := create(t, st, "p").ID
		id := addSweep(t, st, sid, testSweep(11, 1, 1e9, 2e9), "a")
		keep := addSweep(t, st, sid, testSweep(11, 1, 1e9, 2e9), "b")
		apply(t, st, sid, Change{Op: OpSweepRemove, SweepID: id})
		for _, n := range []string{"x", "y"} {
			apply(t, st, sid, Change{Op: OpSessionRename, Name: n})
		}
		// Steps kept: remove, x, y; the removed sweep can still come back.
		if _, err := st.Sweep(sid, id); err != nil {
			t.Fatalf("sweep purged while undo can reach it: %v", err)
		}
		apply(t, st, sid, Change{Op: OpSessionRename, Name: "z"})
		if _, err := st.Sweep(sid, id); !isNotFound(err) {
			t.Fatalf("sweep beyond the history still readable: %v", err)
		}
		if _, err := st.Sweep(sid, keep); err != nil {
			t.Fatalf("listed sweep purged: %v", err)
		}
		for range 3 {
			apply(t, st, sid, Change{Op: OpUndo})
		}
		_, err := st.Apply(context.Background(), sid, Change{Op: OpUndo})
		wantErr(t, err, ErrInvalid, "")
		if s, _ := state(t, st, sid); s.Name != "p" || len(s.Sweeps) != 1 {
			t.Fatalf("oldest reachable state = %+v", s)
		}
	})
}

// TestRestart closes and reopens the store: state, version, history (undo,
// redo, a drag that goes on) and sweeps all survive.
func TestRestart(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	st, err := Open(dir)
	if err != nil {
		t.Fatal(err)
	}
	s := create(t, st, "kept")
	sw := testSweep(101, 2, 1e9, 2e9)
	id := addSweep(t, st, s.ID, sw, "a")
	gone := addSweep(t, st, s.ID, testSweep(11, 1, 1e9, 2e9), "b")
	apply(t, st, s.ID, Change{Op: OpSweepRemove, SweepID: gone})
	mid := apply(t, st, s.ID, Change{Op: OpMarkerAdd, SweepID: id, FreqHz: sw.FreqHz[5]}).MarkerID
	apply(t, st, s.ID, Change{Op: OpBandSet, LoHz: 1.1e9, HiHz: 1.3e9, MinReturnLossDB: 12})
	apply(t, st, s.ID, Change{Op: OpSessionRename, Name: "kept, renamed"})
	apply(t, st, s.ID, Change{Op: OpUndo})
	apply(t, st, s.ID, Change{Op: OpRedo})
	apply(t, st, s.ID, Change{Op: OpMarkerMove, MarkerID: mid, FreqHz: sw.FreqHz[7], Gesture: "g"})
	apply(t, st, s.ID, Change{Op: OpMarkerMove, MarkerID: mid, FreqHz: sw.FreqHz[9], Gesture: "g"})
	before, v := state(t, st, s.ID)
	beforeJS, _ := json.Marshal(before)
	if err := st.Close(); err != nil {
		t.Fatal(err)
	}

	st, err = Open(dir)
	if err != nil {
		t.Fatal(err)
	}
	defer st.Close()
	after, v2 := state(t, st, s.ID)
	afterJS, _ := json.Marshal(after)
	if v2 != v || string(afterJS) != string(beforeJS) {
		t.Fatalf("after restart version %d state\n%s\nwant version %d\n%s", v2, afterJS, v, beforeJS)
	}
	if g, err := st.Get(context.Background(), s.ID); err != nil || g.Version != v || g.Name != "kept, renamed" {
		t.Fatalf("Get after restart = %+v, %v", g, err)
	}
	got, err := st.Sweep(s.ID, id)
	if err != nil || got.Len() != 101 || got.At(50, 1, 1) != sw.At(50, 1, 1) {
		t.Fatalf("sweep after restart: %v", err)
	}
	if sid, c, err := st.ByToken(context.Background(), s.EditToken); err != nil || sid != s.ID || c != Edit {
		t.Fatalf("edit token after restart: %q %v %v", sid, c, err)
	}
	// The drag goes on after the restart and is still one step.
	apply(t, st, s.ID, Change{Op: OpMarkerMove, MarkerID: mid, FreqHz: sw.FreqHz[11], Gesture: "g"})
	ev := apply(t, st, s.ID, Change{Op: OpUndo})
	if ev.Version != v+2 || !near(ev.State.Markers[0].FreqHz, sw.FreqHz[5], 0) {
		t.Fatalf("undo of the drag after restart: version %d, marker at %g; want %d, %g",
			ev.Version, ev.State.Markers[0].FreqHz, v+2, sw.FreqHz[5])
	}
	// Older steps undo in order, down to the removed sweep coming back.
	wantNames := []string{"kept", "kept", "kept"}
	wantOps := []string{OpSessionRename, OpBandSet, OpMarkerAdd}
	for i := range wantOps {
		ev = apply(t, st, s.ID, Change{Op: OpUndo})
		if ev.Of != wantOps[i] || ev.State.Name != wantNames[i] {
			t.Fatalf("undo %d after restart undid %s (name %q), want %s", i, ev.Of, ev.State.Name, wantOps[i])
		}
	}
	if ev = apply(t, st, s.ID, Change{Op: OpUndo}); ev.Of != OpSweepRemove || ev.State.SweepIndex(gone) < 0 {
		t.Fatalf("undo of sweep.remove after restart: %+v", ev)
	}
	if _, err := st.Sweep(s.ID, gone); err != nil {
		t.Fatalf("removed sweep after restart: %v", err)
	}
}

func isNotFound(err error) bool { return errors.Is(err, ErrNotFound) }

func removedFlag(t *testing.T, st *Store, sid, id string) int {
	t.Helper()
	var r int
	if err := st.rdb.QueryRow(`SELECT removed FROM sweeps WHERE session_id = ? AND id = ?`, sid, id).Scan(&r); err != nil {
		t.Fatal(err)
	}
	return r
}

func sweepRows(t *testing.T, st *Store, sid string) int {
	t.Helper()
	var n int
	if err := st.rdb.QueryRow(`SELECT count(*) FROM sweeps WHERE session_id = ?`, sid).Scan(&n); err != nil {
		t.Fatal(err)
	}
	return n
}
