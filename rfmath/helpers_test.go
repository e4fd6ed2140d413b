package rfmath

import (
	"math"
	"math/cmplx"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// closeC reports whether a and b agree to tol, absolutely for |b| ≤ 1 and
// relatively above.
func closeC(a, b complex128, tol float64) bool {
	return cmplx.Abs(a-b) <= tol*math.Max(1, cmplx.Abs(b))
}

// closeF is closeC for float64, with equal infinities equal.
func closeF(a, b, tol float64) bool {
	if math.IsInf(b, 0) || math.IsInf(a, 0) {
		return a == b
	}
	return math.Abs(a-b) <= tol*math.Max(1, math.Abs(b))
}

// checkMatrix fails t unless got and want agree entry by entry to tol.
func checkMatrix(t *testing.T, name string, got, want []complex128, tol float64) {
	t.Helper()
	if len(got) != len(want) {
		t.Fatalf("%s: length %d, want %d", name, len(got), len(want))
	}
	for k := range got {
		if !closeC(got[k], want[k], tol) {
			t.Errorf("%s[%d] = %v, want %v", name, k, got[k], want[k])
		}
	}
}

// realSolve solves A·X = B for complex n×n A and n×m B by embedding them as
// real matrices [Re −Im; Im Re] and calling gonum's LU solver: an
// independent oracle for the package's small complex solver.
func realSolve(t *testing.T, a, b []complex128, n, m int) []complex128 {
	t.Helper()
	ar := mat.NewDense(2*n, 2*n, nil)
	for i := range n {
		for j := range n {
			v := a[i*n+j]
			ar.Set(i, j, real(v))
			ar.Set(i, j+n, -imag(v))
			ar.Set(i+n, j, imag(v))
			ar.Set(i+n, j+n, real(v))
		}
	}
	br := mat.NewDense(2*n, m, nil)
	for i := range n {
		for j := range m {
			v := b[i*m+j]
			br.Set(i, j, real(v))
			br.Set(i+n, j, imag(v))
		}
	}
	var x mat.Dense
	if err := x.Solve(ar, br); err != nil {
		t.Fatalf("gonum solve: %v", err)
	}
	out := make([]complex128, n*m)
	for i := range n {
		for j := range m {
			out[i*m+j] = complex(x.At(i, j), x.At(i+n, j))
		}
	}
	return out
}

// randComplex returns a complex number with parts uniform in (−r, r).
func randComplex(rnd *rand.Rand, r float64) complex128 {
	return complex(r*(2*rnd.Float64()-1), r*(2*rnd.Float64()-1))
}

// randPassiveS returns a random n×n S-matrix whose entries are below 1/n in
// magnitude, so that its norm is below 1 (a passive network).
func randPassiveS(rnd *rand.Rand, n int) []complex128 {
	s := make([]complex128, n*n)
	for k := range s {
		s[k] = randComplex(rnd, 0.7/float64(n))
	}
	return s
}

// randRefs returns n reference resistances between 10 and 200 Ω.
func randRefs(rnd *rand.Rand, n int) []float64 {
	r := make([]float64, n)
	for i := range r {
		r[i] = 10 + 190*rnd.Float64()
	}
	return r
}

// panics reports whether f panics.
func panics(f func()) (p bool) {
	defer func() {
		if recover() != nil {
			p = true
		}
	}()
	f()
	return false
}
