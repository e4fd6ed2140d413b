package demo

import (
	"math"
	"math/cmplx"
	"math/rand/v2"

	"matchbench/rfmath"
	"matchbench/rfmath/touchstone"
)

// The LNA transistor (invented for the demo).
//
// Wristtag's receiver gets a discrete low-noise stage at 2.4 GHz. Its
// transistor is a packaged pHEMT that does not exist: the numbers below are
// the demo's own, of the order of a small low-noise device (from memory,
// not from any datasheet). It is modelled as the usual small-signal FET
// equivalent circuit with package parasitics, common source:
//
//	gate pin ─┬─ Lg ── Rg ──┬─ G′ ── Cgs ── x ── Ri ──┬─ S′ ── Rs ── Ls ── ground
//	         Cpg            │                          │
//	          ⏚             └──────── Cgd ─────────┐   │
//	                                               D′ ─┤  gm·e^(−jωτ)·v(Cgs) from D′ to S′,
//	drain pin ─┬─ Ld ── Rd ────────────────────────┘   │  Rds ∥ Cds from D′ to S′
//	          Cpd
//	           ⏚
//
// where v(Cgs) is the voltage across Cgs alone. Noise follows
// M. W. Pospieszalski, "Modeling of noise parameters of MESFETs and
// MODFETs and their frequency and temperature dependence", IEEE Trans.
// MTT-37(9), 1989 (from memory for the issue and pages): the intrinsic
// gate resistance Ri is noisy at an equivalent gate temperature Tg, the
// output conductance 1/Rds at an equivalent drain temperature Td, the two
// uncorrelated; the extrinsic resistances are noisy at the ambient
// temperature. The noise parameters come from the circuit itself by nodal
// analysis (see circuit.twoPort), not from a formula of the model.
//
// The chosen values make a device with most of its gain at low frequency,
// potentially unstable below about 1.7 GHz (K < 1) and unconditionally
// stable across 2.4–2.5 GHz, with NFmin near 0.85 dB there: a stage worth
// stabilising and matching on the chart.
type fet struct {
	gmS, tauS                float64 // transconductance and its delay
	cgsF, cgdF, cdsF, rdsOhm float64
	riOhm                    float64
	rgOhm, rsOhm, rdOhm      float64
	lgH, lsH, ldH            float64
	cpgF, cpdF               float64
	tgK, tdK, ambientK       float64
}

var lnaFET = fet{
	gmS: 0.080, tauS: 2.5e-12,
	cgsF: 0.90e-12, cgdF: 0.030e-12, cdsF: 0.10e-12, rdsOhm: 60,
	riOhm: 2.0,
	rgOhm: 0.8, rsOhm: 1.0, rdOhm: 1.5,
	lgH: 0.5e-9, lsH: 0.3e-9, ldH: 0.5e-9,
	cpgF: 0.08e-12, cpdF: 0.08e-12,
	tgK: 300, tdK: 1500, ambientK: 300,
}

// Circuit nodes (0 is ground): the two pins, then the internal nodes.
const (
	nGate = iota + 1
	nDrain
	nGi // G′
	nX  // between Cgs and Ri
	nSi // S′
	nDi // D′
	nNodes
)

// t0K is the standard temperature of noise figure, 290 K (IEEE standard
// definition, common practice).
const t0K = 290

// branch is a two-terminal admittance between nodes a and b (0 = ground)
// at temperature tempK (0 for a noiseless part).
type branch struct {
	a, b  int
	y     complex128
	tempK float64
}

// vccs is a current gm·(V(cp) − V(cn)) leaving node from and entering node
// to through the source.
type vccs struct {
	cp, cn, from, to int
	gm               complex128
}

// circuit is a linear network with port 1 at node 1 and port 2 at node 2,
// both against ground.
type circuit struct {
	nodes    int // not counting ground
	branches []branch
	sources  []vccs
}

