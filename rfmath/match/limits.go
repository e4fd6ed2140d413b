package match

import (
	"errors"
	"fmt"
	"math"

	"matchbench/rfmath"
	"matchbench/rfmath/units"
)

// RLC is a model of a load: a resistance with an inductance and a
// capacitance, all in series or all in parallel. A missing element has a
// zero value: a series RLC with CF = 0 is a series RL (no capacitor, a short
// in its place); a parallel RLC with LH = 0 is a parallel RC (no inductor,
// an open in its place).
type RLC struct {
	Parallel bool
	ROhm     float64
	LH       float64 // 0: none
	CF       float64 // 0: none
}

// Z returns the model's impedance in ohms at fHz.
func (m RLC) Z(fHz float64) complex128 {
	w := 2 * math.Pi * fHz
	if m.Parallel {
		y := complex(1/m.ROhm, 0)
		if m.LH > 0 {
			y += complex(0, -1/(w*m.LH))
		}
		if m.CF > 0 {
			y += complex(0, w*m.CF)
		}
		return 1 / y
	}
	z := complex(m.ROhm, 0)
	if m.LH > 0 {
		z += complex(0, w*m.LH)
	}
	if m.CF > 0 {
		z += complex(0, -1/(w*m.CF))
	}
	return z
}

// String names the model, e.g. "series RLC: R 13.2 Ω, L 34 nH, C 0.83 pF".
func (m RLC) String() string {
	kind := "series "
	if m.Parallel {
		kind = "parallel "
	}
	el := "R"
	if m.LH > 0 {
		el += "L"
	}
	if m.CF > 0 {
		el += "C"
	}
	s := fmt.Sprintf("%s%s: R %s", kind, el, fmtOhm(m.ROhm))
	if m.LH > 0 {
		s += ", L " + units.Format(m.LH, "H", 4)
	}
	if m.CF > 0 {
		s += ", C " + units.Format(m.CF, "F", 4)
	}
	return s
}

// ResonanceHz returns 1/(2π√(LC)), or 0 if an element is missing.
func (m RLC) ResonanceHz() float64 {
	if m.LH > 0 && m.CF > 0 {
		return 1 / (2 * math.Pi * math.Sqrt(m.LH*m.CF))
	}
	return 0
}

// Q returns the model's Q at its resonance: ω0·L/R for a series RLC,
// R/(ω0·L) for a parallel one (Pozar, Microwave Engineering, Section 6.1,
// from memory; REFERENCE-CHECKS §9 ), or NaN if it does not
// resonate (an element is missing).
func (m RLC) Q() float64 {
	f0 := m.ResonanceHz()
	if f0 == 0 {
		return math.NaN()
	}
	x := 2 * math.Pi * f0 * m.LH
	if m.Parallel {
		return m.ROhm / x
	}
	return x / m.ROhm
}

// Fit is an [RLC] fitted to a measured load.
type Fit struct {
	RLC
	// LoHz and HiHz bound the points fitted.
	LoHz, HiHz float64
	// RMSGammaError is the root-mean-square of |Γ_model − Γ_measured| over
	// those points: how well the model describes the load (0.01 is close).
	RMSGammaError float64
}

// FitTrustRMSGamma is the largest RMS error in Γ at which a fitted RLC is
// trusted to stand for the load in [BodeFano]. Beyond it the model misses
// the measured reflection by more than the return-loss figures it is meant
// to bound can bear: at |Γ| = 0.32 (10 dB of return loss) an error of 0.05
// in Γ spans 8.8 to 11.5 dB, and a model that far off has another Q than
// the load. This is matchbench's own threshold (not a standard), chosen so
// that a single resonance fitted across its own band passes (the RLC of
// REFERENCE-CHECKS §9 R-1 fits to rounding) while a load with two
// resonances near the bands, or a wide span of a cable's ripple, fails.
const FitTrustRMSGamma = 0.05

// Trusted reports whether the fit is close enough to the load for a limit
// drawn from it to be trusted: RMSGammaError ≤ [FitTrustRMSGamma].
func (f Fit) Trusted() bool { return f.RMSGammaError <= FitTrustRMSGamma }

