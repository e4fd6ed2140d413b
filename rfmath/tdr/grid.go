package tdr

import (
	"fmt"
	"math"
	"sort"

	"matchbench/rfmath"
)

// gridTol is the tolerance, as a fraction of the step, within which a
// frequency counts as on a grid: files written with 10 significant digits
// land well inside it.
const gridTol = 1e-6

// uniformStep returns the mean step of freqHz and whether every point lies
// within gridTol of a step of the uniform grid from the first point.
func uniformStep(freqHz []float64) (step float64, uniform bool) {
	n := len(freqHz)
	step = (freqHz[n-1] - freqHz[0]) / float64(n-1)
	for k, f := range freqHz {
		if math.Abs(f-(freqHz[0]+float64(k)*step)) > gridTol*step {
			return step, false
		}
	}
	return step, true
}

// checkInput checks the lengths and the frequencies.
func checkInput(freqHz []float64, gamma []complex128) error {
	if len(gamma) != len(freqHz) {
		panic(badInput)
	}
	if len(freqHz) < 2 {
		return fmt.Errorf("%w: %d points; a transform needs at least 2", ErrGrid, len(freqHz))
	}
	for k, f := range freqHz {
		if math.IsNaN(f) || math.IsInf(f, 0) || f < 0 || (k > 0 && f <= freqHz[k-1]) {
			return fmt.Errorf("%w: frequency %d (%g Hz) is not finite, non-negative and increasing", ErrGrid, k+1, f)
		}
	}
	return nil
}

// lowPassGrid returns the sweep on a harmonic grid f_k = k·df, k = 0 … K, in
// h (length K+1). If the sweep has no DC point h[0] is left zero and hasDC
// is false. A sweep that is already harmonic (uniform, starting at 0 or at
// one step) is used as it is; any other is resampled to K = round(fmax/step)
// steps of df = fmax/K by linear interpolation, which needs the sweep to
// start at or below df.
func lowPassGrid(freqHz []float64, gamma []complex128) (df float64, h []complex128, hasDC, resampled bool, err error) {
	n := len(freqHz)
	fmax := freqHz[n-1]
	step, uniform := uniformStep(freqHz)
	if uniform {
		m := freqHz[0] / step
		if r := math.Round(m); (r == 0 || r == 1) && math.Abs(m-r) <= gridTol {
			k0 := int(r)
			K := n - 1 + k0
			h = make([]complex128, K+1)
			copy(h[k0:], gamma)
			return fmax / float64(K), h, k0 == 0, false, nil
		}
	}
	K := int(math.Round(fmax / step))
	if K < 2 {
		return 0, nil, false, false, fmt.Errorf("%w: low-pass mode needs at least 2 steps from DC to the top of the sweep", ErrGrid)
	}
	df = fmax / float64(K)
	if freqHz[0] > df*(1+gridTol) {
		return 0, nil, false, false, fmt.Errorf("%w: low-pass mode needs a harmonic grid f = k·Δf: the sweep starts at %s, more than one step (Δf = %s) above DC, so %d points below the start would have to be invented; measure from Δf or use band-pass mode",
			ErrGrid, fmtHz(freqHz[0]), fmtHz(df), int(math.Floor(freqHz[0]/df+gridTol)))
	}
	h = make([]complex128, K+1)
	hasDC = freqHz[0] == 0
	k0 := 1
	if hasDC {
		k0 = 0
	}
	for k := k0; k <= K; k++ {
		f := float64(k) * df
		if k == K {
			f = fmax
		}
		h[k] = interp(freqHz, gamma, math.Max(f, freqHz[0]))
	}
	return df, h, hasDC, true, nil
}

// bandPassGrid returns the sweep on a uniform grid of the same span and
// number of points: as it is if it is uniform, else by linear interpolation.
func bandPassGrid(freqHz []float64, gamma []complex128) (df float64, h []complex128, resampled bool) {
	n := len(freqHz)
	step, uniform := uniformStep(freqHz)
	h = make([]complex128, n)
	if uniform {
		copy(h, gamma)
		return step, h, false
	}
	for k := range h {
		f := freqHz[0] + float64(k)*step
		if k == n-1 {
			f = freqHz[n-1]
		}
		h[k] = interp(freqHz, gamma, f)
	}
	return step, h, true
}

// interp interpolates gamma linearly in the complex plane at f, which lies
// within freqHz.
func interp(freqHz []float64, gamma []complex128, f float64) complex128 {
	k := sort.SearchFloat64s(freqHz, f)
	if k < len(freqHz) && freqHz[k] == f {
		return gamma[k]
	}
	if k == 0 {
		return gamma[0]
	}
	if k >= len(freqHz) {
		return gamma[len(gamma)-1]
	}
	t := (f - freqHz[k-1]) / (freqHz[k] - freqHz[k-1])
	return rfmath.Lerp(gamma[k-1], gamma[k], t)
}

// extrapolateDC returns the value at DC of the even parabola a + b·f²
// through the real parts at Δf and 2Δf,
//
//	Γ(0) = (4·Re Γ(Δf) − Re Γ(2Δf)) / 3
//
// clamped to [−1, 1]. The real part of a real impulse response's spectrum
// is even in f and its imaginary part odd, so near DC Re Γ ≈ a + b·f² and
// Im Γ(0) = 0; a passive load has |Γ(0)| ≤ 1.
func extrapolateDC(h1, h2 complex128) float64 {
	v := (4*real(h1) - real(h2)) / 3
	return math.Max(-1, math.Min(1, v))
}

// smoothAtLeast returns the smallest n' ≥ n whose only prime factors are 2,
// 3 and 5, lengths for which the FFT is fast.
func smoothAtLeast(n int) int {
	if n <= 1 {
		return 1
	}
	for m := n; ; m++ {
		r := m
		for _, p := range []int{2, 3, 5} {
			for r%p == 0 {
				r /= p
			}
		}
		if r == 1 {
			return m
		}
	}
}
