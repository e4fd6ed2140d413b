package touchstone

import (
	"bufio"
	"bytes"
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"math"
	"slices"
	"strconv"
	"strings"

	"matchbench/rfmath"
)

// ReadCSV reads a 1-port reflection sweep (S11) or a 2-port sweep (S11,
// S21, S12, S22) from comma-, semicolon- or tab-separated text. Columns that
// name no parameter are S11's; a column that names S21, S12 or S22 makes
// the file a 2-port, and then all four parameters must be there. Other
// parameters (S31, Y11, Z21, …) are refused with [ErrUnsupported].
//
// Lines whose first non-blank character is '#' or '!' are comments. A
// comment of the form "Z0 = 75" or "R 75" (also "# Hz S RI R 75") sets the
// reference resistance, which is otherwise 50 Ω; a 2-port may give one per
// port ("Z0 = 50 75", as [WriteCSV] writes it).
//
// The first other line is the header; it is required. The separator is the
// one of ',', ';' and tab that occurs most often in it. Columns are matched by
// the words of their names, case-insensitively:
//
//	frequency   freq, frequency or f, with an optional unit word Hz, kHz,
//	            MHz or GHz: "freq (Hz)", "f [GHz]", "Frequency_MHz"
//	            (default Hz)
//	real/imag   re or real, im or imag: "re", "S11 re", "re(S11)", "s11_imag"
//	dB/angle    db: "S11 dB", "mag dB"; and deg, ang, angle, phase or arg
//	            (rad or radian for radians): "phase deg", "ang", "S11 phase"
//	magnitude   mag, magnitude, abs or lin (linear), or a name between bars
//	            ("|S11|"), with an angle column
//
// A column's parameter is a word s11, s21, s12 or s22 ("s21_re", "S21 dB",
// "re(S12)", "|S22|"). Words that may also appear are s, gamma, refl,
// reflection, coefficient and rho. For each parameter, real/imaginary
// columns are used if present, then dB/angle, then magnitude/angle. A
// header with other names is an error that lists the names found and the
// names expected. Numbers are decimal, as in a Touchstone file (no
// hexadecimal, Inf or NaN); under ';' a number may use a decimal comma.
// Frequencies must increase strictly.
func ReadCSV(r io.Reader, name string, lim Limits) (*rfmath.Sweep, error) {
	lim = lim.withDefaults()
	buf, err := readAll(r, name, lim.MaxBytes)
	if err != nil {
		return nil, err
	}
	buf = bytes.TrimPrefix(buf, []byte("\xEF\xBB\xBF"))
	perr := func(line, col int, err error) error {
		return &ParseError{File: name, Line: line, Column: col, Err: err}
	}
	pre, err := csvPrepare(buf, perr)
	if err != nil {
		return nil, err
	}
	sep, best := ',', 0
	for _, c := range []rune{',', ';', '\t'} {
		if n := bytes.Count(pre.header, []byte(string(c))); n > best {
			sep, best = c, n
		}
	}
	if best == 0 {
		return nil, perr(pre.headerLine, 1, syntaxf("the header %q has one column; expected a frequency column and value columns separated by ',', ';' or tab", found(pre.header)))
	}

	cr := csv.NewReader(bytes.NewReader(pre.text))
	cr.Comma = sep
	cr.TrimLeadingSpace = true
	cr.ReuseRecord = true
	rd := &csvRows{cr: cr, sep: sep, lim: lim, perr: perr, headerLine: pre.headerLine}
	rec, err := cr.Read()
	if err != nil {
		return nil, rd.csvErr(err)
	}
	if rd.cols, err = csvColumns(rec); err != nil {
		return nil, perr(pre.headerLine, 1, err)
	}
	ref := make([]float64, rd.cols.ports)
	for i := range ref {
		switch {
		case len(pre.z0) == 0:
			ref[i] = 50
		case len(pre.z0) == 1:
			ref[i] = pre.z0[0]
		case len(pre.z0) == rd.cols.ports:
			ref[i] = pre.z0[i]
		default:
			return nil, perr(pre.z0Line, 1, syntaxf("%d reference resistances for a %d-port sweep", len(pre.z0), rd.cols.ports))
		}
	}
	s := &rfmath.Sweep{Ports: rd.cols.ports, Z0: ref}
	for {
		rec, err := cr.Read()
		if err == io.EOF {
			break
		}
		if err != nil {
			return nil, rd.csvErr(err)
		}
		if err := rd.row(s, rec); err != nil {
			return nil, err
		}
	}
	if len(s.FreqHz) == 0 {
		return nil, perr(pre.headerLine, 1, syntaxf("no data rows after the header"))
	}
	if err := s.Validate(); err != nil {
		return nil, perr(pre.headerLine, 1, syntaxf("%v", err))
	}
	return s, nil
}

