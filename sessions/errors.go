package sessions

import (
	"errors"
	"fmt"
)

// Errors returned by the store. Errors carrying detail wrap one of these, so
// test them with errors.Is.
var (
	// ErrNotFound: no session, sweep, marker or band with that id, or no
	// session with that token.
	ErrNotFound = errors.New("sessions: not found")
	// ErrInvalid: a change or argument that breaks a rule (a value out of
	// range, NaN, a limit reached, nothing to undo). The wrapping error
	// says what and where.
	ErrInvalid = errors.New("sessions: invalid")
	// ErrForbidden: a view capability asked for a change.
	ErrForbidden = errors.New("sessions: forbidden for a view link")
	// ErrConflict: a change carried IfVersion and the session had moved on.
	ErrConflict = errors.New("sessions: version conflict")
	// ErrLocked: another process holds the data folder.
	ErrLocked = errors.New("sessions: data folder in use by another process")
	// ErrClosed: the store has been closed.
	ErrClosed = errors.New("sessions: store closed")
	// ErrCorrupt: stored data could not be decoded.
	ErrCorrupt = errors.New("sessions: stored data corrupt")
	// ErrDiskFull: a change could not be stored because the disk (or the
	// file system holding the data folder) is full. Nothing was changed.
	ErrDiskFull = errors.New("sessions: the disk holding the data folder is full")
)

// OpError is the error of a change that was refused. Field names the
// payload field at fault (empty when the change as a whole is refused) and
// Err wraps ErrInvalid, ErrNotFound or ErrConflict with the detail.
type OpError struct {
	Op    string
	Field string
	Err   error
}

func (e *OpError) Error() string {
	if e.Field == "" {
		return e.Op + ": " + e.Err.Error()
	}
	return e.Op + ": " + e.Field + ": " + e.Err.Error()
}

func (e *OpError) Unwrap() error { return e.Err }

// invalid returns an *OpError for op and field wrapping ErrInvalid.
func invalid(op, field, format string, args ...any) error {
	return &OpError{Op: op, Field: field, Err: fmt.Errorf("%w: "+format, append([]any{ErrInvalid}, args...)...)}
}

// notFound returns an *OpError for op and field wrapping ErrNotFound.
func notFound(op, field, what, id string) error {
	return &OpError{Op: op, Field: field, Err: fmt.Errorf("%w: no %s %q in this session", ErrNotFound, what, id)}
}
