package sessions

import (
	"bytes"
	"context"
	"database/sql"
	"encoding/json"
	"errors"
	"fmt"
	"strings"
	"sync"
	"time"
)

// Event is one committed change of a session, as returned by Apply and sent
// to the session's subscribers.
type Event struct {
	SessionID string `json:"sessionId"`
	Version   int64  `json:"version"`
	Op        string `json:"op"`
	// Of is, for undo and redo, the op of the step undone or redone.
	Of string `json:"of,omitempty"`
	// The ids the change is about: the sweep added, renamed or removed; the
	// marker (and its sweep) moved; the band set. For undo and redo, those
	// of the step. Empty where they do not apply.
	SweepID  string `json:"sweepId,omitempty"`
	MarkerID string `json:"markerId,omitempty"`
	BandID   string `json:"bandId,omitempty"`
	// NetworkID is the active network after a network or part op; PartID
	// the part added, changed, moved or removed.
	NetworkID string `json:"networkId,omitempty"`
	PartID    string `json:"partId,omitempty"`
	// SetID is the load set saved or removed.
	SetID   string `json:"setId,omitempty"`
	Gesture string `json:"gesture,omitempty"`
	// Unchanged is set (by Apply only) when the change left the state as it
	// was, so nothing was committed or published and Version is the
	// current one.
	Unchanged bool `json:"unchanged,omitempty"`
	// State is the session's state after the change: a shared snapshot,
	// read-only.
	State *State `json:"-"`
}

// hub owns the in-memory state of one session. mu serializes its changes.
type hub struct {
	id string

	mu        sync.Mutex // held while a change is computed, committed and published
	loaded    bool
	gone      bool // the session does not exist (or was deleted); look again
	closed    bool // the store is closed
	state     *State
	stateJSON []byte
	version   int64
	createdAt time.Time
	// History steps minStep…maxStep are stored; undoPos is the latest step
	// applied (undoPos < minStep means nothing left to undo).
	undoPos, minStep, maxStep int64
	top                       stepMeta // of step maxStep
	recent                    []Event  // the latest events, oldest first, for Since

	subMu sync.Mutex // guards subs; taken inside mu when publishing
	subs  map[*Subscription]struct{}
}

// stepMeta is what decides whether a move joins the latest step.
type stepMeta struct {
	op, gesture, markerID string
}

// hub returns the session's hub, loaded and locked: the caller must unlock
// h.mu.
func (st *Store) hub(ctx context.Context, id string) (*hub, error) {
	for {
		st.mu.Lock()
		if st.closed {
			st.mu.Unlock()
			return nil, ErrClosed
		}
		h := st.hubs[id]
		if h == nil {
			h = &hub{id: id}
			st.hubs[id] = h
		}
		st.mu.Unlock()

		h.mu.Lock()
		switch {
		case h.closed:
			h.mu.Unlock()
			return nil, ErrClosed
		case h.gone:
			h.mu.Unlock()
			continue // removed from the map; look again
		case h.loaded:
			return h, nil
		}
		err := st.load(ctx, h)
		if err == nil {
			return h, nil
		}
		if !errors.Is(err, ErrNotFound) {
			h.mu.Unlock() // keep the hub and its subscribers; try again next time
			return nil, err
		}
		h.gone = true
		h.closeSubs(ErrDeleted)
		h.mu.Unlock()
		st.mu.Lock()
		if st.hubs[id] == h {
			delete(st.hubs, id)
		}
		st.mu.Unlock()
		return nil, err
	}
}

