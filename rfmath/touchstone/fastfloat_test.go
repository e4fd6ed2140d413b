package touchstone

import (
	"math"
	"math/rand/v2"
	"strconv"
	"testing"
)

// TestParseFast checks the fast path against strconv.ParseFloat, the
// correctly rounded reference: wherever parseFast answers, its value must
// be ParseFloat's to the bit, and ParseFloat must accept the token.
func TestParseFast(t *testing.T) {
	t.Parallel()
	check := func(t *testing.T, s string, wantFast bool) {
		t.Helper()
		got, ok := parseFast([]byte(s))
		want, err := strconv.ParseFloat(s, 64)
		if ok && (err != nil || math.Float64bits(got) != math.Float64bits(want)) {
			t.Errorf("parseFast(%q) = %v (bits %x), ParseFloat = %v (bits %x), %v", s, got, math.Float64bits(got), want, math.Float64bits(want), err)
		}
		if wantFast && !ok {
			t.Errorf("parseFast(%q) fell back; the fast path should take it", s)
		}
	}
	tests := []struct {
		name string
		in   []string
		fast bool // the fast path must take every one
	}{
		{"integers", []string{"0", "1", "-1", "+7", "007", "1000000", "999999999999999"}, true},
		{"signed zeros", []string{"-0", "+0", "-0.0", "0.000", "-0e5", "0e5000"}, true},
		{"decimals", []string{"0.5", ".5", "5.", "-.25", "0.1", "0.3", "-0.123456789012", "3.14159265358979"}, true},
		{"exponents", []string{"1e0", "1e22", "1E-22", "2.5e+3", "-9.99999999999e-10", "1.23456789012e-05", "100e-2"}, true},
		{"leading zeros", []string{"0.000000000000000000123", "000000000000000000001.5"}, true},
		{"falls back", []string{"1234567890123456", "1e23", "1e-23", "1e400", "1e-400", "4.9e-324", "1.7976931348623157e308", "0.1234567890123456789"}, false},
		{"not numbers", []string{"", "+", "-", ".", "e5", "1e", "1e+", "1e-", "--1", "+-1", "1-2", "1.2.3", "1e5e5", "1e1.5", ".e1"}, false},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			for _, s := range tc.in {
				check(t, s, tc.fast)
			}
		})
	}
}

// TestParseFastRandom compares with ParseFloat on random numbers written
// the ways exports write them, and on random strings of number bytes.
func TestParseFastRandom(t *testing.T) {
	t.Parallel()
	rng := rand.New(rand.NewPCG(3, 5))
	taken := 0
	n := 200_000
	if testing.Short() {
		n = 20_000
	}
	for range n {
		var v float64
		switch rng.IntN(3) {
		case 0:
			v = 2*rng.Float64() - 1
		case 1:
			v = math.Ldexp(rng.Float64(), rng.IntN(200)-100)
		default:
			v = float64(rng.Int64N(1e12)) / 1e3
		}
		if rng.IntN(2) == 0 {
			v = -v
		}
		format := []byte{'g', 'e', 'f', 'E', 'G'}[rng.IntN(5)]
		s := strconv.FormatFloat(v, format, rng.IntN(20)-1, 64)
		got, ok := parseFast([]byte(s))
		want, err := strconv.ParseFloat(s, 64)
		if ok {
			taken++
			if err != nil || math.Float64bits(got) != math.Float64bits(want) {
				t.Fatalf("parseFast(%q) = %v, ParseFloat = %v, %v", s, got, want, err)
			}
		}
	}
	if taken < n/3 {
		t.Errorf("the fast path took only %d of %d numbers", taken, n)
	}
	const alphabet = "0123456789+-.eE"
	for range n {
		b := make([]byte, 1+rng.IntN(8))
		for i := range b {
			b[i] = alphabet[rng.IntN(len(alphabet))]
		}
		got, ok := parseFast(b)
		want, err := strconv.ParseFloat(string(b), 64)
		if ok && (err != nil || math.Float64bits(got) != math.Float64bits(want)) {
			t.Fatalf("parseFast(%q) = %v, ParseFloat = %v, %v", b, got, want, err)
		}
	}
}

func BenchmarkParseFast(b *testing.B) {
	data := bench2Port()
	var toks [][]byte
	start := -1
	for i, c := range data {
		isNum := charClass[c] == clsNum
		switch {
		case isNum && start < 0:
			start = i
		case !isNum && start >= 0:
			toks = append(toks, data[start:i])
			start = -1
		}
	}
	toks = toks[2:] // "50" of the option line and "R"-less leftovers aside
	b.SetBytes(int64(len(data)))
	b.ReportAllocs()
	var sum float64
	for b.Loop() {
		for _, t := range toks {
			v, ok := parseFast(t)
			if !ok {
				v, _ = strconv.ParseFloat(string(t), 64)
			}
			sum += v
		}
	}
	if sum == 0.5 {
		b.Log(sum)
	}
}

// FuzzScanFast checks scanFast against strconv.ParseFloat on any bytes:
// where it answers, the bytes it consumed must be a number ParseFloat
// reads to the same bits.
func FuzzScanFast(f *testing.F) {
	for _, s := range []string{"0", "-0.123456789012", "1e22", "1e23", "5.", ".5e-3", "1e", "--1", "123456789012345", "1.5!x", "2 3"} {
		f.Add([]byte(s))
	}
	f.Fuzz(func(t *testing.T, s []byte) {
		v, end, ok := scanFast(s, 0)
		if !ok {
			return
		}
		if end < 1 || end > len(s) {
			t.Fatalf("scanFast(%q): end %d", s, end)
		}
		want, err := strconv.ParseFloat(string(s[:end]), 64)
		if err != nil || math.Float64bits(v) != math.Float64bits(want) {
			t.Fatalf("scanFast(%q) = %v over %q; ParseFloat = %v, %v", s, v, s[:end], want, err)
		}
	})
}
