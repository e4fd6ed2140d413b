package amp

import (
	"fmt"
	"math"
	"math/cmplx"

	"matchbench/rfmath"
	"matchbench/rfmath/touchstone"
)

// # A stage
//
// A stage is the device between two passive networks: a source network
// from the source termination to the device's input, and a load network
// from the device's output to the load termination, both terminations of
// the real resistance Z0Ohm (the 50 Ω of the radio on either side):
//
//	source Z0 ── [source network] ── port 1 ┤device├ port 2 ── [load network] ── load Z0
//
// Each network is an [rfmath.Element] seen the same way, port 1 at its
// termination and port 2 at the device, which is what an [rfmath.Ladder]
// listed from the device outward gives (its element 0 is next to the
// device). A nil network is a through connection.
//
// The stage's S-matrix is the ABCD cascade source · device · reversed load
// ([rfmath.SToABCD], [rfmath.ABCDToS]; a 2-port turned end for end has the
// chain matrix [D B; C A]/(AD − BC)), against Z0Ohm at both terminations,
// so its transducer gain is |S21|² and its return losses come from S11 and
// S22. The reflections the device sees, Γs (looking back into the source
// network) and ΓL (into the load network), are port 2 of each network's
// S-matrix against the device port's own reference, as the device's
// circles and noise parameters are.
//
// Noise is cascaded by Friis' formula with available gains (H. T. Friis,
// "Noise figures of radio receivers", Proc. IRE 32(7), 1944, from memory;
// in the form of Pozar's noise chapter), which is exact when each stage's
// noise factor and available gain are taken with the source it really
// sees:
//
//	F = F_src + (F_dev(Γs) − 1)/G_A,src + (F_load − 1)/(G_A,src·G_A,dev(Γs))
//
// A passive network in thermal equilibrium at T0 delivers the available
// noise power k·T0·B whatever drives it, so its noise factor is the inverse
// of its available gain (Pozar's noise chapter: the noise figure of a lossy
// line or attenuator, F = L at T0): F_src = 1/G_A,src with the source
// termination driving it, F_load = 1/G_A,load with Γout driving it. A
// lossless network has G_A = 1 and adds nothing; a lossy one in front of
// the device adds its own loss to the noise figure:
//
//	F = F_dev(Γs)/G_A,src + …
//
// The device's noise figure F_dev(Γs) is [NoiseFigureDB] with the noise
// parameters at the frequency ([NoiseAt]: interpolated, never
// extrapolated); where the file has none the stage's noise figure is NaN.
//
// Stability is judged per frequency with the terminations the networks
// present: the stage is stable there when |Γs| and |ΓL| are at most 1 and
// the device's own port reflections with them, Γin(ΓL) and Γout(Γs), are
// both below 1 (Pozar's amplifier chapter: the terminations lie on the
// stable sides of the stability circles). This is a test at the sweep's
// frequencies, not a proof between them; Rollett's K and μ of the whole
// stage's S-matrix say in addition whether the stage as a block stays
// stable with any passive source and load in place of the terminations.

// Stage is a transistor stage: the device's sweep (a 2-port), its noise
// parameters (nil for none), and the source and load networks between it
// and terminations of Z0Ohm (see above).
type Stage struct {
	Device *rfmath.Sweep
	Noise  []touchstone.NoisePoint
	// Source and Load are the networks, port 1 at the termination and
	// port 2 at the device; nil is a through connection.
	Source, Load rfmath.Element
	// Z0Ohm is the resistance of both terminations; zero means 50 Ω.
	Z0Ohm float64
}

// StagePoint is a stage's figures at one frequency.
type StagePoint struct {
	FreqHz float64
	// S is the stage's S-matrix [S11, S12, S21, S22] against Z0Ohm at both
	// terminations.
	S [4]complex128
	// GammaS and GammaL are the reflections the device sees at its input
	// and output (against its own ports' references); GammaIn and GammaOut
	// the device's port reflections with them in place.
	GammaS, GammaL, GammaIn, GammaOut complex128
	// GainDB is the transducer gain |S21|² in dB; InputRLdB and OutputRLdB
	// the return losses at the terminations, −20·log10|S11| and |S22|.
	GainDB, InputRLdB, OutputRLdB float64
	// NFdB is the stage's noise figure, NaN where the device has no noise
	// parameters at FreqHz; DeviceNFdB the device's own at GammaS.
	NFdB, DeviceNFdB float64
	// SourceLossDB and LoadLossDB are each network's own loss,
	// −10·log10 of its available gain from the source that drives it
	// (the termination, or the device's output): what the source network
	// adds to the noise figure.
	SourceLossDB, LoadLossDB float64
	// Stable reports that the terminations keep the device stable here;
	// K and Mu are Rollett's K and Edwards–Sinsky μ of the stage's S.
	Stable bool
	K, Mu  float64
}

