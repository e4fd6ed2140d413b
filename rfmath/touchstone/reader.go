package touchstone

import (
	"bytes"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"

	"matchbench/rfmath"
)

// Limits bound what [Read], [ReadFile] and [ReadCSV] accept. A field that is
// zero or negative takes its default:
//
//	MaxBytes   64 MiB (67,108,864 bytes) of input
//	MaxPorts   16 ports
//	MaxPoints  2,000,000 frequency points (network and noise counted apart)
//
// Exceeding a limit gives a *[ParseError] wrapping [ErrLimit] whose message
// names the limit and its value.
type Limits struct {
	MaxBytes  int64
	MaxPorts  int
	MaxPoints int
}

// DefaultLimits holds the default of every limit.
var DefaultLimits = Limits{MaxBytes: 64 << 20, MaxPorts: 16, MaxPoints: 2_000_000}

func (l Limits) withDefaults() Limits {
	if l.MaxBytes <= 0 {
		l.MaxBytes = DefaultLimits.MaxBytes
	}
	if l.MaxPorts <= 0 {
		l.MaxPorts = DefaultLimits.MaxPorts
	}
	if l.MaxPoints <= 0 {
		l.MaxPoints = DefaultLimits.MaxPoints
	}
	return l
}

// File is a Touchstone file as read.
type File struct {
	// Sweep always holds S-parameters at the file's reference resistances,
	// whatever parameter the file used.
	Sweep *rfmath.Sweep
	// Version is "1.1" for a file without [Version] (the original syntax,
	// including the per-port R form), else "2.0" or "2.1".
	Version string
	// Param is the parameter type found in the file: 'S', 'Y' or 'Z'.
	Param byte
	// Format is the number format found in the file: "RI", "MA" or "DB".
	Format string
	// FreqUnit is the frequency unit of the file: "Hz", "kHz", "MHz" or "GHz".
	FreqUnit string
	// Comments holds the text after each '!' (without the '!'), in file
	// order, whether the comment had a line of its own or followed data.
	Comments []string
	// Noise holds the 2-port noise parameters, if the file had any. They are
	// kept apart from the network data.
	Noise []NoisePoint
}

// NoisePoint is one line of 2-port noise data: the minimum noise figure, the
// source reflection coefficient that gives it (as magnitude and angle, against
// the reference resistance of port 1) and the effective noise resistance in
// ohms.
type NoisePoint struct {
	FreqHz      float64
	NFminDB     float64
	GammaOptMag float64
	GammaOptDeg float64
	RnOhm       float64
}

// PortsFromName returns the port count that a version 1 file name gives by
// its extension .sNp (case-insensitive, N ≥ 1 without leading zeros, any
// directory ignored). It returns false for any other name, such as the .ts
// suggested for version 2 files.
func PortsFromName(name string) (int, bool) {
	ext := strings.ToLower(filepath.Ext(name))
	if len(ext) < 4 || ext[1] != 's' || ext[len(ext)-1] != 'p' {
		return 0, false
	}
	digits := ext[2 : len(ext)-1]
	if digits[0] == '0' || len(digits) > 6 {
		return 0, false
	}
	n := 0
	for i := 0; i < len(digits); i++ {
		c := digits[i]
		if c < '0' || c > '9' {
			return 0, false
		}
		n = n*10 + int(c-'0')
	}
	return n, true
}

// ReadFile opens path and reads it with [Read], using the path as the name.
// A file larger than lim.MaxBytes is refused before it is read.
func ReadFile(path string, lim Limits) (*File, error) {
	fh, err := os.Open(path)
	if err != nil {
		return nil, err
	}
	defer fh.Close()
	return Read(fh, path, lim)
}

// Read reads a Touchstone file of version 1.x, 2.0 or 2.1 from r. The name is
// used in errors and, for a version 1 file, gives the port count through its
// extension (see [PortsFromName]); a version 2 file takes the count from
// [Number of Ports]. Bad input gives a *[ParseError] and no File. Errors from
// r itself are returned wrapped, not as a ParseError.
func Read(r io.Reader, name string, lim Limits) (*File, error) {
	lim = lim.withDefaults()
	buf, err := readAll(r, name, lim.MaxBytes)
	if err != nil {
		return nil, err
	}
	p := &parser{name: name, buf: buf, lim: lim}
	return p.run()
}

