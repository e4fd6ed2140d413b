package rfmath

import (
	"math"
	"math/cmplx"
	"math/rand/v2"
	"testing"
)

// randomLumped returns a random lossy lumped part: an inductor with a loss
// law and a parallel capacitance, a capacitor with ESR and lead inductance,
// or a resistor with lead inductance.
func randomLumped(rnd *rand.Rand) Lumped {
	switch rnd.IntN(4) {
	case 0:
		l := math.Pow(10, -9.5+2*rnd.Float64())
		return Lumped{LH: l, ROhm: 2 * math.Pi * 1e9 * l / (5 + 50*rnd.Float64()), RefHz: 1e9, RLaw: Law(rnd.IntN(3)), ParallelCF: 0.05e-12 * rnd.Float64()}
	case 1:
		c := math.Pow(10, -12.5+2*rnd.Float64())
		return Lumped{CF: c, LH: 0.5e-9 * rnd.Float64(), ROhm: 0.5 * rnd.Float64(), RLaw: Flat}
	case 2:
		c := math.Pow(10, -12.5+2*rnd.Float64())
		return Lumped{CF: c, ROhm: 1 / (2 * math.Pi * 1e9 * c * (50 + 500*rnd.Float64())), RefHz: 1e9, RLaw: Inverse}
	}
	return Lumped{ROhm: 1 + 100*rnd.Float64(), LH: 1e-9 * rnd.Float64(), RLaw: Flat}
}

// randomLadder returns a random ladder of up to six elements: lossy lumped
// parts in series and shunt, ideal parts, lossy and lossless lines, stubs
// and transformers.
func randomLadder(rnd *rand.Rand) Ladder {
	n := 1 + rnd.IntN(6)
	l := make(Ladder, n)
	for j := range l {
		switch rnd.IntN(8) {
		case 0, 1:
			l[j] = Series{Part: randomLumped(rnd)}
		case 2, 3:
			l[j] = Shunt{Part: randomLumped(rnd)}
		case 4:
			l[j] = []Element{SeriesL{2e-9 * rnd.Float64()}, ShuntC{2e-12 * rnd.Float64()}, SeriesR{20 * rnd.Float64()}, ShuntR{50 + 500*rnd.Float64()}}[rnd.IntN(4)]
		case 5:
			l[j] = Line{Z0Ohm: 30 + 70*rnd.Float64(), LengthM: 0.1 * rnd.Float64(), VelocityFactor: 0.66, LossDBPerM: 3 * rnd.Float64() * float64(rnd.IntN(2)), LossRefHz: 1e9}
		case 6:
			l[j] = ShuntStub{Line: Line{Z0Ohm: 50, LengthM: 0.05 * rnd.Float64(), VelocityFactor: 0.7, LossDBPerM: rnd.Float64(), LossRefHz: 1e9}, Open: rnd.IntN(2) == 0}
		default:
			l[j] = Transformer{Ratio: 0.5 + 2*rnd.Float64()}
		}
	}
	return l
}

// randomPassiveGamma returns a random reflection coefficient with |Γ| < 1.
func randomPassiveGamma(rnd *rand.Rand) complex128 {
	return cmplx.Rect(0.999*math.Sqrt(rnd.Float64()), 2*math.Pi*rnd.Float64())
}

// TestCircuitAgreesWithLadder: the compiled circuit and the ABCD cascade
// of the same ladder are two computations of one Γin (the cascade is the
// textbook form, Pozar, Microwave Engineering, Table 4.1, from memory).
func TestCircuitAgreesWithLadder(t *testing.T) {
	t.Parallel()
	rnd := rand.New(rand.NewPCG(12, 1))
	for range 500 {
		l := randomLadder(rnd)
		c := l.Circuit()
		f := 0.3e9 + 3e9*rnd.Float64()
		g := randomPassiveGamma(rnd)
		got, want := c.GammaAt(f, g, 50), l.InputGamma(f, g, 50)
		if !closeC(got, want, 1e-10) {
			t.Fatalf("%v at %g Hz: circuit %v, ladder %v", l, f, got, want)
		}
	}
}

