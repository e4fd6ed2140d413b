package sessions

import (
	"bytes"
	"context"
	"crypto/sha256"
	"encoding/base64"
	"errors"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
)

func TestOpenLock(t *testing.T) {
	t.Parallel()
	dir := filepath.Join(t.TempDir(), "nested", "data")
	st, err := Open(dir)
	if err != nil {
		t.Fatal(err)
	}
	if _, err := os.Stat(filepath.Join(dir, DBFile)); err != nil {
		t.Fatalf("database file not created: %v", err)
	}
	_, err = Open(dir)
	if !errors.Is(err, ErrLocked) {
		t.Fatalf("second Open on the same folder: %v, want ErrLocked", err)
	}
	// The message names the folder and the process holding it.
	if msg := err.Error(); !strings.Contains(msg, dir) || !strings.Contains(msg, strconv.Itoa(os.Getpid())) {
		t.Errorf("lock error %q does not name the folder and the process", msg)
	}
	if err := st.Close(); err != nil {
		t.Fatal(err)
	}
	if err := st.Close(); !errors.Is(err, ErrClosed) {
		t.Errorf("second Close: %v", err)
	}
	// Released by Close: a new store opens.
	st2, err := Open(dir)
	if err != nil {
		t.Fatalf("Open after Close: %v", err)
	}
	st2.Close()
}

// TestOpenOddPath: a data folder whose name holds URI specials still puts
// the database file exactly there.
func TestOpenOddPath(t *testing.T) {
	t.Parallel()
	dir := filepath.Join(t.TempDir(), "bench data #1 %41?x=y&z")
	st, err := Open(dir)
	if err != nil {
		t.Fatal(err)
	}
	sid := create(t, st, "odd").ID
	st.Close()
	if _, err := os.Stat(filepath.Join(dir, DBFile)); err != nil {
		t.Fatalf("database not at %s: %v", dir, err)
	}
	st, err = Open(dir)
	if err != nil {
		t.Fatal(err)
	}
	defer st.Close()
	if _, err := st.Get(context.Background(), sid); err != nil {
		t.Fatalf("session lost on reopening: %v", err)
	}
}

func TestSchemaVersion(t *testing.T) {
	t.Parallel()
	st := openStore(t, Options{})
	var v int
	if err := st.rdb.QueryRow(`PRAGMA user_version`).Scan(&v); err != nil || v != SchemaVersion || v != len(migrations) {
		t.Fatalf("user_version = %d (%v), want %d", v, err, SchemaVersion)
	}
	var mode string
	if err := st.rdb.QueryRow(`PRAGMA journal_mode`).Scan(&mode); err != nil || mode != "wal" {
		t.Fatalf("journal_mode = %q (%v), want wal", mode, err)
	}
	var sync int
	if err := st.wdb.QueryRow(`PRAGMA synchronous`).Scan(&sync); err != nil || sync != 2 { // 2 = FULL (SQLite docs)
		t.Fatalf("synchronous = %d (%v), want 2 (FULL)", sync, err)
	}
	var fk int
	if err := st.wdb.QueryRow(`PRAGMA foreign_keys`).Scan(&fk); err != nil || fk != 1 {
		t.Fatalf("foreign_keys = %d (%v), want 1", fk, err)
	}

	// A database from a newer build is refused, not guessed at.
	dir := t.TempDir()
	st2, err := Open(dir)
	if err != nil {
		t.Fatal(err)
	}
	if _, err := st2.wdb.Exec(`PRAGMA user_version = 99`); err != nil {
		t.Fatal(err)
	}
	st2.Close()
	if _, err := Open(dir); err == nil || !strings.Contains(err.Error(), "newer") {
		t.Fatalf("Open of a newer schema: %v", err)
	}
	if _, err := OpenWith(t.TempDir(), Options{Synchronous: "OFF"}); !errors.Is(err, ErrInvalid) {
		t.Fatalf("synchronous OFF accepted: %v", err)
	}
}

