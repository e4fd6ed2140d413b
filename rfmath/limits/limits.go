package limits

import (
	"bufio"
	"errors"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"
	"unicode"
	"unicode/utf8"

	"matchbench/rfmath"
	"matchbench/rfmath/units"
)

// Kind is the kind of a band's limit.
type Kind int

const (
	// ReturnLoss limits are a least return loss in dB.
	ReturnLoss Kind = iota
	// VSWR limits are a greatest VSWR.
	VSWR
	// Power limits are a least share of the available power that reaches
	// the load.
	Power
)

// String returns "rl", "vswr" or "power", the keyword of the file format.
func (k Kind) String() string {
	switch k {
	case ReturnLoss:
		return "rl"
	case VSWR:
		return "vswr"
	case Power:
		return "power"
	}
	return fmt.Sprintf("Kind(%d)", int(k))
}

// Band is one band of a limit file.
type Band struct {
	LoHz, HiHz float64
	Kind       Kind
	// Value is the least return loss in dB (ReturnLoss), the greatest
	// VSWR (VSWR) or the least share of the available power at the load,
	// in (0, 1] (Power).
	Value float64
	// Label names the band; it may be empty.
	Label string
	// Line is the line of the file the band was read from, 0 if it was not
	// read from a file.
	Line int
}

// maxRL is the largest return-loss limit accepted, in dB.
const maxRL = 100

// MinReturnLossDB returns the least return loss the band allows, in dB; 0
// for a power limit.
func (b Band) MinReturnLossDB() float64 {
	switch b.Kind {
	case VSWR:
		return rfmath.ReturnLossDB(rfmath.GammaMagFromVSWR(b.Value))
	case Power:
		return 0
	}
	return b.Value
}

// Requirement returns what the band asks, as [rfmath.Requirement].
func (b Band) Requirement() rfmath.Requirement {
	if b.Kind == Power {
		return rfmath.Requirement{MinPowerToLoad: b.Value}
	}
	return rfmath.Requirement{MinReturnLossDB: b.MinReturnLossDB()}
}

// MaxGammaMag returns the greatest |Γ| the band allows; for a power limit,
// the |Γ| of a load that takes exactly that share, √(1 − share).
func (b Band) MaxGammaMag() float64 {
	switch b.Kind {
	case VSWR:
		return rfmath.GammaMagFromVSWR(b.Value)
	case Power:
		return math.Sqrt(1 - b.Value)
	}
	return rfmath.GammaMagFromReturnLossDB(b.Value)
}

// String describes the band: "863 MHz–870 MHz: RL ≥ 10 dB (EU SRD)".
func (b Band) String() string {
	var lim string
	switch b.Kind {
	case VSWR:
		lim = "VSWR ≤ " + strconv.FormatFloat(b.Value, 'g', -1, 64)
	case Power:
		lim = "power to the load ≥ " + formatShare(b.Value)
	default:
		lim = "RL ≥ " + strconv.FormatFloat(b.Value, 'g', -1, 64) + " dB"
	}
	s := units.FormatFrequency(b.LoHz, 6) + "–" + units.FormatFrequency(b.HiHz, 6) + ": " + lim
	if b.Label != "" {
		s += " (" + b.Label + ")"
	}
	return s
}

// Validate returns an error wrapping [ErrValue] for a band that a limit
// file could not hold: frequencies not finite and non-negative, LO > HI, an
// unknown kind, a return loss not in (0, 100] dB, a VSWR not finite and
// above 1, or a label with a '#', a control character (a tab among them),
// invalid UTF-8, a space at either end or two spaces in a row.
func (b Band) Validate() error {
	switch {
	case !finiteNonNeg(b.LoHz) || !finiteNonNeg(b.HiHz):
		return fmt.Errorf("%w: frequencies %g and %g Hz must be finite and not negative", ErrValue, b.LoHz, b.HiHz)
	case b.LoHz > b.HiHz:
		return fmt.Errorf("%w: the band runs from %s down to %s; write the lower frequency first", ErrValue,
			units.FormatFrequency(b.LoHz, 9), units.FormatFrequency(b.HiHz, 9))
	}
	if err := checkValue(b.Kind, b.Value); err != nil {
		return err
	}
	return checkLabel(b.Label)
}

