package units

import (
	"errors"
	"math"
	"testing"
)

// The prefixes are those of the SI Brochure (BIPM, 9th ed., Table 7);
// the RKM writing of values ("4k7") is IEC 60062's letter-for-decimal-point
// code (common practice on parts lists).

func TestParseFrequency(t *testing.T) {
	t.Parallel()
	tests := []struct {
		in   string
		want float64
	}{
		{"2.45GHz", 2.45e9},
		{"2.45G", 2.45e9},
		{"2.45 ghz", 2.45e9},
		{"915e6", 915e6},
		{"433.92 MHz", 433.92e6},
		{"433.92mhz", 433.92e6},
		{"868M", 868e6},
		{"100k", 100e3},
		{"1.5 kHz", 1.5e3},
		{"13.56e6 Hz", 13.56e6},
		{" 50 ", 50},
		{"0", 0},
		{"1T", 1e12},
	}
	for _, tc := range tests {
		t.Run(tc.in, func(t *testing.T) {
			t.Parallel()
			got, err := ParseFrequency(tc.in)
			if err != nil {
				t.Fatalf("ParseFrequency(%q): %v", tc.in, err)
			}
			if math.Abs(got-tc.want) > 1e-9*tc.want {
				t.Errorf("ParseFrequency(%q) = %g, want %g", tc.in, got, tc.want)
			}
		})
	}
}

func TestParseFrequencyErrors(t *testing.T) {
	t.Parallel()
	for _, in := range []string{"", "GHz", "2.4m", "2.4 xHz", "-1G", "1e400", "NaN", "Inf", "2..4G"} {
		_, err := ParseFrequency(in)
		if err == nil {
			t.Errorf("ParseFrequency(%q): no error", in)
			continue
		}
		if !errors.Is(err, ErrSyntax) {
			t.Errorf("ParseFrequency(%q): error %v does not wrap ErrSyntax", in, err)
		}
		var e *Error
		if !errors.As(err, &e) || e.Input != in {
			t.Errorf("ParseFrequency(%q): error %v does not carry the input", in, err)
		}
	}
}

func TestParseValue(t *testing.T) {
	t.Parallel()
	tests := []struct {
		in, unit string
		want     float64
	}{
		{"3.9n", "H", 3.9e-9},
		{"3.9nH", "H", 3.9e-9},
		{"22 nH", "H", 22e-9},
		{"1.2 pF", "F", 1.2e-12},
		{"1.2p", "F", 1.2e-12},
		{"1F", "F", 1},
		{"1fF", "F", 1e-15},
		{"4n7", "H", 4.7e-9},
		{"2p2", "F", 2.2e-12},
		{"4k7", "Ω", 4700},
		{"4R7", "Ω", 4.7},
		{"47 ohm", "Ω", 47},
		{"1.5kΩ", "Ω", 1500},
		{"10uH", "H", 10e-6},
		{"10µH", "H", 10e-6},
		{"10μ", "H", 10e-6},
		{"4µ7", "H", 4.7e-6},
		{"3m", "m", 3},
		{"3mm", "m", 3e-3},
		{"3m", "", 3e-3},
		{"2.5", "", 2.5},
		{"-3.5", "", -3.5},
		{"1e-12", "F", 1e-12},
		{"100ps", "s", 100e-12},
		{"8mm", "m", 8e-3},
		{"8 mm", "m", 8e-3},
		{"0.8cm", "m", 8e-3},
		{"8e-3", "m", 8e-3},
	}
	for _, tc := range tests {
		t.Run(tc.in+"/"+tc.unit, func(t *testing.T) {
			t.Parallel()
			got, err := ParseValue(tc.in, tc.unit)
			if err != nil {
				t.Fatalf("ParseValue(%q, %q): %v", tc.in, tc.unit, err)
			}
			if math.Abs(got-tc.want) > 1e-12*math.Abs(tc.want) {
				t.Errorf("ParseValue(%q, %q) = %g, want %g", tc.in, tc.unit, got, tc.want)
			}
		})
	}
}

