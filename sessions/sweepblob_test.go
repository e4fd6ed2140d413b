package sessions

import (
	"bytes"
	"context"
	"slices"
	"testing"
	"time"
)

// A sweep's bytes are stored in pieces of at most chunkBytes and read back
// whole; removing it for good removes its pieces too.
func TestSweepStoredInPieces(t *testing.T) {
	t.Parallel()
	ctx := context.Background()
	st := openStore(t, Options{Limits: Limits{HistorySteps: 1}})
	s := create(t, st, "pieces")
	sw := testSweep(9001, 1, 1e9, 2e9)                                 // 9001·24 + 17 B ≈ 216 kB parsed: 4 pieces
	raw := bytes.Repeat([]byte("0123456789abcdef"), 3*chunkBytes/16+5) // 3 pieces and 80 bytes
	ev := apply(t, st, s.ID, Change{Op: OpSweepAdd, Name: "big", FileName: "big.s1p", Raw: raw, Sweep: sw})

	pieces := func(part int) (n, biggest int) {
		t.Helper()
		if err := st.rdb.QueryRow(`SELECT count(*), coalesce(max(length(data)), 0) FROM sweep_chunks WHERE session_id = ? AND sweep_id = ? AND part = ?`,
			s.ID, ev.SweepID, part).Scan(&n, &biggest); err != nil {
			t.Fatal(err)
		}
		return n, biggest
	}
	if n, big := pieces(partParsed); n != 4 || big != chunkBytes {
		t.Errorf("parsed numbers in %d pieces, the largest %d bytes; want 4 of at most %d", n, big, chunkBytes)
	}
	if n, big := pieces(partRaw); n != 4 || big != chunkBytes {
		t.Errorf("file in %d pieces, the largest %d bytes; want 4 of at most %d", n, big, chunkBytes)
	}
	got, name, err := st.Raw(ctx, s.ID, ev.SweepID)
	if err != nil || name != "big.s1p" || !bytes.Equal(got, raw) {
		t.Fatalf("Raw: %d bytes %q %v; want the %d bytes uploaded", len(got), name, err, len(raw))
	}
	// Read the numbers from disk, not from the cache.
	st.sweeps.drop(sweepKey{s.ID, ev.SweepID})
	back, err := st.Sweep(s.ID, ev.SweepID)
	if err != nil || !slices.Equal(back.Data, sw.Data) || !slices.Equal(back.FreqHz, sw.FreqHz) {
		t.Fatalf("the sweep read back from its pieces differs (%v)", err)
	}

	apply(t, st, s.ID, Change{Op: OpSweepRemove, SweepID: ev.SweepID})
	apply(t, st, s.ID, Change{Op: OpSessionRename, Name: "later"}) // the history of one step no longer reaches the sweep
	if n, _ := pieces(partParsed); n != 0 {
		t.Errorf("%d pieces left after the sweep was purged", n)
	}
	if n, _ := pieces(partRaw); n != 0 {
		t.Errorf("%d file pieces left after the sweep was purged", n)
	}
}

// Sweeps stored whole by an older build (chunked = 0) are read as before.
func TestSweepStoredWhole(t *testing.T) {
	t.Parallel()
	ctx := context.Background()
	st := openStore(t, Options{})
	s := create(t, st, "old")
	sw := testSweep(101, 2, 1e9, 2e9)
	raw := []byte("! an old row\n")
	if _, err := st.writeExec(ctx, `INSERT INTO sweeps (session_id, id, file_name, created_at, parsed, raw) VALUES (?, 'old1', 'old.s2p', ?, ?, ?)`,
		s.ID, time.Now().UnixMilli(), encodeSweep(sw), raw); err != nil {
		t.Fatal(err)
	}
	got, err := st.Sweep(s.ID, "old1")
	if err != nil || !slices.Equal(got.Data, sw.Data) {
		t.Fatalf("old row's numbers: %v", err)
	}
	b, name, err := st.Raw(ctx, s.ID, "old1")
	if err != nil || name != "old.s2p" || !bytes.Equal(b, raw) {
		t.Fatalf("old row's file: %q %q %v", b, name, err)
	}
}
