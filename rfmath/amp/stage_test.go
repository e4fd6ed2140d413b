package amp

import (
	"errors"
	"math"
	"math/cmplx"
	"math/rand/v2"
	"testing"

	"matchbench/rfmath"
	"matchbench/rfmath/touchstone"
)

// oneSweep returns a 2-port sweep of the single device s at fHz (and, so
// that bands can be judged, at two neighbours with the same S).
func oneSweep(s [4]complex128, fHz float64) *rfmath.Sweep {
	sw := rfmath.NewSweep(3, 2, 50)
	for k := range 3 {
		sw.FreqHz[k] = fHz * (1 + 0.01*float64(k-1))
		copy(sw.Matrix(k), s[:])
	}
	return sw
}

// presenting returns a lossless network that, driven from a 50 Ω
// termination at port 1, presents the reflection g at port 2 (against
// 50 Ω) at fHz: an ideal transformer to the resistance of g, then a series
// reactance next to the device (listed from the device, as a stage's
// networks are).
func presenting(g complex128, fHz float64) rfmath.Ladder {
	z := rfmath.ZFromGamma(g, 50)
	n := math.Sqrt(50 / real(z)) // 50 Ω on the far side is seen as 50/n²
	w := 2 * math.Pi * fHz
	var x rfmath.Element
	if imag(z) >= 0 {
		x = rfmath.SeriesL{LH: imag(z) / w}
	} else {
		x = rfmath.SeriesC{CF: -1 / (w * imag(z))}
	}
	return rfmath.Ladder{x, rfmath.Transformer{Ratio: n}}
}

// With through networks the stage is the device: its S, |S21|² as the
// gain, and the noise figure from a 50 Ω source (Γs = 0), for the
// low-noise example's device of Pozar's amplifier chapter (inputs from
// memory) at 4 GHz. C values from the closed forms of gain.go and noise.go.
func TestStageThrough(t *testing.T) {
	t.Parallel()
	s := pozarLowNoise
	st := &Stage{Device: oneSweep(s, 4e9), Noise: []touchstone.NoisePoint{{FreqHz: 3.9e9, NFminDB: 1.6, GammaOptMag: 0.62, GammaOptDeg: 100, RnOhm: 20}, {FreqHz: 4.1e9, NFminDB: 1.6, GammaOptMag: 0.62, GammaOptDeg: 100, RnOhm: 20}}}
	p, err := st.At(4e9)
	if err != nil {
		t.Fatal(err)
	}
	for i := range s {
		checkC(t, "S", p.S[i], s[i], 1e-12)
	}
	checkF(t, "gain", p.GainDB, 20*math.Log10(1.9), 1e-12)
	checkF(t, "input RL", p.InputRLdB, -20*math.Log10(0.6), 1e-12)
	checkF(t, "NF", p.NFdB, NoiseFigureDB(pozarNoise, 50, 0), 1e-12)
	checkF(t, "source loss", p.SourceLossDB, 0, 1e-12)
	if !p.Stable {
		t.Error("an unconditionally stable device between 50 Ω terminations is not stable")
	}
	checkF(t, "K of the stage", p.K, RollettK(s), 1e-9)
}

