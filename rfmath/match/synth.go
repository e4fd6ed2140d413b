package match

import (
	"fmt"
	"math"
	"math/cmplx"

	"matchbench/rfmath"
	"matchbench/rfmath/units"
)

// Orientation says which part of an L-network is next to the load.
type Orientation string

// Orientations of an L-network.
const (
	// ShuntAtLoad: a shunt part across the load, then a series part toward
	// the source. It can match when the load's conductance G is at most
	// 1/R of the target (for a real source: the load's parallel resistance
	// 1/G is at least the source's).
	ShuntAtLoad Orientation = "shunt_next_to_load"
	// SeriesAtLoad: a series part next to the load, then a shunt part
	// toward the source. It can match when the load's resistance R is at
	// most 1/G of the target (for a real source: R is at most the
	// source's).
	SeriesAtLoad Orientation = "series_next_to_load"
)

// LNetwork is one L-network that matches a load at one frequency.
type LNetwork struct {
	Orientation Orientation
	// Parts lists the parts from the load toward the source. It holds one
	// part when the other is not needed (its reactance would be zero) and
	// none when the load is already matched.
	Parts Network
	// XOhm is the reactance of the series part and BS the susceptance of
	// the shunt part, zero where the part is left out.
	XOhm, BS float64
}

// NoSolution says why an orientation of L-network cannot match a load.
type NoSolution struct {
	Orientation Orientation
	Reason      string
}

// LNetworks returns every lumped L-network that matches the load zLoad to
// the source zSource at fHz: the input impedance of each, seen from the
// source, is the source's conjugate zSource*, so the source delivers its
// available power (a real source sees its own resistance). For each
// orientation there are two solutions (the ± of a square root), one when
// the root is zero, and none when the load's resistance lies on the wrong
// side of the source's; noSol then says why. Reactances become parts by
// sign: X > 0 a series L = X/ω, X < 0 a series C = −1/(ωX), B > 0 a shunt
// C = B/ω, B < 0 a shunt L = −1/(ωB).
//
// With the load Z = R + jX, Y = 1/Z = G + jB and the target Zt = zSource*,
// Yt = 1/Zt = Gt + jBt, the shunt-at-load solution adds B' − B so that
// Re 1/(G + jB') = Rt:
//
//	B' = ±√(G/Rt − G²)   (needs G ≤ 1/Rt)
//	series X = Xt − Im 1/(G + jB')
//
// and the series-at-load solution adds X' − X so that Re 1/(R + jX') = Gt:
//
//	X' = ±√(R/Gt − R²)   (needs R ≤ 1/Gt)
//	shunt B = Bt − Im 1/(R + jX')
//
// For a real source these are the closed forms of Pozar, Microwave
// Engineering, Section 5.1 (from memory; REFERENCE-CHECKS §6); written this
// way they hold for a complex source too.
//
// It returns an error wrapping [ErrSource] if Re zSource ≤ 0 or
// [ErrFrequency] if fHz is not positive and finite. A load with no
// resistance (a pure reactance) has no solution in either orientation.
func LNetworks(zLoad, zSource complex128, fHz float64) (sols []LNetwork, noSol []NoSolution, err error) {
	if !(fHz > 0) || math.IsInf(fHz, 0) {
		return nil, nil, fmt.Errorf("%w: %g Hz", ErrFrequency, fHz)
	}
	if !(real(zSource) > 0) || cmplx.IsInf(zSource) || cmplx.IsNaN(zSource) {
		return nil, nil, fmt.Errorf("%w: %v Ω", ErrSource, zSource)
	}
	if cmplx.IsNaN(zLoad) || cmplx.IsInf(zLoad) {
		return nil, nil, fmt.Errorf("match: load impedance %v Ω has no L-network match", zLoad)
	}
	w := 2 * math.Pi * fHz
	zt := cmplx.Conj(zSource)
	yt := 1 / zt
	r, x := real(zLoad), imag(zLoad)
	if r < 0 {
		reason := fmt.Sprintf("the load's resistance %s is negative (an active load): no passive network matches it", fmtOhm(r))
		return nil, []NoSolution{{ShuntAtLoad, reason}, {SeriesAtLoad, reason}}, nil
	}
	if r == 0 {
		reason := "the load is a pure reactance: it takes no power, and no lossless network can make it do so"
		return nil, []NoSolution{{ShuntAtLoad, reason}, {SeriesAtLoad, reason}}, nil
	}

	// Shunt part next to the load.
	y := 1 / zLoad
	g, b := real(y), imag(y)
	if d := g/real(zt) - g*g; d >= -1e-12*g*g {
		for _, bp := range roots(d) {
			z1 := 1 / complex(g, bp)
			sol := LNetwork{Orientation: ShuntAtLoad, BS: bp - b, XOhm: imag(zt) - imag(z1)}
			sol.Parts = appendShunt(sol.Parts, sol.BS, w, math.Max(math.Abs(b), g))
			sol.Parts = appendSeries(sol.Parts, sol.XOhm, w, math.Max(math.Abs(imag(zt)), cmplx.Abs(z1)))
			sols = append(sols, sol)
		}
	} else {
		noSol = append(noSol, NoSolution{ShuntAtLoad, fmt.Sprintf(
			"the load's parallel resistance 1/G = %s is below %s: a shunt part next to the load cannot raise it",
			fmtOhm(1/g), sourceSide(zSource, real(zt)))})
	}

	// Series part next to the load.
	if d := r/real(yt) - r*r; d >= -1e-12*r*r {
		for _, xp := range roots(d) {
			y1 := 1 / complex(r, xp)
			sol := LNetwork{Orientation: SeriesAtLoad, XOhm: xp - x, BS: imag(yt) - imag(y1)}
			sol.Parts = appendSeries(sol.Parts, sol.XOhm, w, math.Max(math.Abs(x), r))
			sol.Parts = appendShunt(sol.Parts, sol.BS, w, math.Max(math.Abs(imag(yt)), cmplx.Abs(y1)))
			sols = append(sols, sol)
		}
	} else {
		noSol = append(noSol, NoSolution{SeriesAtLoad, fmt.Sprintf(
			"the load's resistance %s is above %s: a series part next to the load cannot lower it",
			fmtOhm(r), sourceSide(zSource, 1/real(yt)))})
	}
	return sols, noSol, nil
}