// FitRLC fits a series and a parallel RLC to the load between loHz and
// hiHz and returns the one whose reflection is closer to the measured
// one.
//
// The series fit is a linear least-squares fit of the impedance: R is the
// mean of Re Z, and L and D = 1/C minimise Σ(X − ωL + D/ω)² over the
// points; the parallel fit does the same with the admittance, G and C,
// 1/L. If an element comes out negative (the load does not resonate that
// way) it is dropped and the other refitted alone; a model with a
// negative or zero R, or with no reactive element left, is not used. A
// load that neither model fits returns an error wrapping [ErrFit].
//
// The fit describes the load near the bands only; its elements are not
// those of a physical circuit. It is what the Bode–Fano limit is applied
// to ([BodeFano]).
func FitRLC(l Load, loHz, hiHz float64) (Fit, error) {
	if err := l.validate(); err != nil {
		return Fit{}, err
	}
	var fs []float64
	var zs []complex128
	z0 := complex(l.Z0Ohm, 0)
	for k, f := range l.FreqHz {
		if f >= loHz && f <= hiHz && f > 0 {
			fs = append(fs, f)
			zs = append(zs, rfmath.ZFromGamma(l.Gamma[k], z0))
		}
	}
	if len(fs) < 3 {
		return Fit{}, fmt.Errorf("%w: %d points between %g and %g Hz; at least 3 needed", ErrFit, len(fs), loHz, hiHz)
	}
	best := Fit{RMSGammaError: math.Inf(1)}
	for _, parallel := range []bool{false, true} {
		m, ok := fitOne(fs, zs, parallel)
		if !ok {
			continue
		}
		e := 0.0
		for k, f := range fs {
			d := rfmath.GammaFromZ(m.Z(f), z0) - rfmath.GammaFromZ(zs[k], z0)
			e += real(d)*real(d) + imag(d)*imag(d)
		}
		e = math.Sqrt(e / float64(len(fs)))
		if e < best.RMSGammaError {
			best = Fit{RLC: m, LoHz: fs[0], HiHz: fs[len(fs)-1], RMSGammaError: e}
		}
	}
	if math.IsInf(best.RMSGammaError, 1) {
		return Fit{}, fmt.Errorf("%w between %g and %g Hz", ErrFit, loHz, hiHz)
	}
	return best, nil
}

// fitOne fits one model: on Z for a series model, on Y = 1/Z for a
// parallel one, v = p + j(ω·a − b/ω).
func fitOne(fs []float64, zs []complex128, parallel bool) (RLC, bool) {
	n := float64(len(fs))
	var sp, s11, s12, s22, t1, t2 float64
	for k, f := range fs {
		v := zs[k]
		if parallel {
			v = 1 / v
		}
		w := 2 * math.Pi * f
		sp += real(v)
		// Columns ω and −1/ω.
		s11 += w * w
		s12 += -1
		s22 += 1 / (w * w)
		t1 += w * imag(v)
		t2 += -imag(v) / w
	}
	p := sp / n
	if !(p > 0) {
		return RLC{}, false
	}
	det := s11*s22 - s12*s12
	a := (t1*s22 - t2*s12) / det
	b := (s11*t2 - s12*t1) / det
	if !(a > 0) || !(b > 0) {
		// Refit with one column.
		a = math.Max(t1/s11, 0)
		b = math.Max(t2/s22, 0)
		// Keep the single element that explains more of the reactance.
		ra, rb := 0.0, 0.0
		for k, f := range fs {
			v := zs[k]
			if parallel {
				v = 1 / v
			}
			w := 2 * math.Pi * f
			ra += sq(imag(v) - w*a)
			rb += sq(imag(v) + b/w)
		}
		if ra <= rb {
			b = 0
		} else {
			a = 0
		}
		if a == 0 && b == 0 {
			return RLC{}, false
		}
	}
	// Drop an element too weak to matter anywhere in the window (a
	// rounding residue of the fit): its reactance (or susceptance) below
	// 1e-9 of the model's scale.
	wLo, wHi := 2*math.Pi*fs[0], 2*math.Pi*fs[len(fs)-1]
	scale := math.Max(p, math.Max(a*wHi, b/wLo))
	if a*wHi < 1e-9*scale {
		a = 0
	}
	if b/wLo < 1e-9*scale {
		b = 0
	}
	if a == 0 && b == 0 {
		return RLC{}, false
	}
	m := RLC{Parallel: parallel}
	if parallel {
		// Y = G + j(ωC − 1/(ωL)).
		m.ROhm = 1 / p
		m.CF = a
		if b > 0 {
			m.LH = 1 / b
		}
	} else {
		// Z = R + j(ωL − 1/(ωC)).
		m.ROhm = p
		m.LH = a
		if b > 0 {
			m.CF = 1 / b
		}
	}
	return m, true
}

