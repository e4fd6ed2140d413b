package cli

import (
	"bytes"
	"io/fs"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"
)

// TestDemoReproducesTestdata runs `demo DIR` and compares what it writes
// with the committed testdata/demo, file by file and byte for byte: the
// same files, no more and no fewer, each with the same content, and the
// command names each file it wrote.
func TestDemoReproducesTestdata(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	code, out, errOut := runCLI(t, "demo", dir)
	if code != 0 {
		t.Fatalf("demo exited %d: %s", code, errOut)
	}
	want := filepath.Join("testdata", "demo")
	wantFiles, err := listFiles(want)
	if err != nil {
		t.Fatal(err)
	}
	gotFiles, err := listFiles(dir)
	if err != nil {
		t.Fatal(err)
	}
	if len(wantFiles) == 0 {
		t.Fatal("testdata/demo holds no files")
	}
	if !slices.Equal(gotFiles, wantFiles) {
		t.Fatalf("demo wrote %q, testdata/demo holds %q", gotFiles, wantFiles)
	}
	for _, name := range wantFiles {
		w, err := os.ReadFile(filepath.Join(want, name))
		if err != nil {
			t.Fatal(err)
		}
		g, err := os.ReadFile(filepath.Join(dir, name))
		if err != nil {
			t.Fatal(err)
		}
		if !bytes.Equal(g, w) {
			i := 0
			for i < len(g) && i < len(w) && g[i] == w[i] {
				i++
			}
			t.Errorf("%s differs from testdata/demo at byte %d of %d (remake with: go run . demo testdata/demo)", name, i, len(w))
		}
		if p := filepath.Join(dir, filepath.FromSlash(name)); !strings.Contains(out, "wrote "+p+"\n") {
			t.Errorf("the output does not name %s", p)
		}
	}
}

// listFiles returns the regular files under root, as slash paths relative
// to it, sorted.
func listFiles(root string) ([]string, error) {
	var out []string
	err := filepath.WalkDir(root, func(p string, d fs.DirEntry, err error) error {
		if err != nil || d.IsDir() {
			return err
		}
		r, err := filepath.Rel(root, p)
		if err != nil {
			return err
		}
		out = append(out, filepath.ToSlash(r))
		return nil
	})
	slices.Sort(out)
	return out, err
}
