package sessions

import (
	"context"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"unicode"
)

// Names, labels and file names refuse bidirectional control characters
// (Unicode's Bidi_Control property, which Go's unicode tables carry), each
// with an error naming the field and the character: "report\u202Efdp.exe"
// would show as "reportexe.pdf".
func TestNamesRefuseBidiControls(t *testing.T) {
	t.Parallel()
	ctx := context.Background()
	st := openStore(t, Options{})
	s := create(t, st, "bidi")
	sweep := addSweep(t, st, s.ID, testSweep(11, 1, 1e9, 2e9), "a")
	mk := apply(t, st, s.ID, Change{Op: OpMarkerAdd, SweepID: sweep, FreqHz: 1.5e9}).MarkerID
	for _, r := range []rune{0x202E, 0x202A, 0x2066, 0x2069, 0x200F, 0x061C} {
		if !unicode.Is(unicode.Bidi_Control, r) {
			t.Fatalf("%U is not Bidi_Control in Go's tables", r)
		}
		evil := "report" + string(r) + "fdp.exe"
		cases := []struct {
			ch    Change
			field string
		}{
			{Change{Op: OpSessionRename, Name: evil}, "name"},
			{Change{Op: OpSweepRename, SweepID: sweep, Name: evil}, "name"},
			{Change{Op: OpMarkerLabel, MarkerID: mk, Label: evil}, "label"},
			{Change{Op: OpBandSet, Name: evil, LoHz: 1.1e9, HiHz: 1.2e9}, "name"},
			{Change{Op: OpNetworkAdd, Name: evil, SweepID: sweep}, "name"},
			{Change{Op: OpSweepAdd, FileName: evil + ".s1p", Raw: []byte("x"), Sweep: testSweep(11, 1, 1e9, 2e9)}, "fileName"},
		}
		for _, tc := range cases {
			_, err := st.Apply(ctx, s.ID, tc.ch)
			wantErr(t, err, ErrInvalid, tc.field)
			if !strings.Contains(err.Error(), "bidirectional") || !strings.Contains(err.Error(), fmt.Sprintf("%U", r)) {
				t.Errorf("%s with %U: %v", tc.ch.Op, r, err)
			}
		}
		if _, err := st.Create(ctx, evil); err == nil {
			t.Errorf("a session named with %U was created", r)
		}
	}
	// Other format characters stay allowed: a zero-width joiner (U+200D)
	// inside a name is not a bidirectional control.
	apply(t, st, s.ID, Change{Op: OpSessionRename, Name: "antenna \u200d test"})
	if got, _ := state(t, st, s.ID); got.Name != "antenna \u200d test" {
		t.Errorf("name %q", got.Name)
	}
}

// The database and its -wal and -shm files are readable by their owner only,
// also when an older build left the database 0644.
func TestDatabaseFilesPrivate(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	check := func(when string) {
		t.Helper()
		for _, name := range []string{DBFile, DBFile + "-wal", DBFile + "-shm", KeyFile} {
			fi, err := os.Stat(filepath.Join(dir, name))
			if err != nil {
				t.Fatalf("%s: %v", when, err)
			}
			if fi.Mode().Perm()&0o077 != 0 {
				t.Errorf("%s: %s has mode %v; want no access for group and others", when, name, fi.Mode().Perm())
			}
		}
	}
	st, err := Open(dir)
	if err != nil {
		t.Fatal(err)
	}
	create(t, st, "private") // a write: the WAL exists
	check("a new folder")
	st.Close()
	if err := os.Chmod(filepath.Join(dir, DBFile), 0o644); err != nil {
		t.Fatal(err)
	}
	st, err = Open(dir)
	if err != nil {
		t.Fatal(err)
	}
	defer st.Close()
	create(t, st, "again")
	check("a database left 0644")
}

// A change that does not fit on the disk is refused with ErrDiskFull, which
// names the cause, and leaves the session as it was; once there is room
// again the same change is taken. The full disk is SQLite's own: a
// max_page_count at the database's current size makes the next write that
// needs a page fail with SQLITE_FULL, as a full file system does.
func TestDiskFull(t *testing.T) {
	t.Parallel()
	ctx := context.Background()
	st := openStore(t, Options{})
	s := create(t, st, "full")
	var pages int
	if err := st.wdb.QueryRow(`PRAGMA page_count`).Scan(&pages); err != nil {
		t.Fatal(err)
	}
	if _, err := st.wdb.Exec(fmt.Sprintf(`PRAGMA max_page_count = %d`, pages)); err != nil {
		t.Fatal(err)
	}
	sw := testSweep(20001, 1, 1e9, 2e9) // 480 kB of numbers: many new pages
	ch := Change{Op: OpSweepAdd, Name: "big", FileName: "big.s1p", Raw: []byte("x"), Sweep: sw}
	_, err := st.Apply(ctx, s.ID, ch)
	if !errors.Is(err, ErrDiskFull) || !strings.Contains(err.Error(), "full") {
		t.Fatalf("error %v; want ErrDiskFull", err)
	}
	if got, v := state(t, st, s.ID); len(got.Sweeps) != 0 || v != 0 {
		t.Errorf("after the refusal: %d sweeps, version %d", len(got.Sweeps), v)
	}
	if _, err := st.wdb.Exec(`PRAGMA max_page_count = 1073741823`); err != nil {
		t.Fatal(err)
	}
	if _, err := st.Apply(ctx, s.ID, ch); err != nil {
		t.Errorf("with room again: %v", err)
	}
}
