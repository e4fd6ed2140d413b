package parts

import (
	"fmt"
	"math"
	"strings"
)

// Series is an IEC 60063 preferred-number series: a fixed list of values per
// decade, repeated in every decade. Its standard values are numbered by an
// index n on an unbounded ladder: n = N·e + j (0 ≤ j < N, N values per
// decade) is the j-th value of the list times 10^e, so index 0 is 1.0 and
// index N is 10.
//
// The values are held as integers of two (E6–E24) or three (E48–E192)
// significant figures and formed by one correctly rounded multiplication or
// division by a power of ten, so Value(n) is the float64 nearest to the
// printed value: E24's 4.7 in nanohenries is exactly the literal 4.7e-9.
type Series struct {
	name   string
	digits int   // significant figures in mant
	mant   []int // the values of one decade as integers, e.g. 47 for 4.7
}

// The preferred-number series of IEC 60063 ("Preferred number series for
// resistors and capacitors").
//
// E12, E24 and E96 are tables, checked in REFERENCE-CHECKS §14 against
// several independent public listings (V). They are stored, not computed:
// rounding 10^(i/N) to two figures gives the wrong value for eight E24
// entries (2.7, 3.0, 3.3, 3.6, 3.9, 4.3, 4.7, 8.2), while E96 equals
// 10^(i/96) rounded to three figures without exception.
//
// E6 is every other E12 value and E48 every other E96 value; that is how
// the standard builds them (common practice; the lists are from memory and
// the tests check them against that rule). E192 holds every E96 value and
// one more between each two; it equals 10^(i/192) rounded to three figures
// except at i = 185, where the standard lists 9.20 and the formula gives
// 9.19 (REFERENCE-CHECKS §14; the exception and the first values checked
// against two public listings).
var (
	E6  = &Series{"E6", 2, []int{10, 15, 22, 33, 47, 68}}
	E12 = &Series{"E12", 2, []int{10, 12, 15, 18, 22, 27, 33, 39, 47, 56, 68, 82}}
	E24 = &Series{"E24", 2, []int{
		10, 11, 12, 13, 15, 16, 18, 20, 22, 24, 27, 30,
		33, 36, 39, 43, 47, 51, 56, 62, 68, 75, 82, 91,
	}}
	E48 = &Series{"E48", 3, []int{
		100, 105, 110, 115, 121, 127, 133, 140, 147, 154, 162, 169,
		178, 187, 196, 205, 215, 226, 237, 249, 261, 274, 287, 301,
		316, 332, 348, 365, 383, 402, 422, 442, 464, 487, 511, 536,
		562, 590, 619, 649, 681, 715, 750, 787, 825, 866, 909, 953,
	}}
	E96 = &Series{"E96", 3, []int{
		100, 102, 105, 107, 110, 113, 115, 118, 121, 124, 127, 130,
		133, 137, 140, 143, 147, 150, 154, 158, 162, 165, 169, 174,
		178, 182, 187, 191, 196, 200, 205, 210, 215, 221, 226, 232,
		237, 243, 249, 255, 261, 267, 274, 280, 287, 294, 301, 309,
		316, 324, 332, 340, 348, 357, 365, 374, 383, 392, 402, 412,
		422, 432, 442, 453, 464, 475, 487, 499, 511, 523, 536, 549,
		562, 576, 590, 604, 619, 634, 649, 665, 681, 698, 715, 732,
		750, 768, 787, 806, 825, 845, 866, 887, 909, 931, 953, 976,
	}}
	E192 = &Series{"E192", 3, []int{
		100, 101, 102, 104, 105, 106, 107, 109, 110, 111, 113, 114,
		115, 117, 118, 120, 121, 123, 124, 126, 127, 129, 130, 132,
		133, 135, 137, 138, 140, 142, 143, 145, 147, 149, 150, 152,
		154, 156, 158, 160, 162, 164, 165, 167, 169, 172, 174, 176,
		178, 180, 182, 184, 187, 189, 191, 193, 196, 198, 200, 203,
		205, 208, 210, 213, 215, 218, 221, 223, 226, 229, 232, 234,
		237, 240, 243, 246, 249, 252, 255, 258, 261, 264, 267, 271,
		274, 277, 280, 284, 287, 291, 294, 298, 301, 305, 309, 312,
		316, 320, 324, 328, 332, 336, 340, 344, 348, 352, 357, 361,
		365, 370, 374, 379, 383, 388, 392, 397, 402, 407, 412, 417,
		422, 427, 432, 437, 442, 448, 453, 459, 464, 470, 475, 481,
		487, 493, 499, 505, 511, 517, 523, 530, 536, 542, 549, 556,
		562, 569, 576, 583, 590, 597, 604, 612, 619, 626, 634, 642,
		649, 657, 665, 673, 681, 690, 698, 706, 715, 723, 732, 741,
		750, 759, 768, 777, 787, 796, 806, 816, 825, 835, 845, 856,
		866, 876, 887, 898, 909, 920, 931, 942, 953, 965, 976, 988,
	}}
)

// AllSeries lists the series this package knows, coarsest first.
var AllSeries = []*Series{E6, E12, E24, E48, E96, E192}

