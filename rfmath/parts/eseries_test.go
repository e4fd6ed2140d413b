package parts

import (
	"errors"
	"math"
	"math/rand/v2"
	"strconv"
	"strings"
	"testing"
)

// Published lists of REFERENCE-CHECKS §14 (IEC 60063; V: several
// independent public listings agree), typed as printed.
const (
	listE12 = "1.0 1.2 1.5 1.8 2.2 2.7 3.3 3.9 4.7 5.6 6.8 8.2"
	listE24 = "1.0 1.1 1.2 1.3 1.5 1.6 1.8 2.0 2.2 2.4 2.7 3.0 3.3 3.6 3.9 4.3 4.7 5.1 5.6 6.2 6.8 7.5 8.2 9.1"
	listE96 = `1.00 1.02 1.05 1.07 1.10 1.13 1.15 1.18 1.21 1.24 1.27 1.30 1.33 1.37 1.40 1.43
1.47 1.50 1.54 1.58 1.62 1.65 1.69 1.74 1.78 1.82 1.87 1.91 1.96 2.00 2.05 2.10
2.15 2.21 2.26 2.32 2.37 2.43 2.49 2.55 2.61 2.67 2.74 2.80 2.87 2.94 3.01 3.09
3.16 3.24 3.32 3.40 3.48 3.57 3.65 3.74 3.83 3.92 4.02 4.12 4.22 4.32 4.42 4.53
4.64 4.75 4.87 4.99 5.11 5.23 5.36 5.49 5.62 5.76 5.90 6.04 6.19 6.34 6.49 6.65
6.81 6.98 7.15 7.32 7.50 7.68 7.87 8.06 8.25 8.45 8.66 8.87 9.09 9.31 9.53 9.76`
)

func parseList(t *testing.T, s string) []float64 {
	t.Helper()
	var v []float64
	for _, f := range strings.Fields(s) {
		x, err := strconv.ParseFloat(f, 64)
		if err != nil {
			t.Fatal(err)
		}
		v = append(v, x)
	}
	return v
}

// TestSeriesTables checks the stored decades against the published lists,
// exactly (Value forms the nearest double to the decimal value).
func TestSeriesTables(t *testing.T) {
	t.Parallel()
	for _, tc := range []struct {
		s    *Series
		list string
	}{{E12, listE12}, {E24, listE24}, {E96, listE96}} {
		want := parseList(t, tc.list)
		got := tc.s.Mantissas()
		if len(got) != len(want) {
			t.Fatalf("%s: %d values, want %d", tc.s, len(got), len(want))
		}
		for i := range want {
			if got[i] != want[i] {
				t.Errorf("%s[%d] = %v, want %v", tc.s, i, got[i], want[i])
			}
		}
	}
	for _, tc := range []struct {
		s *Series
		n int
	}{{E6, 6}, {E12, 12}, {E24, 24}, {E48, 48}, {E96, 96}} {
		if tc.s.PerDecade() != tc.n {
			t.Errorf("%s has %d values per decade, want %d", tc.s, tc.s.PerDecade(), tc.n)
		}
	}
}

