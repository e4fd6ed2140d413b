package match

import (
	"context"
	"fmt"
	"math"
	"sort"

	"matchbench/rfmath/parts"
)

// Settings tune [Search] and [Exhaustive]. A nil *Settings, and every zero
// field, means the default.
type Settings struct {
	// LSeries and CSeries name the E-series of the inductors and the
	// capacitors ("E6" … "E192"); "" means "E24".
	LSeries, CSeries string

	// Model makes the part of each value; nil means ideal parts.
	Model parts.Model

	// Objective is what the search maximises; the zero value is
	// [PowerToLoad].
	Objective Objective

	// MinParts and MaxParts bound the number of parts in a ladder, from 1
	// to 4; zero means 1 and 3.
	MinParts, MaxParts int

	// LRange and CRange bound the values searched, in henries and farads.
	// A zero bound takes the default: the values whose reactance lies
	// between Z0/25 and 25·Z0 somewhere in the bands, narrowed to what the
	// model says is sold if it has a Range method (as [parts.Family]
	// does).
	LRange, CRange [2]float64

	// Top is the number of designs returned: the best of each topology,
	// best first. Zero means 5.
	Top int

	// Window chooses between the two modes of the exact phase of Search.
	// Negative: every combination of standard values in the ranges (the
	// result is exact over the whole ranges). Positive: the standard
	// values within ±Window steps of each continuous optimum and of each
	// best network of one part fewer (whose added part is searched over
	// its whole range); exact within those windows. Zero: for each number
	// of parts, the whole ranges when that is at most Budget combinations
	// (summed over its shapes), else windows of ±6 steps.
	Window int

	// Budget is the largest number of combinations of one number of parts
	// that Window = 0 searches whole; zero means 2e10 (every shape of up to
	// four parts with E24 or E48 values over the default ranges).
	Budget float64

	// Progress, if not nil, is called from the searching goroutine with
	// the work done so far and the total, in units of partial networks;
	// done reaches total at the end. Calls are throttled to a few hundred.
	Progress func(done, total int)
}

// Objective is what [Search] and [Exhaustive] rank networks by.
type Objective int

const (
	// PowerToLoad ranks the networks that meet every band's requirement
	// (return loss and power to the load) by the least share of the
	// available power that reaches the load over all band points, most
	// first; below them, the networks that miss by their margin over the
	// requirements, least miss first. The zero value and the default: a
	// match is judged by the power it delivers, so a network that matches
	// by burning power in its own parts loses to one that delivers it.
	PowerToLoad Objective = iota
	// ReturnLoss ranks every network by its margin over the requirements
	// alone (return loss and any power requirement), largest first, as a
	// search of return loss does.
	ReturnLoss
)

// String returns "power" or "rl", as the command line spells them.
func (o Objective) String() string {
	if o == ReturnLoss {
		return "rl"
	}
	return "power"
}

// ParseObjective reads "power" or "rl".
func ParseObjective(s string) (Objective, error) {
	switch s {
	case "power", "":
		return PowerToLoad, nil
	case "rl":
		return ReturnLoss, nil
	}
	return 0, fmt.Errorf("match: objective %q: want power or rl", s)
}

// Design is a network found by [Search], with how it does: Metrics is the
// worst case over the binding members of the set (the load itself for
// Search), Members each member's own metrics, and WorstMember and WorstBand
// where its least margin falls.
type Design struct {
	Network Network
	Metrics
	Members                []Metrics
	WorstMember, WorstBand int
	// MeanPowerToLoad is the weighted mean power to the load over the
	// binding members (see [SetMetrics]).
	MeanPowerToLoad float64
}

// Result is what [Search] and [Exhaustive] return.
type Result struct {
	// Designs are the best network of each of the best topologies, best
	// first by the Objective; at most Settings.Top of them.
	Designs   []Design
	Objective Objective
	// Exact is true when every topology was searched over every
	// combination of standard values in the ranges; false when only
	// windows around the continuous optima were (then Window is their
	// half-width in steps).
	Exact  bool
	Window int
	// Topologies is the number of ladder shapes searched; Combinations
	// the number of whole networks in the search space; Checked the number
	// of whole networks whose reflection was computed at one point or
	// more (the rest were cut off as partial networks).
	Topologies   int
	Combinations float64
	Checked      int64
	// LRange and CRange are the value ranges searched, in henries and
	// farads, as the standard values at their ends.
	LRange, CRange [2]float64
}