// z0 returns the terminations' resistance.
func (st *Stage) z0() float64 {
	if st.Z0Ohm == 0 {
		return 50
	}
	return st.Z0Ohm
}

// validate checks the stage's data.
func (st *Stage) validate() error {
	if st.Device == nil {
		return fmt.Errorf("%w: no device sweep", ErrNotTwoPort)
	}
	if st.Device.Ports != 2 {
		return fmt.Errorf("%w: the device sweep is a %d-port", ErrNotTwoPort, st.Device.Ports)
	}
	if z := st.z0(); !(z > 0) || math.IsInf(z, 0) {
		return fmt.Errorf("amp: termination resistance %g Ω: want a positive number", z)
	}
	return nil
}

// networkS returns the S-matrix of network e at fHz, port 1 against the
// termination's z0 and port 2 against the device port's zd. A nil network
// is a through, which renormalises when zd ≠ z0.
func networkS(e rfmath.Element, fHz, z0, zd float64) [4]complex128 {
	m := rfmath.Thru
	if e != nil {
		m = e.ABCD(fHz)
	}
	return rfmath.ABCDToS(m, z0, zd)
}

// reversed returns the chain matrix of the 2-port m turned end for end:
// [D B; C A]/(AD − BC).
func reversed(m rfmath.ABCD) rfmath.ABCD {
	d := m.Det()
	return rfmath.ABCD{m[3] / d, m[1] / d, m[2] / d, m[0] / d}
}

// At returns the stage's figures at fHz, the device's S-parameters
// interpolated as [SAt] does. A device that is not a 2-port gives
// [ErrNotTwoPort], a frequency outside its sweep an error wrapping
// [rfmath.ErrOutOfRange], a device that transmits nothing (S21 = 0, no
// chain matrix) [ErrNoTransmission].
func (st *Stage) At(fHz float64) (StagePoint, error) {
	if err := st.validate(); err != nil {
		return StagePoint{}, err
	}
	s, err := SAt(st.Device, fHz)
	if err != nil {
		return StagePoint{}, err
	}
	return st.point(fHz, s)
}

// SweepTo fills dst with the stage's figures at every frequency of the
// device's sweep and returns it. A nil dst is allocated; a dst whose length
// is not the sweep's panics.
func (st *Stage) SweepTo(dst []StagePoint) ([]StagePoint, error) {
	if err := st.validate(); err != nil {
		return nil, err
	}
	n := st.Device.Len()
	if dst == nil {
		dst = make([]StagePoint, n)
	} else if len(dst) != n {
		panic(badLength)
	}
	for k, f := range st.Device.FreqHz {
		m := st.Device.Matrix(k)
		p, err := st.point(f, [4]complex128{m[0], m[1], m[2], m[3]})
		if err != nil {
			return nil, err
		}
		dst[k] = p
	}
	return dst, nil
}

// point computes the figures with the device's s at fHz.
func (st *Stage) point(fHz float64, s [4]complex128) (StagePoint, error) {
	if s[2] == 0 {
		return StagePoint{}, fmt.Errorf("%w at %g Hz", ErrNoTransmission, fHz)
	}
	z0 := st.z0()
	z1, z2 := st.Device.Z0[0], st.Device.Z0[1]
	p := StagePoint{FreqHz: fHz}

	ss := networkS(st.Source, fHz, z0, z1) // port 2 faces the device's input
	sl := networkS(st.Load, fHz, z0, z2)   // port 2 faces the device's output
	p.GammaS, p.GammaL = ss[3], sl[3]
	p.GammaIn, p.GammaOut = GammaIn(s, p.GammaL), GammaOut(s, p.GammaS)

	ms, ml := rfmath.Thru, rfmath.Thru
	if st.Source != nil {
		ms = st.Source.ABCD(fHz)
	}
	if st.Load != nil {
		ml = st.Load.ABCD(fHz)
	}
	total := ms.Mul(rfmath.SToABCD(s, z1, z2)).Mul(reversed(ml))
	p.S = rfmath.ABCDToS(total, z0, z0)
	p.GainDB = DB(abs2(p.S[2]))
	p.InputRLdB = -20 * math.Log10(cmplx.Abs(p.S[0]))
	p.OutputRLdB = -20 * math.Log10(cmplx.Abs(p.S[3]))
	p.K, p.Mu = RollettK(p.S), Mu(p.S)

	p.Stable = cmplx.Abs(p.GammaS) <= 1 && cmplx.Abs(p.GammaL) <= 1 &&
		cmplx.Abs(p.GammaIn) < 1 && cmplx.Abs(p.GammaOut) < 1

	// The networks' available gains: the source network driven by the
	// termination (Γ = 0 against z0), the load network (turned to face
	// the device: port 1 at the device) driven by the device's output.
	gaSrc := AvailableGain(ss, 0)
	slr := [4]complex128{sl[3], sl[2], sl[1], sl[0]}
	gaLoad := AvailableGain(slr, p.GammaOut)
	p.SourceLossDB, p.LoadLossDB = -DB(gaSrc), -DB(gaLoad)

	p.NFdB, p.DeviceNFdB = math.NaN(), math.NaN()
	if len(st.Noise) > 0 {
		if np, err := NoiseAt(st.Noise, fHz); err == nil {
			p.DeviceNFdB = NoiseFigureDB(np, z1, p.GammaS)
			fDev := FromDB(p.DeviceNFdB)
			gaDev := AvailableGain(s, p.GammaS)
			f := 1/gaSrc + (fDev-1)/gaSrc + (1/gaLoad-1)/(gaSrc*gaDev)
			p.NFdB = DB(f)
		}
	}
	return p, nil
}

