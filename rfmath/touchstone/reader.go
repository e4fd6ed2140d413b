package touchstone

import (
	"bytes"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
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

// withDefaults returns l with the default of every field that is not
// positive.
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

// Parser states of a version 2 file.
const (
	stHeader  = iota // before [Network Data]
	stNetwork        // inside [Network Data]
	stNoise          // inside [Noise Data]
	stEnded          // after [End]
)

// unitInfo is a frequency unit: its name as written and its size in Hz.
type unitInfo struct {
	name string
	mul  float64
}

// units are the frequency units of the option line, by lower-case name.
var units = map[string]unitInfo{
	"hz":  {"Hz", 1},
	"khz": {"kHz", 1e3},
	"mhz": {"MHz", 1e6},
	"ghz": {"GHz", 1e9},
}

// parser reads one Touchstone file held whole in buf, line by line.
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

// errAt reports err at column col of the current line.
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

// run reads every line of the input and returns the file.
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

// handle reads one line: a line of the information block, a comment, the
// option line, a keyword or numbers.
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

// badByte reports the byte c at line[i], which a Touchstone file may not
// hold.
func (p *parser) badByte(i int, c byte) error {
	return p.errAt(i+1, syntaxf("byte 0x%02X is not allowed: a Touchstone file holds printable ASCII (0x20–0x7E), tabs and line ends only", c))
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

// startV1Data sets up the network data of a version 1 file once its
// option line is read: the references of the ports and the layout of a
// frequency point.
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

// field is a blank-separated word of a line and the column it starts at.
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
