package rfmath

import (
	"fmt"
	"math"
)

// smallOrder is the largest matrix order whose scratch space lives on the
// stack.
const smallOrder = 8

var (
	errZToS   = fmt.Errorf("%w: Z + R has no inverse", ErrSingular)
	errYToS   = fmt.Errorf("%w: I + y has no inverse", ErrSingular)
	errSToZ   = fmt.Errorf("%w: I − S has no inverse, so the network has no Z-matrix", ErrSingular)
	errSToY   = fmt.Errorf("%w: I + S has no inverse, so the network has no Y-matrix", ErrSingular)
	errRenorm = fmt.Errorf("%w: I − ρ·S has no inverse", ErrSingular)
)

// ZToS converts the n×n impedance matrix z, in ohms, to the S-matrix against
// the real port references z0 (ohms), writes it to dst and returns dst.
//
// The waves are Kurokawa's power waves (K. Kurokawa, "Power waves and the
// scattering matrix", IEEE Trans. MTT-13(2), pp. 194–202, March 1965). For a
// real reference Rᵢ at port i
//
//	aᵢ = (Vᵢ + Rᵢ·Iᵢ)/(2√Rᵢ),  bᵢ = (Vᵢ − Rᵢ·Iᵢ)/(2√Rᵢ),  b = S·a
//
// With R = diag(z0), G = R⁻¹ and the normalised matrices z = √G·Z·√G and
// y = √R·Y·√R, the conversions of this file are (REFERENCE-CHECKS §11)
//
//	S = √G·(Z − R)·(Z + R)⁻¹·√R = (z + I)⁻¹·(z − I)    ZToS
//	S = (I + y)⁻¹·(I − y)                              YToS
//	Z = √R·(I − S)⁻¹·(I + S)·√R                        SToZ
//	Y = √G·(I + S)⁻¹·(I − S)·√G                        SToY
//
// (z − I and z + I commute, so the inverse may stand on either side.) With
// the same reference R0 on every port these reduce to the textbook forms such
// as S = (Z − R0·I)(Z + R0·I)⁻¹.
//
// Matrices are n×n, row-major, in []complex128: m[i·n + j] is the entry in
// row i+1, column j+1. A nil dst is allocated; a dst whose length is not n·n
// panics; dst may be the same slice as the input matrix. A matrix whose
// length is not n·n, a reference slice whose length is not n, or n < 1
// panics. A reference that is not positive and finite returns an error
// wrapping [ErrReference]. For n ≤ 8 the conversions do not allocate when
// dst is given. The same holds for YToS, SToZ, SToY and [Renormalize].
//
// ZToS returns an error wrapping [ErrSingular] if Z + R has no inverse,
// which cannot happen for a passive Z.
func ZToS(dst, z []complex128, n int, z0 []float64) ([]complex128, error) {
	// S = (I + z)⁻¹(z − I) = −(I + z)⁻¹(I − z).
	return cayley(dst, z, n, z0, scaleDiv, 1, scaleNone, -1, errZToS)
}

// YToS converts the n×n admittance matrix y, in siemens, to the S-matrix
// against the real port references z0 (ohms), writes it to dst and returns
// dst.
//
//	S = (I + y)⁻¹·(I − y),  y = √R·Y·√R
//
// The conventions are those of [ZToS]. YToS returns an error wrapping
// [ErrSingular] if I + y has no inverse, which cannot happen for a passive Y.
func YToS(dst, y []complex128, n int, z0 []float64) ([]complex128, error) {
	return cayley(dst, y, n, z0, scaleMul, 1, scaleNone, 1, errYToS)
}

// SToZ converts the n×n S-matrix s, against the real port references z0
// (ohms), to the impedance matrix in ohms, writes it to dst and returns dst.
//
//	Z = √R·(I − S)⁻¹·(I + S)·√R
//
// The conventions are those of [ZToS]. SToZ returns an error wrapping
// [ErrSingular] if I − S has no inverse, as for a network with an open
// circuit at a port (S11 = 1 of a 1-port).
func SToZ(dst, s []complex128, n int, z0 []float64) ([]complex128, error) {
	// (I − S)⁻¹(I + S) is the form below with M = −S.
	return cayley(dst, s, n, z0, scaleNone, -1, scaleMul, 1, errSToZ)
}