// A matched attenuator of L dB in front of the device adds L to the noise
// figure and takes L from the gain (Pozar's noise chapter: a lossy
// matched network at T0 has F = L, and the cascade F = L·F_amp; common
// practice). The pad is the exact 3 dB T of REFERENCE-CHECKS §11:
// R1 = Z0·(k − 1)/(k + 1), R2 = 2·Z0·k/(k² − 1), k = 10^(3/20) (C).
func TestStagePadAddsItsLoss(t *testing.T) {
	t.Parallel()
	k := math.Pow(10, 3.0/20)
	r1, r2 := 50*(k-1)/(k+1), 2*50*k/(k*k-1)
	pad := rfmath.Ladder{rfmath.SeriesR{ROhm: r1}, rfmath.ShuntR{ROhm: r2}, rfmath.SeriesR{ROhm: r1}}
	s := pozarLowNoise
	noise := []touchstone.NoisePoint{{FreqHz: 3e9, NFminDB: 1.6, GammaOptMag: 0.62, GammaOptDeg: 100, RnOhm: 20}, {FreqHz: 5e9, NFminDB: 1.6, GammaOptMag: 0.62, GammaOptDeg: 100, RnOhm: 20}}
	through := &Stage{Device: oneSweep(s, 4e9), Noise: noise}
	padded := &Stage{Device: oneSweep(s, 4e9), Noise: noise, Source: pad}
	p0, err := through.At(4e9)
	if err != nil {
		t.Fatal(err)
	}
	p, err := padded.At(4e9)
	if err != nil {
		t.Fatal(err)
	}
	if cmplx.Abs(p.GammaS) > 1e-12 {
		t.Fatalf("the pad presents Γs = %v, want 0", p.GammaS)
	}
	checkF(t, "NF with the pad", p.NFdB, p0.NFdB+3, 1e-9)
	checkF(t, "gain with the pad", p.GainDB, p0.GainDB-3, 1e-9)
	checkF(t, "the pad's own loss", p.SourceLossDB, 3, 1e-9)
	// After a device whose output is matched (S22 = 0, so the pad sees
	// a 50 Ω source and F_pad = L), the pad's noise is divided by the
	// device's available gain |S21|²: F = F_dev + (L − 1)/|S21|² (Friis).
	s[3] = 0
	after := &Stage{Device: oneSweep(s, 4e9), Noise: noise, Load: pad}
	pa, err := after.At(4e9)
	if err != nil {
		t.Fatal(err)
	}
	want := DB(FromDB(p0.NFdB) + (FromDB(3)-1)/(1.9*1.9))
	checkF(t, "NF with the pad after the device", pa.NFdB, want, 1e-9)
}

// Lossless networks at the simultaneous conjugate match give the stage
// MAG with both terminations matched (Pozar's conjugate-matched design; C
// value MAG = 16.710196 dB from TestPozarConjugateMatchExample). Lossless
// networks presenting Γs = Γopt and ΓL = Γout(Γopt)* give NFmin and
// G_T = G_A(Γopt) (the low-noise design of the same chapter; C value
// 7.329582 dB from TestLowNoiseExampleGainCircles), with the input return
// loss of the mismatch between Γs and Γin: a lossless network keeps it,
// |Γ| = |(Γin − Γs*)/(1 − Γin·Γs)| (Pozar's amplifier chapter, the input
// mismatch of a low-noise design; from memory).
func TestStageMatchedDesigns(t *testing.T) {
	t.Parallel()
	const f = 4e9
	s := pozarConjugate
	gs, gl, err := ConjugateMatch(s)
	if err != nil {
		t.Fatal(err)
	}
	st := &Stage{Device: oneSweep(s, f), Source: presenting(gs, f), Load: presenting(gl, f)}
	p, err := st.At(f)
	if err != nil {
		t.Fatal(err)
	}
	checkC(t, "Γs", p.GammaS, gs, 1e-12)
	checkC(t, "ΓL", p.GammaL, gl, 1e-12)
	checkF(t, "gain at the conjugate match", p.GainDB, 16.710196, 1e-6)
	if p.InputRLdB < 100 || p.OutputRLdB < 100 {
		t.Errorf("return losses %g and %g dB at the conjugate match, want ∞ to rounding", p.InputRLdB, p.OutputRLdB)
	}

	s = pozarLowNoise
	gOpt := GammaOpt(pozarNoise)
	gl = cmplx.Conj(GammaOut(s, gOpt))
	noise := []touchstone.NoisePoint{pozarNoise}
	st = &Stage{Device: oneSweep(s, f), Noise: noise, Source: presenting(gOpt, f), Load: presenting(gl, f)}
	p, err = st.At(f)
	if err != nil {
		t.Fatal(err)
	}
	checkF(t, "NF at Γopt", p.NFdB, 1.6, 1e-9)
	checkF(t, "gain at Γopt", p.GainDB, 7.329582, 1e-6)
	gin := GammaIn(s, gl)
	mis := cmplx.Abs((gin - cmplx.Conj(gOpt)) / (1 - gin*gOpt))
	checkF(t, "input RL", p.InputRLdB, -20*math.Log10(mis), 1e-9)
	if p.OutputRLdB < 100 {
		t.Errorf("output RL %g dB with ΓL = Γout*, want ∞ to rounding", p.OutputRLdB)
	}
}