func sq(x float64) float64 { return x * x }

// Limit is the Bode–Fano limit of a load over a set of bands.
type Limit struct {
	Model RLC
	// Integral is the bound on ∫₀^∞ ln(1/|Γ|) dω (ω in rad/s), +Inf when
	// the model has no element that sets it; IntegralInv the bound on
	// ∫₀^∞ ω⁻² ln(1/|Γ|) dω (in s/rad), likewise.
	Integral, IntegralInv float64
	// BestRLdB is the highest return loss that a lossless network of any
	// order can hold at once across every band, with total reflection
	// elsewhere: the Bode–Fano limit. +Inf when nothing limits it (a
	// model with no reactive element).
	BestRLdB float64
	// GammaMin is the least |Γ| that goes with it: 10^(−BestRLdB/20).
	GammaMin float64
	// MaxMarginDB is the largest margin m such that every band can hold
	// its requirement plus m at once; negative when the requirements
	// together are beyond the limit.
	MaxMarginDB float64
}

// Feasible reports whether the requirements of every band can be met at
// once by some lossless network (MaxMarginDB ≥ 0). A requirement within
// the limit may still need many parts.
func (l Limit) Feasible() bool { return l.MaxMarginDB >= 0 }

// BodeFano returns the Bode–Fano limit of the load model m over the bands
// (H. W. Bode, Network Analysis and Feedback Amplifier Design, 1945;
// R. M. Fano, "Theoretical limitations on the broadband matching of
// arbitrary impedances", J. Franklin Inst. 249, 1950; Pozar, Microwave
// Engineering, Section 5.9 "Bode–Fano criteria", from memory for the
// section number). For any lossless passive matching network between a
// resistive source and the load,
//
//	parallel RC:  ∫₀^∞ ln(1/|Γ(ω)|) dω ≤ π/(RC)
//	series RL:    ∫₀^∞ ln(1/|Γ(ω)|) dω ≤ π·R/L
//	series RC:    ∫₀^∞ ω⁻² ln(1/|Γ(ω)|) dω ≤ π·R·C
//	parallel RL:  ∫₀^∞ ω⁻² ln(1/|Γ(ω)|) dω ≤ π·L/R
//
// and a resonant RLC must satisfy both bounds that its elements set (a
// series RLC: π·R/L and π·R·C; a parallel RLC: π/(RC) and π·L/R). With
// |Γ| = Γm constant over bands b = [ω1, ω2] and 1 elsewhere, the integrals
// are ln(1/Γm)·Σ(ω2 − ω1) and ln(1/Γm)·Σ(1/ω1 − 1/ω2), so for a single band
// of a parallel RC, Γm ≥ exp(−π/(Δω·RC)), and of a series RLC of
// Q = ω0·L/R at its resonance, Γm ≥ exp(−π·ω0/(Q·Δω)). With requirements
// RL_b the largest common margin m solves Σ (RL_b + m)·(ln 10/20)·w_b =
// bound for each bound, w_b the band's weight in that integral.
//
// The limit needs an infinite number of parts to reach; it says what is
// impossible, not what is easy.
func BodeFano(m RLC, bands []Band) Limit {
	lim := Limit{Model: m, Integral: math.Inf(1), IntegralInv: math.Inf(1)}
	r := m.ROhm
	if m.Parallel {
		if m.CF > 0 {
			lim.Integral = math.Pi / (r * m.CF)
		}
		if m.LH > 0 {
			lim.IntegralInv = math.Pi * m.LH / r
		}
	} else {
		if m.LH > 0 {
			lim.Integral = math.Pi * r / m.LH
		}
		if m.CF > 0 {
			lim.IntegralInv = math.Pi * r * m.CF
		}
	}
	const dbPerNeper = 20 / math.Ln10
	rho := math.Inf(1)  // best common ln(1/Γm)
	marg := math.Inf(1) // best common margin, dB
	for _, c := range []struct {
		bound  float64
		weight func(Band) float64
	}{
		{lim.Integral, func(b Band) float64 { return 2 * math.Pi * (b.HiHz - b.LoHz) }},
		{lim.IntegralInv, func(b Band) float64 { return (1/b.LoHz - 1/b.HiHz) / (2 * math.Pi) }},
	} {
		if math.IsInf(c.bound, 1) {
			continue
		}
		var wsum, req float64
		for _, b := range bands {
			w := c.weight(b)
			wsum += w
			req += math.Abs(b.MinReturnLossDB) / dbPerNeper * w
		}
		if !(wsum > 0) {
			continue
		}
		rho = math.Min(rho, c.bound/wsum)
		// Σ (RL_b + m)/dbPerNeper·w_b = bound → m.
		marg = math.Min(marg, (c.bound-req)/wsum*dbPerNeper)
	}
	lim.BestRLdB = rho * dbPerNeper
	lim.GammaMin = math.Exp(-rho)
	lim.MaxMarginDB = marg
	return lim
}

