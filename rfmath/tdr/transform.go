package tdr

import (
	"fmt"
	"math"
	"math/cmplx"

	"gonum.org/v1/gonum/dsp/fourier"

	"matchbench/rfmath"
)

// Mode selects the kind of transform.
type Mode int

const (
	// LowPass treats the sweep as the positive half of a real spectrum
	// from DC (harmonic grid; DC extrapolated; Hermitian extension). It
	// gives a real impulse response, a step response and an impedance
	// profile.
	LowPass Mode = iota
	// BandPass transforms the measured band as it is. It gives the
	// magnitude of the impulse response only.
	BandPass
)

// String returns "low-pass" or "band-pass".
func (m Mode) String() string {
	switch m {
	case LowPass:
		return "low-pass"
	case BandPass:
		return "band-pass"
	}
	return fmt.Sprintf("Mode(%d)", int(m))
}

// Settings control [Transform] and [GateTo]. The zero value is a low-pass
// transform with the rectangular window, no zero padding and 1/8 of the
// record before t = 0.
type Settings struct {
	// Mode is LowPass or BandPass. GateTo ignores it: gating always works
	// on the band as measured.
	Mode Mode
	// Window weights the spectrum before the inverse transform.
	Window Window
	// Pad is the zero-padding factor: the record has at least Pad times as
	// many samples as measured bins, and then as many more as bring its
	// length to a product of 2, 3 and 5. Padding interpolates the time
	// response; it does not sharpen it. 0 means 1.
	Pad int
	// Lead is the part of the record, as a fraction of the period 1/Δf,
	// placed before t = 0, where the left half of a reflection at the
	// reference plane falls (and anything later than (1 − Lead)/Δf, by
	// aliasing). 0 means 1/8; it must be less than 1/2.
	Lead float64
}

// Response is a time-domain response.
type Response struct {
	Mode   Mode
	Window Window
	// TimeS holds the round-trip time of each sample, from −Lead/Δf in
	// steps of 1/(M·Δf), M the record length.
	TimeS []float64
	// Impulse is the impulse response: real in low-pass mode, the
	// magnitude in band-pass mode. See the package doc for its scaling.
	Impulse []float64
	// Step is the step response (low-pass mode only; nil in band-pass).
	Step []float64
	// DeltaFHz is the frequency step of the grid transformed, and LoHz and
	// HiHz its first and last frequency (LoHz = 0 in low-pass mode).
	DeltaFHz, LoHz, HiHz float64
	// Bins is the number of measured frequency bins used: K+1 from DC to
	// K·Δf in low-pass mode, N in band-pass mode.
	Bins int
	// Resampled reports that the sweep was not on the grid the mode needs
	// and was interpolated onto it (linearly in the complex plane).
	Resampled bool
	// DC is the low-pass value at DC and DCExtrapolated whether it was
	// extrapolated (see [Transform]) rather than measured.
	DC             float64
	DCExtrapolated bool
}

// RangeS returns the unambiguous round-trip time range 1/Δf.
func (r *Response) RangeS() float64 { return 1 / r.DeltaFHz }

// ResolutionS returns the round-trip time resolution 1/span, span = HiHz −
// LoHz (common practice; a window widens it).
func (r *Response) ResolutionS() float64 { return 1 / (r.HiHz - r.LoHz) }

// Distance returns the one-way distance in metres of a reflection tS
// seconds away (round trip) along a line of velocity factor vf (0 means 1):
// d = vf·c·t/2.
func Distance(tS, vf float64) float64 {
	if vf == 0 {
		vf = 1
	}
	return vf * rfmath.SpeedOfLight * tS / 2
}

// DistanceTo fills dst with the one-way distance of each sample for the
// velocity factor vf and returns it. A nil dst is allocated; a dst whose
// length differs from TimeS panics.
func (r *Response) DistanceTo(dst []float64, vf float64) []float64 {
	dst = sized(dst, len(r.TimeS))
	for i, t := range r.TimeS {
		dst[i] = Distance(t, vf)
	}
	return dst
}

