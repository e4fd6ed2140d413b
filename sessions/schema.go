package sessions

import (
	"context"
	"crypto/cipher"
	"database/sql"
	"fmt"
)

// migration is one step of the schema: SQL, then optionally Go code that
// moves data, in the same transaction.
type migration struct {
	sql  string
	post func(ctx context.Context, tx *sql.Tx, aead cipher.AEAD) error
}

// migrations are the schema's steps in order. Migration i (from zero) takes
// the database from PRAGMA user_version i to i+1; each runs in one
// transaction together with its user_version bump. Never edit a migration
// that has shipped: append a new one.
var migrations = []migration{
	// 1: sessions, their sweeps and their undo history.
	{sql: `
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
`},

	// 2: the tokens leave the database in clear: a copy sealed under the
	// data folder's key (see Store.Tokens) replaces edit_token and
	// view_token, which migration 1 created.
	{sql: `ALTER TABLE sessions ADD COLUMN tokens_sealed BLOB;`, post: sealClearTokens},

	// 3: a sweep's parsed numbers and uploaded file are stored in pieces of
	// at most chunkBytes (see sweepblob.go), so that no statement copies a
	// whole file into SQLite's memory, whose allocator keeps what it once
	// held. Rows stored before keep their bytes in sweeps.parsed and
	// sweeps.raw (chunked = 0) and are read as before.
	{sql: `
CREATE TABLE sweep_chunks (
	session_id TEXT NOT NULL,
	sweep_id   TEXT NOT NULL,
	part       INTEGER NOT NULL,          -- 0: parsed numbers, 1: the file as uploaded
	seq        INTEGER NOT NULL,          -- from 0, in order
	data       BLOB NOT NULL,
	PRIMARY KEY (session_id, sweep_id, part, seq),
	FOREIGN KEY (session_id, sweep_id) REFERENCES sweeps(session_id, id) ON DELETE CASCADE
) STRICT;
ALTER TABLE sweeps ADD COLUMN chunked INTEGER NOT NULL DEFAULT 0;
`},
}

// sealClearTokens seals the tokens kept in clear by migration 1 and drops
// their columns.
func sealClearTokens(ctx context.Context, tx *sql.Tx, aead cipher.AEAD) error {
	var n int
	if err := tx.QueryRowContext(ctx,
		`SELECT count(*) FROM pragma_table_info('sessions') WHERE name IN ('edit_token', 'view_token')`).Scan(&n); err != nil {
		return err
	}
	if n == 0 {
		return nil
	}
	rows, err := tx.QueryContext(ctx, `SELECT id, edit_token, view_token FROM sessions`)
	if err != nil {
		return err
	}
	type row struct{ id, edit, view string }
	var all []row
	for rows.Next() {
		var r row
		if err := rows.Scan(&r.id, &r.edit, &r.view); err != nil {
			rows.Close()
			return err
		}
		all = append(all, r)
	}
	rows.Close()
	if err := rows.Err(); err != nil {
		return err
	}
	for _, r := range all {
		sealed, err := sealTokens(aead, r.id, r.edit, r.view)
		if err != nil {
			return fmt.Errorf("session %q: %w", r.id, err)
		}
		if _, err := tx.ExecContext(ctx, `UPDATE sessions SET tokens_sealed = ? WHERE id = ?`, sealed, r.id); err != nil {
			return err
		}
	}
	_, err = tx.ExecContext(ctx, `ALTER TABLE sessions DROP COLUMN edit_token; ALTER TABLE sessions DROP COLUMN view_token;`)
	return err
}

// SchemaVersion is the schema version this build writes.
var SchemaVersion = len(migrations)

// migrate brings db up to SchemaVersion. A database from a newer build is
// refused rather than guessed at.
func migrate(ctx context.Context, db *sql.DB, aead cipher.AEAD) error {
	for {
		done, err := migrateOne(ctx, db, aead)
		if err != nil || done {
			return err
		}
	}
}

func migrateOne(ctx context.Context, db *sql.DB, aead cipher.AEAD) (done bool, err error) {
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
	m := migrations[v]
	if _, err := tx.ExecContext(ctx, m.sql); err != nil {
		return false, fmt.Errorf("sessions: schema migration %d: %w", v+1, err)
	}
	if m.post != nil {
		if err := m.post(ctx, tx, aead); err != nil {
			return false, fmt.Errorf("sessions: schema migration %d: %w", v+1, err)
		}
	}
	// PRAGMA takes no parameters; v+1 is a small integer of ours.
	if _, err := tx.ExecContext(ctx, fmt.Sprintf(`PRAGMA user_version = %d`, v+1)); err != nil {
		return false, err
	}
	return false, tx.Commit()
}
