package touchstone

// pow10 holds the powers of ten that float64 represents exactly.
var pow10 = [...]float64{
	1e0, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10,
	1e11, 1e12, 1e13, 1e14, 1e15, 1e16, 1e17, 1e18, 1e19, 1e20, 1e21, 1e22,
}

// parseFast parses a whole token with [scanFast]: it reports false unless
// the number fills tok.
func parseFast(tok []byte) (float64, bool) {
	v, end, ok := scanFast(tok, 0)
	return v, ok && end == len(tok)
}

// scanFast parses the decimal number that starts at s[i] ([sign] digits
// [. digits] [e|E [sign] digits]) and returns its value and the index just
// past it, when the value can be computed exactly in float64 arithmetic. It
// reports false for anything else, which the caller then hands to
// strconv.ParseFloat. It stops at the first byte that cannot continue the
// number; the caller checks what that byte is.
//
// This is Clinger's fast path (W. D. Clinger, How to read floating point
// numbers accurately, PLDI 1990), which strconv also takes: with the
// decimal digits as an integer m < 10¹⁵ < 2⁵³ and a power of ten
// 10^|e| ≤ 10²², both are exact in float64, so the one product m·10^e or
// quotient m/10^−e is correctly rounded, and equal bit for bit to
// ParseFloat's result. Most exported numbers (up to 15 significant digits,
// exponents within ±22) take it; it saves the general parser's work on
// prefixes, underscores, Inf and NaN, which a Touchstone number cannot have,
// and a second pass over the bytes.
func scanFast(s []byte, i int) (float64, int, bool) {
	n := len(s)
	if i >= n {
		return 0, i, false
	}
	neg := false
	if c := s[i]; c == '+' || c == '-' {
		neg = c == '-'
		i++
	}
	var m uint64
	digits, exp := 0, 0 // significant digits in m; decimal exponent of m
	sawDigit := false
	for ; i < n; i++ {
		d := s[i] - '0'
		if d > 9 {
			break
		}
		sawDigit = true
		if m == 0 && d == 0 {
			continue // leading zeros carry no digit
		}
		m = m*10 + uint64(d)
		digits++
	}
	if i < n && s[i] == '.' {
		i++
		for ; i < n; i++ {
			d := s[i] - '0'
			if d > 9 {
				break
			}
			sawDigit = true
			exp--
			if m == 0 && d == 0 {
				continue
			}
			m = m*10 + uint64(d)
			digits++
		}
	}
	if !sawDigit || digits > 15 {
		return 0, i, false // no number, or m may not be exact
	}
	if i < n && (s[i] == 'e' || s[i] == 'E') {
		i++
		eneg := false
		if i < n && (s[i] == '+' || s[i] == '-') {
			eneg = s[i] == '-'
			i++
		}
		e, es := 0, i
		for ; i < n; i++ {
			d := s[i] - '0'
			if d > 9 {
				break
			}
			if e > 1000 {
				return 0, i, false // an exponent for ParseFloat to judge
			}
			e = e*10 + int(d)
		}
		if i == es {
			return 0, i, false // "1e" is not a number
		}
		if eneg {
			e = -e
		}
		exp += e
	}
	f := float64(m)
	switch {
	case m == 0 || exp == 0:
	case exp > 0 && exp <= 22:
		f *= pow10[exp]
	case exp < 0 && exp >= -22:
		f /= pow10[-exp]
	default:
		return 0, i, false
	}
	if neg {
		f = -f
	}
	return f, i, true
}
