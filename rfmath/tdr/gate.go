package tdr

import (
	"fmt"
	"math"
	"math/cmplx"

	"gonum.org/v1/gonum/dsp/fourier"

	"matchbench/rfmath"
)

// Gate is a time window that keeps the reflections inside it (or, with
// Notch, removes them).
//
// The gate is 1 over the middle half of its span and falls to 0 at
// CentreS ± SpanS/2 along the right half of its Shape: for a position
// u = |t − CentreS|/(SpanS/2),
//
//	g(t) = 1                      u ≤ ½
//	g(t) = Shape.At(2u − 1)       ½ < u ≤ 1
//	g(t) = 0                      u > 1
//
// so a Hann gate has raised-cosine edges a quarter of the span wide each.
// A rectangular Shape is 1 over the whole span, with hard edges.
type Gate struct {
	CentreS float64 // round-trip time of the gate's centre, s
	SpanS   float64 // full width, s; must be positive
	Shape   Window  // shape of the gate's edges
	Notch   bool    // remove what is inside instead of keeping it
}

// At returns the gate's value at the round-trip time tS.
func (g Gate) At(tS float64) float64 {
	u := math.Abs(tS-g.CentreS) / (g.SpanS / 2)
	switch {
	case u > 1:
		return 0
	case u <= 0.5 || g.Shape.Kind == Rectangular:
		return 1
	}
	return g.Shape.At(2*u - 1)
}

func (g Gate) validate() error {
	if !(g.SpanS > 0) || math.IsInf(g.SpanS, 0) || math.IsNaN(g.CentreS) || math.IsInf(g.CentreS, 0) {
		return fmt.Errorf("%w: centre %g s, span %g s; the span must be positive and both finite", ErrGate, g.CentreS, g.SpanS)
	}
	if err := g.Shape.Validate(); err != nil {
		return fmt.Errorf("%w: shape: %w", ErrGate, err)
	}
	return nil
}

// GateTo fills dst with the reflection sweep gamma at freqHz (uniform,
// strictly increasing) gated in time, and returns dst. nil set means the
// zero [Settings]; its Mode is ignored.
//
// The method (common practice; e.g. J. P. Dunsmore, Handbook of Microwave
// Component Measurements, Wiley 2012, on time-domain gating, from memory):
//
//  1. window the band, X_k = W_k·H_k (Settings.Window; a Kaiser window keeps
//     a reflection's time response compact, so the gate cuts little of it),
//     and transform it to the time domain as band-pass mode does;
//  2. multiply the time response by the gate g(t), and transform back to
//     Y_k at the measured frequencies;
//  3. compensate: a reflection exactly at the gate's centre, R_k =
//     e^(−j2π·f_k·t_c), goes through steps 1 and 2 too; C_k = R'_k/R_k is
//     then the window convolved with the spectrum of the gate, the roll-off
//     the gate's edges cause near the band edges, and the result is
//     Y_k/C_k. Where the gate passes everything, C_k = W_k and the division
//     also undoes the window.
//
// With Notch the result is H_k − Y_k/C_k, the sweep with the gated part
// taken away.
//
// Gating needs a uniform grid (it returns an error wrapping [ErrGrid]
// otherwise: resample the sweep first). The reflections to keep should lie
// well inside the gate and those to remove well outside it, a few
// resolution cells 1/span away; near the band edges the result is less
// certain (the compensation divides by the small window values there).
// Errors also wrap [ErrGate] (a bad gate, or a compensation that vanishes),
// [ErrWindow] and [ErrTooLarge]. A nil dst is allocated; a dst or gamma
// whose length differs from freqHz panics. dst may be gamma.
func GateTo(dst []complex128, freqHz []float64, gamma []complex128, g Gate, set *Settings) ([]complex128, error) {
	var cfg Settings
	if set != nil {
		cfg = *set
	}
	if err := checkInput(freqHz, gamma); err != nil {
		return dst, err
	}
	if dst == nil {
		dst = make([]complex128, len(gamma))
	} else if len(dst) != len(gamma) {
		panic(badLength)
	}
	if err := g.validate(); err != nil {
		return dst, err
	}
	if err := cfg.Window.Validate(); err != nil {
		return dst, err
	}
	lead, err := cfg.lead()
	if err != nil {
		return dst, err
	}
	pad, err := cfg.pad()
	if err != nil {
		return dst, err
	}
	df, uniform := uniformStep(freqHz)
	if !uniform {
		return dst, fmt.Errorf("%w: gating needs a uniform frequency step; resample the sweep first", ErrGrid)
	}
	N := len(gamma)
	if N > MaxLength/pad {
		return dst, fmt.Errorf("%w: %d points padded %d times", ErrTooLarge, N, pad)
	}
	M := smoothAtLeast(N * pad)
	fft := fourier.NewCmplxFFT(M)

	// The gate at each sample of the periodic record.
	nLead := int(math.Floor(lead * float64(M)))
	dt := 1 / (float64(M) * df)
	gv := make([]float64, M)
	for n := range M {
		t := float64(n) * dt
		if n >= M-nLead {
			t -= float64(M) * dt
		}
		gv[n] = g.At(t)
	}
	buf := make([]complex128, M)
	gated := func(h []complex128) []complex128 {
		clear(buf)
		windowBand(buf[:N], h, cfg.Window)
		fft.Sequence(buf, buf)
		for n := range buf {
			buf[n] *= complex(gv[n]/float64(M), 0)
		}
		fft.Coefficients(buf, buf)
		return buf[:N]
	}

	ref := make([]complex128, N)
	for k := range ref {
		s, c := math.Sincos(-2 * math.Pi * float64(k) * df * g.CentreS)
		ref[k] = complex(c, s)
	}
	comp := make([]complex128, N)
	var big float64
	for k, v := range gated(ref) {
		comp[k] = v / ref[k]
		big = math.Max(big, cmplx.Abs(comp[k]))
	}
	for k, c := range comp {
		if cmplx.Abs(c) <= 1e-12*big || big == 0 {
			return dst, fmt.Errorf("%w: the gate's compensation vanishes at %s", ErrGate, fmtHz(freqHz[k]))
		}
	}
	y := gated(gamma)
	for k := range dst {
		v := y[k] / comp[k]
		if g.Notch {
			v = gamma[k] - v
		}
		dst[k] = v
	}
	return dst, nil
}

// GateSweep returns a new sweep with every S-parameter of s gated by g as
// [GateTo] does, each on its own time axis (a reflection term's times are
// round trips, a transmission term's one-way). s is not modified.
func GateSweep(s *rfmath.Sweep, g Gate, set *Settings) (*rfmath.Sweep, error) {
	out := s.Clone()
	p := s.Ports
	buf := make([]complex128, s.Len())
	for i := range p {
		for j := range p {
			s.Param(buf, i, j)
			if _, err := GateTo(buf, s.FreqHz, buf, g, set); err != nil {
				return nil, fmt.Errorf("S%d%d: %w", i+1, j+1, err)
			}
			for k, v := range buf {
				out.Set(k, i, j, v)
			}
		}
	}
	return out, nil
}