func TestTokens(t *testing.T) {
	t.Parallel()
	st := openStore(t, Options{})
	ctx := context.Background()
	seen := map[string]bool{}
	var sessions []*Session
	for range 20 {
		s := create(t, st, "t")
		sessions = append(sessions, s)
		for _, tok := range []string{s.EditToken, s.ViewToken} {
			b, err := base64.RawURLEncoding.DecodeString(tok)
			if err != nil || len(b) != 16 || len(tok) != 22 {
				t.Fatalf("token %q: %d bytes, %v; want 128 bits in base64url", tok, len(b), err)
			}
			if seen[tok] {
				t.Fatalf("token %q issued twice", tok)
			}
			seen[tok] = true
		}
	}
	for _, s := range sessions {
		if id, c, err := st.ByToken(ctx, s.EditToken); err != nil || id != s.ID || c != Edit || !c.CanEdit() {
			t.Fatalf("edit token: %q %v %v", id, c, err)
		}
		if id, c, err := st.ByToken(ctx, s.ViewToken); err != nil || id != s.ID || c != View || c.CanEdit() {
			t.Fatalf("view token: %q %v %v", id, c, err)
		}
	}
	s := sessions[0]
	// The database holds the tokens' SHA-256 (FIPS 180-4, computed here by
	// crypto/sha256) and no token in clear.
	var eh, vh []byte
	var n int
	if err := st.rdb.QueryRow(`SELECT edit_hash, view_hash FROM sessions WHERE id = ?`, s.ID).Scan(&eh, &vh); err != nil {
		t.Fatal(err)
	}
	if e, v := sha256.Sum256([]byte(s.EditToken)), sha256.Sum256([]byte(s.ViewToken)); !bytes.Equal(eh, e[:]) || !bytes.Equal(vh, v[:]) {
		t.Fatalf("stored hashes %x %x are not the tokens' SHA-256", eh, vh)
	}
	for _, tok := range []string{s.EditToken, s.ViewToken} {
		if err := st.rdb.QueryRow(`SELECT count(*) FROM sessions WHERE instr(id || name || state, ?1) > 0 OR edit_hash = CAST(?1 AS BLOB) OR view_hash = CAST(?1 AS BLOB)`,
			tok).Scan(&n); err != nil || n != 0 {
			t.Fatalf("token found in the database (%d rows, %v)", n, err)
		}
	}
	for _, bad := range []string{"", "short", s.EditToken[:21] + "!", strings.Repeat("A", 22), s.EditToken + "A"} {
		if _, _, err := st.ByToken(ctx, bad); !errors.Is(err, ErrNotFound) {
			t.Errorf("ByToken(%q) = %v, want ErrNotFound", bad, err)
		}
	}

	// View never changes anything.
	_, err := st.ApplyAs(ctx, View, s.ID, Change{Op: OpSessionRename, Name: "hijacked"})
	if !errors.Is(err, ErrForbidden) {
		t.Fatalf("ApplyAs(View) = %v, want ErrForbidden", err)
	}
	if ev, err := st.ApplyAs(ctx, Edit, s.ID, Change{Op: OpSessionRename, Name: "edited"}); err != nil || ev.Version != 1 {
		t.Fatalf("ApplyAs(Edit) = %+v, %v", ev, err)
	}
	if g, _ := st.Get(ctx, s.ID); g.Name != "edited" {
		t.Fatalf("name %q", g.Name)
	}

	// Re-issued tokens replace the old ones at once.
	ns, err := st.ReissueTokens(ctx, s.ID)
	if err != nil {
		t.Fatal(err)
	}
	if ns.EditToken == s.EditToken || ns.ViewToken == s.ViewToken || ns.ID != s.ID || ns.Version != 1 {
		t.Fatalf("ReissueTokens = %+v", ns)
	}
	for _, old := range []string{s.EditToken, s.ViewToken} {
		if _, _, err := st.ByToken(ctx, old); !errors.Is(err, ErrNotFound) {
			t.Errorf("old token still works: %v", err)
		}
	}
	if id, c, err := st.ByToken(ctx, ns.ViewToken); err != nil || id != s.ID || c != View {
		t.Fatalf("new view token: %q %v %v", id, c, err)
	}
	if _, err := st.ReissueTokens(ctx, "nosuch"); !errors.Is(err, ErrNotFound) {
		t.Fatalf("ReissueTokens(unknown) = %v", err)
	}
}

func TestAccessContext(t *testing.T) {
	t.Parallel()
	if _, ok := FromContext(context.Background()); ok {
		t.Fatal("empty context has an Access")
	}
	ctx := NewContext(context.Background(), Access{SessionID: "x", Cap: View})
	if a, ok := FromContext(ctx); !ok || a.SessionID != "x" || a.Cap != View {
		t.Fatalf("FromContext = %+v, %v", a, ok)
	}
	if View.String() != "view" || Edit.String() != "edit" || Capability(9).String() != "Capability(9)" {
		t.Fatal("Capability.String")
	}
}

// TestCancelledApply: a change whose context is already cancelled is not
// committed, and the session goes on from what the database holds.
func TestCancelledApply(t *testing.T) {
	t.Parallel()
	st := openStore(t, Options{})
	sid := create(t, st, "c").ID
	apply(t, st, sid, Change{Op: OpSessionRename, Name: "one"})
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	if _, err := st.Apply(ctx, sid, Change{Op: OpSessionRename, Name: "two"}); !errors.Is(err, context.Canceled) {
		t.Fatalf("Apply with a cancelled context = %v", err)
	}
	s, v := state(t, st, sid)
	if s.Name != "one" || v != 1 {
		t.Fatalf("after the cancelled change: %q at version %d, want \"one\" at 1", s.Name, v)
	}
	if ev := apply(t, st, sid, Change{Op: OpUndo}); ev.Version != 2 || ev.State.Name != "c" {
		t.Fatalf("undo after the cancelled change: %+v", ev)
	}
}