// Impedance returns the impedance Z0·(1 + s)/(1 − s) in ohms for the step
// level s (§12). Special cases are:
//
//	Impedance(1, z0) = +Inf   (an open)
//	Impedance(s, z0) < 0 for s > 1, which a passive line cannot give
func Impedance(s, z0Ohm float64) float64 {
	if s == 1 {
		return math.Inf(1)
	}
	return z0Ohm * (1 + s) / (1 - s)
}

// ImpedanceTo fills dst with the impedance profile Z(t) = Z0·(1 + s)/(1 − s)
// from the step response and returns it. A nil dst is allocated; a dst whose
// length differs from TimeS panics, and so does a band-pass response, which
// has no step.
func (r *Response) ImpedanceTo(dst []float64, z0Ohm float64) []float64 {
	if r.Step == nil {
		panic(badStep)
	}
	dst = sized(dst, len(r.TimeS))
	for i, s := range r.Step {
		dst[i] = Impedance(s, z0Ohm)
	}
	return dst
}

// Index returns the index of the sample nearest the round-trip time tS,
// clamped to the record.
func (r *Response) Index(tS float64) int {
	if len(r.TimeS) < 2 {
		return 0
	}
	dt := r.TimeS[1] - r.TimeS[0]
	i := int(math.Round((tS - r.TimeS[0]) / dt))
	return max(0, min(len(r.TimeS)-1, i))
}

func sized(dst []float64, n int) []float64 {
	if dst == nil {
		return make([]float64, n)
	}
	if len(dst) != n {
		panic(badLength)
	}
	return dst
}

// lead returns the lead fraction of s, or an error.
func (s *Settings) lead() (float64, error) {
	l := s.Lead
	if l == 0 {
		l = 1.0 / 8
	}
	if !(l >= 0 && l < 0.5) {
		return 0, fmt.Errorf("tdr: lead %g is not in [0, 1/2)", s.Lead)
	}
	return l, nil
}

func (s *Settings) pad() (int, error) {
	switch {
	case s.Pad == 0:
		return 1, nil
	case s.Pad < 0:
		return 0, fmt.Errorf("tdr: zero padding %d is negative", s.Pad)
	}
	return s.Pad, nil
}

// Transform returns the time-domain response of the reflection sweep gamma
// at freqHz (strictly increasing, Hz). nil set means the zero [Settings].
//
// Low-pass mode: the sweep must be on a harmonic grid f_k = k·Δf, k = 0 or
// 1 … K. A sweep that is not is resampled by linear interpolation to
// K = round(fmax/step) steps of Δf = fmax/K, provided that it starts at or
// below that Δf; one that starts higher returns an error wrapping [ErrGrid]
// that says by how much (those bins would have to be invented: use
// band-pass mode, or measure from Δf). When there is no DC point, the DC
// value is the even extrapolation (4·Re Γ(Δf) − Re Γ(2Δf))/3, the value at
// f = 0 of the parabola a + b·f² through the real parts of the two lowest
// bins (the real part of the spectrum of a real response is even in f, the
// imaginary part odd), clamped to [−1, 1]; a measured DC point keeps its
// real part. The windowed spectrum X_k = w(k/(K + ½))·H_k, k = 0 … K, is
// extended by X_−k = X_k* and inverted with a real FFT of length M ≥ 2K·Pad
// (the top bin is split between ±K when M > 2K, as zero padding an even
// spectrum requires):
//
//	h[n] = (1/2K) · Σ_{k=−K…K} X_k·e^(+j2π·k·n/M)
//	s[n] = (2K/M) · Σ_{m ≤ n} h[m]      (running sum from the record's start)
//
// Band-pass mode: the sweep must be uniform (else it is resampled to N
// uniform points over its span); with X_k = w((k − (N−1)/2)/(N/2))·H_k,
//
//	h[n] = |(1/N) · Σ_{k=0…N−1} X_k·e^(+j2π·k·n/M)|
//
// In both, sample n lies at t = n/(M·Δf) and the record is rotated so that
// it starts Lead/Δf before t = 0.
//
// Errors: [ErrGrid] (fewer than 2 points, frequencies not increasing, a
// low-pass sweep that starts too high), [ErrWindow], [ErrTooLarge] for a
// record longer than [MaxLength]. A gamma whose length differs from freqHz
// panics.
func Transform(freqHz []float64, gamma []complex128, set *Settings) (*Response, error) {
	var cfg Settings
	if set != nil {
		cfg = *set
	}
	if err := checkInput(freqHz, gamma); err != nil {
		return nil, err
	}
	if err := cfg.Window.Validate(); err != nil {
		return nil, err
	}
	lead, err := cfg.lead()
	if err != nil {
		return nil, err
	}
	pad, err := cfg.pad()
	if err != nil {
		return nil, err
	}
	switch cfg.Mode {
	case LowPass:
		return lowPass(freqHz, gamma, cfg.Window, pad, lead)
	case BandPass:
		return bandPass(freqHz, gamma, cfg.Window, pad, lead)
	}
	return nil, fmt.Errorf("tdr: unknown mode %d", int(cfg.Mode))
}

