package match

import (
	"fmt"
	"math"
	"slices"
	"sort"

	"gonum.org/v1/gonum/optimize"

	"matchbench/rfmath"
	"matchbench/rfmath/parts"
)

// continuous returns the table rows of the rounded continuous optima of
// shape top (phase 1 of Search), without duplicates.
func (e *engine) continuous(top []Kind, model parts.Model) [][]int {
	n := len(top)
	sub := e.subsample(24)
	lo := make([]float64, n)
	hi := make([]float64, n)
	for p, k := range top {
		j := kindTab(k)
		lo[p] = math.Log(e.ser[j].Value(e.first[j]))
		hi[p] = math.Log(e.ser[j].Value(e.first[j] + e.count[j] - 1))
	}
	net := e.network(top, make([]int, n), model)
	obj := func(x []float64) float64 {
		pen := 0.0
		for p := range n {
			v := math.Min(math.Max(x[p], lo[p]), hi[p])
			pen += (x[p] - v) * (x[p] - v)
			net[p].Value = math.Exp(v)
		}
		c, err := net.Circuit()
		if err != nil {
			return math.Inf(1)
		}
		var sc score
		for _, k := range sub {
			g, gt := c.PowerAt(e.pts.freqHz[k], e.pts.gamma[k], e.z0)
			q := (real(g)*real(g) + imag(g)*imag(g)) * e.wt[k]
			if pm := e.pmin[k]; pm > 0 {
				q = math.Max(q, pm/math.Max(gt, 1e-300))
			}
			sc.add(q, gt)
		}
		key := e.key(sc)
		if key > 1 || e.obj == ReturnLoss {
			key = math.Log(key + 1e-300) // infeasible: log of the worst ratio, above 0
		}
		return key + 10*pen
	}
	var out [][]int
	seen := map[string]bool{}
	for _, x0 := range e.starts(top, lo, hi) {
		// An error (such as the limit on evaluations) still leaves the best
		// point found in r.
		r, _ := optimize.Minimize(optimize.Problem{Func: obj}, x0,
			&optimize.Settings{
				FuncEvaluations: 80 + 60*n,
				Converger:       &optimize.FunctionConverge{Absolute: 1e-3, Relative: 1e-3, Iterations: 20},
			},
			&optimize.NelderMead{SimplexSize: 0.4})
		x := x0
		if r != nil && r.X != nil {
			x = r.X
		}
		idx := make([]int, n)
		for p, k := range top {
			j := kindTab(k)
			v := math.Exp(math.Min(math.Max(x[p], lo[p]), hi[p]))
			idx[p] = min(max(e.ser[j].Index(v)-e.first[j], 0), e.count[j]-1)
		}
		key := fmt.Sprint(idx)
		if !seen[key] {
			seen[key] = true
			out = append(out, idx)
		}
	}
	return out
}

// subsample returns up to about m band points: each band's edges and
// points spread between them.
func (e *engine) subsample(m int) []int {
	if e.K <= m {
		s := make([]int, e.K)
		for k := range s {
			s[k] = k
		}
		return s
	}
	// Spread over every binding member and band, each its edges and points
	// between them.
	groups := 0
	for i, mm := range e.sj.members {
		if !mm.Advisory && slices.Contains(e.pts.member, i) {
			groups += len(e.bands)
		}
	}
	per := max(2, m/groups)
	var s []int
	for i, mm := range e.sj.members {
		if mm.Advisory {
			continue
		}
		for _, b := range e.bands {
			var in []int
			for k, f := range e.pts.freqHz {
				if e.pts.member[k] == i && f >= b.LoHz && f <= b.HiHz {
					in = append(in, k)
				}
			}
			if len(in) <= per {
				s = append(s, in...)
				continue
			}
			for j := range per {
				s = append(s, in[j*(len(in)-1)/(per-1)])
			}
		}
	}
	sort.Ints(s)
	return slices.Compact(s)
}

// starts returns the starting points (log values) of the continuous phase
// for shape top: the middle of the ranges, and each L-network at the centre
// of each band and of the whole span embedded where the shape has its two
// parts in a row, the other parts at their least disturbing end of the
// range (a series L or shunt C small, a series C or shunt L large).
func (e *engine) starts(top []Kind, lo, hi []float64) [][]float64 {
	n := len(top)
	neutral := make([]float64, n)
	mid := make([]float64, n)
	for p, k := range top {
		mid[p] = (lo[p] + hi[p]) / 2
		if k == SeriesL || k == ShuntC {
			neutral[p] = lo[p]
		} else {
			neutral[p] = hi[p]
		}
	}
	out := [][]float64{mid}
	centres := []float64{math.Sqrt(slices.Min(e.pts.freqHz) * slices.Max(e.pts.freqHz))}
	// The L-networks of the first binding member.
	first := e.sj.members[e.pts.member[0]].Load
	if len(e.bands) > 1 {
		for _, b := range e.bands {
			centres = append(centres, rfmath.BandCentreHz(b.LoHz, b.HiHz))
		}
	}
	for _, fc := range centres {
		zl, ok := first.ZAt(fc)
		if !ok {
			continue
		}
		sols, _, err := LNetworks(zl, complex(e.z0, 0), fc)
		if err != nil {
			continue
		}
		for _, s := range sols {
			m := len(s.Parts)
			if m == 0 {
				continue
			}
			for at := 0; at+m <= n; at++ {
				fits := true
				for i, p := range s.Parts {
					fits = fits && top[at+i] == p.Kind
				}
				if !fits {
					continue
				}
				x := append([]float64(nil), neutral...)
				for i, p := range s.Parts {
					x[at+i] = math.Min(math.Max(math.Log(p.Value), lo[at+i]), hi[at+i])
				}
				out = append(out, x)
			}
		}
	}
	if len(out) > 6 {
		out = out[:6]
	}
	return out
}
