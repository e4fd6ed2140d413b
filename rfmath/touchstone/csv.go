package touchstone

import (
	"bufio"
	"bytes"
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"

	"matchbench/rfmath"
)

// ReadCSV reads a 1-port reflection sweep (S11) from comma-, semicolon- or
// tab-separated text. Only 1-port data are read; a column that names another
// parameter (S21, …) is refused with [ErrUnsupported].
//
// Lines whose first non-blank character is '#' or '!' are comments. A
// comment of the form "Z0 = 75" or "R 75" (also "# Hz S RI R 75") sets the
// reference resistance, which is otherwise 50 Ω.
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
// Words that may also appear are s11, s, gamma, refl, reflection,
// coefficient and rho. Real/imaginary columns are used if present, then
// dB/angle, then magnitude/angle. A header with other names is an error
// that lists the names found and the names expected. Numbers are decimal,
// as in a Touchstone file (no hexadecimal, Inf or NaN); under ';' a number
// may use a decimal comma. Frequencies must increase strictly.
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

	// Empty the comment lines (keeping the line count, so that the CSV
	// reader's positions stay right), read the Z0 option, find the header.
	text := make([]byte, 0, len(buf))
	z0, z0Line := 50.0, 0
	var header []byte
	headerLine := 0
	for ln, rest := 1, buf; len(rest) > 0; ln++ {
		line := rest
		if j := bytes.IndexByte(rest, '\n'); j >= 0 {
			line, rest = rest[:j+1], rest[j+1:]
		} else {
			rest = nil
		}
		t := bytes.TrimLeft(line, " \t")
		if len(t) > 0 && (t[0] == '#' || t[0] == '!') {
			if v, ok, err := csvZ0(string(t[1:])); err != nil {
				return nil, perr(ln, 1, err)
			} else if ok && z0Line == 0 {
				z0, z0Line = v, ln
			}
			if line[len(line)-1] == '\n' {
				text = append(text, '\n')
			}
			continue
		}
		if header == nil && len(bytes.TrimSpace(t)) > 0 {
			header, headerLine = bytes.TrimRight(line, "\r\n"), ln
		}
		text = append(text, line...)
	}
	if header == nil {
		return nil, perr(1, 1, syntaxf("no header row: expected a line naming the columns, such as freq,re,im"))
	}
	sep, best := ',', 0
	for _, c := range []rune{',', ';', '\t'} {
		if n := bytes.Count(header, []byte(string(c))); n > best {
			sep, best = c, n
		}
	}
	if best == 0 {
		return nil, perr(headerLine, 1, syntaxf("the header %q has one column; expected a frequency column and value columns separated by ',', ';' or tab", found(header)))
	}

	cr := csv.NewReader(bytes.NewReader(text))
	cr.Comma = sep
	cr.TrimLeadingSpace = true
	cr.ReuseRecord = true
	csvErr := func(err error) error {
		var ce *csv.ParseError
		if errors.As(err, &ce) {
			return perr(ce.Line, ce.Column, syntaxf("%v", ce.Err))
		}
		return perr(headerLine, 1, syntaxf("%v", err))
	}
	rec, err := cr.Read()
	if err != nil {
		return nil, csvErr(err)
	}
	cols, err := csvColumns(rec)
	if err != nil {
		return nil, perr(headerLine, 1, err)
	}

	s := &rfmath.Sweep{Ports: 1, Z0: []float64{z0}}
	for {
		rec, err := cr.Read()
		if err == io.EOF {
			break
		}
		if err != nil {
			return nil, csvErr(err)
		}
		var v [3]float64
		for k, idx := range [3]int{cols.freq, cols.a, cols.b} {
			x, ok := csvNumber(rec[idx], sep)
			if !ok {
				line, col := cr.FieldPos(idx)
				return nil, perr(line, col, syntaxf("expected a decimal number in column %q, found %q", found(cols.names[k]), found(rec[idx])))
			}
			v[k] = x
		}
		line, col := cr.FieldPos(cols.freq)
		f := v[0] * cols.mul
		if !(f >= 0) || math.IsInf(f, 0) {
			return nil, perr(line, col, syntaxf("frequency %g must be finite and not negative", v[0]))
		}
		if n := len(s.FreqHz); n > 0 && f <= s.FreqHz[n-1] {
			return nil, perr(line, col, syntaxf("frequency %s does not increase; frequencies must increase strictly", found(rec[cols.freq])))
		}
		if len(s.FreqHz) >= lim.MaxPoints {
			return nil, perr(line, col, limitf("more than the MaxPoints limit of %d frequency points", lim.MaxPoints))
		}
		var g complex128
		switch cols.kind {
		case "ri":
			g = complex(v[1], v[2])
		case "db":
			g = polar(math.Pow(10, v[1]/20), v[2]*cols.angMul)
		default:
			g = polar(v[1], v[2]*cols.angMul)
		}
		if !finite(g) {
			line, col := cr.FieldPos(cols.a)
			return nil, perr(line, col, syntaxf("the values %g, %g are not a finite reflection coefficient", v[1], v[2]))
		}
		s.FreqHz = append(s.FreqHz, f)
		s.Data = append(s.Data, g)
	}
	if len(s.FreqHz) == 0 {
		return nil, perr(headerLine, 1, syntaxf("no data rows after the header"))
	}
	if err := s.Validate(); err != nil {
		return nil, perr(headerLine, 1, syntaxf("%v", err))
	}
	return s, nil
}

