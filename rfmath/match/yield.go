package match

import (
	"context"
	"fmt"
	"math"
	"math/rand/v2"
	"sort"

	"gonum.org/v1/gonum/stat/distuv"

	"matchbench/rfmath/parts"
)

// Distribution is how a part's value spreads within its tolerance.
type Distribution int

const (
	// Uniform: every value within ±tolerance equally likely. The zero
	// value and the default: a maker guarantees the tolerance but not the
	// shape, and parts are often sorted into tolerance grades, so the
	// uniform spread is the cautious assumption (common practice).
	Uniform Distribution = iota
	// Normal: a normal spread with σ = tolerance/3, cut at ±tolerance (a
	// draw outside is drawn again), for a process centred on the nominal
	// value.
	Normal
)

// YieldSettings tune [Yield]. A nil *YieldSettings, and every zero field,
// means the default.
type YieldSettings struct {
	// Builds is the number of random builds; zero means 1000.
	Builds int
	// Seed seeds the random numbers (PCG); zero means 1. The same seed
	// gives the same result.
	Seed uint64
	// Dist is the spread of each part within its tolerance.
	Dist Distribution
	// Tolerances gives each part's tolerance, in the network's order; nil
	// means each part's own ([Part.Tolerance]: its own figures, else the
	// typical tolerance of its kind). A wrong length is an error.
	Tolerances []parts.Tolerance
	// Traces is the number of builds (the first ones) whose reflection at
	// every frequency of the load is returned, for drawing the spread.
	Traces int
}

// YieldResult is what [Yield] returns.
type YieldResult struct {
	Builds, Passed int
	// Yield is Passed/Builds: the share of builds that meet every band's
	// requirement.
	Yield float64
	// Nominal is how the network does with every part at its nominal
	// value.
	Nominal Metrics
	// WorstMarginDB, MedianMarginDB and P5MarginDB are the least, the
	// median and the 5th percentile of the margin over the builds.
	WorstMarginDB, MedianMarginDB, P5MarginDB float64
	// WorstCorner is the worst of the 2ⁿ builds with every part at one end
	// of its tolerance.
	WorstCorner Corner
	// Sensitivity has one entry per part, in the network's order.
	Sensitivity []Sensitivity
	// MostSensitive is the index of the part whose tolerance costs the
	// most margin alone.
	MostSensitive int
	// Traces holds Γ at every frequency of the load for the first
	// Settings.Traces builds; TraceMembers the member of a set each was
	// judged on (see [YieldSet]).
	Traces       [][]complex128
	TraceMembers []int
}

// Corner is a build with every part at one end of its tolerance.
type Corner struct {
	Signs    []int     // per part: −1 at the low end, +1 at the high end
	Values   []float64 // per part, henries or farads
	MarginDB float64
}

// Sensitivity is what one part's tolerance alone does to the margin.
type Sensitivity struct {
	Tolerance  float64 // ± in henries or farads
	LowDB      float64 // margin with this part at its low end, the others nominal
	HighDB     float64 // margin with this part at its high end
	DropDB     float64 // nominal margin less the worse of LowDB and HighDB
	Importance float64 // DropDB as a share of the sum over the parts
}

// Yield builds the network n many times with each part's value drawn at
// random within its tolerance (Settings.Dist, with gonum's distuv
// distributions) and reports the share of builds that meet every band's
// requirement on the load (return loss and power to the load), judged by
// [Evaluate]'s own evaluator. Each build keeps every part's model and own
// figures; only the values move. Pass n.Built() to draw about the standard
// values. It also reports the
// worst corner (all 2ⁿ builds with every part at one end of its tolerance;
// a corner is the usual worst case but not always the worst build) and,
// for each part alone, how much margin its tolerance can cost.
//
// The same Seed gives the same builds. A network whose parts all have
// zero tolerance has a yield of 1 or 0 as its nominal margin is at least
// zero or not.
//
// It returns ctx.Err() if ctx is done, and errors about the load, the
// bands or the settings.
func Yield(ctx context.Context, l Load, bands []Band, n Network, s *YieldSettings) (*YieldResult, error) {
	return YieldSet(ctx, []Member{{Load: l}}, Conditions, bands, n, s)
}

