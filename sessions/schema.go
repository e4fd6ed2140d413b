package sessions

import (
	"context"
	"database/sql"
	"fmt"
)

// migrations are the schema's steps in order. Migration i (from zero) takes
// the database from PRAGMA user_version i to i+1; each runs in one
// transaction together with its user_version bump. Never edit a migration
// that has shipped: append a new one.
var migrations = []string{
	// 1: sessions, their sweeps and their undo history.
	`
CREATE TABLE sessions (
	id         TEXT PRIMARY KEY,
	name       TEXT NOT NULL,
	created_at INTEGER NOT NULL,          -- Unix milliseconds, UTC
	version    INTEGER NOT NULL,          -- bumps on every committed change
	state      TEXT NOT NULL,             -- State as JSON
	undo_pos   INTEGER NOT NULL DEFAULT 0, -- history step of the latest applied change, 0 = none
	edit_hash  BLOB NOT NULL UNIQUE,      -- SHA-256 of the edit token (looked up)
	view_hash  BLOB NOT NULL UNIQUE,      -- SHA-256 of the view token
	edit_token TEXT NOT NULL,             -- the tokens themselves, shown to the bench
	view_token TEXT NOT NULL              -- computer's own user (see Store.Tokens)
) STRICT;

-- Sweeps are immutable. A sweep no longer listed in the state is kept with
-- removed = 1 while some undo step can bring it back.
CREATE TABLE sweeps (
	session_id TEXT NOT NULL REFERENCES sessions(id) ON DELETE CASCADE,
	id         TEXT NOT NULL,
	file_name  TEXT NOT NULL,
	created_at INTEGER NOT NULL,
	removed    INTEGER NOT NULL DEFAULT 0,
	parsed     BLOB NOT NULL,             -- see sweepFormat1
	raw        BLOB NOT NULL,             -- the file as uploaded
	PRIMARY KEY (session_id, id)
) STRICT;

-- One row per undo step. before and after are whole states; a drag's moves
-- update the after of their step. sweep_ids lists, as ",a,b,", every sweep
-- in before or after, so that unreachable sweeps can be purged.
CREATE TABLE history (
	session_id TEXT NOT NULL REFERENCES sessions(id) ON DELETE CASCADE,
	step       INTEGER NOT NULL,
	op         TEXT NOT NULL,
	gesture    TEXT NOT NULL DEFAULT '',
	sweep_id   TEXT NOT NULL DEFAULT '',
	marker_id  TEXT NOT NULL DEFAULT '',
	band_id    TEXT NOT NULL DEFAULT '',
	version    INTEGER NOT NULL,          -- session version after the step
	before     TEXT NOT NULL,
	after      TEXT NOT NULL,
	sweep_ids  TEXT NOT NULL,
	PRIMARY KEY (session_id, step)
) STRICT;
`,
}

// SchemaVersion is the schema version this build writes.
var SchemaVersion = len(migrations)

// migrate brings db up to SchemaVersion. A database from a newer build is
// refused rather than guessed at.
func migrate(ctx context.Context, db *sql.DB) error {
	for {
		done, err := migrateOne(ctx, db)
		if err != nil || done {
			return err
		}
	}
}

func migrateOne(ctx context.Context, db *sql.DB) (done bool, err error) {
	tx, err := db.BeginTx(ctx, nil)
	if err != nil {
		return false, err
	}
	defer tx.Rollback()
	var v int
	if err := tx.QueryRowContext(ctx, `PRAGMA user_version`).Scan(&v); err != nil {
		return false, err
	}
	switch {
	case v == len(migrations):
		return true, nil
	case v > len(migrations) || v < 0:
		return false, fmt.Errorf("sessions: the database has schema version %d, newer than this program's %d; use a newer matchbench", v, len(migrations))
	}
	if _, err := tx.ExecContext(ctx, migrations[v]); err != nil {
		return false, fmt.Errorf("sessions: schema migration %d: %w", v+1, err)
	}
	// PRAGMA takes no parameters; v+1 is a small integer of ours.
	if _, err := tx.ExecContext(ctx, fmt.Sprintf(`PRAGMA user_version = %d`, v+1)); err != nil {
		return false, err
	}
	return false, tx.Commit()
}
