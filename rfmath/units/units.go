// Package units reads and writes quantities with SI prefixes, as an engineer
// types them at the bench: "2.45GHz", "2.45G", "915e6", "433.92 MHz" for
// frequencies and "3.9n", "1.2 pF", "22 nH", "4n7" for part values.
//
// Prefixes are case-sensitive where SI makes them so: m is milli and M is
// mega. One exception is made for frequencies, where a milli prefix is never
// meant: "mhz" is read as MHz, but a bare "m" is refused as ambiguous.
// The micro prefix may be written µ (U+00B5), μ (U+03BC) or u.
//
// The RKM form used on parts lists ("4n7" = 4.7n, "2p2" = 2.2p, "4k7" = 4.7k)
// is accepted, as is "R" as a decimal point for resistors ("4R7" = 4.7 Ω).
package units

import (
	"errors"
	"fmt"
	"math"
	"strconv"
	"strings"
	"unicode/utf8"
)

// ErrSyntax is wrapped by every parse error.
var ErrSyntax = errors.New("units: cannot read value")

// Error describes a value that could not be read.
type Error struct {
	Input string // the text as given
	Want  string // what was expected, e.g. "a frequency such as 2.45GHz"
	Err   error
}

func (e *Error) Error() string {
	return fmt.Sprintf("cannot read %q as %s: %v", e.Input, e.Want, e.Err)
}

func (e *Error) Unwrap() error { return e.Err }

var prefixes = map[string]float64{
	"f": 1e-15, "p": 1e-12, "n": 1e-9, "u": 1e-6, "µ": 1e-6, "μ": 1e-6,
	"m": 1e-3, "k": 1e3, "K": 1e3, "M": 1e6, "G": 1e9, "T": 1e12,
}

// split separates s into the leading number and the rest. It accepts a
// decimal number with optional exponent.
func split(s string) (num, rest string) {
	i := 0
	if i < len(s) && (s[i] == '+' || s[i] == '-') {
		i++
	}
	digits := false
	for i < len(s) && (s[i] >= '0' && s[i] <= '9') {
		i++
		digits = true
	}
	if i < len(s) && s[i] == '.' {
		i++
		for i < len(s) && (s[i] >= '0' && s[i] <= '9') {
			i++
			digits = true
		}
	}
	if !digits {
		return "", s
	}
	if i < len(s) && (s[i] == 'e' || s[i] == 'E') {
		j := i + 1
		if j < len(s) && (s[j] == '+' || s[j] == '-') {
			j++
		}
		k := j
		for k < len(s) && s[k] >= '0' && s[k] <= '9' {
			k++
		}
		if k > j {
			i = k
		}
	}
	return s[:i], s[i:]
}

// rkm rewrites "4n7" as "4.7n" and "4R7" as "4.7" (R only when unit is Ω).
func rkm(s string, ohms bool) string {
	for i := 1; i < len(s)-1; i++ {
		c := s[i]
		if s[i-1] < '0' || s[i-1] > '9' || s[i+1] < '0' || s[i+1] > '9' {
			continue
		}
		if strings.ContainsRune(s[:i], '.') {
			return s
		}
		switch {
		case ohms && (c == 'R' || c == 'r'):
			return s[:i] + "." + s[i+1:]
		case strings.IndexByte("fpnumkKMG", c) >= 0:
			return s[:i] + "." + s[i+1:] + string(c)
		}
	}
	// µ is two bytes in UTF-8.
	for _, mu := range []string{"µ", "μ"} {
		if i := strings.Index(s, mu); i > 0 && i+len(mu) < len(s) {
			if s[i-1] >= '0' && s[i-1] <= '9' && s[i+len(mu)] >= '0' && s[i+len(mu)] <= '9' && !strings.ContainsRune(s, '.') {
				return s[:i] + "." + s[i+len(mu):] + "u"
			}
		}
	}
	return s
}

