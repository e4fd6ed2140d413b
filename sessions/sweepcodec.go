package sessions

import (
	"encoding/binary"
	"fmt"
	"math"

	"matchbench/rfmath"
)

// sweepFormat1 is the first (and so far only) binary layout of a parsed
// sweep as stored in the sweeps table:
//
//	offset  size    field
//	0       1       format = 1
//	1       4       ports P, uint32 little-endian
//	5       4       points N, uint32 little-endian
//	9       8·P     Z0 of each port, float64 little-endian
//	…       8·N     FreqHz
//	…       16·N·P² Data as (real, imag) float64 pairs, frequency-major as in
//	                rfmath.Sweep
//
// A later layout takes the next format number; decodeSweep keeps reading
// the old ones.
const sweepFormat1 = 1

const sweepHeaderLen = 9

// encodeSweep returns the stored form of s.
func encodeSweep(s *rfmath.Sweep) []byte {
	n, p := len(s.FreqHz), s.Ports
	b := make([]byte, sweepHeaderLen, sweepHeaderLen+8*(p+n+2*len(s.Data)))
	b[0] = sweepFormat1
	binary.LittleEndian.PutUint32(b[1:], uint32(p))
	binary.LittleEndian.PutUint32(b[5:], uint32(n))
	for _, v := range s.Z0 {
		b = binary.LittleEndian.AppendUint64(b, math.Float64bits(v))
	}
	for _, v := range s.FreqHz {
		b = binary.LittleEndian.AppendUint64(b, math.Float64bits(v))
	}
	for _, v := range s.Data {
		b = binary.LittleEndian.AppendUint64(b, math.Float64bits(real(v)))
		b = binary.LittleEndian.AppendUint64(b, math.Float64bits(imag(v)))
	}
	return b
}

// decodeSweep reads the stored form of a sweep. The length must match the
// header exactly; the decoded sweep must pass rfmath.Sweep.Validate. Errors
// wrap ErrCorrupt.
func decodeSweep(b []byte) (*rfmath.Sweep, error) {
	if len(b) < sweepHeaderLen {
		return nil, fmt.Errorf("%w: sweep record of %d bytes is shorter than its header", ErrCorrupt, len(b))
	}
	if b[0] != sweepFormat1 {
		return nil, fmt.Errorf("%w: unknown sweep record format %d", ErrCorrupt, b[0])
	}
	p := uint64(binary.LittleEndian.Uint32(b[1:]))
	n := uint64(binary.LittleEndian.Uint32(b[5:]))
	// p·p·n could overflow: bound each factor by the length first.
	body := uint64(len(b) - sweepHeaderLen)
	if p == 0 || p > body/8 || p*p > body/16 || n > body/(16*p*p) {
		return nil, fmt.Errorf("%w: sweep record of %d bytes cannot hold %d points of %d ports", ErrCorrupt, len(b), n, p)
	}
	if want := 8 * (p + n + 2*p*p*n); body != want {
		return nil, fmt.Errorf("%w: sweep record has %d bytes of data, want %d for %d points of %d ports", ErrCorrupt, body, want, n, p)
	}
	s := &rfmath.Sweep{
		FreqHz: make([]float64, n),
		Ports:  int(p),
		Z0:     make([]float64, p),
		Data:   make([]complex128, p*p*n),
	}
	r := b[sweepHeaderLen:]
	next := func() float64 {
		v := math.Float64frombits(binary.LittleEndian.Uint64(r))
		r = r[8:]
		return v
	}
	for i := range s.Z0 {
		s.Z0[i] = next()
	}
	for i := range s.FreqHz {
		s.FreqHz[i] = next()
	}
	for i := range s.Data {
		re := next()
		s.Data[i] = complex(re, next())
	}
	if err := s.Validate(); err != nil {
		return nil, fmt.Errorf("%w: %v", ErrCorrupt, err)
	}
	return s, nil
}
