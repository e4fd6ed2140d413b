package tdr

import (
	"errors"
	"strconv"
)

// Errors returned for sweeps that cannot be transformed. Functions wrap
// them with detail; test for them with [errors.Is].
var (
	// ErrGrid reports a sweep whose frequencies do not allow the mode
	// asked for: too few points, a low-pass sweep that starts too far
	// above DC, or a gate on a sweep that is not uniform.
	ErrGrid = errors.New("tdr: frequency grid does not allow the transform")

	// ErrWindow reports a window that cannot be read or built.
	ErrWindow = errors.New("tdr: bad window")

	// ErrGate reports a gate that cannot be applied: a span that is not
	// positive, or a gate that removes the whole reference reflection so
	// that its edge effects cannot be compensated.
	ErrGate = errors.New("tdr: bad gate")

	// ErrTooLarge reports a transform longer than MaxLength.
	ErrTooLarge = errors.New("tdr: transform too long")
)

// MaxLength is the longest transform (after zero padding) that [Transform]
// and [GateTo] compute: 2²⁴ points, 256 MiB of complex work space.
const MaxLength = 1 << 24

// Panic messages for programmer errors.
const (
	badLength = "tdr: destination length mismatch"
	badInput  = "tdr: gamma and frequency lengths differ"
	badStep   = "tdr: band-pass response has no step"
)

// fmtHz writes a frequency with an SI prefix and up to 9 significant digits.
func fmtHz(f float64) string {
	units := []struct {
		scale float64
		name  string
	}{{1e9, "GHz"}, {1e6, "MHz"}, {1e3, "kHz"}}
	for _, u := range units {
		if f >= u.scale {
			return strconv.FormatFloat(f/u.scale, 'g', 9, 64) + " " + u.name
		}
	}
	return strconv.FormatFloat(f, 'g', 9, 64) + " Hz"
}
