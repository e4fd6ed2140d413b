package touchstone

import (
	"bytes"
	"errors"
	"math"
	"strconv"

	"matchbench/rfmath"
)

// Byte classes for the scanner.
const (
	clsBad   = iota // not allowed anywhere: controls, DEL, bytes > 0x7E
	clsBlank        // space, tab
	clsNum          // digits, sign, point, exponent letter
	clsText         // other printable ASCII
	clsBang         // '!' starts a comment
)

// charClass is the byte class of every byte.
var charClass = func() (t [256]uint8) {
	for c := 0x20; c <= 0x7E; c++ {
		t[c] = clsText
	}
	t[' '], t['\t'] = clsBlank, clsBlank
	for c := '0'; c <= '9'; c++ {
		t[c] = clsNum
	}
	for _, c := range "+-.eE" {
		t[c] = clsNum
	}
	t['!'] = clsBang
	return t
}()

// numberLine scans a line of numbers into p.nums and p.cols and hands it to
// the block it belongs to.
func (p *parser) numberLine(line []byte, i int) error {
	p.nums, p.cols = p.nums[:0], p.cols[:0]
	n := len(line)
scan:
	for i < n {
		c := line[i]
		switch charClass[c] {
		case clsBlank:
			i++
		case clsNum:
			start := i
			// Most numbers are read in one pass; the rest (and any error)
			// take the general path below.
			if v, end, ok := scanFast(line, i); ok && (end == n || charClass[line[end]] == clsBlank || charClass[line[end]] == clsBang) {
				p.nums = append(p.nums, v)
				p.cols = append(p.cols, start+1)
				i = end
				continue
			}
			for i < n && charClass[line[i]] == clsNum {
				i++
			}
			if i < n {
				if k := charClass[line[i]]; k == clsText {
					return p.notNumber(line, start)
				} else if k == clsBad {
					return p.badByte(i, line[i])
				}
			}
			v, err := parseScanned(line[start:i])
			if err != nil {
				return p.errAt(start+1, err)
			}
			p.nums = append(p.nums, v)
			p.cols = append(p.cols, start+1)
		case clsBang:
			if err := p.comment(line, i); err != nil {
				return err
			}
			break scan
		case clsText:
			return p.notNumber(line, i)
		default:
			return p.badByte(i, c)
		}
	}
	if len(p.nums) == 0 {
		return nil
	}
	if p.state == stEnded {
		return p.errAt(p.cols[0], syntaxf("data after [End]: [End] must be the last keyword and nothing but comments may follow it"))
	}
	switch p.version {
	case 0:
		return p.errAt(p.cols[0], syntaxf("expected the option line (# <unit> <parameter> <format> R <n>) or [Version] before the data"))
	case 1:
		if p.noise {
			return p.noiseLine()
		}
		return p.networkLine()
	}
	switch {
	case p.refPending:
		return p.referenceValues(p.nums, p.cols)
	case p.state == stNetwork:
		return p.networkLine()
	case p.state == stNoise:
		return p.noiseLine()
	}
	return p.errAt(p.cols[0], syntaxf("numbers outside a data block: network data must follow [Network Data] and noise data [Noise Data]"))
}

// notNumber reports the word at line[start] that is not a number.
func (p *parser) notNumber(line []byte, start int) error {
	end := start
	for end < len(line) && charClass[line[end]] != clsBlank && charClass[line[end]] != clsBang {
		end++
	}
	tok := line[start:end]
	if len(tok) > 40 {
		tok = append(tok[:37:37], "..."...)
	}
	return p.errAt(start+1, syntaxf("expected a number, found %q", tok))
}

// parseNumber parses a decimal floating-point number (digits, sign, point,
// exponent; no hexadecimal, no Inf or NaN, no underscores) without copying
// the bytes.
func parseNumber(tok []byte) (float64, error) {
	for _, c := range tok {
		if charClass[c] != clsNum {
			return 0, syntaxf("expected a number, found %q", found(tok))
		}
	}
	return parseScanned(tok)
}

// parseScanned is parseNumber for a token whose bytes the scanner has
// already found to be number characters.
func parseScanned(tok []byte) (float64, error) {
	if v, ok := parseFast(tok); ok {
		return v, nil
	}
	// The string shares tok's memory; ParseFloat does not keep it, and the
	// buffer is not changed while the parser runs.
	s := unsafeString(tok)
	v, err := strconv.ParseFloat(s, 64)
	if err != nil {
		if ne, ok := err.(*strconv.NumError); ok && ne.Err == strconv.ErrRange {
			return 0, syntaxf("number %s is out of the range of float64", found(tok))
		}
		return 0, syntaxf("expected a number, found %q", found(tok))
	}
	return v, nil
}