// readAll reads at most max bytes from r and refuses more. When r can tell
// its size (bytes.Reader, strings.Reader, bytes.Buffer, os.File) the buffer
// is allocated once at that size, and a larger size is refused unread.
func readAll(r io.Reader, name string, max int64) ([]byte, error) {
	size := int64(-1)
	switch v := r.(type) {
	case interface{ Len() int }:
		size = int64(v.Len())
	case interface{ Stat() (os.FileInfo, error) }:
		if st, err := v.Stat(); err == nil && st.Mode().IsRegular() {
			size = st.Size()
		}
	}
	tooBig := func() error {
		return &ParseError{File: name, Err: limitf("input is larger than the MaxBytes limit of %d bytes", max)}
	}
	if size > max {
		return nil, tooBig() // refused before reading
	}
	var buf []byte
	if size >= 0 {
		buf = make([]byte, 0, min(size, max)+1) // +1 to see EOF (or excess) without growing
	}
	buf, err := readFull(io.LimitReader(r, max+1), buf)
	if err != nil {
		return nil, fmt.Errorf("touchstone: reading %s: %w", name, err)
	}
	if int64(len(buf)) > max {
		return nil, tooBig()
	}
	return buf, nil
}

// readFull appends all of r to buf, as io.ReadAll does.
func readFull(r io.Reader, buf []byte) ([]byte, error) {
	if cap(buf) == 0 {
		buf = make([]byte, 0, 512)
	}
	for {
		n, err := r.Read(buf[len(buf):cap(buf)])
		buf = buf[:len(buf)+n]
		if err == io.EOF {
			return buf, nil
		}
		if err != nil {
			return nil, err
		}
		if len(buf) == cap(buf) {
			buf = append(buf, 0)[:len(buf)]
		}
	}
}

// Byte classes for the scanner.
const (
	clsBad   = iota // not allowed anywhere: controls, DEL, bytes > 0x7E
	clsBlank        // space, tab
	clsNum          // digits, sign, point, exponent letter
	clsText         // other printable ASCII
	clsBang         // '!' starts a comment
)

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

// Parser states of a version 2 file.
const (
	stHeader  = iota // before [Network Data]
	stNetwork        // inside [Network Data]
	stNoise          // inside [Noise Data]
	stEnded          // after [End]
)

type unitInfo struct {
	name string
	mul  float64
}

var units = map[string]unitInfo{
	"hz":  {"Hz", 1},
	"khz": {"kHz", 1e3},
	"mhz": {"MHz", 1e6},
	"ghz": {"GHz", 1e9},
}

type parser struct {
	name string
	buf  []byte
	off  int // start of the next line
	line int // number of the current line
	lim  Limits

	file File

	version int // 0 until the first non-comment line, then 1 or 2
	ver21   bool

	haveOpt bool
	unit    unitInfo
	param   byte
	format  byte // 'R', 'M', 'D'
	refs    []float64
	refLine int

	ports int
	z0    []float64

	// Version 2 keyword state.
	state      int
	nfreq      int // from [Number of Frequencies]; 0 if not given
	nnoise     int // from [Number of Noise Frequencies]; 0 if not given
	order      string
	matrix     string
	keyRefs    []float64 // from [Reference]
	refPending bool      // [Reference] values continue on the next lines
	refKwLine  int
	seen       map[string]int // keyword → line where it was first seen
	inInfo     bool
	infoLine   int
	nfreqLine  int
	nnoiseLine int

	// Network data.
	freq       []float64
	data       []complex128
	pp         int // ports²
	pairs      int // pairs per frequency point
	dest       []int
	mirror     []int
	inFrame    bool
	framePairs int
	frameLine  int
	lastLine   int // line of the last frequency point

	// Noise data.
	noise     bool // version 1: the noise block has started
	noiseLast int  // line of the last noise point

	// Numbers of the current line and the column of each.
	nums []float64
	cols []int
}