func (f fet) circuit(fHz float64) circuit {
	w := 2 * math.Pi * fHz
	jw := complex(0, w)
	z := func(r, l float64) complex128 { return complex(r, w*l) }
	return circuit{
		nodes: nNodes - 1,
		branches: []branch{
			{nGate, 0, jw * complex(f.cpgF, 0), 0},
			{nDrain, 0, jw * complex(f.cpdF, 0), 0},
			{nGate, nGi, 1 / z(f.rgOhm, f.lgH), f.ambientK},
			{nDrain, nDi, 1 / z(f.rdOhm, f.ldH), f.ambientK},
			{nSi, 0, 1 / z(f.rsOhm, f.lsH), f.ambientK},
			{nGi, nX, jw * complex(f.cgsF, 0), 0},
			{nX, nSi, complex(1/f.riOhm, 0), f.tgK},
			{nGi, nDi, jw * complex(f.cgdF, 0), 0},
			{nDi, nSi, complex(1/f.rdsOhm, 0), f.tdK},
			{nDi, nSi, jw * complex(f.cdsF, 0), 0},
		},
		sources: []vccs{{nGi, nX, nDi, nSi, complex(f.gmS, 0) * cmplx.Exp(complex(0, -w*f.tauS))}},
	}
}

// impedance returns the inverse of the circuit's nodal admittance matrix
// (nodes×nodes, row-major, node n at index n−1), or false when it is
// singular.
func (c circuit) impedance() ([]complex128, bool) {
	n := c.nodes
	y := make([]complex128, n*n)
	add := func(i, j int, v complex128) {
		if i > 0 && j > 0 {
			y[(i-1)*n+j-1] += v
		}
	}
	for _, b := range c.branches {
		add(b.a, b.a, b.y)
		add(b.b, b.b, b.y)
		add(b.a, b.b, -b.y)
		add(b.b, b.a, -b.y)
	}
	for _, s := range c.sources {
		add(s.from, s.cp, s.gm)
		add(s.from, s.cn, -s.gm)
		add(s.to, s.cp, -s.gm)
		add(s.to, s.cn, s.gm)
	}
	return invert(y, n)
}

// invert returns the inverse of the n×n matrix a by Gauss–Jordan
// elimination with partial pivoting (a is overwritten).
func invert(a []complex128, n int) ([]complex128, bool) {
	inv := make([]complex128, n*n)
	for i := range n {
		inv[i*n+i] = 1
	}
	for col := range n {
		p := col
		for r := col + 1; r < n; r++ {
			if cmplx.Abs(a[r*n+col]) > cmplx.Abs(a[p*n+col]) {
				p = r
			}
		}
		if a[p*n+col] == 0 {
			return nil, false
		}
		if p != col {
			for j := range n {
				a[p*n+j], a[col*n+j] = a[col*n+j], a[p*n+j]
				inv[p*n+j], inv[col*n+j] = inv[col*n+j], inv[p*n+j]
			}
		}
		d := 1 / a[col*n+col]
		for j := range n {
			a[col*n+j] *= d
			inv[col*n+j] *= d
		}
		for r := range n {
			if r == col || a[r*n+col] == 0 {
				continue
			}
			m := a[r*n+col]
			for j := range n {
				a[r*n+j] -= m * a[col*n+j]
				inv[r*n+j] -= m * inv[col*n+j]
			}
		}
	}
	return inv, true
}

