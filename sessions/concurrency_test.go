package sessions

import (
	"context"
	"fmt"
	"sync"
	"sync/atomic"
	"testing"
)

// TestConcurrentApply runs many goroutines changing two sessions at once,
// with readers and subscribers alongside (run it with -race). Every change
// must be committed exactly once, each session's versions must be gapless
// and seen in order by its subscribers, and the sessions must not mix.
func TestConcurrentApply(t *testing.T) {
	t.Parallel()
	st := openStore(t, Options{})
	ctx := context.Background()
	const (
		workers = 8
		perWork = 25
	)
	type sess struct {
		s      *Session
		sweep  string
		marker string
		sub    *Subscription
	}
	var ss [2]sess
	sw := testSweep(1001, 1, 1e9, 2e9)
	for i := range ss {
		s := create(t, st, fmt.Sprint("c", i))
		id := addSweep(t, st, s.ID, sw, "a")
		mid := apply(t, st, s.ID, Change{Op: OpMarkerAdd, SweepID: id, FreqHz: 1.5e9}).MarkerID
		sub, err := st.Subscribe(s.ID, workers*perWork*2)
		if err != nil {
			t.Fatal(err)
		}
		ss[i] = sess{s, id, mid, sub}
	}
	_, v0 := state(t, st, ss[0].s.ID)

	var committed [2]atomic.Int64
	var wg sync.WaitGroup
	errs := make(chan error, workers*perWork*2)
	for w := range workers {
		wg.Go(func() {
			x := ss[w%2]
			for i := range perWork {
				var ch Change
				switch i % 4 {
				case 0:
					g := sw.Data[(w*perWork+i)%1001]
					ch = Change{Op: OpMarkerMove, MarkerID: x.marker, Gamma: &Point{real(g), imag(g)}, Gesture: fmt.Sprint("w", w), Window: 1001}
				case 1:
					ch = Change{Op: OpBandSet, LoHz: float64(w*1000 + i), HiHz: float64(w*1000 + i + 1)}
				case 2:
					ch = Change{Op: OpSessionRename, Name: fmt.Sprintf("w%d-%d", w, i)}
				case 3:
					ch = Change{Op: OpMarkerAdd, SweepID: x.sweep, FreqHz: 1e9}
				}
				ev, err := st.Apply(ctx, x.s.ID, ch)
				if err != nil && !(ch.Op == OpMarkerAdd || ch.Op == OpBandSet) { // limits may refuse these
					errs <- err
					continue
				}
				if err == nil && ev.SessionID != x.s.ID {
					errs <- fmt.Errorf("event of session %s returned for %s", ev.SessionID, x.s.ID)
				}
				if err == nil && !ev.Unchanged {
					committed[w%2].Add(1)
				}
				// Readers alongside.
				if _, _, err := st.ByToken(ctx, x.s.ViewToken); err != nil {
					errs <- err
				}
				if _, err := st.Since(ctx, x.s.ID, 1); err != nil {
					errs <- err
				}
				if s, _, err := st.State(ctx, x.s.ID); err != nil || len(s.Sweeps) != 1 {
					errs <- fmt.Errorf("state: %v", err)
				}
			}
		})
	}
	wg.Wait()
	close(errs)
	for err := range errs {
		t.Error(err)
	}

	for k, x := range ss {
		s, v := state(t, st, x.s.ID)
		if n := committed[k].Load(); v-v0 != n {
			t.Fatalf("session %s moved %d versions for %d committed changes", x.s.ID, v-v0, n)
		}
		// Count what was committed from what the subscriber saw: versions
		// v0+1 … v with no gap, in order.
		want := v0 + 1
		for want <= v {
			ev := recv(t, x.sub)
			if ev.Version != want || ev.SessionID != x.s.ID {
				t.Fatalf("session %s: event version %d (session %s), want %d", x.s.ID, ev.Version, ev.SessionID, want)
			}
			want++
		}
		if len(x.sub.C) != 0 {
			t.Fatalf("extra events beyond version %d", v)
		}
		// Every marker added and every band set is in the state, within the
		// limits; renames came only from this session's workers.
		if len(s.Markers) > DefaultLimits.MarkersPerTrace || len(s.Bands) > DefaultLimits.Bands {
			t.Fatalf("limits broken: %d markers, %d bands", len(s.Markers), len(s.Bands))
		}
		var w, i int
		if _, err := fmt.Sscanf(s.Name, "w%d-%d", &w, &i); err != nil || w%2 != int(x.s.Name[1]-'0') {
			t.Fatalf("session %s has name %q from the other session's workers", x.s.Name, s.Name)
		}
		// The database agrees with memory.
		g, err := st.Get(ctx, x.s.ID)
		if err != nil || g.Version != v || g.Name != s.Name {
			t.Fatalf("stored %+v, memory version %d name %q", g, v, s.Name)
		}
	}
}