// TestBalanceCloses is the energy balance of every random ladder and
// passive load: the available power equals the reflected power (from
// |Γin|² alone) plus what each part and the load take, to 1e-12; no passive
// part produces power; G_T of PowerAt is LoadW/AvailableW.
func TestBalanceCloses(t *testing.T) {
	t.Parallel()
	rnd := rand.New(rand.NewPCG(12, 2))
	for range 2000 {
		l := randomLadder(rnd)
		c := l.Circuit()
		f := 0.3e9 + 3e9*rnd.Float64()
		g := randomPassiveGamma(rnd)
		p := 0.001 + 10*rnd.Float64()
		b := c.BalanceTo(nil, f, g, 50, p)
		sum := b.ReflectedW + b.LoadW
		for j, d := range b.PartsW {
			if d < -1e-12*p {
				t.Fatalf("%v: element %d gives %g W", l, j, d)
			}
			sum += d
		}
		if math.Abs(sum-p) > 1e-12*p {
			t.Fatalf("%v at %g Hz: %g W in, %g W accounted (reflected %g, load %g, parts %v)", l, f, p, sum, b.ReflectedW, b.LoadW, b.PartsW)
		}
		gin, gt := c.PowerAt(f, g, 50)
		if !closeC(gin, c.GammaAt(f, g, 50), 1e-15) || math.Abs(gt-b.TransducerGain()) > 1e-12 {
			t.Fatalf("PowerAt %v %v, balance G_T %v", gin, gt, b.TransducerGain())
		}
		if gt > 1-cmplx.Abs(gin)*cmplx.Abs(gin)+1e-12 {
			t.Fatalf("G_T %v above 1 − |Γin|²", gt)
		}
	}
}

// TestBalanceNodal checks the accounting against nodal analysis written
// separately: the ladder of series and shunt parts as a nodal admittance
// matrix driven by a Norton source Vs/Z0 ∥ Z0, solved with gonum's LU (via
// realSolve), the dissipations ½|ΔV|²·Re Y and the available power
// |Vs|²/(8·Z0) (REFERENCE-CHECKS LS-1).
func TestBalanceNodal(t *testing.T) {
	t.Parallel()
	rnd := rand.New(rand.NewPCG(12, 3))
	const z0 = 50.0
	for trial := range 300 {
		n := 1 + rnd.IntN(5)
		l := make(Ladder, n)
		for j := range l {
			if rnd.IntN(2) == 0 {
				l[j] = Series{Part: randomLumped(rnd)}
			} else {
				l[j] = Shunt{Part: randomLumped(rnd)}
			}
		}
		f := 0.3e9 + 3e9*rnd.Float64()
		zl := complex(1+200*rnd.Float64(), -300+600*rnd.Float64())
		// Nodes from the source: node 0 at the source side; every series
		// element starts a new node.
		nodes := 1
		for j := n - 1; j >= 0; j-- {
			if _, ok := l[j].(Series); ok {
				nodes++
			}
		}
		y := make([]complex128, nodes*nodes)
		add := func(a, b int, adm complex128) { // b < 0: to ground
			y[a*nodes+a] += adm
			if b >= 0 {
				y[b*nodes+b] += adm
				y[a*nodes+b] -= adm
				y[b*nodes+a] -= adm
			}
		}
		type branch struct{ a, b int }
		br := make([]branch, n)
		node := 0
		add(0, -1, complex(1/z0, 0))
		for j := n - 1; j >= 0; j-- {
			switch e := l[j].(type) {
			case Series:
				add(node, node+1, 1/e.Part.ImpedanceAt(f))
				br[j] = branch{node, node + 1}
				node++
			case Shunt:
				add(node, -1, 1/e.Part.ImpedanceAt(f))
				br[j] = branch{node, -1}
			}
		}
		add(node, -1, 1/zl)
		vs := complex(2, 0.5) // any source voltage
		rhs := make([]complex128, nodes)
		rhs[0] = vs / complex(z0, 0)
		v := realSolve(t, y, rhs, nodes, 1)
		pav := cmplx.Abs(vs) * cmplx.Abs(vs) / (8 * z0)
		pLoad := 0.5 * cmplx.Abs(v[node]) * cmplx.Abs(v[node]) * real(1/zl)
		b := l.Circuit().BalanceTo(nil, f, GammaFromZ(zl, complex(z0, 0)), z0, pav)
		if math.Abs(b.LoadW-pLoad) > 1e-9*pav {
			t.Fatalf("trial %d: load %g W, nodal %g W", trial, b.LoadW, pLoad)
		}
		for j, e := range l {
			vb := complex(0, 0)
			if br[j].b >= 0 {
				vb = v[br[j].b]
			}
			var z complex128
			switch e := e.(type) {
			case Series:
				z = e.Part.ImpedanceAt(f)
			case Shunt:
				z = e.Part.ImpedanceAt(f)
			}
			dv := v[br[j].a] - vb
			want := 0.5 * cmplx.Abs(dv) * cmplx.Abs(dv) * real(1/z)
			if math.Abs(b.PartsW[j]-want) > 1e-9*pav {
				t.Fatalf("trial %d, element %d: %g W, nodal %g W", trial, j, b.PartsW[j], want)
			}
		}
	}
}