// roots returns ±√d, or the single root 0 when d is zero or, from
// rounding, slightly negative.
func roots(d float64) []float64 {
	if d <= 0 {
		return []float64{0}
	}
	s := math.Sqrt(d)
	return []float64{s, -s}
}

// negligible reports whether v is zero up to rounding against the scale s
// of the terms it was computed from.
func negligible(v, s float64) bool { return math.Abs(v) <= 1e-12*s }

// appendSeries appends the series part of reactance x at ω = w, unless x is
// zero up to rounding against the scale s.
func appendSeries(n Network, x, w, s float64) Network {
	if x == 0 || negligible(x, s) {
		return n
	}
	if x > 0 {
		return append(n, Part{Kind: SeriesL, Value: x / w})
	}
	return append(n, Part{Kind: SeriesC, Value: -1 / (w * x)})
}

// appendShunt appends the shunt part of susceptance b at ω = w, unless b is
// zero up to rounding against the scale s.
func appendShunt(n Network, b, w, s float64) Network {
	if b == 0 || negligible(b, s) {
		return n
	}
	if b > 0 {
		return append(n, Part{Kind: ShuntC, Value: b / w})
	}
	return append(n, Part{Kind: ShuntL, Value: -1 / (w * b)})
}

func fmtOhm(r float64) string { return units.Format(r, "Ω", 5) }

// sourceSide names the resistance r that the load is compared with: the
// source's own for a real source, else the quantity it stands for.
func sourceSide(zSource complex128, r float64) string {
	if imag(zSource) == 0 {
		return "the source's " + fmtOhm(r)
	}
	if r == real(zSource) {
		return fmtOhm(r) + " (Re Zs)"
	}
	return fmtOhm(r) + " (|Zs|²/Re Zs)"
}

// StubType is the far end of a stub.
type StubType string

// Stub ends.
const (
	OpenStub  StubType = "open"
	ShortStub StubType = "short"
)

