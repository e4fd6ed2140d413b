package sessions

import (
	"context"
	"crypto/cipher"
	"database/sql"
	"encoding/json"
	"errors"
	"fmt"
	"io/fs"
	"net/url"
	"os"
	"path/filepath"
	"sync"
	"syscall"
	"time"

	"modernc.org/sqlite" // registers the "sqlite" driver
	sqlite3 "modernc.org/sqlite/lib"

	"matchbench/rfmath"
)

// File names inside the data folder.
const (
	DBFile   = "matchbench.db"
	LockFile = "matchbench.lock"
)

// Options tune a store. The zero value gives the defaults.
type Options struct {
	Limits Limits
	// Synchronous is SQLite's synchronous setting: "FULL" (the default)
	// makes every acknowledged change survive a power cut; "NORMAL" survives
	// a crash of the program but may lose the last changes on power loss.
	// Measured with BenchmarkApplyMarkerMove on a 2-core dev machine, a drag
	// step took about 0.45 ms with FULL (one fsync per commit) and 0.075 ms
	// with NORMAL.
	//
	// With FULL, the steps of a drag (coalescible ops with a gesture) are
	// still committed with NORMAL: each is in the WAL before it is
	// acknowledged, so a crash of the program loses none, but a power cut
	// may lose the positions of a drag since the last FULL commit (any
	// other change) or checkpoint. Every other change is FULL. This keeps a
	// drag within a small part of a 60 Hz frame.
	Synchronous string
	// SweepCacheBytes bounds the memory of decoded sweeps the store keeps
	// for reuse (see [Store.Sweep]); zero means DefaultSweepCacheBytes.
	SweepCacheBytes int64
}

// Store holds every session in one SQLite database in a data folder. Its
// methods are safe for concurrent use. Changes to one session are applied
// one at a time; changes to different sessions proceed independently
// (their commits share SQLite's single writer, each taking one short
// transaction).
type Store struct {
	dir  string
	lim  Limits
	lock *os.File
	aead cipher.AEAD // seals the stored copy of the tokens
	wdb  *sql.DB     // one connection: every write
	rdb  *sql.DB     // reads

	writeMu  sync.Mutex // one write transaction (and its synchronous mode) at a time
	fullSync bool       // Options.Synchronous is FULL

	mu     sync.Mutex // guards closed and hubs
	closed bool
	hubs   map[string]*hub

	sweeps *sweepCache
	stmts  map[string]*sql.Stmt // the change path's prepared statements (stmts.go); fixed after open
}

// Open opens the store in dataDir with default options; see [OpenWith].
func Open(dataDir string) (*Store, error) { return OpenWith(dataDir, Options{}) }

