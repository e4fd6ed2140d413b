package sessions

import (
	"context"
	"fmt"
	"sync"
	"testing"
)

// benchSession makes a session with a 10,001-point 1-port sweep and one
// marker, and returns the Γ points a drag moves through.
func benchSession(b *testing.B, st *Store) (sid, mid string, path []Point) {
	b.Helper()
	sid = create(b, st, "bench").ID
	sw := testSweep(10001, 1, 0.5e9, 1.5e9)
	id := addSweep(b, st, sid, sw, "big")
	mid = apply(b, st, sid, Change{Op: OpMarkerAdd, SweepID: id, FreqHz: 1e9}).MarkerID
	// A drag back and forth over ±60 points around the middle, with the
	// pointer a little off the trace, so that every move changes the state.
	for k := 4940; k <= 5060; k++ {
		g := sw.Data[k] * complex(1.01, 0)
		path = append(path, Point{real(g), imag(g)})
	}
	for k := 5059; k > 4940; k-- {
		g := sw.Data[k] * complex(0.99, 0)
		path = append(path, Point{real(g), imag(g)})
	}
	return sid, mid, path
}

// BenchmarkApplyMarkerMove measures one drag step end to end: validate, snap
// by Γ on a 10,001-point sweep, encode the state, commit (state, version,
// history) and publish. "gesture" moves join one undo step (an UPDATE of
// the step); "steps" make a history row each.
func BenchmarkApplyMarkerMove(b *testing.B) {
	for _, sync := range []string{"FULL", "NORMAL"} {
		for _, gesture := range []string{"gesture", "steps"} {
			b.Run("sync="+sync+"/"+gesture, func(b *testing.B) {
				st := openStore(b, Options{Synchronous: sync, Limits: Limits{HistorySteps: 100000}})
				sid, mid, path := benchSession(b, st)
				g := ""
				if gesture == "gesture" {
					g = "drag"
				}
				ctx := context.Background()
				b.ReportAllocs()
				i := 0
				for b.Loop() {
					p := path[i%len(path)]
					i++
					if _, err := st.Apply(ctx, sid, Change{Op: OpMarkerMove, MarkerID: mid, Gamma: &p, Gesture: g}); err != nil {
						b.Fatal(err)
					}
				}
			})
		}
	}
}

// BenchmarkComputeMarkerMove is the part of a drag step before the commit:
// validation, snapping and building the new state.
func BenchmarkComputeMarkerMove(b *testing.B) {
	st := openStore(b, Options{})
	sid, mid, path := benchSession(b, st)
	cur, _ := state(b, st, sid)
	b.ReportAllocs()
	i := 0
	for b.Loop() {
		p := path[i%len(path)]
		i++
		if _, err := st.compute(sid, cur, &Change{Op: OpMarkerMove, MarkerID: mid, Gamma: &p}); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkPublish measures handing one event to n subscribers, the cost
// the publisher pays while holding the session. The subscribers' buffers
// are emptied outside the timed part, so none is dropped.
func BenchmarkPublish(b *testing.B) {
	for _, n := range []int{1, 20} {
		b.Run(fmt.Sprintf("subscribers=%d", n), func(b *testing.B) {
			st := openStore(b, Options{})
			sid := create(b, st, "pub").ID
			h, err := st.hub(context.Background(), sid)
			if err != nil {
				b.Fatal(err)
			}
			h.mu.Unlock()
			const buf = 1024
			var subs []*Subscription
			for range n {
				s, err := st.Subscribe(sid, buf)
				if err != nil {
					b.Fatal(err)
				}
				subs = append(subs, s)
			}
			ev := Event{SessionID: sid, Op: OpMarkerMove, State: h.state}
			b.ReportAllocs()
			for b.Loop() {
				h.mu.Lock()
				ev.Version++
				h.publish(ev, st.lim.ReplayEvents)
				h.mu.Unlock()
				if ev.Version%buf == 0 {
					b.StopTimer()
					for _, s := range subs {
						for len(s.C) > 0 {
							<-s.C
						}
					}
					b.StartTimer()
				}
			}
			for _, s := range subs {
				if s.Overflowed() {
					b.Fatal("a subscriber overflowed")
				}
			}
		})
	}
}

// BenchmarkApplyWith20Subscribers is a drag step with 20 subscribers
// receiving it.
func BenchmarkApplyWith20Subscribers(b *testing.B) {
	st := openStore(b, Options{})
	sid, mid, path := benchSession(b, st)
	var wg sync.WaitGroup
	var subs []*Subscription
	for range 20 {
		s, _ := st.Subscribe(sid, 1024)
		subs = append(subs, s)
		wg.Go(func() {
			for range s.C {
			}
		})
	}
	ctx := context.Background()
	b.ReportAllocs()
	i := 0
	for b.Loop() {
		p := path[i%len(path)]
		i++
		if _, err := st.Apply(ctx, sid, Change{Op: OpMarkerMove, MarkerID: mid, Gamma: &p, Gesture: "g"}); err != nil {
			b.Fatal(err)
		}
	}
	b.StopTimer()
	for _, s := range subs {
		s.Close()
	}
	wg.Wait()
}