// BodeFanoOf fits an RLC to the load around the bands ([FitRLC]) and
// returns its Bode–Fano limit ([BodeFano]) with the fit. The fit takes the
// points from the lowest band edge less half the span of the bands to the
// highest edge plus half the span, within the sweep.
func BodeFanoOf(l Load, bands []Band) (Limit, Fit, error) {
	if len(bands) == 0 {
		return Limit{}, Fit{}, fmt.Errorf("%w: no band given", ErrBand)
	}
	lo, hi := bands[0].LoHz, bands[0].HiHz
	for _, b := range bands[1:] {
		lo, hi = math.Min(lo, b.LoHz), math.Max(hi, b.HiHz)
	}
	span := hi - lo
	fit, err := FitRLC(l, lo-span/2, hi+span/2)
	if err != nil {
		return Limit{}, Fit{}, err
	}
	return BodeFano(fit.RLC, bands), fit, nil
}

// ChuQ returns the lower bound on the radiation Q of an antenna that fits
// inside a sphere of radius a, for ka = 2π·a/λ (L. J. Chu, "Physical
// limitations of omni-directional antennas", J. Appl. Phys. 19, 1948; in
// the exact form of J. S. McLean, "A re-examination of the fundamental
// limits on the radiation Q of electrically small antennas", IEEE Trans.
// Antennas Propag. 44(5), 1996, for a linearly polarised antenna radiating
// one TM or TE mode):
//
//	Q = 1/(ka)³ + 1/(ka)
//
// A lossless antenna cannot have a lower Q; loss lowers the Q that a
// sweep shows without widening the band that is radiated. ka must be
// positive; otherwise ChuQ returns NaN.
func ChuQ(ka float64) float64 {
	if !(ka > 0) {
		return math.NaN()
	}
	return 1/(ka*ka*ka) + 1/ka
}

// KA returns k·a = 2π·fHz·radiusM/c for a sphere of radius radiusM (metres)
// at fHz.
func KA(radiusM, fHz float64) float64 {
	return 2 * math.Pi * fHz * radiusM / rfmath.SpeedOfLight
}

// Chu compares the Q that a sweep shows with the Chu limit.
type Chu struct {
	KA, ChuQ float64
	// Measured is the resonance found in the sweep nearest the frequency
	// asked for, with its Q (rfmath.ResonanceQ).
	Measured rfmath.Resonance
	// Ratio is Measured.Q/ChuQ: at least 1 for a lossless antenna in the
	// sphere. Below 1 means loss (or a larger antenna than stated).
	Ratio float64
	// SlopeQ reports that Measured.Q comes from the slope of the impedance
	// at the resonance ([rfmath.ResonanceSlopeQ]) because a half-power edge
	// lies beyond the sweep; Measured.LoHz and HiHz are then zero.
	SlopeQ bool
	// FromFit reports that the sweep's own Q could not be measured (Why
	// says why) and that Measured is the resonance and Q of the Bode–Fano
	// model fitted to the load near the bands instead ([ChuForBands]).
	FromFit bool
	Why     error
}