// defaults returns s with its defaults filled in.
func (s *Settings) defaults() Settings {
	var d Settings
	if s != nil {
		d = *s
	}
	if d.LSeries == "" {
		d.LSeries = "E24"
	}
	if d.CSeries == "" {
		d.CSeries = "E24"
	}
	if d.Model == nil {
		d.Model = parts.Ideal
	}
	if d.MinParts == 0 {
		d.MinParts = 1
	}
	if d.MaxParts == 0 {
		d.MaxParts = 3
	}
	if d.Top == 0 {
		d.Top = 5
	}
	if d.Budget == 0 {
		d.Budget = 2e10
	}
	return d
}

// Search finds the ladder networks of standard-value parts that do best
// across the bands on the load by the Objective: for every ladder shape of
// MinParts to MaxParts parts (series and shunt alternating, each an L or a
// C), the best network, and of those the Top best shapes. Bands are judged
// at their points ([rfmath.BandFreqs]) and the returned figures are
// computed by [Evaluate], the one evaluator of a design.
//
// The objective is a single key per network, least best. With Q the worst
// over the band points of wt·|Γ|² (wt = 10^(RL/10) of the point's return-loss
// requirement) and of MinPowerToLoad/G_T (G_T the share of the available
// power that reaches the load), a network meets every requirement when
// Q ≤ 1, with a margin of −10·log10(Q) dB. For [PowerToLoad] the key is
// −min G_T when Q ≤ 1 and Q otherwise; for [ReturnLoss] it is Q.
//
// Shapes are searched by number of parts, fewest first, each in two
// phases.
//
//  1. Continuous: Nelder–Mead (gonum/optimize) minimises the key over a
//     subset of the band points, on the logarithms of the part values, from
//     several starts: the L-networks that match the load at the centre of
//     each band and of the whole span (any further part at its least
//     disturbing end of the range) and the middle of the ranges. Each
//     optimum is rounded to standard values; so is the best network of one
//     part fewer with a part added at either end (that part over its whole
//     range). The standard values within ±2 steps of these give the shape's
//     first incumbent.
//  2. Exact: every combination of standard values (in window mode, every
//     one within ±Window steps of the points of phase 1) is enumerated
//     from the load outward. It is exact because it only skips what cannot
//     beat the incumbent's key. A whole network is dropped at the first band
//     point where it provably cannot (its weighted |Γ|², its power ratio or
//     its G_T there already decide it); the points that dropped the last
//     networks are tried first. At the first of them, the last part's values
//     that could pass form one range of its values sorted by reactance:
//     after the part the impedance must lie in a circle (|Γ|² below the
//     bound the incumbent sets: for a network that must meet the
//     requirements and beat a G_T of P, |Γ|² ≤ 1/wt and |Γ|² < 1 − P, since
//     G_T ≤ 1 − |Γ|²), and a passive part moves it by its own reactance with
//     a resistance in a known range; only that range is tried. A network
//     lacking its last two parts is dropped when no passive pair can bring
//     |Γ|² below that bound (after a shunt part the resistance is at most
//     1/G, after a series part the conductance at most 1/R). A partial
//     network (the parts nearest the load) is dropped when its own
//     efficiency η = P_load/P_in at a point is below the least G_T that
//     could still win: the parts added on the source side can only lose
//     power, so G_T ≤ η. A shape is dropped when it cannot beat Top other
//     shapes' incumbents. The voltage and current at each partial network's
//     source end are computed once per point and shared by every network
//     that extends it.
//
// Every cut holds for passive parts (Re Z ≥ 0 at every frequency, as the
// models of package parts are), for both objectives, so whenever the whole
// ranges are searched (Window < 0, or Window = 0 within the Budget) the
// result equals that of [Exhaustive] and Result.Exact is true; the tests
// check it. In window mode the result is the best found within the
// windows, not a proven optimum, and Result.Exact is false.
//
// The search stops and returns ctx.Err() when ctx is done. Other errors
// are about the load, the bands or the settings.
func Search(ctx context.Context, l Load, bands []Band, s *Settings) (*Result, error) {
	return SearchSet(ctx, []Member{{Load: l}}, bands, s)
}

