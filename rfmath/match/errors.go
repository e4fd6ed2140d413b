package match

import "errors"

// Errors returned for problems the package cannot solve. Functions wrap
// them with detail; test for them with [errors.Is].
var (
	// ErrNoLoad reports a load with no points, or with fewer frequencies
	// than reflection coefficients.
	ErrNoLoad = errors.New("match: load sweep is empty or malformed")

	// ErrBand reports a band that is empty, reversed, or outside the load
	// sweep.
	ErrBand = errors.New("match: bad band")

	// ErrSource reports a source impedance with no positive resistance.
	ErrSource = errors.New("match: source resistance must be positive")

	// ErrFrequency reports a frequency that is not positive and finite.
	ErrFrequency = errors.New("match: frequency must be positive and finite")

	// ErrRange reports a part value range that holds no standard value.
	ErrRange = errors.New("match: no standard value in the part range")

	// ErrPart reports a part that cannot be built: a value that is not
	// positive and finite, or an unknown kind.
	ErrPart = errors.New("match: part cannot be built")

	// ErrFit reports a load that the RLC fit cannot describe.
	ErrFit = errors.New("match: cannot fit an RC, RL or RLC model to the load")
)

// Panic messages for programmer errors.
const (
	badLength = "match: destination length mismatch"
	badKind   = "match: unknown part kind"
)

// Errors of the board, the fit of a board as built and the next swap.
var (
	// ErrLayout reports a layout that does not fit its network: a trace in
	// a gap the network does not have, or a size or figure out of range.
	ErrLayout = errors.New("match: bad board layout")

	// ErrBuilt reports a sweep of the board as built that cannot be fitted:
	// too few points in common with the load sweep, or a network with
	// nothing to fit.
	ErrBuilt = errors.New("match: cannot fit the board as built")

	// ErrNetworkFile reports a network file that cannot be read.
	ErrNetworkFile = errors.New("match: bad network file")
)
