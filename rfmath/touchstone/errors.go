package touchstone

import (
	"errors"
	"fmt"
	"unicode/utf8"
)

// Sentinel errors. Every error that [Read], [ReadFile] and [ReadCSV] return
// for bad input is a *[ParseError] whose Err wraps exactly one of them, so
// callers can test the kind with errors.Is.
var (
	// ErrSyntax marks input that does not follow the Touchstone (or CSV)
	// rules: a malformed number, a missing keyword, a wrong count of values,
	// a frequency that does not increase.
	ErrSyntax = errors.New("touchstone: syntax error")

	// ErrUnsupported marks valid input that this package does not read:
	// H- and G-parameters, mixed-mode data, CSV files of more than one port.
	ErrUnsupported = errors.New("touchstone: unsupported")

	// ErrLimit marks input that exceeds one of the [Limits]; the message
	// names the limit and its value.
	ErrLimit = errors.New("touchstone: limit exceeded")
)

// ParseError is returned for bad input. Line and Column are counted from 1
// (Column in bytes); Line is 0 when the error concerns the input as a whole
// (its size), and errors found at the end of the input point at the last
// line.
type ParseError struct {
	File   string // the name given to Read, or the path given to ReadFile
	Line   int
	Column int
	Err    error // wraps ErrSyntax, ErrUnsupported or ErrLimit
}

// Error returns "file:line:col: message", or "file: message" when Line is 0.
func (e *ParseError) Error() string {
	name := e.File
	if name == "" {
		name = "input"
	}
	if e.Line == 0 {
		return fmt.Sprintf("%s: %v", name, e.Err)
	}
	return fmt.Sprintf("%s:%d:%d: %v", name, e.Line, e.Column, e.Err)
}

// Unwrap returns the underlying error.
func (e *ParseError) Unwrap() error { return e.Err }

// kindError is a message that unwraps to one of the sentinels without
// repeating its text.
type kindError struct {
	kind error
	msg  string
}

func (e *kindError) Error() string { return "touchstone: " + e.msg }
func (e *kindError) Unwrap() error { return e.kind }

func syntaxf(format string, args ...any) error {
	return &kindError{ErrSyntax, fmt.Sprintf(format, args...)}
}

func unsupportedf(format string, args ...any) error {
	return &kindError{ErrUnsupported, fmt.Sprintf(format, args...)}
}

func limitf(format string, args ...any) error {
	return &kindError{ErrLimit, fmt.Sprintf(format, args...)}
}

// Bounds on the input an error message quotes: a message names what it
// found, not all of it (a 2 MB header line quoted whole made a 6 MB error).
const (
	maxQuotedBytes = 60 // of one piece of text
	maxQuotedItems = 8  // of a list of them
)

// found is text from the input quoted in an error message. It formats (with
// %s, %q or %v) cut to maxQuotedBytes on a character boundary, with "…".
type found string

func (f found) String() string {
	s := string(f)
	if len(s) <= maxQuotedBytes {
		return s
	}
	cut := maxQuotedBytes
	for cut > 0 && !utf8.RuneStart(s[cut]) {
		cut--
	}
	return s[:cut] + "…"
}

// foundList is a list of input texts for an error message: at most
// maxQuotedItems of them, each cut as found is.
func foundList(v []string) []found {
	out := make([]found, 0, min(len(v), maxQuotedItems+1))
	for i, s := range v {
		if i == maxQuotedItems {
			out = append(out, found(fmt.Sprintf("… %d more", len(v)-i)))
			break
		}
		out = append(out, found(s))
	}
	return out
}