// TestBalanceLossless: ideal parts, an ideal transformer and lossless
// lines dissipate nothing, so η = 1 exactly and the load takes
// 1 − |Γin|² of the available power.
func TestBalanceLossless(t *testing.T) {
	t.Parallel()
	l := Ladder{ShuntC{1.2e-12}, SeriesL{5.6e-9}, Series{Part: Lumped{CF: 2e-12}}, Shunt{Part: Lumped{LH: 8e-9}}, Transformer{1.7},
		Line{Z0Ohm: 75, LengthM: 0.03, VelocityFactor: 0.66}, ShuntStub{Line: Line{Z0Ohm: 50, LengthM: 0.01}, Open: true}}
	c := l.Circuit()
	for _, f := range []float64{0.5e9, 0.9e9, 2.45e9} {
		b := c.BalanceTo(nil, f, complex(0.3, -0.4), 50, 1)
		if b.Efficiency() != 1 {
			t.Errorf("%g Hz: η = %v, want exactly 1", f, b.Efficiency())
		}
		for j, d := range b.PartsW {
			if d != 0 {
				t.Errorf("%g Hz: element %d dissipates %g W", f, j, d)
			}
		}
		g := c.GammaAt(f, complex(0.3, -0.4), 50)
		if math.Abs(b.TransducerGain()-(1-real(g)*real(g)-imag(g)*imag(g))) > 1e-12 {
			t.Errorf("%g Hz: G_T %v, 1 − |Γ|² %v", f, b.TransducerGain(), 1-cmplx.Abs(g)*cmplx.Abs(g))
		}
	}
}

// TestBalanceAttenuator: a matched resistive T pad of A dB has
// G_T = 10^(−A/10) between matched terminations and dissipates the rest in
// its resistors. Pad values R1 = Z0·(K − 1)/(K + 1) in each arm and
// R2 = 2·Z0·K/(K² − 1) across, K = 10^(A/20) (common practice; the 3 dB pad
// is REFERENCE-CHECKS §11 and LS-1: 8.55 Ω and 141.9 Ω).
func TestBalanceAttenuator(t *testing.T) {
	t.Parallel()
	const z0 = 50.0
	for _, a := range []float64{1, 3, 6, 10, 20} {
		k := math.Pow(10, a/20)
		r1, r2 := z0*(k-1)/(k+1), 2*z0*k/(k*k-1)
		if a == 3 && (math.Abs(r1-8.5499) > 1e-3 || math.Abs(r2-141.93) > 1e-2) {
			t.Errorf("3 dB pad %v Ω, %v Ω; the sheet has 8.55 Ω and 141.9 Ω", r1, r2)
		}
		c := Ladder{SeriesR{r1}, ShuntR{r2}, SeriesR{r1}}.Circuit()
		b := c.BalanceTo(nil, 1e9, 0, z0, 1)
		if want := math.Pow(10, -a/10); math.Abs(b.TransducerGain()-want) > 1e-12 || b.ReflectedW > 1e-24 {
			t.Errorf("%g dB pad: G_T %v, want %v; reflected %g", a, b.TransducerGain(), want, b.ReflectedW)
		}
		if math.Abs(b.DissipativeLossDB()-a) > 1e-9 || math.Abs(b.MismatchLossDB()) > 1e-12 {
			t.Errorf("%g dB pad: dissipative %v dB, mismatch %v dB", a, b.DissipativeLossDB(), b.MismatchLossDB())
		}
	}
}

