package main

import (
	"bufio"
	"context"
	"fmt"
	"io"
	"os"
	"path/filepath"

	"matchbench/internal/demo"
	"matchbench/rfmath/touchstone"
)

func runDemo(_ context.Context, args []string, stdout, stderr io.Writer) error {
	fs := newFlagSet("demo", "DIR", stderr)
	pos, err := parseArgs(fs, args)
	if err != nil {
		return err
	}
	if len(pos) != 1 {
		return usagef("want the folder to write to, got %d arguments", len(pos))
	}
	dir := pos[0]
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return err
	}
	for _, f := range demo.Generate() {
		if err := writeTouchstone(filepath.Join(dir, f.Name), f, 1); err != nil {
			return err
		}
		fmt.Fprintf(stdout, "wrote %s\n", filepath.Join(dir, f.Name))
	}
	return nil
}

func writeTouchstone(path string, f demo.File, version int) error {
	fh, err := os.Create(path)
	if err != nil {
		return err
	}
	bw := bufio.NewWriter(fh)
	comments := make([]string, len(f.Note))
	for i, n := range f.Note {
		comments[i] = " " + n
	}
	err = touchstone.Write(bw, f.Sweep, touchstone.WriteOptions{Version: version, Format: "RI", FreqUnit: "MHz", Digits: 10, Comments: comments})
	if err == nil {
		err = bw.Flush()
	}
	if cerr := fh.Close(); err == nil {
		err = cerr
	}
	return err
}