// setLayout fills dest and mirror: where the k-th pair of a frequency point
// goes in the row-major matrix, and where its mirror image goes for a
// triangular matrix (−1 for none).
func (p *parser) setLayout(order2112 bool, matrix string) {
	n := p.ports
	p.pp = n * n
	p.dest, p.mirror = p.dest[:0], p.mirror[:0]
	switch matrix {
	case "lower", "upper":
		for i := range n {
			lo, hi := 0, i
			if matrix == "upper" {
				lo, hi = i, n-1
			}
			for j := lo; j <= hi; j++ {
				p.dest = append(p.dest, i*n+j)
				if i == j {
					p.mirror = append(p.mirror, -1)
				} else {
					p.mirror = append(p.mirror, j*n+i)
				}
			}
		}
	default:
		for k := range p.pp {
			p.dest = append(p.dest, k)
			p.mirror = append(p.mirror, -1)
		}
		if order2112 && n == 2 {
			p.dest[1], p.dest[2] = 2, 1 // N11 N21 N12 N22
		}
	}
	p.pairs = len(p.dest)
}

// prealloc reserves room for the network data from an estimate of the
// number of frequency points: the count of remaining lines that start with a
// number, divided by the lines one point usually takes.
func (p *parser) prealloc(ceiling int) {
	lines := 0
	rest := p.buf[p.off:]
	for len(rest) > 0 {
		i := 0
		for i < len(rest) && (rest[i] == ' ' || rest[i] == '\t') {
			i++
		}
		if i < len(rest) && charClass[rest[i]] == clsNum {
			lines++
		}
		j := bytes.IndexByte(rest[i:], '\n')
		if j < 0 {
			break
		}
		rest = rest[i+j+1:]
	}
	per := 0 // lines per point: 1 for 1- and 2-ports, else rows of ≤ 4 pairs
	for row := 0; row < p.ports && p.ports > 2; row++ {
		rowPairs := p.ports
		if p.pairs != p.pp { // triangle
			rowPairs = row + 1
		}
		per += (rowPairs + 3) / 4
	}
	est := min(lines/max(per, 1)+1, ceiling)
	p.freq = make([]float64, 0, est)
	p.data = make([]complex128, 0, est*p.pp)
}

// networkLine adds a line of network data.
func (p *parser) networkLine() error {
	nums, cols := p.nums, p.cols
	k := 0
	if !p.inFrame {
		if len(nums)%2 == 0 {
			return p.errAt(cols[0], syntaxf("a frequency point starts on a new line with the frequency and whole pairs, an odd count of numbers; this line has %d", len(nums)))
		}
		f := nums[0] * p.unit.mul
		if !(f >= 0) || math.IsInf(f, 0) {
			return p.errAt(cols[0], syntaxf("frequency %g %s must be finite and not negative", nums[0], p.unit.name))
		}
		if n := len(p.freq); n > 0 && f <= p.freq[n-1] {
			if p.version == 1 && p.ports == 2 {
				// TS-15: a frequency not above the last one starts the noise block.
				p.noise = true
				return p.noiseLine()
			}
			return p.errAt(cols[0], syntaxf("frequency %g %s does not increase from the point on line %d (%g %s); frequencies must increase strictly", nums[0], p.unit.name, p.lastLine, p.freq[n-1]/p.unit.mul, p.unit.name))
		}
		if p.version == 2 && len(p.freq) == p.nfreq {
			return p.errAt(cols[0], syntaxf("more frequency points than the %d that [Number of Frequencies] on line %d gives", p.nfreq, p.nfreqLine))
		}
		if len(p.freq) >= p.lim.MaxPoints {
			return p.errAt(cols[0], limitf("more than the MaxPoints limit of %d frequency points", p.lim.MaxPoints))
		}
		p.freq = append(p.freq, f)
		if n := len(p.data) + p.pp; n <= cap(p.data) {
			p.data = p.data[:n]
		} else {
			p.data = append(p.data, make([]complex128, p.pp)...)
		}
		p.inFrame, p.framePairs, p.frameLine, p.lastLine = true, 0, p.line, p.line
		k = 1
	} else if len(nums)%2 != 0 {
		return p.errAt(cols[0], syntaxf("the point at %g %s (line %d) still needs %d of its %d pairs, but this line has an odd count of numbers (%d), which starts a new point: values are missing", p.freq[len(p.freq)-1]/p.unit.mul, p.unit.name, p.frameLine, p.pairs-p.framePairs, p.pairs, len(nums)))
	}
	base := len(p.data) - p.pp
	frame := p.data[base:]
	for ; k < len(nums); k += 2 {
		if p.framePairs == p.pairs {
			return p.errAt(cols[k], syntaxf("the point at %g %s already has its %d pairs; the next point must start on a new line", p.freq[len(p.freq)-1]/p.unit.mul, p.unit.name, p.pairs))
		}
		v := p.pair(nums[k], nums[k+1])
		if !finite(v) {
			return p.errAt(cols[k], syntaxf("the pair %g, %g is not a finite complex number", nums[k], nums[k+1]))
		}
		frame[p.dest[p.framePairs]] = v
		if m := p.mirror[p.framePairs]; m >= 0 {
			frame[m] = v
		}
		p.framePairs++
	}
	if p.framePairs == p.pairs {
		p.inFrame = false
		return p.closeFrame(frame)
	}
	return nil
}