func lowPass(freqHz []float64, gamma []complex128, w Window, pad int, lead float64) (*Response, error) {
	df, h, hasDC, resampled, err := lowPassGrid(freqHz, gamma)
	if err != nil {
		return nil, err
	}
	K := len(h) - 1
	if 2*K > MaxLength/pad {
		return nil, fmt.Errorf("%w: %d bins padded %d times", ErrTooLarge, K+1, pad)
	}
	M := smoothAtLeast(2 * K * pad)
	r := &Response{Mode: LowPass, Window: w, DeltaFHz: df, HiHz: float64(K) * df, Bins: K + 1, Resampled: resampled}
	if hasDC {
		r.DC = real(h[0])
	} else {
		r.DC = extrapolateDC(h[1], h[2])
		r.DCExtrapolated = true
	}
	coef := make([]complex128, M/2+1)
	half := float64(K) + 0.5
	coef[0] = complex(r.DC, 0)
	for k := 1; k <= K; k++ {
		coef[k] = complex(w.At(float64(k)/half), 0) * h[k]
	}
	if M > 2*K {
		coef[K] /= 2 // split the top bin between +K and −K
	}
	x := fourier.NewFFT(M).Sequence(nil, coef)
	r.fill(x, nil, M, 2*K, lead)
	return r, nil
}

func bandPass(freqHz []float64, gamma []complex128, w Window, pad int, lead float64) (*Response, error) {
	df, h, resampled := bandPassGrid(freqHz, gamma)
	N := len(h)
	if N > MaxLength/pad {
		return nil, fmt.Errorf("%w: %d points padded %d times", ErrTooLarge, N, pad)
	}
	M := smoothAtLeast(N * pad)
	r := &Response{Mode: BandPass, Window: w, DeltaFHz: df, LoHz: freqHz[0], HiHz: freqHz[0] + float64(N-1)*df, Bins: N, Resampled: resampled}
	coef := make([]complex128, M)
	windowBand(coef[:N], h, w)
	y := fourier.NewCmplxFFT(M).Sequence(nil, coef)
	r.fill(nil, y, M, N, lead)
	return r, nil
}

// windowBand sets dst[k] = w((k − (N−1)/2)/(N/2))·h[k].
func windowBand(dst, h []complex128, w Window) {
	N := len(h)
	c, half := float64(N-1)/2, float64(N)/2
	for k := range h {
		dst[k] = complex(w.At((float64(k)-c)/half), 0) * h[k]
	}
}

// fill sets the time axis, impulse and (for a real x) step from the
// unnormalised inverse transform x (real) or y (complex) of length M, with
// M0 measured bins, rotated to start lead·M samples before t = 0.
func (r *Response) fill(x []float64, y []complex128, M, M0 int, lead float64) {
	nLead := int(math.Floor(lead * float64(M)))
	dt := 1 / (float64(M) * r.DeltaFHz)
	r.TimeS = make([]float64, M)
	r.Impulse = make([]float64, M)
	if x != nil {
		r.Step = make([]float64, M)
	}
	var run float64
	for i := range M {
		n := i - nLead
		r.TimeS[i] = float64(n) * dt
		src := n
		if src < 0 {
			src += M
		}
		if x != nil {
			r.Impulse[i] = x[src] / float64(M0)
			run += x[src] / float64(M)
			r.Step[i] = run
		} else {
			r.Impulse[i] = cmplx.Abs(y[src]) / float64(M0)
		}
	}
}
