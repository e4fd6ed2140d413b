package parts

import "errors"

// Errors returned for names this package does not know. Functions wrap them
// with the name; test for them with [errors.Is].
var (
	// ErrUnknownSeries reports a preferred-number series other than E6,
	// E12, E24, E48, E96 and E192.
	ErrUnknownSeries = errors.New("parts: unknown E-series (want E6, E12, E24, E48, E96 or E192)")

	// ErrUnknownFamily reports a part family (case size) that has no
	// table of typical values.
	ErrUnknownFamily = errors.New("parts: unknown part family (want 0402 or 0603)")
)

// Panic messages for programmer errors.
const (
	badValue     = "parts: value must be positive and finite"
	badCount     = "parts: neighbour count must not be negative"
	badSeries    = "parts: unknown E-series"
	badKind      = "parts: unknown part kind"
	badNeighbour = "parts: destination length is not 2k+1"
)