func finiteNonNeg(f float64) bool { return f >= 0 && !math.IsInf(f, 1) }

func checkValue(k Kind, v float64) error {
	switch k {
	case ReturnLoss:
		if !(v > 0 && v <= maxRL) {
			return fmt.Errorf("%w: return loss %g dB; want more than 0 and at most %d dB (10 means |Γ| ≤ 0.316)", ErrValue, v, maxRL)
		}
	case VSWR:
		if !(v > 1) || math.IsInf(v, 1) {
			return fmt.Errorf("%w: VSWR %g; want a finite ratio above 1, such as 2 or 1.5", ErrValue, v)
		}
	case Power:
		if !(v > 0 && v <= 1) {
			return fmt.Errorf("%w: power to the load %g%%; want more than 0 and at most 100 %% (or a loss in dB, such as 1dB)", ErrValue, 100*v)
		}
	default:
		return fmt.Errorf("%w: unknown kind %d", ErrValue, int(k))
	}
	return nil
}

func checkLabel(l string) error {
	if !utf8.ValidString(l) {
		return fmt.Errorf("%w: label is not valid UTF-8", ErrValue)
	}
	if strings.HasPrefix(l, " ") || strings.HasSuffix(l, " ") || strings.Contains(l, "  ") {
		return fmt.Errorf("%w: label %q has a space at an end or two in a row", ErrValue, l)
	}
	for _, r := range l {
		if r == '#' || unicode.IsControl(r) {
			return fmt.Errorf("%w: label %q holds %q", ErrValue, l, r)
		}
	}
	return nil
}

// Errors wrapped by [ParseError.Err].
var (
	// ErrSyntax marks a line that does not follow the format: an unknown
	// keyword or kind, a missing field, a frequency or number that cannot
	// be read.
	ErrSyntax = errors.New("limits: syntax error")
	// ErrValue marks a value that was read but is not allowed: LO above
	// HI, a return loss or VSWR out of range.
	ErrValue = errors.New("limits: value out of range")
	// ErrEmpty marks a file without any band.
	ErrEmpty = errors.New("limits: no band in the file")
)

// ParseError is returned by [Parse] for bad input. Line and Column count
// from 1 (Column in bytes, at the start of the offending field); Line is 0
// for an error about the whole file (no band at all).
type ParseError struct {
	File   string // the name given to Parse
	Line   int
	Column int
	Err    error // wraps ErrSyntax, ErrValue or ErrEmpty
}

// Error returns "file:line:col: message", or "file: message" when Line is 0.
func (e *ParseError) Error() string {
	name := e.File
	if name == "" {
		name = "limits"
	}
	if e.Line == 0 {
		return fmt.Sprintf("%s: %v", name, e.Err)
	}
	return fmt.Sprintf("%s:%d:%d: %v", name, e.Line, e.Column, e.Err)
}

// Unwrap returns the underlying error.
func (e *ParseError) Unwrap() error { return e.Err }

// maxLine is the longest line read, in bytes; a longer one is a syntax
// error (a limit file is small and a huge line is not one).
const maxLine = 64 << 10

// Parse reads a limit file from r; name is used in errors. It returns the
// bands in file order, each with its Line, or the first error as a
// *[ParseError]. Errors of r itself are returned as they come.
func Parse(r io.Reader, name string) ([]Band, error) {
	sc := bufio.NewScanner(r)
	sc.Buffer(make([]byte, 0, 4096), maxLine)
	var bands []Band
	line := 0
	for sc.Scan() {
		line++
		text := sc.Text()
		if line == 1 {
			text = strings.TrimPrefix(text, "\uFEFF")
		}
		b, ok, err := parseLine(text, line)
		if err != nil {
			err.File = name
			if line == 1 && len(text) != len(sc.Text()) {
				err.Column += len(sc.Text()) - len(text)
			}
			return nil, err
		}
		if ok {
			bands = append(bands, b)
		}
	}
	if err := sc.Err(); err != nil {
		if errors.Is(err, bufio.ErrTooLong) {
			return nil, &ParseError{File: name, Line: line + 1, Column: 1, Err: fmt.Errorf("%w: line longer than %d bytes", ErrSyntax, maxLine)}
		}
		return nil, err
	}
	if len(bands) == 0 {
		return nil, &ParseError{File: name, Err: ErrEmpty}
	}
	return bands, nil
}