// TestSeriesConstruction checks the rules of §14 (C): E96 is 10^(i/96)
// rounded to three figures without exception; rounding 10^(i/N) to two
// figures is wrong at the listed E12/E24 positions; E6 and E48 are every
// other value of E12 and E96 (common practice); E12 ⊂ E24; E24 ∩ E96 is
// {1.0, 1.1, 1.3, 1.5, 2.0, 7.5}.
func TestSeriesConstruction(t *testing.T) {
	t.Parallel()
	round := func(x float64, figs int) float64 {
		p := math.Pow10(figs - 1)
		return math.Round(x*p) / p
	}
	for i, v := range E96.Mantissas() {
		if r := round(math.Pow(10, float64(i)/96), 3); math.Abs(r-v) > 1e-12 {
			t.Errorf("E96[%d] = %v, formula %v", i, v, r)
		}
	}
	for _, tc := range []struct {
		s     *Series
		wrong map[float64]float64 // table value → what the formula gives
	}{
		{E12, map[float64]float64{2.7: 2.6, 3.3: 3.2, 3.9: 3.8, 4.7: 4.6, 8.2: 8.3}},
		{E24, map[float64]float64{2.7: 2.6, 3.0: 2.9, 3.3: 3.2, 3.6: 3.5, 3.9: 3.8, 4.3: 4.2, 4.7: 4.6, 8.2: 8.3}},
	} {
		n := float64(tc.s.PerDecade())
		for i, v := range tc.s.Mantissas() {
			r := round(math.Pow(10, float64(i)/n), 2)
			w, listed := tc.wrong[v]
			switch {
			case listed && math.Abs(r-w) > 1e-12:
				t.Errorf("%s: formula at %v gives %v, §14 says %v", tc.s, v, r, w)
			case !listed && math.Abs(r-v) > 1e-12:
				t.Errorf("%s: formula at %v gives %v, not listed as a pitfall", tc.s, v, r)
			}
		}
	}
	every := func(sub, sup *Series) {
		a, b := sub.Mantissas(), sup.Mantissas()
		for i := range a {
			if a[i] != b[2*i] {
				t.Errorf("%s[%d] = %v, %s[%d] = %v", sub, i, a[i], sup, 2*i, b[2*i])
			}
		}
	}
	every(E6, E12)
	every(E48, E96)
	in := func(v float64, s *Series) bool {
		for _, m := range s.Mantissas() {
			if m == v {
				return true
			}
		}
		return false
	}
	for _, v := range E12.Mantissas() {
		if !in(v, E24) {
			t.Errorf("E12 value %v not in E24", v)
		}
	}
	var both []float64
	for _, v := range E24.Mantissas() {
		if in(v, E96) {
			both = append(both, v)
		}
	}
	if want := []float64{1.0, 1.1, 1.3, 1.5, 2.0, 7.5}; !equalFloats(both, want) {
		t.Errorf("E24 ∩ E96 = %v, want %v", both, want)
	}
}

func equalFloats(a, b []float64) bool {
	if len(a) != len(b) {
		return false
	}
	for i := range a {
		if a[i] != b[i] {
			return false
		}
	}
	return true
}

