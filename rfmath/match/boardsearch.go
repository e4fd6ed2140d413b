package match

import (
	"context"
	"fmt"
	"sort"
)

// SearchOnBoard is [Search] for a network that will be built on the board
// lay: the network's pads and traces ([Layout.Place]) are part of every
// design it judges. The exact search over standard values does not yet
// take a board's elements, so SearchOnBoard runs it on the parts alone,
// then places each design it found on the board and chooses its values
// again by descent: the best change of one part, else of two ([NextSwaps]
// on the placed design, judged by [Evaluate] with the loss-aware
// objective), taken while it improves the design, at most maxDescent
// times. A design of fewer parts than the layout has gaps for is placed
// with the traces it has room for ([Layout.For]). The designs come back ranked by how they do on the board, their
// Metrics on the board and their Network the parts alone (place them with
// lay to build them). With a zero layout it is Search itself; otherwise
// Result.Exact is false: the result is the best found near the parts'
// optima, not proven over the whole ranges.
func SearchOnBoard(ctx context.Context, l Load, bands []Band, s *Settings, lay Layout) (*Result, error) {
	res, err := Search(ctx, l, bands, s)
	if err != nil || lay.IsZero() {
		return res, err
	}
	set := s.defaults()
	out := *res
	out.Exact = false
	out.Designs = nil
	seen := map[string]bool{}
	for _, d := range res.Designs {
		n, m, err := descend(ctx, l, bands, d.Network, lay, set)
		if err != nil {
			return nil, err
		}
		key := fmt.Sprint(n)
		if seen[key] {
			continue
		}
		seen[key] = true
		out.Designs = append(out.Designs, Design{Network: n, Metrics: m})
	}
	sort.SliceStable(out.Designs, func(a, b int) bool {
		return objectiveKey(set.Objective, out.Designs[a].Metrics) < objectiveKey(set.Objective, out.Designs[b].Metrics)
	})
	return &out, nil
}

// maxDescent bounds the swaps SearchOnBoard takes for one design.
const maxDescent = 12

// descend places n on lay and takes the best improving swap until none
// improves it; it returns the parts and their figures on the board.
func descend(ctx context.Context, l Load, bands []Band, n Network, lay Layout, set Settings) (Network, Metrics, error) {
	cur := n.Clone()
	lay = lay.For(len(n))
	var m Metrics
	for range maxDescent + 1 {
		pl, err := lay.Place(cur)
		if err != nil {
			return nil, Metrics{}, err
		}
		sw, err := NextSwaps(ctx, l, bands, &BoardFit{Design: cur, Board: pl}, &SwapSettings{Steps: 3, Top: 1, Objective: set.Objective, Builds: -1})
		if err != nil {
			return nil, Metrics{}, err
		}
		m = sw.AsBuilt
		best, ok := sw.Best()
		if !ok || !(objectiveKey(set.Objective, best.Metrics) < objectiveKey(set.Objective, m)) {
			break
		}
		cur = best.Network
	}
	return cur, m, nil
}