func (p *parser) errAt(col int, err error) error {
	return &ParseError{File: p.name, Line: p.line, Column: col, Err: err}
}

// errEOF reports an error found at the end of the input, at the last line.
func (p *parser) errEOF(err error) error {
	return &ParseError{File: p.name, Line: max(p.line, 1), Column: 1, Err: err}
}

// next returns the next line without its terminator. Lines end at LF, CR LF
// or a lone CR (rewritten to LF before parsing starts).
func (p *parser) next() ([]byte, bool) {
	if p.off >= len(p.buf) {
		return nil, false
	}
	rest := p.buf[p.off:]
	j := bytes.IndexByte(rest, '\n')
	var line []byte
	if j < 0 {
		line = rest
		p.off = len(p.buf)
	} else {
		line = rest[:j]
		p.off += j + 1
	}
	if n := len(line); n > 0 && line[n-1] == '\r' {
		line = line[:n-1]
	}
	p.line++
	return line, true
}

func (p *parser) run() (*File, error) {
	// A lone CR ends a line too (the specification allows CR or CR LF).
	for i := bytes.IndexByte(p.buf, '\r'); i >= 0; {
		if i+1 >= len(p.buf) || p.buf[i+1] != '\n' {
			p.buf[i] = '\n'
		}
		k := bytes.IndexByte(p.buf[i+1:], '\r')
		if k < 0 {
			break
		}
		i += 1 + k
	}
	for {
		line, ok := p.next()
		if !ok {
			break
		}
		if err := p.handle(line); err != nil {
			return nil, err
		}
	}
	if err := p.finish(); err != nil {
		return nil, err
	}
	return &p.file, nil
}

func (p *parser) handle(line []byte) error {
	if p.inInfo {
		content, err := p.textLine(line)
		if err != nil {
			return err
		}
		t := bytes.TrimLeft(content, " \t")
		if len(t) > 0 && t[0] == '[' {
			if end := bytes.IndexByte(t, ']'); end > 0 && keywordName(t[1:end]) == "end information" {
				p.inInfo = false
			}
		}
		return nil
	}
	i := 0
	for i < len(line) && (line[i] == ' ' || line[i] == '\t') {
		i++
	}
	if i == len(line) {
		return nil
	}
	switch line[i] {
	case '!':
		_, err := p.textLine(line)
		return err
	case '#':
		return p.optionLine(line, i)
	case '[':
		return p.keywordLine(line, i)
	}
	return p.numberLine(line, i)
}

// textLine checks every byte of a line that is not numeric data, records its
// comment and returns the part before the comment.
func (p *parser) textLine(line []byte) ([]byte, error) {
	for i, c := range line {
		switch charClass[c] {
		case clsBad:
			return nil, p.badByte(i, c)
		case clsBang:
			if err := p.comment(line, i); err != nil {
				return nil, err
			}
			return line[:i], nil
		}
	}
	return line, nil
}

// comment records the comment that starts with the '!' at line[i].
func (p *parser) comment(line []byte, i int) error {
	for k := i + 1; k < len(line); k++ {
		if c := line[k]; charClass[c] == clsBad {
			return p.badByte(k, c)
		}
	}
	p.file.Comments = append(p.file.Comments, string(line[i+1:]))
	return nil
}

func (p *parser) badByte(i int, c byte) error {
	return p.errAt(i+1, syntaxf("byte 0x%02X is not allowed: a Touchstone file holds printable ASCII (0x20–0x7E), tabs and line ends only", c))
}

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