// csvZ0 reads a "Z0 = 75" or "R 75" option from the text of a comment.
func csvZ0(text string) (float64, bool, error) {
	f := strings.Fields(strings.NewReplacer("=", " ", ":", " ").Replace(strings.ToLower(text)))
	for i := 0; i+1 < len(f); i++ {
		if f[i] != "z0" && f[i] != "r" {
			continue
		}
		v, err := parseNumber([]byte(strings.TrimSuffix(f[i+1], "ohm")))
		if err != nil {
			if f[i] == "z0" { // "r" may start a word of any comment
				return 0, false, syntaxf("Z0 must be followed by the reference resistance in ohms as a decimal number, found %q", f[i+1])
			}
			continue
		}
		if !(v > 0) || math.IsInf(v, 0) {
			return 0, false, syntaxf("reference resistance %s must be a positive number of ohms", found(f[i+1]))
		}
		return v, true, nil
	}
	return 0, false, nil
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
	freq, a, b int // column indices
	names      [3]string
	kind       string  // "ri", "db" or "ma"
	mul        float64 // frequency unit
	angMul     float64 // angle column to degrees
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
	"s11": "", "s": "", "11": "", "gamma": "", "refl": "", "reflection": "", "coefficient": "", "coeff": "", "rho": "",
}

const csvExpected = `a frequency column (freq, frequency or f, optionally with a unit: "freq (Hz)", "f [GHz]") and either re and im columns ("re", "real", "S11 re", "re(S11)"), or dB and angle columns ("S11 dB", "mag dB", "phase deg", "ang"), or linear magnitude and angle columns ("mag", "ang")`

// csvColumns matches the header's column names.
func csvColumns(rec []string) (*csvCols, error) {
	c := &csvCols{mul: 1, angMul: 1}
	idx := map[string]int{}
	unknown := false
	for i, name := range rec {
		words := strings.FieldsFunc(strings.ToLower(name), func(r rune) bool {
			return !(r >= 'a' && r <= 'z' || r >= '0' && r <= '9')
		})
		has := map[string]bool{}
		unit := ""
		for _, w := range words {
			kind, ok := csvWords[w]
			if !ok {
				if len(w) == 3 && strings.ContainsRune("syzhg", rune(w[0])) && w[1] >= '1' && w[1] <= '9' && w[2] >= '1' && w[2] <= '9' {
					return nil, unsupportedf("CSV import reads 1-port data (S11) only; column %q names %s", found(name), found(strings.ToUpper(w)))
				}
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
		rad := has["rad"]
		has["ang"] = has["ang"] || rad
		role := ""
		switch {
		case has["?"]:
		case has["freq"]:
			if !has["re"] && !has["im"] && !has["db"] && !has["ang"] && !has["mag"] {
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
		if role == "" {
			unknown = true
			continue
		}
		if _, dup := idx[role]; dup {
			return nil, syntaxf("two columns are %s columns (%q and %q)", role, found(rec[idx[role]]), found(name))
		}
		idx[role] = i
		if role == "freq" && unit != "" {
			c.mul = units[unit].mul
		}
		if role == "ang" && rad {
			c.angMul = 180 / math.Pi
		}
	}
	f, haveF := idx["freq"]
	pick := func(a, b, kind string) bool {
		ia, okA := idx[a]
		ib, okB := idx[b]
		if okA && okB {
			c.a, c.b, c.kind = ia, ib, kind
			return true
		}
		return false
	}
	if unknown || !haveF || !(pick("re", "im", "ri") || pick("db", "ang", "db") || pick("mag", "ang", "ma")) {
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
	c.freq = f
	c.names = [3]string{rec[f], rec[c.a], rec[c.b]}
	return c, nil
}

// WriteCSV writes s as comma-separated text: a "# Z0 = …" comment, the
// header "freq_hz" then "sIJ_re,sIJ_im" for every S-parameter in row order
// (indices joined by '_' above 9 ports), and one row per frequency, with
// every number in the shortest form that reads back exactly. [ReadCSV] reads
// back 1-port output.
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
