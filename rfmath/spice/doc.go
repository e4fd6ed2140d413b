// Package spice writes a matching network as a SPICE subcircuit that a
// colleague can simulate in any classic circuit simulator, and finds the
// R-L-C equivalents of part models whose loss changes with frequency.
//
// # The subcircuit
//
// [Write] gives a subcircuit with pins SRC (toward the source) and LOAD
// (toward the load); node 0 is the global ground and not a pin. Only
// classic SPICE elements appear (R, L, C, T, E, F and zero-volt V sources),
// every value positive and finite.
//
// # Equivalents
//
// A part's loss resistance may follow a law of frequency (an inductor's
// skin effect, R ∝ √f; a constant-Q what-if part). Constant elements cannot
// follow such a law exactly; [FitLumped] finds a passive chain of R, L, C
// and R ∥ L and R ∥ C sections that follows it across a span of frequencies,
// best within the bands that matter, and reports the error it makes in the
// part's transmission between references Z0.
//
// The inductor model of rfmath/parts (R ∝ √f at a constant inductance) is
// not a causal impedance: its real and imaginary parts are not a Hilbert
// pair, so no passive circuit (nor any causal one) follows it exactly, and
// the error grows where the model's Q is low. Near the GHz bands the
// models are meant for, the equivalents hold to |ΔS21| of about 1e-5 to
// 1e-4; down at a few MHz, where the model's Q falls to about 1, the error
// reaches a few per cent. Each netlist says, per part, what its
// equivalent's error is.
package spice