// YieldSet is [Yield] across a set of loads. For a set of Conditions a
// build passes when it meets every requirement on every binding member.
// For a Lot each build is judged against one binding member drawn at
// random by weight (from a source seeded by the same seed), so the
// yield counts both the parts' tolerances and the lot's spread; the
// nominal, the corners and the sensitivities are judged on the worst
// member. Traces are on the first binding member's frequencies for
// Conditions, on the drawn member's for a Lot (TraceMembers says which).
// With one member it is Yield.
func YieldSet(ctx context.Context, members []Member, kind SetKind, bands []Band, n Network, s *YieldSettings) (*YieldResult, error) {
	set, err := yieldSettings(s)
	if err != nil {
		return nil, err
	}
	tol := make([]float64, len(n))
	if err := partTolerances(tol, n, set.Tolerances); err != nil {
		return nil, err
	}
	sj, err := newSetJudge(members, bands)
	if err != nil {
		return nil, err
	}
	if _, err := n.Circuit(); err != nil {
		return nil, err
	}
	res := &YieldResult{Builds: set.Builds, Nominal: buildMetrics(sj, n)}
	b := n.Clone()
	if err := randomBuilds(ctx, res, sj, kind, n, b, tol, set); err != nil {
		return nil, err
	}
	res.WorstCorner = worstCorner(sj, n, b, tol)
	copy(b, n)
	res.Sensitivity, res.MostSensitive = sensitivities(sj, n, b, tol, res.Nominal.MarginDB)
	return res, nil
}

// yieldSettings returns s with its defaults filled in, or an error for a
// negative count of builds or traces.
func yieldSettings(s *YieldSettings) (YieldSettings, error) {
	var set YieldSettings
	if s != nil {
		set = *s
	}
	if set.Builds == 0 {
		set.Builds = 1000
	}
	if set.Builds < 0 || set.Traces < 0 {
		return set, fmt.Errorf("match: %d builds, %d traces", set.Builds, set.Traces)
	}
	if set.Seed == 0 {
		set.Seed = 1
	}
	return set, nil
}

// partTolerances sets tol[i] to the ± tolerance of part i of n at its
// value: from tols, one per part, or each part's own when tols is nil. A
// tolerance that is not below its part's value is an error. The caller
// makes tol (of len(n)), so that it can stay on the stack.
func partTolerances(tol []float64, n Network, tols []parts.Tolerance) error {
	switch {
	case tols == nil:
		for i, p := range n {
			tol[i] = p.Tolerance().Of(p.Value)
			if tol[i] >= p.Value {
				return fmt.Errorf("match: tolerance ±%g of part %d is not below its value %g", tol[i], i+1, p.Value)
			}
		}
	case len(tols) != len(n):
		return fmt.Errorf("match: %d tolerances for %d parts", len(tols), len(n))
	default:
		for i, p := range n {
			tol[i] = tols[i].Of(p.Value)
			if tol[i] >= p.Value {
				return fmt.Errorf("match: tolerance ±%g of part %d is not below its value %g", tol[i], i+1, p.Value)
			}
		}
	}
	return nil
}

// buildMetrics returns the figures of build b across the set (a margin of
// −∞ when it cannot be built; every value drawn is positive, so a build
// always builds).
func buildMetrics(sj *setJudge, b Network) Metrics {
	c, err := b.Circuit()
	if err != nil {
		return Metrics{MarginDB: math.Inf(-1)}
	}
	return sj.metrics(c).Metrics
}

// partDraws sets draw[i] to a draw of the value of part i of n within
// ±tol[i] about its nominal value, spread by dist, from src. The caller
// makes draw (of len(n)), so that it can stay on the stack.
func partDraws(draw []func() float64, n Network, tol []float64, dist Distribution, src rand.Source) {
	for i, p := range n {
		v, t := p.Value, tol[i]
		switch dist {
		case Normal:
			d := distuv.Normal{Mu: v, Sigma: t / 3, Src: src}
			draw[i] = func() float64 {
				for {
					if x := d.Rand(); math.Abs(x-v) <= t {
						return x
					}
				}
			}
		default:
			d := distuv.Uniform{Min: v - t, Max: v + t, Src: src}
			draw[i] = d.Rand
		}
	}
}

