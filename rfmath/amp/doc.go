// Package amp holds the small-signal maths of a transistor (or any linear
// active 2-port) between a source and a load: stability tests and stability
// circles, the power gains and their circles, the simultaneous conjugate
// match, and the noise figure with its circles.
//
// # Conventions
//
// A 2-port at one frequency is its S-matrix s = [S11, S12, S21, S22]
// (row-major, the layout of [rfmath.Sweep] and [rfmath.CascadeS]), each port
// against its own real reference resistance. The source reflection Γs is
// taken against port 1's reference and the load reflection ΓL against
// port 2's; with those, every formula here holds for unequal references
// too. Circles live in those reflection planes: the source plane (Γs) and
// the load plane (ΓL).
//
//	Δ   = S11·S22 − S12·S21
//	Γin = S11 + S12·S21·ΓL/(1 − S22·ΓL)     (port 1 with ΓL on port 2)
//	Γout = S22 + S12·S21·Γs/(1 − S11·Γs)    (port 2 with Γs on port 1)
//
// Gains are linear power ratios unless a name ends in DB; [DB] converts.
// Functions that take a gain or a noise figure to draw a circle take it in
// dB, as an engineer states it. Noise figures are in dB, noise factors
// (F = 10^(NF/10)) are linear, and the standard temperature is
// T0 = 290 K (IEEE standard definition of noise figure, common practice).
//
// Degenerate cases keep their limits rather than failing: K of a unilateral
// device (S12·S21 = 0) is +∞ (or −∞), MSG with S12 = 0 is +∞, a circle whose
// quadratic term vanishes is a straight line ([Circle] with Line set). Data
// that cannot give the figure asked for (no conjugate match, a gain above
// what the device can give, a noise figure below NFmin, a frequency outside
// the noise data) give typed errors that say why.
//
// # Stability
//
// Rollett's K and |Δ| (J. M. Rollett, "Stability and power-gain invariants
// of linear twoports", IRE Trans. Circuit Theory CT-9(1), 1962, from memory
// for the issue) and Edwards–Sinsky's μ and μ′ (M. L. Edwards and
// J. H. Sinsky, "A new criterion for linear 2-port stability using a single
// geometrically derived parameter", IEEE Trans. MTT-40(12), 1992,
// pp. 2303–2311):
//
//	K  = (1 − |S11|² − |S22|² + |Δ|²)/(2·|S12·S21|)
//	μ  = (1 − |S11|²)/(|S22 − Δ·S11*| + |S12·S21|)
//	μ′ = (1 − |S22|²)/(|S11 − Δ·S22*| + |S12·S21|)
//
// The device is unconditionally stable (stable with every passive source
// and load) when μ > 1, which is equivalent to K > 1 with |Δ| < 1; this
// package decides by μ alone, the single test of Edwards and Sinsky.
//
// The output stability circle in the load plane is where |Γin| = 1, the
// input stability circle in the source plane where |Γout| = 1 (D. M. Pozar,
// Microwave Engineering, the amplifier-design chapter: 11 in the 3rd
// edition, 12 in the 4th, from memory for the numbers). Which side is
// stable follows from the sign of the quadratic term: with
//
//	f(ΓL) = (|S22|² − |Δ|²)·|ΓL|² − 2·Re((S22 − Δ·S11*)·ΓL) + 1 − |S11|²
//
// |Γin| < 1 exactly where f > 0, so the stable loads lie outside the
// circle when |S22|² > |Δ|² and inside it when |S22|² < |Δ|². This is the
// textbook rule (the centre of the chart is stable when |S11| < 1, and the
// circle contains it or not) written so that it needs no case analysis; the
// input circle is the same with the ports swapped.
//
// # Gain
//
// Transducer gain G_T(Γs, ΓL), available gain G_A(Γs) (the load
// conjugately matched to Γout) and operating power gain G_P(ΓL) (the source
// conjugately matched to Γin) have their textbook forms (Pozar, the
// amplifier chapter's two-port power gains). With K > 1 and |Δ| < 1 the
// maximum of all three is
//
//	MAG = |S21|/|S12|·(K − √(K² − 1)) = |S21|²/(A + √(A² − |S12·S21|²)),
//	A = (1 − |S11|² − |S22|² + |Δ|²)/2
//
// (the second form is the same number without the cancellation of the first
// and stays finite for a unilateral device), reached at the simultaneous
// conjugate match Γs = Γin*, ΓL = Γout*. Otherwise the figure quoted is the
// maximum stable gain MSG = |S21|/|S12|.
//
// Circles of constant available gain in the source plane and of constant
// operating gain in the load plane (G. Gonzalez, Microwave Transistor
// Amplifiers: Analysis and Design, 2nd ed. 1997, Section 3.8, from memory
// for the section; derived again in gain.go) reduce for S12 = 0 to the
// unilateral constant-gain circles of Pozar's unilateral design.
//
// The unilateral figure of merit
//
//	U = |S11|·|S12|·|S21|·|S22|/((1 − |S11|²)·(1 − |S22|²))
//
// bounds the error of assuming S12 = 0: 1/(1 + U)² < G_T/G_TU < 1/(1 − U)².
//
// # Noise
//
// Noise parameters are the [touchstone.NoisePoint] values the Touchstone
// reader returns: NFmin in dB, Γopt as magnitude and angle against port 1's
// reference, and Rn in ohms. The reader converts Rn for us: version 1 files
// give Rn normalised to the reference resistance and the reader multiplies
// it by port 1's R; version 2 files give it in ohms and it is kept (see
// the reader's noiseLine for the sources of that decision). [NoiseAt]
// interpolates between noise frequencies (NFmin in dB and Rn linearly in
// frequency, Γopt linearly in the complex plane, like every other value in
// matchbench) and never extrapolates. The noise figure of a source Γs is
// (H. Rothe and W. Dahlke, "Theory of noisy fourpoles", Proc. IRE 44(6),
// 1956, from memory; in Γ form as in Pozar's noise chapter)
//
//	F = Fmin + (4·Rn/Z0)·|Γs − Γopt|²/((1 − |Γs|²)·|1 + Γopt|²)
//
// and its circles of constant F have, with
// N = (F − Fmin)·|1 + Γopt|²/(4·Rn/Z0),
//
//	centre Γopt/(N + 1), radius √(N·(N + 1 − |Γopt|²))/(N + 1).
//
// # Safety
//
// A transistor that oscillates on the bench can radiate and can destroy
// itself or an analyser port; check stability over the whole band the
// device has gain in, not only the design band, and keep analyser input
// levels and DC blocking within the analyser maker's limits.
package amp
