package rfmath

import (
	"errors"
	"fmt"
	"math"
	"sort"
)

// Sweep is a measured or computed frequency sweep of an N-port network,
// held as S-parameters.
//
// The data are laid out frequency-major so that one frequency's matrix is
// contiguous:
//
//	Data[k·P·P + i·P + j] = S(i+1, j+1) at FreqHz[k]
//
// with P = Ports and i, j counted from zero. FreqHz is strictly increasing.
// Z0 holds the real reference resistance of each port in ohms.
type Sweep struct {
	FreqHz []float64
	Ports  int
	Z0     []float64
	Data   []complex128
}

// Errors returned by Sweep methods.
var (
	ErrOutOfRange = errors.New("rfmath: frequency outside the sweep")
	ErrEmptySweep = errors.New("rfmath: sweep has no points")
)

const (
	badPort   = "rfmath: port index out of range"
	badLength = "rfmath: destination length mismatch"
)

// NewSweep returns a sweep of n points for a ports-port network with every
// reference resistance set to z0Ohm. FreqHz and Data are allocated and zero.
func NewSweep(n, ports int, z0Ohm float64) *Sweep {
	if n < 0 || ports < 1 {
		panic("rfmath: bad sweep size")
	}
	z0 := make([]float64, ports)
	for i := range z0 {
		z0[i] = z0Ohm
	}
	return &Sweep{
		FreqHz: make([]float64, n),
		Ports:  ports,
		Z0:     z0,
		Data:   make([]complex128, n*ports*ports),
	}
}

// Len returns the number of frequency points.
func (s *Sweep) Len() int { return len(s.FreqHz) }

// Validate checks the sweep's shape and values: at least one point, a
// positive port count, one positive finite reference per port, strictly
// increasing finite non-negative frequencies, finite data. The error names
// the first offending point.
func (s *Sweep) Validate() error {
	if s.Ports < 1 {
		return fmt.Errorf("rfmath: sweep has %d ports", s.Ports)
	}
	if len(s.FreqHz) == 0 {
		return ErrEmptySweep
	}
	if len(s.Z0) != s.Ports {
		return fmt.Errorf("rfmath: sweep has %d reference impedances for %d ports", len(s.Z0), s.Ports)
	}
	for i, z := range s.Z0 {
		if !(z > 0) || math.IsInf(z, 0) {
			return fmt.Errorf("rfmath: reference impedance of port %d is %g Ω; it must be positive and finite", i+1, z)
		}
	}
	if want := len(s.FreqHz) * s.Ports * s.Ports; len(s.Data) != want {
		return fmt.Errorf("rfmath: sweep has %d data values, want %d", len(s.Data), want)
	}
	for k, f := range s.FreqHz {
		if math.IsNaN(f) || math.IsInf(f, 0) || f < 0 {
			return fmt.Errorf("rfmath: frequency at point %d is %g Hz", k+1, f)
		}
		if k > 0 && f <= s.FreqHz[k-1] {
			return fmt.Errorf("rfmath: frequency at point %d (%g Hz) does not increase from point %d (%g Hz)", k+1, f, k, s.FreqHz[k-1])
		}
	}
	pp := s.Ports * s.Ports
	for n, v := range s.Data {
		if math.IsNaN(real(v)) || math.IsNaN(imag(v)) || math.IsInf(real(v), 0) || math.IsInf(imag(v), 0) {
			k := n / pp
			i, j := (n%pp)/s.Ports, n%s.Ports
			return fmt.Errorf("rfmath: S%d%d at point %d (%g Hz) is not finite", i+1, j+1, k+1, s.FreqHz[k])
		}
	}
	return nil
}

// At returns S(i+1, j+1) at point k (all indices from zero).
func (s *Sweep) At(k, i, j int) complex128 {
	if i < 0 || j < 0 || i >= s.Ports || j >= s.Ports {
		panic(badPort)
	}
	return s.Data[k*s.Ports*s.Ports+i*s.Ports+j]
}

// Set sets S(i+1, j+1) at point k (all indices from zero).
func (s *Sweep) Set(k, i, j int, v complex128) {
	if i < 0 || j < 0 || i >= s.Ports || j >= s.Ports {
		panic(badPort)
	}
	s.Data[k*s.Ports*s.Ports+i*s.Ports+j] = v
}

// Matrix returns the P×P S-matrix at point k, row-major, as a sub-slice of
// Data (not a copy).
func (s *Sweep) Matrix(k int) []complex128 {
	pp := s.Ports * s.Ports
	return s.Data[k*pp : (k+1)*pp]
}

