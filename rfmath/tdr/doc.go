// Package tdr turns a reflection sweep into the time domain: impulse and
// step response by inverse FFT, an impedance profile along the feed, a
// distance axis from a velocity factor, and time gating that removes
// reflections from a sweep.
//
// # Conventions
//
// Times are round-trip times in seconds from the reference plane of the
// sweep. One-way distance is d = v·t/2 with v = VF·c (REFERENCE-CHECKS §12).
// A uniform frequency step Δf makes the response periodic in time with
// period T = 1/Δf, the unambiguous range: a reflection T later lands on
// the same place (100 ns for Δf = 10 MHz, 9.9 m one way in VF 0.66 coax).
//
// # Modes
//
// Low-pass mode treats the sweep as the positive-frequency half of a real
// signal. It needs a harmonic grid f_k = k·Δf; the value at DC is
// extrapolated when the sweep starts at Δf, and the spectrum is extended to
// negative frequencies by Hermitian symmetry H(−f) = H*(f) (§12). The
// impulse response is then real and its running sum is the step response,
// from which the impedance profile Z(t) = Z0·(1 + s)/(1 − s) follows.
// Band-pass mode takes any uniform band as it is; its impulse response is
// complex, and only its magnitude, which does not depend on the band's
// start frequency, is given. It shows where reflections are, not their sign,
// and has no step response.
//
// The time resolution is about 1/span, the reciprocal of the measured
// band (f_max for low-pass, f_max − f_min for band-pass): two reflections
// closer than that merge, which is v/(2·span) one way (common practice).
// A window widens it, by about 1.6× at the −6 dB points for Hann or
// Kaiser β = 6 (computed: 2.03 and 1.97 bins against 1.22 for the
// rectangular window), in exchange for far lower side lobes.
//
// # Scaling
//
// With the rectangular window, an isolated reflection Γ0 whose delay falls
// on a sample shows as an impulse of height Γ0, whatever the zero padding:
// the inverse transform is divided by the number of measured bins (2K for a
// low-pass grid of K steps, N for N band-pass points), not by the padded
// length M. The step response is the running sum of the impulse scaled by
// M0/M (M0 that number of bins), so its final value is the windowed
// spectrum's value at DC, which a window leaves alone (W(0) = 1): read
// levels from the step, not from impulse heights (§12). Parseval's theorem
// then reads
//
//	(M0/M)·Σₙ |h[n]|² = (1/M0)·Σₖ |W_k·H_k|²
//
// with the sum over k taken over the two-sided spectrum as transformed in
// low-pass mode (each bin 0 < k < K twice; the top bin K split into two
// halves when the record is padded, or its real part once when M = 2K) and
// over the N points in band-pass mode.
//
// # Windows
//
// The windows are those of F. J. Harris, "On the use of windows for
// harmonic analysis with the discrete Fourier transform", Proc. IEEE
// 66(1), 1978, pp. 51–83, in his centred form over N samples, and the
// Kaiser (I0–sinh) window of J. F. Kaiser, "Nonrecursive digital filter
// design using the I0-sinh window function", Proc. IEEE Int. Symp. on
// Circuits and Systems, 1974, pp. 20–23 (page numbers from memory). See
// [Window].
package tdr