// hrNoise is an independent noise analysis of a chain of 2-ports by noise
// correlation matrices in chain (ABCD) form (H. Hillbrand and P. H. Russer,
// "An efficient method for computer aided noise analysis of linear
// amplifier networks", IEEE Trans. CAS-23(4), 1976; from memory), each
// normalised to 2kT0: a series impedance Z carries [[Re Z, 0], [0, 0]], a
// shunt admittance Y [[0, 0], [0, Re Y]] (Nyquist's thermal noise at T0),
// the device [[Rn, (Fmin − 1)/2 − Rn·Yopt*], [(Fmin − 1)/2 − Rn·Yopt,
// Rn·|Yopt|²]]. A cascade of (A1, C1) then (A2, C2) is
// (A1·A2, C1 + A1·C2·A1ᴴ), and the noise factor from a source Zs is
// F = 1 + aᴴ·C·a/Re Zs with a = [1, Zs*].
type hrChain struct {
	a rfmath.ABCD
	c [4]complex128 // row-major 2×2, Hermitian
}

func hrCascade(x, y hrChain) hrChain {
	a := x.a
	// a·c·aᴴ
	m := [4]complex128{
		a[0]*y.c[0] + a[1]*y.c[2], a[0]*y.c[1] + a[1]*y.c[3],
		a[2]*y.c[0] + a[3]*y.c[2], a[2]*y.c[1] + a[3]*y.c[3],
	}
	ah := [4]complex128{cmplx.Conj(a[0]), cmplx.Conj(a[2]), cmplx.Conj(a[1]), cmplx.Conj(a[3])}
	n := [4]complex128{
		m[0]*ah[0] + m[1]*ah[2], m[0]*ah[1] + m[1]*ah[3],
		m[2]*ah[0] + m[3]*ah[2], m[2]*ah[1] + m[3]*ah[3],
	}
	return hrChain{a: x.a.Mul(y.a), c: [4]complex128{x.c[0] + n[0], x.c[1] + n[1], x.c[2] + n[2], x.c[3] + n[3]}}
}

func hrElement(e rfmath.Element, f float64) hrChain {
	m := e.ABCD(f)
	switch {
	case m[2] == 0: // series Z = B
		return hrChain{a: m, c: [4]complex128{complex(real(m[1]), 0), 0, 0, 0}}
	case m[1] == 0: // shunt Y = C
		return hrChain{a: m, c: [4]complex128{0, 0, 0, complex(real(m[2]), 0)}}
	}
	panic("hrElement: only series and shunt parts")
}

func hrFactor(c hrChain, zs complex128) float64 {
	a0, a1 := complex(1, 0), cmplx.Conj(zs)
	// aᴴ·C·a
	v := cmplx.Conj(a0)*(c.c[0]*a0+c.c[1]*a1) + cmplx.Conj(a1)*(c.c[2]*a0+c.c[3]*a1)
	return 1 + real(v)/real(zs)
}

// randomLossy returns a random ladder of two to four lossy series and shunt
// parts at around fHz (a lossy L, a lossy C or a resistor each).
func randomLossy(rnd *rand.Rand, fHz float64) rfmath.Ladder {
	w := 2 * math.Pi * fHz
	n := 2 + rnd.IntN(3)
	var l rfmath.Ladder
	for range n {
		var p rfmath.Lumped
		switch rnd.IntN(3) {
		case 0:
			x := 10 + 90*rnd.Float64()
			p = rfmath.Lumped{LH: x / w, ROhm: x / (10 + 90*rnd.Float64()), RLaw: rfmath.Flat}
		case 1:
			x := 10 + 90*rnd.Float64()
			p = rfmath.Lumped{CF: 1 / (w * x), ROhm: x / (20 + 200*rnd.Float64()), RLaw: rfmath.Flat}
		default:
			p = rfmath.Lumped{ROhm: 1 + 200*rnd.Float64(), RLaw: rfmath.Flat}
		}
		if rnd.IntN(2) == 0 {
			l = append(l, rfmath.Series{Part: p})
		} else {
			l = append(l, rfmath.Shunt{Part: p})
		}
	}
	return l
}

