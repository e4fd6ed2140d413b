package spice

import "errors"

// Errors returned for networks the package cannot write. Functions wrap
// them with detail; test for them with [errors.Is].
var (
	// ErrBand reports a band that is not a positive, finite, increasing
	// range of frequencies.
	ErrBand = errors.New("spice: bad frequency band")

	// ErrPart reports a part whose element values are not finite and not
	// negative, or a part kind the writer does not know.
	ErrPart = errors.New("spice: part cannot be written")

	// ErrFit reports that no equivalent network of the part could be
	// fitted within the tolerance.
	ErrFit = errors.New("spice: no equivalent circuit within the tolerance")
)