// csvText is a CSV file made ready for the CSV reader: its comment lines
// emptied (the line count kept, so the reader's positions stay right), the
// Z0 option of the first comment that has one, and the header row.
type csvText struct {
	text       []byte
	z0         []float64
	z0Line     int
	header     []byte
	headerLine int
}

// csvPrepare empties the comment lines of buf, reads the Z0 option and
// finds the header.
func csvPrepare(buf []byte, perr func(line, col int, err error) error) (*csvText, error) {
	c := &csvText{text: make([]byte, 0, len(buf))}
	for ln, rest := 1, buf; len(rest) > 0; ln++ {
		line := rest
		if j := bytes.IndexByte(rest, '\n'); j >= 0 {
			line, rest = rest[:j+1], rest[j+1:]
		} else {
			rest = nil
		}
		t := bytes.TrimLeft(line, " \t")
		if len(t) > 0 && (t[0] == '#' || t[0] == '!') {
			if v, err := csvZ0(string(t[1:])); err != nil {
				return nil, perr(ln, 1, err)
			} else if v != nil && c.z0Line == 0 {
				c.z0, c.z0Line = v, ln
			}
			if line[len(line)-1] == '\n' {
				c.text = append(c.text, '\n')
			}
			continue
		}
		if c.header == nil && len(bytes.TrimSpace(t)) > 0 {
			c.header, c.headerLine = bytes.TrimRight(line, "\r\n"), ln
		}
		c.text = append(c.text, line...)
	}
	if c.header == nil {
		return nil, perr(1, 1, syntaxf("no header row: expected a line naming the columns, such as freq,re,im"))
	}
	return c, nil
}

// csvRows reads the data rows of a CSV sweep with the columns of its
// header.
type csvRows struct {
	cr         *csv.Reader
	cols       *csvCols
	sep        rune
	lim        Limits
	perr       func(line, col int, err error) error
	headerLine int
}

// csvErr is the CSV reader's error at its position.
func (rd *csvRows) csvErr(err error) error {
	var ce *csv.ParseError
	if errors.As(err, &ce) {
		return rd.perr(ce.Line, ce.Column, syntaxf("%v", ce.Err))
	}
	return rd.perr(rd.headerLine, 1, syntaxf("%v", err))
}

// num reads the number in field idx of rec.
func (rd *csvRows) num(rec []string, idx int) (float64, error) {
	x, ok := csvNumber(rec[idx], rd.sep)
	if !ok {
		line, col := rd.cr.FieldPos(idx)
		return 0, rd.perr(line, col, syntaxf("expected a decimal number in column %q, found %q", found(rd.cols.header[idx]), found(rec[idx])))
	}
	return x, nil
}

// row appends one data row to s: its frequency, which must increase, and
// each parameter in its column format.
func (rd *csvRows) row(s *rfmath.Sweep, rec []string) error {
	cols := rd.cols
	fv, err := rd.num(rec, cols.freq)
	if err != nil {
		return err
	}
	line, col := rd.cr.FieldPos(cols.freq)
	f := fv * cols.mul
	if !(f >= 0) || math.IsInf(f, 0) {
		return rd.perr(line, col, syntaxf("frequency %g must be finite and not negative", fv))
	}
	if n := len(s.FreqHz); n > 0 && f <= s.FreqHz[n-1] {
		return rd.perr(line, col, syntaxf("frequency %s does not increase; frequencies must increase strictly", found(rec[cols.freq])))
	}
	if len(s.FreqHz) >= rd.lim.MaxPoints {
		return rd.perr(line, col, limitf("more than the MaxPoints limit of %d frequency points", rd.lim.MaxPoints))
	}
	for _, p := range cols.params {
		a, err := rd.num(rec, p.a)
		if err != nil {
			return err
		}
		b, err := rd.num(rec, p.b)
		if err != nil {
			return err
		}
		var g complex128
		switch p.kind {
		case "ri":
			g = complex(a, b)
		case "db":
			g = polar(math.Pow(10, a/20), b*p.angMul)
		default:
			g = polar(a, b*p.angMul)
		}
		if !finite(g) {
			line, col := rd.cr.FieldPos(p.a)
			return rd.perr(line, col, syntaxf("the values %g, %g are not a finite S%s", a, b, p.name))
		}
		s.Data = append(s.Data, g)
	}
	s.FreqHz = append(s.FreqHz, f)
	return nil
}

