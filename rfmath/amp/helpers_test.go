package amp

import (
	"math"
	"math/cmplx"
	"math/rand/v2"
	"testing"
)

// polar returns m∠deg°.
func polar(m, deg float64) complex128 { return cmplx.Rect(m, deg*math.Pi/180) }

// near reports whether a and b agree to tol, absolutely for |b| ≤ 1 and
// relatively above.
func near(a, b, tol float64) bool {
	if math.IsInf(a, 0) || math.IsInf(b, 0) {
		return a == b
	}
	return math.Abs(a-b) <= tol*math.Max(1, math.Abs(b))
}

func nearC(a, b complex128, tol float64) bool {
	return cmplx.Abs(a-b) <= tol*math.Max(1, cmplx.Abs(b))
}

// checkC fails t unless got is within tol of want.
func checkC(t *testing.T, name string, got, want complex128, tol float64) {
	t.Helper()
	if !nearC(got, want, tol) {
		t.Errorf("%s = %.9f, want %.9f (±%g)", name, got, want, tol)
	}
}

func checkF(t *testing.T, name string, got, want, tol float64) {
	t.Helper()
	if !near(got, want, tol) {
		t.Errorf("%s = %.9g, want %.9g (±%g)", name, got, want, tol)
	}
}

// checkPolar fails t unless got is m∠deg° to the rounding of a printed
// book value: magnitude within dm, angle within ddeg.
func checkPolar(t *testing.T, name string, got complex128, m, deg, dm, ddeg float64) {
	t.Helper()
	gm, gd := cmplx.Abs(got), cmplx.Phase(got)*180/math.Pi
	dd := math.Mod(gd-deg+540, 360) - 180
	if math.Abs(gm-m) > dm || math.Abs(dd) > ddeg {
		t.Errorf("%s = %.4f∠%.2f°, want %.4g∠%.4g° (book, from memory; ±%g, ±%g°)", name, gm, gd, m, deg, dm, ddeg)
	}
}

// random2Port returns a 2-port with |S11|, |S22| below maxRefl, |S12| from
// 0.001 to 0.3 and |S21| from 0.1 to 10 (log-uniform), random phases: a
// mix of unconditionally and conditionally stable transistors.
func random2Port(rnd *rand.Rand, maxRefl float64) [4]complex128 {
	ph := func() float64 { return 2 * math.Pi * rnd.Float64() }
	logu := func(lo, hi float64) float64 { return lo * math.Pow(hi/lo, rnd.Float64()) }
	return [4]complex128{
		cmplx.Rect(maxRefl*rnd.Float64(), ph()),
		cmplx.Rect(logu(0.001, 0.3), ph()),
		cmplx.Rect(logu(0.1, 10), ph()),
		cmplx.Rect(maxRefl*rnd.Float64(), ph()),
	}
}

// randomDisc returns a point uniformly distributed in |Γ| < r.
func randomDisc(rnd *rand.Rand, r float64) complex128 {
	return cmplx.Rect(r*math.Sqrt(rnd.Float64()), 2*math.Pi*rnd.Float64())
}