func TestParseValueErrors(t *testing.T) {
	t.Parallel()
	tests := []struct{ in, unit string }{
		{"", "H"}, {"nH", "H"}, {"3.9 nF", "H"}, {"3.9x", "H"}, {"3.9 nnH", "H"}, {"1e999", ""},
		{"3cF", "F"}, {"8 in", "m"}, // centi only for lengths; no inches
	}
	for _, tc := range tests {
		if _, err := ParseValue(tc.in, tc.unit); !errors.Is(err, ErrSyntax) {
			t.Errorf("ParseValue(%q, %q): err = %v, want ErrSyntax", tc.in, tc.unit, err)
		}
	}
}

func TestFormat(t *testing.T) {
	t.Parallel()
	tests := []struct {
		v      float64
		unit   string
		digits int
		want   string
	}{
		{3.9e-9, "H", 3, "3.9 nH"},
		{2.45e9, "Hz", 4, "2.45 GHz"},
		{433.92e6, "Hz", 6, "433.92 MHz"},
		{999.96, "Hz", 4, "1 kHz"},
		{1.2e-12, "F", 3, "1.2 pF"},
		{4700, "Ω", 3, "4.7 kΩ"},
		{0, "F", 3, "0 F"},
		{-22e-9, "H", 3, "-22 nH"},
		{50, "Ω", 4, "50 Ω"},
		{0.5, "", 3, "500 m"},
		{12.5, "", 3, "12.5"},
		// Written as an engineer writes them, not as Go does.
		{math.Copysign(0, -1), "Ω", 3, "0 Ω"},
		{math.Inf(1), "Ω", 3, "∞ Ω"},
		{math.Inf(-1), "dB", 3, "−∞ dB"},
		{math.NaN(), "Ω", 3, "n/a"},
		{4.9e-26, "s", 2, "4.9e-26 s"},
		{4.9e-17, "s", 2, "0.049 fs"},
	}
	for _, tc := range tests {
		if got := Format(tc.v, tc.unit, tc.digits); got != tc.want {
			t.Errorf("Format(%g, %q, %d) = %q, want %q", tc.v, tc.unit, tc.digits, got, tc.want)
		}
	}
}

// Round trip: what Format writes, ParseValue reads back within the
// precision written.
func TestFormatParseRoundTrip(t *testing.T) {
	t.Parallel()
	for _, unit := range []string{"H", "F", "Ω", "Hz", ""} {
		for e := -14; e <= 11; e++ {
			v := 3.14159265 * math.Pow(10, float64(e))
			s := Format(v, unit, 6)
			got, err := ParseValue(s, unit)
			if err != nil {
				t.Fatalf("ParseValue(Format(%g)) = %q: %v", v, s, err)
			}
			if math.Abs(got-v) > 1e-5*v {
				t.Errorf("round trip %g → %q → %g", v, s, got)
			}
		}
	}
}

func FuzzParseValue(f *testing.F) {
	for _, s := range []string{"3.9n", "1.2 pF", "4k7", "4R7", "2.45GHz", "10µH", "1e-12", "-0", "4µ7"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		for _, unit := range []string{"", "H", "F", "Ω"} {
			v, err := ParseValue(s, unit)
			if err == nil && (math.IsNaN(v) || math.IsInf(v, 0)) {
				t.Fatalf("ParseValue(%q) = %g without error", s, v)
			}
		}
		if v, err := ParseFrequency(s); err == nil && (math.IsNaN(v) || math.IsInf(v, 0) || v < 0) {
			t.Fatalf("ParseFrequency(%q) = %g without error", s, v)
		}
	})
}

// TestFormatFixed checks the unitless figures: Go's 'f' format (strconv,
// round half to even on the binary value) with the engineer's spellings of
// the special values (common practice: ∞ for a perfect match's VSWR, n/a for
// no value, never "-0.00").
func TestFormatFixed(t *testing.T) {
	t.Parallel()
	for _, tc := range []struct {
		v    float64
		dec  int
		want string
	}{
		{1.4349, 3, "1.435"}, {2, 2, "2.00"}, {-0.001, 2, "0.00"}, {math.Copysign(0, -1), 1, "0.0"},
		{-3.25, 1, "-3.2"}, {math.Inf(1), 2, "∞"}, {math.Inf(-1), 2, "−∞"}, {math.NaN(), 2, "n/a"},
	} {
		if got := FormatFixed(tc.v, tc.dec); got != tc.want {
			t.Errorf("FormatFixed(%g, %d) = %q, want %q", tc.v, tc.dec, got, tc.want)
		}
	}
}