// ChuForBands compares the load's Q with the Chu limit for a sphere of
// radius radiusM, as the page and the command line show it: at the
// resonance nearest the centre ([rfmath.BandCentreHz]) of the span from the
// lowest band edge to the highest, or nearest fHz when there are no bands
// ([ChuCompare]). When the sweep's own Q cannot be measured there and fit
// (the load's Bode–Fano model, nil when there is none) resonates, the
// comparison is made on the fitted RLC instead: FromFit is set and Why
// holds the reason the sweep could not answer. Otherwise the error is
// ChuCompare's.
func ChuForBands(l Load, bands []Band, fHz, radiusM float64, fit *Fit) (Chu, error) {
	if len(bands) > 0 {
		lo, hi := bands[0].LoHz, bands[0].HiHz
		for _, b := range bands {
			lo, hi = math.Min(lo, b.LoHz), math.Max(hi, b.HiHz)
		}
		fHz = rfmath.BandCentreHz(lo, hi)
	}
	c, err := ChuCompare(l, fHz, radiusM)
	if err == nil || fit == nil || !(fit.ResonanceHz() > 0) {
		return c, err
	}
	f0 := fit.ResonanceHz()
	ka := KA(radiusM, f0)
	c = Chu{KA: ka, ChuQ: ChuQ(ka), Measured: rfmath.Resonance{FreqHz: f0, Series: !fit.Parallel, Q: fit.Q()}, FromFit: true, Why: err}
	c.Ratio = c.Measured.Q / c.ChuQ
	return c, nil
}

// ChuCompare finds the resonance of the load nearest fHz (a zero crossing
// of the reactance, [rfmath.ReactanceZeroCrossings], measured with
// [rfmath.ResonanceQ]) and compares its Q with [ChuQ] for a sphere of
// radius radiusM at the resonance. When a half-power edge lies beyond the
// sweep, or the resistance grows as fast as the reactance so that |X| never
// reaches R (a low-Q antenna), the Q is taken from the slope of the
// impedance instead and SlopeQ is set. It returns an error if the sweep has
// no resonance, or no Q can be measured at it.
func ChuCompare(l Load, fHz, radiusM float64) (Chu, error) {
	if err := l.validate(); err != nil {
		return Chu{}, err
	}
	z := make([]complex128, len(l.Gamma))
	for k, g := range l.Gamma {
		z[k] = rfmath.ZFromGamma(g, complex(l.Z0Ohm, 0))
	}
	cs := rfmath.ReactanceZeroCrossings(l.FreqHz, z)
	if len(cs) == 0 {
		return Chu{}, fmt.Errorf("match: the sweep shows no resonance (no zero crossing of the reactance)")
	}
	best := cs[0]
	for _, c := range cs[1:] {
		if math.Abs(c.FreqHz-fHz) < math.Abs(best.FreqHz-fHz) {
			best = c
		}
	}
	r, err := rfmath.ResonanceQ(l.FreqHz, z, best)
	slope := false
	if errors.Is(err, rfmath.ErrNoEdge) {
		q := rfmath.ResonanceSlopeQ(l.FreqHz, z, best)
		if math.IsNaN(q) {
			return Chu{}, fmt.Errorf("%w, and the resistance at the resonance is not positive, so its Q cannot be measured", err)
		}
		r = rfmath.Resonance{FreqHz: best.FreqHz, Series: best.Rising, ROhm: r.ROhm, Q: q}
		slope, err = true, nil
	}
	if err != nil {
		return Chu{}, err
	}
	ka := KA(radiusM, r.FreqHz)
	c := Chu{KA: ka, ChuQ: ChuQ(ka), Measured: r, SlopeQ: slope}
	c.Ratio = r.Q / c.ChuQ
	return c, nil
}