// csvZ0 reads a "Z0 = 75" or "R 75" option from the text of a comment,
// with one number per port after it where there are several ("Z0 = 50 75").
func csvZ0(text string) ([]float64, error) {
	f := strings.Fields(strings.NewReplacer("=", " ", ":", " ").Replace(strings.ToLower(text)))
	for i := 0; i+1 < len(f); i++ {
		if f[i] != "z0" && f[i] != "r" {
			continue
		}
		var out []float64
		for j, w := range f[i+1:] {
			v, err := parseNumber([]byte(strings.TrimSuffix(w, "ohm")))
			if err != nil {
				if j == 0 && f[i] == "z0" { // "r" may start a word of any comment
					return nil, syntaxf("Z0 must be followed by the reference resistance in ohms as a decimal number, found %q", found(w))
				}
				break
			}
			if !(v > 0) || math.IsInf(v, 0) {
				return nil, syntaxf("reference resistance %s must be a positive number of ohms", found(w))
			}
			out = append(out, v)
		}
		if out != nil {
			return out, nil
		}
	}
	return nil, nil
}

// csvNumber reads a number of a CSV field by the rules of the Touchstone
// reader (digits, sign, point and exponent; no hexadecimal, Inf, NaN or
// underscores, which strconv.ParseFloat would take), with a decimal comma
// under sep ';'.
func csvNumber(s string, sep rune) (float64, bool) {
	s = strings.TrimSpace(s)
	if sep == ';' && strings.Count(s, ",") == 1 && !strings.Contains(s, ".") {
		s = strings.Replace(s, ",", ".", 1) // decimal comma
	}
	v, err := parseNumber([]byte(s))
	if err != nil || math.IsNaN(v) || math.IsInf(v, 0) {
		return 0, false
	}
	return v, true
}

type csvCols struct {
	freq   int
	ports  int
	params []csvParam // in row order: S11 (1-port); S11, S12, S21, S22 (2-port)
	mul    float64    // frequency unit
	header []string
}

// csvParam is the pair of columns of one S-parameter.
type csvParam struct {
	name   string // "11", "21", …
	a, b   int    // column indices: re and im, dB and angle, or magnitude and angle
	kind   string // "ri", "db" or "ma"
	angMul float64
}

var csvWords = map[string]string{
	"freq": "freq", "frequency": "freq", "f": "freq",
	"hz": "unit", "khz": "unit", "mhz": "unit", "ghz": "unit",
	"re": "re", "real": "re",
	"im": "im", "imag": "im", "imaginary": "im",
	"db":  "db",
	"deg": "ang", "degree": "ang", "degrees": "ang", "ang": "ang", "angle": "ang", "phase": "ang", "arg": "ang",
	"rad": "rad", "radian": "rad", "radians": "rad",
	"mag": "mag", "magnitude": "mag", "abs": "mag", "lin": "mag", "linear": "mag",
	"s": "", "gamma": "", "refl": "", "reflection": "", "coefficient": "", "coeff": "", "rho": "",
}

const csvExpected = `a frequency column (freq, frequency or f, optionally with a unit: "freq (Hz)", "f [GHz]") and, for S11 and for a 2-port also S21, S12 and S22, either re and im columns ("re", "real", "S11 re", "re(S11)", "s21_im"), or dB and angle columns ("S11 dB", "mag dB", "S21 phase deg", "ang"), or linear magnitude and angle columns ("mag", "|S22|", "ang")`

// csvColumnRole reads one column's name: the S-parameter it names (param,
// "11" … "22", or "" when it names none), its role ("freq", "re", "im",
// "db", "ang", "mag", or "" when it is not understood), a frequency unit
// and whether its angles are in radians.
func csvColumnRole(name string) (param, role, unit string, rad bool, err error) {
	words := strings.FieldsFunc(strings.ToLower(name), func(r rune) bool {
		return !(r >= 'a' && r <= 'z' || r >= '0' && r <= '9')
	})
	has := map[string]bool{}
	for _, w := range words {
		if len(w) == 3 && strings.ContainsRune("syzhg", rune(w[0])) && w[1] >= '1' && w[1] <= '9' && w[2] >= '1' && w[2] <= '9' {
			if w[0] != 's' || w[1] > '2' || w[2] > '2' {
				return "", "", "", false, unsupportedf("CSV import reads 1- and 2-port S-parameters; column %q names %s", found(name), found(strings.ToUpper(w)))
			}
			param = w[1:]
			continue
		}
		if w == "11" || w == "21" || w == "12" || w == "22" { // "S 21"
			param = w
			continue
		}
		kind, ok := csvWords[w]
		if !ok {
			kind = "?"
		}
		if kind == "unit" {
			unit = w
		}
		has[kind] = true
	}
	if strings.Count(name, "|") == 2 { // "|S11|"
		has["mag"] = true
	}
	rad = has["rad"]
	has["ang"] = has["ang"] || rad
	switch {
	case has["?"]:
	case has["freq"]:
		if param == "" && !has["re"] && !has["im"] && !has["db"] && !has["ang"] && !has["mag"] {
			role = "freq"
		}
	case unit != "":
	case has["re"]:
		if !has["im"] && !has["db"] && !has["ang"] && !has["mag"] {
			role = "re"
		}
	case has["im"]:
		if !has["db"] && !has["ang"] && !has["mag"] {
			role = "im"
		}
	case has["db"]: // "S11 dB", "mag dB"
		if !has["ang"] {
			role = "db"
		}
	case has["ang"]:
		if !has["mag"] {
			role = "ang"
		}
	case has["mag"]:
		role = "mag"
	}
	return param, role, unit, rad, nil
}

