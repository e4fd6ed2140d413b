package deembed

import (
	"fmt"
	"math"
	"math/cmplx"

	"matchbench/rfmath"
)

// Standard is the termination at the far end of a line whose extension is
// fitted.
type Standard int

const (
	// Open is an open end: ideally Γ = 1, a phase of 0°.
	Open Standard = iota
	// Short is a short-circuited end: ideally Γ = −1, a phase of 180°.
	Short
)

// String returns "open" or "short".
func (s Standard) String() string {
	switch s {
	case Open:
		return "open"
	case Short:
		return "short"
	}
	return fmt.Sprintf("Standard(%d)", int(s))
}

// idealRad returns the phase of the ideal standard in radians.
func (s Standard) idealRad() float64 {
	if s == Short {
		return math.Pi
	}
	return 0
}

// FitSettings control [FitExtension]. The zero value fits port 1 over the
// whole sweep with both loss terms, quoting the loss at 1 GHz.
type FitSettings struct {
	// Port is the port (from 1) whose reflection is fitted; 0 means 1.
	Port int
	// LoHz and HiHz limit the fit to the points between them (inclusive);
	// zero means no limit.
	LoHz, HiHz float64
	// LossRefHz is the frequency at which the fitted √f loss is quoted;
	// 0 means 1 GHz.
	LossRefHz float64
	// NoFlatLoss fits the √f loss alone, with no flat term.
	NoFlatLoss bool
}

// Fit is the port extension fitted by [FitExtension], with what is left
// over.
type Fit struct {
	// Extension turns the measurement into the ideal standard as nearly
	// as a line of constant delay and loss can.
	Extension Extension
	// OffsetDeg is the fitted phase at f = 0 less the ideal standard's
	// (0° open, 180° short), in (−180°, 180°]. A large offset says the far
	// end is not the standard that was named, or that the fit range starts
	// too high to find it.
	OffsetDeg float64
	// DelaySE, LossSE and FlatSE are the standard errors of DelayS, LossDB
	// and FlatLossDB from the scatter of the residuals (ordinary least
	// squares, assuming independent residuals of equal variance). FlatSE
	// is 0 when no flat term was fitted.
	DelaySE, LossSE, FlatSE float64
	// FreqHz are the frequencies used. PhaseResidualDeg and MagResidualDB
	// are the measured phase (unwrapped) and 20·log10|Γ| less the fitted
	// line at each of them; PhaseRMSDeg and MagRMSDB are their root mean
	// squares.
	FreqHz           []float64
	PhaseResidualDeg []float64
	MagResidualDB    []float64
	PhaseRMSDeg      float64
	MagRMSDB         float64
}