// OpenWith opens the store in dataDir, creating the folder (mode 0700) and
// the database file DBFile as needed and bringing its schema up to date.
//
// The data folder is locked for the life of the store: a second store on
// the same folder, from this or another process, is refused with an error
// wrapping ErrLocked that names the folder and the process holding it. The
// lock is an advisory flock(2) on LockFile (on Unix; see lock_other.go for
// other systems), released by Close or when the process ends, even by a
// crash, so a stale lock file never blocks a restart.
func OpenWith(dataDir string, opt Options) (*Store, error) {
	syncMode := "FULL"
	switch opt.Synchronous {
	case "", "FULL", "full":
	case "NORMAL", "normal":
		syncMode = "NORMAL"
	default:
		return nil, fmt.Errorf("%w: synchronous %q: use FULL or NORMAL", ErrInvalid, opt.Synchronous)
	}
	dir, err := filepath.Abs(dataDir)
	if err != nil {
		return nil, fmt.Errorf("sessions: data folder %q: %w", dataDir, err)
	}
	if err := os.MkdirAll(dir, 0o700); err != nil {
		return nil, fmt.Errorf("sessions: creating data folder: %w", err)
	}
	lock, err := lockDir(dir)
	if err != nil {
		return nil, err
	}
	st := &Store{
		dir:    dir,
		lim:    opt.Limits.withDefaults(),
		lock:   lock,
		hubs:   make(map[string]*hub),
		sweeps: newSweepCache(opt.SweepCacheBytes),
	}
	fail := func(err error) (*Store, error) {
		st.closeDB()
		unlockDir(lock)
		return nil, err
	}
	if st.aead, err = loadKey(dir); err != nil {
		return fail(err)
	}
	path := filepath.Join(dir, DBFile)
	if err := ownerOnly(path); err != nil {
		return fail(err)
	}
	st.fullSync = syncMode == "FULL"
	if st.wdb, err = sql.Open("sqlite", dsn(path, syncMode, true)); err != nil {
		return fail(fmt.Errorf("sessions: opening %s: %w", path, err))
	}
	st.wdb.SetMaxOpenConns(1)
	st.wdb.SetConnMaxIdleTime(0)
	if err := migrate(context.Background(), st.wdb, st.aead); err != nil {
		return fail(fmt.Errorf("sessions: opening %s: %w", path, err))
	}
	st.prepareStmts(context.Background())
	if st.rdb, err = sql.Open("sqlite", dsn(path, syncMode, false)); err != nil {
		return fail(fmt.Errorf("sessions: opening %s: %w", path, err))
	}
	st.rdb.SetMaxOpenConns(4)
	if err := st.rdb.Ping(); err != nil {
		return fail(fmt.Errorf("sessions: opening %s: %w", path, err))
	}
	return st, nil
}

// ownerOnly makes the database file readable and writable by its owner
// only (mode 0600), creating it empty when it does not exist, and brings
// its -wal and -shm files, when present, to the same mode. SQLite creates
// those two with the mode of the database file, and would create the
// database itself 0644.
func ownerOnly(path string) error {
	f, err := os.OpenFile(path, os.O_RDWR|os.O_CREATE, 0o600)
	if err != nil {
		return fmt.Errorf("sessions: creating %s: %w", path, err)
	}
	f.Close()
	for _, p := range []string{path, path + "-wal", path + "-shm"} {
		if err := os.Chmod(p, 0o600); err != nil && !errors.Is(err, fs.ErrNotExist) {
			return fmt.Errorf("sessions: making %s private: %w", p, err)
		}
	}
	return nil
}

// dsn returns the modernc.org/sqlite data source name for path. The write
// connection begins its transactions IMMEDIATE so that a transaction never
// has to upgrade a read lock; the read connections are query-only.
func dsn(path, sync string, write bool) string {
	q := url.Values{}
	q.Add("_pragma", "journal_mode(WAL)")
	q.Add("_pragma", "busy_timeout(5000)")
	q.Add("_pragma", "foreign_keys(1)")
	q.Add("_pragma", "synchronous("+sync+")")
	// A page cache of 256 KiB a connection instead of SQLite's 2 MB: the
	// database is read a row at a time and the operating system caches the
	// file; SQLite's own cache is memory its allocator keeps for good.
	q.Add("_pragma", "cache_size(-256)")
	if write {
		q.Set("_txlock", "immediate")
	} else {
		q.Add("_pragma", "query_only(1)")
	}
	return "file:" + (&url.URL{Path: path}).EscapedPath() + "?" + q.Encode()
}

// Dir returns the absolute path of the data folder.
func (st *Store) Dir() string { return st.dir }

// Close waits for changes in progress to commit, ends every subscription
// (its channel closes and Reason returns ErrClosed), closes the database
// and releases the data folder. Later calls return ErrClosed.
func (st *Store) Close() error {
	st.mu.Lock()
	if st.closed {
		st.mu.Unlock()
		return ErrClosed
	}
	st.closed = true
	hubs := make([]*hub, 0, len(st.hubs))
	for _, h := range st.hubs {
		hubs = append(hubs, h)
	}
	st.mu.Unlock()
	for _, h := range hubs {
		h.mu.Lock()
		h.closed = true
		h.closeSubs(ErrClosed)
		h.mu.Unlock()
	}
	err := st.closeDB()
	if uerr := unlockDir(st.lock); err == nil {
		err = uerr
	}
	return err
}

