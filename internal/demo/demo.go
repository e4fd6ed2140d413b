// Package demo generates the invented sweeps of matchbench's demo scenario.
// Nothing here was measured: every number comes from the physical model
// written below, with measurement noise from a fixed seed, so the files in
// testdata/demo can be remade exactly (`matchbench demo testdata/demo`).
//
// # The scenario (invented for the demo)
//
// A small team is bringing up two products on one bench:
//
//   - "Fieldnode": a battery soil-moisture logger sold in Europe and North
//     America. Its radio uses a meandered PCB trace antenna and must work in
//     the 863–870 MHz and 902–928 MHz bands. The first prototype board is
//     measured at the antenna's feed pad through a short pigtail.
//   - "Wristtag": a wrist-worn asset tag with a ceramic chip antenna for the
//     2400–2483.5 MHz band, measured on the bare board.
//
// Wristtag's receiver also gets a discrete low-noise amplifier, and the
// transistor for it is characterised as a 2-port with noise parameters
// (see [LNABand] and the model in transistor.go).
//
// Also measured: the Fieldnode antenna through 250 mm of thin PE-dielectric
// coax (as it is first seen before the reference plane is moved), the same
// cable with its far end left open (for fitting a port extension), and the
// cable alone as a 2-port (a fixture to remove), and the first prototype
// board with its matching network fitted (see firstbuild.go), for a round
// of bench tuning.
//
// # The models
//
// A small antenna near its first resonance is a series R–L–C whose
// radiation resistance grows as f² (an electrically short radiator), plus a
// loss resistance, seen through the parasitic capacitance of its feed pad
// and a short microstrip feed:
//
//	Zant(f) = Rloss + Rrad·(f/f0)² + j(2πf·L − 1/(2πf·C))
//	Zpad    = Zant ∥ 1/(j2πf·Cpad)
//	Zfeed   = the input impedance of the feed line terminated in Zpad
//
// The cable is a lossy TEM line (loss ∝ √f) with a small shunt capacitance
// at its connector. Noise is complex Gaussian on Γ with σ = 0.002 (a clean
// analyser at moderate IF bandwidth, from memory), seeded with a fixed
// PCG seed per file.
//
// The LNA transistor is a small-signal FET equivalent circuit with package
// parasitics and Pospieszalski's two-temperature noise model, solved by
// nodal analysis (transistor.go). Its S-parameters carry σ = 0.0005 of
// seeded noise; its noise parameters are the model's own.
package demo

import (
	"math"
	"math/rand/v2"

	"matchbench/rfmath"
)

// File is one generated sweep with its file name and a note for the
// Touchstone header.
type File struct {
	Name  string
	Note  []string
	Sweep *rfmath.Sweep
}

// Band is a frequency band the demo products must cover.
type Band struct {
	Name            string
	LoHz, HiHz      float64
	MinReturnLossDB float64
}

// Bands of the two demo products (the regional allocations are the usual
// SRD/ISM bands, common practice; the 10 dB requirement is the demo's
// choice).
var (
	FieldnodeBands = []Band{
		{"EU SRD 863–870 MHz", 863e6, 870e6, 10},
		{"US ISM 902–928 MHz", 902e6, 928e6, 10},
	}
	WristtagBands = []Band{
		{"2.4 GHz ISM", 2400e6, 2483.5e6, 10},
	}
)

// antenna is the model of a small antenna at its feed.
type antenna struct {
	rLossOhm, rRadOhm, f0Hz float64 // radiation resistance is rRadOhm at f0Hz
	lH, cF                  float64 // series resonator
	cPadF                   float64
	feed                    rfmath.Line
}

func (a antenna) z(fHz float64) complex128 {
	w := 2 * math.Pi * fHz
	r := a.rLossOhm + a.rRadOhm*(fHz/a.f0Hz)*(fHz/a.f0Hz)
	z := complex(r, w*a.lH-1/(w*a.cF))
	if a.cPadF > 0 {
		z = 1 / (1/z + complex(0, w*a.cPadF))
	}
	if a.feed.LengthM > 0 {
		z = a.feed.InputImpedance(z, fHz)
	}
	return z
}

// seriesC returns the capacitance that resonates with lH at fHz.
func seriesC(lH, fHz float64) float64 {
	w := 2 * math.Pi * fHz
	return 1 / (w * w * lH)
}