// The stage's noise figure (Friis with available gains) agrees with the
// correlation-matrix analysis of the whole chain (hrNoise above) for
// random lossy networks on both sides, random devices and random noise
// parameters (seeded), half of them with the device against references
// of 25 and 75 Ω between 50 Ω terminations: two independent methods. The
// transducer gain is checked against the same chain's ABCD matrix.
func TestStageNoiseAgainstCorrelationMatrices(t *testing.T) {
	t.Parallel()
	const f = 2e9
	rnd := rand.New(rand.NewPCG(18, 40))
	checked := 0
	for n := 0; checked < 300 && n < 5000; n++ {
		s := random2Port(rnd, 0.8)
		np := touchstone.NoisePoint{FreqHz: f, NFminDB: 0.3 + 2*rnd.Float64(), GammaOptMag: 0.9 * rnd.Float64(), GammaOptDeg: 360*rnd.Float64() - 180, RnOhm: 2 + 40*rnd.Float64()}
		src, load := randomLossy(rnd, f), randomLossy(rnd, f)
		z1, z2 := 50.0, 50.0
		if n%2 == 1 { // the device against other references than the terminations
			z1, z2 = 25, 75
		}
		dev := oneSweep(s, f)
		dev.Z0 = []float64{z1, z2}
		st := &Stage{Device: dev, Noise: []touchstone.NoisePoint{np}, Source: src, Load: load}
		p, err := st.At(f)
		if err != nil {
			t.Fatal(err)
		}
		if !p.Stable || math.IsNaN(p.NFdB) {
			continue // an oscillating chain has no noise figure
		}
		// The chain from the source termination to the load termination:
		// the source ladder from its far end, the device, the load ladder
		// from the device.
		chain := hrChain{a: rfmath.Thru}
		for i := len(src) - 1; i >= 0; i-- {
			chain = hrCascade(chain, hrElement(src[i], f))
		}
		fmin := FromDB(np.NFminDB)
		g := GammaOpt(np)
		yopt := (1 - g) / (complex(z1, 0) * (1 + g)) // Γopt is against port 1's reference
		rn := complex(np.RnOhm, 0)
		cd := [4]complex128{rn, complex((fmin-1)/2, 0) - rn*cmplx.Conj(yopt), complex((fmin-1)/2, 0) - rn*yopt, rn * complex(abs2(yopt), 0)}
		chain = hrCascade(chain, hrChain{a: rfmath.SToABCD(s, z1, z2), c: cd})
		for _, e := range load {
			chain = hrCascade(chain, hrElement(e, f))
		}
		want := DB(hrFactor(chain, 50))
		checkF(t, "NF against the correlation matrices", p.NFdB, want, 1e-9)
		gt := rfmath.ABCDToS(chain.a, 50, 50)
		checkF(t, "gain against the chain", p.GainDB, DB(abs2(gt[2])), 1e-9)
		checked++
	}
	if checked < 300 {
		t.Fatalf("only %d stable random stages", checked)
	}
}

// The device alone, in correlation-matrix form, gives NoiseFigureDB's
// figure at any source: the two forms of the device's noise agree, so the
// check above compares the cascades, not two spellings of the device.
func TestCorrelationMatrixOfTheDevice(t *testing.T) {
	t.Parallel()
	rnd := rand.New(rand.NewPCG(18, 41))
	for range 200 {
		np := touchstone.NoisePoint{NFminDB: 3 * rnd.Float64(), GammaOptMag: 0.9 * rnd.Float64(), GammaOptDeg: 360*rnd.Float64() - 180, RnOhm: 1 + 60*rnd.Float64()}
		g := GammaOpt(np)
		yopt := (1 - g) / (50 * (1 + g))
		rn := complex(np.RnOhm, 0)
		fmin := FromDB(np.NFminDB)
		cd := [4]complex128{rn, complex((fmin-1)/2, 0) - rn*cmplx.Conj(yopt), complex((fmin-1)/2, 0) - rn*yopt, rn * complex(abs2(yopt), 0)}
		gs := randomDisc(rnd, 0.95)
		zs := rfmath.ZFromGamma(gs, 50)
		checkF(t, "NF", DB(hrFactor(hrChain{a: rfmath.Thru, c: cd}, zs)), NoiseFigureDB(np, 50, gs), 1e-9)
	}
}

