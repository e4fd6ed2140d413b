package sessions

import (
	"context"
	"database/sql"
)

// The statements of the change path, prepared once on the write
// connection when the store opens: a drag commits several statements per
// step, and preparing them each time was a measurable share of a drag's
// server time (issue 21). They are prepared before any transaction, as the
// write pool's one connection is then free (a statement prepared on the
// pool while a transaction holds that connection would wait for ever).
const (
	qSyncNormal    = "PRAGMA synchronous=NORMAL"
	qSyncFull      = "PRAGMA synchronous=FULL"
	qHistoryAfter  = `UPDATE history SET after = ?, version = ? WHERE session_id = ? AND step = ?`
	qHistoryInsert = `INSERT INTO history (session_id, step, op, gesture, sweep_id, marker_id, band_id, version, before, after, sweep_ids)
				 VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)`
	qSessionCommit = `UPDATE sessions SET name = ?, state = ?, version = ?, undo_pos = ? WHERE id = ?`
)

var preparedQueries = []string{qSyncNormal, qSyncFull, qHistoryAfter, qHistoryInsert, qSessionCommit}

// prepareStmts prepares preparedQueries on the write connection. A
// statement that cannot be prepared is left out and runs unprepared (which
// then reports its error where it is used).
func (st *Store) prepareStmts(ctx context.Context) {
	st.stmts = make(map[string]*sql.Stmt, len(preparedQueries))
	for _, q := range preparedQueries {
		if s, err := st.wdb.PrepareContext(ctx, q); err == nil {
			st.stmts[q] = s
		}
	}
}

func (st *Store) closeStmts() {
	for _, s := range st.stmts {
		s.Close()
	}
	st.stmts = nil
}

// execTx runs q in tx, through its prepared form when it has one.
func (st *Store) execTx(ctx context.Context, tx *sql.Tx, q string, args ...any) (sql.Result, error) {
	if s := st.stmts[q]; s != nil {
		return tx.StmtContext(ctx, s).ExecContext(ctx, args...)
	}
	return tx.ExecContext(ctx, q, args...)
}

// execW runs q on the write connection outside any transaction, through
// its prepared form when it has one. The caller holds writeMu.
func (st *Store) execW(ctx context.Context, q string, args ...any) (sql.Result, error) {
	if s := st.stmts[q]; s != nil {
		return s.ExecContext(ctx, args...)
	}
	return st.wdb.ExecContext(ctx, q, args...)
}