// FitExtension fits the port extension that turns a measurement of a line
// ended in the standard std into that ideal standard. s is the measurement;
// nil set means the zero [FitSettings].
//
// The phase of Γ is unwrapped from the lowest frequency up and fitted by
// least squares with a straight line in f,
//
//	φ(f) = φ₀ − 4π·f·τ
//
// whose slope gives the one-way delay τ. The fitted intercept φ₀ fixes the
// whole number of turns that unwrapping leaves open: the unwrapped phase is
// shifted by the multiple of 2π that brings φ₀ nearest the ideal standard's
// phase (0 for an open, π for a short), and what remains is OffsetDeg. The
// intercept is fitted rather than forced so that a constant phase error (a
// standard that is not ideal) does not tilt the slope.
//
// The magnitude is fitted as a one-way loss in dB, half the return loss,
// with a straight line in √f (REFERENCE-CHECKS §10):
//
//	−20·log10|Γ(f)| / 2 = LossDB·√(f/LossRefHz) + FlatLossDB
//
// or through the origin when set.NoFlatLoss. Both fits are ordinary least
// squares with equal weights.
//
// A reactive far end biases the delay: an open with fringing capacitance Cf
// reads Γ = (1 − jωCf·Z0)/(1 + jωCf·Z0) ≈ e^(−j2ωCf·Z0), which the fit takes
// as Cf·Z0 more delay (1 ps for 0.02 pF in 50 Ω). It is part of what a real
// open looks like, and an extension fitted to it sets the plane at the
// open's effective end.
//
// FitExtension returns an error wrapping [ErrFit] if fewer than three points
// lie in the fit range, a point has |Γ| = 0 or is not finite, or the phase
// turns by 90° or more a step on average (the unwrapping cannot then be
// trusted, since a true step near 180° or beyond aliases: measure with a
// finer step). A port out of range panics.
func FitExtension(s *rfmath.Sweep, std Standard, set *FitSettings) (*Fit, error) {
	var cfg FitSettings
	if set != nil {
		cfg = *set
	}
	port := cfg.Port
	if port == 0 {
		port = 1
	}
	if port < 1 || port > s.Ports {
		panic(badPortNum)
	}
	fref := cfg.LossRefHz
	if fref <= 0 {
		fref = 1e9
	}
	var f []float64
	var g []complex128
	for k, fk := range s.FreqHz {
		if (cfg.LoHz > 0 && fk < cfg.LoHz) || (cfg.HiHz > 0 && fk > cfg.HiHz) {
			continue
		}
		v := s.At(k, port-1, port-1)
		if v == 0 || cmplx.IsNaN(v) || cmplx.IsInf(v) {
			return nil, fmt.Errorf("%w: Γ at %s is %v", ErrFit, fmtHz(fk), v)
		}
		f = append(f, fk)
		g = append(g, v)
	}
	n := len(f)
	if n < 3 {
		return nil, fmt.Errorf("%w: %d points in the fit range, want at least 3", ErrFit, n)
	}

	// Phase: unwrap, fit, then settle the whole turns at the intercept.
	phi := make([]float64, n)
	phi[0] = cmplx.Phase(g[0])
	var steps float64
	for k := 1; k < n; k++ {
		d := cmplx.Phase(g[k]) - cmplx.Phase(g[k-1])
		d -= 2 * math.Pi * math.Round(d/(2*math.Pi))
		phi[k] = phi[k-1] + d
		steps += math.Abs(d)
	}
	if mean := steps / float64(n-1); mean >= math.Pi/2 {
		return nil, fmt.Errorf("%w: the phase turns %.0f° a step on average between %s and %s; unwrapping needs well under 180° (measure with a finer step)",
			ErrFit, mean*180/math.Pi, fmtHz(f[0]), fmtHz(f[n-1]))
	}
	fscale := f[n-1] // fit in f/fscale for conditioning
	x := make([]float64, n)
	for k := range f {
		x[k] = f[k] / fscale
	}
	pl := lineFit(x, phi, true)
	turns := math.Round((pl.a - std.idealRad()) / (2 * math.Pi))
	if turns != 0 {
		for k := range phi {
			phi[k] -= 2 * math.Pi * turns
		}
		pl.a -= 2 * math.Pi * turns
	}
	tau := -pl.b / fscale / (4 * math.Pi)
	// Magnitude: one-way loss against √(f/fref).
	y := make([]float64, n)
	r := make([]float64, n)
	for k := range f {
		y[k] = -10 * math.Log10(real(g[k])*real(g[k])+imag(g[k])*imag(g[k])) / 2
		r[k] = math.Sqrt(f[k] / fref)
	}
	ml := lineFit(r, y, !cfg.NoFlatLoss)

	fit := &Fit{
		Extension: Extension{DelayS: tau, LossDB: ml.b, LossRefHz: fref, FlatLossDB: ml.a},
		OffsetDeg: wrapDeg((pl.a - std.idealRad()) * 180 / math.Pi),
		DelaySE:   pl.seB / fscale / (4 * math.Pi),
		LossSE:    ml.seB,
		FlatSE:    ml.seA,
		FreqHz:    f,
	}
	fit.PhaseResidualDeg = make([]float64, n)
	fit.MagResidualDB = make([]float64, n)
	var sp, sm float64
	for k := range f {
		rp := (phi[k] - (pl.a + pl.b*x[k])) * 180 / math.Pi
		// The magnitude residual is in dB of |Γ|, twice the one-way loss.
		rm := -2 * (y[k] - (ml.a + ml.b*r[k]))
		fit.PhaseResidualDeg[k], fit.MagResidualDB[k] = rp, rm
		sp += rp * rp
		sm += rm * rm
	}
	fit.PhaseRMSDeg = math.Sqrt(sp / float64(n))
	fit.MagRMSDB = math.Sqrt(sm / float64(n))
	return fit, nil
}

// wrapDeg wraps an angle in degrees to (−180, 180].
func wrapDeg(d float64) float64 {
	d = math.Mod(d, 360)
	if d <= -180 {
		d += 360
	} else if d > 180 {
		d -= 360
	}
	return d
}

// line is a least-squares straight line y = a + b·x with the standard errors
// of a and b.
type line struct {
	a, b, seA, seB float64
}

// lineFit fits y = a + b·x by ordinary least squares (with intercept), or
// y = b·x through the origin, and estimates the standard errors from the
// residual variance (N. R. Draper and H. Smith, Applied Regression
// Analysis, 3rd ed., Wiley 1998, ch. 1, from memory for the chapter). The
// sums are centred for accuracy.
func lineFit(x, y []float64, intercept bool) line {
	n := float64(len(x))
	if !intercept {
		var sxx, sxy float64
		for k := range x {
			sxx += x[k] * x[k]
			sxy += x[k] * y[k]
		}
		b := sxy / sxx
		var rss float64
		for k := range x {
			e := y[k] - b*x[k]
			rss += e * e
		}
		l := line{b: b}
		if n > 1 {
			l.seB = math.Sqrt(rss / (n - 1) / sxx)
		}
		return l
	}
	var mx, my float64
	for k := range x {
		mx += x[k]
		my += y[k]
	}
	mx /= n
	my /= n
	var sxx, sxy float64
	for k := range x {
		dx := x[k] - mx
		sxx += dx * dx
		sxy += dx * (y[k] - my)
	}
	b := sxy / sxx
	a := my - b*mx
	var rss float64
	for k := range x {
		e := y[k] - a - b*x[k]
		rss += e * e
	}
	l := line{a: a, b: b}
	if n > 2 {
		s2 := rss / (n - 2)
		l.seB = math.Sqrt(s2 / sxx)
		l.seA = math.Sqrt(s2 * (1/n + mx*mx/sxx))
	}
	return l
}
