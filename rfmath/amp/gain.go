package amp

import (
	"math"
	"math/cmplx"
)

// DB returns 10·log10(g), a power ratio in dB (−∞ for 0, NaN for g < 0).
func DB(g float64) float64 { return 10 * math.Log10(g) }

// FromDB returns the power ratio 10^(dB/10).
func FromDB(db float64) float64 { return math.Pow(10, db/10) }

// GammaIn returns the reflection at port 1 with the load gl on port 2:
//
//	Γin = S11 + S12·S21·ΓL/(1 − S22·ΓL)
//
// A load at the pole (S22·ΓL = 1) gives an infinite value.
func GammaIn(s [4]complex128, gl complex128) complex128 {
	return s[0] + s[1]*s[2]*gl/(1-s[3]*gl)
}

// GammaOut returns the reflection at port 2 with the source gs on port 1:
//
//	Γout = S22 + S12·S21·Γs/(1 − S11·Γs)
func GammaOut(s [4]complex128, gs complex128) complex128 {
	return s[3] + s[1]*s[2]*gs/(1-s[0]*gs)
}

// TransducerGain returns the power delivered to the load over the power
// available from the source (Pozar, the amplifier chapter's two-port power
// gains):
//
//	G_T = |S21|²·(1 − |Γs|²)·(1 − |ΓL|²)/|(1 − S11·Γs)·(1 − S22·ΓL) − S12·S21·Γs·ΓL|²
//
// It is negative where the terminations make the device unstable, and
// infinite where the denominator vanishes (the device oscillates).
func TransducerGain(s [4]complex128, gs, gl complex128) float64 {
	d := (1-s[0]*gs)*(1-s[3]*gl) - s[1]*s[2]*gs*gl
	return abs2(s[2]) * (1 - abs2(gs)) * (1 - abs2(gl)) / abs2(d)
}

// AvailableGain returns the power available at port 2 over the power
// available from the source gs, the transducer gain with the load
// conjugately matched to Γout:
//
//	G_A = |S21|²·(1 − |Γs|²)/(|1 − S11·Γs|² − |S22 − Δ·Γs|²)
//
// which is |S21|²·(1 − |Γs|²)/(|1 − S11·Γs|²·(1 − |Γout|²)).
func AvailableGain(s [4]complex128, gs complex128) float64 {
	return abs2(s[2]) * (1 - abs2(gs)) / (abs2(1-s[0]*gs) - abs2(s[3]-Delta(s)*gs))
}

// OperatingGain returns the power delivered to the load gl over the power
// that enters port 1, the transducer gain with the source conjugately
// matched to Γin:
//
//	G_P = |S21|²·(1 − |ΓL|²)/(|1 − S22·ΓL|² − |S11 − Δ·ΓL|²)
//
// which is |S21|²·(1 − |ΓL|²)/(|1 − S22·ΓL|²·(1 − |Γin|²)).
func OperatingGain(s [4]complex128, gl complex128) float64 {
	return abs2(s[2]) * (1 - abs2(gl)) / (abs2(1-s[3]*gl) - abs2(s[0]-Delta(s)*gl))
}

// MSG returns the maximum stable gain |S21|/|S12| (+∞ when S12 = 0), the
// figure quoted for a device that is not unconditionally stable.
func MSG(s [4]complex128) float64 { return cmplx.Abs(s[2]) / cmplx.Abs(s[1]) }

// MAG returns the maximum available gain of an unconditionally stable
// device, the transducer gain at the simultaneous conjugate match:
//
//	MAG = |S21|/|S12|·(K − √(K² − 1)) = |S21|²/(A + √(A² − |S12·S21|²))
//	A   = (1 − |S11|² − |S22|² + |Δ|²)/2
//
// computed by the second form, which stays finite for S12 = 0 (it is then
// |S21|²/((1 − |S11|²)(1 − |S22|²))). A device that is not unconditionally
// stable gives a *[StabilityError].
func MAG(s [4]complex128) (float64, error) {
	st := StabilityOf(s)
	if !st.Unconditional {
		return 0, &StabilityError{What: "MAG", K: st.K, DeltaMag: st.DeltaMag, Mu: st.Mu}
	}
	return mag(s), nil
}

