package sessions

import (
	"context"
	"errors"
	"fmt"
	"testing"
	"time"
)

// recv takes one event from s or fails after a second.
func recv(t *testing.T, s *Subscription) Event {
	t.Helper()
	select {
	case ev, ok := <-s.C:
		if !ok {
			t.Fatalf("subscription closed: %v", s.Reason())
		}
		return ev
	case <-time.After(time.Second):
		t.Fatal("no event within a second")
	}
	return Event{}
}

func TestFeedTwoSubscribers(t *testing.T) {
	t.Parallel()
	st := openStore(t, Options{})
	sid := create(t, st, "feed").ID
	other := create(t, st, "other").ID
	a, err := st.Subscribe(sid, 64)
	if err != nil {
		t.Fatal(err)
	}
	b, err := st.Subscribe(sid, 64)
	if err != nil {
		t.Fatal(err)
	}
	c, err := st.Subscribe(other, 64)
	if err != nil {
		t.Fatal(err)
	}
	var returned []Event
	for i := range 20 {
		returned = append(returned, apply(t, st, sid, Change{Op: OpSessionRename, Name: fmt.Sprint("n", i)}))
	}
	apply(t, st, other, Change{Op: OpSessionRename, Name: "elsewhere"})
	for i, want := range returned {
		ea, eb := recv(t, a), recv(t, b)
		if ea.Version != want.Version || eb.Version != want.Version || ea.State != want.State || eb.State != want.State {
			t.Fatalf("event %d: a v%d, b v%d, want v%d with the same state", i, ea.Version, eb.Version, want.Version)
		}
		if ea.Version != int64(i+1) || ea.State.Name != fmt.Sprint("n", i) {
			t.Fatalf("event %d out of order: version %d name %q", i, ea.Version, ea.State.Name)
		}
	}
	if ev := recv(t, c); ev.SessionID != other || ev.State.Name != "elsewhere" {
		t.Fatalf("other session's subscriber got %+v", ev)
	}
	// Refused and unchanged changes publish nothing.
	st.Apply(context.Background(), sid, Change{Op: OpSessionRename})
	apply(t, st, sid, Change{Op: OpSessionRename, Name: "n19"})
	select {
	case ev := <-a.C:
		t.Fatalf("unexpected event %+v", ev)
	default:
	}
	a.Close()
	a.Close() // twice is fine
	if _, ok := <-a.C; ok || a.Reason() != nil {
		t.Fatalf("closed subscription: open %v, reason %v", ok, a.Reason())
	}
	apply(t, st, sid, Change{Op: OpSessionRename, Name: "after"})
	if ev := recv(t, b); ev.State.Name != "after" {
		t.Fatalf("b got %+v", ev)
	}
	if _, err := st.Subscribe("nosuch", 1); !errors.Is(err, ErrNotFound) {
		t.Fatalf("Subscribe to an unknown session: %v", err)
	}
}

// TestFeedSlowSubscriber: a subscriber that never reads is dropped when its
// buffer fills, and the others, and Apply, go on.
func TestFeedSlowSubscriber(t *testing.T) {
	t.Parallel()
	st := openStore(t, Options{})
	sid := create(t, st, "slow").ID
	slow, _ := st.Subscribe(sid, 2)
	fast, _ := st.Subscribe(sid, 1)
	done := make(chan int)
	go func() {
		n := 0
		for ev := range fast.C {
			n++
			if ev.Version == 10 {
				break
			}
		}
		done <- n
	}()
	for i := range 10 {
		ctx, cancel := context.WithTimeout(context.Background(), 5*time.Second)
		if _, err := st.Apply(ctx, sid, Change{Op: OpSessionRename, Name: fmt.Sprint(i)}); err != nil {
			t.Fatal(err)
		}
		cancel()
		// The fast reader keeps up: wait until it took the event.
		for len(fast.C) > 0 {
			time.Sleep(time.Millisecond)
		}
	}
	if n := <-done; n != 10 {
		t.Fatalf("fast subscriber got %d events, want 10", n)
	}
	if !slow.Overflowed() || !errors.Is(slow.Reason(), ErrOverflow) {
		t.Fatalf("slow subscriber not dropped: reason %v", slow.Reason())
	}
	var got []int64
	for ev := range slow.C { // the buffered events, then closed
		got = append(got, ev.Version)
	}
	if len(got) != 2 || got[0] != 1 || got[1] != 2 {
		t.Fatalf("slow subscriber's buffer held versions %v, want [1 2]", got)
	}
}

