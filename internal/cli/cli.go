package cli

import (
	"bufio"
	"errors"
	"flag"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"slices"
	"strings"

	"matchbench/rfmath"
	"matchbench/rfmath/touchstone"
	"matchbench/rfmath/units"
)

// newFlagSet returns a flag set that reports errors instead of exiting.
func newFlagSet(name, usage string, stderr io.Writer) *flag.FlagSet {
	fs := flag.NewFlagSet(name, flag.ContinueOnError)
	fs.SetOutput(stderr)
	fs.Usage = func() {
		fmt.Fprintf(stderr, "usage: matchbench %s %s\n\nflags:\n", name, usage)
		fs.PrintDefaults()
	}
	return fs
}

// parseArgs parses flags that may stand before, between or after the
// positional arguments (matchbench inspect FILE --at 2.4G) and returns the
// positional ones. A lone "--" ends flag parsing.
func parseArgs(fs *flag.FlagSet, args []string) ([]string, error) {
	var pos []string
	for {
		if err := fs.Parse(args); err != nil {
			if errors.Is(err, flag.ErrHelp) {
				return nil, errHelp
			}
			return nil, usageError{err.Error()}
		}
		rest := fs.Args()
		if len(rest) == 0 {
			return pos, nil
		}
		if len(args) > 0 && len(rest) < len(args) && args[len(args)-len(rest)-1] == "--" {
			return append(pos, rest...), nil
		}
		pos = append(pos, rest[0])
		args = rest[1:]
	}
}

// listFlag collects the values of a repeatable string flag.
type listFlag []string

func (l *listFlag) String() string     { return strings.Join(*l, ",") }
func (l *listFlag) Set(s string) error { *l = append(*l, s); return nil }

// freqFlag is a frequency flag that accepts SI prefixes ("2.45GHz").
type freqFlag struct{ hz float64 }

func (f *freqFlag) String() string {
	if f == nil || f.hz == 0 {
		return ""
	}
	return units.FormatFrequency(f.hz, 6)
}

func (f *freqFlag) Set(s string) error {
	v, err := units.ParseFrequency(s)
	if err != nil {
		return err
	}
	f.hz = v
	return nil
}

// quantityFlag is a flag of a physical quantity in unit, with an SI prefix
// and the unit optional, as frequencies are typed: "8mm", "0.8cm" and
// "0.008" for a length in metres, "500mW" for a power.
type quantityFlag struct {
	unit string
	v    float64
}

func (q *quantityFlag) String() string {
	if q == nil || q.v == 0 {
		return ""
	}
	return units.Format(q.v, q.unit, 6)
}

func (q *quantityFlag) Set(s string) error {
	v, err := units.ParseValue(s, q.unit)
	if err != nil {
		return err
	}
	q.v = v
	return nil
}

// loadedSweep is a sweep read from disk with what the file said about it.
type loadedSweep struct {
	Path     string
	Sweep    *rfmath.Sweep
	Comments []string
}

// loadSweep reads a Touchstone or CSV file, chosen by its ending
// (touchstone.ReadNamed, as the server reads uploads).
func loadSweep(path string) (*loadedSweep, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	tf, err := touchstone.ReadNamed(f, path, touchstone.DefaultLimits)
	if err != nil {
		return nil, err
	}
	return &loadedSweep{Path: path, Sweep: tf.Sweep, Comments: tf.Comments}, nil
}

// defaultDataDir is $XDG_DATA_HOME/matchbench, else ~/.local/share/matchbench,
// else ./data when no home folder is known.
func defaultDataDir() string {
	if d := os.Getenv("XDG_DATA_HOME"); d != "" {
		return filepath.Join(d, "matchbench")
	}
	if h, err := os.UserHomeDir(); err == nil && h != "" {
		return filepath.Join(h, ".local", "share", "matchbench")
	}
	return "data"
}

// writeSweepFile writes s to path as CSV (.csv, 1-port), Touchstone 2
// (.ts) or Touchstone 1 (.sNp, N the port count; version 2 when the ports'
// references differ), through a temporary file renamed into place, so a
// failed write leaves no half file. opt.Version zero means by the ending;
// comments are made printable ASCII for Touchstone headers
// (touchstone.CommentLines).
func writeSweepFile(path string, s *rfmath.Sweep, opt touchstone.WriteOptions) error {
	ext := strings.ToLower(filepath.Ext(path))
	switch {
	case ext == ".csv":
		if s.Ports != 1 {
			return usagef("%s: CSV output holds 1-port sweeps only; this one has %d ports", path, s.Ports)
		}
	case ext == ".ts":
		if opt.Version == 1 {
			return usagef("%s: a .ts file is Touchstone version 2; use a .s%dp name for version 1", path, s.Ports)
		}
		opt.Version = 2
	default:
		n, ok := touchstone.PortsFromName(path)
		if !ok {
			return usagef("%s: the output ending must be .csv, .ts or .s%dp", path, s.Ports)
		}
		if n != s.Ports {
			return usagef("%s names a %d-port file but the sweep has %d ports: name it .s%dp", path, n, s.Ports, s.Ports)
		}
		// Version 0 lets the writer choose: 1, or 2 when the ports'
		// references differ, which version 1 cannot hold.
		if opt.Version == 1 && !slices.Equal(s.Z0, slices.Repeat(s.Z0[:1], s.Ports)) {
			return usagef("%s: Touchstone version 1 has one reference resistance for every port, but this sweep's ports have %s Ω: write --version 2, or renormalise to one reference first (matchbench deembed --z0)",
				path, strings.Trim(strings.Join(strings.Fields(fmt.Sprint(s.Z0)), ", "), "[]"))
		}
	}
	opt.Comments = touchstone.CommentLines(opt.Comments)
	tmp := path + ".tmp"
	fh, err := os.Create(tmp)
	if err != nil {
		return err
	}
	bw := bufio.NewWriter(fh)
	if ext == ".csv" {
		err = touchstone.WriteCSV(bw, s)
	} else {
		err = touchstone.Write(bw, s, opt)
	}
	if err == nil {
		err = bw.Flush()
	}
	if cerr := fh.Close(); err == nil {
		err = cerr
	}
	if err != nil {
		os.Remove(tmp)
		return err
	}
	return os.Rename(tmp, path)
}