// TestLNetworkLoss compares the dissipative loss of a lossy L-network with
// the textbook approximation IL ≈ 10·log10(1 + Qn/Qu) per element
// (REFERENCE-CHECKS LS-3: secondary web sources agree on the 4.34·Qn/Qu
// form; that it is the textbook form is from memory). 10 Ω to 50 Ω at
// 100 MHz has Qn = 2; with both parts of unloaded Q Qu the loss of the two
// elements is near 2·10·log10(1 + 2/Qu): within 10 % for Qu ≥ 50 (the
// approximation is for high Q), and about 0.35 dB at Qu = 50.
func TestLNetworkLoss(t *testing.T) {
	t.Parallel()
	const f, rl, z0 = 100e6, 10.0, 50.0
	w := 2 * math.Pi * f
	qn := math.Sqrt(z0/rl - 1)
	xs, xp := qn*rl, z0/qn // series L next to the load, shunt C at the source side
	for _, qu := range []float64{50, 100, 200, 500} {
		lh, cf := xs/w, 1/(w*xp)
		ind := Lumped{LH: lh, ROhm: xs / qu, RefHz: f, RLaw: Linear}
		cap := Lumped{CF: cf, ROhm: xp / qu, RefHz: f, RLaw: Inverse}
		b := Ladder{Series{Part: ind}, Shunt{Part: cap}}.Circuit().BalanceTo(nil, f, GammaFromZ(complex(rl, 0), complex(z0, 0)), z0, 1)
		approx := 2 * 10 * math.Log10(1+qn/qu)
		if got := b.DissipativeLossDB(); math.Abs(got-approx) > 0.1*approx {
			t.Errorf("Qu %g: dissipative loss %.4f dB, approximation %.4f dB", qu, got, approx)
		}
		if qu == 50 && (b.DissipativeLossDB() < 0.3 || b.DissipativeLossDB() > 0.4) {
			t.Errorf("Qu 50: %.3f dB, the sheet says about 0.35–0.4 dB", b.DissipativeLossDB())
		}
	}
}

// TestCircuitZeroAllocs locks in that the hot paths allocate nothing.
func TestCircuitZeroAllocs(t *testing.T) {
	l := Ladder{Shunt{Part: Lumped{CF: 1e-12, ROhm: 0.3}}, Series{Part: Lumped{LH: 3e-9, ROhm: 1, RefHz: 1e9}}, Line{Z0Ohm: 50, LengthM: 0.01}}
	c := l.Circuit()
	dst := make([]float64, len(l))
	if a := testing.AllocsPerRun(100, func() {
		c.PowerAt(1e9, 0.3, 50)
		c.BalanceTo(dst, 1e9, 0.3, 50, 1)
		c.GammaAt(1e9, 0.3, 50)
	}); a != 0 {
		t.Errorf("%v allocations", a)
	}
}