// TestNearest checks the nearest-value cases of REFERENCE-CHECKS §14 (C),
// which include the L-section values of §6 (Pozar Example 5.1, Bowick
// Example 4-1, from memory).
func TestNearest(t *testing.T) {
	t.Parallel()
	for _, tc := range []struct {
		name   string
		v      float64
		series string
		want   float64
	}{
		{"0.9228 pF E12", 0.9228e-12, "E12", 1.0e-12},
		{"0.9228 pF E24", 0.9228e-12, "E24", 0.91e-12},
		{"38.98 nH E12", 38.98e-9, "E12", 39e-9},
		{"38.98 nH E24", 38.98e-9, "E24", 39e-9},
		{"46.14 nH E12", 46.14e-9, "E12", 47e-9},
		{"46.14 nH E24", 46.14e-9, "E24", 47e-9},
		{"2.599 pF E12", 2.599e-12, "E12", 2.7e-12},
		{"477.5 nH E12", 477.5e-9, "E12", 470e-9},
		{"4.775 pF E24", 4.775e-12, "E24", 4.7e-12},
		{"70.71 Ω E96", 70.71, "E96", 71.5},
		{"22.36 Ω E96", 22.36, "E96", 22.6},
		{"4000 Ω E24", 4000, "E24", 3900},
		{"4000 Ω E96", 4000, "E96", 4020},
		{"9.6 E96", 9.6, "E96", 9.53},
		{"decade wrap 9.55 E12", 9.55, "E12", 10},
		{"ratio rule 1.097 E12", 1.097, "E12", 1.2},
		{"exact value", 4.7e-9, "E24", 4.7e-9},
		{"below 1 wraps down", 0.95, "E24", 0.91}, // √(0.91·1.0) = 0.9539
		{"lower case name", 2.599e-12, "e12", 2.7e-12},
		{"E6", 2.9, "E6", 3.3}, // √(2.2·3.3) = 2.694
		{"E48", 1.08, "E48", 1.10},
	} {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			if got := Nearest(tc.v, tc.series); math.Abs(got-tc.want) > 1e-12*tc.want {
				t.Errorf("Nearest(%v, %s) = %v, want %v", tc.v, tc.series, got, tc.want)
			}
		})
	}
	// The rule matters: by linear distance 1.097 would go to 1.0 (§14).
	if lin := map[bool]float64{true: 1.0, false: 1.2}[1.097-1.0 < 1.2-1.097]; lin != 1.0 {
		t.Errorf("linear rule gives %v; the case no longer tells the rules apart", lin)
	}
	// Just either side of the geometric mean √(1.0·1.2).
	g := math.Sqrt(1.2)
	if Nearest(g*(1-1e-12), "E12") != 1.0 || Nearest(g*(1+1e-12), "E12") != 1.2 {
		t.Errorf("boundary at √1.2 misplaced")
	}
	for _, v := range []float64{0, -1, math.NaN(), math.Inf(1)} {
		if got := Nearest(v, "E24"); !math.IsNaN(got) {
			t.Errorf("Nearest(%v) = %v, want NaN", v, got)
		}
	}
}

// TestNearestRandom checks Index against a direct search over a wide
// window of indices, for random values over 30 decades.
func TestNearestRandom(t *testing.T) {
	t.Parallel()
	rnd := rand.New(rand.NewPCG(1, 1))
	for _, s := range AllSeries {
		for range 2000 {
			v := math.Pow(10, rnd.Float64()*30-15)
			n := s.Index(v)
			best, bestD := 0, math.Inf(1)
			c := int(math.Round(math.Log10(v) * float64(s.PerDecade())))
			for m := c - 10; m <= c+10; m++ {
				if d := math.Abs(math.Log(v / s.Value(m))); d < bestD {
					best, bestD = m, d
				}
			}
			if n != best {
				t.Fatalf("%s.Index(%v) = %d (%v), direct search %d (%v)", s, v, n, s.Value(n), best, s.Value(best))
			}
		}
	}
}

func TestNeighboursSpan(t *testing.T) {
	t.Parallel()
	got := Neighbours(46.14e-9, "E12", 2)
	want := []float64{33e-9, 39e-9, 47e-9, 56e-9, 68e-9}
	for i := range want {
		if math.Abs(got[i]-want[i]) > 1e-21 {
			t.Fatalf("Neighbours = %v, want %v", got, want)
		}
	}
	// Across a decade: around 1.0 in E6 the values are 0.47 0.68 1 1.5 2.2.
	got = E6.Neighbours(make([]float64, 5), 1.05, 2)
	if !equalFloats(got, []float64{0.47, 0.68, 1, 1.5, 2.2}) {
		t.Errorf("E6 neighbours of 1.05 = %v", got)
	}
	if got := E24.Neighbours(nil, 3.3e-12, 0); len(got) != 1 || got[0] != 3.3e-12 {
		t.Errorf("k = 0: %v", got)
	}
	first, last := E12.Span(1e-9, 10e-9) // 1.0 … 8.2 nH and 10 nH
	if last-first != 12 || E12.Value(first) != 1e-9 || E12.Value(last) != 10e-9 {
		t.Errorf("Span(1n, 10n) = %d…%d (%v…%v)", first, last, E12.Value(first), E12.Value(last))
	}
	first, last = E12.Span(1.3, 1.4)
	if last >= first {
		t.Errorf("Span(1.3, 1.4) in E12 = %d…%d, want empty", first, last)
	}
}