// twoPort returns the circuit's S-matrix [S11, S12, S21, S22] against
// z0Ohm on both ports and its noise parameters (Γopt against z0Ohm).
//
// The noise parameters come from the chain (input-referred) representation
// of the circuit's noise: every noisy branch k is a current source of
// spectral density 4k_B·T_k·Re(y_k) across it; with Z the inverse of the
// nodal matrix and z_1k, z_2k the voltages it makes at the ports, the
// input-referred noise current of source k for a source admittance Ys is
// i_k + Ys·u_k with (the Sherman–Morrison update of Z by Ys at port 1)
//
//	i_k = z_2k/Z21,  u_k = (z_2k·Z11 − Z21·z_1k)/Z21
//
// The correlations C_uu, C_ii, C_ui (in units of 4k_B·T0) give Rn = C_uu,
// Ycor = C_ui*/C_uu, Gu = C_ii − |C_ui|²/C_uu and then (Rothe and Dahlke,
// "Theory of noisy fourpoles", Proc. IRE 44, 1956, from memory)
//
//	Bopt = −Bcor,  Gopt = √(Gu/Rn + Gcor²),  Fmin = 1 + 2·Rn·(Gcor + Gopt)
func (c circuit) twoPort(fHz, z0Ohm float64) ([4]complex128, touchstone.NoisePoint, bool) {
	zm, ok := c.impedance()
	if !ok {
		return [4]complex128{}, touchstone.NoisePoint{}, false
	}
	n := c.nodes
	zAt := func(port, node int) complex128 {
		if node == 0 {
			return 0
		}
		return zm[(port-1)*n+node-1]
	}
	z := [4]complex128{zAt(1, 1), zAt(1, 2), zAt(2, 1), zAt(2, 2)}
	s, err := rfmath.ZToS(nil, z[:], 2, []float64{z0Ohm, z0Ohm})
	if err != nil {
		return [4]complex128{}, touchstone.NoisePoint{}, false
	}
	var cuu, cii float64
	var cui complex128
	for _, b := range c.branches {
		if b.tempK == 0 || real(b.y) == 0 {
			continue
		}
		sk := b.tempK / t0K * real(b.y)
		z1 := zAt(1, b.a) - zAt(1, b.b)
		z2 := zAt(2, b.a) - zAt(2, b.b)
		ik := z2 / z[2]
		uk := (z2*z[0] - z[2]*z1) / z[2]
		cuu += sk * (real(uk)*real(uk) + imag(uk)*imag(uk))
		cii += sk * (real(ik)*real(ik) + imag(ik)*imag(ik))
		cui += complex(sk, 0) * uk * cmplx.Conj(ik)
	}
	rn := cuu
	ycor := cmplx.Conj(cui) / complex(cuu, 0)
	gu := cii - (real(cui)*real(cui)+imag(cui)*imag(cui))/cuu
	gopt := math.Sqrt(gu/rn + real(ycor)*real(ycor))
	yopt := complex(gopt, -imag(ycor))
	fmin := 1 + 2*rn*(real(ycor)+gopt)
	y0 := complex(1/z0Ohm, 0)
	gOpt := (y0 - yopt) / (y0 + yopt)
	return [4]complex128{s[0], s[1], s[2], s[3]}, touchstone.NoisePoint{
		FreqHz:      fHz,
		NFminDB:     10 * math.Log10(fmin),
		GammaOptMag: cmplx.Abs(gOpt),
		GammaOptDeg: rfmath.AngleDeg(gOpt),
		RnOhm:       rn,
	}, true
}

// LNABand is the band of Wristtag's low-noise stage (the 2.4 GHz ISM band;
// the 10 dB input return loss is the demo's choice).
var LNABand = Band{"2.4 GHz ISM", 2400e6, 2483.5e6, 10}

// Device is a generated 2-port device file with its noise parameters.
type Device struct {
	File
	Noise []touchstone.NoisePoint
}

// Devices returns the demo's device files, in a fixed order: the Wristtag
// LNA transistor.
func Devices() []Device {
	lna, noise := lnaTransistor(5)
	return []Device{{
		File: File{
			Name: "wristtag-lna-transistor.s2p",
			Note: []string{
				"Invented demo data from matchbench's model (internal/demo); nothing here was measured.",
				"Wristtag LNA transistor: an invented packaged low-noise pHEMT, common source, 50 ohm.",
				"S-parameters 0.5-6 GHz with seeded noise; noise parameters 1-6 GHz (Rn normalised to 50 ohm).",
			},
			Sweep: lna,
		},
		Noise: noise,
	}}
}

// lnaTransistor returns the demo transistor's file: S-parameters from
// 0.5 to 6 GHz in 50 MHz steps with the demo's seeded measurement noise
// (σ = 0.0005 on each parameter, a quieter setting than the antennas'
// because S12 is small), and noise parameters from 1 to 6 GHz in 0.5 GHz
// steps as the model gives them (a noise measurement does not reach below
// 1 GHz here, so 0.5–1 GHz has no noise data: matchbench does not
// extrapolate).
func lnaTransistor(seed uint64) (*rfmath.Sweep, []touchstone.NoisePoint) {
	freq := grid(0.5e9, 6e9, 111)
	sw := rfmath.NewSweep(len(freq), 2, 50)
	copy(sw.FreqHz, freq)
	rnd := rand.New(rand.NewPCG(seed, 1))
	for k, f := range freq {
		s, _, ok := lnaFET.circuit(f).twoPort(f, 50)
		if !ok {
			panic("demo: the transistor model is singular")
		}
		m := sw.Matrix(k)
		for i := range m {
			m[i] = s[i] + complex(0.0005*rnd.NormFloat64(), 0.0005*rnd.NormFloat64())
		}
	}
	noise := make([]touchstone.NoisePoint, 11)
	for k := range noise {
		f := 1e9 + 0.5e9*float64(k)
		_, noise[k], _ = lnaFET.circuit(f).twoPort(f, 50)
	}
	return sw, noise
}
