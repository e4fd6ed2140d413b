package match

import (
	"fmt"
	"math"

	"matchbench/rfmath"
)

// # Load sets
//
// A small antenna is measured in several conditions (free space, on a
// wrist, in its enclosure) and from board to board across a lot. A set of
// loads is judged as one: a design must hold every band on every binding
// member, and its figures are the worst over them. Each member is judged
// on its own measured points ([rfmath.BandFreqs] on its own grid: members
// need not share frequencies), interpolated only inside its sweep; a member
// that does not cover a band is an error that names it.

// Member is one load of a set.
type Member struct {
	// Name names the member in results and errors (a file or sweep name).
	Name string
	Load Load
	// Weight is the member's share in a lot's draws and in the weighted
	// mean figures; zero means 1. It does not enter the worst case.
	Weight float64
	// Advisory members are judged and shown but their requirements do not
	// bind a design: the search and the yield leave them out. By default a
	// member must pass.
	Advisory bool
}

// SetKind says how a set's members stand for the product.
type SetKind int

const (
	// Conditions: the same device in several conditions; a build must meet
	// the requirements in every binding condition. The zero value.
	Conditions SetKind = iota
	// Lot: several boards of a production lot; a build is judged against
	// one member drawn at random (by weight), so the yield counts the
	// lot's spread.
	Lot
)

// SetMetrics is how a design does across a set of loads.
type SetMetrics struct {
	// Metrics is the worst case over the binding members: the least
	// return loss, the least power to the load and the least margin, and
	// per band the band result of the binding member of least margin
	// there.
	Metrics
	// Members holds each member's own metrics, in the set's order.
	Members []Metrics
	// WorstMember and WorstBand are where the least margin falls (indices
	// into the members and the bands), −1 when no member binds.
	WorstMember, WorstBand int
	// MeanPowerToLoad is the weighted mean over the binding members of each
	// member's mean power to the load over the bands' points.
	MeanPowerToLoad float64
}

// validateSet checks the members and renormalises their reflection to the
// first member's reference, so that one search can judge them together.
func validateSet(members []Member) ([]Member, error) {
	if len(members) == 0 {
		return nil, fmt.Errorf("%w: an empty set", ErrNoLoad)
	}
	out := make([]Member, len(members))
	z0 := members[0].Load.Z0Ohm
	binding := 0
	for i, m := range members {
		if err := m.Load.validate(); err != nil {
			return nil, fmt.Errorf("member %s: %w", m.name(i), err)
		}
		if !(m.Weight >= 0) || math.IsInf(m.Weight, 0) {
			return nil, fmt.Errorf("%w: member %s has weight %g", ErrNoLoad, m.name(i), m.Weight)
		}
		if m.Load.Z0Ohm != z0 {
			// Γ' = (Γ − ρ)/(1 − ρΓ), ρ = (z0 − Z0)/(z0 + Z0): the same
			// impedance against the set's reference (REFERENCE-CHECKS §11).
			rho := complex((z0-m.Load.Z0Ohm)/(z0+m.Load.Z0Ohm), 0)
			g := make([]complex128, len(m.Load.Gamma))
			for k, v := range m.Load.Gamma {
				g[k] = (v - rho) / (1 - rho*v)
			}
			m.Load = Load{FreqHz: m.Load.FreqHz, Gamma: g, Z0Ohm: z0}
		}
		if m.Weight == 0 {
			m.Weight = 1
		}
		if !m.Advisory {
			binding++
		}
		out[i] = m
	}
	if binding == 0 {
		return nil, fmt.Errorf("%w: every member of the set is advisory; mark at least one as must pass", ErrNoLoad)
	}
	return out, nil
}

func (m Member) name(i int) string {
	if m.Name != "" {
		return m.Name
	}
	return fmt.Sprintf("%d", i+1)
}

// setJudge judges networks across a set.
type setJudge struct {
	members []Member
	judges  []*judge
}

func newSetJudge(members []Member, bands []Band) (*setJudge, error) {
	ms, err := validateSet(members)
	if err != nil {
		return nil, err
	}
	sj := &setJudge{members: ms}
	for i, m := range ms {
		j, err := newJudge(m.Load, bands)
		if err != nil {
			return nil, fmt.Errorf("member %s: %w", m.name(i), err)
		}
		sj.judges = append(sj.judges, j)
	}
	return sj, nil
}

// metrics judges the compiled network c on every member.
func (sj *setJudge) metrics(c rfmath.Circuit) SetMetrics {
	s := SetMetrics{WorstMember: -1, WorstBand: -1}
	s.Members = make([]Metrics, len(sj.judges))
	for i, j := range sj.judges {
		s.Members[i] = j.metrics(c)
	}
	s.Metrics = combine(sj.members, s.Members, &s)
	return s
}

// combine returns the worst case over the binding members and sets the
// worst member and band and the weighted mean power in s.
func combine(members []Member, per []Metrics, s *SetMetrics) Metrics {
	m := Metrics{WorstRLdB: math.Inf(1), WorstPowerToLoad: math.Inf(1), MarginDB: math.Inf(1)}
	var wsum, psum float64
	for i, mm := range per {
		if members[i].Advisory {
			continue
		}
		m.WorstRLdB = math.Min(m.WorstRLdB, mm.WorstRLdB)
		m.WorstPowerToLoad = math.Min(m.WorstPowerToLoad, mm.WorstPowerToLoad)
		mean := 0.0
		for b, r := range mm.Bands {
			mean += r.MeanPowerToLoad / float64(len(mm.Bands))
			if m.Bands == nil {
				m.Bands = make([]BandResult, len(mm.Bands))
				for k := range m.Bands {
					m.Bands[k].MarginDB = math.Inf(1)
				}
			}
			if r.MarginDB < m.Bands[b].MarginDB || m.Bands[b].Points == 0 {
				m.Bands[b] = r
			}
			if r.MarginDB < m.MarginDB || s.WorstMember < 0 {
				m.MarginDB, s.WorstMember, s.WorstBand = math.Min(m.MarginDB, r.MarginDB), i, b
			}
		}
		w := members[i].Weight
		wsum += w
		psum += w * mean
	}
	s.MeanPowerToLoad = psum / wsum
	return m
}

// EvaluateSet returns how the network n does on every member of the set
// across the bands ([Evaluate] for each member) and the worst case over the
// binding members. With one member it equals Evaluate.
func EvaluateSet(members []Member, bands []Band, n Network) (SetMetrics, error) {
	sj, err := newSetJudge(members, bands)
	if err != nil {
		return SetMetrics{}, err
	}
	c, err := n.Circuit()
	if err != nil {
		return SetMetrics{}, err
	}
	return sj.metrics(c), nil
}

// BodeFanoOfSet returns the Bode–Fano limit ([BodeFanoOf]) of the binding
// member whose limit leaves the least margin, and its fit: no lossless
// network can hold the set better than that member alone. With one member
// it is BodeFanoOf.
func BodeFanoOfSet(members []Member, bands []Band) (Limit, Fit, error) {
	var lim Limit
	var fit Fit
	var err error = fmt.Errorf("%w: no member must pass", ErrNoLoad)
	found := false
	for _, m := range members {
		if m.Advisory {
			continue
		}
		l, f, e := BodeFanoOf(m.Load, bands)
		if e != nil {
			if !found {
				err = e
			}
			continue
		}
		if !found || l.MaxMarginDB < lim.MaxMarginDB {
			lim, fit, found, err = l, f, true, nil
		}
	}
	return lim, fit, err
}