// ParseFrequency reads a frequency in hertz. The unit "Hz" is optional and
// case-insensitive; the prefix may be k, M, G or T (case-insensitive for
// these, as no sub-hertz prefix makes sense), or absent.
func ParseFrequency(s string) (float64, error) {
	const want = "a frequency such as 2.45GHz, 433.92 MHz or 915e6"
	in := s
	s = strings.TrimSpace(s)
	num, rest := split(s)
	if num == "" {
		return 0, &Error{in, want, fmt.Errorf("%w: no number at the start", ErrSyntax)}
	}
	v, err := strconv.ParseFloat(num, 64)
	if err != nil {
		return 0, &Error{in, want, fmt.Errorf("%w: %v", ErrSyntax, err)}
	}
	rest = strings.TrimSpace(rest)
	low := strings.ToLower(rest)
	low = strings.TrimSuffix(low, "hz")
	scale := 1.0
	switch low {
	case "":
	case "k":
		scale = 1e3
	case "g":
		scale = 1e9
	case "t":
		scale = 1e12
	case "m":
		if rest == "M" || strings.HasSuffix(strings.ToLower(rest), "hz") {
			scale = 1e6
		} else {
			return 0, &Error{in, want, fmt.Errorf("%w: %q is ambiguous; write M or MHz for megahertz", ErrSyntax, rest)}
		}
	default:
		return 0, &Error{in, want, fmt.Errorf("%w: unknown unit %q", ErrSyntax, rest)}
	}
	f := v * scale
	if math.IsNaN(f) || math.IsInf(f, 0) || f < 0 {
		return 0, &Error{in, want, fmt.Errorf("%w: must be a finite, non-negative number", ErrSyntax)}
	}
	return f, nil
}

// unitNames maps the spellings accepted after the prefix to a canonical unit.
var unitNames = map[string]string{
	"h": "H", "f": "F", "ω": "Ω", "ohm": "Ω", "ohms": "Ω", "r": "Ω",
	"hz": "Hz", "s": "s", "m": "m", "db": "dB", "v": "V", "a": "A", "w": "W",
}

// ParseValue reads a quantity in the given unit ("H", "F", "Ω", "s", "m",
// "Hz", …; "" for a plain number). The unit may be omitted in the text; if it
// is given it must match. A prefix letter that is also the unit (F for farad,
// m for metre) is read as the unit when it stands last: "1F" is one farad,
// "1fF" one femtofarad, "3m" three metres when unit is "m" but three milli-
// units otherwise. Lengths (unit "m") also take centimetres: "0.8cm".
func ParseValue(s, unit string) (float64, error) {
	want := "a number with an optional SI prefix"
	switch unit {
	case "":
	case "m":
		want = "a length in metres such as 8mm, 0.8cm or 0.008"
	default:
		want = fmt.Sprintf("a value in %s such as 3.9n%s", unit, unit)
	}
	in := s
	s = strings.TrimSpace(s)
	s = strings.ReplaceAll(s, " ", "")
	s = rkm(s, unit == "Ω")
	num, rest := split(s)
	if num == "" {
		return 0, &Error{in, want, fmt.Errorf("%w: no number at the start", ErrSyntax)}
	}
	v, err := strconv.ParseFloat(num, 64)
	if err != nil {
		return 0, &Error{in, want, fmt.Errorf("%w: %v", ErrSyntax, err)}
	}
	scale := 1.0
	if rest != "" {
		// Does the rest end with the unit?
		if u, ok := matchUnit(rest, unit); ok {
			rest = u
		}
		if rest != "" {
			r, size := utf8.DecodeRuneInString(rest)
			p, ok := prefixes[string(r)]
			if unit == "m" && rest == "c" {
				p, ok = 1e-2, true // centimetres, for lengths only
			}
			if !ok || size != len(rest) {
				return 0, &Error{in, want, fmt.Errorf("%w: unknown prefix or unit %q", ErrSyntax, rest)}
			}
			scale = p
		}
	}
	x := v * scale
	if math.IsNaN(x) || math.IsInf(x, 0) {
		return 0, &Error{in, want, fmt.Errorf("%w: not a finite number", ErrSyntax)}
	}
	return x, nil
}

// matchUnit strips a trailing unit spelling from rest if it names unit.
// It returns the remaining prefix text and whether a unit was stripped.
func matchUnit(rest, unit string) (string, bool) {
	if unit == "" {
		return rest, false
	}
	low := strings.ToLower(rest)
	// Longest spellings first.
	for _, sp := range []string{"ohms", "ohm", "hz", "db", "ω", "h", "f", "r", "s", "m", "v", "a", "w"} {
		if unitNames[sp] != unit || !strings.HasSuffix(low, sp) {
			continue
		}
		pre := rest[:len(rest)-len(sp)]
		if pre == "" || len([]rune(pre)) == 1 {
			return pre, true
		}
	}
	return rest, false
}

var formatPrefixes = []struct {
	exp int
	sym string
}{
	{12, "T"}, {9, "G"}, {6, "M"}, {3, "k"}, {0, ""}, {-3, "m"}, {-6, "µ"}, {-9, "n"}, {-12, "p"}, {-15, "f"},
}

