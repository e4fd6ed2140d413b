package rfmath

import (
	"math"
	"math/cmplx"
)

// ABCD is the transmission (chain) matrix of a two-port, [A, B, C, D] for
//
//	⎡V1⎤   ⎡A  B⎤ ⎡V2⎤
//	⎣I1⎦ = ⎣C  D⎦ ⎣I2⎦
//
// where I1 flows into port 1 and I2 flows out of port 2 into whatever is
// connected there, so that the matrix of a cascade is the product of the
// matrices in order from port 1 to port 2 (D. M. Pozar, Microwave
// Engineering, Section 4.4). B is in ohms, C in siemens, A and D have no
// unit. The identity, a through connection, is [1, 0, 0, 1].
type ABCD [4]complex128

// Thru is the ABCD matrix of a direct connection of zero length.
var Thru = ABCD{1, 0, 0, 1}

// Mul returns the cascade a·b: the two-port a with port 2 connected to
// port 1 of b.
func (a ABCD) Mul(b ABCD) ABCD {
	return ABCD{
		a[0]*b[0] + a[1]*b[2], a[0]*b[1] + a[1]*b[3],
		a[2]*b[0] + a[3]*b[2], a[2]*b[1] + a[3]*b[3],
	}
}

// Det returns AD − BC, which is 1 for a reciprocal two-port.
func (a ABCD) Det() complex128 {
	return a[0]*a[3] - a[1]*a[2]
}

// InputImpedance returns the impedance in ohms seen at port 1 with zLoad
// (ohms) at port 2:
//
//	Zin = (A·ZL + B)/(C·ZL + D)
//
// An open load (any infinite zLoad, see [cmplx.IsInf]) gives A/C. A zero
// denominator gives cmplx.Inf().
func (a ABCD) InputImpedance(zLoad complex128) complex128 {
	var n, d complex128
	if cmplx.IsInf(zLoad) {
		n, d = a[0], a[2]
	} else {
		n, d = a[0]*zLoad+a[1], a[2]*zLoad+a[3]
	}
	if d == 0 {
		return cmplx.Inf()
	}
	return n / d
}

// InputGamma returns the reflection coefficient at port 1, against the real
// reference z0 (ohms), with a load of reflection coefficient gLoad (against
// the same z0) at port 2. It works in Γ throughout, so an open (gLoad = 1)
// or a short needs no infinite impedance. With b = B/z0, c = C·z0,
//
//	N = A·(1 + ΓL) + b·(1 − ΓL)
//	M = c·(1 + ΓL) + D·(1 − ΓL)
//	Γin = (N − M)/(N + M)
//
// which is GammaFromZ(InputImpedance(ZL), z0) with ZL = z0·(1 + ΓL)/(1 − ΓL).
func (a ABCD) InputGamma(gLoad complex128, z0 float64) complex128 {
	inv := 1 / z0
	b := complex(real(a[1])*inv, imag(a[1])*inv)
	c := complex(real(a[2])*z0, imag(a[2])*z0)
	p, m := 1+gLoad, 1-gLoad
	n := a[0]*p + b*m
	d := c*p + a[3]*m
	return (n - d) / (n + d)
}

// SToABCD returns the ABCD matrix of a two-port whose S-matrix s =
// [S11, S12, S21, S22] is given against the real references z01 at port 1
// and z02 at port 2 (ohms). With the normalised matrix a = A·√(z02/z01),
// b = B/√(z01·z02), c = C·√(z01·z02), d = D·√(z01/z02), the relations are
// those for a common unit reference (Pozar, Microwave Engineering, Table 4.2,
// from memory for the table number; for unequal references see also
// D. A. Frickey, IEEE Trans. MTT-42(2), 1994, from memory):
//
//	a = ((1 + S11)(1 − S22) + S12·S21)/(2·S21)
//	b = ((1 + S11)(1 + S22) − S12·S21)/(2·S21)
//	c = ((1 − S11)(1 − S22) − S12·S21)/(2·S21)
//	d = ((1 − S11)(1 + S22) + S12·S21)/(2·S21)
//
// A two-port that transmits nothing (S21 = 0) has no ABCD matrix; its
// entries are then not finite. Use [CascadeS] to cascade such networks.
func SToABCD(s [4]complex128, z01, z02 float64) ABCD {
	s11, s12, s21, s22 := s[0], s[1], s[2], s[3]
	p := s12 * s21
	h := 2 * s21
	an := ((1+s11)*(1-s22) + p) / h
	bn := ((1+s11)*(1+s22) - p) / h
	cn := ((1-s11)*(1-s22) - p) / h
	dn := ((1-s11)*(1+s22) + p) / h
	r := math.Sqrt(z01 / z02)
	g := math.Sqrt(z01 * z02)
	return ABCD{
		an * complex(r, 0), bn * complex(g, 0),
		cn / complex(g, 0), dn / complex(r, 0),
	}
}