// optionLine handles "# <unit> <parameter> <format> R <n>…".
func (p *parser) optionLine(line []byte, i int) error {
	content, err := p.textLine(line)
	if err != nil {
		return err
	}
	if p.state == stEnded {
		return p.errAt(i+1, syntaxf("option line after [End]: [End] must be the last keyword and nothing but comments may follow it"))
	}
	if p.haveOpt {
		return nil // only the first option line counts
	}
	switch p.version {
	case 0:
		if err := p.startV1(i + 1); err != nil {
			return err
		}
	case 2:
		if len(p.seen) > 1 {
			return p.errAt(i+1, syntaxf("the option line must come right after [Version], before any other keyword"))
		}
	}
	p.haveOpt = true
	p.refLine = p.line
	fields := splitFields(content, i+1)
	var haveUnit, haveParam, haveFormat, haveR bool
	p.unit, p.param, p.format = units["ghz"], 'S', 'M'
	for k := 0; k < len(fields); k++ {
		f := fields[k]
		low := strings.ToLower(f.text)
		if u, ok := units[low]; ok {
			if haveUnit {
				return p.errAt(f.col, syntaxf("the option line gives the frequency unit twice (%s)", found(f.text)))
			}
			p.unit, haveUnit = u, true
			continue
		}
		switch low {
		case "s", "y", "z":
			if haveParam {
				return p.errAt(f.col, syntaxf("the option line gives the parameter type twice (%s)", found(f.text)))
			}
			p.param, haveParam = low[0]-'a'+'A', true
		case "h", "g":
			return p.errAt(f.col, unsupportedf("%s-parameters are not supported: matchbench reads S-, Y- and Z-parameters", found(strings.ToUpper(low))))
		case "ri", "ma", "db":
			if haveFormat {
				return p.errAt(f.col, syntaxf("the option line gives the format twice (%s)", found(f.text)))
			}
			p.format, haveFormat = map[string]byte{"ri": 'R', "ma": 'M', "db": 'D'}[low], true
		case "r":
			if haveR {
				return p.errAt(f.col, syntaxf("the option line gives R twice"))
			}
			haveR = true
			for k+1 < len(fields) {
				v, err := parseNumber([]byte(fields[k+1].text))
				if err != nil {
					break
				}
				if !(v > 0) || math.IsInf(v, 0) {
					return p.errAt(fields[k+1].col, syntaxf("reference resistance %s must be a positive number of ohms", found(fields[k+1].text)))
				}
				k++
				p.refs = append(p.refs, v)
			}
			if len(p.refs) == 0 {
				return p.errAt(f.col, syntaxf("R must be followed by the reference resistance in ohms"))
			}
		default:
			return p.errAt(f.col, syntaxf("unknown option-line field %q: expected a frequency unit (Hz, kHz, MHz, GHz), a parameter (S, Y, Z), a format (RI, MA, DB) or R followed by the reference resistance", found(f.text)))
		}
	}
	if !haveR {
		p.refs = []float64{50}
	}
	p.file.Param = p.param
	p.file.Format = map[byte]string{'R': "RI", 'M': "MA", 'D': "DB"}[p.format]
	p.file.FreqUnit = p.unit.name
	if len(p.refs) > 1 {
		if p.version == 2 && !p.ver21 {
			return p.errAt(i+1, syntaxf("per-port reference resistances on the option line need [Version] 2.1; version 2.0 uses [Reference]"))
		}
		if p.version == 1 && len(p.refs) != p.ports {
			return p.errAt(i+1, syntaxf("R gives %d reference resistances; a %d-port file needs 1 or %d", len(p.refs), p.ports, p.ports))
		}
	}
	if p.version == 1 {
		return p.startV1Data()
	}
	return nil
}

// startV1 sets up a version 1 file, whose port count comes from its name.
func (p *parser) startV1(col int) error {
	p.version = 1
	p.file.Version = "1.1"
	n, ok := PortsFromName(p.name)
	if !ok {
		return p.errAt(col, syntaxf("a file without [Version] is version 1, whose port count comes from the file name: expected a name ending in .s1p, .s2p, … .sNp, got %q", found(filepath.Base(p.name))))
	}
	if n > p.lim.MaxPorts {
		return p.errAt(col, limitf("the file name gives %d ports, more than the MaxPorts limit of %d", n, p.lim.MaxPorts))
	}
	p.ports = n
	return nil
}