// StageRequirement is what a stage must do in a band; a zero field asks
// nothing: the least transducer gain, the largest noise figure, and the
// least return losses at the input and the output, all in dB.
type StageRequirement struct {
	MinGainDB     float64
	MaxNFdB       float64
	MinInputRLdB  float64
	MinOutputRLdB float64
}

// Any reports whether r asks anything.
func (r StageRequirement) Any() bool {
	return r.MinGainDB != 0 || r.MaxNFdB != 0 || r.MinInputRLdB != 0 || r.MinOutputRLdB != 0
}

// StageBand is a band a stage must cover with its requirement.
type StageBand struct {
	LoHz, HiHz float64
	StageRequirement
}

func (b StageBand) validate() error {
	bad := func(v float64) bool { return math.IsNaN(v) || math.IsInf(v, 0) }
	if !(b.LoHz > 0 && b.HiHz >= b.LoHz) || math.IsInf(b.HiHz, 0) || bad(b.MinGainDB) || bad(b.MaxNFdB) ||
		bad(b.MinInputRLdB) || bad(b.MinOutputRLdB) || b.MaxNFdB < 0 || b.MinInputRLdB < 0 || b.MinOutputRLdB < 0 {
		return fmt.Errorf("amp: stage band %g–%g Hz with gain ≥ %g dB, NF ≤ %g dB, input RL ≥ %g dB, output RL ≥ %g dB: the frequencies must run upward and the limits be finite (NF and return losses not negative)",
			b.LoHz, b.HiHz, b.MinGainDB, b.MaxNFdB, b.MinInputRLdB, b.MinOutputRLdB)
	}
	return nil
}

// StageBandResult is how a stage does in one band, over the band's points
// ([rfmath.BandFreqs] on the device's sweep).
type StageBandResult struct {
	Band   StageBand
	Points int
	// MinGainDB and MaxGainDB are the least and largest transducer gain,
	// MinGainHz where the least falls.
	MinGainDB, MinGainHz, MaxGainDB float64
	// WorstNFdB is the largest noise figure and WorstNFHz where; NaN when
	// NoNoise points have no noise data.
	WorstNFdB, WorstNFHz float64
	NoNoise              int
	// WorstInputRLdB and WorstOutputRLdB are the least return losses.
	WorstInputRLdB, WorstInputRLHz   float64
	WorstOutputRLdB, WorstOutputRLHz float64
	// WorstSourceLossDB is the source network's largest own loss.
	WorstSourceLossDB float64
	// Unstable counts the band points where the terminations do not keep
	// the device stable.
	Unstable int
	// MarginDB is the least margin over the band's requirements: the least
	// gain less its limit, the noise-figure limit less the worst noise
	// figure, the least return losses less theirs; −∞ when a noise-figure
	// limit meets a point without noise data, +∞ when nothing is asked.
	MarginDB float64
}

// StageMetrics is how a stage does across its bands and its whole sweep.
type StageMetrics struct {
	Bands []StageBandResult
	// MarginDB is the least band margin.
	MarginDB float64
	// MinGainDB is the least gain over all band points.
	MinGainDB float64
	// UnstableHz lists the device sweep's frequencies, in and out of the
	// bands, where the terminations do not keep the device stable.
	UnstableHz []float64
	// MinMu is the least μ of the stage's S-matrix over the sweep: above 1
	// the stage as a block is stable with any passive source and load.
	MinMu float64
}

// Meets reports whether every band's requirement is met and the stage is
// stable at every frequency of the sweep.
func (m StageMetrics) Meets() bool { return m.MarginDB >= 0 && len(m.UnstableHz) == 0 }

