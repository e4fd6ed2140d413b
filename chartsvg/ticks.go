package chartsvg

import (
	"math"
	"strconv"
)

// niceStep returns a step of 1, 2 or 5 times a power of ten near span/target.
func niceStep(span float64, target int) float64 {
	if !(span > 0) || target < 1 {
		return 0
	}
	raw := span / float64(target)
	mag := math.Pow(10, math.Floor(math.Log10(raw)))
	switch norm := raw / mag; {
	case norm < 1.5:
		return mag
	case norm < 3.5:
		return 2 * mag
	case norm < 7.5:
		return 5 * mag
	}
	return 10 * mag
}

// siHz returns the divisor and unit for writing frequencies near hz.
func siHz(hz float64) (float64, string) {
	switch a := math.Abs(hz); {
	case a >= 1e12:
		return 1e12, "THz"
	case a >= 1e9:
		return 1e9, "GHz"
	case a >= 1e6:
		return 1e6, "MHz"
	case a >= 1e3:
		return 1e3, "kHz"
	}
	return 1, "Hz"
}

// siPrefix returns the divisor and prefixed unit for writing values up to
// about v in unit: 0.0042 m → (1e-3, "mm").
func siPrefix(v float64, unit string) (float64, string) {
	for _, p := range []struct {
		div float64
		sym string
	}{{1e12, "T"}, {1e9, "G"}, {1e6, "M"}, {1e3, "k"}, {1, ""}, {1e-3, "m"}, {1e-6, "µ"}, {1e-9, "n"}, {1e-12, "p"}} {
		if math.Abs(v) >= p.div {
			return p.div, p.sym + unit
		}
	}
	return 1e-15, "f" + unit
}

// FormatHz writes a frequency with an SI prefix and up to six significant
// digits, trailing zeros dropped: 2.4e9 → "2.4 GHz", 9.15e8 → "915 MHz".
func FormatHz(hz float64) string {
	div, unit := siHz(hz)
	return strconv.FormatFloat(hz/div, 'f', -1, 64) + " " + unit
}

// formatHzStep writes hz in the unit (div, unit) with as many decimals as the
// tick step needs, so that ticks read 2.40, 2.45, 2.50 GHz alike.
func formatHzStep(hz, step, div float64, unit string) string {
	return strconv.FormatFloat(hz/div, 'f', decimals(step/div), 64) + " " + unit
}

// decimals returns the number of decimals needed to write multiples of step.
func decimals(step float64) int {
	if !(step > 0) {
		return 0
	}
	d := -int(math.Floor(math.Log10(step) + 1e-9))
	if d < 0 {
		return 0
	}
	// A step of 2.5 or 0.25 (not produced by niceStep, but allowed for
	// manual ranges) needs one more digit.
	if s := step * math.Pow(10, float64(d)); math.Abs(s-math.Round(s)) > 1e-6 {
		d++
	}
	return d
}

// formatNum writes a tick value with the decimals of its step, with a true
// minus sign.
func formatNum(v, step float64) string {
	if math.Abs(v) < step*1e-9 {
		v = 0
	}
	s := strconv.FormatFloat(v, 'f', decimals(step), 64)
	if len(s) > 0 && s[0] == '-' {
		s = "−" + s[1:]
	}
	return s
}