func (st *Store) closeDB() error {
	var errs []error
	if st.rdb != nil {
		errs = append(errs, st.rdb.Close())
	}
	if st.wdb != nil {
		st.closeStmts()
		errs = append(errs, st.wdb.Close())
	}
	return errors.Join(errs...)
}

// dbErr wraps a database error with what was being done; a full disk
// wraps ErrDiskFull as well.
func (st *Store) dbErr(doing string, err error) error {
	if diskFull(err) {
		return fmt.Errorf("sessions: %s: %w (%w)", doing, ErrDiskFull, err)
	}
	return fmt.Errorf("sessions: %s: %w", doing, err)
}

// diskFull reports whether err is SQLite's "database or disk is full"
// (SQLITE_FULL, also as an extended code) or the system's ENOSPC.
func diskFull(err error) bool {
	var se *sqlite.Error
	if errors.As(err, &se) && se.Code()&0xff == sqlite3.SQLITE_FULL {
		return true
	}
	return errors.Is(err, syscall.ENOSPC)
}

// Create makes a new session with a fresh id and fresh tokens, and returns
// it with its tokens. An empty name becomes "Untitled session".
func (st *Store) Create(ctx context.Context, name string) (*Session, error) {
	name, err := text("create", "name", name, false, st.lim.TextRunes)
	if err != nil {
		return nil, err
	}
	if name == "" {
		name = "Untitled session"
	}
	if err := st.open(); err != nil {
		return nil, err
	}
	state := &State{Name: name, Sweeps: []SweepRef{}, Markers: []Marker{}, Bands: []Band{}, Chart: DefaultChart}
	js, err := json.Marshal(state)
	if err != nil {
		return nil, err
	}
	edit, view, err := newTokenPair()
	if err != nil {
		return nil, err
	}
	s := &Session{Name: name, CreatedAt: time.Now().UTC().Truncate(time.Millisecond), EditToken: edit, ViewToken: view}
	for range 8 { // an id collision is astronomically rare; retry a few times
		if s.ID, err = newID(6); err != nil {
			return nil, err
		}
		var sealed []byte
		if sealed, err = sealTokens(st.aead, s.ID, edit, view); err != nil {
			return nil, err
		}
		_, err = st.writeExec(ctx,
			`INSERT INTO sessions (id, name, created_at, version, state, edit_hash, view_hash, tokens_sealed) VALUES (?, ?, ?, 0, ?, ?, ?, ?)`,
			s.ID, name, s.CreatedAt.UnixMilli(), string(js), tokenHash(edit), tokenHash(view), sealed)
		if err == nil {
			return s, nil
		}
		if _, gerr := st.Get(ctx, s.ID); gerr != nil {
			break // not a collision
		}
	}
	return nil, st.dbErr("creating a session", err)
}

// open returns ErrClosed once the store is closed.
func (st *Store) open() error {
	st.mu.Lock()
	defer st.mu.Unlock()
	if st.closed {
		return ErrClosed
	}
	return nil
}

// List returns every session, newest first, without tokens.
func (st *Store) List(ctx context.Context) ([]Session, error) {
	if err := st.open(); err != nil {
		return nil, err
	}
	rows, err := st.rdb.QueryContext(ctx, `SELECT id, name, created_at, version FROM sessions ORDER BY created_at DESC, id`)
	if err != nil {
		return nil, st.dbErr("listing sessions", err)
	}
	defer rows.Close()
	var out []Session
	for rows.Next() {
		var s Session
		var ms int64
		if err := rows.Scan(&s.ID, &s.Name, &ms, &s.Version); err != nil {
			return nil, st.dbErr("listing sessions", err)
		}
		s.CreatedAt = time.UnixMilli(ms).UTC()
		out = append(out, s)
	}
	if err := rows.Err(); err != nil {
		return nil, st.dbErr("listing sessions", err)
	}
	return out, nil
}