// field is a whitespace-separated word of a line and its column.
type field struct {
	s   string
	col int
}

func splitFields(s string) []field {
	var out []field
	i := 0
	for i < len(s) {
		for i < len(s) && (s[i] == ' ' || s[i] == '\t') {
			i++
		}
		if i == len(s) {
			break
		}
		j := i
		for j < len(s) && s[j] != ' ' && s[j] != '\t' {
			j++
		}
		out = append(out, field{s[i:j], i + 1})
		i = j
	}
	return out
}

// parseLine reads one line; ok is false for a blank or comment line.
func parseLine(text string, line int) (b Band, ok bool, perr *ParseError) {
	text = strings.TrimSuffix(text, "\r")
	if i := strings.IndexByte(text, '#'); i >= 0 {
		text = text[:i]
	}
	errAt := func(col int, err error) (Band, bool, *ParseError) {
		return Band{}, false, &ParseError{Line: line, Column: col, Err: err}
	}
	if !utf8.ValidString(text) {
		return errAt(1, fmt.Errorf("%w: the line is not valid UTF-8", ErrSyntax))
	}
	for i, r := range text {
		if r != '\t' && unicode.IsControl(r) {
			return errAt(i+1, fmt.Errorf("%w: control character %q", ErrSyntax, r))
		}
	}
	f := splitFields(text)
	if len(f) == 0 {
		return Band{}, false, nil
	}
	if !strings.EqualFold(f[0].s, "band") {
		return errAt(f[0].col, fmt.Errorf("%w: %q: a line starts with \"band\" (band LO HI rl DB, or band LO HI vswr X)", ErrSyntax, f[0].s))
	}
	if len(f) < 5 {
		names := []string{"LO", "HI", "rl or vswr", "the limit's value"}
		end := len(text) + 1
		return errAt(end, fmt.Errorf("%w: missing %s; a band is: band LO HI rl DB, or band LO HI vswr X", ErrSyntax, names[len(f)-1]))
	}
	b.Line = line
	var err error
	if b.LoHz, err = units.ParseFrequency(f[1].s); err != nil {
		return errAt(f[1].col, fmt.Errorf("%w: LO: %v", ErrSyntax, err))
	}
	if b.HiHz, err = units.ParseFrequency(f[2].s); err != nil {
		return errAt(f[2].col, fmt.Errorf("%w: HI: %v", ErrSyntax, err))
	}
	if b.LoHz > b.HiHz {
		return errAt(f[1].col, fmt.Errorf("%w: the band runs from %s down to %s; write the lower frequency first", ErrValue, f[1].s, f[2].s))
	}
	switch strings.ToLower(f[3].s) {
	case "rl":
		b.Kind = ReturnLoss
	case "vswr":
		b.Kind = VSWR
	case "power":
		b.Kind = Power
	default:
		return errAt(f[3].col, fmt.Errorf("%w: %q: the limit is rl (return loss in dB), vswr, or power (share of the power at the load)", ErrSyntax, f[3].s))
	}
	if b.Kind == Power {
		b.Value, err = ParseShare(f[4].s)
		if err != nil {
			return errAt(f[4].col, err)
		}
	} else if b.Value, err = strconv.ParseFloat(f[4].s, 64); err != nil {
		return errAt(f[4].col, fmt.Errorf("%w: %q is not a number", ErrSyntax, f[4].s))
	}
	if err := checkValue(b.Kind, b.Value); err != nil {
		return errAt(f[4].col, err)
	}
	if len(f) > 5 {
		words := make([]string, len(f)-5)
		for i, w := range f[5:] {
			words[i] = w.s
		}
		b.Label = strings.Join(words, " ")
		if err := checkLabel(b.Label); err != nil {
			return errAt(f[5].col, err)
		}
	}
	return b, true, nil
}

