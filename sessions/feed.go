package sessions

import (
	"context"
	"errors"
	"sync/atomic"
)

// Reasons a subscription ends, returned by [Subscription.Reason].
var (
	// ErrOverflow: the subscriber fell behind and its buffer filled; it
	// should reload the state (see [Store.Since]).
	ErrOverflow = errors.New("sessions: subscriber fell behind")
	// ErrTokensReissued: the session's tokens were re-issued; connections
	// must authenticate again.
	ErrTokensReissued = errors.New("sessions: tokens re-issued")
	// ErrDeleted: the session was deleted.
	ErrDeleted = errors.New("sessions: session deleted")
)

// Subscription receives a session's events in version order on C. The
// publisher never waits for a subscriber: when C's buffer is full the
// subscription is dropped, C is closed and Reason returns ErrOverflow. C is
// also closed by Close (Reason nil), by the store's Close (ErrClosed), by
// ReissueTokens (ErrTokensReissued) and by Delete (ErrDeleted).
type Subscription struct {
	C <-chan Event

	c      chan Event
	h      *hub
	reason atomic.Pointer[error]
}

// Reason returns why C was closed by the store, or nil while the
// subscription is open or after the subscriber's own Close.
func (s *Subscription) Reason() error {
	if p := s.reason.Load(); p != nil {
		return *p
	}
	return nil
}

// Overflowed reports whether the subscription was dropped for falling
// behind.
func (s *Subscription) Overflowed() bool { return errors.Is(s.Reason(), ErrOverflow) }

// Close ends the subscription and closes C. It may be called more than
// once and concurrently with the publisher.
func (s *Subscription) Close() {
	h := s.h
	h.subMu.Lock()
	defer h.subMu.Unlock()
	if _, ok := h.subs[s]; ok {
		delete(h.subs, s)
		close(s.c)
	}
}

// Subscribe returns a subscription to session sessionID's events with a
// buffer of buf events (at least 1). Events committed after Subscribe
// returns are delivered; to catch up from a version a client already has,
// subscribe first and then call [Store.Since], skipping events whose
// version is not above the one caught up to.
func (st *Store) Subscribe(sessionID string, buf int) (*Subscription, error) {
	h, err := st.hub(context.Background(), sessionID)
	if err != nil {
		return nil, err
	}
	defer h.mu.Unlock()
	c := make(chan Event, max(buf, 1))
	s := &Subscription{C: c, c: c, h: h}
	h.subMu.Lock()
	h.subs[s] = struct{}{}
	h.subMu.Unlock()
	return s, nil
}

// publish sends ev to every subscriber without waiting, dropping those
// whose buffer is full, and keeps ev for Since. Called with h.mu held, so
// events go out in version order.
func (h *hub) publish(ev Event, keep int) {
	if len(h.recent) >= 2*keep { // keep the latest keep…2·keep, trimming now and then
		n := copy(h.recent, h.recent[len(h.recent)-keep+1:])
		clear(h.recent[n:])
		h.recent = h.recent[:n]
	}
	h.recent = append(h.recent, ev)
	h.subMu.Lock()
	defer h.subMu.Unlock()
	for s := range h.subs {
		select {
		case s.c <- ev:
		default:
			s.end(ErrOverflow)
		}
	}
}

// closeSubs ends every subscription of h with reason.
func (h *hub) closeSubs(reason error) {
	h.subMu.Lock()
	defer h.subMu.Unlock()
	for s := range h.subs {
		s.end(reason)
	}
}

// end closes s with reason; h.subMu must be held.
func (s *Subscription) end(reason error) {
	s.reason.Store(&reason)
	delete(s.h.subs, s)
	close(s.c)
}

// Catchup is what a client that last saw some version needs to be current.
type Catchup struct {
	// Version and State are the session's current ones (State read-only).
	Version int64
	State   *State
	// Replayed reports that Events hold every change after the client's
	// version, in order (none if it was current). Otherwise the client
	// must take State whole: its version is too old to replay (older than
	// the events kept in memory, or from before a restart) or not one the
	// session has had.
	Replayed bool
	Events   []Event
}

// Since returns what a client at version v of session sessionID has missed.
func (st *Store) Since(ctx context.Context, sessionID string, v int64) (Catchup, error) {
	h, err := st.hub(ctx, sessionID)
	if err != nil {
		return Catchup{}, err
	}
	defer h.mu.Unlock()
	c := Catchup{Version: h.version, State: h.state}
	switch {
	case v == h.version:
		c.Replayed = true
	case v < h.version && len(h.recent) > 0 && h.recent[0].Version <= v+1:
		for _, ev := range h.recent {
			if ev.Version > v {
				c.Events = append(c.Events, ev)
			}
		}
		c.Replayed = true
	}
	return c, nil
}
