package touchstone

import (
	"bytes"
	"fmt"
	"io"
	"path"
	"strings"

	"matchbench/rfmath"
)

// ReadNamed reads a sweep in the format its name's ending gives: CSV for
// .csv, Touchstone for .sNp (N the port count) or .ts; any other ending is
// an error naming the file, since the reader could only guess. The
// Touchstone file's comments come back with the sweep (CSV has none).
// Both the command line and the server's uploads read files with it.
func ReadNamed(r io.Reader, name string, lim Limits) (*File, error) {
	ext := path.Ext(strings.ReplaceAll(name, `\`, "/"))
	if strings.EqualFold(ext, ".csv") {
		s, err := ReadCSV(r, name, lim)
		if err != nil {
			return nil, err
		}
		return &File{Sweep: s}, nil
	}
	if _, ok := PortsFromName(name); !ok && !strings.EqualFold(ext, ".ts") {
		return nil, fmt.Errorf("%s: the name must end in .sNp (e.g. .s1p, .s2p), .ts or .csv so the reader knows the format", name)
	}
	return Read(r, name, lim)
}

// ReadNamedBytes is [ReadNamed] of a file held in memory, returning its sweep.
func ReadNamedBytes(name string, raw []byte, lim Limits) (*rfmath.Sweep, error) {
	f, err := ReadNamed(bytes.NewReader(raw), name, lim)
	if err != nil {
		return nil, err
	}
	return f.Sweep, nil
}

// CommentLines returns lines made fit for Touchstone comments (printable
// ASCII, one line each, see [WriteOptions].Comments): Ω becomes "ohm", µ
// and μ become "u", a line break a space, and any other character outside
// printable ASCII '?'. Printable ASCII is kept as it is.
func CommentLines(lines []string) []string {
	out := make([]string, len(lines))
	for i, l := range lines {
		var b strings.Builder
		for _, r := range l {
			switch {
			case r == 'Ω':
				b.WriteString("ohm")
			case r == 'µ' || r == 'μ':
				b.WriteString("u")
			case r == '–' || r == '−' || r == '·':
				b.WriteByte('-')
			case r == '≥':
				b.WriteString(">=")
			case r == '≤':
				b.WriteString("<=")
			case r == '√':
				b.WriteString("sqrt ")
			case r == '∝':
				b.WriteString("as")
			case r == 'ε':
				b.WriteString("eps_")
			case r == '\n' || r == '\r' || r == '\t':
				b.WriteByte(' ')
			case r >= 0x20 && r <= 0x7e:
				b.WriteRune(r)
			default:
				b.WriteByte('?')
			}
		}
		out[i] = b.String()
	}
	return out
}