// SToY converts the n×n S-matrix s, against the real port references z0
// (ohms), to the admittance matrix in siemens, writes it to dst and returns
// dst.
//
//	Y = √G·(I + S)⁻¹·(I − S)·√G
//
// The conventions are those of [ZToS]. SToY returns an error wrapping
// [ErrSingular] if I + S has no inverse, as for a network with a short
// circuit at a port (S11 = −1 of a 1-port).
func SToY(dst, s []complex128, n int, z0 []float64) ([]complex128, error) {
	return cayley(dst, s, n, z0, scaleNone, 1, scaleDiv, 1, errSToY)
}

// refScale selects a per-entry factor of the port references.
type refScale int

const (
	scaleNone refScale = iota // 1
	scaleMul                  // √(Rᵢ·Rⱼ)
	scaleDiv                  // 1/√(Rᵢ·Rⱼ)
)

// factor returns the factor of entry (i, j) for the references ri, rj.
func (sc refScale) factor(ri, rj float64) complex128 {
	switch sc {
	case scaleMul:
		return complex(math.Sqrt(ri*rj), 0)
	case scaleDiv:
		return complex(1/math.Sqrt(ri*rj), 0)
	}
	return 1
}

// cayley is the common form of the four conversions: it fills dst with
//
//	σ·(I + M)⁻¹·(I − M),  Mᵢⱼ = μ·in(Rᵢ, Rⱼ)·mᵢⱼ
//
// and then multiplies entry (i, j) by out(Rᵢ, Rⱼ). It checks the shapes and
// references, and returns errSingular if I + M has no inverse.
func cayley(dst, m []complex128, n int, z0 []float64, in refScale, mu complex128, out refScale, sigma complex128, errSingular error) ([]complex128, error) {
	dst = checkNPort(dst, m, n, z0)
	if err := checkRefs(z0); err != nil {
		return dst, err
	}
	var stack [2 * smallOrder * smallOrder]complex128
	a, b := scratch(stack[:], n)
	var big float64
	for i := range n {
		for j := range n {
			v := mu * in.factor(z0[i], z0[j]) * m[i*n+j]
			a[i*n+j], b[i*n+j] = v, -v
			big = math.Max(big, abs1(v))
		}
		a[i*n+i]++
		b[i*n+i]++
	}
	if !solveInPlace(a, b, n, n, pivotTol(n, big)) {
		return dst, errSingular
	}
	for i := range n {
		for j := range n {
			dst[i*n+j] = sigma * out.factor(z0[i], z0[j]) * b[i*n+j]
		}
	}
	return dst, nil
}

// Renormalize converts the n×n S-matrix s from the real port references
// z0From to the real port references z0To (both in ohms), writes it to dst
// and returns dst.
//
// Going through Z would fail for a network with an open port, so the waves
// are transformed directly. With ρᵢ = (R'ᵢ − Rᵢ)/(R'ᵢ + Rᵢ) and
// kᵢ = (Rᵢ + R'ᵢ)/(2√(Rᵢ·R'ᵢ)), the new power waves are a' = K(a − ρb) and
// b' = K(b − ρa), so
//
//	S' = K·(S − ρ)·(I − ρ·S)⁻¹·K⁻¹,  ρ = diag(ρᵢ), K = diag(kᵢ)
//
// which for one port is Γ' = (Γ − ρ)/(1 − ρΓ) (REFERENCE-CHECKS §11). The
// result equals the route through Z given at [ZToS] (Kurokawa 1965), and the
// conventions on dst and panics are the same. Renormalize returns an error
// wrapping [ErrSingular] if I − ρ·S has no inverse, which cannot happen for
// a passive S.
func Renormalize(dst, s []complex128, n int, z0From, z0To []float64) ([]complex128, error) {
	dst = checkNPort(dst, s, n, z0From)
	if len(z0To) != n {
		panic(badRefCount)
	}
	if err := checkRefs(z0From); err != nil {
		return dst, err
	}
	if err := checkRefs(z0To); err != nil {
		return dst, err
	}
	var stack [2 * smallOrder * smallOrder]complex128
	a, b := scratch(stack[:], n)
	// X = (S − ρ)(I − ρS)⁻¹ is found from its transpose:
	// (I − ρS)ᵀ·Xᵀ = (S − ρ)ᵀ.
	for i := range n {
		for j := range n {
			sji := s[j*n+i]
			a[i*n+j] = -complex(rho(z0From[j], z0To[j]), 0) * sji
			b[i*n+j] = sji
		}
		a[i*n+i]++
		b[i*n+i] -= complex(rho(z0From[i], z0To[i]), 0)
	}
	var big float64
	for _, v := range s {
		big = math.Max(big, abs1(v))
	}
	if !solveInPlace(a, b, n, n, pivotTol(n, big)) {
		return dst, errRenorm
	}
	for i := range n {
		ki := renormK(z0From[i], z0To[i])
		for j := range n {
			dst[i*n+j] = b[j*n+i] * complex(ki/renormK(z0From[j], z0To[j]), 0)
		}
	}
	return dst, nil
}