func mag(s [4]complex128) float64 {
	a := (1 - abs2(s[0]) - abs2(s[3]) + abs2(Delta(s))) / 2
	p := cmplx.Abs(s[1] * s[2])
	r := (a - p) * (a + p)
	if r < 0 { // K = 1 to rounding
		r = 0
	}
	return abs2(s[2]) / (a + math.Sqrt(r))
}

// MaxGain returns MAG with isMAG true when the device is unconditionally
// stable, else MSG with isMAG false: the maximum gain figure that applies.
func MaxGain(s [4]complex128) (g float64, isMAG bool) {
	if StabilityOf(s).Unconditional {
		return mag(s), true
	}
	return MSG(s), false
}

// UnilateralFigure returns the unilateral figure of merit
//
//	U = |S11|·|S12|·|S21|·|S22|/((1 − |S11|²)·(1 − |S22|²))
//
// (Pozar, the amplifier chapter's unilateral design; meaningful for
// |S11|, |S22| < 1). See [UnilateralBounds].
func UnilateralFigure(s [4]complex128) float64 {
	return cmplx.Abs(s[0]) * cmplx.Abs(s[1]) * cmplx.Abs(s[2]) * cmplx.Abs(s[3]) /
		((1 - abs2(s[0])) * (1 - abs2(s[3])))
}

// UnilateralBounds returns the bounds of the ratio of the true transducer
// gain G_T to the unilateral one G_TU (S12 taken as 0) for a unilateral
// figure of merit u ≥ 0:
//
//	lo = 1/(1 + u)² < G_T/G_TU < 1/(1 − u)² = hi
//
// hi is +∞ for u ≥ 1.
func UnilateralBounds(u float64) (lo, hi float64) {
	lo = 1 / ((1 + u) * (1 + u))
	if u >= 1 {
		return lo, math.Inf(1)
	}
	return lo, 1 / ((1 - u) * (1 - u))
}

// UnilateralMaxGain returns the maximum unilateral transducer gain
//
//	G_TU,max = |S21|²/((1 − |S11|²)·(1 − |S22|²))
//
// reached with Γs = S11*, ΓL = S22* when S12 is taken as 0.
func UnilateralMaxGain(s [4]complex128) float64 {
	return abs2(s[2]) / ((1 - abs2(s[0])) * (1 - abs2(s[3])))
}

// AvailableGainCircle returns the circle in the source plane on which the
// available gain [AvailableGain] is gainDB. With g = G_A/|S21|²,
// C1 = S11 − Δ·S22*, D1 = |S11|² − |Δ|² and A as in [MAG], G_A = G on
//
//	(1 + g·D1)·|Γs|² − 2g·Re(C1·Γs) + g·(1 − |S22|²) − 1 = 0
//
// (from G_A's form above, using |C1|² = |S12·S21|² + (1 − |S22|²)·D1 and
// D1 − 1 + |S22|² = −2A), a circle of
//
//	centre g·C1*/(1 + g·D1), radius √(1 − 2A·g + |S12·S21|²·g²)/|1 + g·D1|
//
// (Gonzalez, Microwave Transistor Amplifiers, 2nd ed., Section 3.8, from
// memory for the section). For S12 = 0 it is the unilateral source-gain
// circle of G_S = G_A·(1 − |S22|²)/|S21|². A gain above MAG of an
// unconditionally stable device, or one whose radicand is negative, gives
// a *[GainCircleError]; S21 = 0 gives [ErrNoTransmission]. The part of a
// circle that lies in the unstable region of a conditionally stable
// device is not a usable source.
func AvailableGainCircle(s [4]complex128, gainDB float64) (Circle, error) {
	d := Delta(s)
	return gainCircle(s, gainDB, "source", abs2(s[0])-abs2(d), s[0]-d*cmplx.Conj(s[3]), 1-abs2(s[3]))
}