// randomBuilds judges set.Builds random builds of n, in the scratch
// network b, and fills res's count of passes, yield, margins and traces:
// for a set of Conditions each build on every binding member, for a Lot
// on one binding member drawn by weight.
func randomBuilds(ctx context.Context, res *YieldResult, sj *setJudge, kind SetKind, n, b Network, tol []float64, set YieldSettings) error {
	var binding []int
	var wsum float64
	for i, m := range sj.members {
		if !m.Advisory {
			binding = append(binding, i)
			wsum += m.Weight
		}
	}
	src := rand.NewPCG(set.Seed, set.Seed^0x9e3779b97f4a7c15)
	draw := make([]func() float64, len(n))
	partDraws(draw, n, tol, set.Dist, src)
	margins := make([]float64, set.Builds)
	// The lot's draws have their own source, so that the parts' values are
	// the same builds as for one load with the same seed.
	pick := rand.New(rand.NewPCG(set.Seed^0x5bd1e995, set.Seed))
	for k := range set.Builds {
		if k%256 == 0 {
			if err := ctx.Err(); err != nil {
				return err
			}
		}
		for i := range b {
			b[i].Value = draw[i]()
		}
		c, err := b.Circuit()
		if err != nil {
			return err
		}
		who := binding[0]
		var m Metrics
		if kind == Lot {
			x := pick.Float64() * wsum
			for _, i := range binding {
				who = i
				if x -= sj.members[i].Weight; x < 0 {
					break
				}
			}
			m = sj.judges[who].metrics(c)
		} else {
			m = sj.metrics(c).Metrics
		}
		margins[k] = m.MarginDB
		if m.Meets() {
			res.Passed++
		}
		if k < set.Traces {
			l := sj.members[who].Load
			res.Traces = append(res.Traces, c.GammaTo(nil, l.FreqHz, l.Gamma, l.Z0Ohm))
			res.TraceMembers = append(res.TraceMembers, who)
		}
	}
	if set.Builds > 0 {
		res.Yield = float64(res.Passed) / float64(set.Builds)
		sort.Float64s(margins)
		res.WorstMarginDB = margins[0]
		res.MedianMarginDB = margins[set.Builds/2]
		res.P5MarginDB = margins[set.Builds*5/100]
	}
	return nil
}

// worstCorner returns the worst of the 2ⁿ builds of n with every part at
// one end of its tolerance, built in the scratch network b.
func worstCorner(sj *setJudge, n, b Network, tol []float64) Corner {
	worst := Corner{MarginDB: math.Inf(1)}
	for c := 0; c < 1<<len(n); c++ {
		signs := make([]int, len(n))
		for i := range b {
			signs[i] = 1
			if c>>i&1 == 0 {
				signs[i] = -1
			}
			b[i].Value = n[i].Value + float64(signs[i])*tol[i]
		}
		if m := buildMetrics(sj, b).MarginDB; m < worst.MarginDB {
			vals := make([]float64, len(n))
			for i := range b {
				vals[i] = b[i].Value
			}
			worst = Corner{Signs: signs, Values: vals, MarginDB: m}
		}
	}
	return worst
}

// sensitivities returns what each part's tolerance alone does to the
// margin (nominal the margin with every part at its nominal value), with
// b, a copy of n, as scratch, and the index of the part whose tolerance
// costs the most.
func sensitivities(sj *setJudge, n, b Network, tol []float64, nominal float64) ([]Sensitivity, int) {
	var out []Sensitivity
	most := 0
	sum := 0.0
	for i := range n {
		s := Sensitivity{Tolerance: tol[i]}
		b[i].Value = n[i].Value - tol[i]
		s.LowDB = buildMetrics(sj, b).MarginDB
		b[i].Value = n[i].Value + tol[i]
		s.HighDB = buildMetrics(sj, b).MarginDB
		b[i].Value = n[i].Value
		s.DropDB = math.Max(0, nominal-math.Min(s.LowDB, s.HighDB))
		sum += s.DropDB
		out = append(out, s)
		if s.DropDB > out[most].DropDB {
			most = i
		}
	}
	for i := range out {
		if sum > 0 {
			out[i].Importance = out[i].DropDB / sum
		}
	}
	return out, most
}