// pair converts one pair of the file's format to a complex number.
func (p *parser) pair(a, b float64) complex128 {
	switch p.format {
	case 'R':
		return complex(a, b)
	case 'M':
		return polar(a, b)
	}
	return polar(math.Pow(10, a/20), b)
}

// polar returns mag∠deg, exact at multiples of 90°.
func polar(mag, deg float64) complex128 {
	switch deg {
	case 0:
		return complex(mag, 0)
	case 90, -270:
		return complex(0, mag)
	case 180, -180:
		return complex(-mag, 0)
	case 270, -90:
		return complex(0, -mag)
	}
	s, c := math.Sincos(deg * (math.Pi / 180))
	return complex(mag*c, mag*s)
}

// finite reports whether both parts of v are finite.
func finite(v complex128) bool {
	return !math.IsInf(real(v), 0) && !math.IsInf(imag(v), 0) && !math.IsNaN(real(v)) && !math.IsNaN(imag(v))
}

// closeFrame converts a completed frequency point of Y or Z data to S, in
// place.
func (p *parser) closeFrame(frame []complex128) error {
	if p.param == 'S' {
		return nil
	}
	if p.version == 1 {
		// TS-14: version 1 stores Z/R and Y·R.
		r := complex(p.z0[0], 0)
		for i := range frame {
			if p.param == 'Z' {
				frame[i] *= r
			} else {
				frame[i] /= r
			}
		}
	}
	var err error
	if p.param == 'Z' {
		_, err = rfmath.ZToS(frame, frame, p.ports, p.z0)
	} else {
		_, err = rfmath.YToS(frame, frame, p.ports, p.z0)
	}
	if err == nil {
		for _, v := range frame {
			if !finite(v) {
				err = errors.New("the result is not finite")
				break
			}
		}
	}
	if err != nil {
		return &ParseError{File: p.name, Line: p.frameLine, Column: 1, Err: syntaxf("the %c-parameters at %g %s cannot be converted to S-parameters: %v", p.param, p.freq[len(p.freq)-1]/p.unit.mul, p.unit.name, err)}
	}
	return nil
}

// noiseLine adds a line of 2-port noise data.
//
// The effective noise resistance Rn is normalised to the reference
// resistance in version 1 files and is in ohms in version 2 files. The
// IBIS change list for the 2.0 draft removed the normalisation of network
// data, public copies of the 2.x specification's own 2-port noise example
// give Rn as 19 and 20 next to [Reference] 50 25 (plausible only as ohms, and
// ambiguous if normalised, since the ports' references differ), and several
// independent descriptions of the format say that 2.x files write Rn in
// ohms. The clause's own wording could not be read; this is the decision
// those sources support. A version 1 file with per-port R values is taken to
// normalise Rn to port 1's reference, the port the noise parameters refer to.
func (p *parser) noiseLine() error {
	nums, cols := p.nums, p.cols
	if len(nums) != 5 {
		return p.errAt(cols[0], syntaxf("a noise line holds 5 numbers (frequency, NFmin in dB, |Γopt|, angle of Γopt in degrees, Rn); found %d", len(nums)))
	}
	f := nums[0] * p.unit.mul
	if !(f >= 0) || math.IsInf(f, 0) {
		return p.errAt(cols[0], syntaxf("frequency %g %s must be finite and not negative", nums[0], p.unit.name))
	}
	if n := len(p.file.Noise); n > 0 && f <= p.file.Noise[n-1].FreqHz {
		return p.errAt(cols[0], syntaxf("noise frequency %g %s does not increase from the point on line %d (%g %s); frequencies must increase strictly", nums[0], p.unit.name, p.noiseLast, p.file.Noise[n-1].FreqHz/p.unit.mul, p.unit.name))
	}
	if p.version == 2 && len(p.file.Noise) == p.nnoise {
		return p.errAt(cols[0], syntaxf("more noise points than the %d that [Number of Noise Frequencies] on line %d gives", p.nnoise, p.nnoiseLine))
	}
	if len(p.file.Noise) >= p.lim.MaxPoints {
		return p.errAt(cols[0], limitf("more than the MaxPoints limit of %d noise points", p.lim.MaxPoints))
	}
	if !(nums[2] >= 0) {
		return p.errAt(cols[2], syntaxf("|Γopt| %g must not be negative", nums[2]))
	}
	if !(nums[4] >= 0) {
		return p.errAt(cols[4], syntaxf("Rn %g must not be negative", nums[4]))
	}
	rn := nums[4]
	if p.version == 1 {
		rn *= p.z0[0]
	}
	if math.IsInf(rn, 0) {
		return p.errAt(cols[4], syntaxf("Rn %g is out of range", nums[4]))
	}
	p.file.Noise = append(p.file.Noise, NoisePoint{FreqHz: f, NFminDB: nums[1], GammaOptMag: nums[2], GammaOptDeg: nums[3], RnOhm: rn})
	p.noiseLast = p.line
	return nil
}
