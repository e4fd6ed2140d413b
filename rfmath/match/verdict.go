package match

import (
	"fmt"
	"math"

	"matchbench/rfmath/units"
)

// OverDissipationDB is the network loss above which a band is flagged: at
// 3.01 dB (10·log10 2) the parts turn half of the power the network
// accepts into heat, so above it most of that power never reaches the
// load.
var OverDissipationDB = 10 * math.Log10(2)

// OverDissipating reports whether the network turns most of the power it
// accepts into heat at some point of the band.
func (r BandResult) OverDissipating() bool { return r.WorstNetworkLossDB > OverDissipationDB }

// WorseThanNone reports whether the network delivers less power to the
// load at the band's worst point than the load takes with no network.
func (r BandResult) WorseThanNone() bool { return r.WorstPowerToLoad < r.Unmatched.WorstPowerToLoad }

// LossNotes says in words what an engineer must know about the band's
// losses: that the parts burn most of the power the network accepts, and
// that the network delivers less power to the load than no network does.
// It is empty for a band where neither holds. The panel, the report and the
// command line print these same sentences.
func (r BandResult) LossNotes() []string {
	var out []string
	if r.OverDissipating() {
		out = append(out, fmt.Sprintf("the parts turn most of the power the network accepts into heat (up to %s of loss in the network): the return loss looks better than the match is",
			units.FormatDB(r.WorstNetworkLossDB)))
	}
	if r.WorseThanNone() {
		out = append(out, fmt.Sprintf("at worst %s of the available power reaches the load, less than the %s it takes with no network",
			units.FormatPercent(r.WorstPowerToLoad, 1), units.FormatPercent(r.Unmatched.WorstPowerToLoad, 1)))
	}
	return out
}

// OverDissipating reports whether the design turns most of the accepted
// power into heat in some band.
func (m Metrics) OverDissipating() bool {
	for _, b := range m.Bands {
		if b.OverDissipating() {
			return true
		}
	}
	return false
}

// WorseThanNone reports whether the design delivers less power than no
// network at the worst point of some band.
func (m Metrics) WorseThanNone() bool {
	for _, b := range m.Bands {
		if b.WorseThanNone() {
			return true
		}
	}
	return false
}