// Write writes the bands as a limit file that [Parse] reads back to the
// same bands (Line aside), one per line after a comment naming the format.
// A band that [Band.Validate] refuses is an error and nothing is written.
// Errors of w are returned as they come.
func Write(w io.Writer, bands []Band) error {
	for i, b := range bands {
		if err := b.Validate(); err != nil {
			return fmt.Errorf("limits: band %d: %w", i+1, err)
		}
	}
	bw := bufio.NewWriter(w)
	bw.WriteString("# matchbench limit file: band LO HI rl DB | band LO HI vswr X | band LO HI power P% [label]\n")
	for _, b := range bands {
		bw.WriteString("band ")
		bw.WriteString(formatHz(b.LoHz))
		bw.WriteByte(' ')
		bw.WriteString(formatHz(b.HiHz))
		bw.WriteByte(' ')
		bw.WriteString(b.Kind.String())
		bw.WriteByte(' ')
		if b.Kind == Power {
			bw.WriteString(formatShare(b.Value))
		} else {
			bw.WriteString(strconv.FormatFloat(b.Value, 'g', -1, 64))
		}
		if b.Label != "" {
			bw.WriteByte(' ')
			bw.WriteString(b.Label)
		}
		bw.WriteByte('\n')
	}
	return bw.Flush()
}

// formatHz writes f with the largest prefix that reads back exactly.
func formatHz(f float64) string {
	for _, p := range []struct {
		scale float64
		sym   string
	}{{1e9, "G"}, {1e6, "M"}, {1e3, "k"}} {
		if f < p.scale {
			continue
		}
		s := strconv.FormatFloat(f/p.scale, 'g', -1, 64) + p.sym
		if v, err := units.ParseFrequency(s); err == nil && v == f {
			return s
		}
	}
	return strconv.FormatFloat(f, 'g', -1, 64)
}

// ParseShare reads a least share of the available power at the load, as a
// limit file and the command line write it: a percentage ("80%", "80 %")
// or a loss in dB ("1dB", "1 dB", the share 10^(−loss/10)). The share must
// be more than 0 and at most 100 %; the loss must not be negative. Errors
// wrap [ErrSyntax] or [ErrValue].
func ParseShare(s string) (float64, error) {
	t := strings.TrimSpace(s)
	lower := strings.ToLower(t)
	var v float64
	switch {
	case strings.HasSuffix(lower, "%"):
		x, err := strconv.ParseFloat(strings.TrimSpace(t[:len(t)-1]), 64)
		if err != nil {
			return 0, fmt.Errorf("%w: %q is not a percentage such as 80%%", ErrSyntax, s)
		}
		v = x / 100
	case strings.HasSuffix(lower, "db"):
		x, err := strconv.ParseFloat(strings.TrimSpace(t[:len(t)-2]), 64)
		if err != nil {
			return 0, fmt.Errorf("%w: %q is not a loss such as 1dB", ErrSyntax, s)
		}
		if !(x >= 0) || math.IsInf(x, 1) {
			return 0, fmt.Errorf("%w: loss %q; want a finite loss of at least 0 dB", ErrValue, s)
		}
		v = math.Pow(10, -x/10)
	default:
		return 0, fmt.Errorf("%w: %q: write the power to the load as a percentage (80%%) or a loss in dB (1dB)", ErrSyntax, s)
	}
	if err := checkValue(Power, v); err != nil {
		return 0, err
	}
	return v, nil
}

// formatShare writes a share as the percentage that reads back exactly.
func formatShare(v float64) string {
	return strconv.FormatFloat(100*v, 'g', -1, 64) + "%"
}