// Format writes v with an SI prefix and the unit, keeping digits significant
// digits and dropping trailing zeros: Format(3.9e-9, "H", 3) = "3.9 nH".
// Special cases are written as an engineer writes them:
//
//	Format(±0, "H", 3) = "0 H"
//	Format(±Inf, "Ω", 3) = "∞ Ω", "−∞ Ω"
//	Format(NaN, "Ω", 3) = "n/a"
//
// A value more than a thousand times below the smallest prefix (f) or above
// the largest (T) is written with an exponent: "4.9e-26 s".
func Format(v float64, unit string, digits int) string {
	if digits < 1 {
		digits = 4
	}
	sep := ""
	if unit != "" {
		sep = " "
	}
	switch {
	case v == 0:
		return "0" + sep + unit
	case math.IsNaN(v):
		return "n/a"
	case math.IsInf(v, 1):
		return "∞" + sep + unit
	case math.IsInf(v, -1):
		return "−∞" + sep + unit
	}
	// Round first so that 999.96 with 4 digits becomes 1 k, not 1000.
	r, _ := strconv.ParseFloat(strconv.FormatFloat(v, 'e', digits-1, 64), 64)
	e := int(math.Floor(math.Log10(math.Abs(r))))
	if e < -18 || e > 14 {
		return strconv.FormatFloat(r, 'g', digits, 64) + sep + unit
	}
	exp := 3 * int(math.Floor(float64(e)/3))
	if exp > 12 {
		exp = 12
	}
	if exp < -15 {
		exp = -15
	}
	var sym string
	for _, p := range formatPrefixes {
		if p.exp == exp {
			sym = p.sym
		}
	}
	m := r / math.Pow(10, float64(exp))
	s := strconv.FormatFloat(m, 'f', max(0, digits-1-(e-exp)), 64)
	if strings.Contains(s, ".") {
		s = strings.TrimRight(strings.TrimRight(s, "0"), ".")
	}
	if sym == "" && unit == "" {
		return s
	}
	return s + " " + sym + unit
}

// FormatFrequency writes a frequency in Hz with a prefix: "2.45 GHz".
func FormatFrequency(fHz float64, digits int) string { return Format(fHz, "Hz", digits) }

// FormatPercent writes a share (0.784 for 78.4 %) as a percentage with
// decimals decimal places and a space before the sign: "78.4 %". NaN is
// "n/a" and ±Inf "±∞ %".
func FormatPercent(share float64, decimals int) string {
	switch {
	case math.IsNaN(share):
		return "n/a"
	case math.IsInf(share, 1):
		return "∞ %"
	case math.IsInf(share, -1):
		return "−∞ %"
	}
	return noNegativeZero(strconv.FormatFloat(100*share, 'f', decimals, 64)) + " %"
}

// FormatFixed writes v with decimals decimal places and no unit: "1.43";
// +Inf is "∞", −Inf "−∞", NaN "n/a", and a value that rounds to zero has no
// minus sign. The page, the report and the command line write their
// unitless figures (VSWR, Q, zoom) with it.
func FormatFixed(v float64, decimals int) string {
	switch {
	case math.IsNaN(v):
		return "n/a"
	case math.IsInf(v, 1):
		return "∞"
	case math.IsInf(v, -1):
		return "−∞"
	}
	return noNegativeZero(strconv.FormatFloat(v, 'f', decimals, 64))
}

// noNegativeZero drops the sign of a number that rounds to zero: a figure
// of "-0.00" means nothing to a reader.
func noNegativeZero(s string) string {
	if strings.HasPrefix(s, "-") && strings.Trim(s[1:], "0.") == "" {
		return s[1:]
	}
	return s
}

// FormatDB writes a figure in decibels with two decimals and its unit:
// "14.69 dB", "-0.35 dB"; +Inf is "∞ dB" (a perfect match's return loss),
// −Inf "−∞ dB" and NaN "n/a". Every figure in dB that matchbench shows, on
// the page, in the report and on the command line, is written by it, so
// that they agree to the last digit.
func FormatDB(v float64) string {
	switch {
	case math.IsNaN(v):
		return "n/a"
	case math.IsInf(v, 1):
		return "∞ dB"
	case math.IsInf(v, -1):
		return "−∞ dB"
	}
	return noNegativeZero(strconv.FormatFloat(v, 'f', 2, 64)) + " dB"
}

// FormatShare writes a share of the available power as a percentage with
// one decimal and, in brackets, as a loss in dB: "78.4 % (1.06 dB)".
func FormatShare(share float64) string {
	return FormatPercent(share, 1) + " (" + FormatDB(-10*math.Log10(share)) + ")"
}