// SearchSet is [Search] across a set of loads: the key of a network is its
// worst over every point of every band on every binding member (each on its
// own measured points), so the best design meets every requirement in every
// condition (or on every board) first and then delivers the most power to
// the load in the worst of them. Every cut of Search bounds the worst case
// over the points, so it holds for the worst over the members as well: with
// the whole ranges searched the result is exact ([Result.Exact]) and equals
// [ExhaustiveSet]. With one member it is Search. Each design carries every
// member's metrics and where its least margin falls.
func SearchSet(ctx context.Context, members []Member, bands []Band, s *Settings) (*Result, error) {
	set := s.defaults()
	e, err := newEngine(members, bands, &set)
	if err != nil {
		return nil, err
	}
	return e.search(ctx, &set)
}

// Exhaustive is the plain search that [Search] is checked against: it
// computes every combination of standard values in the ranges at every
// band point, and keeps the best of each shape by the same key. Settings.Window, Budget
// and Progress are ignored. It is slow by design.
func Exhaustive(ctx context.Context, l Load, bands []Band, s *Settings) (*Result, error) {
	return ExhaustiveSet(ctx, []Member{{Load: l}}, bands, s)
}

// ExhaustiveSet is [Exhaustive] across a set of loads, the plain search
// [SearchSet] is checked against.
func ExhaustiveSet(ctx context.Context, members []Member, bands []Band, s *Settings) (*Result, error) {
	set := s.defaults()
	e, err := newEngine(members, bands, &set)
	if err != nil {
		return nil, err
	}
	tops := topologies(set.MinParts, set.MaxParts)
	best := make([]candidate, len(tops))
	res := &Result{Exact: true, Topologies: len(tops)}
	for t, top := range tops {
		best[t] = candidate{ratio: math.Inf(1)}
		n := len(top)
		tabs := e.tables(top)
		idx := make([]int, n)
		cnt := e.counts(top)
		total := 1
		for _, c := range cnt {
			total *= c
		}
		res.Combinations += float64(total)
		for c := 0; c < total; c++ {
			if c%4096 == 0 {
				if err := ctx.Err(); err != nil {
					return nil, err
				}
			}
			r := c
			for p := n - 1; p >= 0; p-- {
				idx[p] = r % cnt[p]
				r /= cnt[p]
			}
			var sc score
			for k := range e.K {
				v, i := e.v0[k], e.i0[k]
				for p := range n {
					x := tabs[p][idx[p]*e.K+k]
					if top[p].Shunt() {
						i += x * v
					} else {
						v += x * i
					}
				}
				e.addPoint(&sc, k, v, i)
			}
			res.Checked++
			if key := e.key(sc); key < best[t].ratio {
				best[t] = candidate{ratio: key, idx: append([]int(nil), idx...)}
			}
		}
	}
	return e.result(res, tops, best, &set)
}

// candidate is a network as table rows per part, with its worst weighted
// |Γ|² over the band points.
type candidate struct {
	ratio float64
	idx   []int
}

// box is a part of the search space: per level, the rows within ±r[p] of
// c[p], or every row where r[p] < 0.
type box struct {
	c, r []int
}

// boxAround returns the box of radius rad around c, with full ranges at
// the levels that full marks.
func boxAround(c []int, full []bool, rad int) box {
	b := box{c: c, r: make([]int, len(c))}
	for p := range c {
		b.r[p] = rad
		if full != nil && full[p] {
			b.r[p] = -1
		}
	}
	return b
}

// centre is a point of the search space to look around, with the levels
// to search whole.
type centre struct {
	idx  []int
	full []bool
}

// defaultWindow is the half-width, in steps of the series, of the windows
// searched when a number of parts is over budget.
const defaultWindow = 6