// Stub is a single-stub shunt tuner: a line of the reference impedance
// DWavelengths long from the load to the stub, and a stub of the same
// impedance, LWavelengths long, across the line there, open or shorted at
// its far end. Both lengths are in wavelengths on the line and reduced
// modulo one half (adding λ/2 to either gives the same match at the design
// frequency, and a narrower band).
type Stub struct {
	Type         StubType
	DWavelengths float64 // from the load to the stub, in [0, 0.5)
	LWavelengths float64 // of the stub, in [0, 0.5)
	// BS is the susceptance of the line at the stub (normalised b = BS·Z0),
	// which the stub cancels.
	BS float64
}

// ShuntStubs returns the single-stub shunt tuners that match zLoad to the
// real reference z0Ohm (Pozar, Microwave Engineering, Section 5.2, from
// memory; REFERENCE-CHECKS §8): at the distance d from the load where
// Re Y = 1/Z0, with t = tan βd,
//
//	t = [X ± √(R·((Z0 − R)² + X²)/Z0)]/(R − Z0)    (R ≠ Z0)
//	t = −X/(2·Z0), and d = λ/4                      (R = Z0)
//	d = atan(t)/(2π), plus ½ if negative
//
// and the stub cancels the susceptance B there: an open stub of length
// l = atan(−B·Z0)/(2π), a shorted one of l = atan(1/(B·Z0))/(2π), each
// reduced modulo ½. The result lists, for each position (two, or one when
// the roots coincide), the open and then the shorted stub. A load with no
// resistance, or with R < 0, has no solution (nil). A load already matched
// needs no stub: the result is one pair at d = 0 with lengths of zero (open
// stub: no susceptance) and ¼ (shorted stub: an open circuit).
func ShuntStubs(zLoad complex128, z0Ohm float64) []Stub {
	r, x := real(zLoad), imag(zLoad)
	if !(r > 0) || cmplx.IsInf(zLoad) || !(z0Ohm > 0) {
		return nil
	}
	var ds []float64
	switch {
	case r == z0Ohm && x == 0:
		ds = []float64{0}
	case r == z0Ohm:
		ds = []float64{math.Atan(-x/(2*z0Ohm)) / (2 * math.Pi), 0.25}
	default:
		s := math.Sqrt(r * ((z0Ohm-r)*(z0Ohm-r) + x*x) / z0Ohm)
		for _, t := range []float64{(x + s) / (r - z0Ohm), (x - s) / (r - z0Ohm)} {
			ds = append(ds, math.Atan(t)/(2*math.Pi))
		}
	}
	var out []Stub
	for i, d := range ds {
		if d < 0 {
			d += 0.5
		}
		d = reduceHalf(d)
		if i > 0 && math.Abs(d-ds[0]) < 1e-12 {
			continue
		}
		ds[i] = d
		zd := rfmath.LineInputImpedance(zLoad, complex(z0Ohm, 0), 2*math.Pi*d)
		yd := 1 / zd
		b := imag(yd) * z0Ohm // normalised
		// Re y at d must be 1: a check of the root (it fails only when the
		// load has no resistance, excluded above).
		if math.Abs(real(yd)*z0Ohm-1) > 1e-6 {
			continue
		}
		lOpen := reduceHalf(math.Atan(-b) / (2 * math.Pi))
		lShort := 0.25
		if b != 0 {
			lShort = reduceHalf(math.Atan(1/b) / (2 * math.Pi))
		}
		out = append(out,
			Stub{Type: OpenStub, DWavelengths: d, LWavelengths: lOpen, BS: b / z0Ohm},
			Stub{Type: ShortStub, DWavelengths: d, LWavelengths: lShort, BS: b / z0Ohm})
	}
	return out
}

// reduceHalf returns v modulo ½ in [0, ½), with values within rounding of
// ½ taken as 0.
func reduceHalf(v float64) float64 {
	v = math.Mod(v, 0.5)
	if v < 0 {
		v += 0.5
	}
	if v > 0.5-1e-12 {
		v = 0
	}
	return v
}