// load reads the session's state and history bounds into h.
func (st *Store) load(ctx context.Context, h *hub) error {
	var ms int64
	err := st.rdb.QueryRowContext(ctx,
		`SELECT created_at, version, state, undo_pos FROM sessions WHERE id = ?`, h.id,
	).Scan(&ms, &h.version, &h.stateJSON, &h.undoPos)
	if errors.Is(err, sql.ErrNoRows) {
		return fmt.Errorf("%w: no session %q", ErrNotFound, h.id)
	}
	if err != nil {
		return st.dbErr("loading a session", err)
	}
	h.createdAt = time.UnixMilli(ms).UTC()
	h.state = new(State)
	if err := json.Unmarshal(h.stateJSON, h.state); err != nil {
		return fmt.Errorf("%w: state of session %q: %v", ErrCorrupt, h.id, err)
	}
	var lo, hi sql.NullInt64
	if err := st.rdb.QueryRowContext(ctx, `SELECT MIN(step), MAX(step) FROM history WHERE session_id = ?`, h.id).
		Scan(&lo, &hi); err != nil {
		return st.dbErr("loading a session's history", err)
	}
	h.minStep, h.maxStep = 1, 0
	if hi.Valid {
		h.minStep, h.maxStep = lo.Int64, hi.Int64
		if err := st.rdb.QueryRowContext(ctx,
			`SELECT op, gesture, marker_id FROM history WHERE session_id = ? AND step = ?`, h.id, h.maxStep,
		).Scan(&h.top.op, &h.top.gesture, &h.top.markerID); err != nil {
			return st.dbErr("loading a session's history", err)
		}
	}
	if h.subs == nil {
		h.subs = make(map[*Subscription]struct{})
	}
	h.recent = nil // after a failed commit, replay from here is not trusted
	h.loaded = true
	return nil
}

// ApplyAs is Apply for a caller holding capability c: a View capability
// gets ErrForbidden and the session is left alone.
func (st *Store) ApplyAs(ctx context.Context, c Capability, sessionID string, ch Change) (Event, error) {
	if !c.CanEdit() {
		return Event{}, &OpError{Op: ch.Op, Err: ErrForbidden}
	}
	return st.Apply(ctx, sessionID, ch)
}

// Apply validates ch against session sessionID's current state, computes
// the new state, commits it in one SQLite transaction (state, version and
// history together) and only then publishes the Event to the session's
// subscribers and returns it. Changes to one session are applied one at a
// time in the order they take the session's lock; each bumps Version by
// one. A refused change leaves everything as it was and returns an error
// wrapping ErrInvalid, ErrNotFound or ErrConflict (usually an *OpError
// naming the op and field). A change that leaves the state exactly as it
// was is not committed: the Event has Unchanged set.
//
// Undo and redo restore the whole state of the step before or after, so a
// sweep.remove undone brings back the sweep and its markers. History is per
// session, shared by all its editors; a new change after an undo discards
// the steps that could have been redone.
func (st *Store) Apply(ctx context.Context, sessionID string, ch Change) (Event, error) {
	h, err := st.hub(ctx, sessionID)
	if err != nil {
		return Event{}, err
	}
	defer h.mu.Unlock()
	if ch.IfVersion != 0 && ch.IfVersion != h.version {
		return Event{}, &OpError{Op: ch.Op, Field: "ifVersion",
			Err: fmt.Errorf("%w: change made at version %d, session is at %d", ErrConflict, ch.IfVersion, h.version)}
	}
	switch ch.Op {
	case OpUndo, OpRedo:
		return st.undoRedo(ctx, h, ch.Op)
	}
	r, err := st.compute(h.id, h.state, &ch)
	if err != nil {
		return Event{}, err
	}
	after, err := json.Marshal(r.next)
	if err != nil {
		return Event{}, err
	}
	ev := r.ev
	ev.SessionID = h.id
	if bytes.Equal(after, h.stateJSON) {
		ev.Version, ev.State, ev.Unchanged = h.version, h.state, true
		return ev, nil
	}
	ev.Version = h.version + 1
	ev.State = r.next

	// A drag (a marker along its trace, or a part's value along its arc) is
	// one undo step: its moves share a gesture id. Part drags leave
	// markerID empty; their gesture ids are unique per drag.
	coalesce := coalescible[ch.Op] && ch.Gesture != "" &&
		h.undoPos == h.maxStep && h.maxStep >= h.minStep &&
		h.top == stepMeta{ch.Op, ch.Gesture, ev.MarkerID}
	step := h.undoPos + 1
	if coalesce {
		step = h.maxStep
	}
	minStep := h.minStep
	relaxed := st.fullSync && coalescible[ch.Op] && ch.Gesture != ""
	err = st.txSync(ctx, h, relaxed, func(ctx context.Context, tx *sql.Tx) error {
		if s := r.newSweep; s != nil {
			if err := insertSweep(ctx, tx, h.id, s); err != nil {
				return err
			}
		}
		if coalesce {
			if _, err := st.execTx(ctx, tx, qHistoryAfter,
				string(after), ev.Version, h.id, step); err != nil {
				return err
			}
		} else {
			purge := false
			if h.maxStep > h.undoPos { // a new branch: the redo steps go
				if _, err := tx.ExecContext(ctx, `DELETE FROM history WHERE session_id = ? AND step > ?`, h.id, h.undoPos); err != nil {
					return err
				}
				purge = true
			}
			if _, err := st.execTx(ctx, tx, qHistoryInsert,
				h.id, step, ch.Op, ch.Gesture, ev.SweepID, ev.MarkerID, ev.BandID, ev.Version,
				string(h.stateJSON), string(after), sweepIDs(h.state, r.next)); err != nil {
				return err
			}
			if minStep < step-int64(st.lim.HistorySteps)+1 {
				minStep = step - int64(st.lim.HistorySteps) + 1
				if _, err := tx.ExecContext(ctx, `DELETE FROM history WHERE session_id = ? AND step < ?`, h.id, minStep); err != nil {
					return err
				}
				purge = true
			}
			if purge {
				if err := st.purgeSweeps(ctx, tx, h.id); err != nil {
					return err
				}
			}
		}
		return st.commitState(ctx, tx, h, r.next, after, ev.Version, step)
	})
	if err != nil {
		return Event{}, st.dbErr(ch.Op, err)
	}
	if s := r.newSweep; s != nil {
		st.sweeps.put(sweepKey{h.id, s.id}, s.sweep)
	}
	st.forgetRemoved(h.id, h.state, r.next)
	if !coalesce {
		h.maxStep = step
		h.minStep = minStep
		h.top = stepMeta{ch.Op, ch.Gesture, ev.MarkerID}
	}
	h.set(r.next, after, ev.Version, step)
	h.publish(ev, st.lim.ReplayEvents)
	return ev, nil
}