func TestSince(t *testing.T) {
	t.Parallel()
	st := openStore(t, Options{Limits: Limits{ReplayEvents: 4}})
	sid := create(t, st, "since").ID
	for i := range 5 {
		apply(t, st, sid, Change{Op: OpSessionRename, Name: fmt.Sprint(i)})
	}
	ctx := context.Background()
	c, err := st.Since(ctx, sid, 3)
	if err != nil {
		t.Fatal(err)
	}
	if !c.Replayed || c.Version != 5 || len(c.Events) != 2 || c.Events[0].Version != 4 || c.Events[1].Version != 5 || c.State.Name != "4" {
		t.Fatalf("Since(3) = %+v", c)
	}
	if c, _ = st.Since(ctx, sid, 5); !c.Replayed || len(c.Events) != 0 {
		t.Fatalf("Since(current) = %+v", c)
	}
	// Up to 2·ReplayEvents are kept; beyond that only the state is given.
	for i := range 10 {
		apply(t, st, sid, Change{Op: OpSessionRename, Name: fmt.Sprint("x", i)})
	}
	if c, _ = st.Since(ctx, sid, 1); c.Replayed || c.Events != nil || c.Version != 15 || c.State.Name != "x9" {
		t.Fatalf("Since(too old) = %+v", c)
	}
	if c, _ = st.Since(ctx, sid, 12); !c.Replayed || len(c.Events) != 3 {
		t.Fatalf("Since(12) = %+v", c)
	}
	if c, _ = st.Since(ctx, sid, 99); c.Replayed {
		t.Fatalf("Since(a future version) = %+v", c)
	}
	// After a restart nothing is kept in memory: the state is given whole.
	dir := st.Dir()
	st.Close()
	st2, err := Open(dir)
	if err != nil {
		t.Fatal(err)
	}
	defer st2.Close()
	if c, _ = st2.Since(ctx, sid, 14); c.Replayed || c.Version != 15 || c.State.Name != "x9" {
		t.Fatalf("Since after restart = %+v", c)
	}
}

// TestFeedEndings: subscriptions end with a reason when the tokens are
// re-issued, the session is deleted or the store closes.
func TestFeedEndings(t *testing.T) {
	t.Parallel()
	st := openStore(t, Options{})
	ctx := context.Background()
	sid := create(t, st, "end").ID
	s1, _ := st.Subscribe(sid, 4)
	if _, err := st.ReissueTokens(ctx, sid); err != nil {
		t.Fatal(err)
	}
	if _, ok := <-s1.C; ok || !errors.Is(s1.Reason(), ErrTokensReissued) {
		t.Fatalf("after ReissueTokens: reason %v", s1.Reason())
	}
	s2, _ := st.Subscribe(sid, 4)
	if err := st.Delete(ctx, sid); err != nil {
		t.Fatal(err)
	}
	if _, ok := <-s2.C; ok || !errors.Is(s2.Reason(), ErrDeleted) {
		t.Fatalf("after Delete: reason %v", s2.Reason())
	}
	if _, err := st.Get(ctx, sid); !errors.Is(err, ErrNotFound) {
		t.Fatalf("Get after Delete: %v", err)
	}
	if _, err := st.Apply(ctx, sid, Change{Op: OpSessionRename, Name: "x"}); !errors.Is(err, ErrNotFound) {
		t.Fatalf("Apply after Delete: %v", err)
	}
	sid2 := create(t, st, "end2").ID
	s3, _ := st.Subscribe(sid2, 4)
	st.Close()
	if _, ok := <-s3.C; ok || !errors.Is(s3.Reason(), ErrClosed) {
		t.Fatalf("after Close: reason %v", s3.Reason())
	}
	if _, err := st.Apply(ctx, sid2, Change{Op: OpSessionRename, Name: "x"}); !errors.Is(err, ErrClosed) {
		t.Fatalf("Apply after Close: %v", err)
	}
}