// QuarterWave is a quarter-wave transformer: a line of the reference
// impedance DWavelengths long from the load to a point where the load is
// seen as the real resistance ROhm, then a λ/4 section of impedance
// Z1Ohm = √(Z0·ROhm).
type QuarterWave struct {
	DWavelengths float64 // line from the load, in [0, 0.5); 0 for a real load
	ROhm         float64 // the real impedance seen at DWavelengths
	Z1Ohm        float64 // impedance of the quarter-wave section
	LWavelengths float64 // length of the section: 0.25
}

// QuarterWaves returns the quarter-wave transformers that match zLoad to
// the real reference z0Ohm (Pozar, Microwave Engineering, Sections 2.5 and
// 5.4, from memory; REFERENCE-CHECKS §5). The section needs a real load:
//
//	Z1 = √(Z0·R)
//
// A complex load is first moved along a line of Z0 to where it is real: the
// voltage maximum, d = θ/(4π) with θ = arg ΓL, where it is R = Z0·S, and
// the voltage minimum a quarter wave further on, R = Z0/S (S the VSWR). So
// a real load R > Z0 gives the transformer at d = 0 (R) and at d = ¼
// (Z0²/R); a real load R < Z0 the same in the other order. The result is
// sorted by DWavelengths. A matched load, or one with |Γ| = 1 (no
// resistance), has none (nil).
func QuarterWaves(zLoad complex128, z0Ohm float64) []QuarterWave {
	if !(z0Ohm > 0) || cmplx.IsInf(zLoad) || !(real(zLoad) > 0) {
		return nil
	}
	g := rfmath.GammaFromZ(zLoad, complex(z0Ohm, 0))
	m := cmplx.Abs(g)
	if m < 1e-12 || m >= 1 {
		return nil
	}
	s := (1 + m) / (1 - m)
	dMax := reduceHalf(cmplx.Phase(g) / (4 * math.Pi))
	out := []QuarterWave{
		{DWavelengths: dMax, ROhm: z0Ohm * s},
		{DWavelengths: reduceHalf(dMax + 0.25), ROhm: z0Ohm / s},
	}
	if out[1].DWavelengths < out[0].DWavelengths {
		out[0], out[1] = out[1], out[0]
	}
	for i := range out {
		out[i].Z1Ohm = math.Sqrt(z0Ohm * out[i].ROhm)
		out[i].LWavelengths = 0.25
	}
	return out
}

// Synthesis is every single-frequency match of a load to a source.
type Synthesis struct {
	FreqHz       float64
	ZLoad        complex128
	ZSource      complex128
	LNetworks    []LNetwork
	NoL          []NoSolution
	Stubs        []Stub        // only for a real source
	QuarterWaves []QuarterWave // only for a real source
	Notes        []string
}

// Synthesize returns the L-networks ([LNetworks]) and, when the source is
// real, the single shunt stubs ([ShuntStubs]) and quarter-wave transformers
// ([QuarterWaves]) on lines of the source's impedance, which match zLoad to
// zSource at fHz. Errors are those of LNetworks.
func Synthesize(zLoad, zSource complex128, fHz float64) (*Synthesis, error) {
	ls, no, err := LNetworks(zLoad, zSource, fHz)
	if err != nil {
		return nil, err
	}
	s := &Synthesis{FreqHz: fHz, ZLoad: zLoad, ZSource: zSource, LNetworks: ls, NoL: no}
	if imag(zSource) != 0 {
		s.Notes = append(s.Notes, "stubs and quarter-wave transformers are given for a real source only: the lines take the source's impedance")
		return s, nil
	}
	z0 := real(zSource)
	s.Stubs = ShuntStubs(zLoad, z0)
	if s.Stubs == nil {
		s.Notes = append(s.Notes, "no stub can match a load without resistance")
	}
	s.QuarterWaves = QuarterWaves(zLoad, z0)
	if s.QuarterWaves == nil {
		if cmplx.Abs(rfmath.GammaFromZ(zLoad, zSource)) < 1e-12 {
			s.Notes = append(s.Notes, "the load is already matched: no transformer is needed")
		} else {
			s.Notes = append(s.Notes, "no quarter-wave transformer matches a load without resistance")
		}
	}
	return s, nil
}
