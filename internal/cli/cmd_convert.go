package cli

import (
	"context"
	"fmt"
	"io"
	"path/filepath"
	"strings"

	"matchbench/rfmath/touchstone"
)

func runConvert(_ context.Context, args []string, stdout, stderr io.Writer) error {
	fs := newFlagSet("convert", "IN OUT [--version 1|2] [--format RI|MA|DB] [--unit Hz|kHz|MHz|GHz]", stderr)
	version := fs.Int("version", 0, "Touchstone `version` to write: 1 (1.1 syntax) or 2 (2.1); default 2 for .ts, else 1")
	format := fs.String("format", "RI", "number `format` of a Touchstone file: RI, MA or DB")
	unit := fs.String("unit", "", "frequency `unit` of a Touchstone file (default: chosen from the range)")
	digits := fs.Int("digits", 12, "significant `digits` written")
	pos, err := parseArgs(fs, args)
	if err != nil {
		return err
	}
	if len(pos) != 2 {
		return usagef("want IN and OUT, got %d arguments", len(pos))
	}
	in, out := pos[0], pos[1]
	switch *version {
	case 0, 1, 2:
	default:
		return usagef("--version %d: write 1 or 2", *version)
	}
	f := strings.ToUpper(*format)
	if f != "RI" && f != "MA" && f != "DB" {
		return usagef("--format %q: use RI, MA or DB", *format)
	}
	if *digits < 3 || *digits > 17 {
		return usagef("--digits %d: use 3 to 17", *digits)
	}

	ls, err := loadSweep(in)
	if err != nil {
		return err
	}
	comments := append([]string{fmt.Sprintf(" converted by matchbench from %s", filepath.Base(in))}, ls.Comments...)
	if err := writeSweepFile(out, ls.Sweep, touchstone.WriteOptions{Version: *version, Format: f, FreqUnit: *unit, Digits: *digits, Comments: comments}); err != nil {
		return err
	}
	fmt.Fprintf(stdout, "wrote %s (%d points, %d-port)\n", out, ls.Sweep.Len(), ls.Sweep.Ports)
	return nil
}