// rho returns the reflection coefficient of the new reference seen in the
// old one, (to − from)/(to + from).
func rho(from, to float64) float64 { return (to - from) / (to + from) }

// renormK returns (from + to)/(2√(from·to)).
func renormK(from, to float64) float64 { return (from + to) / (2 * math.Sqrt(from*to)) }

// checkNPort checks the shapes shared by the N-port conversions and returns
// dst, allocated if nil.
func checkNPort(dst, m []complex128, n int, z0 []float64) []complex128 {
	if n < 1 {
		panic(badOrder)
	}
	if len(m) != n*n {
		panic(badMatrix)
	}
	if len(z0) != n {
		panic(badRefCount)
	}
	if dst == nil {
		return make([]complex128, n*n)
	}
	if len(dst) != n*n {
		panic(badLength)
	}
	return dst
}

// checkRefs returns an error wrapping ErrReference for the first reference
// that is not positive and finite.
func checkRefs(z0 []float64) error {
	for i, r := range z0 {
		if !(r > 0) || math.IsInf(r, 1) {
			return fmt.Errorf("%w: port %d has %g Ω", ErrReference, i+1, r)
		}
	}
	return nil
}

// scratch returns two n×n work matrices, carved from stack when they fit.
func scratch(stack []complex128, n int) (a, b []complex128) {
	nn := n * n
	var buf []complex128
	if 2*nn <= len(stack) {
		buf = stack[:2*nn]
	} else {
		buf = make([]complex128, 2*nn)
	}
	return buf[:nn:nn], buf[nn:]
}

// abs1 returns |Re v| + |Im v|, a cheap magnitude for pivoting.
func abs1(v complex128) float64 { return math.Abs(real(v)) + math.Abs(imag(v)) }

// pivotTol returns the pivot magnitude at or below which I ± M counts as
// singular, for an n×n M whose largest entry (|Re| + |Im|) is big: a few n·ε
// relative to 1 + big, so that the cancellation in 1 − S11 of an open counts
// as a zero pivot even when rounding leaves a tiny remainder.
func pivotTol(n int, big float64) float64 {
	return 4 * float64(n) * epsilon * (1 + big)
}

// epsilon is the spacing of float64 values at 1.
const epsilon = 0x1p-52

// solveInPlace solves A·X = B for X by Gaussian elimination with partial
// pivoting (G. H. Golub and C. F. Van Loan, Matrix Computations, §3.4).
// A is n×n and B is n×m, both row-major; A is destroyed and B is
// overwritten with X. It reports false if a pivot's magnitude (|Re| + |Im|)
// is at most tol. NaN entries propagate to X rather than report singular.
func solveInPlace(a, b []complex128, n, m int, tol float64) bool {
	for k := range n {
		p, best := k, abs1(a[k*n+k])
		for i := k + 1; i < n; i++ {
			if v := abs1(a[i*n+k]); v > best {
				p, best = i, v
			}
		}
		if best <= tol {
			return false
		}
		if p != k {
			for j := k; j < n; j++ {
				a[k*n+j], a[p*n+j] = a[p*n+j], a[k*n+j]
			}
			for j := range m {
				b[k*m+j], b[p*m+j] = b[p*m+j], b[k*m+j]
			}
		}
		piv := a[k*n+k]
		for i := k + 1; i < n; i++ {
			f := a[i*n+k] / piv
			if f == 0 {
				continue
			}
			for j := k + 1; j < n; j++ {
				a[i*n+j] -= f * a[k*n+j]
			}
			for j := range m {
				b[i*m+j] -= f * b[k*m+j]
			}
		}
	}
	for k := n - 1; k >= 0; k-- {
		piv := a[k*n+k]
		for j := range m {
			x := b[k*m+j]
			for l := k + 1; l < n; l++ {
				x -= a[k*n+l] * b[l*m+j]
			}
			b[k*m+j] = x / piv
		}
	}
	return true
}