// csvColumns matches the header's column names.
func csvColumns(rec []string) (*csvCols, error) {
	c := &csvCols{mul: 1, header: slices.Clone(rec)}
	type key struct{ param, role string }
	idx := map[key]int{}
	rads := map[string]bool{}
	unknown, haveF, ports := false, false, 1
	for i, name := range rec {
		param, role, unit, rad, err := csvColumnRole(name)
		if err != nil {
			return nil, err
		}
		if role == "" {
			unknown = true
			continue
		}
		if role == "freq" {
			if haveF {
				return nil, syntaxf("two columns are frequency columns (%q and %q)", found(rec[c.freq]), found(name))
			}
			c.freq, haveF = i, true
			if unit != "" {
				c.mul = units[unit].mul
			}
			continue
		}
		if param == "" {
			param = "11"
		}
		if param != "11" {
			ports = 2
		}
		k := key{param, role}
		if j, dup := idx[k]; dup {
			return nil, syntaxf("two columns are S%s %s columns (%q and %q)", param, role, found(rec[j]), found(name))
		}
		idx[k] = i
		if role == "ang" && rad {
			rads[param] = true
		}
	}
	names := []string{"11"}
	if ports == 2 {
		names = []string{"11", "12", "21", "22"}
	}
	complete := !unknown && haveF
	for _, p := range names {
		cp := csvParam{name: p, angMul: 1}
		if rads[p] {
			cp.angMul = 180 / math.Pi
		}
		pick := func(a, b, kind string) bool {
			ia, okA := idx[key{p, a}]
			ib, okB := idx[key{p, b}]
			if okA && okB {
				cp.a, cp.b, cp.kind = ia, ib, kind
				return true
			}
			return false
		}
		if !(pick("re", "im", "ri") || pick("db", "ang", "db") || pick("mag", "ang", "ma")) {
			if complete && ports == 2 {
				return nil, syntaxf("a 2-port CSV needs S11, S21, S12 and S22; S%s has no complete pair of columns (found columns %q); expected %s", p, foundList(rec), csvExpected)
			}
			complete = false
			break
		}
		c.params = append(c.params, cp)
	}
	if !complete {
		allNumbers := true
		for _, v := range rec {
			if _, ok := csvNumber(v, ';'); !ok {
				allNumbers = false
			}
		}
		if allNumbers {
			return nil, syntaxf("expected a header row naming the columns, found numbers; a header needs %s", csvExpected)
		}
		return nil, syntaxf("cannot understand the header: found columns %q; expected %s", foundList(rec), csvExpected)
	}
	c.ports = ports
	return c, nil
}

// WriteCSV writes s as comma-separated text: a "# Z0 = …" comment with
// each port's reference, the header "freq_hz" then "sIJ_re,sIJ_im" for
// every S-parameter in row order (s11, s12, s21, s22 for a 2-port; indices
// joined by '_' above 9 ports), and one row per frequency, with every
// number in the shortest form that reads back exactly. [ReadCSV] reads back
// 1- and 2-port output.
func WriteCSV(w io.Writer, s *rfmath.Sweep) error {
	if err := s.Validate(); err != nil {
		return fmt.Errorf("touchstone: cannot write the sweep: %w", err)
	}
	bw := bufio.NewWriter(w)
	b := []byte("# Z0 =")
	for _, z := range s.Z0 {
		b = append(b, ' ')
		b = strconv.AppendFloat(b, z, 'g', -1, 64)
	}
	b = append(b, "\nfreq_hz"...)
	n := s.Ports
	for i := range n {
		for j := range n {
			id := fmt.Sprintf("s%d%d", i+1, j+1)
			if n > 9 {
				id = fmt.Sprintf("s%d_%d", i+1, j+1)
			}
			b = append(b, ","+id+"_re,"+id+"_im"...)
		}
	}
	b = append(b, '\n')
	bw.Write(b)
	for k := range s.Len() {
		b = strconv.AppendFloat(b[:0], s.FreqHz[k], 'g', -1, 64)
		for _, v := range s.Matrix(k) {
			b = append(b, ',')
			b = strconv.AppendFloat(b, real(v), 'g', -1, 64)
			b = append(b, ',')
			b = strconv.AppendFloat(b, imag(v), 'g', -1, 64)
		}
		b = append(b, '\n')
		if _, err := bw.Write(b); err != nil {
			return err
		}
	}
	return bw.Flush()
}
