package match

import (
	"fmt"
	"math"

	"matchbench/rfmath"
	"matchbench/rfmath/parts"
	"matchbench/rfmath/units"
)

// Rater gives the rating of a part of a kind and value; [parts.Family]
// is one.
type Rater interface {
	Rating(k parts.Kind, v float64) parts.Rating
}

// StressSettings tune [Stress].
type StressSettings struct {
	// PowerW is the power the source offers: the power it would deliver
	// into a matched load (its available power), in watts.
	PowerW float64
}

// PartStress is what one part carries at one frequency, as peak and RMS
// values of the sinusoid.
type PartStress struct {
	FreqHz       float64
	VPeak, VRMS  float64 // across the part
	IPeak, IRMS  float64 // through the part
	DissipationW float64 // the power turned to heat in the part ([rfmath.Circuit.BalanceTo])
}

// PartReport is the stress on one part over the band points.
type PartReport struct {
	Part   Part
	Rating parts.Rating
	// PerFreq is the stress at each band point, in frequency order.
	PerFreq []PartStress
	// WorstV, WorstI and WorstP are the points of highest voltage, highest
	// current and most dissipation.
	WorstV, WorstI, WorstP PartStress
	// Warnings say where a rating is exceeded.
	Warnings []string
}

// Stress returns, for an input power, the voltage across, the current
// through and the power dissipated in each part of the network n at each
// band point, the worst case of each, and a warning wherever a part's
// rating ([Part.Rating]) is exceeded (peak voltage against the voltage
// rating, RMS current against the current rating, dissipation against the
// power rating; no derating is applied).
//
// The source is a generator of the load's reference impedance Z0 with
// available power P; the voltages and currents are those of
// [rfmath.Ladder.StressTo], which walks the source's voltage and current
// through the ladder toward the load, and the dissipation that of
// [rfmath.Circuit.BalanceTo].
//
// CAUTION: high RF power can burn and can shock. These are estimates from
// ideal circuit theory and typical ratings, not a rated design review.
func Stress(l Load, bands []Band, n Network, s StressSettings) ([]PartReport, error) {
	if !(s.PowerW >= 0) || math.IsInf(s.PowerW, 0) {
		return nil, fmt.Errorf("match: power %g W", s.PowerW)
	}
	pts, err := bandPoints(l, bands)
	if err != nil {
		return nil, err
	}
	lad, err := n.Ladder()
	if err != nil {
		return nil, err
	}
	circ := lad.Circuit()
	rep := make([]PartReport, len(n))
	for j, p := range n {
		rep[j].Part = p
		rep[j].Rating = p.Rating(p.Value)
	}
	z0 := complex(l.Z0Ohm, 0)
	st := make([]rfmath.Stress, len(n))
	heat := make([]float64, len(n))
	for k, f := range pts.freqHz {
		lad.StressTo(st, f, rfmath.ZFromGamma(pts.gamma[k], z0), l.Z0Ohm, s.PowerW)
		circ.BalanceTo(heat, f, pts.gamma[k], l.Z0Ohm, s.PowerW)
		for j := range n {
			vp, ip := st[j].VPeakV, st[j].IPeakA
			ps := PartStress{
				FreqHz: f,
				VPeak:  vp, VRMS: vp / math.Sqrt2,
				IPeak: ip, IRMS: ip / math.Sqrt2,
				DissipationW: math.Max(heat[j], 0),
			}
			r := &rep[j]
			r.PerFreq = append(r.PerFreq, ps)
			if ps.VPeak > r.WorstV.VPeak || len(r.PerFreq) == 1 {
				r.WorstV = ps
			}
			if ps.IRMS > r.WorstI.IRMS || len(r.PerFreq) == 1 {
				r.WorstI = ps
			}
			if ps.DissipationW > r.WorstP.DissipationW || len(r.PerFreq) == 1 {
				r.WorstP = ps
			}
		}
	}
	for j := range rep {
		r := &rep[j]
		name := fmt.Sprintf("part %d (%s)", j+1, r.Part)
		if m := r.Rating.MaxVoltageV; m > 0 && r.WorstV.VPeak > m {
			r.Warnings = append(r.Warnings, fmt.Sprintf("%s: %.3g V peak at %s exceeds its %.3g V rating",
				name, r.WorstV.VPeak, units.FormatFrequency(r.WorstV.FreqHz, 6), m))
		}
		if m := r.Rating.MaxCurrentA; m > 0 && r.WorstI.IRMS > m {
			r.Warnings = append(r.Warnings, fmt.Sprintf("%s: %.3g A RMS at %s exceeds its %.3g A rating",
				name, r.WorstI.IRMS, units.FormatFrequency(r.WorstI.FreqHz, 6), m))
		}
		if m := r.Rating.MaxPowerW; m > 0 {
			for _, st := range r.PerFreq {
				if st.DissipationW > m {
					r.Warnings = append(r.Warnings, fmt.Sprintf("%s: dissipates %.3g W at %s, above its %.3g W rating",
						name, st.DissipationW, units.FormatFrequency(st.FreqHz, 6), m))
					break
				}
			}
		}
	}
	return rep, nil
}
