package amp

import (
	"fmt"
	"math"
	"math/cmplx"
	"sort"

	"matchbench/rfmath"
	"matchbench/rfmath/touchstone"
)

// GammaOpt returns the optimum source reflection of p as a complex number,
// |Γopt|·e^(j·∠Γopt).
func GammaOpt(p touchstone.NoisePoint) complex128 {
	return cmplx.Rect(p.GammaOptMag, p.GammaOptDeg*math.Pi/180)
}

// NoiseAt returns the noise parameters at fHz, interpolated between the
// two noise frequencies of pts around it: NFmin (in dB) and Rn linearly in
// frequency, Γopt linearly in the complex plane (the interpolation
// matchbench uses for every reflection), so at a noise frequency it returns
// that point. pts must increase strictly in frequency, as the Touchstone
// reader returns them.
//
// Noise parameters are never extrapolated: a frequency outside
// [pts[0].FreqHz, pts[len−1].FreqHz] gives a *[NoiseRangeError] naming the
// frequency and the range. No points give [ErrNoNoise].
func NoiseAt(pts []touchstone.NoisePoint, fHz float64) (touchstone.NoisePoint, error) {
	n := len(pts)
	if n == 0 {
		return touchstone.NoisePoint{}, ErrNoNoise
	}
	for k := 1; k < n; k++ {
		if !(pts[k].FreqHz > pts[k-1].FreqHz) {
			return touchstone.NoisePoint{}, fmt.Errorf("amp: noise frequencies do not increase at point %d (%g Hz after %g Hz)", k+1, pts[k].FreqHz, pts[k-1].FreqHz)
		}
	}
	lo, hi := pts[0].FreqHz, pts[n-1].FreqHz
	if !(fHz >= lo && fHz <= hi) {
		return touchstone.NoisePoint{}, &NoiseRangeError{FreqHz: fHz, LoHz: lo, HiHz: hi}
	}
	k := sort.Search(n, func(i int) bool { return pts[i].FreqHz >= fHz })
	if pts[k].FreqHz == fHz {
		return pts[k], nil
	}
	a, b := pts[k-1], pts[k]
	t := (fHz - a.FreqHz) / (b.FreqHz - a.FreqHz)
	lerp := func(x, y float64) float64 { return x + t*(y-x) }
	ga, gb := GammaOpt(a), GammaOpt(b)
	g := rfmath.Lerp(ga, gb, t)
	return touchstone.NoisePoint{
		FreqHz:      fHz,
		NFminDB:     lerp(a.NFminDB, b.NFminDB),
		GammaOptMag: cmplx.Abs(g),
		GammaOptDeg: rfmath.AngleDeg(g),
		RnOhm:       lerp(a.RnOhm, b.RnOhm),
	}, nil
}

// NoiseFigureDB returns the noise figure in dB of the 2-port with noise
// parameters p driven from the source reflection gs (against z0Ohm, the
// reference resistance of port 1 that Γopt refers to):
//
//	F = Fmin + (4·Rn/Z0)·|Γs − Γopt|²/((1 − |Γs|²)·|1 + Γopt|²)
//
// Special cases are:
//
//	|Γs| ≥ 1 with Rn > 0 and Γs ≠ Γopt gives +∞ (the source delivers no power)
//	Rn = 0 gives NFmin for every passive Γs
func NoiseFigureDB(p touchstone.NoisePoint, z0Ohm float64, gs complex128) float64 {
	fmin := FromDB(p.NFminDB)
	gOpt := GammaOpt(p)
	num := 4 * p.RnOhm / z0Ohm * abs2(gs-gOpt)
	if num == 0 {
		return p.NFminDB
	}
	den := (1 - abs2(gs)) * abs2(1+gOpt)
	if !(den > 0) {
		return math.Inf(1)
	}
	return DB(fmin + num/den)
}

// NoiseCircle returns the circle in the source plane on which the noise
// figure [NoiseFigureDB] is nfDB: with F = 10^(nfDB/10) and
//
//	N = (F − Fmin)·|1 + Γopt|²/(4·Rn/Z0)
//
// it has centre Γopt/(N + 1) and radius √(N·(N + 1 − |Γopt|²))/(N + 1)
// (Pozar, the amplifier chapter's low-noise design). At nfDB = NFmin it is
// the point Γopt. A figure below NFmin, or Rn = 0 with any other figure,
// gives a *[NoiseCircleError].
func NoiseCircle(p touchstone.NoisePoint, z0Ohm, nfDB float64) (Circle, error) {
	f, fmin := FromDB(nfDB), FromDB(p.NFminDB)
	gOpt := GammaOpt(p)
	if nfDB == p.NFminDB {
		return Circle{Center: gOpt}, nil
	}
	if !(f > fmin) || p.RnOhm == 0 {
		return Circle{}, &NoiseCircleError{NFdB: nfDB, NFminDB: p.NFminDB, RnOhm: p.RnOhm}
	}
	n := (f - fmin) * abs2(1+gOpt) / (4 * p.RnOhm / z0Ohm)
	r := n * (n + 1 - abs2(gOpt))
	if r < 0 {
		r = 0
	}
	return Circle{Center: gOpt / complex(n+1, 0), Radius: math.Sqrt(r) / (n + 1)}, nil
}