// OperatingGainCircle returns the circle in the load plane on which the
// operating power gain [OperatingGain] is gainDB: [AvailableGainCircle] with
// the ports swapped,
//
//	centre g·C2*/(1 + g·D2), radius √(1 − 2A·g + |S12·S21|²·g²)/|1 + g·D2|
//	C2 = S22 − Δ·S11*, D2 = |S22|² − |Δ|², g = G_P/|S21|²
//
// (Pozar, the amplifier chapter's constant-gain circles for a bilateral
// device). For S12 = 0 it is the unilateral load-gain circle of
// G_L = G_P·(1 − |S11|²)/|S21|². Errors as for [AvailableGainCircle].
func OperatingGainCircle(s [4]complex128, gainDB float64) (Circle, error) {
	d := Delta(s)
	return gainCircle(s, gainDB, "load", abs2(s[3])-abs2(d), s[3]-d*cmplx.Conj(s[0]), 1-abs2(s[0]))
}

// gainCircle is the circle of normalised gain g = G/|S21|² for the plane
// with quadratic coefficient dn = |Snn|² − |Δ|², cn = Snn − Δ·Smm* and
// em = 1 − |Smm|² of the other port.
func gainCircle(s [4]complex128, gainDB float64, plane string, dn float64, cn complex128, em float64) (Circle, error) {
	s21 := abs2(s[2])
	if s21 == 0 {
		return Circle{}, ErrNoTransmission
	}
	G := FromDB(gainDB)
	st := StabilityOf(s)
	maxDB := math.NaN()
	if st.Unconditional {
		m := mag(s)
		maxDB = DB(m)
		if G > m*(1+1e-12) {
			return Circle{}, &GainCircleError{Plane: plane, GainDB: gainDB, MaxDB: maxDB}
		}
	}
	g := G / s21
	a := (1 - abs2(s[0]) - abs2(s[3]) + abs2(st.Delta)) / 2
	p := cmplx.Abs(s[1] * s[2])
	rad := 1 - 2*a*g + p*p*g*g
	if rad < 0 {
		// At MAG itself the radicand is zero to rounding.
		if rad < -1e-12*(1+2*math.Abs(a)*g+p*p*g*g) {
			return Circle{}, &GainCircleError{Plane: plane, GainDB: gainDB, MaxDB: maxDB}
		}
		rad = 0
	}
	den := 1 + g*dn
	c, _ := locus(den, complex(g, 0)*cn, g*em-1, math.Sqrt(rad)/math.Abs(den))
	return c, nil
}

// ConjugateMatch returns the simultaneous conjugate match: the source gs
// and load gl with gs = Γin(gl)* and gl = Γout(gs)*, which give G_T = MAG
// (Pozar, the amplifier chapter's conjugate-matched design):
//
//	Γs = (B1 − √(B1² − 4|C1|²))/(2·C1),  B1 = 1 + |S11|² − |S22|² − |Δ|², C1 = S11 − Δ·S22*
//	ΓL = (B2 − √(B2² − 4|C2|²))/(2·C2),  B2 = 1 + |S22|² − |S11|² − |Δ|², C2 = S22 − Δ·S11*
//
// computed as Γ = 2·C*/(B + sgn(B)·√(B² − 4|C|²)), the root inside the unit
// circle without cancellation (and Γ = 0 for C = 0). Only an
// unconditionally stable device has one; any other gives a
// *[StabilityError] saying which test failed.
func ConjugateMatch(s [4]complex128) (gs, gl complex128, err error) {
	st := StabilityOf(s)
	if !st.Unconditional {
		return 0, 0, &StabilityError{What: "simultaneous conjugate match", K: st.K, DeltaMag: st.DeltaMag, Mu: st.Mu}
	}
	d := st.Delta
	m1, m2, md := abs2(s[0]), abs2(s[3]), abs2(d)
	gs = conjRoot(1+m1-m2-md, s[0]-d*cmplx.Conj(s[3]))
	gl = conjRoot(1+m2-m1-md, s[3]-d*cmplx.Conj(s[0]))
	return gs, gl, nil
}

// conjRoot returns the root inside the unit circle of C·Γ² − B·Γ + C* = 0.
func conjRoot(b float64, c complex128) complex128 {
	if c == 0 {
		return 0
	}
	r := b*b - 4*abs2(c)
	if r < 0 {
		r = 0
	}
	den := b + math.Copysign(math.Sqrt(r), b)
	return 2 * cmplx.Conj(c) / complex(den, 0)
}
