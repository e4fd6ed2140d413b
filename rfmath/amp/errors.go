package amp

import (
	"errors"
	"fmt"
	"math"

	"matchbench/rfmath"
	"matchbench/rfmath/units"
)

// Errors returned for data the maths cannot use. Functions wrap them with
// detail; test for them with [errors.Is].
var (
	// ErrNotTwoPort reports a sweep that is not a 2-port.
	ErrNotTwoPort = errors.New("amp: the sweep is not a 2-port")

	// ErrNoNoise reports that there are no noise parameters to use.
	ErrNoNoise = errors.New("amp: no noise parameters")

	// ErrNoTransmission reports a device with S21 = 0, which has no gain
	// to draw circles of.
	ErrNoTransmission = errors.New("amp: S21 is zero: the device transmits nothing")
)

// Panic messages for programmer errors.
const (
	badLength  = "amp: destination length mismatch"
	badSweep   = "amp: sweep is not a 2-port"
	badPairLen = "amp: frequency and stability slices differ in length"
)

// StabilityError reports that a figure that needs an unconditionally
// stable device (MAG, the simultaneous conjugate match) was asked of one
// that is only conditionally stable, with the test that failed.
type StabilityError struct {
	// What names the figure asked for, such as "simultaneous conjugate
	// match" or "MAG".
	What string
	// The stability figures at that frequency.
	K, DeltaMag, Mu float64
}

// Reason says which test failed: K ≤ 1, |Δ| ≥ 1, or (at the boundary, where
// the two tests disagree in the last digit) μ ≤ 1.
func (e *StabilityError) Reason() string {
	switch {
	case !(e.K > 1):
		return fmt.Sprintf("K = %.4g ≤ 1", e.K)
	case !(e.DeltaMag < 1):
		return fmt.Sprintf("|Δ| = %.4g ≥ 1", e.DeltaMag)
	default:
		return fmt.Sprintf("μ = %.4g ≤ 1", e.Mu)
	}
}

func (e *StabilityError) Error() string {
	return fmt.Sprintf("amp: no %s: the device is only conditionally stable (%s), so some passive source or load makes it oscillate", e.What, e.Reason())
}

// GainCircleError reports a gain for which there is no circle: more than
// the device can give with any termination in that plane (the radicand of
// the radius is negative).
type GainCircleError struct {
	// Plane is "source" (available gain) or "load" (operating gain).
	Plane  string
	GainDB float64
	// MaxDB is MAG in dB when the device is unconditionally stable, else
	// NaN.
	MaxDB float64
}

func (e *GainCircleError) Error() string {
	kind := "available"
	if e.Plane == "load" {
		kind = "operating"
	}
	if !math.IsNaN(e.MaxDB) {
		return fmt.Sprintf("amp: no %s-plane circle of %s gain %.4g dB: it is above MAG = %.4g dB", e.Plane, kind, e.GainDB, e.MaxDB)
	}
	return fmt.Sprintf("amp: no %s-plane circle of %s gain %.4g dB: no termination gives it", e.Plane, kind, e.GainDB)
}

// NoiseCircleError reports a noise figure for which there is no circle:
// one below NFmin, or any figure but NFmin when Rn is zero (every source
// then gives NFmin).
type NoiseCircleError struct {
	NFdB, NFminDB, RnOhm float64
}

func (e *NoiseCircleError) Error() string {
	if e.RnOhm == 0 {
		return fmt.Sprintf("amp: no circle of noise figure %.4g dB: Rn is 0 Ω, so every source gives NFmin = %.4g dB", e.NFdB, e.NFminDB)
	}
	return fmt.Sprintf("amp: no circle of noise figure %.4g dB: it is below NFmin = %.4g dB", e.NFdB, e.NFminDB)
}

// NoiseRangeError reports a frequency outside the noise data: noise
// parameters are interpolated between noise frequencies, never
// extrapolated. It wraps [rfmath.ErrOutOfRange].
type NoiseRangeError struct {
	FreqHz     float64
	LoHz, HiHz float64
}

func (e *NoiseRangeError) Error() string {
	ff := func(f float64) string { return units.FormatFrequency(f, 6) }
	if e.LoHz == e.HiHz {
		return fmt.Sprintf("amp: noise parameters are given only at %s, not at %s; they are not extrapolated", ff(e.LoHz), ff(e.FreqHz))
	}
	return fmt.Sprintf("amp: %s is outside the noise data (%s to %s); noise parameters are not extrapolated", ff(e.FreqHz), ff(e.LoHz), ff(e.HiHz))
}

// Unwrap returns [rfmath.ErrOutOfRange].
func (e *NoiseRangeError) Unwrap() error { return rfmath.ErrOutOfRange }
