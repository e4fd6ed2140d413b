// Package match designs matching networks: every lumped L-network and
// single-stub tuner that matches a load at one frequency, a search over
// standard part values for the ladder that holds the best return loss across
// one or more bands, the yield of a design under part tolerances, the
// Bode–Fano and Chu limits that no network can beat, the voltages and
// currents the parts must carry, and the source and load networks of a
// transistor stage ([SearchStage], with the stage's figures from package
// amp).
//
// # Conventions
//
// The conventions of package rfmath hold: SI units, impedances in ohms as
// complex128, time dependence e^(+jωt), Γ against a real reference Z0, and
// return loss positive in dB. A [Network] lists its parts in order from the
// LOAD toward the SOURCE, as [rfmath.Ladder] does: Network[0] is connected
// to the load. Part values are in henries and farads.
//
// Part models come from package parts ([parts.Model]); a nil model means
// ideal, lossless parts. The search is exact for any model whose parts are
// passive (Re Z ≥ 0 at every frequency), as those of package parts are.
//
// # Caution
//
// High RF power can burn and can shock: the voltage across a part of a
// matching network can be many times the voltage on the line, and a part
// that overheats can fail or set fire to what is near it. The power figures
// of [Stress] are estimates from ideal circuit theory and typical ratings;
// they do not replace a rated design review, the part maker's derating
// rules, or the local regulations and licensed practice for the power and
// frequencies in use.
package match
