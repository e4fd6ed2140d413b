package match

import (
	"context"
	"fmt"
	"math"
	"sort"

	"matchbench/rfmath/parts"
	"matchbench/rfmath/units"
)

// # The next swap
//
// [NextSwaps] takes the board as fitted ([FitBoard]) and looks for the
// smallest change of the parts' standard values that brings the board onto
// the bands' requirements: every single part changed to each standard
// value within a few steps of the one fitted, then every pair of parts
// changed together. Each candidate is judged by [Evaluate] on the fitted
// board, the pads and traces as fitted and every part at its effective
// value, and ranked by the loss-aware objective of [Search]: the networks
// that meet every requirement by the least share of the available power
// that reaches the load over all band points, most first; below them, the
// others by their margin over the requirements, least miss first
// ([ReturnLoss] ranks every one by its margin).
//
// A new part's effective value. The fit puts the board's own numbers in
// the pads and traces, so what is left of a part's offset from its nominal
// value (effective − nominal) is mostly the part's own: its tolerance, and
// how far the real part differs from its model. A new part is therefore
// taken at its nominal value by default ([CarryNone]); where the fit could
// not tell a part from the board beside it (see its warnings), the offset
// may be the board's and stay when the part is swapped, and [CarryOffset]
// keeps it. Either way the new part's own tolerance is still to come: each
// suggestion's Yield is the share of builds of the new parts, drawn
// within their tolerances on the board as fitted, that meet every
// requirement.

// Carry says what a swapped part keeps of the old part's offset from its
// nominal value (see above).
type Carry int

const (
	// CarryNone takes a new part at its nominal value. The zero value and
	// the default.
	CarryNone Carry = iota
	// CarryOffset keeps the old part's offset, effective − nominal, on the
	// new part: what the fit put on the part is taken as the board's.
	CarryOffset
)

// SwapSettings tune [NextSwaps]. A nil *SwapSettings, and every zero
// field, means the default.
type SwapSettings struct {
	// Steps is how many standard values either side of a part's own are
	// tried; zero means 4.
	Steps int
	// Series names the E-series of parts that have none ("" means E24).
	Series string
	// Objective ranks the candidates; the zero value is [PowerToLoad].
	Objective Objective
	// Top is the number of suggestions of each size (one part, two
	// parts); zero means 3.
	Top int
	// Carry says what a swapped part keeps of the old one's offset.
	Carry Carry
	// Builds is the number of random builds of the new parts for each
	// suggestion's Yield; zero means 500, negative none.
	Builds int
}

// Change is one part's new standard value.
type Change struct {
	Part       int     // index in the design network
	Designator string  // "C1"
	Kind       Kind    // the part's kind
	From, To   float64 // nominal values, henries or farads
	Steps      int     // standard values moved: +1 is the next value up
	Series     string  // the E-series of the values
}

// String returns e.g. "C1 7.5 pF → 6.8 pF (−1 step of E24)".
func (c Change) String() string {
	unit := c.Kind.Unit()
	s := "s"
	if c.Steps == 1 || c.Steps == -1 {
		s = ""
	}
	return fmt.Sprintf("%s %s → %s (%s step%s of %s)", c.Designator, units.Format(c.From, unit, 3), units.Format(c.To, unit, 3),
		signedSteps(c.Steps), s, c.Series)
}

func signedSteps(n int) string {
	if n < 0 {
		return fmt.Sprintf("−%d", -n)
	}
	return fmt.Sprintf("+%d", n)
}

// Swap is a suggested change with its predicted figures.
type Swap struct {
	Changes []Change
	// Network is the next candidate network: the design with the changed
	// parts at their new standard values, ready to build and to fit again.
	Network Network
	// Board is the fitted board with the change made: the network that
	// Metrics judges.
	Board Network
	Metrics
	// Yield is the share of builds that meet every requirement with the
	// new parts drawn within their tolerances ([Yield], seeded) and the
	// rest of the board as fitted; NaN when not computed.
	Yield float64
	key   float64
}

// SwapResult is what [NextSwaps] returns.
type SwapResult struct {
	// AsBuilt is how the board as fitted does with no change.
	AsBuilt Metrics
	// One and Two are the best single-part and two-part changes, best
	// first by the objective, at most Settings.Top of each.
	One, Two []Swap
	// Tried counts the candidates judged.
	Tried     int
	Objective Objective
	Carry     Carry
}

// Best returns the suggestion to try first: the best single-part change
// when one meets every requirement, else the better of the best single
// and two-part changes by the objective; ok is false when there is none.
func (r *SwapResult) Best() (Swap, bool) {
	switch {
	case len(r.One) > 0 && (r.One[0].Meets() || len(r.Two) == 0 || r.One[0].key <= r.Two[0].key):
		return r.One[0], true
	case len(r.Two) > 0:
		return r.Two[0], true
	}
	return Swap{}, false
}

