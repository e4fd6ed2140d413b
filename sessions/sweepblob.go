package sessions

import (
	"context"
	"database/sql"
	"errors"
	"fmt"
	"time"
)

// chunkBytes is the largest piece of a sweep's stored bytes that one
// statement writes or reads. SQLite works on a copy of every value bound
// to or read from a statement, and the pure-Go driver's allocator keeps
// the largest regions it has handed out for reuse: stored whole, one 20 MB
// upload would leave the server holding tens of megabytes for good.
const chunkBytes = 64 << 10

// Parts of a sweep's stored bytes (column part of sweep_chunks).
const (
	partParsed = 0
	partRaw    = 1
)

// insertSweep stores a new sweep's row and its bytes in pieces, in tx.
func insertSweep(ctx context.Context, tx *sql.Tx, sid string, s *newSweep) error {
	if _, err := tx.ExecContext(ctx,
		`INSERT INTO sweeps (session_id, id, file_name, created_at, parsed, raw, chunked) VALUES (?, ?, ?, ?, X'', X'', 1)`,
		sid, s.id, s.fileName, time.Now().UnixMilli()); err != nil {
		return err
	}
	ins, err := tx.PrepareContext(ctx, `INSERT INTO sweep_chunks (session_id, sweep_id, part, seq, data) VALUES (?, ?, ?, ?, ?)`)
	if err != nil {
		return err
	}
	defer ins.Close()
	for part, b := range [...][]byte{partParsed: s.parsed, partRaw: s.raw} {
		for seq := 0; seq == 0 || len(b) > 0; seq++ {
			n := min(len(b), chunkBytes)
			if _, err := ins.ExecContext(ctx, sid, s.id, part, seq, b[:n:n]); err != nil {
				return err
			}
			b = b[n:]
		}
	}
	return nil
}

// storedPart is one part of a stored sweep's bytes as read.
type storedPart struct {
	bytes    []byte
	fileName string
	removed  bool // the sweep is no longer listed in its session (kept for undo)
}

// readSweepPart reads one part of a stored sweep's bytes, with the sweep's
// file name and removed flag, from one read snapshot.
func (st *Store) readSweepPart(ctx context.Context, sid, id string, part int) (storedPart, error) {
	var sp storedPart
	tx, err := st.rdb.BeginTx(ctx, &sql.TxOptions{ReadOnly: true})
	if err != nil {
		return sp, err
	}
	defer tx.Rollback()
	col := "parsed"
	if part == partRaw {
		col = "raw"
	}
	var chunked bool
	err = tx.QueryRowContext(ctx, `SELECT chunked, removed, file_name, `+col+` FROM sweeps WHERE session_id = ? AND id = ?`, sid, id).
		Scan(&chunked, &sp.removed, &sp.fileName, &sp.bytes)
	if errors.Is(err, sql.ErrNoRows) {
		return sp, fmt.Errorf("%w: no sweep %q in session %q", ErrNotFound, id, sid)
	}
	if err != nil || !chunked {
		return sp, err
	}
	var size int64
	if err := tx.QueryRowContext(ctx,
		`SELECT coalesce(sum(length(data)), 0) FROM sweep_chunks WHERE session_id = ? AND sweep_id = ? AND part = ?`,
		sid, id, part).Scan(&size); err != nil {
		return sp, err
	}
	rows, err := tx.QueryContext(ctx,
		`SELECT data FROM sweep_chunks WHERE session_id = ? AND sweep_id = ? AND part = ? ORDER BY seq`, sid, id, part)
	if err != nil {
		return sp, err
	}
	defer rows.Close()
	sp.bytes = make([]byte, 0, size)
	for rows.Next() {
		var b sql.RawBytes
		if err := rows.Scan(&b); err != nil {
			return sp, err
		}
		sp.bytes = append(sp.bytes, b...)
	}
	if err := rows.Err(); err != nil {
		return sp, err
	}
	if int64(len(sp.bytes)) != size {
		return sp, fmt.Errorf("%w: sweep %q of session %q: %d stored bytes, expected %d", ErrCorrupt, id, sid, len(sp.bytes), size)
	}
	return sp, nil
}