// EvaluateStage returns how the stage does in the bands and across its
// sweep. It is the one evaluator of a stage's figures: the stage search,
// the page and the demo take their figures from it. A band outside the
// device's sweep is an error that names it.
func EvaluateStage(st *Stage, bands []StageBand) (StageMetrics, error) {
	pts, err := st.SweepTo(nil)
	if err != nil {
		return StageMetrics{}, err
	}
	return EvaluateStagePoints(st, pts, bands)
}

// EvaluateStagePoints is [EvaluateStage] with the sweep's points already
// computed by st.SweepTo (the page draws them as well).
func EvaluateStagePoints(st *Stage, pts []StagePoint, bands []StageBand) (StageMetrics, error) {
	if len(pts) != st.Device.Len() {
		panic(badLength)
	}
	m := StageMetrics{MarginDB: math.Inf(1), MinGainDB: math.Inf(1), MinMu: math.Inf(1)}
	for _, p := range pts {
		if !p.Stable {
			m.UnstableHz = append(m.UnstableHz, p.FreqHz)
		}
		if !(p.Mu >= m.MinMu) { // NaN counts as the least
			m.MinMu = p.Mu
		}
	}
	fr := st.Device.FreqHz
	var fs []float64
	for _, b := range bands {
		if err := b.validate(); err != nil {
			return StageMetrics{}, err
		}
		var err error
		if fs, err = rfmath.BandFreqs(fs[:0], fr, b.LoHz, b.HiHz); err != nil {
			return StageMetrics{}, fmt.Errorf("amp: the band %g–%g Hz lies outside the device's sweep (%g–%g Hz): %w", b.LoHz, b.HiHz, fr[0], fr[len(fr)-1], err)
		}
		r := StageBandResult{Band: b, Points: len(fs), MinGainDB: math.Inf(1), MaxGainDB: math.Inf(-1),
			WorstNFdB: math.Inf(-1), WorstInputRLdB: math.Inf(1), WorstOutputRLdB: math.Inf(1), WorstSourceLossDB: math.Inf(-1)}
		for _, f := range fs {
			p, err := st.At(f)
			if err != nil {
				return StageMetrics{}, err
			}
			if !(p.GainDB >= r.MinGainDB) {
				r.MinGainDB, r.MinGainHz = p.GainDB, f
			}
			r.MaxGainDB = math.Max(r.MaxGainDB, p.GainDB)
			if math.IsNaN(p.NFdB) {
				r.NoNoise++
			} else if p.NFdB > r.WorstNFdB {
				r.WorstNFdB, r.WorstNFHz = p.NFdB, f
			}
			if !(p.InputRLdB >= r.WorstInputRLdB) {
				r.WorstInputRLdB, r.WorstInputRLHz = p.InputRLdB, f
			}
			if !(p.OutputRLdB >= r.WorstOutputRLdB) {
				r.WorstOutputRLdB, r.WorstOutputRLHz = p.OutputRLdB, f
			}
			r.WorstSourceLossDB = math.Max(r.WorstSourceLossDB, p.SourceLossDB)
			if !p.Stable {
				r.Unstable++
			}
		}
		if r.NoNoise > 0 {
			r.WorstNFdB, r.WorstNFHz = math.NaN(), math.NaN()
		}
		r.MarginDB = r.margin()
		m.Bands = append(m.Bands, r)
		m.MarginDB = math.Min(m.MarginDB, r.MarginDB)
		m.MinGainDB = math.Min(m.MinGainDB, r.MinGainDB)
	}
	return m, nil
}

// margin returns the band's least margin over its requirements (see
// [StageBandResult.MarginDB]).
func (r StageBandResult) margin() float64 {
	m := math.Inf(1)
	for _, v := range r.Margins() {
		m = math.Min(m, v)
	}
	return m
}

// Margins returns the band's margin over each requirement it has, in the
// order gain, noise figure, input and output return loss: the least gain
// less its limit, the noise-figure limit less the worst noise figure, the
// least return losses less theirs. A margin that cannot be judged (a
// noise-figure limit at a point without noise data) is −∞.
func (r StageBandResult) Margins() []float64 {
	var out []float64
	add := func(v float64) {
		if math.IsNaN(v) {
			v = math.Inf(-1)
		}
		out = append(out, v)
	}
	q := r.Band.StageRequirement
	if q.MinGainDB != 0 {
		add(r.MinGainDB - q.MinGainDB)
	}
	if q.MaxNFdB != 0 {
		add(q.MaxNFdB - r.WorstNFdB)
	}
	if q.MinInputRLdB != 0 {
		add(r.WorstInputRLdB - q.MinInputRLdB)
	}
	if q.MinOutputRLdB != 0 {
		add(r.WorstOutputRLdB - q.MinOutputRLdB)
	}
	return out
}
