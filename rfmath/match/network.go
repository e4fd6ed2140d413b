package match

import (
	"fmt"
	"math"
	"sort"
	"strings"

	"matchbench/rfmath"
	"matchbench/rfmath/parts"
	"matchbench/rfmath/units"
)

// Kind is the kind and place of a lumped part in a ladder.
type Kind string

// Kinds of part. The strings are part of the command line's JSON.
const (
	SeriesL Kind = "series_L"
	SeriesC Kind = "series_C"
	ShuntL  Kind = "shunt_L"
	ShuntC  Kind = "shunt_C"
)

// Shunt reports whether the part is connected to ground (across the line)
// rather than in series.
func (k Kind) Shunt() bool { return k == ShuntL || k == ShuntC }

// Part returns the part's kind without its place: parts.KindL or
// parts.KindC. An unknown kind panics.
func (k Kind) Part() parts.Kind {
	switch k {
	case SeriesL, ShuntL:
		return parts.KindL
	case SeriesC, ShuntC:
		return parts.KindC
	}
	panic(badKind)
}

// Unit returns "H" or "F".
func (k Kind) Unit() string {
	if k.Part() == parts.KindL {
		return "H"
	}
	return "F"
}

// Part is one lumped part of a [Network].
type Part struct {
	Kind   Kind
	Value  float64 // henries or farads
	Series string  // the E-series the value was taken from; "" if computed
}

// String returns e.g. "shunt_C 1 pF (E12)".
func (p Part) String() string {
	s := string(p.Kind) + " " + units.Format(p.Value, p.Kind.Unit(), 4)
	if p.Series != "" {
		s += " (" + p.Series + ")"
	}
	return s
}

// Network is a ladder of lumped parts listed from the LOAD toward the
// SOURCE: Network[0] is connected to the load. The empty network is a
// through connection.
type Network []Part

// String lists the parts from the load, separated by ", ".
func (n Network) String() string {
	s := make([]string, len(n))
	for i, p := range n {
		s[i] = p.String()
	}
	return strings.Join(s, ", ")
}

// Ladder returns the network as an rfmath ladder of parts made by the model
// m (nil means ideal parts), in the same order.
func (n Network) Ladder(m parts.Model) rfmath.Ladder {
	c := n.Circuit(m)
	l := make(rfmath.Ladder, len(n))
	for i, e := range c.els {
		if e.shunt {
			l[i] = rfmath.Shunt{Part: e.part}
		} else {
			l[i] = rfmath.Series{Part: e.part}
		}
	}
	return l
}

// Load is a one-port load as measured: its reflection coefficient Gamma[k]
// against the real reference Z0Ohm at FreqHz[k], frequencies increasing.
type Load struct {
	FreqHz []float64
	Gamma  []complex128
	Z0Ohm  float64
}

// LoadFromSweep returns port (from zero) of the sweep s as a load, with
// reflection S(port, port) against the port's reference resistance.
func LoadFromSweep(s *rfmath.Sweep, port int) (Load, error) {
	if err := s.Validate(); err != nil {
		return Load{}, err
	}
	if port < 0 || port >= s.Ports {
		return Load{}, fmt.Errorf("%w: no port %d in a %d-port sweep", ErrNoLoad, port+1, s.Ports)
	}
	return Load{
		FreqHz: append([]float64(nil), s.FreqHz...),
		Gamma:  s.Param(nil, port, port),
		Z0Ohm:  s.Z0[port],
	}, nil
}

func (l Load) validate() error {
	if len(l.FreqHz) == 0 || len(l.FreqHz) != len(l.Gamma) {
		return fmt.Errorf("%w: %d frequencies, %d reflection coefficients", ErrNoLoad, len(l.FreqHz), len(l.Gamma))
	}
	if !(l.Z0Ohm > 0) || math.IsInf(l.Z0Ohm, 0) {
		return fmt.Errorf("%w: reference %g Ω", ErrNoLoad, l.Z0Ohm)
	}
	for k := 1; k < len(l.FreqHz); k++ {
		if !(l.FreqHz[k] > l.FreqHz[k-1]) {
			return fmt.Errorf("%w: frequency does not increase at point %d", ErrNoLoad, k+1)
		}
	}
	return nil
}

// GammaAt returns Γ at fHz, interpolated linearly in the complex plane
// between measured points as [rfmath.Sweep.InterpAt] does, and whether fHz
// lies within the sweep.
func (l Load) GammaAt(fHz float64) (complex128, bool) {
	n := len(l.FreqHz)
	if n == 0 || !(fHz >= l.FreqHz[0] && fHz <= l.FreqHz[n-1]) {
		return 0, false
	}
	k := sort.SearchFloat64s(l.FreqHz, fHz)
	if l.FreqHz[k] == fHz {
		return l.Gamma[k], true
	}
	t := (fHz - l.FreqHz[k-1]) / (l.FreqHz[k] - l.FreqHz[k-1])
	return l.Gamma[k-1] + complex(t, 0)*(l.Gamma[k]-l.Gamma[k-1]), true
}

// ZAt returns the load impedance in ohms at fHz, interpolated as GammaAt.
func (l Load) ZAt(fHz float64) (complex128, bool) {
	g, ok := l.GammaAt(fHz)
	return rfmath.ZFromGamma(g, complex(l.Z0Ohm, 0)), ok
}

