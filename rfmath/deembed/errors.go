package deembed

import (
	"errors"
	"fmt"
	"strconv"
	"strings"
)

// Errors returned for data that cannot be used. Functions wrap them with
// detail; test for them with [errors.Is].
var (
	// ErrCoverage reports a fixture whose frequencies do not cover the
	// sweep. The error is a [*CoverageError].
	ErrCoverage = errors.New("deembed: fixture does not cover the sweep")

	// ErrPorts reports a sweep or fixture with a port count that the
	// operation cannot use.
	ErrPorts = errors.New("deembed: wrong number of ports")

	// ErrSingular reports a fixture that cannot be inverted at some
	// frequency: it transmits nothing (S21·S12 = 0), or the cascade with
	// its inverse has no solution.
	ErrSingular = errors.New("deembed: fixture cannot be inverted")

	// ErrFit reports a fit that cannot be made: too few points, a
	// magnitude of zero, or points too far apart to follow the phase.
	ErrFit = errors.New("deembed: cannot fit a port extension")

	// ErrReference reports a reference impedance whose real part is not
	// positive and finite.
	ErrReference = errors.New("deembed: reference impedance must have a positive, finite real part")
)

// Panic messages for programmer errors.
const (
	badLength  = "deembed: destination length mismatch"
	badPortNum = "deembed: port out of range"
	badExtLen  = "deembed: number of extensions differs from the number of ports"
	badRefLen  = "deembed: number of references differs from the number of ports"
	badFixLen  = "deembed: number of fixtures differs from the number of ports"
	badFixPort = "deembed: fixture AnalyserPort must be 1 or 2"
	badGammaF  = "deembed: gamma and frequency lengths differ"
)

// CoverageError reports the frequencies of a sweep that lie outside the
// fixture meant to be removed from it.
type CoverageError struct {
	// Port is the port of the measurement (from 1) whose fixture falls short.
	Port int
	// FixtureLoHz and FixtureHiHz are the fixture's first and last
	// frequency.
	FixtureLoHz, FixtureHiHz float64
	// Below and Above are the sweep's frequencies under FixtureLoHz and
	// over FixtureHiHz, in increasing order.
	Below, Above []float64
}

// Error names the fixture's range and the sweep's frequencies outside it
// (the first and last few of each side).
func (e *CoverageError) Error() string {
	var b strings.Builder
	fmt.Fprintf(&b, "deembed: the fixture at port %d covers %s to %s, but the sweep has ", e.Port, fmtHz(e.FixtureLoHz), fmtHz(e.FixtureHiHz))
	var parts []string
	if n := len(e.Below); n > 0 {
		parts = append(parts, fmt.Sprintf("%d point%s below it (%s)", n, plural(n), listHz(e.Below)))
	}
	if n := len(e.Above); n > 0 {
		parts = append(parts, fmt.Sprintf("%d point%s above it (%s)", n, plural(n), listHz(e.Above)))
	}
	b.WriteString(strings.Join(parts, " and "))
	b.WriteString("; a fixture is never extrapolated: measure it over the whole sweep or cut the sweep to the fixture's range")
	return b.String()
}

// Unwrap returns [ErrCoverage].
func (e *CoverageError) Unwrap() error { return ErrCoverage }

func plural(n int) string {
	if n == 1 {
		return ""
	}
	return "s"
}

// listHz lists up to three frequencies from each end of f.
func listHz(f []float64) string {
	if len(f) <= 6 {
		s := make([]string, len(f))
		for i, v := range f {
			s[i] = fmtHz(v)
		}
		return strings.Join(s, ", ")
	}
	return fmt.Sprintf("%s, %s, %s … %s, %s, %s", fmtHz(f[0]), fmtHz(f[1]), fmtHz(f[2]),
		fmtHz(f[len(f)-3]), fmtHz(f[len(f)-2]), fmtHz(f[len(f)-1]))
}

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