var (
	// Fieldnode's meandered trace antenna: first resonance near 947 MHz,
	// above both bands (the enclosure is not fitted yet), Q about 14.
	fieldnode = antenna{
		rLossOhm: 2.5, rRadOhm: 11, f0Hz: 947e6,
		lH: 34e-9, cF: seriesC(34e-9, 947e6),
		cPadF: 0.45e-12,
		feed:  rfmath.Line{Z0Ohm: 50, LengthM: 0.009, VelocityFactor: 0.54, LossDBPerM: 2.5, LossRefHz: 1e9},
	}
	// Wristtag's chip antenna: resonance near 2.53 GHz, low Q.
	wristtag = antenna{
		rLossOhm: 6, rRadOhm: 17, f0Hz: 2.53e9,
		lH: 6.2e-9, cF: seriesC(6.2e-9, 2.53e9),
		cPadF: 0.3e-12,
		feed:  rfmath.Line{Z0Ohm: 50, LengthM: 0.004, VelocityFactor: 0.55, LossDBPerM: 4, LossRefHz: 1e9},
	}
	// The 250 mm test cable: solid PE dielectric (VF 0.66, common practice
	// for PE), 0.9 dB/m at 1 GHz, with 0.12 pF at its connector.
	cable          = rfmath.Line{Z0Ohm: 50, LengthM: 0.25, VelocityFactor: 0.66, LossDBPerM: 0.9, LossRefHz: 1e9}
	connectorCF    = 0.12e-12
	openFringingCF = 0.02e-12 // of the cable's open end
)

// cableABCD returns the connector plus cable as seen from the analyser.
func cableABCD(fHz float64) rfmath.ABCD {
	w := 2 * math.Pi * fHz
	return rfmath.ShuntY(complex(0, w*connectorCF)).Mul(cable.ABCD(fHz))
}

func grid(loHz, hiHz float64, n int) []float64 {
	f := make([]float64, n)
	for k := range f {
		f[k] = loHz + (hiHz-loHz)*float64(k)/float64(n-1)
	}
	return f
}

// onePort fills a 1-port sweep from an impedance function and adds noise.
func onePort(freq []float64, z func(float64) complex128, seed uint64) *rfmath.Sweep {
	s := rfmath.NewSweep(len(freq), 1, 50)
	copy(s.FreqHz, freq)
	rnd := rand.New(rand.NewPCG(seed, 1))
	for k, f := range freq {
		g := rfmath.GammaFromZ(z(f), 50)
		s.Data[k] = g + noise(rnd)
	}
	return s
}

func noise(rnd *rand.Rand) complex128 {
	const sigma = 0.002
	return complex(sigma*rnd.NormFloat64(), sigma*rnd.NormFloat64())
}

// Generate returns every demo sweep, in a fixed order.
func Generate() []File {
	invented := "Invented demo data from matchbench's model (internal/demo); nothing here was measured."
	// A harmonic grid (f_k = k·3 MHz) so the cable sweeps suit a low-pass
	// time-domain transform.
	harmonic := grid(3e6, 1500e6, 500)

	fn := onePort(AntennaGrid(), fieldnode.z, 1)
	wt := onePort(grid(2.0e9, 3.0e9, 401), wristtag.z, 2)
	viaCable := onePort(harmonic, func(f float64) complex128 {
		return cableABCD(f).InputImpedance(fieldnode.z(f))
	}, 3)
	open := onePort(harmonic, func(f float64) complex128 {
		zOpen := 1 / complex(0, 2*math.Pi*f*openFringingCF)
		return cableABCD(f).InputImpedance(zOpen)
	}, 4)

	fixture := rfmath.NewSweep(len(harmonic), 2, 50)
	copy(fixture.FreqHz, harmonic)
	for k, f := range harmonic {
		s := rfmath.ABCDToS(cableABCD(f), 50, 50)
		copy(fixture.Matrix(k), s[:])
	}

	return append([]File{
		{"fieldnode-antenna.s1p", []string{invented, "Fieldnode trace antenna at its feed pad; bands 863-870 and 902-928 MHz."}, fn},
		{"wristtag-antenna.s1p", []string{invented, "Wristtag chip antenna on the bare board; band 2400-2483.5 MHz."}, wt},
		{"fieldnode-via-cable.s1p", []string{invented, "Fieldnode antenna seen through 250 mm of PE coax and its connector."}, viaCable},
		{"cable-open-end.s1p", []string{invented, "The same 250 mm cable with its far end open, for fitting a port extension."}, open},
		{"cable-fixture.s2p", []string{invented, "The 250 mm cable and connector as a 2-port (port 1 at the analyser), noise-free."}, fixture},
		{"fieldnode-first-build.s1p", []string{invented, "Fieldnode first prototype board with its matching network fitted, measured at the radio's end of the network (network in fieldnode-network.json)."}, firstBuild()},
	}, append(conditions(invented), ProductionLot()...)...)
}
