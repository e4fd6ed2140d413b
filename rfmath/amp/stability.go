package amp

import (
	"fmt"
	"math"
	"math/cmplx"

	"matchbench/rfmath"
)

// Delta returns Δ = S11·S22 − S12·S21 of s = [S11, S12, S21, S22].
func Delta(s [4]complex128) complex128 { return s[0]*s[3] - s[1]*s[2] }

func abs2(c complex128) float64 { return real(c)*real(c) + imag(c)*imag(c) }

// RollettK returns Rollett's stability factor
//
//	K = (1 − |S11|² − |S22|² + |Δ|²)/(2·|S12·S21|)
//
// Special cases are:
//
//	S12·S21 = 0 with a positive numerator gives +∞
//	S12·S21 = 0 with a negative numerator gives −∞
//	S12·S21 = 0 with a zero numerator gives NaN
func RollettK(s [4]complex128) float64 {
	num := 1 - abs2(s[0]) - abs2(s[3]) + abs2(Delta(s))
	return num / (2 * cmplx.Abs(s[1]*s[2]))
}

// Mu returns the Edwards–Sinsky stability factor of the load plane
//
//	μ = (1 − |S11|²)/(|S22 − Δ·S11*| + |S12·S21|)
//
// the distance from the centre of the load plane to the nearest unstable
// load. A zero denominator gives ±∞ (or NaN when |S11| = 1 as well).
func Mu(s [4]complex128) float64 {
	d := Delta(s)
	return (1 - abs2(s[0])) / (cmplx.Abs(s[3]-d*cmplx.Conj(s[0])) + cmplx.Abs(s[1]*s[2]))
}

// MuPrime returns the Edwards–Sinsky stability factor of the source plane
//
//	μ′ = (1 − |S22|²)/(|S11 − Δ·S22*| + |S12·S21|)
//
// with the special cases of [Mu].
func MuPrime(s [4]complex128) float64 {
	d := Delta(s)
	return (1 - abs2(s[3])) / (cmplx.Abs(s[0]-d*cmplx.Conj(s[3])) + cmplx.Abs(s[1]*s[2]))
}

// Stability holds the stability tests of a 2-port at one frequency.
type Stability struct {
	K        float64
	Delta    complex128
	DeltaMag float64
	Mu       float64
	MuPrime  float64
	// Unconditional is μ > 1: every passive source and load keeps both
	// ports' reflections below 1 (equivalent to K > 1 with |Δ| < 1).
	Unconditional bool
}

// StabilityOf returns the stability tests of s.
func StabilityOf(s [4]complex128) Stability {
	d := Delta(s)
	mu := Mu(s)
	return Stability{
		K:             RollettK(s),
		Delta:         d,
		DeltaMag:      cmplx.Abs(d),
		Mu:            mu,
		MuPrime:       MuPrime(s),
		Unconditional: mu > 1,
	}
}

// StabilityTo fills dst with the stability tests at every frequency of the
// 2-port sweep sw and returns it. A nil dst is allocated; a dst whose
// length is not sw.Len() panics, and so does a sweep that is not a 2-port
// (check with [SAt] or sw.Ports first).
func StabilityTo(dst []Stability, sw *rfmath.Sweep) []Stability {
	if sw.Ports != 2 {
		panic(badSweep)
	}
	n := sw.Len()
	if dst == nil {
		dst = make([]Stability, n)
	} else if len(dst) != n {
		panic(badLength)
	}
	for k := range n {
		m := sw.Matrix(k)
		dst[k] = StabilityOf([4]complex128{m[0], m[1], m[2], m[3]})
	}
	return dst
}

// UnconditionalRanges returns the frequency ranges [lo, hi] in which μ > 1,
// from the tests st at the frequencies freqHz (as [StabilityTo] gives them).
// Where μ crosses 1 between two points the edge is interpolated linearly in
// μ; where a neighbour's μ is not finite the edge is the stable point
// itself. A range that reaches an end of the sweep ends there. Slices of
// different lengths panic.
func UnconditionalRanges(freqHz []float64, st []Stability) [][2]float64 {
	if len(freqHz) != len(st) {
		panic(badPairLen)
	}
	var out [][2]float64
	edge := func(k, j int) float64 { // between stable point k and unstable j
		mk, mj := st[k].Mu, st[j].Mu
		if math.IsInf(mk, 0) || math.IsNaN(mj) || math.IsInf(mj, 0) || mk == mj {
			return freqHz[k]
		}
		t := (mk - 1) / (mk - mj)
		return freqHz[k] + t*(freqHz[j]-freqHz[k])
	}
	for k := 0; k < len(st); {
		if !st[k].Unconditional {
			k++
			continue
		}
		start := k
		for k < len(st) && st[k].Unconditional {
			k++
		}
		lo, hi := freqHz[start], freqHz[k-1]
		if start > 0 {
			lo = edge(start, start-1)
		}
		if k < len(st) {
			hi = edge(k-1, k)
		}
		out = append(out, [2]float64{lo, hi})
	}
	return out
}

// OutputStabilityCircle returns the circle in the load plane on which
// |Γin| = 1 (Pozar, the amplifier chapter's stability circles):
//
//	centre (S22 − Δ·S11*)*/(|S22|² − |Δ|²), radius |S12·S21|/||S22|² − |Δ|²|
//
// with the stable loads outside it when |S22|² > |Δ|² and inside it when
// |S22|² < |Δ|² (see the package documentation); for |S22| = |Δ| it is a
// line. A unilateral device's circle is the single point 1/S22 (radius 0).
func OutputStabilityCircle(s [4]complex128) StabilityCircle {
	d := Delta(s)
	c, side := locus(abs2(s[3])-abs2(d), s[3]-d*cmplx.Conj(s[0]), 1-abs2(s[0]), cmplx.Abs(s[1]*s[2])/math.Abs(abs2(s[3])-abs2(d)))
	return StabilityCircle{Circle: c, Stable: side}
}

// InputStabilityCircle returns the circle in the source plane on which
// |Γout| = 1: [OutputStabilityCircle] with the ports swapped,
//
//	centre (S11 − Δ·S22*)*/(|S11|² − |Δ|²), radius |S12·S21|/||S11|² − |Δ|²|
func InputStabilityCircle(s [4]complex128) StabilityCircle {
	d := Delta(s)
	c, side := locus(abs2(s[0])-abs2(d), s[0]-d*cmplx.Conj(s[3]), 1-abs2(s[3]), cmplx.Abs(s[1]*s[2])/math.Abs(abs2(s[0])-abs2(d)))
	return StabilityCircle{Circle: c, Stable: side}
}

// SAt returns the S-matrix [S11, S12, S21, S22] of the 2-port sweep sw at
// fHz, interpolated as [rfmath.Sweep.InterpAt] does (linearly in the
// complex plane, at the sweep's own references, never extrapolated). A
// sweep that is not a 2-port gives [ErrNotTwoPort]; a frequency outside it
// gives an error wrapping [rfmath.ErrOutOfRange].
func SAt(sw *rfmath.Sweep, fHz float64) ([4]complex128, error) {
	var s [4]complex128
	if sw.Ports != 2 {
		return s, fmt.Errorf("%w: it is a %d-port", ErrNotTwoPort, sw.Ports)
	}
	if _, err := sw.InterpAt(s[:], fHz); err != nil {
		return s, err
	}
	return s, nil
}
