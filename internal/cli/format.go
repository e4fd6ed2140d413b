package cli

import (
	"encoding/json"
	"fmt"
	"io"
	"matchbench/rfmath/units"
	"math"
	"strconv"
	"strings"
)

// Numbers in text output are written as an engineer writes them: +Inf as ∞
// (a perfect match's return loss, an open's VSWR), −Inf as −∞, NaN as n/a,
// and a value that rounds to zero without a minus sign (0.00, not -0.00).
// JSON output writes the infinities and NaN as null (jsonNum).

// plusZero returns v, or +0 if v is −0.
func plusZero(v float64) float64 {
	if v == 0 {
		return 0
	}
	return v
}

// special returns how ±Inf and NaN are written, and whether v is one.
func special(v float64) (string, bool) {
	switch {
	case math.IsInf(v, 1):
		return "∞", true
	case math.IsInf(v, -1):
		return "−∞", true
	case math.IsNaN(v):
		return "n/a", true
	}
	return "", false
}

// unMinusZero drops the minus sign of a number written as zero.
func unMinusZero(s string) string {
	if strings.HasPrefix(s, "-") && strings.Trim(s[1:], "0.") == "" {
		return s[1:]
	}
	return s
}

// fmtNum writes v with digits decimals (units.FormatFixed, as the page
// writes it).
func fmtNum(v float64, digits int) string { return units.FormatFixed(v, digits) }

// fmtDB writes a figure in dB to two decimals.
func fmtDB(v float64) string { return fmtNum(v, 2) }

// fmtSig writes v with digits significant digits, as %.*g does.
func fmtSig(v float64, digits int) string {
	if s, ok := special(v); ok {
		return s
	}
	s := strconv.FormatFloat(plusZero(v), 'g', digits, 64)
	if i := strings.IndexAny(s, "eE"); i >= 0 {
		return unMinusZero(s[:i]) + s[i:]
	}
	return unMinusZero(s)
}

// fmtSigSigned writes v as fmtSig does, with a + before a value that is
// not negative (%+.*g).
func fmtSigSigned(v float64, digits int) string {
	s := fmtSig(v, digits)
	if !strings.HasPrefix(s, "−") && !strings.HasPrefix(s, "-") && s != "n/a" {
		s = "+" + s
	}
	return s
}

// sign returns the sign to write before the magnitude of x, which is
// written with two decimals: "−" for a negative x that does not round to
// zero, else "+".
func sign(x float64) string {
	if x < 0 && fmtNum(-x, 2) != fmtNum(0, 2) {
		return "−"
	}
	return "+"
}

// signed writes a margin with its sign and two decimals: +1.52, −0.83. A
// negative margin keeps its sign even when it rounds to zero (−0.00 fails
// a check), a zero is +0.00.
func signed(v float64) string {
	switch {
	case math.IsInf(v, 1):
		return "+∞"
	case math.IsInf(v, -1):
		return "−∞"
	case math.IsNaN(v):
		return "n/a"
	case v < 0:
		return fmt.Sprintf("−%.2f", -v)
	}
	return fmt.Sprintf("+%.2f", v)
}

// plusMinus writes " + v" or " − |v|" with digits decimals, for a term
// added to a sum: "0.2256 dB at 1 GHz + 0.0000 dB flat".
func plusMinus(v float64, digits int) string {
	if v < 0 && fmtNum(-v, digits) != fmtNum(0, digits) {
		return "− " + fmtNum(-v, digits)
	}
	return "+ " + fmtNum(math.Abs(v), digits)
}

// writeJSON writes v as the commands' --json output: one JSON value,
// indented by two spaces, and a newline.
func writeJSON(w io.Writer, v any) error {
	enc := json.NewEncoder(w)
	enc.SetIndent("", "  ")
	return enc.Encode(v)
}