func TestLookup(t *testing.T) {
	t.Parallel()
	for _, name := range []string{"E24", "e24", " E24 "} {
		if s, err := Lookup(name); err != nil || s != E24 {
			t.Errorf("Lookup(%q) = %v, %v", name, s, err)
		}
	}
	if _, err := Lookup("E384"); !errors.Is(err, ErrUnknownSeries) {
		t.Errorf("Lookup(E384) error = %v", err)
	}
}

func TestSeriesPanics(t *testing.T) {
	t.Parallel()
	for _, tc := range []struct {
		name string
		f    func()
	}{
		{"unknown series", func() { Nearest(1, "E3") }},
		{"negative k", func() { Neighbours(1, "E12", -1) }},
		{"dst length", func() { E12.Neighbours(make([]float64, 2), 1, 1) }},
		{"zero index", func() { E12.Index(0) }},
		{"infinite index", func() { E12.Index(math.Inf(1)) }},
	} {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			defer func() {
				if r := recover(); r == nil {
					t.Errorf("no panic")
				} else if !strings.HasPrefix(r.(string), "parts:") {
					t.Errorf("panic %q lacks the parts: prefix", r)
				}
			}()
			tc.f()
		})
	}
}

// TestE192 checks the E192 decade of IEC 60063 (REFERENCE-CHECKS §14): 192
// values; every other one is the E96 value; each equals 10^(i/192) rounded
// to three figures except i = 185, listed as 9.20 where the formula gives
// 9.19 (V: a public guide's E192 table and a question-and-answer thread on
// that very discrepancy); the first sixteen values as that table prints
// them; and nearest values by ratio (C).
func TestE192(t *testing.T) {
	t.Parallel()
	m := E192.Mantissas()
	if len(m) != 192 || E192.PerDecade() != 192 {
		t.Fatalf("E192 has %d values per decade", len(m))
	}
	e96 := E96.Mantissas()
	for i, v := range e96 {
		if m[2*i] != v {
			t.Errorf("E192[%d] = %v, E96[%d] = %v", 2*i, m[2*i], i, v)
		}
	}
	for i, v := range m {
		r := math.Round(100*math.Pow(10, float64(i)/192)) / 100
		switch {
		case i == 185:
			if v != 9.20 || r != 9.19 {
				t.Errorf("E192[185] = %v (formula %v), want the listed 9.20 (formula 9.19)", v, r)
			}
		case math.Abs(r-v) > 1e-12:
			t.Errorf("E192[%d] = %v, formula %v", i, v, r)
		}
	}
	if want := parseList(t, "1.00 1.01 1.02 1.04 1.05 1.06 1.07 1.09 1.10 1.11 1.13 1.14 1.15 1.17 1.18 1.20"); !equalFloats(m[:16], want) {
		t.Errorf("E192 starts %v, want %v", m[:16], want)
	}
	for _, tc := range []struct {
		name    string
		v, want float64
	}{
		{"between E96 1.00 and 1.02", 1.012, 1.01},
		{"the listed exception", 9.2, 9.20},
		{"just below the exception", 9.17, 9.20}, // √(9.09·9.20) = 9.145 < 9.17
		{"70.71 Ω", 70.71, 70.6},                 // E96 gives 71.5 (§14); E192 adds 70.6, and √(70.6·71.5) = 71.05
		{"decade wrap", 9.95, 10},                // √(9.88·10) = 9.940
	} {
		if got := E192.Nearest(tc.v); math.Abs(got-tc.want) > 1e-12*tc.want {
			t.Errorf("%s: Nearest(%v) = %v, want %v", tc.name, tc.v, got, tc.want)
		}
	}
	if s, err := Lookup("e192"); err != nil || s != E192 {
		t.Errorf("Lookup(e192) = %v, %v", s, err)
	}
}