// search runs both phases of Search, for shapes of fewer parts first.
func (e *engine) search(ctx context.Context, set *Settings) (*Result, error) {
	tops := topologies(set.MinParts, set.MaxParts)
	res := &Result{Topologies: len(tops)}
	s := shapeSearch{set: set, tops: tops, walkers: make([]*walker, len(tops)), best: make([]candidate, len(tops)), index: map[string]int{}}
	for t := range s.best {
		s.best[t].ratio = math.Inf(1)
	}
	var space float64
	for t, top := range tops {
		s.walkers[t] = newWalker(e, top)
		s.index[fmt.Sprint(top)] = t
		c := 1.0
		for _, n := range e.counts(top) {
			c *= float64(n)
		}
		space += c
	}
	res.Combinations = space
	res.Exact = true
	prog := &progress{fn: set.Progress, total: progressPerShape * len(tops)}
	prog.report()

	for n := set.MinParts; n <= set.MaxParts; n++ {
		win := e.window(tops, n, set)
		if win >= 0 {
			res.Exact, res.Window = false, win
		}
		centres := map[int][]centre{}
		size, err := e.incumbents(ctx, &s, n, centres)
		if err != nil {
			return nil, err
		}
		checked, err := e.enumerate(ctx, &s, n, win, size, centres, prog)
		if err != nil {
			return nil, err
		}
		res.Checked += checked
	}
	prog.done = prog.total
	prog.report()
	return e.result(res, tops, s.best, set)
}

// shapeSearch is the state of one [engine.search] across its shapes: the
// settings, the shapes and a walker of each, the best candidate of each so
// far and each shape's index by its name. It lives on the search's stack:
// the engine, the result and the progress are held apart and passed where
// they are needed, so that what they share with the heap does not move it
// there.
type shapeSearch struct {
	set     *Settings
	tops    [][]Kind
	walkers []*walker
	best    []candidate
	index   map[string]int
}

// window returns the mode of the shapes of n parts: set.Window when given,
// else the whole ranges (−1) when their combinations fit set.Budget and
// windows of defaultWindow steps when they do not.
func (e *engine) window(tops [][]Kind, n int, set *Settings) int {
	if set.Window != 0 {
		return set.Window
	}
	sz := 0.0
	for _, top := range tops {
		if len(top) == n {
			c := 1.0
			for _, m := range e.counts(top) {
				c *= float64(m)
			}
			sz += c
		}
	}
	if sz <= set.Budget {
		return -1
	}
	return defaultWindow
}

// incumbents runs phase 1 of Search on the shapes of n parts: it returns
// those shapes, puts the centres of each in centres ([engine.centres]),
// and sets each shape's best candidate to the best within ±2 steps of its
// centres.
func (e *engine) incumbents(ctx context.Context, s *shapeSearch, n int, centres map[int][]centre) ([]int, error) {
	var size []int
	for t, top := range s.tops {
		if len(top) != n {
			continue
		}
		if err := ctx.Err(); err != nil {
			return nil, err
		}
		size = append(size, t)
		centres[t] = e.centres(s, top)
		w := s.walkers[t]
		w.thr, w.best = math.Inf(1), math.Inf(1)
		for _, c := range centres[t] {
			w.setBox(boxAround(c.idx, c.full, 2))
			if err := w.run(ctx, nil); err != nil {
				return nil, err
			}
		}
		s.best[t] = candidate{ratio: w.best, idx: append([]int(nil), w.bestIdx...)}
	}
	return size, nil
}

// centres returns the points of shape top to search around: its rounded
// continuous optima, and the best networks of one part fewer with a part
// added at either end (that part over its whole range).
func (e *engine) centres(s *shapeSearch, top []Kind) []centre {
	n := len(top)
	var out []centre
	for _, c := range e.continuous(top, s.set.Model) {
		out = append(out, centre{idx: c})
	}
	if n > 1 {
		for _, at := range []int{0, n - 1} {
			sub := append(append([]Kind(nil), top[:at]...), top[at+1:]...)
			u, ok := s.index[fmt.Sprint(sub)]
			if !ok || s.best[u].idx == nil {
				continue
			}
			c := centre{idx: make([]int, n), full: make([]bool, n)}
			copy(c.idx[:at], s.best[u].idx[:at])
			copy(c.idx[at+1:], s.best[u].idx[at:])
			c.full[at] = true
			out = append(out, c)
		}
	}
	return out
}

