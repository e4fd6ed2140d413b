package demo

import (
	"fmt"
	"math/rand/v2"
	"strings"
)

// The conditions and the antenna lot (invented for the demo).
//
// A small antenna is never measured once. The wrist tag's chip antenna is
// measured on its bare board in free space (wristtag-antenna.s1p), on a
// wrist, and in its closed plastic enclosure:
//
//   - On a wrist the tissue loads the antenna: its resonance falls by about
//     7 % (the model's L rises 15 %), its loss resistance rises from 6 to
//     9 Ω (absorption in the body) and the feed pad sees 0.15 pF more. The
//     amounts are the demo's choice, of the order reported for body-worn
//     small antennas (from memory), not a measurement. The network that is
//     best in free space misses 10 dB here.
//   - In the closed enclosure the plastic lowers the resonance by about 2 %
//     (L up 4 %) and adds a little loss (0.8 Ω) and pad capacitance
//     (0.05 pF).
//
// The Fieldnode's unmatched antennas are measured on five boards of a lot:
// the antenna of each board drawn with the spread of the production lot
// (lot.go), without the matching parts, on the same grid as the first
// prototype's sweep (700–1100 MHz, 401 points).

// wristtagOn returns the wrist tag's antenna in a condition.
func wristtagOn(lScale, dRLoss, dPadF float64) antenna {
	a := wristtag
	a.lH *= lScale
	a.rLossOhm += dRLoss
	a.cPadF += dPadF
	return a
}

var (
	wristtagWrist     = wristtagOn(1.15, 3, 0.15e-12)
	wristtagEnclosure = wristtagOn(1.04, 0.8, 0.05e-12)
)

// antennaBoard returns a Fieldnode antenna drawn from the lot's spread.
func antennaBoard(rnd *rand.Rand) antenna {
	spread := func(v, rel float64) float64 { return v * (1 + rel*rnd.NormFloat64()) }
	a := fieldnode
	a.lH = spread(a.lH, 0.005)
	a.cF = spread(a.cF, 0.005)
	a.cPadF = spread(a.cPadF, 0.05)
	a.rLossOhm = spread(a.rLossOhm, 0.10)
	return a
}

// conditions returns the wrist tag's other conditions and the Fieldnode
// antenna lot.
func conditions(invented string) []File {
	files := []File{
		{"wristtag-wrist.s1p", []string{invented, "Wristtag chip antenna on a wrist: resonance lower, loss higher; band 2400-2483.5 MHz."},
			onePort(grid(2.0e9, 3.0e9, 401), wristtagWrist.z, 11)},
		{"wristtag-enclosure.s1p", []string{invented, "Wristtag chip antenna in its closed enclosure; band 2400-2483.5 MHz."},
			onePort(grid(2.0e9, 3.0e9, 301), wristtagEnclosure.z, 12)},
	}
	rnd := rand.New(rand.NewPCG(16, 0xa17))
	for i := range 5 {
		a := antennaBoard(rnd)
		files = append(files, File{fmt.Sprintf("fieldnode-lot/antenna-%02d.s1p", i+1),
			[]string{invented, fmt.Sprintf("Fieldnode antenna of board %d of a lot, unmatched, at its feed pad; bands 863-870 and 902-928 MHz.", i+1)},
			onePort(grid(700e6, 1100e6, 401), a.z, 20+uint64(i))})
	}
	return files
}

// ProductionLot is the lot of matched Fieldnode US boards shipped with the
// demo for `matchbench check` (lot.go): eight boards, seed 1.
func ProductionLot() []File {
	files := Lot(8, 1)
	for i := range files {
		files[i].Name = "lot/" + files[i].Name
	}
	return files
}

// LimitFile is the production limit file of the Fieldnode US boards, in
// the format of rfmath/limits, with the name it is shipped under.
func LimitFile() (name, text string) {
	var b strings.Builder
	b.WriteString("# Fieldnode US, production limits (invented for the matchbench demo)\n")
	for _, l := range LotBands {
		fmt.Fprintf(&b, "band %gM %gM rl %g      %s\n", l.LoHz/1e6, l.HiHz/1e6, l.MinReturnLossDB, l.Name)
	}
	b.WriteString("band 902M 928M power 85%   US ISM, power to the antenna\n")
	return "fieldnode-us.lim", b.String()
}