// NextSwaps searches the next part swap on the board as fitted (see
// above). The load and the bands are those the design is judged on; fit is
// the result of [FitBoard]. It returns ctx.Err() if ctx is done, and
// errors about the load, the bands or the settings.
func NextSwaps(ctx context.Context, l Load, bands []Band, fit *BoardFit, s *SwapSettings) (*SwapResult, error) {
	set, err := swapSettings(s)
	if err != nil {
		return nil, err
	}
	j, err := newJudge(l, bands)
	if err != nil {
		return nil, err
	}
	sw, err := newSwapper(fit, set, j)
	if err != nil {
		return nil, err
	}
	res := &SwapResult{Objective: set.Objective, Carry: set.Carry}
	base, err := sw.board.Network.Circuit()
	if err != nil {
		return nil, err
	}
	res.AsBuilt = j.metrics(base)
	one, err := sw.singles()
	if err != nil {
		return nil, err
	}
	if err := ctx.Err(); err != nil {
		return nil, err
	}
	two, err := sw.pairs(ctx)
	if err != nil {
		return nil, err
	}
	res.Tried = sw.tried
	res.One, res.Two = sw.rank(one), sw.rank(two)
	if err := sw.addYields(ctx, l, bands, res); err != nil {
		return nil, err
	}
	return res, nil
}

// swapSettings returns s with its defaults filled in, or an error for
// steps or a count of suggestions out of range or an unknown series.
func swapSettings(s *SwapSettings) (SwapSettings, error) {
	var set SwapSettings
	if s != nil {
		set = *s
	}
	if set.Steps == 0 {
		set.Steps = 4
	}
	if set.Top == 0 {
		set.Top = 3
	}
	if set.Series == "" {
		set.Series = "E24"
	}
	if set.Steps < 1 || set.Steps > 24 || set.Top < 1 {
		return set, fmt.Errorf("match: swap steps %d, top %d; want 1 to 24 steps and at least 1", set.Steps, set.Top)
	}
	if _, err := parts.Lookup(set.Series); err != nil {
		return set, err
	}
	return set, nil
}

// swapSlot is a part that can be swapped: its board element, its series,
// its nominal value and the candidate values.
type swapSlot struct {
	part, elem int
	ser        *parts.Series
	nominal    float64
	offset     float64 // effective − nominal, carried to a new part
	idx        int     // series index of the nominal value
	values     []float64
	steps      []int
}

// swapper tries part swaps on a board as fitted: the design and the board,
// the judge of the bands, the settings and the parts that can be swapped.
type swapper struct {
	set    SwapSettings
	j      *judge
	design Network
	board  Placed
	slots  []swapSlot
	slotOf map[int]int // part → its slot
	elemOf map[int]int // part → its element of the board
	tried  int         // candidates judged
}

// newSwapper returns the swapper of fit: every part but a resistor that
// has an element on the board gets a slot, with the standard values of
// its series (the settings' where it names none) within set.Steps steps
// of its own, each positive once any carried offset is added.
func newSwapper(fit *BoardFit, set SwapSettings, j *judge) (*swapper, error) {
	sw := &swapper{set: set, j: j, design: fit.Design, board: fit.Board, slotOf: map[int]int{}, elemOf: map[int]int{}}
	for i, p := range sw.design {
		if p.Kind.Component() == "" || p.Kind.Component() == parts.KindR {
			continue
		}
		e := sw.board.Element(RolePart, i)
		if e < 0 {
			continue
		}
		name := p.Series
		if name == "" {
			name = set.Series
		}
		ser, err := parts.Lookup(name)
		if err != nil {
			return nil, err
		}
		sl := swapSlot{part: i, elem: e, ser: ser, nominal: p.Value, idx: ser.Index(p.Value)}
		if set.Carry == CarryOffset {
			sl.offset = sw.board.Network[e].Value - p.Value
		}
		for d := -set.Steps; d <= set.Steps; d++ {
			v := ser.Value(sl.idx + d)
			if d == 0 && v == p.Value {
				continue
			}
			if v+sl.offset <= 0 {
				continue
			}
			sl.values = append(sl.values, v)
			sl.steps = append(sl.steps, d)
		}
		sw.slotOf[i] = len(sw.slots)
		sw.elemOf[i] = e
		sw.slots = append(sw.slots, sl)
	}
	return sw, nil
}

