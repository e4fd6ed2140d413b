package demo

import (
	"fmt"
	"math/rand/v2"

	"matchbench/rfmath"
)

// The production lot (invented for the demo).
//
// Fieldnode's US variant has its antenna matched at 915 MHz by an L-network
// at the feed pad: a series 3.3 nH inductor next to the antenna and a shunt
// 6.8 pF capacitor towards the radio (both E12 values near the exact
// single-frequency design of 3.32 nH and 6.5 pF for Zant(915 MHz) =
// 11.1 + j1.7 Ω, Pozar, Microwave Engineering, §5.1, from memory for the
// section). The board must meet [LotBands]. Nominally its worst return loss
// there is 11.2 dB; the antenna's Q of about 14 leaves little room (the
// Bode–Fano limit), so the spread of parts and of the antenna decides the
// yield, about 70 % (75 %, 72 %, 73 % and 69 % for lots of 1,000 with seeds
// 1, 2, 3 and 7).
//
// Spread per board, Gaussian, relative standard deviations (the demo's
// choice, of the order of 2 % and 5 % parts and an antenna whose resonance
// moves with the PCB's permittivity; not from a datasheet):
//
//	matching L    1.0 %      matching C   1.5 %
//	antenna L     0.5 %      antenna C    0.5 %   (moves the resonance)
//	pad C         5 %        loss R       10 %
//
// Each board is swept 800–1000 MHz in 1 MHz steps (201 points) with the
// demo's noise of σ = 0.002 on Γ.

// LotBands are the production limits of the Fieldnode US boards.
var LotBands = []Band{{"US ISM 902–928 MHz", 902e6, 928e6, 10}}

// lotMatch is the nominal matching network: series L at the antenna, shunt
// C at the radio side.
const (
	lotSeriesLH = 3.3e-9
	lotShuntCF  = 6.8e-12
)

// board returns a matched Fieldnode board whose parts are drawn from rnd.
func board(rnd *rand.Rand) func(float64) complex128 {
	spread := func(v, rel float64) float64 { return v * (1 + rel*rnd.NormFloat64()) }
	a := antennaBoard(rnd)
	ls := spread(lotSeriesLH, 0.010)
	cs := spread(lotShuntCF, 0.015)
	return func(fHz float64) complex128 {
		z := a.z(fHz) + rfmath.ImpedanceOfL(ls, fHz)
		return 1 / (1/z + rfmath.AdmittanceOfC(cs, fHz))
	}
}

// Lot returns n invented production boards of the Fieldnode US variant,
// named board-001.s1p, board-002.s1p, …, drawn from the spread described
// above with the given seed; the same n and seed give the same files. Board
// 0 of any lot is drawn like the others; use [NominalBoard] for the design
// values.
func Lot(n int, seed uint64) []File {
	invented := "Invented demo data from matchbench's model (internal/demo); nothing here was measured."
	freq := grid(800e6, 1000e6, 201)
	rnd := rand.New(rand.NewPCG(seed, 0x10d))
	files := make([]File, n)
	for i := range files {
		z := board(rnd)
		files[i] = File{
			Name:  fmt.Sprintf("board-%03d.s1p", i+1),
			Note:  []string{invented, fmt.Sprintf("Fieldnode US board %d of a lot (seed %d): antenna matched at 915 MHz, parts within their spread.", i+1, seed)},
			Sweep: onePort(freq, z, seed*1_000_003+uint64(i)+1),
		}
	}
	return files
}

// NominalBoard returns the Fieldnode US board with every part at its design
// value, noise-free, on the lot's grid.
func NominalBoard() File {
	freq := grid(800e6, 1000e6, 201)
	s := rfmath.NewSweep(len(freq), 1, 50)
	copy(s.FreqHz, freq)
	a := fieldnode
	for k, f := range freq {
		z := a.z(f) + rfmath.ImpedanceOfL(lotSeriesLH, f)
		z = 1 / (1/z + rfmath.AdmittanceOfC(lotShuntCF, f))
		s.Data[k] = rfmath.GammaFromZ(z, 50)
	}
	return File{
		Name:  "board-nominal.s1p",
		Note:  []string{"Invented demo data from matchbench's model (internal/demo); nothing here was measured.", "Fieldnode US board with every part at its design value, noise-free."},
		Sweep: s,
	}
}