// Band figures: the points of the band on the sweep, the least gain and
// worst figures there, the margins, and NF limits without noise data.
func TestEvaluateStage(t *testing.T) {
	t.Parallel()
	// A sweep of three points where only the gain changes: S21 = 2, 3, 4.
	sw := rfmath.NewSweep(3, 2, 50)
	for k := range 3 {
		sw.FreqHz[k] = 1e9 + 1e8*float64(k)
		copy(sw.Matrix(k), []complex128{0.1, 0.01, complex(2+float64(k), 0), 0.2})
	}
	noise := []touchstone.NoisePoint{{FreqHz: 1e9, NFminDB: 1, RnOhm: 10}, {FreqHz: 1.1e9, NFminDB: 2, RnOhm: 10}}
	st := &Stage{Device: sw, Noise: noise}
	bands := []StageBand{
		{LoHz: 1e9, HiHz: 1.05e9, StageRequirement: StageRequirement{MinGainDB: 6, MaxNFdB: 2}},
		{LoHz: 1.05e9, HiHz: 1.2e9, StageRequirement: StageRequirement{MaxNFdB: 3, MinOutputRLdB: 10}},
	}
	m, err := EvaluateStage(st, bands)
	if err != nil {
		t.Fatal(err)
	}
	b := m.Bands[0]
	if b.Points != 2 {
		t.Errorf("band 1 has %d points, want 2 (1 GHz and its upper edge)", b.Points)
	}
	// The gain at 1.05 GHz: |S21| interpolated to 2.5 (C).
	checkF(t, "least gain", b.MinGainDB, 20*math.Log10(2), 1e-9)
	checkF(t, "largest gain", b.MaxGainDB, 20*math.Log10(2.5), 1e-9)
	// Γs = 0, Γopt = 0: NF = NFmin, 1.5 dB at 1.05 GHz.
	checkF(t, "worst NF", b.WorstNFdB, 1.5, 1e-9)
	checkF(t, "margin", b.MarginDB, math.Min(20*math.Log10(2)-6, 2-1.5), 1e-9)
	b = m.Bands[1]
	if b.NoNoise != 1 || !math.IsNaN(b.WorstNFdB) || !math.IsInf(b.MarginDB, -1) {
		t.Errorf("band 2 beyond the noise data (1.2 GHz): %d points without noise, NF %g, margin %g; want 1, NaN, −∞", b.NoNoise, b.WorstNFdB, b.MarginDB)
	}
	if m.Meets() || len(m.UnstableHz) != 0 {
		t.Errorf("Meets %v, unstable at %v", m.Meets(), m.UnstableHz)
	}
	if _, err := EvaluateStage(st, []StageBand{{LoHz: 2e9, HiHz: 3e9}}); !errors.Is(err, rfmath.ErrOutOfRange) {
		t.Errorf("a band outside the sweep: %v", err)
	}
	if _, err := EvaluateStage(&Stage{Device: rfmath.NewSweep(2, 1, 50)}, nil); !errors.Is(err, ErrNotTwoPort) {
		t.Errorf("a 1-port device: %v", err)
	}
}

// A conditionally stable device with a load network that puts ΓL on the
// unstable side of the output stability circle is reported unstable, and
// the frequency is listed.
func TestStageUnstableTermination(t *testing.T) {
	t.Parallel()
	// The potentially unstable FET of Pozar's stability example (inputs
	// from memory; see TestPozarStabilityExample): its unstable loads lie
	// inside the output stability circle.
	s := [4]complex128{polar(0.894, -60.6), polar(0.020, 62.4), polar(3.122, 123.6), polar(0.781, -27.6)}
	c := OutputStabilityCircle(s)
	var bad complex128
	for k := range 64 {
		g := cmplx.Rect(0.97, 2*math.Pi*float64(k)/64)
		if !c.IsStable(g) {
			bad = g
			break
		}
	}
	if bad == 0 {
		t.Fatal("no unstable passive load found to test with")
	}
	st := &Stage{Device: oneSweep(s, 1.9e9), Load: presenting(bad, 1.9e9)}
	m, err := EvaluateStage(st, []StageBand{{LoHz: 1.9e9, HiHz: 1.9e9, StageRequirement: StageRequirement{MinGainDB: 1}}})
	if err != nil {
		t.Fatal(err)
	}
	if len(m.UnstableHz) == 0 || m.Bands[0].Unstable != 1 || m.Meets() {
		t.Errorf("ΓL = %v on the unstable side: unstable at %v, band %d, meets %v", bad, m.UnstableHz, m.Bands[0].Unstable, m.Meets())
	}
}