// Band is a frequency band that a match must cover, with its requirement.
type Band struct {
	LoHz, HiHz      float64
	MinReturnLossDB float64 // required return loss, positive dB; 0 for none
}

// String returns e.g. "2.4–2.4835 GHz ≥ 10 dB".
func (b Band) String() string {
	return fmt.Sprintf("%s–%s ≥ %g dB", units.FormatFrequency(b.LoHz, 6), units.FormatFrequency(b.HiHz, 6), b.MinReturnLossDB)
}

// BandResult is how a design does in one band.
type BandResult struct {
	Band
	WorstRLdB float64 // lowest return loss over the band's points
	MeanRLdB  float64 // mean of the return loss in dB over the band's points
	Points    int     // number of points judged
}

// Metrics is how a design does across all bands.
type Metrics struct {
	WorstRLdB float64 // lowest return loss over all band points
	// MarginDB is the least, over the band points, of the return loss less
	// the band's requirement: negative when a requirement is missed.
	MarginDB float64
	Bands    []BandResult
}

// Meets reports whether every band's requirement is met.
func (m Metrics) Meets() bool { return m.MarginDB >= 0 }

// points is the set of frequencies at which bands are judged, with the
// load's Γ there and, per point, the band it is judged in (the most
// demanding if bands overlap).
type points struct {
	freqHz []float64
	gamma  []complex128
	band   []int // index into the bands
}

// bandPoints returns the points at which bands are judged: the load's
// measured frequencies within each band and each band's two edges (Γ
// interpolated as [Load.GammaAt]), sorted, each once.
func bandPoints(l Load, bands []Band) (points, error) {
	if err := l.validate(); err != nil {
		return points{}, err
	}
	if len(bands) == 0 {
		return points{}, fmt.Errorf("%w: no band given", ErrBand)
	}
	type pt struct {
		f    float64
		band int
	}
	var ps []pt
	for b, bd := range bands {
		if !(bd.LoHz > 0 && bd.HiHz >= bd.LoHz) || math.IsInf(bd.HiHz, 0) || math.IsNaN(bd.MinReturnLossDB) || math.IsInf(bd.MinReturnLossDB, 0) {
			return points{}, fmt.Errorf("%w: %g–%g Hz, %g dB", ErrBand, bd.LoHz, bd.HiHz, bd.MinReturnLossDB)
		}
		if bd.LoHz < l.FreqHz[0] || bd.HiHz > l.FreqHz[len(l.FreqHz)-1] {
			return points{}, fmt.Errorf("%w: %s lies outside the sweep (%s–%s)", ErrBand, bd,
				units.FormatFrequency(l.FreqHz[0], 6), units.FormatFrequency(l.FreqHz[len(l.FreqHz)-1], 6))
		}
		ps = append(ps, pt{bd.LoHz, b}, pt{bd.HiHz, b})
		for _, f := range l.FreqHz {
			if f > bd.LoHz && f < bd.HiHz {
				ps = append(ps, pt{f, b})
			}
		}
	}
	sort.Slice(ps, func(i, j int) bool { return ps[i].f < ps[j].f })
	var p points
	for _, q := range ps {
		n := len(p.freqHz)
		if n > 0 && p.freqHz[n-1] == q.f {
			if bands[q.band].MinReturnLossDB > bands[p.band[n-1]].MinReturnLossDB {
				p.band[n-1] = q.band
			}
			continue
		}
		g, _ := l.GammaAt(q.f)
		p.freqHz = append(p.freqHz, q.f)
		p.gamma = append(p.gamma, g)
		p.band = append(p.band, q.band)
	}
	return p, nil
}

// Evaluate returns how the network n, made of parts by the model m (nil
// means ideal), does on the load across the bands. Each band is judged at
// the load's measured frequencies inside it and at its two edges, where Γ
// of the load is interpolated linearly.
//
// Evaluate is the reference the search is checked against: it computes Γ
// with [rfmath.Ladder], independently of the search's own arithmetic.
func Evaluate(l Load, bands []Band, n Network, m parts.Model) (Metrics, error) {
	p, err := bandPoints(l, bands)
	if err != nil {
		return Metrics{}, err
	}
	g := n.Ladder(m).InputGammaTo(nil, p.freqHz, p.gamma, l.Z0Ohm)
	return metricsOf(p, bands, g), nil
}

// metricsOf returns the metrics of the reflection g at the points p.
func metricsOf(p points, bands []Band, g []complex128) Metrics {
	m := Metrics{WorstRLdB: math.Inf(1), MarginDB: math.Inf(1), Bands: make([]BandResult, len(bands))}
	for b := range bands {
		m.Bands[b] = BandResult{Band: bands[b], WorstRLdB: math.Inf(1)}
	}
	for k, f := range p.freqHz {
		rl := rfmath.ReturnLossDB(math.Hypot(real(g[k]), imag(g[k])))
		m.WorstRLdB = math.Min(m.WorstRLdB, rl)
		// A point on an overlap counts in every band that holds it.
		for b := range bands {
			if f < bands[b].LoHz || f > bands[b].HiHz {
				continue
			}
			r := &m.Bands[b]
			r.WorstRLdB = math.Min(r.WorstRLdB, rl)
			r.MeanRLdB += rl
			r.Points++
			m.MarginDB = math.Min(m.MarginDB, rl-bands[b].MinReturnLossDB)
		}
	}
	for b := range m.Bands {
		m.Bands[b].MeanRLdB /= float64(m.Bands[b].Points)
	}
	return m
}
