package sessions

import (
	"bytes"
	"context"
	"database/sql"
	"encoding/base64"
	"errors"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

func TestTokensReadBack(t *testing.T) {
	t.Parallel()
	st := openStore(t, Options{})
	s := create(t, st, "tokens")
	edit, view, err := st.Tokens(context.Background(), s.ID)
	if err != nil || edit != s.EditToken || view != s.ViewToken {
		t.Fatalf("Tokens = %q, %q, %v; want %q, %q", edit, view, err, s.EditToken, s.ViewToken)
	}
	re, err := st.ReissueTokens(context.Background(), s.ID)
	if err != nil {
		t.Fatal(err)
	}
	edit, view, _ = st.Tokens(context.Background(), s.ID)
	if edit != re.EditToken || view != re.ViewToken || edit == s.EditToken {
		t.Errorf("after re-issue Tokens = %q, %q; want %q, %q", edit, view, re.EditToken, re.ViewToken)
	}
	if _, _, err := st.Tokens(context.Background(), "nosuchid"); !errors.Is(err, ErrNotFound) {
		t.Errorf("unknown id: %v, want ErrNotFound", err)
	}
}

// TestTokensNotInClear: neither the database file nor its WAL holds a token
// in clear, and the key file is private.
func TestTokensNotInClear(t *testing.T) {
	t.Parallel()
	st := openStore(t, Options{})
	s := create(t, st, "secret")
	re, err := st.ReissueTokens(context.Background(), create(t, st, "other").ID)
	if err != nil {
		t.Fatal(err)
	}
	for _, f := range []string{DBFile, DBFile + "-wal"} {
		b, err := os.ReadFile(filepath.Join(st.Dir(), f))
		if err != nil {
			t.Fatal(err)
		}
		for _, tok := range []string{s.EditToken, s.ViewToken, re.EditToken, re.ViewToken} {
			if bytes.Contains(b, []byte(tok)) {
				t.Fatalf("%s holds a token in clear", f)
			}
			raw, _ := base64.RawURLEncoding.DecodeString(tok)
			if bytes.Contains(b, raw) {
				t.Fatalf("%s holds a token's bytes", f)
			}
		}
	}
	fi, err := os.Stat(filepath.Join(st.Dir(), KeyFile))
	if err != nil || fi.Mode().Perm() != 0o600 || fi.Size() != 32 {
		t.Fatalf("key file: %v, mode %v, %d bytes; want 0600 and 32 bytes", err, fi.Mode().Perm(), fi.Size())
	}
}

// TestTokensKeyReplaced: with another key the sealed copies do not open (and
// the links still work, by hash); re-issuing mends a session.
func TestTokensKeyReplaced(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	st, err := Open(dir)
	if err != nil {
		t.Fatal(err)
	}
	s := create(t, st, "k")
	st.Close()
	if err := os.Remove(filepath.Join(dir, KeyFile)); err != nil {
		t.Fatal(err)
	}
	st, err = Open(dir)
	if err != nil {
		t.Fatal(err)
	}
	defer st.Close()
	ctx := context.Background()
	if _, _, err := st.Tokens(ctx, s.ID); !errors.Is(err, ErrCorrupt) {
		t.Fatalf("Tokens under a new key = %v, want ErrCorrupt", err)
	}
	if id, c, err := st.ByToken(ctx, s.EditToken); err != nil || id != s.ID || c != Edit {
		t.Fatalf("link after a key change: %q %v %v", id, c, err)
	}
	re, err := st.ReissueTokens(ctx, s.ID)
	if err != nil {
		t.Fatal(err)
	}
	if e, v, err := st.Tokens(ctx, s.ID); err != nil || e != re.EditToken || v != re.ViewToken {
		t.Fatalf("Tokens after re-issue = %q %q %v", e, v, err)
	}
	// A key file of the wrong size is refused at Open, naming the file.
	st.Close()
	os.WriteFile(filepath.Join(dir, KeyFile), []byte("short"), 0o600)
	if _, err := Open(dir); !errors.Is(err, ErrCorrupt) || !strings.Contains(err.Error(), KeyFile) {
		t.Fatalf("Open with a bad key file = %v", err)
	}
}

// TestMigrateClearTokens opens a database left at schema version 1, whose
// sessions kept their tokens in clear, and checks that migration 2 seals
// them, drops the clear columns, and keeps the links working.
func TestMigrateClearTokens(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	db, err := sql.Open("sqlite", dsn(filepath.Join(dir, DBFile), "FULL", true))
	if err != nil {
		t.Fatal(err)
	}
	edit, view, _ := newTokenPair()
	if _, err := db.Exec(migrations[0].sql + `PRAGMA user_version = 1;`); err != nil {
		t.Fatal(err)
	}
	if _, err := db.Exec(`INSERT INTO sessions (id, name, created_at, version, state, edit_hash, view_hash, edit_token, view_token)
		VALUES ('old1', 'old', 0, 3, '{"name":"old"}', ?, ?, ?, ?)`, tokenHash(edit), tokenHash(view), edit, view); err != nil {
		t.Fatal(err)
	}
	db.Close()

	st, err := Open(dir)
	if err != nil {
		t.Fatal(err)
	}
	defer st.Close()
	ctx := context.Background()
	if e, v, err := st.Tokens(ctx, "old1"); err != nil || e != edit || v != view {
		t.Fatalf("Tokens after migration = %q %q %v", e, v, err)
	}
	if id, c, err := st.ByToken(ctx, view); err != nil || id != "old1" || c != View {
		t.Fatalf("ByToken after migration: %q %v %v", id, c, err)
	}
	var n, uv int
	st.rdb.QueryRow(`SELECT count(*) FROM pragma_table_info('sessions') WHERE name IN ('edit_token', 'view_token')`).Scan(&n)
	st.rdb.QueryRow(`PRAGMA user_version`).Scan(&uv)
	if n != 0 || uv != len(migrations) {
		t.Fatalf("after migration: %d clear-token columns, user_version %d", n, uv)
	}
	if s, v := state(t, st, "old1"); s.Name != "old" || v != 3 {
		t.Fatalf("migrated session: %+v at version %d", s, v)
	}
}