func (p *parser) startV1Data() error {
	if len(p.refs) > 1 && p.param != 'S' {
		return p.errAt(1, unsupportedf("%c-parameters with per-port reference resistances in a version 1 file: the normalisation of such data is not defined here; use S-parameters or a version 2 file", p.param))
	}
	p.z0 = make([]float64, p.ports)
	for i := range p.z0 {
		p.z0[i] = p.refs[min(i, len(p.refs)-1)]
	}
	p.setLayout(p.ports == 2, "full")
	p.prealloc(p.lim.MaxPoints)
	return nil
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

type field struct {
	text string
	col  int
}

// splitFields splits s at blanks; columns count from 1 at s[0] of the line,
// and scanning starts at index from.
func splitFields(s []byte, from int) []field {
	var out []field
	i := from
	for i < len(s) {
		if s[i] == ' ' || s[i] == '\t' {
			i++
			continue
		}
		j := i
		for j < len(s) && s[j] != ' ' && s[j] != '\t' {
			j++
		}
		out = append(out, field{string(s[i:j]), i + 1})
		i = j
	}
	return out
}

// keywordName lower-cases a keyword and collapses its inner blanks.
func keywordName(b []byte) string {
	return strings.ToLower(strings.Join(strings.Fields(string(b)), " "))
}

var knownKeywords = "[Version], [Number of Ports], [Two-Port Data Order], [Number of Frequencies], [Number of Noise Frequencies], [Reference], [Matrix Format], [Mixed-Mode Order], [Network Data], [Noise Data], [Begin Information], [End Information], [End]"

// keyword is a version 2 keyword line: its name (lower case, inner blanks
// collapsed), the fields after its ']' and the column of its '['.
type keyword struct {
	name string
	args []field
	col  int
}

// keywordLine handles a version 2 keyword: it checks that the keyword may
// stand where it does and hands it to the function of its name.
func (p *parser) keywordLine(line []byte, i int) error {
	content, err := p.textLine(line)
	if err != nil {
		return err
	}
	end := bytes.IndexByte(content, ']')
	if end < 0 {
		return p.errAt(i+1, syntaxf("expected ']' closing the keyword"))
	}
	k := keyword{name: keywordName(content[i+1 : end]), args: splitFields(content, end+1), col: i + 1}
	if err := p.keywordInPlace(k); err != nil {
		return err
	}
	if err := p.keywordInOrder(k); err != nil {
		return err
	}
	if p.seen == nil {
		p.seen = make(map[string]int)
	}
	if _, dup := p.seen[k.name]; !dup {
		p.seen[k.name] = p.line
	}

	switch k.name {
	case "version":
		return p.versionKeyword(k)
	case "number of ports":
		return p.portsKeyword(k)
	case "two-port data order":
		return p.dataOrderKeyword(k)
	case "number of frequencies", "number of noise frequencies":
		return p.countKeyword(k)
	case "reference":
		return p.referenceKeyword(k)
	case "matrix format":
		return p.matrixKeyword(k)
	case "mixed-mode order":
		return p.errAt(k.col, unsupportedf("mixed-mode data ([Mixed-Mode Order]) are not supported"))
	case "network data":
		if err := p.noArgs(k); err != nil {
			return err
		}
		return p.startNetwork(k.col)
	case "noise data":
		return p.noiseDataKeyword(k)
	case "end":
		return p.endKeyword(k)
	case "begin information":
		if err := p.noArgs(k); err != nil {
			return err
		}
		p.inInfo, p.infoLine = true, p.line
		return nil
	case "end information":
		return p.errAt(k.col, syntaxf("[End Information] without [Begin Information]"))
	}
	return p.errAt(k.col, syntaxf("unknown keyword [%s]; expected one of %s", found(k.name), knownKeywords))
}

// keywordInPlace checks that the state of the file allows a keyword: a
// version 2 file that has started with [Version] and not ended, and no
// [Reference] or frequency point left incomplete.
func (p *parser) keywordInPlace(k keyword) error {
	name, col := k.name, k.col
	switch p.version {
	case 0:
		if name != "version" {
			return p.errAt(col, syntaxf("a file with keywords must start with [Version] 2.0 or 2.1, found [%s]", found(name)))
		}
	case 1:
		return p.errAt(col, syntaxf("keyword [%s] in a version 1 file (no [Version] before the option line): a version 2 file must start with [Version]", found(name)))
	}
	if p.state == stEnded {
		return p.errAt(col, syntaxf("keyword [%s] after [End]: [End] must be the last keyword", found(name)))
	}
	if p.refPending {
		return p.errAt(col, syntaxf("[Reference] on line %d needs %d values, one per port; found %d", p.refKwLine, p.ports, len(p.keyRefs)))
	}
	if p.inFrame {
		return p.errAt(col, syntaxf("the point at %g %s (line %d) still needs %d of its %d pairs", p.freq[len(p.freq)-1]/p.unit.mul, p.unit.name, p.frameLine, p.pairs-p.framePairs, p.pairs))
	}
	return nil
}

// keywordInOrder checks the keyword's place among the others: once only
// (but for [Version], checked by its own function, and the information
// block's), after the option line, after [Number of Ports] where it needs
// the port count, and before [Network Data] where it belongs to the
// header.
func (p *parser) keywordInOrder(k keyword) error {
	name, col := k.name, k.col
	if name != "version" && name != "begin information" && name != "end information" {
		if prev, dup := p.seen[name]; dup {
			return p.errAt(col, syntaxf("[%s] appears twice (first on line %d)", name, prev))
		}
	}
	if name == "version" {
		return nil
	}
	if !p.haveOpt {
		return p.errAt(col, syntaxf("expected the option line (# <unit> <parameter> <format> R <n>) after [Version], found [%s]", found(name)))
	}
	switch name {
	case "number of ports", "begin information", "end information", "end":
	default:
		if p.ports == 0 {
			return p.errAt(col, syntaxf("[%s] must follow [Number of Ports]", name))
		}
	}
	switch name {
	case "number of ports", "two-port data order", "number of frequencies", "number of noise frequencies", "reference", "matrix format", "mixed-mode order", "network data":
		if p.state != stHeader {
			return p.errAt(col, syntaxf("[%s] must come before [Network Data]", name))
		}
	}
	return nil
}

// noArgs checks that keyword k has no argument.
func (p *parser) noArgs(k keyword) error {
	if len(k.args) > 0 {
		return p.errAt(k.args[0].col, syntaxf("[%s] takes no argument, found %q", found(k.name), found(k.args[0].text)))
	}
	return nil
}

// oneArg returns the one argument of keyword k.
func (p *parser) oneArg(k keyword) (field, error) {
	if len(k.args) != 1 {
		return field{}, p.errAt(k.col, syntaxf("[%s] takes one argument, found %d", k.name, len(k.args)))
	}
	return k.args[0], nil
}

// versionKeyword handles [Version] 2.0 or 2.1, which makes the file a
// version 2 file.
func (p *parser) versionKeyword(k keyword) error {
	if p.version != 0 {
		return p.errAt(k.col, syntaxf("[Version] appears twice"))
	}
	a, err := p.oneArg(k)
	if err != nil {
		return err
	}
	if a.text != "2.0" && a.text != "2.1" {
		return p.errAt(a.col, syntaxf("expected [Version] 2.0 or 2.1, found %q", found(a.text)))
	}
	p.version, p.ver21 = 2, a.text == "2.1"
	p.file.Version = a.text
	return nil
}

// portsKeyword handles [Number of Ports]: a positive whole number within
// the MaxPorts limit that agrees with the option line's reference
// resistances.
func (p *parser) portsKeyword(k keyword) error {
	a, err := p.oneArg(k)
	if err != nil {
		return err
	}
	n, err := strconv.Atoi(a.text)
	if err != nil || n < 1 {
		return p.errAt(a.col, syntaxf("expected a positive whole number of ports, found %q", found(a.text)))
	}
	if n > p.lim.MaxPorts {
		return p.errAt(a.col, limitf("%d ports is more than the MaxPorts limit of %d", n, p.lim.MaxPorts))
	}
	if len(p.refs) > 1 && len(p.refs) != n {
		return p.errAt(a.col, syntaxf("the option line on line %d gives %d reference resistances; a %d-port file needs 1 or %d", p.refLine, len(p.refs), n, n))
	}
	p.ports = n
	return nil
}

// dataOrderKeyword handles [Two-Port Data Order] 12_21 or 21_12, allowed
// only in a 2-port file.
func (p *parser) dataOrderKeyword(k keyword) error {
	if p.ports != 2 {
		return p.errAt(k.col, syntaxf("[Two-Port Data Order] is allowed only in 2-port files; this file has %d ports", p.ports))
	}
	a, err := p.oneArg(k)
	if err != nil {
		return err
	}
	if a.text != "12_21" && a.text != "21_12" {
		return p.errAt(a.col, syntaxf("expected [Two-Port Data Order] 12_21 or 21_12, found %q", found(a.text)))
	}
	p.order = a.text
	return nil
}

// countKeyword handles [Number of Frequencies] and [Number of Noise
// Frequencies] (only in a 2-port file): a positive whole number within the
// MaxPoints limit.
func (p *parser) countKeyword(k keyword) error {
	if k.name == "number of noise frequencies" && p.ports != 2 {
		return p.errAt(k.col, syntaxf("noise data are defined only for 2-port networks; this file has %d ports", p.ports))
	}
	a, err := p.oneArg(k)
	if err != nil {
		return err
	}
	n, err := strconv.Atoi(a.text)
	if err != nil || n < 1 {
		return p.errAt(a.col, syntaxf("expected a positive whole number of frequencies, found %q", found(a.text)))
	}
	if n > p.lim.MaxPoints {
		return p.errAt(a.col, limitf("%d frequencies is more than the MaxPoints limit of %d", n, p.lim.MaxPoints))
	}
	if k.name == "number of frequencies" {
		p.nfreq, p.nfreqLine = n, p.line
	} else {
		p.nnoise, p.nnoiseLine = n, p.line
	}
	return nil
}

// referenceKeyword handles [Reference]: the values on its line, which may
// continue on the lines after it (see [parser.referenceValues]).
func (p *parser) referenceKeyword(k keyword) error {
	p.refPending, p.refKwLine = true, p.line
	nums, cols := make([]float64, 0, len(k.args)), make([]int, 0, len(k.args))
	for _, a := range k.args {
		v, err := parseNumber([]byte(a.text))
		if err != nil {
			return p.errAt(a.col, err)
		}
		nums, cols = append(nums, v), append(cols, a.col)
	}
	return p.referenceValues(nums, cols)
}

// matrixKeyword handles [Matrix Format] Full, Lower or Upper (any case).
func (p *parser) matrixKeyword(k keyword) error {
	a, err := p.oneArg(k)
	if err != nil {
		return err
	}
	m := strings.ToLower(a.text)
	if m != "full" && m != "lower" && m != "upper" {
		return p.errAt(a.col, syntaxf("expected [Matrix Format] Full, Lower or Upper, found %q", found(a.text)))
	}
	p.matrix = m
	return nil
}

// noiseDataKeyword handles [Noise Data]: it ends the network data, which
// must hold their count of points, and needs [Number of Noise Frequencies].
func (p *parser) noiseDataKeyword(k keyword) error {
	if err := p.noArgs(k); err != nil {
		return err
	}
	if p.state != stNetwork {
		return p.errAt(k.col, syntaxf("[Noise Data] must follow the network data"))
	}
	if err := p.endNetwork(k.col); err != nil {
		return err
	}
	if p.nnoise == 0 {
		return p.errAt(k.col, syntaxf("[Noise Data] needs [Number of Noise Frequencies] before [Network Data]"))
	}
	p.state = stNoise
	return nil
}

// endKeyword handles [End]: the network and noise data must hold the
// counts of points their keywords gave.
func (p *parser) endKeyword(k keyword) error {
	if err := p.noArgs(k); err != nil {
		return err
	}
	switch p.state {
	case stHeader:
		return p.errAt(k.col, syntaxf("[End] before [Network Data]: the file has no network data"))
	case stNetwork:
		if err := p.endNetwork(k.col); err != nil {
			return err
		}
		if p.nnoise > 0 {
			return p.errAt(k.col, syntaxf("[Number of Noise Frequencies] on line %d gives %d noise points, but there is no [Noise Data]", p.nnoiseLine, p.nnoise))
		}
	case stNoise:
		if n := len(p.file.Noise); n != p.nnoise {
			return p.errAt(k.col, syntaxf("[Number of Noise Frequencies] on line %d gives %d noise points, but [Noise Data] has %d", p.nnoiseLine, p.nnoise, n))
		}
	}
	p.state = stEnded
	return nil
}

// referenceValues adds values of [Reference], which may continue on the
// lines after the keyword.
func (p *parser) referenceValues(nums []float64, cols []int) error {
	for k, v := range nums {
		if len(p.keyRefs) == p.ports {
			return p.errAt(cols[k], syntaxf("[Reference] on line %d has more than %d values, one per port", p.refKwLine, p.ports))
		}
		if !(v > 0) || math.IsInf(v, 0) {
			return p.errAt(cols[k], syntaxf("reference resistance %g must be a positive number of ohms", v))
		}
		p.keyRefs = append(p.keyRefs, v)
	}
	if len(p.keyRefs) == p.ports {
		p.refPending = false
	}
	return nil
}

// startNetwork checks the header and sets up the network data of a version 2
// file.
func (p *parser) startNetwork(col int) error {
	if p.nfreq == 0 {
		return p.errAt(col, syntaxf("[Network Data] needs [Number of Frequencies] before it"))
	}
	if p.ports == 2 && p.order == "" {
		return p.errAt(col, syntaxf("a 2-port file needs [Two-Port Data Order] 12_21 or 21_12 before [Network Data]"))
	}
	p.z0 = make([]float64, p.ports)
	for i := range p.z0 {
		if p.keyRefs != nil {
			p.z0[i] = p.keyRefs[i] // [Reference] overrides the option line
		} else {
			p.z0[i] = p.refs[min(i, len(p.refs)-1)]
		}
	}
	p.setLayout(p.order == "21_12", p.matrix)
	p.prealloc(p.nfreq)
	p.state = stNetwork
	return nil
}

// endNetwork checks the count of network points at the end of the block.
func (p *parser) endNetwork(col int) error {
	if n := len(p.freq); n != p.nfreq {
		return p.errAt(col, syntaxf("[Number of Frequencies] on line %d gives %d points, but the network data have %d", p.nfreqLine, p.nfreq, n))
	}
	return nil
}

// finish checks the end of the input and builds the result.
func (p *parser) finish() error {
	switch p.version {
	case 0:
		return p.errEOF(syntaxf("no data: expected an option line (# <unit> <parameter> <format> R <n>) or [Version] 2.0/2.1 and network data"))
	case 2:
		if p.inInfo {
			return p.errEOF(syntaxf("[Begin Information] on line %d has no [End Information]", p.infoLine))
		}
		if p.refPending {
			return p.errEOF(syntaxf("[Reference] on line %d needs %d values, one per port; found %d", p.refKwLine, p.ports, len(p.keyRefs)))
		}
	}
	if p.inFrame {
		return p.errEOF(syntaxf("the input ends inside the point at %g %s (line %d), which still needs %d of its %d pairs", p.freq[len(p.freq)-1]/p.unit.mul, p.unit.name, p.frameLine, p.pairs-p.framePairs, p.pairs))
	}
	if p.version == 2 && p.state != stEnded {
		return p.errEOF(syntaxf("expected [End] at the end of a version 2 file"))
	}
	if len(p.freq) == 0 {
		return p.errEOF(syntaxf("no network data"))
	}
	s := &rfmath.Sweep{FreqHz: p.freq, Ports: p.ports, Z0: p.z0, Data: p.data}
	if err := s.Validate(); err != nil {
		return p.errEOF(syntaxf("%v", err))
	}
	p.file.Sweep = s
	return nil
}