// TestBandFreqs checks a band's points: the edges interpolated between
// measured points, the points strictly inside, a band on the grid's points,
// a single frequency, and bands off the grid refused.
func TestBandFreqs(t *testing.T) {
	t.Parallel()
	grid := []float64{100, 200, 300, 400}
	for _, tc := range []struct {
		lo, hi float64
		want   []float64
	}{
		{150, 350, []float64{150, 200, 300, 350}},
		{200, 300, []float64{200, 300}},
		{100, 400, []float64{100, 200, 300, 400}},
		{250, 250, []float64{250}},
		{210, 290, []float64{210, 290}},
	} {
		got, err := BandFreqs(nil, grid, tc.lo, tc.hi)
		if err != nil || len(got) != len(tc.want) {
			t.Fatalf("%v–%v: %v, %v", tc.lo, tc.hi, got, err)
		}
		for k := range got {
			if got[k] != tc.want[k] {
				t.Errorf("%v–%v: %v, want %v", tc.lo, tc.hi, got, tc.want)
			}
		}
	}
	for _, b := range [][2]float64{{50, 200}, {300, 401}, {300, 200}, {math.NaN(), 200}} {
		if _, err := BandFreqs(nil, grid, b[0], b[1]); err == nil {
			t.Errorf("%v accepted", b)
		}
	}
	g := []complex128{0, 1i, 1, -1}
	if v, ok := InterpGamma(grid, g, 150); !ok || v != 0.5i {
		t.Errorf("InterpGamma(150) = %v, %v", v, ok)
	}
	if _, ok := InterpGamma(grid, g, 401); ok {
		t.Errorf("InterpGamma extrapolates")
	}
}

// TestBandSummary checks the band figures on hand-made points: the worst
// return loss and power and where, the means of power (not of dB), and the
// split of the loss into mismatch and network loss (arithmetic).
func TestBandSummary(t *testing.T) {
	t.Parallel()
	var s BandSummary
	// Γ magnitudes 0.1, 0.2, 0.5 (RL 20, 13.98, 6.02 dB); the network
	// passes 90 %, 80 %, 50 % of what it accepts.
	s.Add(1e9, 0.1, 0.9*(1-0.01))
	s.Add(2e9, 0.2i, 0.8*(1-0.04))
	s.Add(3e9, -0.5, 0.5*(1-0.25))
	f := s.Figures()
	if f.Points != 3 || math.Abs(f.WorstRLdB-6.020599913279624) > 1e-12 || f.WorstRLHz != 3e9 {
		t.Errorf("worst RL %v at %v", f.WorstRLdB, f.WorstRLHz)
	}
	if want := -10 * math.Log10((0.01+0.04+0.25)/3); math.Abs(f.MeanRLdB-want) > 1e-12 {
		t.Errorf("mean RL %v, want %v (RL of the mean reflected power)", f.MeanRLdB, want)
	}
	if math.Abs(f.WorstPowerToLoad-0.375) > 1e-15 || f.WorstPowerHz != 3e9 {
		t.Errorf("worst power %v at %v", f.WorstPowerToLoad, f.WorstPowerHz)
	}
	if math.Abs(f.MismatchLossDB+f.NetworkLossDB-PowerLossDB(0.375)) > 1e-12 || math.Abs(f.NetworkLossDB-3.0102999566398121) > 1e-12 {
		t.Errorf("split %v + %v", f.MismatchLossDB, f.NetworkLossDB)
	}
	if math.Abs(f.WorstNetworkLossDB-3.0102999566398121) > 1e-12 {
		t.Errorf("worst network loss %v", f.WorstNetworkLossDB)
	}
	mean := (0.891 + 0.768 + 0.375) / 3
	if math.Abs(f.MeanPowerToLoad-mean) > 1e-15 || math.Abs(f.MeanMismatchLossDB+f.MeanNetworkLossDB-PowerLossDB(mean)) > 1e-12 {
		t.Errorf("mean %v, split %v + %v", f.MeanPowerToLoad, f.MeanMismatchLossDB, f.MeanNetworkLossDB)
	}
	r := Requirement{MinReturnLossDB: 10, MinPowerToLoad: 0.5}
	if m := r.MarginDB(f); math.Abs(m-(6.020599913279624-10)) > 1e-12 {
		t.Errorf("margin %v", m)
	}
	r = Requirement{MinPowerToLoad: 0.75}
	if m := r.MarginDB(f); math.Abs(m-(-3.0102999566398121)) > 1e-12 {
		t.Errorf("power margin %v, want −3.01 dB", m)
	}
	if !math.IsInf(Requirement{}.MarginDB(f), 1) {
		t.Errorf("no requirement: margin not +Inf")
	}
	if (BandSummary{}).Figures().Points != 0 || !math.IsNaN((BandSummary{}).Figures().WorstRLdB) {
		t.Errorf("empty summary")
	}
}
