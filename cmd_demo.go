package main

import (
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
		if err := writeDemoFile(filepath.Join(dir, f.Name), f); err != nil {
			return err
		}
		fmt.Fprintf(stdout, "wrote %s\n", filepath.Join(dir, f.Name))
	}
	return nil
}

// writeDemoFile writes one demo sweep as Touchstone 1.1 with its notes
// and, for a transistor, its noise parameters.
func writeDemoFile(path string, f demo.File) error {
	comments := make([]string, len(f.Note))
	for i, n := range f.Note {
		comments[i] = " " + n
	}
	return writeSweepFile(path, f.Sweep, touchstone.WriteOptions{Version: 1, Format: "RI", FreqUnit: "MHz", Digits: 10, Comments: comments, Noise: f.Noise})
}