// undoRedo moves session h one step back or forward in its history.
func (st *Store) undoRedo(ctx context.Context, h *hub, op string) (Event, error) {
	step, col, pos := h.undoPos, "before", h.undoPos-1
	if op == OpRedo {
		step, col, pos = h.undoPos+1, "after", h.undoPos+1
		if step > h.maxStep {
			return Event{}, invalid(op, "", "nothing to redo")
		}
	} else if step < h.minStep || step < 1 {
		return Event{}, invalid(op, "", "nothing to undo")
	}
	ev := Event{SessionID: h.id, Version: h.version + 1, Op: op}
	var js []byte
	err := st.tx(ctx, h, func(ctx context.Context, tx *sql.Tx) error {
		err := tx.QueryRowContext(ctx,
			`SELECT `+col+`, op, sweep_id, marker_id, band_id FROM history WHERE session_id = ? AND step = ?`, h.id, step,
		).Scan(&js, &ev.Of, &ev.SweepID, &ev.MarkerID, &ev.BandID)
		if err != nil {
			return err
		}
		ev.State = new(State)
		if err := json.Unmarshal(js, ev.State); err != nil {
			return fmt.Errorf("%w: history step %d of session %q: %v", ErrCorrupt, step, h.id, err)
		}
		return st.commitState(ctx, tx, h, ev.State, js, ev.Version, pos)
	})
	if err != nil {
		return Event{}, st.dbErr(op, err)
	}
	st.forgetRemoved(h.id, h.state, ev.State)
	h.set(ev.State, js, ev.Version, pos)
	h.publish(ev, st.lim.ReplayEvents)
	return ev, nil
}

// forgetRemoved drops from the sweep cache the sweeps listed in before and
// not in after: an undo that brings one back decodes it again.
func (st *Store) forgetRemoved(sid string, before, after *State) {
	for _, s := range before.Sweeps {
		if after.SweepIndex(s.ID) < 0 {
			st.sweeps.drop(sweepKey{sid, s.ID})
		}
	}
}