// Param fills dst with S(i+1, j+1) at every point and returns it.
// A nil dst is allocated; a dst whose length is not Len() panics.
func (s *Sweep) Param(dst []complex128, i, j int) []complex128 {
	if i < 0 || j < 0 || i >= s.Ports || j >= s.Ports {
		panic(badPort)
	}
	n := s.Len()
	if dst == nil {
		dst = make([]complex128, n)
	} else if len(dst) != n {
		panic(badLength)
	}
	pp := s.Ports * s.Ports
	off := i*s.Ports + j
	for k := range n {
		dst[k] = s.Data[k*pp+off]
	}
	return dst
}

// Clone returns a deep copy of s.
func (s *Sweep) Clone() *Sweep {
	return &Sweep{
		FreqHz: append([]float64(nil), s.FreqHz...),
		Ports:  s.Ports,
		Z0:     append([]float64(nil), s.Z0...),
		Data:   append([]complex128(nil), s.Data...),
	}
}

// Locate returns the index k and weight t such that fHz lies between
// FreqHz[k] and FreqHz[k+1] at fraction t ∈ [0, 1]. A frequency equal to the
// last point returns k = Len()−2, t = 1 (or k = 0, t = 0 for a one-point
// sweep at that frequency). Outside the sweep it returns ErrOutOfRange.
func (s *Sweep) Locate(fHz float64) (k int, t float64, err error) {
	return locate(s.FreqHz, fHz)
}

// locate is [Sweep.Locate] on the increasing frequencies freqHz.
func locate(freqHz []float64, fHz float64) (k int, t float64, err error) {
	n := len(freqHz)
	if n == 0 {
		return 0, 0, ErrEmptySweep
	}
	if math.IsNaN(fHz) || fHz < freqHz[0] || fHz > freqHz[n-1] {
		return 0, 0, fmt.Errorf("%w: %g Hz is not within %g–%g Hz", ErrOutOfRange, fHz, freqHz[0], freqHz[n-1])
	}
	if n == 1 {
		return 0, 0, nil
	}
	k = sort.SearchFloat64s(freqHz, fHz) // first index with freqHz[k] >= fHz
	if k == 0 {
		return 0, 0, nil
	}
	k--
	if k > n-2 {
		k = n - 2
	}
	t = (fHz - freqHz[k]) / (freqHz[k+1] - freqHz[k])
	return k, t, nil
}

// Lerp returns a + t·(b − a): the value at fraction t of the way from the
// measured point a to the next one, b. It is the one interpolation between
// measured points that matchbench uses for readouts, band edges, limit
// checks and resampling: linear in the complex plane, real and imaginary
// parts separately, in the sweep's own reference impedances (a sweep shown
// in other references is renormalised after interpolating; see
// [NewReflection]). It is exact at the points: Lerp(a, b, 0) = a and
// Lerp(a, b, 1) = b.
func Lerp(a, b complex128, t float64) complex128 {
	if t == 1 {
		return b // a + (b − a) may differ from b in the last bit
	}
	return a + complex(t, 0)*(b-a)
}

// InterpAt fills dst (length Ports×Ports, row-major) with the S-matrix at
// fHz and returns it. Between measured points the value is interpolated
// linearly in the complex plane, real and imaginary parts separately (see
// [Lerp]), which is exact at the measured points and keeps a passive sweep
// passive; it does not follow the curvature of a trace between coarse
// points. A frequency
// outside the sweep returns ErrOutOfRange: there is no extrapolation.
func (s *Sweep) InterpAt(dst []complex128, fHz float64) ([]complex128, error) {
	pp := s.Ports * s.Ports
	if dst == nil {
		dst = make([]complex128, pp)
	} else if len(dst) != pp {
		panic(badLength)
	}
	k, t, err := s.Locate(fHz)
	if err != nil {
		return dst, err
	}
	a := s.Data[k*pp : (k+1)*pp]
	if t == 0 || s.Len() == 1 {
		copy(dst, a)
		return dst, nil
	}
	b := s.Data[(k+1)*pp : (k+2)*pp]
	for n := range dst {
		dst[n] = Lerp(a[n], b[n], t)
	}
	return dst, nil
}

// Resample returns a new sweep on the grid freqHz (strictly increasing, all
// inside s), interpolated as InterpAt does.
func (s *Sweep) Resample(freqHz []float64) (*Sweep, error) {
	out := &Sweep{
		FreqHz: append([]float64(nil), freqHz...),
		Ports:  s.Ports,
		Z0:     append([]float64(nil), s.Z0...),
		Data:   make([]complex128, len(freqHz)*s.Ports*s.Ports),
	}
	pp := s.Ports * s.Ports
	for k, f := range freqHz {
		if k > 0 && f <= freqHz[k-1] {
			return nil, fmt.Errorf("rfmath: resample grid does not increase at point %d (%g Hz)", k+1, f)
		}
		if _, err := s.InterpAt(out.Data[k*pp:(k+1)*pp], f); err != nil {
			return nil, err
		}
	}
	return out, nil
}