// Lookup returns the series named name ("E24", case-insensitive, spaces
// ignored). An unknown name returns an error wrapping [ErrUnknownSeries].
func Lookup(name string) (*Series, error) {
	n := strings.ToUpper(strings.TrimSpace(name))
	for _, s := range AllSeries {
		if s.name == n {
			return s, nil
		}
	}
	return nil, fmt.Errorf("%w: %q", ErrUnknownSeries, name)
}

// mustLookup returns the named series and panics for an unknown name.
func mustLookup(name string) *Series {
	s, err := Lookup(name)
	if err != nil {
		panic(badSeries + ": " + name)
	}
	return s
}

// Name returns the series' name, such as "E24".
func (s *Series) Name() string { return s.name }

// String returns the series' name.
func (s *Series) String() string { return s.name }

// PerDecade returns the number of values per decade.
func (s *Series) PerDecade() int { return len(s.mant) }

// Mantissas returns the values of one decade, from 1 up to 10 (excluded),
// as a new slice.
func (s *Series) Mantissas() []float64 {
	m := make([]float64, len(s.mant))
	for j := range m {
		m[j] = s.Value(j)
	}
	return m
}

// Value returns the standard value of index n (see [Series]).
func (s *Series) Value(n int) float64 {
	N := len(s.mant)
	e := floorDiv(n, N)
	j := n - e*N
	p := e - (s.digits - 1)
	m := float64(s.mant[j])
	// One correctly rounded operation with an exact power of ten gives
	// the double nearest the decimal value (for |p| ≤ 22).
	if p >= 0 {
		return m * math.Pow10(p)
	}
	return m / math.Pow10(-p)
}

func floorDiv(a, b int) int {
	q := a / b
	if (a%b != 0) && ((a < 0) != (b < 0)) {
		q--
	}
	return q
}

// Index returns the index of the standard value nearest to v.
//
// Nearest means nearest by ratio (logarithmic distance): the value x that
// minimises |ln(v/x)|. Between two neighbours a < b the boundary is their
// geometric mean √(a·b), not the arithmetic mean; so 1.097 goes to 1.2 in
// E12 (√1.2 = 1.0954), where the arithmetic midpoint 1.1 would give 1.0
// (REFERENCE-CHECKS §14). A v exactly on the boundary goes to the larger
// value. The neighbours of a decade's first value are the last value of the
// decade below and the second value, so 9.55 goes to 10 in E12.
//
// Ratio distance is used because tolerance, and the effect of a part on a
// match, scale with the value: 10 % too large is as far off as 10 % too
// small (rounded to the same relative step).
//
// v must be positive and finite; otherwise Index panics.
func (s *Series) Index(v float64) int {
	if !(v > 0) || math.IsInf(v, 1) {
		panic(badValue)
	}
	N := len(s.mant)
	// The listed values lie within a fraction of a step of 10^(n/N), so
	// Value(n0 − 2) ≤ v < Value(n0 + 3): find the pair a ≤ v < b.
	n := int(math.Floor(float64(N)*math.Log10(v))) - 2
	for s.Value(n+1) <= v {
		n++
	}
	a, b := s.Value(n), s.Value(n+1)
	if v/a >= b/v { // v ≥ √(a·b), without forming v² (no overflow)
		return n + 1
	}
	return n
}

// Nearest returns the standard value nearest to v by ratio (see
// [Series.Index]). A v that is not positive and finite gives NaN.
func (s *Series) Nearest(v float64) float64 {
	if !(v > 0) || math.IsInf(v, 1) {
		return math.NaN()
	}
	return s.Value(s.Index(v))
}

// Neighbours fills dst with the 2k+1 standard values around v in
// increasing order: those of index Index(v)−k … Index(v)+k, so the nearest
// value is dst[k]. A nil dst is allocated; a dst of another length panics,
// as do a negative k and a v that is not positive and finite.
func (s *Series) Neighbours(dst []float64, v float64, k int) []float64 {
	if k < 0 {
		panic(badCount)
	}
	if dst == nil {
		dst = make([]float64, 2*k+1)
	} else if len(dst) != 2*k+1 {
		panic(badNeighbour)
	}
	c := s.Index(v)
	for i := range dst {
		dst[i] = s.Value(c - k + i)
	}
	return dst
}

// Span returns the indices of the first and the last standard value within
// [lo, hi]. When no value lies in the interval, last < first. lo and hi must
// be positive and finite; otherwise Span panics.
func (s *Series) Span(lo, hi float64) (first, last int) {
	first = s.Index(lo)
	if s.Value(first) < lo {
		first++
	}
	last = s.Index(hi)
	if s.Value(last) > hi {
		last--
	}
	return first, last
}

// Nearest returns the standard value of the named series nearest to v by
// ratio (see [Series.Index] for the rule). An unknown series name panics;
// check a name from input with [Lookup] first. A v that is not positive
// and finite gives NaN.
func Nearest(v float64, series string) float64 {
	return mustLookup(series).Nearest(v)
}

// Neighbours returns the 2k+1 standard values of the named series around
// v, the nearest in the middle (see [Series.Neighbours]). An unknown series
// name, a negative k, or a v that is not positive and finite panics.
func Neighbours(v float64, series string, k int) []float64 {
	return mustLookup(series).Neighbours(nil, v, k)
}
