package server

import (
	"context"
	"strconv"
	"strings"
	"sync"
	"sync/atomic"
	"testing"
	"time"
)

// settle waits until the server's derived-results cache has no job queued
// or running.
func settle(t testing.TB, s *Server) {
	t.Helper()
	d := s.derived
	if !waitFor(60*time.Second, func() bool {
		d.mu.Lock()
		defer d.mu.Unlock()
		return len(d.queues) == 0 && len(d.running) == 0
	}) {
		t.Fatal("derived results still computing after 60 s")
	}
}

// One job per key, however many readers ask at once; the result is then
// served to all of them.
func TestDerivedOnePerKey(t *testing.T) {
	t.Parallel()
	d := newDerivedCache(2, nil)
	defer d.close()
	var runs atomic.Int32
	release := make(chan struct{})
	job := func(ctx context.Context) (any, int64) {
		runs.Add(1)
		<-release
		return 42, 8
	}
	k := derivedKey{"s1", "yield", "abc"}
	var wg sync.WaitGroup
	for range 20 {
		wg.Add(1)
		go func() {
			defer wg.Done()
			if _, ok := d.get(k, job); ok {
				t.Error("ready before the job ran")
			}
		}()
	}
	wg.Wait()
	close(release)
	if !waitFor(5*time.Second, func() bool { _, ok := d.get(k, job); return ok }) {
		t.Fatal("the result never became ready")
	}
	if v, _ := d.get(k, job); v != 42 || runs.Load() != 1 {
		t.Errorf("value %v after %d runs; want 42 after 1", v, runs.Load())
	}
}

// A newer job of the same session and kind replaces the queued one and
// cancels the running one; jobs are taken round robin by session.
func TestDerivedStaleAndFair(t *testing.T) {
	t.Parallel()
	ready := make(chan string, 16)
	d := newDerivedCache(1, func(sid string) { ready <- sid })
	defer d.close()
	var mu sync.Mutex
	var order []string
	gate := make(chan struct{})
	job := func(name string, wait bool) derivedJob {
		return func(ctx context.Context) (any, int64) {
			mu.Lock()
			order = append(order, name)
			mu.Unlock()
			if wait {
				select {
				case <-gate:
				case <-ctx.Done():
					return nil, 0
				}
			}
			return name, 1
		}
	}
	// The one worker takes A's first job and waits in it.
	d.get(derivedKey{"A", "yield", "1"}, job("A-yield-1", true))
	waitFor(5*time.Second, func() bool { mu.Lock(); defer mu.Unlock(); return len(order) == 1 })
	// Meanwhile A queues three more, B one: A's second yield replaces the
	// first (running: cancelled) and the third replaces the second (queued).
	d.get(derivedKey{"A", "limits", "1"}, job("A-limits-1", false))
	d.get(derivedKey{"A", "yield", "2"}, job("A-yield-2", false))
	d.get(derivedKey{"B", "yield", "1"}, job("B-yield-1", false))
	d.get(derivedKey{"A", "yield", "3"}, job("A-yield-3", false))
	close(gate)
	for range 3 {
		select {
		case <-ready:
		case <-time.After(5 * time.Second):
			t.Fatal("jobs did not finish")
		}
	}
	mu.Lock()
	got := strings.Join(order, " ")
	mu.Unlock()
	// A-yield-1 ran and was cancelled; then A's queue and B's take turns.
	if want := "A-yield-1 A-limits-1 B-yield-1 A-yield-3"; got != want {
		t.Errorf("ran %q, want %q", got, want)
	}
	if _, ok := d.get(derivedKey{"A", "yield", "1"}, job("again", false)); ok {
		t.Error("the cancelled job's result was kept")
	}
	if v, ok := d.get(derivedKey{"A", "yield", "3"}, nil); !ok || v != "A-yield-3" {
		t.Errorf("A's latest yield: %v %v", v, ok)
	}
}

// Finished results are kept within the bounds, least recently read first
// out.
func TestDerivedBounded(t *testing.T) {
	t.Parallel()
	d := newDerivedCache(1, nil)
	defer d.close()
	d.mu.Lock()
	d.maxEntries, d.maxBytes = 3, 250
	d.mu.Unlock()
	job := func(n int64) derivedJob { return func(context.Context) (any, int64) { return n, n } }
	get := func(i int, n int64) bool {
		k := derivedKey{"s", "k", strconv.Itoa(i)}
		_, ok := d.get(k, job(n))
		if !ok {
			waitFor(5*time.Second, func() bool { _, ok := d.get(k, job(n)); return ok })
		}
		return ok
	}
	for i := range 6 {
		get(i, 100) // 100 bytes each: two fit in 250
	}
	d.mu.Lock()
	n, b := d.lru.Len(), d.bytes
	d.mu.Unlock()
	if n != 2 || b != 200 {
		t.Errorf("%d results of %d bytes kept; want 2 of 200", n, b)
	}
	if get(5, 100) == false || get(0, 100) == true {
		t.Error("the newest result was evicted, or the oldest kept")
	}
}

// forget drops a session's results and jobs and cancels its running one.
func TestDerivedForget(t *testing.T) {
	t.Parallel()
	d := newDerivedCache(1, nil)
	defer d.close()
	cancelled := make(chan struct{})
	d.get(derivedKey{"gone", "yield", "1"}, func(ctx context.Context) (any, int64) {
		<-ctx.Done()
		close(cancelled)
		return nil, 0
	})
	d.get(derivedKey{"gone", "limits", "1"}, func(context.Context) (any, int64) { return 1, 1 })
	waitFor(5*time.Second, func() bool { d.mu.Lock(); defer d.mu.Unlock(); return len(d.running) == 1 })
	d.forget("gone")
	select {
	case <-cancelled:
	case <-time.After(5 * time.Second):
		t.Fatal("the running job was not cancelled")
	}
	d.mu.Lock()
	n, q := len(d.entries), len(d.queues)
	d.mu.Unlock()
	if n != 0 || q != 0 {
		t.Errorf("%d results and %d queues left of the forgotten session", n, q)
	}
}