// commitState writes the session row for a new state and marks the sweeps
// that left or came back with it.
func (st *Store) commitState(ctx context.Context, tx *sql.Tx, h *hub, next *State, js []byte, version, undoPos int64) error {
	if _, err := st.execTx(ctx, tx, qSessionCommit,
		next.Name, string(js), version, undoPos, h.id); err != nil {
		return err
	}
	for _, s := range h.state.Sweeps {
		if next.SweepIndex(s.ID) < 0 {
			if _, err := tx.ExecContext(ctx, `UPDATE sweeps SET removed = 1 WHERE session_id = ? AND id = ?`, h.id, s.ID); err != nil {
				return err
			}
		}
	}
	for _, s := range next.Sweeps {
		if h.state.SweepIndex(s.ID) < 0 {
			if _, err := tx.ExecContext(ctx, `UPDATE sweeps SET removed = 0 WHERE session_id = ? AND id = ?`, h.id, s.ID); err != nil {
				return err
			}
		}
	}
	return nil
}

// purgeSweeps deletes the removed sweeps of a session that no stored
// history step mentions: no undo or redo can bring them back.
func (st *Store) purgeSweeps(ctx context.Context, tx *sql.Tx, sid string) error {
	rows, err := tx.QueryContext(ctx,
		`DELETE FROM sweeps WHERE session_id = ?1 AND removed = 1 AND NOT EXISTS (
			SELECT 1 FROM history h WHERE h.session_id = ?1 AND instr(h.sweep_ids, ',' || sweeps.id || ',') > 0
		) RETURNING id`, sid)
	if err != nil {
		return err
	}
	defer rows.Close()
	var gone []string
	for rows.Next() {
		var id string
		if err := rows.Scan(&id); err != nil {
			return err
		}
		gone = append(gone, id)
	}
	if err := rows.Err(); err != nil {
		return err
	}
	for _, id := range gone {
		st.sweeps.drop(sweepKey{sid, id})
	}
	return nil
}

// sweepIDs lists the sweeps of a and b as ",id1,id2,…,".
func sweepIDs(a, b *State) string {
	var sb strings.Builder
	sb.WriteByte(',')
	for _, s := range a.Sweeps {
		sb.WriteString(s.ID)
		sb.WriteByte(',')
	}
	for _, s := range b.Sweeps {
		if a.SweepIndex(s.ID) < 0 {
			sb.WriteString(s.ID)
			sb.WriteByte(',')
		}
	}
	return sb.String()
}

// tx runs f in one write transaction of session h and commits it. Once
// begun, the transaction is not cut short by ctx: a commit reported as
// failed must really have failed. If it fails anyway, h is marked for
// reloading from the database, so memory never runs ahead of or behind the
// disk.
func (st *Store) tx(ctx context.Context, h *hub, f func(context.Context, *sql.Tx) error) error {
	return st.txSync(ctx, h, false, f)
}

// writeExec runs one statement on the write connection, outside any
// relaxed drag transaction (see txSync).
func (st *Store) writeExec(ctx context.Context, q string, args ...any) (sql.Result, error) {
	st.writeMu.Lock()
	defer st.writeMu.Unlock()
	return st.wdb.ExecContext(ctx, q, args...)
}

// txSync is tx with, when relaxed, the transaction committed with
// synchronous NORMAL instead of FULL (a drag's steps; see
// Options.Synchronous). writeMu keeps the switch and the transaction
// together: the write pool holds one connection, and no other session's
// transaction may run under the relaxed setting.
func (st *Store) txSync(ctx context.Context, h *hub, relaxed bool, f func(context.Context, *sql.Tx) error) error {
	if err := ctx.Err(); err != nil {
		return err
	}
	ctx = context.WithoutCancel(ctx)
	st.writeMu.Lock()
	defer st.writeMu.Unlock()
	if relaxed {
		if _, err := st.execW(ctx, qSyncNormal); err != nil {
			relaxed = false // stay FULL: only slower
		} else {
			defer st.execW(ctx, qSyncFull)
		}
	}
	tx, err := st.wdb.BeginTx(ctx, nil)
	if err == nil {
		if err = f(ctx, tx); err != nil {
			tx.Rollback()
		} else {
			err = tx.Commit()
		}
	}
	if err != nil {
		h.loaded = false
	}
	return err
}

// set installs a committed state in h.
func (h *hub) set(s *State, js []byte, version, undoPos int64) {
	h.state, h.stateJSON, h.version, h.undoPos = s, js, version, undoPos
}