// enumerate runs phase 2 of Search on the shapes size of n parts, the
// most promising first: each shape's whole ranges (win < 0) or the
// windows of win steps around its centres, against its incumbent and the
// other shapes' best, reporting to prog. It returns the count of networks
// checked.
func (e *engine) enumerate(ctx context.Context, s *shapeSearch, n, win int, size []int, centres map[int][]centre, prog *progress) (int64, error) {
	var checked int64
	best := s.best
	sort.SliceStable(size, func(a, b int) bool { return best[size[a]].ratio < best[size[b]].ratio })
	for _, t := range size {
		w := s.walkers[t]
		w.best = best[t].ratio
		w.bestIdx = append(w.bestIdx[:0], best[t].idx...)
		w.thr = math.Min(w.best, topExcluding(best, t, s.set.Top))
		var boxes []box
		if win < 0 {
			boxes = []box{boxAround(make([]int, n), nil, -1)}
		} else {
			for _, c := range centres[t] {
				boxes = append(boxes, boxAround(c.idx, c.full, win))
			}
		}
		units := 0
		for _, b := range boxes {
			w.setBox(b)
			units += w.units()
		}
		prog.startShape(units)
		for _, b := range boxes {
			w.setBox(b)
			if err := w.run(ctx, prog); err != nil {
				return 0, err
			}
		}
		prog.endShape()
		if w.best < best[t].ratio {
			best[t] = candidate{ratio: w.best, idx: append([]int(nil), w.bestIdx...)}
		}
		checked += w.checked
	}
	return checked, nil
}

// topExcluding returns the top-th smallest ratio among the shapes other
// than t, or +Inf if there are fewer than top others: a network of shape t
// that does not beat it cannot be among the top best shapes.
func topExcluding(best []candidate, t, top int) float64 {
	r := make([]float64, 0, len(best))
	for u, b := range best {
		if u != t {
			r = append(r, b.ratio)
		}
	}
	if len(r) < top {
		return math.Inf(1)
	}
	sort.Float64s(r)
	return r[top-1]
}

// result turns the best candidates into designs.
func (e *engine) result(res *Result, tops [][]Kind, best []candidate, set *Settings) (*Result, error) {
	order := make([]int, 0, len(tops))
	for t := range tops {
		if best[t].idx != nil {
			order = append(order, t)
		}
	}
	sort.SliceStable(order, func(a, b int) bool { return best[order[a]].ratio < best[order[b]].ratio })
	if len(order) > set.Top {
		order = order[:set.Top]
	}
	for j := range 2 {
		lim := [2]float64{e.ser[j].Value(e.first[j]), e.ser[j].Value(e.first[j] + e.count[j] - 1)}
		if j == tabL {
			res.LRange = lim
		} else {
			res.CRange = lim
		}
	}
	res.Objective = set.Objective
	for _, t := range order {
		n := e.network(tops[t], best[t].idx, set.Model)
		c, err := n.Circuit()
		if err != nil {
			return nil, err
		}
		m := e.sj.metrics(c)
		res.Designs = append(res.Designs, Design{Network: n, Metrics: m.Metrics, Members: m.Members, WorstMember: m.WorstMember, WorstBand: m.WorstBand, MeanPowerToLoad: m.MeanPowerToLoad})
	}
	return res, nil
}

// network returns the parts of shape top at table rows idx, made by the
// model m.
func (e *engine) network(top []Kind, idx []int, m parts.Model) Network {
	n := make(Network, len(top))
	for p, k := range top {
		j := kindTab(k)
		n[p] = Part{Kind: k, Value: e.ser[j].Value(e.first[j] + idx[p]), Series: e.ser[j].Name(), Model: m}
	}
	return n
}
