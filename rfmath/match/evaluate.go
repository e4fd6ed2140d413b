package match

import (
	"fmt"
	"math"
	"sort"
	"strconv"

	"matchbench/rfmath"
	"matchbench/rfmath/units"
)

// Band is a frequency band that a match must cover, with its requirement:
// a least return loss, a least share of the available power at the load,
// both, or neither (zero asks nothing).
type Band struct {
	LoHz, HiHz      float64
	MinReturnLossDB float64 // required return loss, positive dB; 0 for none
	MinPowerToLoad  float64 // required share of the available power at the load, (0, 1]; 0 for none
}

// Requirement returns the band's requirement.
func (b Band) Requirement() rfmath.Requirement {
	return rfmath.Requirement{MinReturnLossDB: b.MinReturnLossDB, MinPowerToLoad: b.MinPowerToLoad}
}

// String returns e.g. "2.4–2.4835 GHz ≥ 10 dB" or
// "902–928 MHz ≥ 10 dB, ≥ 80 % to the load".
func (b Band) String() string {
	s := fmt.Sprintf("%s–%s", units.FormatFrequency(b.LoHz, 6), units.FormatFrequency(b.HiHz, 6))
	if b.MinReturnLossDB > 0 || b.MinPowerToLoad <= 0 {
		s += fmt.Sprintf(" ≥ %g dB", b.MinReturnLossDB)
	}
	if b.MinPowerToLoad > 0 {
		s += fmt.Sprintf(", ≥ %s to the load", strconv.FormatFloat(100*b.MinPowerToLoad, 'g', 4, 64)+" %")
	}
	return s
}

func (b Band) validate() error {
	if !(b.LoHz > 0 && b.HiHz >= b.LoHz) || math.IsInf(b.HiHz, 0) || math.IsNaN(b.MinReturnLossDB) || math.IsInf(b.MinReturnLossDB, 0) ||
		math.IsNaN(b.MinPowerToLoad) || b.MinPowerToLoad < 0 || b.MinPowerToLoad > 1 {
		return fmt.Errorf("%w: %g–%g Hz, %g dB, %g of the power", ErrBand, b.LoHz, b.HiHz, b.MinReturnLossDB, b.MinPowerToLoad)
	}
	return nil
}

// BandResult is how a design does in one band: its figures with the
// network (parts as the network holds them), the same figures of the load
// alone with no network (the baseline), and its margin over the band's
// requirement ([rfmath.Requirement.MarginDB]).
type BandResult struct {
	Band
	rfmath.BandFigures
	Unmatched rfmath.BandFigures
	MarginDB  float64
}

// Metrics is how a design does across all bands.
type Metrics struct {
	// WorstRLdB is the least return loss over all band points, and
	// WorstPowerToLoad the least share of the available power reaching the
	// load over them.
	WorstRLdB        float64
	WorstPowerToLoad float64
	// MarginDB is the least margin over the bands: negative when a
	// requirement is missed, +Inf when no band asks anything.
	MarginDB float64
	Bands    []BandResult
}

// Meets reports whether every band's requirement is met.
func (m Metrics) Meets() bool { return m.MarginDB >= 0 }

// points is the set of frequencies at which bands are judged by the
// search: the union of every band's points ([rfmath.BandFreqs]), each once,
// with the load's Γ there and, per point, the most demanding requirement of
// the bands that hold it.
type points struct {
	freqHz   []float64
	gamma    []complex128
	minRLdB  []float64
	minPower []float64
	member   []int // the member of a set each point belongs to (search only)
}

