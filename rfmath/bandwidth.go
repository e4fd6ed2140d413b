package rfmath

import (
	"math"
	"math/cmplx"
)

// FractionalBandwidth returns the bandwidth of the band from loHz to hiHz
// as a share of its centre frequency:
//
//	(hiHz − loHz) / ((hiHz + loHz)/2)
//
// the arithmetic centre, as a usable band read off a return-loss threshold
// is quoted (common practice). It returns NaN unless 0 < loHz ≤ hiHz.
func FractionalBandwidth(loHz, hiHz float64) float64 {
	if !(loHz > 0 && hiHz >= loHz) || math.IsInf(hiHz, 0) {
		return math.NaN()
	}
	return (hiHz - loHz) / ((hiHz + loHz) / 2)
}

// BandCentreHz returns the centre of the band from loHz to hiHz at which a
// match is designed and a band's single-frequency figures (the Chu
// comparison, a network's default design frequency, the search's
// continuous starting points) are taken: the geometric centre
//
//	√(loHz · hiHz)
//
// the centre on a logarithmic frequency axis, at which a lumped resonator
// tuned to the band's edges resonates (ω0² = ω1·ω2; common practice in
// band-pass and matching design). For the narrow bands of radio products
// it is within a few parts per million of the arithmetic centre (866.497
// against 866.5 MHz for 863–870 MHz). It returns NaN unless
// 0 < loHz ≤ hiHz.
func BandCentreHz(loHz, hiHz float64) float64 {
	if !(loHz > 0 && hiHz >= loHz) || math.IsInf(hiHz, 0) {
		return math.NaN()
	}
	return math.Sqrt(loHz * hiHz)
}

// ResonanceSlopeQ returns the Q of the resonance at the crossing c of the
// impedance sweep z (ohms at freqHz) from the slope of the impedance there,
// as A. D. Yaghjian and S. R. Best define it for an antenna tuned to
// resonance ("Impedance, bandwidth, and Q of antennas", IEEE Trans.
// Antennas Propag. 53(4), 2005; from memory for the equation number):
//
//	Q = ω0·|Z′(ω0)| / (2·R(ω0))
//
// with Z′ the derivative with respect to ω, taken as the difference
// quotient of the two measured points around the crossing, and R
// interpolated linearly there. It needs no band edges, so it answers where
// [ResonanceQ] cannot because a half-power edge lies beyond the sweep or
// the resistance grows as fast as the reactance (a low-Q antenna). For a
// series or a parallel RLC it equals ω0·L/R or R/(ω0·L): the difference
// quotient of X = ωL − 1/(ωC) between ω1 and ω2 is L + 1/(ω1·ω2·C), which
// is 2L when ω1·ω2 = ω0². It returns NaN when R at the crossing is not
// positive. A c.Index outside the sweep, or a z whose length differs from
// freqHz, panics.
func ResonanceSlopeQ(freqHz []float64, z []complex128, c Crossing) float64 {
	if len(z) != len(freqHz) {
		panic(badSweepLength)
	}
	if c.Index < 0 || c.Index >= len(z)-1 {
		panic("rfmath: crossing index outside the sweep")
	}
	k := c.Index
	f1, f2 := freqHz[k], freqHz[k+1]
	u := (c.FreqHz - f1) / (f2 - f1)
	r := real(z[k]) + u*(real(z[k+1])-real(z[k]))
	if !(r > 0) || math.IsInf(r, 0) {
		return math.NaN()
	}
	dz := (z[k+1] - z[k]) / complex(2*math.Pi*(f2-f1), 0)
	return 2 * math.Pi * c.FreqHz * cmplx.Abs(dz) / (2 * r)
}