// try judges the changes ch made together: the board with each changed
// part at its new value (plus any carried offset) and the design with the
// new standard values.
func (sw *swapper) try(ch []Change) (Swap, error) {
	b := sw.board.Network.Clone()
	next := sw.design.Clone()
	for _, c := range ch {
		sl := sw.slots[sw.slotOf[c.Part]]
		b[sl.elem].Value = c.To + sl.offset
		b[sl.elem].Series = ""
		next[c.Part].Value = c.To
		if next[c.Part].Series == "" {
			next[c.Part].Series = c.Series
		}
	}
	circ, err := b.Circuit()
	if err != nil {
		return Swap{}, err
	}
	m := sw.j.metrics(circ)
	sw.tried++
	return Swap{Changes: ch, Network: next, Board: b, Metrics: m, key: objectiveKey(sw.set.Objective, m)}, nil
}

// change returns the change of slot sl to its k-th candidate value.
func (sw *swapper) change(sl swapSlot, k int) Change {
	return Change{Part: sl.part, Designator: sw.design.Designator(sl.part), Kind: sw.design[sl.part].Kind, From: sl.nominal, To: sl.values[k], Steps: sl.steps[k], Series: sl.ser.Name()}
}

// rank sorts s (in place) by the objective's key, fewer steps first among
// equals, and returns the first set.Top.
func (sw *swapper) rank(s []Swap) []Swap {
	sort.SliceStable(s, func(a, b int) bool {
		if s[a].key != s[b].key {
			return s[a].key < s[b].key
		}
		return totalSteps(s[a].Changes) < totalSteps(s[b].Changes)
	})
	if len(s) > sw.set.Top {
		s = s[:sw.set.Top]
	}
	return s
}

// singles returns every change of one part to one of its candidate
// values, judged.
func (sw *swapper) singles() ([]Swap, error) {
	var one []Swap
	for _, sl := range sw.slots {
		for k := range sl.values {
			w, err := sw.try([]Change{sw.change(sl, k)})
			if err != nil {
				return nil, err
			}
			one = append(one, w)
		}
	}
	return one, nil
}

// pairs returns every change of two parts together, each to one of its
// candidate values, judged; it returns ctx.Err() if ctx is done.
func (sw *swapper) pairs(ctx context.Context) ([]Swap, error) {
	var two []Swap
	for a := range sw.slots {
		for b := a + 1; b < len(sw.slots); b++ {
			if err := ctx.Err(); err != nil {
				return nil, err
			}
			for ka := range sw.slots[a].values {
				for kb := range sw.slots[b].values {
					w, err := sw.try([]Change{sw.change(sw.slots[a], ka), sw.change(sw.slots[b], kb)})
					if err != nil {
						return nil, err
					}
					two = append(two, w)
				}
			}
		}
	}
	return two, nil
}

// addYields sets the Yield of each suggestion of res ([swapYield] over
// set.Builds builds, 500 when zero), or NaN for every one when Builds is
// negative.
func (sw *swapper) addYields(ctx context.Context, l Load, bands []Band, res *SwapResult) error {
	if sw.set.Builds < 0 {
		for _, list := range [][]Swap{res.One, res.Two} {
			for i := range list {
				list[i].Yield = math.NaN()
			}
		}
		return nil
	}
	builds := sw.set.Builds
	if builds == 0 {
		builds = 500
	}
	for _, list := range [][]Swap{res.One, res.Two} {
		for i := range list {
			y, err := swapYield(ctx, l, bands, sw.board, sw.design, sw.elemOf, list[i], builds)
			if err != nil {
				return err
			}
			list[i].Yield = y
		}
	}
	return nil
}

// objectiveKey ranks figures by the objective o, least best, as [Search]
// ranks networks: for [PowerToLoad], those that meet every requirement by
// −(worst share of the available power at the load); the others (and every
// network for [ReturnLoss]) by their margin, larger better, above every
// key of a network that meets.
func objectiveKey(o Objective, m Metrics) float64 {
	if o == PowerToLoad && m.Meets() {
		return -m.WorstPowerToLoad
	}
	return 1 - math.Tanh(m.MarginDB/10)
}

// swapYield returns the yield of the swap w over its new parts'
// tolerances, the rest of the board as fitted.
func swapYield(ctx context.Context, l Load, bands []Band, board Placed, design Network, elems map[int]int, w Swap, builds int) (float64, error) {
	tol := make([]parts.Tolerance, len(w.Board))
	for _, c := range w.Changes {
		tol[elems[c.Part]] = design[c.Part].Tolerance()
	}
	y, err := Yield(ctx, l, bands, w.Board, &YieldSettings{Builds: builds, Tolerances: tol})
	if err != nil {
		return math.NaN(), err
	}
	return y.Yield, nil
}

func totalSteps(ch []Change) int {
	n := 0
	for _, c := range ch {
		n += max(c.Steps, -c.Steps)
	}
	return n
}