// bandPoints returns the points at which the bands are judged on the load.
func bandPoints(l Load, bands []Band) (points, error) {
	if err := l.validate(); err != nil {
		return points{}, err
	}
	if len(bands) == 0 {
		return points{}, fmt.Errorf("%w: no band given", ErrBand)
	}
	type pt struct {
		f         float64
		rl, power float64
	}
	var ps []pt
	var fs []float64
	for _, bd := range bands {
		if err := bd.validate(); err != nil {
			return points{}, err
		}
		var err error
		fs, err = rfmath.BandFreqs(fs[:0], l.FreqHz, bd.LoHz, bd.HiHz)
		if err != nil {
			return points{}, fmt.Errorf("%w: %s lies outside the sweep (%s–%s)", ErrBand, bd,
				units.FormatFrequency(l.FreqHz[0], 6), units.FormatFrequency(l.FreqHz[len(l.FreqHz)-1], 6))
		}
		for _, f := range fs {
			ps = append(ps, pt{f, bd.MinReturnLossDB, bd.MinPowerToLoad})
		}
	}
	sort.Slice(ps, func(i, j int) bool { return ps[i].f < ps[j].f })
	var p points
	for _, q := range ps {
		n := len(p.freqHz)
		if n > 0 && p.freqHz[n-1] == q.f {
			p.minRLdB[n-1] = math.Max(p.minRLdB[n-1], q.rl)
			p.minPower[n-1] = math.Max(p.minPower[n-1], q.power)
			continue
		}
		g, _ := l.GammaAt(q.f)
		p.freqHz = append(p.freqHz, q.f)
		p.gamma = append(p.gamma, g)
		p.minRLdB = append(p.minRLdB, q.rl)
		p.minPower = append(p.minPower, q.power)
	}
	return p, nil
}

// Evaluate returns how the network n does on the load across the bands:
// per band, the figures of [rfmath.BandSummary] at the band's points
// ([rfmath.BandFreqs]) with the network and without it, and the margins.
// The network is judged as it stands; pass n.Built() for the standard
// values. It is the one evaluator of a design's band figures: the search's
// results, the yield, the network panel, the report and the command line
// all come from it.
func Evaluate(l Load, bands []Band, n Network) (Metrics, error) {
	j, err := newJudge(l, bands)
	if err != nil {
		return Metrics{}, err
	}
	c, err := n.Circuit()
	if err != nil {
		return Metrics{}, err
	}
	return j.metrics(c), nil
}

// judge holds the bands' points on a load, for judging many networks.
type judge struct {
	bands  []Band
	z0     float64
	freqHz [][]float64    // per band, its points
	gamma  [][]complex128 // per band, the load there
	base   []rfmath.BandFigures
}

func newJudge(l Load, bands []Band) (*judge, error) {
	if err := l.validate(); err != nil {
		return nil, err
	}
	if len(bands) == 0 {
		return nil, fmt.Errorf("%w: no band given", ErrBand)
	}
	j := &judge{bands: bands, z0: l.Z0Ohm}
	for _, bd := range bands {
		if err := bd.validate(); err != nil {
			return nil, err
		}
		fs, err := rfmath.BandFreqs(nil, l.FreqHz, bd.LoHz, bd.HiHz)
		if err != nil {
			return nil, fmt.Errorf("%w: %s lies outside the sweep (%s–%s)", ErrBand, bd,
				units.FormatFrequency(l.FreqHz[0], 6), units.FormatFrequency(l.FreqHz[len(l.FreqHz)-1], 6))
		}
		gs := make([]complex128, len(fs))
		var without rfmath.BandSummary
		for k, f := range fs {
			gs[k], _ = l.GammaAt(f)
			g0, p0 := rfmath.Circuit{}.PowerAt(f, gs[k], l.Z0Ohm)
			without.Add(f, g0, p0)
		}
		j.freqHz = append(j.freqHz, fs)
		j.gamma = append(j.gamma, gs)
		j.base = append(j.base, without.Figures())
	}
	return j, nil
}

// metrics judges the compiled network c.
func (j *judge) metrics(c rfmath.Circuit) Metrics {
	m := Metrics{WorstRLdB: math.Inf(1), WorstPowerToLoad: math.Inf(1), MarginDB: math.Inf(1), Bands: make([]BandResult, len(j.bands))}
	for b, bd := range j.bands {
		var with rfmath.BandSummary
		for k, f := range j.freqHz[b] {
			g, p := c.PowerAt(f, j.gamma[b][k], j.z0)
			with.Add(f, g, p)
		}
		r := BandResult{Band: bd, BandFigures: with.Figures(), Unmatched: j.base[b]}
		r.MarginDB = bd.Requirement().MarginDB(r.BandFigures)
		m.Bands[b] = r
		m.WorstRLdB = math.Min(m.WorstRLdB, r.WorstRLdB)
		m.WorstPowerToLoad = math.Min(m.WorstPowerToLoad, r.WorstPowerToLoad)
		m.MarginDB = math.Min(m.MarginDB, r.MarginDB)
	}
	return m
}
