package tdr

import (
	"fmt"
	"math"
	"strconv"
	"strings"
)

// WindowKind names a window shape.
type WindowKind int

const (
	// Rectangular weights every point equally: the sharpest main lobe and
	// side lobes 13 dB down (Harris 1978; 13.3 dB computed).
	Rectangular WindowKind = iota
	// Hann is the raised cosine, cos²(π·u/2): side lobes 31 dB down,
	// falling 18 dB per octave (Harris 1978; 31.5 dB computed).
	Hann
	// Kaiser is the I0–sinh window with shape parameter Beta (Kaiser
	// 1974): β = 0 is rectangular; larger β trades a wider main lobe for
	// lower side lobes, 43.8 dB down at β = 6 (computed). Harris 1978
	// writes β as πα.
	Kaiser
)

// Window is a window shape. The zero value is rectangular.
type Window struct {
	Kind WindowKind
	// Beta is the Kaiser shape parameter β ≥ 0; other kinds ignore it.
	Beta float64
}

// maxBeta bounds the Kaiser parameter: I0(100) ≈ 1e42 is still far from
// overflow, and no sensible window needs more.
const maxBeta = 100

// At returns the window's value at the position u ∈ [−1, 1] across it, u = 0
// being the centre and |u| = 1 the edge (half a sample beyond the outermost
// sample in Harris's centred form, so an N-sample window puts its samples
// at u = (n − (N−1)/2)/(N/2), n = 0 … N−1):
//
//	Rectangular  w(u) = 1
//	Hann         w(u) = cos²(π·u/2) = (1 + cos π·u)/2
//	Kaiser       w(u) = I0(β·√(1 − u²)) / I0(β)
//
// Outside [−1, 1] every window is 0. At returns 1 at u = 0.
func (w Window) At(u float64) float64 {
	u = math.Abs(u)
	if u > 1 {
		return 0
	}
	switch w.Kind {
	case Hann:
		c := math.Cos(math.Pi * u / 2)
		return c * c
	case Kaiser:
		if w.Beta == 0 {
			return 1
		}
		return besselI0(w.Beta*math.Sqrt(1-u*u)) / besselI0(w.Beta)
	}
	return 1
}

// Validate returns an error wrapping [ErrWindow] for an unknown kind or a
// Kaiser β outside [0, 100].
func (w Window) Validate() error {
	switch w.Kind {
	case Rectangular, Hann:
		return nil
	case Kaiser:
		if !(w.Beta >= 0 && w.Beta <= maxBeta) {
			return fmt.Errorf("%w: Kaiser β = %g; want 0 to %d", ErrWindow, w.Beta, maxBeta)
		}
		return nil
	}
	return fmt.Errorf("%w: unknown kind %d", ErrWindow, int(w.Kind))
}

// String returns the window as [ParseWindow] reads it: "rect", "hann" or
// "kaiser:β".
func (w Window) String() string {
	switch w.Kind {
	case Rectangular:
		return "rect"
	case Hann:
		return "hann"
	case Kaiser:
		return "kaiser:" + strconv.FormatFloat(w.Beta, 'g', -1, 64)
	}
	return fmt.Sprintf("window(%d)", int(w.Kind))
}

// ParseWindow reads a window: "rect" (or "rectangular", "none"), "hann", or
// "kaiser:β" with β from 0 to 100 ("kaiser" alone is β = 6). Case and
// surrounding space do not matter. Errors wrap [ErrWindow].
func ParseWindow(s string) (Window, error) {
	t := strings.ToLower(strings.TrimSpace(s))
	name, arg, hasArg := strings.Cut(t, ":")
	switch name {
	case "rect", "rectangular", "none":
		if !hasArg {
			return Window{}, nil
		}
	case "hann":
		if !hasArg {
			return Window{Kind: Hann}, nil
		}
	case "kaiser":
		w := Window{Kind: Kaiser, Beta: 6}
		if hasArg {
			b, err := strconv.ParseFloat(strings.TrimSpace(arg), 64)
			if err != nil {
				return Window{}, fmt.Errorf("%w: %q: β is not a number", ErrWindow, s)
			}
			w.Beta = b
		}
		if err := w.Validate(); err != nil {
			return Window{}, err
		}
		return w, nil
	default:
		return Window{}, fmt.Errorf("%w: %q; want rect, hann or kaiser:β", ErrWindow, s)
	}
	return Window{}, fmt.Errorf("%w: %q: only kaiser takes a parameter", ErrWindow, s)
}

// besselI0 returns the modified Bessel function of the first kind of order
// zero by its power series
//
//	I0(x) = Σₘ ((x/2)ᵐ / m!)²
//
// (M. Abramowitz and I. A. Stegun, Handbook of Mathematical Functions,
// 9.6.12), summed until a term no longer changes the sum. The terms are
// positive, so there is no cancellation; for |x| ≤ 100 it takes at most
// about 150 terms.
func besselI0(x float64) float64 {
	h := x / 2
	sum, term := 1.0, 1.0
	for m := 1; m < 1000; m++ {
		term *= h / float64(m)
		t2 := term * term
		sum += t2
		if t2 <= sum*1e-17 {
			break
		}
	}
	return sum
}
