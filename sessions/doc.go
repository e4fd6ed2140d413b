// Package sessions keeps the bench sessions of matchbench: their sweeps,
// markers, bands, chart settings and (for later use) reference-plane
// settings and matching networks; their persistence in an embedded SQLite
// database; their share tokens; their undo history; and a per-session feed
// of changes for live subscribers.
//
// The package knows nothing of HTTP, templates or websocket framing. A
// server authenticates a request with [Store.ByToken], passes the decoded
// [Change] to [Store.ApplyAs] and renders the [Event]s that its
// [Subscription]s receive.
//
// # Opening
//
// [Open] (or [OpenWith]) takes a data folder, creates it and its database
// file [DBFile] if needed, applies the schema's numbered migrations (tracked
// in SQLite's PRAGMA user_version, each migration in its own transaction)
// and locks the folder, so that a second server on the same folder is
// refused with [ErrLocked]. [Store.Close] releases it.
//
// The database runs in WAL mode with foreign keys on and, by default,
// synchronous=FULL, so that a change acknowledged by Apply survives a crash
// of the program and a power cut. All writes go through one connection;
// reads use a small pool.
//
// # State and changes
//
// A session's [State] is a small JSON-encodable value: the sweeps' numbers
// are not in it but stored once, immutable, in pieces of at most 64 KiB,
// and read with [Store.Sweep]. Decoded sweeps are cached in memory within
// Options.SweepCacheBytes (least recently used out first, removed sweeps at
// once, one copy of each frequency grid), and a session may list at most
// Limits.SweepBytes of numbers. Every change goes through
// [Store.Apply], which
//
//  1. validates the change against the current state (every check is in one
//     place; a refusal is an [OpError] wrapping [ErrInvalid], [ErrNotFound]
//     or [ErrConflict] that names the op and the field),
//  2. computes the new state without touching the old one,
//  3. commits state, version bump and history step in one transaction,
//  4. only then publishes the [Event] to the session's subscribers and
//     returns it.
//
// Changes to one session are serialized by that session's lock; different
// sessions never wait for each other except for SQLite's single writer
// during a commit. The ops and their payloads are listed on [Change].
//
// States handed out (by [Store.State], in an Event, in a [Catchup]) are
// shared snapshots and must not be modified; each change builds a new state.
//
// # Markers and snapping
//
// A marker lives on the trace S(p,p) of one sweep and is held by frequency.
// marker.move by a Γ-plane point snaps to the nearest point of the trace
// (interpolated between measured points) searched only within a window of
// points around the marker's current point, so a drag does not jump to
// another loop of a trace that crosses itself; see [rfmath.SnapToTrace].
// marker.add by a Γ point searches the whole trace.
//
// # Undo and redo
//
// Each change is an undo step storing the state before and after it, so
// undo and redo restore whole states; sweep.remove undone brings the sweep
// and its markers back, because removed sweeps are only marked removed.
// A drag is one step: consecutive marker.move changes with the same
// non-empty Gesture on the same marker update the latest step instead of
// adding one, while each is still committed and versioned. A new change
// after an undo discards the steps that could have been redone; sweeps that
// no remaining step can bring back are then deleted. At most
// Limits.HistorySteps steps are kept. The history belongs to the session,
// not to one editor: undo undoes the latest step, whoever made it.
//
// # Feed
//
// [Store.Subscribe] returns a [Subscription] whose channel receives every
// later Event of the session in version order. The publisher never blocks:
// a subscriber whose buffer is full is dropped (its channel closes and
// [Subscription.Overflowed] reports it) and should reload. A reconnecting
// client subscribes again and calls [Store.Since] with the last version it
// saw: it gets the events it missed when they are still in memory, or else
// the whole current state.
//
// # Tokens
//
// Each session has an edit token and a view token: 128 bits from
// crypto/rand written as 22 characters of base64url. The store keeps only
// their SHA-256 hashes, so the tokens are available in clear only from
// [Store.Create] and [Store.ReissueTokens]; a server that must show the
// links again has to keep them itself (or re-issue, which ends the old
// links). [Store.ByToken] finds a session by the hash and compares the
// hashes in constant time. Never log a token. [Store.ApplyAs] refuses any
// change from a [View] capability with [ErrForbidden].
package sessions