// ABCDToS returns the S-matrix [S11, S12, S21, S22] of the two-port a
// against the real references z01 at port 1 and z02 at port 2 (ohms). With
// the normalised a, b, c, d of [SToABCD] and Δ = a + b + c + d (Pozar,
// Microwave Engineering, Table 4.2, from memory):
//
//	S11 = (a + b − c − d)/Δ    S12 = 2(ad − bc)/Δ
//	S21 = 2/Δ                  S22 = (−a + b − c + d)/Δ
func ABCDToS(a ABCD, z01, z02 float64) [4]complex128 {
	r := complex(math.Sqrt(z02/z01), 0)
	g := complex(math.Sqrt(z01*z02), 0)
	an, bn, cn, dn := a[0]*r, a[1]/g, a[2]*g, a[3]/r
	del := an + bn + cn + dn
	return [4]complex128{
		(an + bn - cn - dn) / del, 2 * (an*dn - bn*cn) / del,
		2 / del, (-an + bn - cn + dn) / del,
	}
}

// CascadeS returns the S-matrix of two-port a with its port 2 connected to
// port 1 of two-port b, all S-matrices [S11, S12, S21, S22] against the real
// reference z0 (ohms) on every port. It combines the waves directly
// (Redheffer's star product, common practice), so it also works when a or b
// transmits nothing:
//
//	S11 = a11 + a12·a21·b11/(1 − a22·b11)
//	S12 = a12·b12/(1 − a22·b11)
//	S21 = a21·b21/(1 − a22·b11)
//	S22 = b22 + b21·b12·a22/(1 − a22·b11)
//
// z0 does not enter the formula; it documents that both matrices must share
// it. Renormalise first ([Renormalize]) if they do not.
func CascadeS(a, b [4]complex128, z0 float64) [4]complex128 {
	_ = z0
	a11, a12, a21, a22 := a[0], a[1], a[2], a[3]
	b11, b12, b21, b22 := b[0], b[1], b[2], b[3]
	d := 1 - a22*b11
	return [4]complex128{
		a11 + a12*a21*b11/d, a12 * b12 / d,
		a21 * b21 / d, b22 + b21*b12*a22/d,
	}
}

// ZToABCD returns the ABCD matrix of the two-port with the impedance matrix
// z = [Z11, Z12, Z21, Z22] in ohms (Pozar, Table 4.2, from memory):
//
//	A = Z11/Z21   B = (Z11·Z22 − Z12·Z21)/Z21
//	C = 1/Z21     D = Z22/Z21
//
// Z21 = 0 (no transfer) gives entries that are not finite.
func ZToABCD(z [4]complex128) ABCD {
	z21 := z[2]
	return ABCD{z[0] / z21, (z[0]*z[3] - z[1]*z[2]) / z21, 1 / z21, z[3] / z21}
}

// ABCDToZ returns the impedance matrix [Z11, Z12, Z21, Z22] in ohms of the
// two-port a (Pozar, Table 4.2, from memory):
//
//	Z11 = A/C   Z12 = (AD − BC)/C
//	Z21 = 1/C   Z22 = D/C
//
// C = 0 (a series element alone has no Z-matrix) gives entries that are not
// finite.
func ABCDToZ(a ABCD) [4]complex128 {
	c := a[2]
	return [4]complex128{a[0] / c, a.Det() / c, 1 / c, a[3] / c}
}

// YToABCD returns the ABCD matrix of the two-port with the admittance matrix
// y = [Y11, Y12, Y21, Y22] in siemens (Pozar, Table 4.2, from memory):
//
//	A = −Y22/Y21                 B = −1/Y21
//	C = −(Y11·Y22 − Y12·Y21)/Y21  D = −Y11/Y21
//
// Y21 = 0 gives entries that are not finite.
func YToABCD(y [4]complex128) ABCD {
	y21 := y[2]
	return ABCD{-y[3] / y21, -1 / y21, -(y[0]*y[3] - y[1]*y[2]) / y21, -y[0] / y21}
}

// ABCDToY returns the admittance matrix [Y11, Y12, Y21, Y22] in siemens of
// the two-port a (Pozar, Table 4.2, from memory):
//
//	Y11 = D/B   Y12 = −(AD − BC)/B
//	Y21 = −1/B  Y22 = A/B
//
// B = 0 (a shunt element alone has no Y-matrix) gives entries that are not
// finite.
func ABCDToY(a ABCD) [4]complex128 {
	b := a[1]
	return [4]complex128{a[3] / b, -a.Det() / b, -1 / b, a[0] / b}
}
