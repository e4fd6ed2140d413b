package rfmath

import "errors"

// Errors returned for data that the maths cannot use. Functions wrap them
// with detail; test for them with [errors.Is].
var (
	// ErrSingular reports that a matrix that must be inverted has no
	// inverse, for example I − S of a network with an open-circuit port when
	// its Z-matrix is asked for.
	ErrSingular = errors.New("rfmath: singular matrix")

	// ErrReference reports a reference resistance that is not positive and
	// finite.
	ErrReference = errors.New("rfmath: reference resistance must be positive and finite")
)

// Panic messages for programmer errors.
const (
	badOrder       = "rfmath: matrix order must be at least 1"
	badMatrix      = "rfmath: matrix length is not n×n"
	badRefCount    = "rfmath: number of reference resistances is not n"
	badSweepLength = "rfmath: data length differs from the number of frequencies"
)