// Get returns session id without tokens, or ErrNotFound.
func (st *Store) Get(ctx context.Context, id string) (*Session, error) {
	if err := st.open(); err != nil {
		return nil, err
	}
	s := &Session{ID: id}
	var ms int64
	err := st.rdb.QueryRowContext(ctx, `SELECT name, created_at, version FROM sessions WHERE id = ?`, id).
		Scan(&s.Name, &ms, &s.Version)
	if errors.Is(err, sql.ErrNoRows) {
		return nil, fmt.Errorf("%w: no session %q", ErrNotFound, id)
	}
	if err != nil {
		return nil, st.dbErr("reading a session", err)
	}
	s.CreatedAt = time.UnixMilli(ms).UTC()
	return s, nil
}

// State returns the current state of session id and its version. The
// state is a shared snapshot: read it, do not modify it.
func (st *Store) State(ctx context.Context, id string) (*State, int64, error) {
	h, err := st.hub(ctx, id)
	if err != nil {
		return nil, 0, err
	}
	defer h.mu.Unlock()
	return h.state, h.version, nil
}

// Delete removes session id with its sweeps and history. Its subscriptions
// end with ErrDeleted.
func (st *Store) Delete(ctx context.Context, id string) error {
	h, err := st.hub(ctx, id)
	if err != nil {
		return err
	}
	defer h.mu.Unlock()
	if _, err := st.writeExec(ctx, `DELETE FROM sessions WHERE id = ?`, id); err != nil {
		return st.dbErr("deleting a session", err)
	}
	h.gone = true
	h.closeSubs(ErrDeleted)
	st.mu.Lock()
	if st.hubs[id] == h {
		delete(st.hubs, id)
	}
	st.mu.Unlock()
	st.sweeps.dropSession(id)
	return nil
}

// Sweep returns the parsed numbers of a sweep of a session, also one that
// has been removed but can still come back by undo. It is shared: read it,
// do not modify it (Clone it to work on it). Decoded sweeps are kept in
// memory within Options.SweepCacheBytes, the least recently used leaving
// first, and decoded again from their stored bytes when asked for after
// they left; a sweep removed from its session leaves at once.
func (st *Store) Sweep(sessionID, sweepID string) (*rfmath.Sweep, error) {
	e, err := st.sweep(sessionID, sweepID)
	if err != nil {
		return nil, err
	}
	return e.sw, nil
}

func (st *Store) sweep(sessionID, sweepID string) (*sweepEntry, error) {
	k := sweepKey{sessionID, sweepID}
	if e := st.sweeps.get(k); e != nil {
		return e, nil
	}
	if err := st.open(); err != nil {
		return nil, err
	}
	sp, err := st.readSweepPart(context.Background(), sessionID, sweepID, partParsed)
	if errors.Is(err, ErrNotFound) || errors.Is(err, ErrCorrupt) {
		return nil, err
	}
	if err != nil {
		return nil, st.dbErr("reading a sweep", err)
	}
	b := sp.bytes
	sw, err := decodeSweep(b)
	if err != nil {
		return nil, fmt.Errorf("sweep %q of session %q: %w", sweepID, sessionID, err)
	}
	if sp.removed {
		// Asked for by a reader of an older state, or for an undo that has
		// not happened: served, not kept.
		return &sweepEntry{key: k, sw: sw, c: st.sweeps, gone: true}, nil
	}
	return st.sweeps.put(k, sw), nil
}

// SweepCacheStats reports what the store's cache of decoded sweeps holds.
func (st *Store) SweepCacheStats() SweepCacheStats { return st.sweeps.stats() }

// Raw returns a sweep's file as it was uploaded, and its file name.
func (st *Store) Raw(ctx context.Context, sessionID, sweepID string) (raw []byte, fileName string, err error) {
	if err := st.open(); err != nil {
		return nil, "", err
	}
	sp, err := st.readSweepPart(ctx, sessionID, sweepID, partRaw)
	if errors.Is(err, ErrNotFound) || errors.Is(err, ErrCorrupt) {
		return nil, "", err
	}
	if err != nil {
		return nil, "", st.dbErr("reading a sweep file", err)
	}
	return sp.bytes, sp.fileName, nil
}
